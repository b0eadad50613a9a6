//! Route encoding: the case columns a route roll-up reads back from parts, the chunk's route
//! summaries, and the routes table's frame.

use super::*;

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
