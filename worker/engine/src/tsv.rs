//! The layout every bundled data file shares: `#` comment lines (generator, versions, terms),
//! one header row, then tab-separated rows. Read once, looked up by column name.

/// A bundled data file that does not read: where (file, and line when a row is at fault) and
/// what is wrong.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("{place}: {reason}")]
pub struct DataError {
    /// `file` or `file line N`.
    pub place: String,
    pub reason: String,
}

/// A parsed data file.
pub struct Tsv<'a> {
    /// The comment lines, without `#`, one per line.
    pub comments: String,
    file: &'a str,
    header: Vec<&'a str>,
    rows: Vec<(usize, Vec<&'a str>)>,
}

/// One data row, with its 1-based line number.
pub struct Row<'t, 'a> {
    tsv: &'t Tsv<'a>,
    pub line: usize,
    fields: &'t [&'a str],
}

/// Split `text` (named `file` in errors) into comments, header and rows; blank lines are skipped.
pub fn read<'a>(text: &'a str, file: &'a str) -> Tsv<'a> {
    let mut t = Tsv {
        comments: String::new(),
        file,
        header: Vec::new(),
        rows: Vec::new(),
    };
    let mut have_header = false;
    for (i, line) in text.lines().enumerate() {
        if let Some(c) = line.strip_prefix('#') {
            t.comments.push_str(c.trim());
            t.comments.push('\n');
        } else if line.trim().is_empty() {
            continue;
        } else if !have_header {
            t.header = line.split('\t').collect();
            have_header = true;
        } else {
            t.rows.push((i + 1, line.split('\t').collect()));
        }
    }
    t
}

impl<'a> Tsv<'a> {
    pub fn rows(&self) -> impl Iterator<Item = Row<'_, 'a>> {
        self.rows.iter().map(move |(line, fields)| Row {
            tsv: self,
            line: *line,
            fields,
        })
    }
}

impl<'a> Row<'_, 'a> {
    /// The cell in column `name`.
    ///
    /// # Errors
    /// [`DataError`] naming the file (and line) when the column or the cell is missing.
    pub fn get(&self, name: &str) -> Result<&'a str, DataError> {
        let k = self.tsv.header.iter().position(|c| *c == name).ok_or_else(|| DataError {
            place: self.tsv.file.to_string(),
            reason: format!("no column {name}"),
        })?;
        self.fields.get(k).copied().ok_or_else(|| self.error(&format!("missing {name}")))
    }

    /// An error about this row.
    pub fn error(&self, what: &str) -> DataError {
        DataError {
            place: format!("{} line {}", self.tsv.file, self.line),
            reason: what.to_string(),
        }
    }
}
