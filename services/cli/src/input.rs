//! Reading input tables (CSV, TSV, JSON Lines, Parquet) into cases.
//!
//! One row is one case. Required columns: `case_id`, `reaction`. Optional: `route_id`, `step`,
//! `phase`, and process conditions with units in their names (see [`condition_columns`]);
//! temperatures may be given in K (`*_k`) or °C (`*_c`) and are carried in K. Any other column is
//! carried through as text in the case's `extra` conditions.
//!
//! A row that cannot be read never stops the file and is never dropped: it becomes a case with
//! `input_error` set to a message naming the row (data rows count from 1; the header is not a
//! row), the column and what was expected. Only a file without the required columns, or one that
//! cannot be opened, is an error of the whole input.
//!
//! CSV, TSV and JSON Lines are streamed row by row; a Parquet input is read whole.

use std::collections::BTreeMap;
use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use thermosieve_model::{CaseInput, ConditionField, Conditions, CONDITIONS, PHASES};

/// Input formats.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    Csv,
    Tsv,
    JsonLines,
    Parquet,
}

impl Format {
    /// The format named by a file's extension.
    pub fn from_path(path: &Path) -> Option<Format> {
        match path.extension()?.to_str()?.to_ascii_lowercase().as_str() {
            "csv" => Some(Format::Csv),
            "tsv" | "tab" => Some(Format::Tsv),
            "jsonl" | "ndjson" => Some(Format::JsonLines),
            "parquet" | "pq" => Some(Format::Parquet),
            _ => None,
        }
    }

    /// Parse a `--format` value.
    pub fn parse(s: &str) -> Option<Format> {
        match s {
            "csv" => Some(Format::Csv),
            "tsv" => Some(Format::Tsv),
            "jsonl" | "ndjson" | "json-lines" => Some(Format::JsonLines),
            "parquet" => Some(Format::Parquet),
            _ => None,
        }
    }
}

/// Why an input file cannot be read at all.
#[derive(Debug, thiserror::Error)]
pub enum InputError {
    #[error("{path}: {source}")]
    Open { path: PathBuf, source: std::io::Error },
    #[error("{path}: cannot tell the format from the extension; use .csv, .tsv, .jsonl or .parquet (or --format)")]
    UnknownFormat { path: PathBuf },
    #[error("{path}: the header has no column {column:?} (required: case_id, reaction)")]
    MissingColumn { path: PathBuf, column: &'static str },
    #[error("{path}: {reason}")]
    Unreadable { path: PathBuf, reason: String },
}

/// The condition columns an input table may carry: each typed field under its own name (in its
/// unit), or under its °C column where it has one (see `thermosieve_model::condition_fields!`).
/// Returns (column, field, whether the column is in °C).
pub fn condition_columns() -> impl Iterator<Item = (&'static str, &'static ConditionField, bool)> {
    CONDITIONS
        .iter()
        .flat_map(|f| std::iter::once((f.name, f, false)).chain(f.celsius_column.map(|c| (c, f, true))))
}

/// The columns the readers interpret, in the order [`case_from_cells`] asks for them by index:
/// the case fields ([`CASE_ID`] to [`PHASE`]), then the condition columns from
/// [`FIRST_CONDITION`] on, in [`condition_columns`] order. Every other column is an extra
/// condition.
fn known_columns() -> impl Iterator<Item = &'static str> {
    ["case_id", "reaction", "route_id", "step", "phase"]
        .into_iter()
        .chain(condition_columns().map(|(n, _, _)| n))
}
const CASE_ID: usize = 0;
const REACTION: usize = 1;
const ROUTE_ID: usize = 2;
const STEP: usize = 3;
const PHASE: usize = 4;
const FIRST_CONDITION: usize = 5;

/// Whether the readers interpret column `c` (every other column is an extra condition).
fn is_known(c: &str) -> bool {
    known_columns().any(|n| n == c)
}

/// Where a table's columns sit, worked out once per file: the position of each known column
/// (by [`known_columns`] index) and the extra-condition columns with their positions. A name
/// given twice is read from its first column, as a lookup by name would.
struct Positions {
    known: Vec<Option<usize>>,
    extra: Vec<(String, usize)>,
}

impl Positions {
    fn new(headers: &[String]) -> Positions {
        let first = |name: &str| headers.iter().position(|h| h == name);
        Positions {
            known: known_columns().map(first).collect(),
            extra: headers
                .iter()
                .filter(|h| !is_known(h))
                .filter_map(|h| Some((h.clone(), first(h)?)))
                .collect(),
        }
    }
}

/// Turn one row into a case. `get` returns the cell of a known column by its index in
/// [`known_columns`] (trimmed, `None` when empty); `extra` gives the row's other columns with
/// their cells (they are carried as extra conditions).
fn case_from_cells<'a>(
    row: u64,
    extra: impl Iterator<Item = (&'a str, Option<String>)>,
    get: impl Fn(usize) -> Option<String>,
) -> CaseInput {
    let mut errors: Vec<String> = Vec::new();
    let mut case = CaseInput {
        row,
        ..CaseInput::default()
    };
    match get(CASE_ID) {
        Some(id) => case.case_id = id,
        None => {
            case.case_id = format!("row-{row}");
            errors.push("column case_id: missing (every case needs an id; this row is reported as row-N)".into());
        }
    }
    match get(REACTION) {
        Some(r) => case.reaction = r,
        None => errors.push("column reaction: missing (expected a reaction equation such as \"CO(g) + H2O(g) -> CO2(g) + H2(g)\")".into()),
    }
    case.route_id = get(ROUTE_ID);
    if let Some(s) = get(STEP) {
        match s.parse::<u32>() {
            Ok(n) if n >= 1 => case.step = Some(n),
            _ => errors.push(format!("column step: expected a whole number ≥ 1, got {s:?}")),
        }
    }
    if let Some(p) = get(PHASE) {
        let p = p.to_ascii_lowercase();
        if PHASES.contains(&p.as_str()) {
            case.phase = Some(p);
        } else {
            errors.push(format!("column phase: expected one of gas, liquid, solid, standard, got {p:?}"));
        }
    }
    let mut conditions = Conditions::default();
    let mut given_by: BTreeMap<&str, &str> = BTreeMap::new();
    for (k, (column, declared, celsius)) in condition_columns().enumerate() {
        let Some(text) = get(FIRST_CONDITION + k) else { continue };
        let Ok(v) = text.parse::<f64>() else {
            errors.push(format!("column {column}: expected a number, got {text:?}"));
            continue;
        };
        let v = if celsius { v + 273.15 } else { v };
        let field = declared.name;
        if !declared.accepts(v) {
            errors.push(format!("column {column}: expected {}, got {text}", declared.expected));
            continue;
        }
        if let Some(other) = given_by.insert(field, column) {
            errors.push(format!("columns {other} and {column} both give {field}; keep one"));
            continue;
        }
        if let Some(slot) = conditions.field_mut(field) {
            *slot = Some(v);
        }
    }
    for (c, v) in extra {
        if let Some(v) = v {
            conditions.extra.insert(c.to_string(), v);
        }
    }
    case.conditions = conditions;
    if !errors.is_empty() {
        case.input_error = Some(format!("row {row}, {}", errors.join("; ")));
    }
    case
}

fn cell(s: &str) -> Option<String> {
    let t = s.trim();
    (!t.is_empty()).then(|| t.to_string())
}

/// Cases of an input file, in file order.
pub type Cases = Box<dyn Iterator<Item = CaseInput> + Send>;

/// Open an input file.
///
/// # Errors
/// `InputError` when the file cannot be opened, its format is unknown, or it lacks a required
/// column.
pub fn open(path: &Path, format: Option<Format>) -> Result<Cases, InputError> {
    let format = format
        .or_else(|| Format::from_path(path))
        .ok_or_else(|| InputError::UnknownFormat { path: path.to_path_buf() })?;
    let file = File::open(path).map_err(|source| InputError::Open {
        path: path.to_path_buf(),
        source,
    })?;
    match format {
        Format::Csv | Format::Tsv => delimited(path, file, if format == Format::Csv { b',' } else { b'\t' }),
        Format::JsonLines => Ok(json_lines(BufReader::new(file))),
        Format::Parquet => parquet(path, file),
    }
}

fn require(path: &Path, headers: &[String]) -> Result<(), InputError> {
    for column in ["case_id", "reaction"] {
        if !headers.iter().any(|h| h == column) {
            return Err(InputError::MissingColumn {
                path: path.to_path_buf(),
                column,
            });
        }
    }
    Ok(())
}

fn delimited(path: &Path, file: File, delimiter: u8) -> Result<Cases, InputError> {
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delimiter)
        .flexible(true)
        .from_reader(BufReader::new(file));
    let headers: Vec<String> = reader
        .headers()
        .map_err(|e| InputError::Unreadable {
            path: path.to_path_buf(),
            reason: e.to_string(),
        })?
        .iter()
        .map(|h| h.trim().trim_start_matches('\u{feff}').to_string())
        .collect();
    require(path, &headers)?;
    let at = Positions::new(&headers);
    let width = headers.len();
    let mut row = 0u64;
    Ok(Box::new(reader.into_records().map(move |rec| {
        row += 1;
        match rec {
            Ok(rec) => {
                let extra = at.extra.iter().map(|(name, i)| (name.as_str(), rec.get(*i).and_then(cell)));
                let get = |k: usize| at.known[k].and_then(|i| rec.get(i)).and_then(cell);
                let mut case = case_from_cells(row, extra, get);
                if rec.len() != width && case.input_error.is_none() {
                    case.input_error = Some(format!("row {row}: has {} fields, the header has {width}", rec.len()));
                }
                case
            }
            Err(e) => CaseInput {
                case_id: format!("row-{row}"),
                row,
                input_error: Some(format!("row {row}: cannot be read: {e}")),
                ..CaseInput::default()
            },
        }
    })))
}

fn json_text(v: &serde_json::Value) -> Option<String> {
    match v {
        serde_json::Value::Null => None,
        serde_json::Value::String(s) => cell(s),
        other => Some(other.to_string()),
    }
}

fn json_lines(reader: impl BufRead + Send + 'static) -> Cases {
    let known: Vec<&str> = known_columns().collect();
    let mut row = 0u64;
    Box::new(reader.lines().filter_map(move |line| {
        let line = match line {
            Ok(l) if l.trim().is_empty() => return None,
            Ok(l) => l,
            Err(e) => {
                row += 1;
                return Some(CaseInput {
                    case_id: format!("row-{row}"),
                    row,
                    input_error: Some(format!("row {row}: cannot be read: {e}")),
                    ..CaseInput::default()
                });
            }
        };
        row += 1;
        Some(match serde_json::from_str::<serde_json::Map<String, serde_json::Value>>(&line) {
            Ok(obj) => {
                let extra = obj.iter().filter(|(k, _)| !is_known(k)).map(|(k, v)| (k.as_str(), json_text(v)));
                case_from_cells(row, extra, |k| obj.get(known[k]).and_then(json_text))
            }
            Err(e) => CaseInput {
                case_id: format!("row-{row}"),
                row,
                input_error: Some(format!("row {row}: expected a JSON object on one line: {e}")),
                ..CaseInput::default()
            },
        })
    }))
}

fn parquet(path: &Path, file: File) -> Result<Cases, InputError> {
    use polars::prelude::*;
    let unreadable = |e: PolarsError| InputError::Unreadable {
        path: path.to_path_buf(),
        reason: e.to_string(),
    };
    let df = ParquetReader::new(file).finish().map_err(unreadable)?;
    let headers: Vec<String> = df.get_column_names().iter().map(|s| s.to_string()).collect();
    require(path, &headers)?;
    let mut columns = Vec::with_capacity(headers.len());
    for h in &headers {
        let c = df.column(h).map_err(unreadable)?.cast(&DataType::String).map_err(unreadable)?;
        let ca = c.str().map_err(unreadable)?;
        let v: Vec<Option<String>> = (0..ca.len()).map(|i| ca.get(i).and_then(cell)).collect();
        columns.push(v);
    }
    let n = df.height();
    let at = Positions::new(&headers);
    Ok(Box::new((0..n).map(move |i| {
        let extra = at.extra.iter().map(|(name, k)| (name.as_str(), columns[*k][i].clone()));
        let get = |k: usize| at.known[k].and_then(|c| columns[c][i].clone());
        case_from_cells(i as u64 + 1, extra, get)
    })))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cases(text: &str) -> Vec<CaseInput> {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("in.csv");
        std::fs::write(&p, text).unwrap();
        open(&p, None).unwrap().collect()
    }

    #[test]
    fn bad_cells_become_error_rows_that_name_row_and_column() {
        let c = cases(
            "case_id,reaction,scale_mol,process_temperature_c,step,solvent\nA,H2 + O2 -> H2O(l),abc,25,1,toluene\n,CO + O2 -> CO2,,,x,\n",
        );
        assert_eq!(c.len(), 2);
        assert_eq!(
            c[0].input_error.as_deref(),
            Some("row 1, column scale_mol: expected a number, got \"abc\"")
        );
        assert_eq!(c[0].conditions.process_temperature_k, Some(298.15));
        assert_eq!(c[0].conditions.extra.get("solvent").map(String::as_str), Some("toluene"));
        let e = c[1].input_error.as_deref().unwrap();
        assert!(e.starts_with("row 2, column case_id: missing"), "{e}");
        assert!(e.contains("column step: expected a whole number"), "{e}");
        assert_eq!(c[1].case_id, "row-2");
    }

    #[test]
    fn kelvin_and_celsius_for_one_field_is_an_error() {
        let c = cases("case_id,reaction,mtt_k,mtt_c\nA,CO + O2 -> CO2,400,120\n");
        assert!(c[0]
            .input_error
            .as_deref()
            .unwrap()
            .contains("columns mtt_k and mtt_c both give mtt_k"));
    }

    #[test]
    fn a_file_without_reaction_column_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("in.tsv");
        std::fs::write(&p, "case_id\tequation\nA\tx\n").unwrap();
        assert!(matches!(open(&p, None), Err(InputError::MissingColumn { column: "reaction", .. })));
    }

    #[test]
    fn parquet_input_with_numeric_columns() {
        use polars::prelude::*;
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("in.parquet");
        let mut df = DataFrame::new(
            2,
            vec![
                Column::new("case_id".into(), vec!["A", "B"]),
                Column::new("reaction".into(), vec![Some("CO + O2 -> CO2"), None]),
                Column::new("step".into(), vec![1i64, 2]),
                Column::new("process_temperature_c".into(), vec![25.0f64, 80.0]),
            ],
        )
        .unwrap();
        ParquetWriter::new(std::fs::File::create(&p).unwrap()).finish(&mut df).unwrap();
        let c: Vec<CaseInput> = open(&p, None).unwrap().collect();
        assert_eq!((c[0].step, c[0].conditions.process_temperature_k), (Some(1), Some(298.15)));
        assert!(c[1].input_error.as_deref().unwrap().contains("column reaction: missing"));
    }

    #[test]
    fn json_lines_numbers_and_bad_lines() {
        let r =
            std::io::Cursor::new("{\"case_id\": \"A\", \"reaction\": \"CO + O2 -> CO2\", \"step\": 2, \"pressure_bar\": 1.5}\nnot json\n");
        let c: Vec<CaseInput> = json_lines(r).collect();
        assert_eq!((c[0].step, c[0].conditions.pressure_bar), (Some(2), Some(1.5)));
        assert!(c[1].input_error.as_deref().unwrap().starts_with("row 2: expected a JSON object"));
    }
}
