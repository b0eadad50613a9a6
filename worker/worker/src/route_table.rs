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
use hashbrown::HashTable;
use polars::prelude::*;
use std::collections::hash_map::RandomState;
use std::collections::HashMap;
use std::hash::BuildHasher;
use std::path::{Path, PathBuf};
use thermosieve_engine::routes::{summarise, RouteScore, RouteStep, RouteSummary};
use thermosieve_model::part_path;
use thermosieve_model::Table;

/// Marks a part row that is a later fragment of a route seen in an earlier chunk.
const FRAGMENT: u32 = u32::MAX;

/// A route's score keys without its id (the id is kept once, in [`RouteTable::ids`]).
#[derive(Clone, Copy)]
struct Keys {
    failed: bool,
    class: u8,
    worst_rise_k: f64,
    total_heat_kj: f64,
}

impl Keys {
    fn of(s: &RouteScore) -> Keys {
        Keys {
            failed: s.failed,
            class: s.class,
            worst_rise_k: s.worst_rise_k,
            total_heat_kj: s.total_heat_kj,
        }
    }

    /// The engine's score with an empty id (no allocation), for its ordering.
    fn score(self) -> RouteScore {
        RouteScore {
            failed: self.failed,
            class: self.class,
            worst_rise_k: self.worst_rise_k,
            total_heat_kj: self.total_heat_kj,
            route_id: String::new(),
        }
    }
}

/// Route `i`'s id in the shared id buffer.
fn id_in<'a>(ids: &'a str, ends: &[usize], i: u32) -> &'a str {
    let i = i as usize;
    let start = if i == 0 { 0 } else { ends[i - 1] };
    &ids[start..ends[i]]
}

/// Pass 1 state: some 60 bytes per route (keys, the id's bytes and end, a slot of the index), so a
/// batch of a million routes ranks in about 60 MB.
pub struct RouteTable<'a> {
    results_dir: &'a Path,
    batch_id: &'a str,
    /// Score keys of each route, in first-appearance order.
    keys: Vec<Keys>,
    /// Every route id, one after the other; route `i` is `ids[ends[i - 1]..ends[i]]`.
    ids: String,
    ends: Vec<usize>,
    /// Per chunk: the route index of each row of its routes part ([`FRAGMENT`] for later
    /// fragments).
    parts: Vec<(u64, Vec<u32>)>,
    /// Route indices, hashed and compared by the id they point at in `ids`.
    index: HashTable<u32>,
    hasher: RandomState,
    /// Routes seen in more than one chunk: route index → the chunks.
    split: HashMap<u32, Vec<u64>>,
}

impl<'a> RouteTable<'a> {
    pub fn new(results_dir: &'a Path, batch_id: &'a str) -> RouteTable<'a> {
        RouteTable {
            results_dir,
            batch_id,
            keys: Vec::new(),
            ids: String::new(),
            ends: Vec::new(),
            parts: Vec::new(),
            index: HashTable::new(),
            hasher: RandomState::new(),
            split: HashMap::new(),
        }
    }

    fn part(&self, table: Table, seq: u64) -> Result<PathBuf, WorkerError> {
        Ok(part_path(self.results_dir, self.batch_id, table, seq)?)
    }

    fn id(&self, i: u32) -> &str {
        id_in(&self.ids, &self.ends, i)
    }

    /// The index of the route `id`, if seen.
    fn find(&self, id: &str, hash: u64) -> Option<u32> {
        self.index.find(hash, |&i| self.id(i) == id).copied()
    }

    /// Record a new route; returns its index.
    fn insert(&mut self, score: &RouteScore, hash: u64) -> u32 {
        let i = self.keys.len() as u32;
        self.keys.push(Keys::of(score));
        self.ids.push_str(&score.route_id);
        self.ends.push(self.ids.len());
        let (ids, ends, hasher) = (&self.ids, &self.ends, &self.hasher);
        self.index.insert_unique(hash, i, |&j| hasher.hash_one(id_in(ids, ends, j)));
        i
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
            let hash = self.hasher.hash_one(score.route_id.as_str());
            match self.find(&score.route_id, hash) {
                Some(i) => {
                    self.split.entry(i).or_default().push(seq);
                    at.push(FRAGMENT);
                }
                None => at.push(self.insert(&score, hash)),
            }
        }
        self.parts.push((seq, at));
        Ok(())
    }

    pub fn routes(&self) -> usize {
        self.keys.len()
    }

    /// The 1-based rank of every route: the engine's order ([`RouteScore::rank_order`]),
    /// ties broken by id as there.
    fn ranks(&self) -> Vec<u32> {
        let mut order: Vec<u32> = (0..self.keys.len() as u32).collect();
        order.sort_by(|&a, &b| {
            let (ka, kb) = (self.keys[a as usize], self.keys[b as usize]);
            ka.score().rank_order(&kb.score()).then_with(|| self.id(a).cmp(self.id(b)))
        });
        let mut ranks = vec![0u32; order.len()];
        for (position, &i) in order.iter().enumerate() {
            ranks[i as usize] = position as u32 + 1;
        }
        ranks
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
            let whole = self.whole(self.id(i), &chunks)?;
            merged.push((i, whole));
        }
        for (i, whole) in &merged {
            self.keys[*i as usize] = Keys::of(&whole.score());
        }
        self.index = HashTable::new();
        let ranks = self.ranks();
        for (seq, at) in &self.parts {
            let mut df = read_parquet(&self.part(Table::Routes, *seq)?)?;
            let keep = |i: &u32| *i != FRAGMENT && !self.split.contains_key(i);
            let rank: Vec<u32> = at.iter().map(|&i| if keep(&i) { ranks[i as usize] } else { 0 }).collect();
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
                    s.rank = ranks[i as usize] as usize;
                    s
                })
                .collect();
            whole.sort_by_key(|s| s.rank);
            write(&mut rows::routes_frame(&whole)?)?;
        }
        Ok(())
    }
}
