//! The engine applied to cases: one [`ChunkProcessor`] per engine thread, holding a
//! [`Screener`] per temperature grid so the species cache carries over from chunk to chunk.

use crate::rows::{build_row, CaseError, CaseRow};
use std::panic::{catch_unwind, AssertUnwindSafe};
use thermosieve_engine::structures::DefaultPhase;
use thermosieve_engine::thermo::GridError;
use thermosieve_engine::{species, Screener, TemperatureGrid};
use thermosieve_model::{BatchSpec, CaseInput};

/// Grids kept per processor; batches of one service nearly always share one grid.
const SCREENERS_KEPT: usize = 4;

/// Screens cases; not `Sync`: each engine thread owns one.
#[derive(Default)]
pub struct ChunkProcessor {
    screeners: Vec<(Vec<u64>, Screener<'static>)>,
}

fn grid_key(t: &[f64]) -> Vec<u64> {
    t.iter().map(|x| x.to_bits()).collect()
}

impl ChunkProcessor {
    pub fn new() -> ChunkProcessor {
        ChunkProcessor::default()
    }

    fn screener(&mut self, temperatures_k: &[f64]) -> Result<&mut Screener<'static>, GridError> {
        let key = grid_key(temperatures_k);
        let pos = match self.screeners.iter().position(|(k, _)| *k == key) {
            Some(p) => p,
            None => {
                let grid = TemperatureGrid::new(temperatures_k.to_vec())?;
                if self.screeners.len() >= SCREENERS_KEPT {
                    self.screeners.remove(0);
                }
                self.screeners.push((key, Screener::new(species::bundled(), grid)));
                self.screeners.len() - 1
            }
        };
        Ok(&mut self.screeners[pos].1)
    }

    /// Rows for every case, in order: exactly one case row per case, whatever happens.
    pub fn screen_cases(&mut self, spec: &BatchSpec, cases: &[CaseInput]) -> Vec<CaseRow> {
        let mut case_rows = Vec::with_capacity(cases.len());
        let mut screener = self.screener(&spec.temperatures_k);
        for case in cases {
            let result = match (&mut screener, &case.input_error) {
                (_, Some(e)) => Err(CaseError::Input(e.clone())),
                (Err(e), None) => Err(CaseError::Grid(e.clone())),
                (Ok(_), None) if case.reaction.trim().is_empty() => Err(CaseError::MissingReaction),
                (Ok(s), None) => {
                    // The case's phase is the state of its SMILES and named species; the table
                    // readers and the gRPC conversion have already refused unknown phase words.
                    let phase = case.phase.as_deref().and_then(DefaultPhase::parse).unwrap_or_default();
                    // A panic in the engine must cost one case, not the chunk or the worker.
                    match catch_unwind(AssertUnwindSafe(|| s.screen_with(&case.reaction, phase))) {
                        Ok(Ok(screened)) => Ok(screened),
                        Ok(Err(e)) => Err(CaseError::Engine(e)),
                        Err(_) => Err(CaseError::Panicked),
                    }
                }
            };
            case_rows.push(build_row(case, &spec.default_conditions, result));
        }
        case_rows
    }
}
