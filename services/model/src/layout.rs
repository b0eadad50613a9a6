//! The results folder: one folder per batch, named by its id, holding the batch tables and,
//! until the batch is DONE, the part files of its chunks.

use std::path::{Path, PathBuf};

/// The files of a finished batch.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Table {
    Cases,
    Trends,
    Routes,
    Species,
    Manifest,
}

impl Table {
    /// Every file of a finished batch, in the order they are listed to users.
    pub const ALL: [Table; 5] = [Table::Cases, Table::Trends, Table::Routes, Table::Species, Table::Manifest];

    /// The file's name inside the batch folder.
    pub fn file_name(self) -> &'static str {
        match self {
            Table::Cases => "cases.parquet",
            Table::Trends => "trends.parquet",
            Table::Routes => "routes.parquet",
            Table::Species => "species.parquet",
            Table::Manifest => "manifest.json",
        }
    }

    /// The name without its extension: `cases`, the stem of the table's part files
    /// (`parts/cases-00000042.parquet`).
    pub fn stem(self) -> &'static str {
        let name = self.file_name();
        name.split_once('.').map_or(name, |(stem, _)| stem)
    }
}

/// A batch id that is not a server-made id.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("batch id {0:?} is not a server-made id (lowercase hex)")]
pub struct BadBatchId(pub String);

/// The folder of one batch. Batch ids are server-made hex; anything else is refused so that an
/// id can never walk out of the results folder.
///
/// # Errors
/// [`BadBatchId`] for an id that is not 1 to 64 lowercase hex digits.
pub fn batch_dir(results_dir: &Path, batch_id: &str) -> Result<PathBuf, BadBatchId> {
    let ok = !batch_id.is_empty() && batch_id.len() <= 64 && batch_id.bytes().all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b));
    if !ok {
        return Err(BadBatchId(batch_id.to_string()));
    }
    Ok(results_dir.join(batch_id))
}

/// `parts/<table>-<seq>.parquet` inside the batch folder: deterministic, so a chunk computed
/// twice replaces its own parts and never adds rows.
///
/// # Errors
/// As [`batch_dir`].
pub fn part_path(results_dir: &Path, batch_id: &str, table: Table, seq: u64) -> Result<PathBuf, BadBatchId> {
    Ok(batch_dir(results_dir, batch_id)?
        .join("parts")
        .join(format!("{}-{seq:08}.parquet", table.stem())))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ids_that_could_leave_the_results_folder_are_refused() {
        for bad in ["", "../x", "/abs", "ABC", "a/b", &"a".repeat(65)] {
            assert!(batch_dir(Path::new("r"), bad).is_err(), "{bad:?}");
        }
        assert_eq!(batch_dir(Path::new("r"), "0af3").ok(), Some(PathBuf::from("r/0af3")));
        assert_eq!(
            part_path(Path::new("r"), "0af3", Table::Trends, 42).ok(),
            Some(PathBuf::from("r/0af3/parts/trends-00000042.parquet"))
        );
    }
}
