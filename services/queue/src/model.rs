//! The job model: a batch (its options), its cases, the chunks it is cut into, and its progress.
//! Everything here is plain data with serde, so any backend can carry it.

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// Process conditions of one case, units in the names. All optional: a field the case leaves
/// unset falls back to the batch default (see [`Conditions::or_defaults`]). The engine's
/// process view (heat budget, equilibrium at process conditions) consumes them; today they are
/// carried through to the cases table.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Conditions {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub process_temperature_k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pressure_bar: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scale_mol: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reaction_mass_kg: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cp_kj_per_kg_k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dosing_time_h: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub accumulation_fraction: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mtt_k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub t_d24_k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dsc_onset_k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub coolant_temperature_k: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ua_w_per_k: Option<f64>,
    /// Other condition columns of the input, carried through unchanged (name → text).
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub extra: BTreeMap<String, String>,
}

/// Names of the typed condition fields, in table order (each an `Option<f64>`).
pub const CONDITION_FIELDS: [&str; 12] = [
    "process_temperature_k",
    "pressure_bar",
    "scale_mol",
    "reaction_mass_kg",
    "cp_kj_per_kg_k",
    "dosing_time_h",
    "accumulation_fraction",
    "mtt_k",
    "t_d24_k",
    "dsc_onset_k",
    "coolant_temperature_k",
    "ua_w_per_k",
];

/// Valid span of each condition field (in its field unit, inclusive), with what it means. One
/// rule for every path: input tables, gRPC cases, batch defaults and ScreenInline. The upper
/// bounds are plausibility limits, wide of any plant (common practice, no source): a value past
/// them is a unit or typing error, and would make results overflow.
pub fn condition_range(field: &str) -> (f64, f64, &'static str) {
    match field {
        "accumulation_fraction" => (0.0, 1.0, "a fraction from 0 to 1"),
        "pressure_bar" => (1e-9, 1e5, "a pressure above 0 and up to 100000 bar"),
        "scale_mol" => (1e-9, 1e12, "an amount above 0 and up to 1e12 mol"),
        "reaction_mass_kg" => (1e-9, 1e9, "a mass above 0 and up to 1e9 kg"),
        "cp_kj_per_kg_k" => (0.01, 100.0, "a heat capacity from 0.01 to 100 kJ/(kg·K)"),
        "dosing_time_h" => (0.0, 1e5, "a time from 0 to 100000 h"),
        "ua_w_per_k" => (0.0, 1e9, "a number from 0 to 1e9 W/K"),
        // Temperatures, K.
        _ => (
            f64::MIN_POSITIVE,
            20_000.0,
            "a temperature above 0 K (−273.15 °C) and below 20000 K",
        ),
    }
}

impl Conditions {
    /// The typed fields out of their [`condition_range`], as `field: expected …, got …`.
    pub fn range_errors(&self) -> Vec<String> {
        CONDITION_FIELDS
            .iter()
            .zip(self.values())
            .filter_map(|(field, v)| {
                let v = v?;
                let (lo, hi, what) = condition_range(field);
                (!(v.is_finite() && v >= lo && v <= hi)).then(|| format!("{field}: expected {what}, got {v}"))
            })
            .collect()
    }

    /// The typed fields in [`CONDITION_FIELDS`] order.
    pub fn values(&self) -> [Option<f64>; 12] {
        [
            self.process_temperature_k,
            self.pressure_bar,
            self.scale_mol,
            self.reaction_mass_kg,
            self.cp_kj_per_kg_k,
            self.dosing_time_h,
            self.accumulation_fraction,
            self.mtt_k,
            self.t_d24_k,
            self.dsc_onset_k,
            self.coolant_temperature_k,
            self.ua_w_per_k,
        ]
    }

    /// Mutable access to a typed field by its name in [`CONDITION_FIELDS`].
    pub fn field_mut(&mut self, name: &str) -> Option<&mut Option<f64>> {
        Some(match name {
            "process_temperature_k" => &mut self.process_temperature_k,
            "pressure_bar" => &mut self.pressure_bar,
            "scale_mol" => &mut self.scale_mol,
            "reaction_mass_kg" => &mut self.reaction_mass_kg,
            "cp_kj_per_kg_k" => &mut self.cp_kj_per_kg_k,
            "dosing_time_h" => &mut self.dosing_time_h,
            "accumulation_fraction" => &mut self.accumulation_fraction,
            "mtt_k" => &mut self.mtt_k,
            "t_d24_k" => &mut self.t_d24_k,
            "dsc_onset_k" => &mut self.dsc_onset_k,
            "coolant_temperature_k" => &mut self.coolant_temperature_k,
            "ua_w_per_k" => &mut self.ua_w_per_k,
            _ => return None,
        })
    }

    /// These conditions with every unset field taken from `defaults`.
    pub fn or_defaults(&self, defaults: &Conditions) -> Conditions {
        let mut out = self.clone();
        let given = defaults.values();
        for (name, d) in CONDITION_FIELDS.iter().zip(given) {
            if let Some(slot) = out.field_mut(name) {
                if slot.is_none() {
                    *slot = d;
                }
            }
        }
        for (k, v) in &defaults.extra {
            out.extra.entry(k.clone()).or_insert_with(|| v.clone());
        }
        out
    }
}

/// One case as the queue carries it: already validated by the front, or carrying the reason it
/// is an error (`input_error`), so that it still gets its row.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct CaseInput {
    pub case_id: String,
    pub reaction: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub route_id: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub step: Option<u32>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phase: Option<String>,
    #[serde(default)]
    pub conditions: Conditions,
    /// Set when the case could not be read or validated: it becomes an error row with this text.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub input_error: Option<String>,
    /// 1-based row in the caller's input table (0 when unknown).
    #[serde(default)]
    pub row: u64,
}

/// Options of one batch, fixed when it is created.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BatchSpec {
    /// 32 lowercase hex digits, server-made.
    pub batch_id: String,
    /// Grid temperatures, K (validated by the front).
    pub temperatures_k: Vec<f64>,
    pub default_conditions: Conditions,
    pub chunk_size: usize,
    pub label: String,
    pub created_unix_ms: u64,
    /// The tenant that submitted the batch (the bearer token's; `""` when the front has no
    /// tokens). Only that tenant sees, fetches or cancels it.
    #[serde(default)]
    pub tenant: String,
}

/// A run of cases of one batch, the unit of work. `seq` numbers chunks from 0 in submission
/// order and names the chunk's part files, so a redelivered chunk overwrites its own results.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Chunk {
    pub batch_id: String,
    pub seq: u64,
    pub cases: Vec<CaseInput>,
}

/// What a queue entry asks a worker to do: `{"chunk": {...}}` or `{"finalize": {...}}`.
/// Externally tagged: an internal tag would make serde buffer a whole chunk in an
/// intermediate tree before decoding it (that was a worker's largest cost outside the engine
/// and Parquet).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Task {
    /// Compute one chunk and write its part files.
    Chunk(Chunk),
    /// Every chunk of the batch is committed: concatenate the parts into the batch tables.
    Finalize { batch_id: String },
}

impl Task {
    pub fn batch_id(&self) -> &str {
        match self {
            Task::Chunk(c) => &c.batch_id,
            Task::Finalize { batch_id } => batch_id,
        }
    }
}

/// A task handed to one consumer; it stays pending until acknowledged.
#[derive(Clone, Debug, PartialEq)]
pub struct Delivery {
    /// The backend's entry id (a stream id for Redis).
    pub entry_id: String,
    pub task: Task,
    /// How many times this entry has been delivered, this delivery included.
    pub deliveries: u64,
}

/// Where a batch is in its life.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BatchState {
    Receiving,
    Running,
    Finalizing,
    Done,
    Failed,
    Cancelled,
}

impl BatchState {
    /// Every state, in the order of a batch's life.
    pub const ALL: [BatchState; 6] = [
        BatchState::Receiving,
        BatchState::Running,
        BatchState::Finalizing,
        BatchState::Done,
        BatchState::Failed,
        BatchState::Cancelled,
    ];

    pub fn as_str(self) -> &'static str {
        match self {
            BatchState::Receiving => "receiving",
            BatchState::Running => "running",
            BatchState::Finalizing => "finalizing",
            BatchState::Done => "done",
            BatchState::Failed => "failed",
            BatchState::Cancelled => "cancelled",
        }
    }

    pub fn parse(s: &str) -> Option<BatchState> {
        Some(match s {
            "receiving" => BatchState::Receiving,
            "running" => BatchState::Running,
            "finalizing" => BatchState::Finalizing,
            "done" => BatchState::Done,
            "failed" => BatchState::Failed,
            "cancelled" => BatchState::Cancelled,
            _ => return None,
        })
    }

    /// Done, failed or cancelled: nothing more will happen.
    pub fn is_final(self) -> bool {
        matches!(self, BatchState::Done | BatchState::Failed | BatchState::Cancelled)
    }
}

/// Progress counters and state of one batch.
#[derive(Clone, Debug, PartialEq)]
pub struct Progress {
    pub state: BatchState,
    /// Chunks enqueued (final once sealed).
    pub chunks_total: u64,
    pub chunks_done: u64,
    /// Chunks dead-lettered (counted in `chunks_done` too; their cases are error rows).
    pub chunks_dead: u64,
    /// Cases enqueued (final once sealed).
    pub cases_total: u64,
    pub cases_done: u64,
    pub cases_error: u64,
    pub message: String,
    pub created_unix_ms: u64,
    pub finished_unix_ms: Option<u64>,
}

/// What a worker reports when a chunk's parts are durable.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ChunkReport {
    pub cases: u64,
    pub errors: u64,
    /// The chunk was dead-lettered: its cases were written as error rows without computing.
    pub dead_lettered: bool,
}

/// Milliseconds since the Unix epoch, for timestamps in batch state.
pub fn now_unix_ms() -> u64 {
    std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_millis() as u64)
}

/// A snapshot of the queue for monitoring ([`crate::Queue::stats`]).
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct QueueStats {
    /// Tasks no consumer has read yet.
    pub waiting: u64,
    /// Tasks read by a consumer and not yet acknowledged.
    pub in_flight: u64,
    /// Chunks dead-lettered so far (kept for inspection).
    pub dead_letters: u64,
    /// Batches whose state is kept, by state, in [`BatchState::ALL`] order.
    pub batches: Vec<(BatchState, u64)>,
}

impl QueueStats {
    /// Count `states` into [`QueueStats::batches`] (every state listed, zeros included).
    pub fn count_batches(&mut self, states: impl IntoIterator<Item = BatchState>) {
        let mut n = [0u64; BatchState::ALL.len()];
        for s in states {
            if let Some(i) = BatchState::ALL.iter().position(|&a| a == s) {
                n[i] += 1;
            }
        }
        self.batches = BatchState::ALL.into_iter().zip(n).collect();
    }
}

/// How a finalize task ended ([`crate::Queue::complete_finalize`]).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Finalized {
    /// The tables and the manifest are written: the batch becomes `done`.
    Done,
    /// They could not be written: the batch becomes `failed` with this message for its owner.
    Failed { message: String },
}

impl Finalized {
    /// The state the batch takes and the message it carries.
    pub fn state_and_message(self) -> (BatchState, String) {
        match self {
            Finalized::Done => (BatchState::Done, String::new()),
            Finalized::Failed { message } => (BatchState::Failed, message),
        }
    }
}
