//! Files of a batch: its folder, the part files of each chunk, atomic writes (temp file in the
//! same folder, fsync, rename, fsync of the folder) and Parquet reading and writing.
//!
//! Part names are deterministic (`parts/cases-00000042.parquet`), so a chunk computed twice
//! replaces its own parts and never adds rows.

use crate::concat::ROW_GROUP_ROWS;
use crate::WorkerError;
use polars::prelude::*;
use polars_parquet::write::{
    row_group_iter, schema_to_metadata_key, to_parquet_schema, CompressionOptions, Encoding, FileWriter, KeyValue, ParquetType,
    StatisticsOptions, Version, WriteOptions, ZstdLevel,
};
use std::fs::File;
use std::io::BufWriter;
use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};

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

/// How a part writes a column: plain. The finalizer joins the column chunks of many parts
/// into one row group, which a dictionary page per part would forbid. (Polars' own writer
/// also tries a dictionary for every number and string column and estimates each column's
/// cardinality first: a fixed cost per column that was most of a 2,000-case part's encoding
/// time.) zstd takes the repeats out of plain pages.
const PART_ENCODING: Encoding = Encoding::Plain;

/// A Parquet file written frame by frame (frames gathered into row groups of about
/// [`ROW_GROUP_ROWS`] rows), single-threaded, with
/// plain encoding and zstd level 1. Part files and the tables made from
/// them share these settings, so the finalizer can copy pages from one into the other.
pub struct FrameWriter<W: std::io::Write> {
    writer: FileWriter<W>,
    schema: ArrowSchema,
    fields: Vec<ParquetType>,
    encodings: polars_buffer::Buffer<Vec<Encoding>>,
    options: WriteOptions,
    pending: Option<DataFrame>,
}

impl<W: std::io::Write> FrameWriter<W> {
    /// A writer for frames with `schema`.
    ///
    /// # Errors
    /// Polars errors (a type Parquet cannot hold).
    pub fn new(out: W, schema: &Schema) -> Result<FrameWriter<W>, WorkerError> {
        let schema = schema.to_arrow(CompatLevel::newest());
        let encodings: Vec<Vec<Encoding>> = schema.iter_values().map(|_| vec![PART_ENCODING]).collect();
        let options = WriteOptions {
            statistics: StatisticsOptions::default(),
            compression: CompressionOptions::Zstd(Some(ZstdLevel::try_new(1)?)),
            version: Version::V1,
            data_page_size: None,
        };
        Ok(FrameWriter {
            fields: to_parquet_schema(&schema)?.fields().to_vec(),
            writer: FileWriter::try_new(out, schema.clone(), options)?,
            schema,
            encodings: polars_buffer::Buffer::from(encodings),
            options,
            pending: None,
        })
    }

    /// Append a frame with the writer's schema.
    ///
    /// # Errors
    /// Polars errors, also when the frame's schema differs.
    pub fn write(&mut self, df: &DataFrame) -> Result<(), WorkerError> {
        if df.schema().to_arrow(CompatLevel::newest()) != self.schema {
            return Err(polars_err!(SchemaMismatch: "a frame's columns differ from the file's").into());
        }
        match &mut self.pending {
            Some(p) => {
                p.vstack_mut(df)?;
            }
            None => self.pending = Some(df.clone()),
        }
        if self.pending.as_ref().is_some_and(|p| p.height() as u64 >= ROW_GROUP_ROWS) {
            self.flush()?;
        }
        Ok(())
    }

    /// Write the gathered frames as one row group.
    fn flush(&mut self) -> Result<(), WorkerError> {
        let Some(mut df) = self.pending.take() else { return Ok(()) };
        df.rechunk_mut();
        for batch in df.iter_chunks(CompatLevel::newest(), false) {
            let rows = batch.len() as u64;
            if rows > 0 {
                let columns = row_group_iter(batch, self.encodings.clone(), self.fields.clone(), self.options);
                self.writer.write(rows, columns)?;
            }
        }
        Ok(())
    }

    /// Write the footer, with `metadata` as file key-value metadata beside the schema.
    ///
    /// # Errors
    /// I/O errors.
    pub fn finish(mut self, metadata: Vec<(String, String)>) -> Result<(), WorkerError> {
        self.flush()?;
        let mut kv = vec![schema_to_metadata_key(&self.schema)];
        kv.extend(metadata.into_iter().map(|(key, value)| KeyValue { key, value: Some(value) }));
        self.writer.end(Some(kv))?;
        Ok(())
    }
}

/// Write a part file (each engine thread writes its own parts; a thread pool per write only
/// contends).
///
/// # Errors
/// I/O and Polars errors.
pub fn write_part(path: &Path, df: &DataFrame) -> Result<(), WorkerError> {
    write_atomic(path, |f| {
        let mut w = FrameWriter::new(f, df.schema())?;
        w.write(df)?;
        w.finish(Vec::new())
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
