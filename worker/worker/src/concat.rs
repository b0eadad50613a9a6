//! Concatenate Parquet part files into one file by copying their compressed pages: nothing is
//! decoded or compressed again, so the finalizer's cost is the bytes it copies. Every part must
//! come from the same writer settings and schema (the worker's part writer guarantees it); a
//! part with another schema is an error, never a silent mix.

use crate::WorkerError;
use polars_buffer::Buffer;
use polars_parquet::parquet::error::ParquetError;
use polars_parquet::parquet::metadata::{KeyValue, SchemaDescriptor};
use polars_parquet::parquet::page::CompressedPage;
use polars_parquet::parquet::read::PageReader;
use polars_parquet::parquet::read::{get_page_iterator, read_metadata};
use polars_parquet::parquet::write::{DynIter, DynStreamingIterator, FileWriter, Version, WriteOptions};
use polars_parquet::parquet::FallibleStreamingIterator;
use std::io::{Cursor, Write};
use std::path::Path;

/// A column chunk's compressed pages, as the writer takes them.
struct Pages {
    pages: PageReader,
    current: Option<CompressedPage>,
}

impl FallibleStreamingIterator for Pages {
    type Item = CompressedPage;
    type Error = ParquetError;

    fn advance(&mut self) -> Result<(), ParquetError> {
        self.current = self.pages.next().transpose()?;
        // A page read back does not know its row count; the writer needs it. Every column here
        // is flat (checked in `append`), so a data page holds one row per value.
        if let Some(CompressedPage::Data(page)) = &mut self.current {
            if page.num_rows.is_none() {
                page.num_rows = Some(page.num_values());
            }
        }
        Ok(())
    }

    fn get(&self) -> Option<&CompressedPage> {
        self.current.as_ref()
    }
}

fn parquet_err(path: &Path) -> impl FnOnce(ParquetError) -> WorkerError + '_ {
    move |e| WorkerError::Concat {
        path: path.to_path_buf(),
        reason: e.to_string(),
    }
}

/// Appends parts to one Parquet file.
pub struct Concat<W: Write> {
    writer: Option<FileWriter<W>>,
    out: Option<W>,
    /// The first part's key-value metadata (polars keeps its Arrow schema there).
    kv: Vec<KeyValue>,
    schema: Option<SchemaDescriptor>,
    pub rows: u64,
}

impl<W: Write> Concat<W> {
    pub fn new(out: W) -> Concat<W> {
        Concat {
            writer: None,
            out: Some(out),
            kv: Vec::new(),
            schema: None,
            rows: 0,
        }
    }

    /// Append every row group of the part at `path`.
    ///
    /// # Errors
    /// I/O errors, an unreadable part, or a part whose schema differs from the first one's.
    pub fn append(&mut self, path: &Path) -> Result<(), WorkerError> {
        let bytes = std::fs::read(path).map_err(|source| WorkerError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        let buffer = Buffer::from(bytes);
        let meta = read_metadata(&mut Cursor::new(buffer.clone())).map_err(parquet_err(path))?;
        if let Some(c) = meta.schema().columns().iter().find(|c| c.descriptor.max_rep_level > 0) {
            return Err(WorkerError::Concat {
                path: path.to_path_buf(),
                reason: format!("column {:?} is nested; only flat columns are copied", c.path_in_schema),
            });
        }
        if self.writer.is_none() {
            self.kv = meta.key_value_metadata().clone().unwrap_or_default();
            self.schema = Some(meta.schema().clone());
            let out = self.out.take().expect("output taken once");
            let options = WriteOptions {
                write_statistics: true,
                version: Version::V1,
            };
            self.writer = Some(FileWriter::new(
                out,
                meta.schema().clone(),
                options,
                Some(meta.created_by.clone().unwrap_or_default()),
            ));
        } else if self.schema.as_ref().map(|s| s.columns()) != Some(meta.schema().columns()) {
            return Err(WorkerError::Concat {
                path: path.to_path_buf(),
                reason: "its schema differs from the first part's".into(),
            });
        }
        let writer = self.writer.as_mut().expect("writer set above");
        for group in &meta.row_groups {
            let n = group.num_rows() as u64;
            let buffer = buffer.clone();
            let columns = group.parquet_columns().iter().map(move |c| {
                get_page_iterator(c, Cursor::new(buffer.clone()), Vec::new(), usize::MAX)
                    .map(|pages| DynStreamingIterator::new(Pages { pages, current: None }))
            });
            writer.write(n, DynIter::new(columns)).map_err(parquet_err(path))?;
            self.rows += n;
        }
        Ok(())
    }

    /// Write the footer with the parts' key-value metadata, `extra` replacing keys of the same
    /// name. `None` when no part was appended (the caller writes an empty table instead).
    ///
    /// # Errors
    /// I/O errors.
    pub fn finish(self, extra: Vec<(String, String)>, path: &Path) -> Result<Option<u64>, WorkerError> {
        let Some(mut writer) = self.writer else { return Ok(None) };
        let mut kv: Vec<KeyValue> = self.kv.into_iter().filter(|k| !extra.iter().any(|(e, _)| *e == k.key)).collect();
        kv.extend(extra.into_iter().map(|(key, value)| KeyValue { key, value: Some(value) }));
        let size = writer.end(Some(kv)).map_err(parquet_err(path))?;
        Ok(Some(size))
    }
}
