//! The job: a batch (its options), its cases, the chunks it is cut into, and its progress.
//! Plain data with serde, so any queue backend can carry it.

use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;
use std::sync::Arc;

/// The typed process conditions, declared once: field name (units in the name), plausibility
/// range, what the range means for an error message, and the °C column an input table may use
/// instead. This list makes [`Conditions`], [`CONDITIONS`], [`CONDITION_FIELDS`],
/// [`Conditions::values`] and [`Conditions::field_mut`] here, the input table's columns and the
/// wire mapping in the front (`condition_fields!(its_macro)` hands the list to a macro), and
/// through the names the cases table's columns. The upper bounds are plausibility limits, wide
/// of any plant (common practice, no source): a value past them is a unit or typing error, and
/// would make results overflow. The proto's `ProcessConditions` uses the same field names.
#[macro_export]
macro_rules! condition_fields {
    ($then:ident) => {
        $then! {
            /// Process temperature, K.
            process_temperature_k: f64::MIN_POSITIVE, 20_000.0, "a temperature above 0 K (−273.15 °C) and below 20000 K", Some("process_temperature_c");
            /// Absolute pressure, bar.
            pressure_bar: 1e-9, 1e5, "a pressure above 0 and up to 100000 bar", None;
            /// Scale, mol of reaction as balanced.
            scale_mol: 1e-9, 1e12, "an amount above 0 and up to 1e12 mol", None;
            /// Reaction mass, kg.
            reaction_mass_kg: 1e-9, 1e9, "a mass above 0 and up to 1e9 kg", None;
            /// Specific heat capacity of the reaction mass, kJ/(kg·K).
            cp_kj_per_kg_k: 0.01, 100.0, "a heat capacity from 0.01 to 100 kJ/(kg·K)", None;
            /// Dosing time, h (> 0 makes the step semi-batch).
            dosing_time_h: 0.0, 1e5, "a time from 0 to 100000 h", None;
            /// Accumulated fraction of unreacted dosed material (X_acc), 0..1.
            accumulation_fraction: 0.0, 1.0, "a fraction from 0 to 1", None;
            /// Maximum technical temperature, K.
            mtt_k: f64::MIN_POSITIVE, 20_000.0, "a temperature above 0 K (−273.15 °C) and below 20000 K", Some("mtt_c");
            /// Temperature at which the time to maximum rate is 24 h, K.
            t_d24_k: f64::MIN_POSITIVE, 20_000.0, "a temperature above 0 K (−273.15 °C) and below 20000 K", Some("t_d24_c");
            /// DSC onset of decomposition, K.
            dsc_onset_k: f64::MIN_POSITIVE, 20_000.0, "a temperature above 0 K (−273.15 °C) and below 20000 K", Some("dsc_onset_c");
            /// Coolant temperature, K.
            coolant_temperature_k: f64::MIN_POSITIVE, 20_000.0, "a temperature above 0 K (−273.15 °C) and below 20000 K", Some("coolant_temperature_c");
            /// U·A of the cooled surface, W/K.
            ua_w_per_k: 0.0, 1e9, "a number from 0 to 1e9 W/K", None;
        }
    };
}

/// One typed condition field as declared in [`condition_fields!`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ConditionField {
    pub name: &'static str,
    pub min: f64,
    pub max: f64,
    /// What a valid value is, for error messages.
    pub expected: &'static str,
    /// The °C column an input table may give instead (converted with K = °C + 273.15).
    pub celsius_column: Option<&'static str>,
}

impl ConditionField {
    /// Whether `v` is finite and inside the field's range.
    pub fn accepts(&self, v: f64) -> bool {
        v.is_finite() && v >= self.min && v <= self.max
    }
}

macro_rules! declare_conditions {
    ($( $(#[doc = $doc:literal])* $name:ident: $min:expr, $max:expr, $expected:literal, $celsius:expr; )*) => {
        /// Process conditions of one case, units in the names. All optional: a field the case
        /// leaves unset falls back to the batch default (see [`Conditions::or_defaults`]). The
        /// engine's process view consumes them; they are echoed to the cases table.
        #[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
        #[serde(deny_unknown_fields)]
        pub struct Conditions {
            $(
                $(#[doc = $doc])*
                #[serde(default, skip_serializing_if = "Option::is_none")]
                pub $name: Option<f64>,
            )*
            /// Other condition columns of the input, carried through unchanged (name → text).
            #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
            pub extra: BTreeMap<String, String>,
        }

        /// How many typed condition fields there are.
        pub const CONDITION_COUNT: usize = [$(stringify!($name)),*].len();

        /// The typed condition fields, in table order.
        pub const CONDITIONS: [ConditionField; CONDITION_COUNT] = [
            $(ConditionField { name: stringify!($name), min: $min, max: $max, expected: $expected, celsius_column: $celsius },)*
        ];

        /// Names of the typed condition fields, in table order (each an `Option<f64>`).
        pub const CONDITION_FIELDS: [&str; CONDITION_COUNT] = [$(stringify!($name)),*];

        impl Conditions {
            /// The typed fields in [`CONDITION_FIELDS`] order.
            pub fn values(&self) -> [Option<f64>; CONDITION_COUNT] {
                [$(self.$name),*]
            }

            /// The typed fields, each unset one taken from `defaults`; `extra` is left empty
            /// (no copy of the text map per case: see [`Conditions::extra_json_or_defaults`]).
            pub fn numbers_or_defaults(&self, defaults: &Conditions) -> Conditions {
                Conditions {
                    $($name: self.$name.or(defaults.$name),)*
                    extra: BTreeMap::new(),
                }
            }

            /// Mutable access to a typed field by its name in [`CONDITION_FIELDS`].
            pub fn field_mut(&mut self, name: &str) -> Option<&mut Option<f64>> {
                match name {
                    $(stringify!($name) => Some(&mut self.$name),)*
                    _ => None,
                }
            }
        }
    };
}

condition_fields!(declare_conditions);

/// The declaration of the typed condition field `name`.
pub fn condition_field(name: &str) -> Option<&'static ConditionField> {
    CONDITIONS.iter().find(|f| f.name == name)
}

impl Conditions {
    /// The typed fields out of their range, as `field: expected …, got …`. The same rule for
    /// every path: input tables, gRPC cases, batch defaults and ScreenInline.
    pub fn range_errors(&self) -> Vec<String> {
        CONDITIONS
            .iter()
            .zip(self.values())
            .filter_map(|(f, v)| {
                let v = v?;
                (!f.accepts(v)).then(|| format!("{}: expected {}, got {v}", f.name, f.expected))
            })
            .collect()
    }

    /// These conditions with every unset field taken from `defaults`.
    pub fn or_defaults(&self, defaults: &Conditions) -> Conditions {
        let mut out = self.numbers_or_defaults(defaults);
        out.extra = self.extra.clone();
        for (k, v) in &defaults.extra {
            out.extra.entry(k.clone()).or_insert_with(|| v.clone());
        }
        out
    }

    /// The `extra` map of [`Conditions::or_defaults`] as a JSON object, without building it;
    /// `None` when it is empty.
    pub fn extra_json_or_defaults(&self, defaults: &Conditions) -> Option<String> {
        let json = if defaults.extra.is_empty() {
            if self.extra.is_empty() {
                return None;
            }
            serde_json::to_string(&self.extra)
        } else {
            let mut merged: BTreeMap<&str, &str> = defaults.extra.iter().map(|(k, v)| (k.as_str(), v.as_str())).collect();
            merged.extend(self.extra.iter().map(|(k, v)| (k.as_str(), v.as_str())));
            serde_json::to_string(&merged)
        };
        json.ok()
    }
}

/// Phases a case may name (`phase` column, `Case.phase`): the state its SMILES and named
/// species take (`standard`: the stable state at 298.15 K).
pub const PHASES: [&str; 4] = ["gas", "liquid", "solid", "standard"];

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
    /// Shared, not copied: the in-process queue, its pending list and the worker slot holding
    /// a delivery all point at the same cases.
    #[serde(with = "shared_cases")]
    pub cases: Arc<[CaseInput]>,
}

/// `Arc<[CaseInput]>` as a plain JSON list (serde's own `Arc` support needs a feature that
/// would change every crate's build).
mod shared_cases {
    use super::CaseInput;
    use serde::{Deserialize, Deserializer, Serialize, Serializer};
    use std::sync::Arc;

    pub fn serialize<S: Serializer>(cases: &Arc<[CaseInput]>, s: S) -> Result<S::Ok, S::Error> {
        cases.as_ref().serialize(s)
    }

    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Arc<[CaseInput]>, D::Error> {
        Vec::<CaseInput>::deserialize(d).map(Arc::from)
    }
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

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, reason = "tests")]
    use super::*;

    fn with_extra(pairs: &[(&str, &str)]) -> Conditions {
        Conditions {
            extra: pairs.iter().map(|(k, v)| (k.to_string(), v.to_string())).collect(),
            ..Conditions::default()
        }
    }

    #[test]
    fn the_extra_json_is_that_of_the_merged_map() {
        let row = with_extra(&[("solvent", "water"), ("reactor", "R-1")]);
        let defaults = with_extra(&[("solvent", "toluene"), ("site", "B")]);
        let json = row.extra_json_or_defaults(&defaults).unwrap();
        assert_eq!(json, serde_json::to_string(&row.or_defaults(&defaults).extra).unwrap());
        assert_eq!(json, r#"{"reactor":"R-1","site":"B","solvent":"water"}"#);
        assert_eq!(
            row.extra_json_or_defaults(&Conditions::default()).unwrap(),
            r#"{"reactor":"R-1","solvent":"water"}"#
        );
        assert_eq!(Conditions::default().extra_json_or_defaults(&Conditions::default()), None);
    }

    #[test]
    fn numbers_fall_back_to_the_defaults_without_the_text_map() {
        let row = Conditions {
            scale_mol: Some(2.0),
            ..with_extra(&[("solvent", "water")])
        };
        let defaults = Conditions {
            scale_mol: Some(9.0),
            pressure_bar: Some(1.5),
            ..Conditions::default()
        };
        let merged = row.numbers_or_defaults(&defaults);
        assert_eq!((merged.scale_mol, merged.pressure_bar), (Some(2.0), Some(1.5)));
        assert!(merged.extra.is_empty());
        assert_eq!(merged.values(), row.or_defaults(&defaults).values());
    }
}
