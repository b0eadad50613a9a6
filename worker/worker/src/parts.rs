//! Files of a batch: its folder, the part files of each chunk, atomic writes (temp file in the
//! same folder, fsync, rename, fsync of the folder) and Parquet reading and writing.
//!
//! Part names are deterministic (`parts/cases-00000042.parquet`), so a chunk computed twice
//! replaces its own parts and never adds rows.

use crate::WorkerError;
use polars::prelude::*;
use std::fs::File;
use std::io::BufWriter;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// The folder of one batch. Batch ids are server-made hex; anything else is refused so that an
/// id can never walk out of the results folder.
///
/// # Errors
/// `BadBatchId` for an id that is not 1 to 64 lowercase hex digits.
pub fn batch_dir(results_dir: &Path, batch_id: &str) -> Result<PathBuf, WorkerError> {
    let ok = !batch_id.is_empty() && batch_id.len() <= 64 && batch_id.bytes().all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b));
    if !ok {
        return Err(WorkerError::BadBatchId(batch_id.to_string()));
    }
    Ok(results_dir.join(batch_id))
}

/// `parts/<table>-<seq>.parquet` inside the batch folder.
///
/// # Errors
/// As [`batch_dir`].
pub fn part_path(results_dir: &Path, batch_id: &str, table: &str, seq: u64) -> Result<PathBuf, WorkerError> {
    Ok(batch_dir(results_dir, batch_id)?
        .join("parts")
        .join(format!("{table}-{seq:08}.parquet")))
}

fn io(path: &Path) -> impl FnOnce(std::io::Error) -> WorkerError + '_ {
    move |source| WorkerError::Io {
        path: path.to_path_buf(),
        source,
    }
}

/// Write a file atomically: `write` fills a (buffered) temporary file beside `path`, which is synced and
/// renamed over `path`; readers see the old file or the whole new one, never a part.
///
/// # Errors
/// I/O errors naming the path, or the error of `write`.
pub fn write_atomic(path: &Path, write: impl FnOnce(&mut BufWriter<File>) -> Result<(), WorkerError>) -> Result<(), WorkerError> {
    let dir = path.parent().unwrap_or(Path::new("."));
    std::fs::create_dir_all(dir).map_err(io(dir))?;
    let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("file");
    // Unique per process and call: two threads (or a redelivered chunk in another worker) never
    // write the same temp file.
    static NEXT: AtomicU64 = AtomicU64::new(0);
    let tmp = dir.join(format!(
        ".{name}.tmp-{}-{}",
        std::process::id(),
        NEXT.fetch_add(1, Ordering::Relaxed)
    ));
    let result = (|| {
        // Buffered: Parquet writers write page by page, and unbuffered every page header would
        // be a system call.
        let mut w = BufWriter::with_capacity(1 << 20, File::create(&tmp).map_err(io(&tmp))?);
        write(&mut w)?;
        let f = w.into_inner().map_err(|e| io(&tmp)(e.into_error()))?;
        f.sync_all().map_err(io(&tmp))?;
        std::fs::rename(&tmp, path).map_err(io(path))?;
        // The rename is durable once the folder is synced.
        if let Ok(d) = File::open(dir) {
            let _ = d.sync_all();
        }
        Ok(())
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}

/// Write one frame as a Parquet file, atomically, with file key-value metadata (zstd, the
/// default, for tables people keep).
///
/// # Errors
/// I/O and Polars errors.
pub fn write_parquet(path: &Path, df: &mut DataFrame, metadata: Option<Vec<(String, String)>>) -> Result<(), WorkerError> {
    write_atomic(path, |f| {
        ParquetWriter::new(f)
            .with_key_value_metadata(metadata.map(KeyValueMetadata::from_static))
            .finish(df)?;
        Ok(())
    })
}

/// Write a part file, single-threaded (each engine thread writes its own parts; a thread pool
/// per write only contends). Parts are compressed as the batch tables are (zstd, the default):
/// the finalizer copies their pages into the tables as they are.
///
/// # Errors
/// I/O and Polars errors.
pub fn write_part(path: &Path, df: &mut DataFrame) -> Result<(), WorkerError> {
    write_atomic(path, |f| {
        ParquetWriter::new(f).set_parallel(false).finish(df)?;
        Ok(())
    })
}

/// Read some columns of a Parquet file.
///
/// # Errors
/// I/O and Polars errors.
pub fn read_parquet_columns(path: &Path, columns: &[&str]) -> Result<DataFrame, WorkerError> {
    let f = File::open(path).map_err(io(path))?;
    Ok(ParquetReader::new(f)
        .with_columns(Some(columns.iter().map(|c| c.to_string()).collect()))
        .finish()?)
}

/// Read a whole Parquet file.
///
/// # Errors
/// I/O and Polars errors.
pub fn read_parquet(path: &Path) -> Result<DataFrame, WorkerError> {
    let f = File::open(path).map_err(io(path))?;
    Ok(ParquetReader::new(f).finish()?)
}
