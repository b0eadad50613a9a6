//! The one place where engine results become table rows.
//!
//! [`build_row`] turns one case and its engine result into a [`CaseRow`] (which keeps the
//! engine's grid points for the trends table); [`cases_frame`], [`trends_frame`] and
//! [`routes_frame`] turn rows into polars frames with the published column names. Frames borrow
//! the rows' text: nothing is copied twice on the way to Parquet. A new engine output (heat budget, estimated species)
//! becomes a column by adding a field to the row, one line in `build_row` and one in the frame
//! function: nothing else in the service changes.
//!
//! # Layout
//! - this file: [`CaseRow`], the engine's process inputs from a case's conditions, error texts,
//!   [`build_row`].
//! - `frames`: rows → the cases, trends and species frames.
//! - `routes`: the route columns read back from parts, chunk route summaries, the routes frame.

use polars::prelude::{Column, DataFrame, PolarsResult};
use std::collections::HashSet;
use std::sync::Arc;
use thermosieve_engine::decomposition::Decomposition;
use thermosieve_engine::process::{self, Assessment, CaseProcess, CriticalityClass, ProcessConditions, Scale};
use thermosieve_engine::routes::{roll_up, HeatPerProduct, RouteScore, RouteStep, RouteSummary, StepFacts};
use thermosieve_engine::screen::Prepared;
use thermosieve_engine::species::{Origin, T_REF_K};
use thermosieve_engine::thermo::GridError;
use thermosieve_engine::{ScreenError, Screened, ThermoPoint};
use thermosieve_model::{CaseInput, CONDITION_FIELDS};

mod frames;
mod routes;

pub use frames::*;
pub use routes::*;

/// `status` of a case row.
pub const STATUS_OK: &str = "ok";
pub const STATUS_ERROR: &str = "error";

/// Joins several notes or sources in one cell.
pub const JOIN: &str = " | ";

/// How `decomposition_notes` names an energetic group (the route roll-up reads it back).
const ENERGETIC_PREFIX: &str = "energetic group: ";

/// One row of `cases.parquet`.
#[derive(Clone, Debug)]
pub struct CaseRow {
    pub case_id: String,
    pub route_id: Option<String>,
    pub step: Option<u32>,
    pub ok: bool,
    pub error_message: Option<String>,
    pub balanced_equation: Option<String>,
    pub delta_h_298_kj_per_mol: Option<f64>,
    pub delta_s_298_j_per_mol_k: Option<f64>,
    pub delta_g_298_kj_per_mol: Option<f64>,
    pub log10_k_298: Option<f64>,
    pub delta_g_zero_k: Option<f64>,
    pub delta_h_uncertainty_kj_per_mol: Option<f64>,
    pub estimated_species: u32,
    pub all_points_in_valid_range: Option<bool>,
    /// The species of the balanced equation, as resolved (rows of `species.parquet`; cases name
    /// them in `species_labels`).
    pub species: Vec<Arc<Prepared>>,
    pub notes: Option<String>,
    pub reaction: String,
    pub phase: Option<String>,
    /// The case's process conditions after batch defaults, in [`CONDITION_FIELDS`] order.
    pub conditions: [Option<f64>; thermosieve_model::CONDITION_COUNT],
    /// Other condition columns, as a JSON object (name → text); `None` when there are none.
    pub conditions_extra_json: Option<String>,
    /// 1-based input row (0 unknown).
    pub input_row: u64,
    /// The process view (heat budget, equilibrium, criticality) at the case's conditions.
    pub process: ProcessColumns,
    /// What the route roll-up needs of the process view; `None` when there is none.
    pub step_facts: Option<StepFacts>,
    /// The reaction at each grid temperature (rows of `trends.parquet`); empty on error.
    pub trends: Vec<ThermoPoint>,
}

/// Process-view columns of a case row; all empty when the reaction failed.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct ProcessColumns {
    pub process_temperature_k: Option<f64>,
    pub reaction_mol_per_batch: Option<f64>,
    pub log10_k_process: Option<f64>,
    pub equilibrium_conversion: Option<f64>,
    pub heat_kj_per_mol: Option<f64>,
    pub heat_kj_per_kg: Option<f64>,
    pub heat_kj_per_batch: Option<f64>,
    pub adiabatic_rise_k: Option<f64>,
    pub mtsr_k: Option<f64>,
    pub severity: Option<&'static str>,
    pub criticality_class: Option<u32>,
    /// Why the class is not assessed (the missing inputs), when it is not.
    pub criticality_not_assessed: Option<String>,
    pub gas_mol_per_batch: Option<f64>,
    pub gas_m3_at_0c_1atm: Option<f64>,
    pub cooling_margin_kw: Option<f64>,
    /// Defaults used for this case (common practice, not physics).
    pub assumed_inputs: Option<String>,
    /// False when a species is outside its data, or past its boiling or melting point, at the
    /// process temperature.
    pub in_valid_range_at_process: Option<bool>,
    /// Labels of the species whose data were estimated, joined with [`JOIN`].
    pub estimated_species_labels: Option<String>,
    /// A process input that could not be used (the thermodynamics above still stand).
    pub process_error: Option<String>,
    /// Maximum decomposition heat of the mass after reaction, kJ per kg of reaction mass.
    pub decomposition_heat_kj_per_kg: Option<f64>,
    pub decomposition_heat_sigma_kj_per_kg: Option<f64>,
    /// Its adiabatic temperature rise, K.
    pub decomposition_adiabatic_rise_k: Option<f64>,
    /// Energetic groups in the mass and the screening limits reached, or why no heat is given.
    pub decomposition_notes: Option<String>,
}

/// The engine's process inputs from a case's conditions. A dosing time of 0 is how tables write
/// "all charged at once": it means batch, not an invalid semi-batch. Only a positive dosing time
/// makes a step semi-batch; an accumulated fraction on a batch step is ignored (X_acc = 1, noted
/// by the engine), so a batch step's MTSR is never lowered by it.
pub fn process_conditions(c: &thermosieve_model::Conditions) -> ProcessConditions {
    let dosing = c.dosing_time_h.filter(|&h| h != 0.0);
    // A negative time stays semi-batch so that the engine's range check rejects it.
    let operation = c.dosing_time_h.map(|h| {
        if h == 0.0 {
            process::Operation::Batch
        } else {
            process::Operation::SemiBatch
        }
    });
    ProcessConditions {
        process_temperature_k: c.process_temperature_k,
        pressure_bar: c.pressure_bar,
        scale: c.scale_mol.map(Scale::MolOfReaction),
        reaction_mass_kg: c.reaction_mass_kg,
        cp_kj_per_kg_k: c.cp_kj_per_kg_k,
        operation,
        dosing_time_h: dosing,
        accumulation_fraction: c.accumulation_fraction,
        mtt_k: c.mtt_k,
        t_d24_k: c.t_d24_k,
        dsc_onset_k: c.dsc_onset_k,
        coolant_temperature_k: c.coolant_temperature_k,
        ua_w_per_k: c.ua_w_per_k,
        ..ProcessConditions::default()
    }
}

fn process_columns(p: &CaseProcess) -> ProcessColumns {
    let (class, not_assessed) = match &p.criticality {
        Assessment::Assessed(k) => (Some(u32::from(k.class.number())), None),
        Assessment::NotAssessed { reason, .. } => (None, Some(reason.clone())),
    };
    ProcessColumns {
        process_temperature_k: Some(p.conditions.process_temperature_k),
        reaction_mol_per_batch: Some(p.conditions.reaction_mol),
        log10_k_process: Some(p.equilibrium.point.log10_k),
        equilibrium_conversion: p.equilibrium.conversion.value().map(|c| c.conversion),
        heat_kj_per_mol: Some(p.heat.heat_kj_per_mol),
        heat_kj_per_kg: Some(p.heat.heat_kj_per_kg),
        heat_kj_per_batch: Some(p.heat.heat_kj_per_batch),
        adiabatic_rise_k: Some(p.heat.adiabatic_rise_k),
        mtsr_k: Some(p.heat.mtsr_k),
        severity: Some(p.severity.as_str()),
        criticality_class: class,
        criticality_not_assessed: not_assessed,
        gas_mol_per_batch: Some(p.gas.gas_mol_per_batch),
        gas_m3_at_0c_1atm: Some(p.gas.gas_m3_at_stp),
        cooling_margin_kw: p.cooling.value().map(|c| c.margin_kw),
        assumed_inputs: (!p.assumed.is_empty()).then(|| p.assumed.join(JOIN)),
        in_valid_range_at_process: Some(p.heat.in_valid_range),
        estimated_species_labels: (!p.estimated_species.is_empty()).then(|| p.estimated_species.join(JOIN)),
        process_error: None,
        decomposition_heat_kj_per_kg: p.decomposition.as_ref().ok().map(|d| d.heat_kj_per_kg),
        decomposition_heat_sigma_kj_per_kg: p.decomposition.as_ref().ok().and_then(|d| d.sigma_kj_per_kg),
        decomposition_adiabatic_rise_k: p.decomposition.as_ref().ok().map(|d| d.adiabatic_rise_k),
        decomposition_notes: match &p.decomposition {
            Ok(d) => {
                let mut v: Vec<String> = d.energetic_groups.iter().map(|g| format!("{ENERGETIC_PREFIX}{g}")).collect();
                v.extend(d.flags.iter().cloned());
                (!v.is_empty()).then(|| v.join(JOIN))
            }
            Err(e) => Some(e.to_string()),
        },
    }
}

/// Why a case has no result. Its row's `error_message` says it, naming the input row and
/// column where there is one.
#[derive(Debug)]
pub enum CaseError {
    /// Refused on the way in (table reader, front checks): the message is already complete.
    Input(String),
    /// No reaction given.
    MissingReaction,
    /// The engine rejected the reaction.
    Engine(ScreenError),
    /// The batch's temperature grid is not usable.
    Grid(GridError),
    /// The engine panicked on this reaction (one case lost, not the chunk).
    Panicked,
    /// Not computed: the chunk was dead-lettered (the reason says why).
    DeadLettered(String),
}

impl CaseError {
    /// The row's `error_message`.
    pub fn message(&self, case: &CaseInput) -> String {
        let at = row_prefix(case.row);
        match self {
            CaseError::Input(m) | CaseError::DeadLettered(m) => m.clone(),
            CaseError::MissingReaction => {
                format!("{at}column reaction: missing (expected a reaction equation such as \"CO(g) + H2O(g) -> CO2(g) + H2(g)\")")
            }
            CaseError::Engine(e) => format!("{at}column reaction: {e}"),
            CaseError::Grid(e) => format!("temperature grid: {e}"),
            CaseError::Panicked => format!(
                "internal error: the engine panicked on this reaction ({:?}); please report it",
                case.reaction
            ),
        }
    }
}

fn row_prefix(row: u64) -> String {
    if row > 0 {
        format!("row {row}, ")
    } else {
        String::new()
    }
}

/// The row of one case; its conditions are merged with the batch's `defaults`.
pub fn build_row(case: &CaseInput, defaults: &thermosieve_model::Conditions, result: Result<Screened, CaseError>) -> CaseRow {
    let conditions = &case.conditions.numbers_or_defaults(defaults);
    let mut row = CaseRow {
        case_id: case.case_id.clone(),
        route_id: case.route_id.clone(),
        step: case.step,
        ok: false,
        error_message: None,
        balanced_equation: None,
        delta_h_298_kj_per_mol: None,
        delta_s_298_j_per_mol_k: None,
        delta_g_298_kj_per_mol: None,
        log10_k_298: None,
        delta_g_zero_k: None,
        delta_h_uncertainty_kj_per_mol: None,
        estimated_species: 0,
        all_points_in_valid_range: None,
        species: Vec::new(),
        notes: None,
        reaction: case.reaction.clone(),
        phase: case.phase.clone(),
        conditions: conditions.values(),
        conditions_extra_json: case.conditions.extra_json_or_defaults(defaults),
        input_row: case.row,
        process: ProcessColumns::default(),
        step_facts: None,
        trends: Vec::new(),
    };
    let s = match result {
        Ok(s) => s,
        Err(e) => {
            row.error_message = Some(e.message(case));
            return row;
        }
    };
    row.ok = true;
    row.delta_h_298_kj_per_mol = Some(s.standard.delta_h_kj_per_mol);
    row.delta_s_298_j_per_mol_k = Some(s.standard.delta_s_j_per_mol_k);
    row.delta_g_298_kj_per_mol = Some(s.standard.delta_g_kj_per_mol);
    row.log10_k_298 = Some(s.standard.log10_k);
    row.delta_g_zero_k = s.delta_g_zero_k;
    row.delta_h_uncertainty_kj_per_mol = s.delta_h_uncertainty_kj_per_mol;
    row.estimated_species = s.estimated_species as u32;
    row.process = match process::evaluate(&s, &process_conditions(conditions)) {
        Ok(p) => {
            row.step_facts = Some(StepFacts::from(&p));
            process_columns(&p)
        }
        Err(e) => ProcessColumns {
            process_error: Some(format!("{}{e}", row_prefix(case.row))),
            ..ProcessColumns::default()
        },
    };
    row.all_points_in_valid_range = Some(s.points.iter().all(|p| p.in_valid_range));
    row.species = s.species.iter().map(|t| t.species.clone()).collect();
    row.notes = (!s.notes.is_empty()).then(|| s.notes.join(JOIN));
    row.balanced_equation = Some(s.balanced_equation);
    row.trends = s.points;
    row
}

#[cfg(test)]
mod tests {
    use super::*;
    use thermosieve_engine::process::Operation;

    #[test]
    fn batch_means_batch() {
        // MTSR = T_p + X_acc·ΔT_ad with X_acc = 1 for batch (Stoessel, Thermal Safety of Chemical
        // Processes, 2008, ch. 3, from memory): an accumulated fraction on a step charged at once
        // must not lower it.
        let with = |dosing: Option<f64>, acc: Option<f64>| {
            process_conditions(&thermosieve_model::Conditions {
                dosing_time_h: dosing,
                accumulation_fraction: acc,
                ..Default::default()
            })
        };
        assert_eq!(with(Some(0.0), Some(0.3)).operation, Some(Operation::Batch));
        assert_eq!(with(None, Some(0.3)).operation, None, "no dosing time: the engine's default, batch");
        assert_eq!(with(Some(2.0), Some(0.3)).operation, Some(Operation::SemiBatch));
        assert_eq!(with(Some(2.0), Some(0.3)).dosing_time_h, Some(2.0));
    }
}
