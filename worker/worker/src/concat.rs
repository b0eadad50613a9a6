//! Concatenate Parquet part files into one file by copying their compressed pages: nothing is
//! decoded or compressed again, so the finalizer's cost is the bytes it copies. Every part must
//! come from the same writer settings and schema (the worker's part writer guarantees it); a
//! part with another schema is an error, never a silent mix.

use crate::WorkerError;
use polars_buffer::Buffer;
use polars_parquet::parquet::error::ParquetError;
use polars_parquet::parquet::metadata::{FileMetadata, KeyValue, SchemaDescriptor, ThriftFileMetadata};
use polars_parquet::parquet::page::CompressedPage;
use polars_parquet::parquet::read::PageReader;
use polars_parquet::parquet::read::{get_page_iterator, read_metadata};
use polars_parquet::parquet::write::{DynIter, DynStreamingIterator, FileWriter, Version, WriteOptions};
use polars_parquet::parquet::{FallibleStreamingIterator, FOOTER_SIZE, HEADER_SIZE, PARQUET_MAGIC};
use polars_parquet_format::thrift::protocol::TCompactOutputProtocol;
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
///
/// Each row group is written by polars-parquet's own writer into a buffer (so the chunk
/// statistics are merged by polars) and copied out with its offsets moved; the footer is that
/// writer's footer with every row group in it. The page index (column and offset indexes) is
/// left out: polars' writer keeps a page header with statistics for every page until the
/// footer, about 1 kB each, which grew the finalizer by tens of MB per million cases. Readers
/// use the chunk statistics to skip row groups as before.
pub struct Concat<W: Write> {
    out: W,
    /// Bytes written to `out` so far (0 before the first part).
    offset: u64,
    /// The first part's key-value metadata (polars keeps its Arrow schema there).
    kv: Vec<KeyValue>,
    schema: Option<SchemaDescriptor>,
    created_by: Option<String>,
    /// The footer so far: the first row group's writer's metadata, gathering every row group.
    footer: Option<ThriftFileMetadata>,
    pending: Vec<Part>,
    pending_rows: u64,
    /// Rows appended so far.
    pub rows: u64,
}

impl<W: Write> Concat<W> {
    pub fn new(out: W) -> Concat<W> {
        Concat {
            out,
            offset: 0,
            kv: Vec::new(),
            schema: None,
            created_by: None,
            footer: None,
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
        match &self.schema {
            None => {
                self.kv = meta.key_value_metadata().clone().unwrap_or_default();
                self.schema = Some(meta.schema().clone());
                self.created_by = Some(meta.created_by.clone().unwrap_or_default());
            }
            Some(schema) if schema.columns() != meta.schema().columns() => {
                return Err(refuse("its schema differs from the first part's".into()));
            }
            Some(_) => {}
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
        let (Some(schema), Some(last)) = (self.schema.as_ref(), self.pending.last()) else {
            return Ok(());
        };
        if self.pending_rows == 0 {
            // Only empty parts: no row group (an empty one would have no pages to point at).
            self.pending.clear();
            return Ok(());
        }
        let path = last.path.clone();
        let n = self.pending_rows;
        let parts = std::mem::take(&mut self.pending);
        let columns = (0..schema.columns().len()).map(|j| {
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
        // Chunk statistics are merged from the page statistics either way; `write_statistics`
        // only adds the column index, which is cut off below.
        let options = WriteOptions {
            write_statistics: false,
            version: Version::V1,
        };
        let mut writer = FileWriter::new(Vec::new(), schema.clone(), options, self.created_by.clone());
        writer.write(n, DynIter::new(columns)).map_err(parquet_err(&path))?;
        writer.end(None).map_err(parquet_err(&path))?;
        let (buffer, mut meta) = writer.into_inner_and_metadata();
        drop(parts);
        let Some(mut group) = meta.row_groups.pop() else {
            return Err(WorkerError::Concat {
                path,
                reason: "the row group writer wrote no row group".into(),
            });
        };
        // The buffer is: magic, the row group, then the offset index and the footer. The row
        // group ends where the first index begins. (Each column chunk's pages are followed by a
        // copy of its metadata; those copies keep the buffer's offsets. Readers use the footer.)
        let end = group
            .columns
            .iter()
            .flat_map(|c| [c.column_index_offset, c.offset_index_offset])
            .flatten()
            .min()
            .and_then(|e| usize::try_from(e).ok())
            .unwrap_or(buffer.len());
        let io = |source| WorkerError::Io {
            path: path.clone(),
            source,
        };
        if self.offset == 0 {
            self.out.write_all(&PARQUET_MAGIC).map_err(io)?;
            self.offset = HEADER_SIZE;
        }
        // Every offset in the row group's metadata counted from the buffer's start.
        let shift = |o: &mut i64| *o += self.offset as i64 - HEADER_SIZE as i64;
        for c in &mut group.columns {
            shift(&mut c.file_offset);
            if let Some(m) = c.meta_data.as_mut() {
                shift(&mut m.data_page_offset);
                if let Some(o) = m.dictionary_page_offset.as_mut() {
                    shift(o);
                }
                if let Some(o) = m.index_page_offset.as_mut() {
                    shift(o);
                }
            }
            c.column_index_offset = None;
            c.column_index_length = None;
            c.offset_index_offset = None;
            c.offset_index_length = None;
        }
        if let Some(o) = group.file_offset.as_mut() {
            shift(o);
        }
        let footer = self.footer.get_or_insert(meta);
        group.ordinal = i16::try_from(footer.row_groups.len()).ok();
        footer.row_groups.push(group);
        let bytes = &buffer[HEADER_SIZE as usize..end];
        self.out.write_all(bytes).map_err(io)?;
        self.offset += bytes.len() as u64;
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
        let Some(mut footer) = self.footer else { return Ok(None) };
        let mut kv: Vec<KeyValue> = self.kv.into_iter().filter(|k| !extra.iter().any(|(e, _)| *e == k.key)).collect();
        kv.extend(extra.into_iter().map(|(key, value)| KeyValue { key, value: Some(value) }));
        footer.key_value_metadata = Some(kv);
        footer.num_rows = footer.row_groups.iter().map(|g| g.num_rows).sum();
        let mut body = Vec::new();
        let len = footer
            .write_to_out_protocol(&mut TCompactOutputProtocol::new(&mut body))
            .map_err(|e| parquet_err(path)(e.into()))?;
        let len = i32::try_from(len).map_err(|_| WorkerError::Concat {
            path: path.to_path_buf(),
            reason: format!("footer of {len} bytes is too large"),
        })?;
        let io = |source| WorkerError::Io {
            path: path.to_path_buf(),
            source,
        };
        self.out.write_all(&body).map_err(io)?;
        self.out.write_all(&len.to_le_bytes()).map_err(io)?;
        self.out.write_all(&PARQUET_MAGIC).map_err(io)?;
        self.out.flush().map_err(io)?;
        Ok(Some(self.offset + body.len() as u64 + FOOTER_SIZE))
    }
}
