//! Concatenate Parquet part files into one file by copying their compressed pages: nothing is
//! decoded or compressed again, so the finalizer's cost is the bytes it copies. Every part must
//! come from the same writer settings and schema (the worker's part writer guarantees it); a
//! part with another schema is an error, never a silent mix.

use crate::WorkerError;
use polars_buffer::Buffer;
use polars_parquet::parquet::error::ParquetError;
use polars_parquet::parquet::metadata::{FileMetadata, KeyValue, SchemaDescriptor};
use polars_parquet::parquet::page::CompressedPage;
use polars_parquet::parquet::read::PageReader;
use polars_parquet::parquet::read::{get_page_iterator, read_metadata};
use polars_parquet::parquet::write::{DynIter, DynStreamingIterator, FileWriter, Version, WriteOptions};
use polars_parquet::parquet::FallibleStreamingIterator;
use std::io::{Cursor, Write};
use std::path::{Path, PathBuf};

/// One column's compressed pages across the column chunks of several parts, in order: the
/// pages of one column chunk of the output.
struct Pages {
    readers: std::vec::IntoIter<PageReader>,
    pages: Option<PageReader>,
    current: Option<CompressedPage>,
}

impl FallibleStreamingIterator for Pages {
    type Item = CompressedPage;
    type Error = ParquetError;

    fn advance(&mut self) -> Result<(), ParquetError> {
        self.current = None;
        while self.current.is_none() {
            let Some(pages) = self.pages.as_mut() else { break };
            match pages.next().transpose()? {
                Some(page) => self.current = Some(page),
                None => self.pages = self.readers.next(),
            }
        }
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

/// Rows a row group of the output gathers (from as many parts as it takes). Parts are small
/// (one chunk each); a row group per part would make the footer, which the writer holds in
/// memory and every reader parses, grow with the batch.
pub const ROW_GROUP_ROWS: u64 = 65_536;

/// A part read into memory, waiting to join a row group.
struct Part {
    path: PathBuf,
    buffer: Buffer<u8>,
    meta: FileMetadata,
}

/// Appends parts to one Parquet file. Their column chunks are joined into row groups of about
/// [`ROW_GROUP_ROWS`] rows: a column chunk of the output is the pages of that column in each
/// part, one after the other. That needs parts without dictionary pages (a column chunk holds
/// one dictionary at most): the part writer writes plain pages only.
pub struct Concat<W: Write> {
    writer: Option<FileWriter<W>>,
    out: Option<W>,
    /// The first part's key-value metadata (polars keeps its Arrow schema there).
    kv: Vec<KeyValue>,
    schema: Option<SchemaDescriptor>,
    pending: Vec<Part>,
    pending_rows: u64,
    /// Rows appended so far.
    pub rows: u64,
}

impl<W: Write> Concat<W> {
    pub fn new(out: W) -> Concat<W> {
        Concat {
            writer: None,
            out: Some(out),
            kv: Vec::new(),
            schema: None,
            pending: Vec::new(),
            pending_rows: 0,
            rows: 0,
        }
    }

    /// Append every row of the part at `path`.
    ///
    /// # Errors
    /// I/O errors, an unreadable part, a part whose schema differs from the first one's, or
    /// one with a nested column or a dictionary page.
    pub fn append(&mut self, path: &Path) -> Result<(), WorkerError> {
        let bytes = std::fs::read(path).map_err(|source| WorkerError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        let buffer = Buffer::from(bytes);
        let meta = read_metadata(&mut Cursor::new(buffer.clone())).map_err(parquet_err(path))?;
        let refuse = |reason: String| WorkerError::Concat {
            path: path.to_path_buf(),
            reason,
        };
        if let Some(c) = meta.schema().columns().iter().find(|c| c.descriptor.max_rep_level > 0) {
            return Err(refuse(format!(
                "column {:?} is nested; only flat columns are copied",
                c.path_in_schema
            )));
        }
        let dictionary = meta
            .row_groups
            .iter()
            .flat_map(|g| g.parquet_columns())
            .find(|c| c.dictionary_page_offset().is_some());
        if let Some(c) = dictionary {
            return Err(refuse(format!(
                "column {:?} has a dictionary page; only plain parts can share a row group",
                c.descriptor().path_in_schema
            )));
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
            return Err(refuse("its schema differs from the first part's".into()));
        }
        self.pending_rows += meta.num_rows as u64;
        self.rows += meta.num_rows as u64;
        self.pending.push(Part {
            path: path.to_path_buf(),
            buffer,
            meta,
        });
        if self.pending_rows >= ROW_GROUP_ROWS {
            self.flush()?;
        }
        Ok(())
    }

    /// Write the pending parts as one row group.
    fn flush(&mut self) -> Result<(), WorkerError> {
        let (Some(writer), Some(last)) = (self.writer.as_mut(), self.pending.last()) else {
            return Ok(());
        };
        let path = last.path.clone();
        let n = self.pending_rows;
        let parts = std::mem::take(&mut self.pending);
        let width = self.schema.as_ref().map_or(0, |s| s.columns().len());
        let columns = (0..width).map(|j| {
            let readers = parts
                .iter()
                .flat_map(|p| p.meta.row_groups.iter().map(move |g| (p, g)))
                .map(|(p, g)| get_page_iterator(&g.parquet_columns()[j], Cursor::new(p.buffer.clone()), Vec::new(), usize::MAX))
                .collect::<Result<Vec<PageReader>, ParquetError>>()?;
            let mut readers = readers.into_iter();
            let pages = readers.next();
            Ok(DynStreamingIterator::new(Pages {
                readers,
                pages,
                current: None,
            }))
        });
        writer.write(n, DynIter::new(columns)).map_err(parquet_err(&path))?;
        self.pending_rows = 0;
        Ok(())
    }

    /// Write the footer with the parts' key-value metadata, `extra` replacing keys of the same
    /// name. `None` when no part was appended (the caller writes an empty table instead).
    ///
    /// # Errors
    /// I/O errors.
    pub fn finish(mut self, extra: Vec<(String, String)>, path: &Path) -> Result<Option<u64>, WorkerError> {
        self.flush()?;
        let Some(mut writer) = self.writer else { return Ok(None) };
        let mut kv: Vec<KeyValue> = self.kv.into_iter().filter(|k| !extra.iter().any(|(e, _)| *e == k.key)).collect();
        kv.extend(extra.into_iter().map(|(key, value)| KeyValue { key, value: Some(value) }));
        let size = writer.end(Some(kv)).map_err(parquet_err(path))?;
        Ok(Some(size))
    }
}
