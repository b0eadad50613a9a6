//! Rows → polars frames with the published column names: the cases, trends and species
//! tables (frames borrow the rows' text).

use super::*;

pub(super) fn col<T>(name: &str, values: T) -> Column
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
    // One pass over the points into columns sized up front (six passes over nested rows were a
    // tenth of a chunk's frame building).
    let n: usize = rows.iter().map(|r| r.trends.len()).sum();
    let mut case_ids: Vec<&str> = Vec::with_capacity(n);
    let [mut t, mut h, mut s, mut g, mut k] = std::array::from_fn(|_| Vec::<f64>::with_capacity(n));
    let mut in_range: Vec<bool> = Vec::with_capacity(n);
    for r in rows {
        for p in &r.trends {
            case_ids.push(&r.case_id);
            t.push(p.temperature_k);
            h.push(p.delta_h_kj_per_mol);
            s.push(p.delta_s_j_per_mol_k);
            g.push(p.delta_g_kj_per_mol);
            k.push(p.log10_k);
            in_range.push(p.in_valid_range);
        }
    }
    DataFrame::new(
        n,
        vec![
            col("case_id", case_ids),
            col("temperature_k", t),
            col("delta_h_kj_per_mol", h),
            col("delta_s_j_per_mol_k", s),
            col("delta_g_kj_per_mol", g),
            col("log10_k", k),
            col("in_valid_range", in_range),
        ],
    )
}

/// `label: sources` per species, joined with [`JOIN`] (the inline API shows it per case; the
/// batch tables keep the sources once per species in `species.parquet`).
pub fn species_sources(species: &[Arc<Prepared>]) -> String {
    let sources: Vec<&str> = species.iter().map(|p| p.citation.as_str()).collect();
    sources.join(JOIN)
}

pub(super) fn labels(species: &[Arc<Prepared>]) -> String {
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
