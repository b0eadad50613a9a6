//! The finalizer: once every chunk of a batch is committed, concatenate the part files in chunk
//! order into `cases.parquet` and `trends.parquet` (pages copied, parts joined into row groups),
//! rank the chunks' routes into `routes.parquet`, gather each species once into
//! `species.parquet`, and write `manifest.json`. Memory stays at one row group per table plus a
//! small score per route and one row per species. The cases and trends tables are written on two
//! threads at once.

use crate::concat::Concat;
use crate::parts::{read_parquet, read_parquet_columns, write_atomic, FrameWriter};
use crate::route_table::RouteTable;
use crate::rows::{self, STATUS_OK};
use crate::WorkerError;
use polars::prelude::*;
use serde::{Deserialize, Serialize};
use std::path::Path;
use thermosieve_engine::routes::RANK_NOTE;
use thermosieve_engine::{elements, species, CAUTION, VERSION};
use thermosieve_model::{batch_dir, now_unix_ms, part_path, BatchSpec, Progress, Table};

/// Key-value metadata written into every table of a batch.
pub fn table_metadata(spec: &BatchSpec, table: &str) -> Vec<(String, String)> {
    let mut kv = vec![
        ("thermosieve.table".to_string(), table.to_string()),
        ("thermosieve.batch_id".to_string(), spec.batch_id.clone()),
        ("thermosieve.engine_version".to_string(), VERSION.to_string()),
        (
            "thermosieve.data_sources".to_string(),
            serde_json::to_string(&species::data_sources()).unwrap_or_default(),
        ),
        (
            "thermosieve.species_data_provenance".to_string(),
            species::bundled().provenance.clone(),
        ),
        ("thermosieve.elements_data_provenance".to_string(), elements::source().to_string()),
        (
            "thermosieve.temperature_grid_k".to_string(),
            serde_json::to_string(&spec.temperatures_k).unwrap_or_default(),
        ),
        ("thermosieve.caution".to_string(), CAUTION.to_string()),
    ];
    if table == Table::Routes.file_name() {
        kv.push(("thermosieve.rank_note".to_string(), RANK_NOTE.to_string()));
    }
    kv
}

/// One file of the manifest.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct FileEntry {
    pub name: String,
    pub rows: u64,
    pub bytes: u64,
}

/// `manifest.json`.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Manifest {
    pub batch_id: String,
    pub label: String,
    pub engine_version: String,
    pub data_sources: Vec<String>,
    pub temperature_grid_k: Vec<f64>,
    pub default_conditions: thermosieve_model::Conditions,
    pub counts: Counts,
    pub files: Vec<FileEntry>,
    pub cautions: Vec<String>,
    pub timings: Timings,
}

#[derive(Clone, Debug, Default, Serialize, Deserialize)]
pub struct Counts {
    pub cases: u64,
    pub cases_ok: u64,
    pub cases_error: u64,
    pub trend_rows: u64,
    pub routes: u64,
    pub species: u64,
    pub chunks: u64,
    pub chunks_dead_lettered: u64,
}

#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Timings {
    pub created_unix_ms: u64,
    pub finalize_started_unix_ms: u64,
    pub finished_unix_ms: u64,
    /// From batch creation to the manifest.
    pub elapsed_seconds: f64,
    pub finalize_seconds: f64,
}

/// Concatenate the parts of `table` (cases or trends) for chunks `0..chunks` into its file,
/// copying their pages; `each` sees every part's path first. Returns (rows, bytes).
fn concat_parts(
    results_dir: &Path,
    spec: &BatchSpec,
    table: Table,
    chunks: u64,
    empty: &DataFrame,
    mut each: impl FnMut(u64, &Path) -> Result<(), WorkerError>,
) -> Result<(u64, u64), WorkerError> {
    let dir = batch_dir(results_dir, &spec.batch_id)?;
    let file = table.file_name();
    let path = dir.join(file);
    let mut rows = 0u64;
    write_atomic(&path, |f| {
        let mut out = Concat::new(&mut *f);
        for seq in 0..chunks {
            let p = part_path(results_dir, &spec.batch_id, table, seq)?;
            if !p.exists() {
                return Err(WorkerError::MissingPart {
                    batch_id: spec.batch_id.clone(),
                    seq,
                    table: table.stem(),
                });
            }
            each(seq, &p)?;
            out.append(&p)?;
        }
        rows = out.rows;
        if out.finish(table_metadata(spec, file), &path)?.is_none() {
            FrameWriter::new(f, empty.schema())?.finish(table_metadata(spec, file))?;
        }
        Ok(())
    })?;
    let bytes = std::fs::metadata(&path).map_or(0, |m| m.len());
    Ok((rows, bytes))
}

/// `species.parquet`: the species parts' rows, each label once (the first seen). A batch holds
/// as many species as its reactions name, so this is small. Returns (rows, bytes).
fn species_table(results_dir: &Path, spec: &BatchSpec, chunks: u64) -> Result<(u64, u64), WorkerError> {
    let path = batch_dir(results_dir, &spec.batch_id)?.join(Table::Species.file_name());
    let mut seen = std::collections::HashSet::new();
    let mut rows = 0u64;
    write_atomic(&path, |f| {
        let mut w = FrameWriter::new(f, rows::species_frame(&[])?.schema())?;
        for seq in 0..chunks {
            let part = part_path(results_dir, &spec.batch_id, Table::Species, seq)?;
            if !part.exists() {
                return Err(WorkerError::MissingPart {
                    batch_id: spec.batch_id.clone(),
                    seq,
                    table: Table::Species.stem(),
                });
            }
            let df = read_parquet(&part)?;
            let labels = df.column("species_label")?.str()?;
            let new: BooleanChunked = (0..df.height())
                .map(|i| labels.get(i).is_some_and(|l| seen.insert(l.to_string())))
                .collect();
            let df = df.filter(&new)?;
            rows += df.height() as u64;
            w.write(&df)?;
        }
        w.finish(table_metadata(spec, Table::Species.file_name()))
    })?;
    Ok((rows, std::fs::metadata(&path).map_or(0, |m| m.len())))
}

/// The manifest of an earlier, complete run of this finalization: written last (atomically),
/// so its presence with every table it lists means the tables are whole.
fn finished_before(dir: &Path, spec: &BatchSpec, progress: &Progress) -> Option<Manifest> {
    let m: Manifest = serde_json::from_slice(&std::fs::read(dir.join(Table::Manifest.file_name())).ok()?).ok()?;
    let whole = m.batch_id == spec.batch_id
        && m.counts.chunks == progress.chunks_total
        && m.files
            .iter()
            .all(|f| std::fs::metadata(dir.join(&f.name)).is_ok_and(|md| md.len() == f.bytes));
    whole.then_some(m)
}

/// Write the batch tables and the manifest from the committed parts. Safe to run again after
/// a crash at any point: it never deletes the parts (the caller does, with [`remove_parts`],
/// once the batch is durably done), it replaces each table atomically, and a run after a
/// complete earlier one returns that run's manifest.
///
/// # Errors
/// `MissingPart` when a chunk has no committed part, I/O and Polars errors.
pub fn finalize(results_dir: &Path, spec: &BatchSpec, progress: &Progress) -> Result<Manifest, WorkerError> {
    let started = now_unix_ms();
    let t0 = std::time::Instant::now();
    let dir = batch_dir(results_dir, &spec.batch_id)?;
    if let Some(m) = finished_before(&dir, spec, progress) {
        return Ok(m);
    }
    std::fs::create_dir_all(&dir).map_err(|source| WorkerError::Io { path: dir.clone(), source })?;
    let chunks = progress.chunks_total;

    let mut routes = RouteTable::new(results_dir, &spec.batch_id);
    let mut counts = Counts {
        chunks,
        chunks_dead_lettered: progress.chunks_dead,
        ..Counts::default()
    };
    let mut ok = 0u64;
    let empty_cases = rows::cases_frame(&[])?;
    let empty_trends = rows::trends_frame(&[])?;
    // The trends table is copied, and the species table then written, on a second thread while
    // this one copies the cases and reads the route scores: they share nothing. (The routes
    // table is written after both, when the joins' buffers are freed: written on a third
    // thread beside them, it cut the finalizer's time by a third but raised its peak by 50 MB.)
    let (cases_written, others_written) = std::thread::scope(|scope| {
        let others = scope.spawn(|| {
            let trends = concat_parts(results_dir, spec, Table::Trends, chunks, &empty_trends, |_, _| Ok(()))?;
            Ok::<_, WorkerError>((trends, species_table(results_dir, spec, chunks)?))
        });
        let cases = concat_parts(results_dir, spec, Table::Cases, chunks, &empty_cases, |seq, part| {
            let df = read_parquet_columns(part, &["status"])?;
            let status = df.column("status")?.str()?;
            ok += (0..df.height()).filter(|&i| status.get(i) == Some(STATUS_OK)).count() as u64;
            routes.add(seq)
        });
        (cases, others.join().unwrap_or(Err(WorkerError::EngineGone)))
    });
    let (cases, cases_bytes) = cases_written?;
    let ((trend_rows, trends_bytes), (species_rows, species_bytes)) = others_written?;
    let route_count = routes.routes() as u64;
    let routes_path = dir.join(Table::Routes.file_name());
    write_atomic(&routes_path, |f| {
        let mut w = FrameWriter::new(f, rows::routes_frame(&[])?.schema())?;
        routes.finish(|df| w.write(df))?;
        w.finish(table_metadata(spec, Table::Routes.file_name()))
    })?;
    let routes_bytes = std::fs::metadata(&routes_path).map_or(0, |m| m.len());

    crate::fault::at(crate::fault::TABLES_WRITTEN);
    counts.cases = cases;
    counts.cases_ok = ok;
    counts.cases_error = cases - ok;
    counts.trend_rows = trend_rows;
    counts.routes = route_count;
    counts.species = species_rows;
    let finished = now_unix_ms();
    let manifest = Manifest {
        batch_id: spec.batch_id.clone(),
        label: spec.label.clone(),
        engine_version: VERSION.to_string(),
        data_sources: species::data_sources(),
        temperature_grid_k: spec.temperatures_k.clone(),
        default_conditions: spec.default_conditions.clone(),
        counts,
        files: vec![
            FileEntry {
                name: Table::Cases.file_name().into(),
                rows: cases,
                bytes: cases_bytes,
            },
            FileEntry {
                name: Table::Trends.file_name().into(),
                rows: trend_rows,
                bytes: trends_bytes,
            },
            FileEntry {
                name: Table::Routes.file_name().into(),
                rows: route_count,
                bytes: routes_bytes,
            },
            FileEntry {
                name: Table::Species.file_name().into(),
                rows: species_rows,
                bytes: species_bytes,
            },
        ],
        cautions: vec![CAUTION.to_string(), RANK_NOTE.to_string()],
        timings: Timings {
            created_unix_ms: spec.created_unix_ms,
            finalize_started_unix_ms: started,
            finished_unix_ms: finished,
            elapsed_seconds: finished.saturating_sub(spec.created_unix_ms) as f64 / 1000.0,
            finalize_seconds: t0.elapsed().as_secs_f64(),
        },
    };
    let json = serde_json::to_vec_pretty(&manifest)?;
    write_atomic(&dir.join(Table::Manifest.file_name()), |f| {
        std::io::Write::write_all(f, &json).map_err(|source| WorkerError::Io {
            path: dir.join(Table::Manifest.file_name()),
            source,
        })
    })?;
    crate::fault::at(crate::fault::MANIFEST_WRITTEN);
    Ok(manifest)
}

/// Delete a finished batch's part files: only after its DONE state is durable, so that a
/// finalization redelivered after a crash still finds them.
pub fn remove_parts(results_dir: &Path, batch_id: &str) {
    let Ok(dir) = batch_dir(results_dir, batch_id) else { return };
    let parts = dir.join("parts");
    match std::fs::remove_dir_all(&parts) {
        Ok(()) => {}
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
        Err(e) => tracing::warn!(path = %parts.display(), error = %e, "could not remove part files"),
    }
}
