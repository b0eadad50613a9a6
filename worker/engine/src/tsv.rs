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
    /// Every row's cells, one row after the other.
    cells: Vec<&'a str>,
    /// (line number, range of the row's cells in `cells`)
    rows: Vec<(usize, std::ops::Range<usize>)>,
}

/// A column of a [`Tsv`], found once by name.
#[derive(Clone, Copy)]
pub struct Column<'t> {
    k: usize,
    name: &'t str,
}

impl Column<'_> {
    pub fn name(&self) -> &str {
        self.name
    }
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
        cells: Vec::new(),
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
            split_cells(line, &mut t.header);
            have_header = true;
        } else {
            let start = t.cells.len();
            split_cells(line, &mut t.cells);
            t.rows.push((i + 1, start..t.cells.len()));
        }
    }
    t
}

/// Append the tab-separated cells of `line` to `out`. (`str::split` on a char and a vector per
/// row were a third of the instructions of a one-case run: the name table is 3 MB.)
fn split_cells<'a>(line: &'a str, out: &mut Vec<&'a str>) {
    let mut start = 0;
    for k in memchr::memchr_iter(b'\t', line.as_bytes()) {
        out.push(&line[start..k]);
        start = k + 1;
    }
    out.push(&line[start..]);
}

impl<'a> Tsv<'a> {
    /// The position of column `name`, for [`Row::at`] in a loop over many rows.
    ///
    /// # Errors
    /// [`DataError`] naming the file when there is no such column.
    pub fn column(&self, name: &str) -> Result<Column<'_>, DataError> {
        let k = self.header.iter().position(|c| *c == name).ok_or_else(|| DataError {
            place: self.file.to_string(),
            reason: format!("no column {name}"),
        })?;
        Ok(Column { k, name: self.header[k] })
    }

    pub fn rows(&self) -> impl Iterator<Item = Row<'_, 'a>> {
        self.rows.iter().map(move |(line, cells)| Row {
            tsv: self,
            line: *line,
            fields: &self.cells[cells.clone()],
        })
    }
}

impl<'a> Row<'_, 'a> {
    /// The cell in column `name`.
    ///
    /// # Errors
    /// [`DataError`] naming the file (and line) when the column or the cell is missing.
    pub fn get(&self, name: &str) -> Result<&'a str, DataError> {
        self.at(self.tsv.column(name)?)
    }

    /// The cell in a column found by [`Tsv::column`].
    ///
    /// # Errors
    /// [`DataError`] naming the file and line when the row is too short.
    pub fn at(&self, c: Column<'_>) -> Result<&'a str, DataError> {
        debug_assert_eq!(self.tsv.header.get(c.k), Some(&c.name), "a column of another file");
        self.fields
            .get(c.k)
            .copied()
            .ok_or_else(|| self.error(&format!("missing {}", c.name)))
    }

    /// An error about this row.
    pub fn error(&self, what: &str) -> DataError {
        DataError {
            place: format!("{} line {}", self.tsv.file, self.line),
            reason: what.to_string(),
        }
    }
}
