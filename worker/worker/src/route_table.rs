//! `routes.parquet` from the routes parts, in memory bounded by a small score per route.
//!
//! The front keeps every step of a route in one chunk, so workers roll up each chunk's routes
//! and write them as a `routes` part beside its cases. The finalizer reads only the score
//! columns of the parts (pass 1), ranks the batch, then copies the parts into the table with
//! their ranks (pass 2). Rows are grouped by chunk; `rank` orders them.
//!
//! A later step of a route that already ended (the front makes it an error row, in a later
//! chunk) shows up as a second row for that route. Such a route is rolled up again from the
//! cases parts of every chunk it appears in, and its one row replaces the fragments' rows. That
//! only happens for that input error.

use crate::parts::{read_parquet, read_parquet_columns};
use crate::rows;
use crate::WorkerError;
use polars::prelude::*;
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use thermosieve_engine::routes::{ranks, summarise, RouteScore, RouteStep, RouteSummary};
use thermosieve_model::part_path;
use thermosieve_model::Table;

/// Marks a part row that is a later fragment of a route seen in an earlier chunk.
const FRAGMENT: u32 = u32::MAX;

/// Pass 1 state.
pub struct RouteTable<'a> {
    results_dir: &'a Path,
    batch_id: &'a str,
    /// Score of each route, in first-appearance order.
    scores: Vec<RouteScore>,
    /// Per chunk: the route index of each row of its routes part ([`FRAGMENT`] for later
    /// fragments).
    parts: Vec<(u64, Vec<u32>)>,
    index: HashMap<Box<str>, u32>,
    /// Routes seen in more than one chunk: route index → the chunks.
    split: HashMap<u32, Vec<u64>>,
}

impl<'a> RouteTable<'a> {
    pub fn new(results_dir: &'a Path, batch_id: &'a str) -> RouteTable<'a> {
        RouteTable {
            results_dir,
            batch_id,
            scores: Vec::new(),
            parts: Vec::new(),
            index: HashMap::new(),
            split: HashMap::new(),
        }
    }

    fn part(&self, table: Table, seq: u64) -> Result<PathBuf, WorkerError> {
        Ok(part_path(self.results_dir, self.batch_id, table, seq)?)
    }

    /// Read the scores of chunk `seq`'s routes part.
    ///
    /// # Errors
    /// `MissingPart`, Polars and I/O errors.
    pub fn add(&mut self, seq: u64) -> Result<(), WorkerError> {
        let path = self.part(Table::Routes, seq)?;
        if !path.exists() {
            return Err(WorkerError::MissingPart {
                batch_id: self.batch_id.to_string(),
                seq,
                table: Table::Routes.stem(),
            });
        }
        let scores = rows::route_scores(&read_parquet_columns(&path, &rows::ROUTE_SCORE_COLUMNS)?)?;
        let mut at = Vec::with_capacity(scores.len());
        for score in scores {
            match self.index.get(score.route_id.as_str()) {
                Some(&i) => {
                    self.split.entry(i).or_default().push(seq);
                    at.push(FRAGMENT);
                }
                None => {
                    let i = self.scores.len() as u32;
                    self.index.insert(score.route_id.as_str().into(), i);
                    self.scores.push(score);
                    at.push(i);
                }
            }
        }
        self.parts.push((seq, at));
        Ok(())
    }

    pub fn routes(&self) -> usize {
        self.scores.len()
    }

    /// The whole of a route that came in several chunks, from the cases parts of those chunks.
    fn whole(&self, route_id: &str, chunks: &[u64]) -> Result<RouteSummary, WorkerError> {
        let frames = chunks
            .iter()
            .map(|&seq| read_parquet_columns(&self.part(Table::Cases, seq)?, &rows::ROUTE_STEP_COLUMNS))
            .collect::<Result<Vec<DataFrame>, WorkerError>>()?;
        let mut steps: Vec<RouteStep> = Vec::new();
        for df in &frames {
            steps.extend(rows::route_steps(df)?.into_iter().filter(|s| s.route_id == route_id));
        }
        Ok(summarise(route_id, steps.iter().collect()))
    }

    /// Rank the routes and write every route row, with its rank, through `write`.
    ///
    /// # Errors
    /// Polars and I/O errors, and those of `write`.
    pub fn finish(mut self, mut write: impl FnMut(&mut DataFrame) -> Result<(), WorkerError>) -> Result<(), WorkerError> {
        let first_chunk: HashMap<u32, u64> = self
            .parts
            .iter()
            .flat_map(|(seq, at)| at.iter().filter(|&&i| self.split.contains_key(&i)).map(move |&i| (i, *seq)))
            .collect();
        let mut merged: Vec<(u32, RouteSummary)> = Vec::new();
        for (&i, later) in &self.split {
            let mut chunks = vec![first_chunk[&i]];
            chunks.extend(later.iter().copied());
            chunks.dedup();
            let whole = self.whole(&self.scores[i as usize].route_id, &chunks)?;
            merged.push((i, whole));
        }
        for (i, whole) in &merged {
            self.scores[*i as usize] = whole.score();
        }
        self.index = HashMap::new();
        let ranks = ranks(&self.scores);
        for (seq, at) in &self.parts {
            let mut df = read_parquet(&self.part(Table::Routes, *seq)?)?;
            let keep = |i: &u32| *i != FRAGMENT && !self.split.contains_key(i);
            let rank: Vec<u32> = at.iter().map(|&i| if keep(&i) { ranks[i as usize] as u32 } else { 0 }).collect();
            df.with_column(Column::new("rank".into(), rank))?;
            if !at.iter().all(keep) {
                let mask: BooleanChunked = at.iter().map(keep).collect();
                df = df.filter(&mask)?;
            }
            if df.height() > 0 {
                write(&mut df)?;
            }
        }
        if !merged.is_empty() {
            let mut whole: Vec<RouteSummary> = merged
                .into_iter()
                .map(|(i, mut s)| {
                    s.rank = ranks[i as usize];
                    s
                })
                .collect();
            whole.sort_by_key(|s| s.rank);
            write(&mut rows::routes_frame(&whole)?)?;
        }
        Ok(())
    }
}
