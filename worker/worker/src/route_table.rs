//! `routes.parquet` from the cases parts, in memory bounded by a small score per route.
//!
//! The front keeps every step of a route in one chunk, so each cases part is rolled up on its
//! own (pass 1): its route rows go to a `routes` part, and only the route's score stays in
//! memory. Then the scores are ranked, and pass 2 copies the route parts into the table with
//! their ranks. Rows are in input order (a route's first appearance); `rank` orders them.
//!
//! A later row of a route that already ended (the front makes it an error row) is folded into
//! that route: the route's first fragment is rolled up again from its cases part, merged with the
//! later ones, and its row replaced. That only happens for such input errors.

use crate::parts::{part_path, read_parquet, read_parquet_columns, write_part};
use crate::rows;
use crate::WorkerError;
use polars::prelude::*;
use std::collections::HashMap;
use std::path::Path;
use thermosieve_engine::routes::{ranks, summarise, RouteScore, RouteStep, RouteSummary};

/// Pass 1 state.
pub struct RouteTable<'a> {
    results_dir: &'a Path,
    batch_id: &'a str,
    /// Score of each route, in first-appearance order.
    scores: Vec<RouteScore>,
    /// The chunk each route first appeared in.
    first_chunk: Vec<u64>,
    /// Rows written per chunk's routes part, in chunk order.
    part_rows: Vec<(u64, usize)>,
    index: HashMap<Box<str>, usize>,
    /// Later fragments of routes that had already ended, by route index.
    late: HashMap<usize, Vec<RouteSummary>>,
}

/// Group a part's steps by route, in first-appearance order.
fn by_route<'s, 'a>(steps: &'s [RouteStep<'a>]) -> Vec<(&'a str, Vec<&'s RouteStep<'a>>)> {
    let mut at: HashMap<&str, usize> = HashMap::new();
    let mut out: Vec<(&str, Vec<&RouteStep>)> = Vec::new();
    for s in steps {
        let i = *at.entry(s.route_id).or_insert_with(|| {
            out.push((s.route_id, Vec::new()));
            out.len() - 1
        });
        out[i].1.push(s);
    }
    out
}

impl<'a> RouteTable<'a> {
    pub fn new(results_dir: &'a Path, batch_id: &'a str) -> RouteTable<'a> {
        RouteTable {
            results_dir,
            batch_id,
            scores: Vec::new(),
            first_chunk: Vec::new(),
            part_rows: Vec::new(),
            index: HashMap::new(),
            late: HashMap::new(),
        }
    }

    /// Roll up the routes of chunk `seq` (its cases frame) and write its routes part.
    ///
    /// # Errors
    /// Polars and I/O errors.
    pub fn add(&mut self, seq: u64, cases: &DataFrame) -> Result<(), WorkerError> {
        let steps = rows::route_steps(cases)?;
        let mut fresh = Vec::new();
        for (id, route) in by_route(&steps) {
            let summary = summarise(id, route);
            match self.index.get(id) {
                Some(&i) => self.late.entry(i).or_default().push(summary),
                None => {
                    self.index.insert(id.into(), self.scores.len());
                    self.scores.push(summary.score());
                    self.first_chunk.push(seq);
                    fresh.push(summary);
                }
            }
        }
        if !fresh.is_empty() {
            write_part(&self.part(seq)?, &mut rows::routes_frame(&fresh)?)?;
            self.part_rows.push((seq, fresh.len()));
        }
        Ok(())
    }

    fn part(&self, seq: u64) -> Result<std::path::PathBuf, WorkerError> {
        part_path(self.results_dir, self.batch_id, "routes", seq)
    }

    pub fn routes(&self) -> usize {
        self.scores.len()
    }

    /// Rank the routes and write every route row, with its rank, through `write`.
    ///
    /// # Errors
    /// Polars and I/O errors, and those of `write`.
    pub fn finish(mut self, mut write: impl FnMut(&mut DataFrame) -> Result<(), WorkerError>) -> Result<(), WorkerError> {
        // Routes that came in fragments: the whole route, rolled up again.
        let mut merged: HashMap<usize, RouteSummary> = HashMap::new();
        for (i, later) in std::mem::take(&mut self.late) {
            let part = part_path(self.results_dir, self.batch_id, "cases", self.first_chunk[i])?;
            let cases = read_parquet_columns(&part, &rows::ROUTE_STEP_COLUMNS)?;
            let steps = rows::route_steps(&cases)?;
            let id = self.scores[i].route_id.clone();
            let mut whole = summarise(&id, steps.iter().filter(|s| s.route_id == id).collect());
            for l in later {
                whole.merge(l);
            }
            self.scores[i] = whole.score();
            merged.insert(i, whole);
        }
        self.index = HashMap::new();
        let ranks = ranks(&self.scores);
        let mut first = 0usize;
        for &(seq, n) in &self.part_rows {
            let mut df = read_parquet(&self.part(seq)?)?;
            let rank: Vec<u32> = ranks[first..first + n].iter().map(|&r| r as u32).collect();
            df.with_column(Column::new("rank".into(), rank))?;
            if (first..first + n).any(|i| merged.contains_key(&i)) {
                let keep: BooleanChunked = (first..first + n).map(|i| !merged.contains_key(&i)).collect();
                df = df.filter(&keep)?;
            }
            write(&mut df)?;
            first += n;
        }
        if !merged.is_empty() {
            let mut whole: Vec<RouteSummary> = merged
                .into_iter()
                .map(|(i, mut s)| {
                    s.rank = ranks[i];
                    s
                })
                .collect();
            whole.sort_by_key(|s| s.rank);
            write(&mut rows::routes_frame(&whole)?)?;
        }
        Ok(())
    }
}
