//! Finalization repeated after a crash at each point: tables written but DONE not recorded, a
//! table cut short mid-write, parts already removed. Real part files from real chunks; the
//! tables read back.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use std::path::Path;
use thermosieve_model::batch_dir;
use thermosieve_model::Table;
use thermosieve_model::{BatchSpec, BatchState, CaseInput, Chunk, Conditions, Progress};
use thermosieve_worker::finalize::{finalize, remove_parts};
use thermosieve_worker::parts::read_parquet;
use thermosieve_worker::process::ChunkProcessor;
use thermosieve_worker::run::commit_chunk;
use thermosieve_worker::WorkerError;

const ID: &str = "5eed0000000000000000000000000001";

fn spec() -> BatchSpec {
    BatchSpec {
        batch_id: ID.into(),
        temperatures_k: vec![298.15, 400.0],
        default_conditions: Conditions::default(),
        chunk_size: 2,
        label: "finalize again".into(),
        created_unix_ms: 0,
        tenant: String::new(),
    }
}

fn progress() -> Progress {
    Progress {
        state: BatchState::Finalizing,
        chunks_total: 2,
        chunks_done: 2,
        chunks_dead: 0,
        cases_total: 3,
        cases_done: 3,
        cases_error: 0,
        message: String::new(),
        created_unix_ms: 0,
        finished_unix_ms: None,
    }
}

fn case(id: &str, reaction: &str) -> CaseInput {
    CaseInput {
        case_id: id.into(),
        reaction: reaction.into(),
        ..CaseInput::default()
    }
}

fn commit_parts(dir: &Path) {
    let mut p = ChunkProcessor::new();
    let chunks = [
        vec![
            case("burn-h2", "2 H2(g) + O2(g) -> 2 H2O(l)"),
            case("burn-co", "2 CO(g) + O2(g) -> 2 CO2(g)"),
        ],
        vec![case("burn-h2-again", "2 H2(g) + O2(g) -> 2 H2O(l)")],
    ];
    for (seq, cases) in chunks.into_iter().enumerate() {
        let chunk = Chunk {
            batch_id: ID.into(),
            seq: seq as u64,
            cases: cases.into(),
        };
        commit_chunk(dir, &mut p, &spec(), &chunk).unwrap();
    }
}

/// The cases table holds each case once with the measured answer: 2 ΔfH°(H2O, l) =
/// 2 × −285.830 kJ/mol (CODATA Key Values for Thermodynamics, Cox, Wagman & Medvedev 1989).
fn assert_whole(dir: &Path) {
    let cases = read_parquet(&batch_dir(dir, ID).unwrap().join(Table::Cases.file_name())).unwrap();
    let id_column = cases.column("case_id").unwrap().str().unwrap();
    let ids: Vec<_> = (0..cases.height())
        .map(|i| id_column.get(i).unwrap_or_default().to_string())
        .collect();
    assert_eq!(ids, ["burn-h2", "burn-co", "burn-h2-again"]);
    let dh = cases.column("delta_h_298_kj_per_mol").unwrap().f64().unwrap().get(0).unwrap();
    assert!((dh + 571.66).abs() < 0.5, "{dh}");
    let species = read_parquet(&batch_dir(dir, ID).unwrap().join(Table::Species.file_name())).unwrap();
    assert_eq!(species.height(), 5, "{species}");
}

#[test]
fn a_finalization_run_again_after_any_crash_point_completes_the_batch() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    commit_parts(dir);
    let batch = batch_dir(dir, ID).unwrap();

    let first = finalize(dir, &spec(), &progress()).unwrap();
    assert_whole(dir);
    assert_eq!(first.counts.cases, 3);
    // The finalizer itself never deletes parts: that waits for a durable DONE.
    assert!(batch.join("parts").is_dir());

    // Crash after the manifest, before DONE: the redelivered task recognises the finished run
    // and leaves the tables as they are.
    let before = std::fs::read(batch.join(Table::Cases.file_name())).unwrap();
    let again = finalize(dir, &spec(), &progress()).unwrap();
    assert_eq!(again.timings.finished_unix_ms, first.timings.finished_unix_ms);
    assert_eq!(std::fs::read(batch.join(Table::Cases.file_name())).unwrap(), before);

    // Crash mid-table: the cases table cut short and no manifest yet. Run again: whole tables.
    std::fs::remove_file(batch.join(Table::Manifest.file_name())).unwrap();
    std::fs::write(batch.join(Table::Cases.file_name()), &before[..before.len() / 3]).unwrap();
    finalize(dir, &spec(), &progress()).unwrap();
    assert_whole(dir);

    // A manifest whose tables do not match it (a table replaced after it was written) is not
    // taken as finished.
    std::fs::write(batch.join(Table::Cases.file_name()), b"not parquet").unwrap();
    finalize(dir, &spec(), &progress()).unwrap();
    assert_whole(dir);

    // DONE recorded, parts removed, then the task delivered once more: still finished.
    remove_parts(dir, ID);
    assert!(!batch.join("parts").exists());
    let last = finalize(dir, &spec(), &progress()).unwrap();
    assert_eq!(last.counts.cases, 3);
    assert_whole(dir);

    // Without parts and without a finished run there is nothing to finalize: an error, never
    // an empty table reported done.
    std::fs::remove_file(batch.join(Table::Manifest.file_name())).unwrap();
    match finalize(dir, &spec(), &progress()) {
        Err(WorkerError::MissingPart { seq: 0, .. }) => {}
        other => panic!("{other:?}"),
    }
}
