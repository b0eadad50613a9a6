//! The one place where engine results become table rows.
//!
//! [`build_row`] turns one case and its engine result into a [`CaseRow`] (which keeps the
//! engine's grid points for the trends table); [`cases_frame`], [`trends_frame`] and
//! [`routes_frame`] turn rows into polars frames with the published column names. Frames borrow
//! the rows' text: nothing is copied twice on the way to Parquet. A new engine output (heat budget, estimated species)
//! becomes a column by adding a field to the row, one line in `build_row` and one in the frame
//! function: nothing else in the service changes.

use polars::prelude::{Column, DataFrame, PolarsResult};
use std::collections::HashSet;
use std::sync::Arc;
use thermosieve_engine::decomposition::Decomposition;
use thermosieve_engine::process::{self, Assessment, CaseProcess, CriticalityClass, ProcessConditions, Scale};
use thermosieve_engine::routes::{roll_up, HeatPerProduct, RouteScore, RouteStep, RouteSummary, StepFacts};
use thermosieve_engine::screen::Prepared;
use thermosieve_engine::species::{Origin, T_REF_K};
use thermosieve_engine::{ScreenError, Screened, ThermoPoint};
use thermosieve_model::{CaseInput, CONDITION_FIELDS};

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
            Err(e) => Some(e.clone()),
        },
    }
}

/// The message of an engine error for one case, naming the input row and column.
pub fn engine_error_message(case: &CaseInput, e: &ScreenError) -> String {
    format!("{}column reaction: {e}", row_prefix(case.row))
}

fn row_prefix(row: u64) -> String {
    if row > 0 {
        format!("row {row}, ")
    } else {
        String::new()
    }
}

/// The message of a case that has no reaction.
pub fn missing_reaction_message(case: &CaseInput) -> String {
    format!(
        "{}column reaction: missing (expected a reaction equation such as \"CO(g) + H2O(g) -> CO2(g) + H2(g)\")",
        row_prefix(case.row)
    )
}

/// The row of one case. `conditions` are the case's conditions merged with the batch defaults.
pub fn build_row(case: &CaseInput, conditions: &thermosieve_model::Conditions, result: Result<Screened, String>) -> CaseRow {
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
        conditions_extra_json: (!conditions.extra.is_empty()).then(|| serde_json::to_string(&conditions.extra).unwrap_or_default()),
        input_row: case.row,
        process: ProcessColumns::default(),
        step_facts: None,
        trends: Vec::new(),
    };
    let s = match result {
        Ok(s) => s,
        Err(message) => {
            row.error_message = Some(message);
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

fn col<T>(name: &str, values: T) -> Column
where
    Column: ColumnFrom<T>,
{
    Column::column_from(name, values)
}

/// Constructors used by the frame builders (keeps the column list readable).
pub trait ColumnFrom<T> {
    fn column_from(name: &str, values: T) -> Column;
}

macro_rules! column_from {
    ($($t:ty),*) => {$(
        impl ColumnFrom<Vec<$t>> for Column {
            fn column_from(name: &str, values: Vec<$t>) -> Column {
                Column::new(name.into(), values)
            }
        }
    )*};
}
column_from!(
    String,
    Option<String>,
    &str,
    Option<&str>,
    f64,
    Option<f64>,
    u32,
    Option<u32>,
    bool,
    Option<bool>,
    u64
);

/// `cases.parquet` columns, in order.
///
/// # Errors
/// Polars errors (not expected: all columns have the same length).
pub fn cases_frame(rows: &[CaseRow]) -> PolarsResult<DataFrame> {
    let s = |f: for<'a> fn(&'a CaseRow) -> Option<&'a str>| rows.iter().map(f).collect::<Vec<Option<&str>>>();
    let n = |f: fn(&CaseRow) -> Option<f64>| rows.iter().map(f).collect::<Vec<Option<f64>>>();
    let mut columns = vec![
        col("case_id", rows.iter().map(|r| r.case_id.as_str()).collect::<Vec<&str>>()),
        col("route_id", s(|r| r.route_id.as_deref())),
        col("step", rows.iter().map(|r| r.step).collect::<Vec<Option<u32>>>()),
        col(
            "status",
            rows.iter()
                .map(|r| if r.ok { STATUS_OK } else { STATUS_ERROR })
                .collect::<Vec<&str>>(),
        ),
        col("error_message", s(|r| r.error_message.as_deref())),
        col("balanced_equation", s(|r| r.balanced_equation.as_deref())),
        col("delta_h_298_kj_per_mol", n(|r| r.delta_h_298_kj_per_mol)),
        col("delta_s_298_j_per_mol_k", n(|r| r.delta_s_298_j_per_mol_k)),
        col("delta_g_298_kj_per_mol", n(|r| r.delta_g_298_kj_per_mol)),
        col("log10_k_298", n(|r| r.log10_k_298)),
        col("delta_g_zero_k", n(|r| r.delta_g_zero_k)),
        col("delta_h_uncertainty_kj_per_mol", n(|r| r.delta_h_uncertainty_kj_per_mol)),
        col("estimated_species", rows.iter().map(|r| r.estimated_species).collect::<Vec<u32>>()),
        col(
            "all_points_in_valid_range",
            rows.iter().map(|r| r.all_points_in_valid_range).collect::<Vec<Option<bool>>>(),
        ),
        col(
            "species_labels",
            rows.iter()
                .map(|r| (!r.species.is_empty()).then(|| labels(&r.species)))
                .collect::<Vec<Option<String>>>(),
        ),
        col("notes", s(|r| r.notes.as_deref())),
        col("reaction", rows.iter().map(|r| r.reaction.as_str()).collect::<Vec<&str>>()),
        col("phase", s(|r| r.phase.as_deref())),
    ];
    for (i, name) in CONDITION_FIELDS.iter().enumerate() {
        columns.push(col(name, rows.iter().map(|r| r.conditions[i]).collect::<Vec<Option<f64>>>()));
    }
    columns.push(col("conditions_extra_json", s(|r| r.conditions_extra_json.as_deref())));
    let pn = |f: fn(&ProcessColumns) -> Option<f64>| rows.iter().map(|r| f(&r.process)).collect::<Vec<Option<f64>>>();
    let ps = |f: for<'a> fn(&'a ProcessColumns) -> Option<&'a str>| rows.iter().map(|r| f(&r.process)).collect::<Vec<Option<&str>>>();
    columns.extend([
        col("process_temperature_used_k", pn(|p| p.process_temperature_k)),
        col("reaction_mol_per_batch", pn(|p| p.reaction_mol_per_batch)),
        col("log10_k_process", pn(|p| p.log10_k_process)),
        col("equilibrium_conversion", pn(|p| p.equilibrium_conversion)),
        col("heat_kj_per_mol", pn(|p| p.heat_kj_per_mol)),
        col("heat_kj_per_kg", pn(|p| p.heat_kj_per_kg)),
        col("heat_kj_per_batch", pn(|p| p.heat_kj_per_batch)),
        col("adiabatic_rise_k", pn(|p| p.adiabatic_rise_k)),
        col("mtsr_k", pn(|p| p.mtsr_k)),
        col("severity", ps(|p| p.severity)),
        col(
            "criticality_class",
            rows.iter().map(|r| r.process.criticality_class).collect::<Vec<Option<u32>>>(),
        ),
        col("criticality_not_assessed", ps(|p| p.criticality_not_assessed.as_deref())),
        col("gas_mol_per_batch", pn(|p| p.gas_mol_per_batch)),
        col("gas_m3_at_0c_1atm", pn(|p| p.gas_m3_at_0c_1atm)),
        col("cooling_margin_kw", pn(|p| p.cooling_margin_kw)),
        col("assumed_inputs", ps(|p| p.assumed_inputs.as_deref())),
        col(
            "in_valid_range_at_process",
            rows.iter()
                .map(|r| r.process.in_valid_range_at_process)
                .collect::<Vec<Option<bool>>>(),
        ),
        col("estimated_species_labels", ps(|p| p.estimated_species_labels.as_deref())),
        col("process_error", ps(|p| p.process_error.as_deref())),
        col("decomposition_heat_max_kj_per_kg", pn(|p| p.decomposition_heat_kj_per_kg)),
        col("decomposition_heat_sigma_kj_per_kg", pn(|p| p.decomposition_heat_sigma_kj_per_kg)),
        col("decomposition_adiabatic_rise_k", pn(|p| p.decomposition_adiabatic_rise_k)),
        col("decomposition_notes", ps(|p| p.decomposition_notes.as_deref())),
    ]);
    columns.push(col("input_row", rows.iter().map(|r| r.input_row).collect::<Vec<u64>>()));
    DataFrame::new(rows.len(), columns)
}

/// `trends.parquet` columns, in order: one row per case and grid temperature.
///
/// # Errors
/// Polars errors (not expected).
pub fn trends_frame(rows: &[CaseRow]) -> PolarsResult<DataFrame> {
    let points = || rows.iter().flat_map(|r| r.trends.iter());
    let n = |f: fn(&ThermoPoint) -> f64| points().map(f).collect::<Vec<f64>>();
    let case_ids: Vec<&str> = rows
        .iter()
        .flat_map(|r| std::iter::repeat_n(r.case_id.as_str(), r.trends.len()))
        .collect();
    DataFrame::new(
        case_ids.len(),
        vec![
            col("case_id", case_ids),
            col("temperature_k", n(|p| p.temperature_k)),
            col("delta_h_kj_per_mol", n(|p| p.delta_h_kj_per_mol)),
            col("delta_s_j_per_mol_k", n(|p| p.delta_s_j_per_mol_k)),
            col("delta_g_kj_per_mol", n(|p| p.delta_g_kj_per_mol)),
            col("log10_k", n(|p| p.log10_k)),
            col("in_valid_range", points().map(|p| p.in_valid_range).collect::<Vec<bool>>()),
        ],
    )
}

/// `label: sources` per species, joined with [`JOIN`] (the inline API shows it per case; the
/// batch tables keep the sources once per species in `species.parquet`).
pub fn species_sources(species: &[Arc<Prepared>]) -> String {
    let sources: Vec<&str> = species.iter().map(|p| p.citation.as_str()).collect();
    sources.join(JOIN)
}

fn labels(species: &[Arc<Prepared>]) -> String {
    let labels: Vec<&str> = species.iter().map(|p| p.resolved.label.as_str()).collect();
    labels.join(JOIN)
}

/// `species.parquet` columns, in order: one row per species label in `rows` (the first one
/// seen; a label means one record within a batch), in order of first appearance.
///
/// # Errors
/// Polars errors (not expected).
pub fn species_frame(rows: &[CaseRow]) -> PolarsResult<DataFrame> {
    let mut seen = HashSet::new();
    let species: Vec<&Prepared> = rows
        .iter()
        .flat_map(|r| r.species.iter())
        .filter(|p| seen.insert(p.resolved.label.as_str()))
        .map(|p| p.as_ref())
        .collect();
    let at_298 = |p: &Prepared| p.resolved.state(T_REF_K, T_REF_K.ln());
    let n = |f: &dyn Fn(&Prepared) -> f64| species.iter().map(|p| f(p)).collect::<Vec<f64>>();
    let joined = |v: &[String]| (!v.is_empty()).then(|| v.join(JOIN));
    // A decomposition figure per species; null where the species has none.
    let dn = |f: &dyn Fn(&Decomposition) -> Option<f64>| {
        species
            .iter()
            .map(|p| p.decomposition.as_ref().ok().and_then(f))
            .collect::<Vec<Option<f64>>>()
    };
    DataFrame::new(
        species.len(),
        vec![
            col(
                "species_label",
                species.iter().map(|p| p.resolved.label.as_str()).collect::<Vec<&str>>(),
            ),
            col(
                "formula",
                species.iter().map(|p| p.resolved.formula.hill()).collect::<Vec<String>>(),
            ),
            col("phase", species.iter().map(|p| p.resolved.phase.tag()).collect::<Vec<&str>>()),
            col("sources", species.iter().map(|p| p.resolved.source_line()).collect::<Vec<String>>()),
            col(
                "estimated",
                species
                    .iter()
                    .map(|p| p.resolved.origin.iter().any(|o| matches!(o, Origin::Estimated { .. })))
                    .collect::<Vec<bool>>(),
            ),
            col("valid_min_k", n(&|p| p.resolved.range_k().0)),
            col("valid_max_k", n(&|p| p.resolved.range_k().1)),
            col("delta_fh_298_kj_per_mol", n(&|p| at_298(p).h_j_per_mol / 1000.0)),
            col("s_298_j_per_mol_k", n(&|p| at_298(p).s_j_per_mol_k)),
            col(
                "delta_fh_uncertainty_kj_per_mol",
                species
                    .iter()
                    .map(|p| p.resolved.dhf_uncertainty_kj_per_mol)
                    .collect::<Vec<Option<f64>>>(),
            ),
            col(
                "delta_fh_uncertainty_basis",
                species.iter().map(|p| p.resolved.sigma_basis.as_str()).collect::<Vec<&str>>(),
            ),
            col("decomposition_heat_max_kj_per_mol", dn(&|d| Some(d.heat_kj_per_mol))),
            col("decomposition_heat_max_kj_per_kg", dn(&|d| Some(d.heat_kj_per_kg))),
            col("decomposition_heat_sigma_kj_per_mol", dn(&|d| d.sigma_kj_per_mol)),
            col(
                "decomposition_products",
                species
                    .iter()
                    .map(|p| match &p.decomposition {
                        Ok(d) => d.products.clone(),
                        Err(e) => format!("not computed: {e}"),
                    })
                    .collect::<Vec<String>>(),
            ),
            col(
                "energetic_groups",
                species
                    .iter()
                    .map(|p| {
                        p.energetic_groups
                            .as_ref()
                            .map(|g| g.iter().map(|g| g.name()).collect::<Vec<_>>().join(JOIN))
                    })
                    .collect::<Vec<Option<String>>>(),
            ),
            col(
                "notes",
                species.iter().map(|p| joined(&p.resolved.notes)).collect::<Vec<Option<String>>>(),
            ),
        ],
    )
}

/// The cases columns [`route_steps`] reads (the finalizer reads only these back from parts).
pub const ROUTE_STEP_COLUMNS: [&str; 16] = [
    "case_id",
    "route_id",
    "step",
    "status",
    "error_message",
    "process_error",
    "estimated_species_labels",
    "criticality_class",
    "in_valid_range_at_process",
    "heat_kj_per_batch",
    "adiabatic_rise_k",
    "gas_mol_per_batch",
    "gas_m3_at_0c_1atm",
    "reaction_mol_per_batch",
    "decomposition_heat_max_kj_per_kg",
    "decomposition_notes",
];

/// The roll-up inputs of the route steps in a cases frame: `(case_id, route_id, step, result)`
/// per row that has a route. A step whose process view is missing (an input the engine could not
/// use) counts as failed for the route, with that message: its heat is unknown.
///
/// # Errors
/// Polars errors when a column is missing or of another type.
pub fn route_steps(df: &DataFrame) -> PolarsResult<Vec<RouteStep<'_>>> {
    let num = |name: &str| df.column(name).and_then(|c| c.f64().cloned());
    let (case, route, status, error, process_error, estimated) = (
        df.column("case_id")?.str()?,
        df.column("route_id")?.str()?,
        df.column("status")?.str()?,
        df.column("error_message")?.str()?,
        df.column("process_error")?.str()?,
        df.column("estimated_species_labels")?.str()?,
    );
    let step = df.column("step")?.u32()?;
    let class = df.column("criticality_class")?.u32()?;
    let in_range = df.column("in_valid_range_at_process")?.bool()?;
    let (heat, rise, gas_mol, gas_m3, mol, decomposition) = (
        num("heat_kj_per_batch")?,
        num("adiabatic_rise_k")?,
        num("gas_mol_per_batch")?,
        num("gas_m3_at_0c_1atm")?,
        num("reaction_mol_per_batch")?,
        num("decomposition_heat_max_kj_per_kg")?,
    );
    let decomposition_notes = df.column("decomposition_notes")?.str()?;
    let mut out = Vec::new();
    for i in 0..df.height() {
        let Some(route_id) = route.get(i).filter(|r| !r.is_empty()) else {
            continue;
        };
        let result = if status.get(i) != Some(STATUS_OK) {
            Err(error.get(i).unwrap_or(""))
        } else if let Some(m) = process_error.get(i) {
            Err(m)
        } else {
            Ok(StepFacts {
                heat_kj_per_batch: heat.get(i).unwrap_or(f64::NAN),
                adiabatic_rise_k: rise.get(i).unwrap_or(f64::NAN),
                class: class.get(i).and_then(|c| CriticalityClass::from_number(c as u8)),
                in_valid_range: in_range.get(i).unwrap_or(false),
                estimated_species: estimated
                    .get(i)
                    .map_or_else(Vec::new, |s| s.split(JOIN).map(String::from).collect()),
                gas_mol_per_batch: gas_mol.get(i).unwrap_or(f64::NAN),
                gas_m3_at_stp: gas_m3.get(i).unwrap_or(f64::NAN),
                scale: Scale::MolOfReaction(mol.get(i).unwrap_or(f64::NAN)),
                reaction_mol: mol.get(i).unwrap_or(f64::NAN),
                decomposition_heat_kj_per_kg: decomposition.get(i),
                energetic_groups: decomposition_notes.get(i).map_or_else(Vec::new, |s| {
                    s.split(JOIN)
                        .filter_map(|n| n.strip_prefix(ENERGETIC_PREFIX).map(String::from))
                        .collect()
                }),
            })
        };
        out.push(RouteStep {
            case_id: case.get(i).unwrap_or(""),
            route_id,
            step: i64::from(step.get(i).unwrap_or(0)),
            result,
        });
    }
    Ok(out)
}

/// The routes of one chunk's case rows, rolled up. The front keeps every step of a route in one
/// chunk, so these are whole routes (a later step of an ended route is an error row, folded in
/// by the finalizer). Ranks are the chunk's own; the finalizer ranks the batch.
pub fn chunk_routes(cases: &[CaseRow]) -> Vec<RouteSummary> {
    let steps: Vec<RouteStep> = cases
        .iter()
        .filter_map(|c| {
            let route_id = c.route_id.as_deref().filter(|r| !r.is_empty())?;
            let result = match (&c.step_facts, &c.error_message, &c.process.process_error) {
                (Some(f), _, _) => Ok(f.clone()),
                (None, Some(m), _) | (None, None, Some(m)) => Err(m.as_str()),
                (None, None, None) => Err("no process view"),
            };
            Some(RouteStep {
                case_id: &c.case_id,
                route_id,
                step: i64::from(c.step.unwrap_or(0)),
                result,
            })
        })
        .collect();
    roll_up(&steps)
}

/// The routes columns [`route_scores`] reads.
pub const ROUTE_SCORE_COLUMNS: [&str; 6] = [
    "route_id",
    "failed_steps",
    "worst_criticality_class",
    "class_not_assessed_case_ids",
    "worst_adiabatic_rise_k",
    "total_heat_kj_per_batch",
];

/// The score of each route row of a routes frame, as [`RouteSummary::score`] gives it.
///
/// # Errors
/// Polars errors when a column is missing or of another type.
pub fn route_scores(df: &DataFrame) -> PolarsResult<Vec<RouteScore>> {
    let id = df.column("route_id")?.str()?;
    let failed = df.column("failed_steps")?.u32()?;
    let class = df.column("worst_criticality_class")?.u32()?;
    let not_assessed = df.column("class_not_assessed_case_ids")?.str()?;
    let rise = df.column("worst_adiabatic_rise_k")?.f64()?;
    let heat = df.column("total_heat_kj_per_batch")?.f64()?;
    Ok((0..df.height())
        .map(|i| RouteScore {
            failed: failed.get(i).unwrap_or(0) > 0,
            class: match (not_assessed.get(i), class.get(i)) {
                (None, Some(c)) => c as u8,
                _ => 6,
            },
            worst_rise_k: rise.get(i).unwrap_or(f64::INFINITY),
            total_heat_kj: heat.get(i).unwrap_or(f64::INFINITY),
            route_id: id.get(i).unwrap_or("").to_string(),
        })
        .collect())
}

/// `routes.parquet` columns, in order; `summaries` in rank order.
///
/// # Errors
/// Polars errors (not expected).
pub fn routes_frame(summaries: &[RouteSummary]) -> PolarsResult<DataFrame> {
    let s = |f: &dyn Fn(&RouteSummary) -> Option<String>| summaries.iter().map(f).collect::<Vec<Option<String>>>();
    let n = |f: &dyn Fn(&RouteSummary) -> Option<f64>| summaries.iter().map(f).collect::<Vec<Option<f64>>>();
    let joined = |v: &[String]| (!v.is_empty()).then(|| v.join(JOIN));
    let per_kg = |r: &RouteSummary| match &r.heat_per_final_product {
        Some(HeatPerProduct::KjPerKg { species, value }) => Some((species.clone(), *value)),
        _ => None,
    };
    DataFrame::new(
        summaries.len(),
        vec![
            col("route_id", summaries.iter().map(|r| r.route_id.clone()).collect::<Vec<String>>()),
            col("rank", summaries.iter().map(|r| r.rank as u32).collect::<Vec<u32>>()),
            col("steps", summaries.iter().map(|r| r.case_ids.len() as u32).collect::<Vec<u32>>()),
            col(
                "failed_steps",
                summaries.iter().map(|r| r.failed_steps as u32).collect::<Vec<u32>>(),
            ),
            col(
                "first_error",
                s(&|r| {
                    r.failed
                        .as_ref()
                        .map(|f| format!("step {} (case {}): {}", f.step, f.case_id, f.value))
                }),
            ),
            col(
                "worst_criticality_class",
                summaries
                    .iter()
                    .map(|r| r.worst_class.as_ref().map(|w| u32::from(w.value.number())))
                    .collect::<Vec<Option<u32>>>(),
            ),
            col(
                "worst_criticality_class_case_id",
                s(&|r| r.worst_class.as_ref().map(|w| w.case_id.clone())),
            ),
            col("class_not_assessed_case_ids", s(&|r| joined(&r.class_not_assessed))),
            col("worst_adiabatic_rise_k", n(&|r| r.worst_adiabatic_rise_k.as_ref().map(|w| w.value))),
            col(
                "worst_adiabatic_rise_case_id",
                s(&|r| r.worst_adiabatic_rise_k.as_ref().map(|w| w.case_id.clone())),
            ),
            col("total_heat_kj_per_batch", n(&|r| r.total_heat_kj)),
            col(
                "heat_kj_per_mol_final_reaction",
                n(&|r| match r.heat_per_final_product {
                    Some(HeatPerProduct::KjPerMolOfFinalReaction(v)) => Some(v),
                    _ => None,
                }),
            ),
            col("heat_kj_per_kg_final_product", n(&|r| per_kg(r).map(|p| p.1))),
            col("final_product", s(&|r| per_kg(r).map(|p| p.0))),
            col(
                "worst_decomposition_heat_kj_per_kg",
                n(&|r| r.worst_decomposition_heat_kj_per_kg.as_ref().map(|w| w.value)),
            ),
            col(
                "worst_decomposition_case_id",
                s(&|r| r.worst_decomposition_heat_kj_per_kg.as_ref().map(|w| w.case_id.clone())),
            ),
            col(
                "energetic_steps",
                s(&|r| {
                    let f: Vec<String> = r
                        .energetic_steps
                        .iter()
                        .map(|e| format!("step {} (case {}): {}", e.step, e.case_id, e.value.join("; ")))
                        .collect();
                    joined(&f)
                }),
            ),
            col("total_gas_mol_per_batch", n(&|r| r.total_gas_mol)),
            col("total_gas_m3_at_0c_1atm", n(&|r| r.total_gas_m3_at_stp)),
            col(
                "flagged_steps",
                s(&|r| {
                    let f: Vec<String> = r
                        .flagged_steps
                        .iter()
                        .map(|f| format!("step {} (case {}): {}", f.step, f.case_id, f.reasons.join("; ")))
                        .collect();
                    joined(&f)
                }),
            ),
            col("notes", s(&|r| joined(&r.notes))),
            col("case_ids", summaries.iter().map(|r| r.case_ids.join(JOIN)).collect::<Vec<String>>()),
        ],
    )
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
