//! Files of a batch: its folder, the part files of each chunk, atomic writes (temp file in the
//! same folder, fsync, rename, fsync of the folder) and Parquet reading and writing.
//!
//! Part names are deterministic (`parts/cases-00000042.parquet`), so a chunk computed twice
//! replaces its own parts and never adds rows.

use crate::concat::ROW_GROUP_ROWS;
use crate::WorkerError;
use polars::prelude::*;
use polars_parquet::parquet::compression::Compression;
use polars_parquet::parquet::CowBuffer;
use polars_parquet::write::{
    array_to_columns, schema_to_metadata_key, to_parquet_schema, CompressedDataPage, CompressedPage, CompressionOptions, DynIter,
    DynStreamingIterator, Encoding, FallibleStreamingIterator, FileWriter, KeyValue, Page, ParquetType, StatisticsOptions, Version,
    WriteOptions,
};
use std::cell::RefCell;
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

/// The zstd level of every page. Level 1 is zstd's fastest regular level; the tables came out
/// the same size as at level 3 on the demo.
const ZSTD_LEVEL: i32 = 1;

thread_local! {
    /// One zstd context per thread, reused for every page: polars' own page compressor makes a
    /// context and zeroes an output buffer per page, a fixed cost that was a sixth of the
    /// compression time of a chunk's parts (some 100 pages of 2,000 rows or fewer).
    static ZSTD: RefCell<Option<zstd::bulk::Compressor<'static>>> = const { RefCell::new(None) };
}

/// Compress one uncompressed page with the thread's zstd context.
fn compress_page(page: Page) -> PolarsResult<CompressedPage> {
    let Page::Data(page) = page else {
        polars_bail!(ComputeError: "a dictionary page in a part (parts are written plain)");
    };
    let raw = page.buffer();
    let mut out = Vec::with_capacity(zstd::zstd_safe::compress_bound(raw.len()));
    ZSTD.with_borrow_mut(|z| {
        let z = match z {
            Some(z) => z,
            None => z.insert(zstd::bulk::Compressor::new(ZSTD_LEVEL)?),
        };
        z.compress_to_buffer(raw, &mut out)
    })
    .map_err(|e| polars_err!(ComputeError: "zstd: {e}"))?;
    let num_rows = page.num_rows().unwrap_or_else(|| page.num_values());
    Ok(CompressedPage::Data(CompressedDataPage::new(
        page.header().clone(),
        CowBuffer::Owned(out),
        Compression::Zstd,
        raw.len(),
        page.descriptor.clone(),
        num_rows,
    )))
}

/// Bytes (in memory, before encoding) at which a frame writer closes its row group even short
/// of [`ROW_GROUP_ROWS`]: 65,536 routes rows are some 80 MB of text, held as the gathered frame,
/// its rechunked copy and a column's encoded page at once (the finalizer's peak memory at 2 M
/// cases). Only the tables a frame writer writes (routes, species) are cut this way; cases and
/// trends are joined from parts by [`crate::concat::Concat`], by rows.
pub const ROW_GROUP_BYTES: usize = 8 << 20;

/// A column chunk's compressed pages, handed to the file writer one by one.
struct PageList {
    pages: std::vec::IntoIter<CompressedPage>,
    current: Option<CompressedPage>,
}

impl FallibleStreamingIterator for PageList {
    type Item = CompressedPage;
    type Error = PolarsError;

    fn advance(&mut self) -> PolarsResult<()> {
        self.current = self.pages.next();
        Ok(())
    }

    fn get(&self) -> Option<&CompressedPage> {
        self.current.as_ref()
    }
}

/// A Parquet file written frame by frame (frames gathered into row groups of about
/// [`ROW_GROUP_ROWS`] rows or [`ROW_GROUP_BYTES`] bytes), single-threaded, with
/// plain encoding and zstd level 1. Part files and the tables made from
/// them share these settings, so the finalizer can copy pages from one into the other.
pub struct FrameWriter<W: std::io::Write> {
    writer: FileWriter<W>,
    schema: ArrowSchema,
    fields: Vec<ParquetType>,
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
        let options = WriteOptions {
            statistics: StatisticsOptions::default(),
            // Pages are encoded uncompressed and then compressed here (`compress_page`).
            compression: CompressionOptions::Uncompressed,
            version: Version::V1,
            data_page_size: None,
        };
        Ok(FrameWriter {
            fields: to_parquet_schema(&schema)?.fields().to_vec(),
            writer: FileWriter::try_new(out, schema.clone(), options)?,
            schema,
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
        if self
            .pending
            .as_ref()
            .is_some_and(|p| p.height() as u64 >= ROW_GROUP_ROWS || p.estimated_size() >= ROW_GROUP_BYTES)
        {
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
            if rows == 0 {
                continue;
            }
            let mut columns = Vec::with_capacity(self.fields.len());
            for (array, field) in batch.into_arrays().into_iter().zip(&self.fields) {
                // Flat columns: one leaf each.
                for pages in array_to_columns(array, field.clone(), self.options, &[PART_ENCODING])? {
                    let compressed = pages.map(|page| compress_page(page?)).collect::<PolarsResult<Vec<_>>>()?;
                    columns.push(Ok(DynStreamingIterator::new(PageList {
                        pages: compressed.into_iter(),
                        current: None,
                    })));
                }
            }
            self.writer.write(rows, DynIter::new(columns.into_iter()))?;
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
