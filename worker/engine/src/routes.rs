//! Route roll-up: the steps of each route (cases sharing a `route_id`, ordered by `step`) summed
//! and compared, and the routes of a batch ranked.
//!
//! # Score
//! Routes are ranked by, in order (lower is better, rank 1 is the least hazardous):
//! 1. whether a step failed (routes with a failed step rank last);
//! 2. the worst criticality class over the steps, a step whose class was not assessed counting
//!    as worse than class 5 (an unknown hazard is not a small one);
//! 3. the worst adiabatic rise ΔT_ad over the steps (K);
//! 4. the total heat released over the steps at their scales (kJ per batch);
//! 5. the route id, so ties have a fixed order.
//!
//! Every number sums the steps as the cases give them: the heat per kg of final product assumes
//! each step's scale is the amount that step runs to make one batch of the final product.

use crate::process::{CaseProcess, CriticalityClass, Scale};
use crate::CAUTION;
use std::cmp::Ordering;
use std::collections::BTreeMap;

/// The score in one sentence, for tables and reports that show a rank.
pub const RANK_NOTE: &str = "rank 1 is the least hazardous route of the batch: routes are ordered by whether a step \
failed (failed routes last), then the worst criticality class over the steps (a step whose class was not assessed \
counts as worse than class 5), then the worst adiabatic temperature rise, then the total heat per batch, then \
route_id. It orders candidates for a closer look; it is not a safety assessment.";

/// What the roll-up needs of one step's process view: a few numbers, so a caller that keeps
/// only table columns (the service's finalizer) can rebuild it without the full [`CaseProcess`].
#[derive(Clone, Debug, PartialEq)]
pub struct StepFacts {
    pub heat_kj_per_batch: f64,
    pub adiabatic_rise_k: f64,
    /// `None` when the class was not assessed (missing MTT or T_D24).
    pub class: Option<CriticalityClass>,
    /// False when a species is outside its data's range, or past its boiling or melting point,
    /// at the process temperature.
    pub in_valid_range: bool,
    /// Labels of the species whose data were estimated.
    pub estimated_species: Vec<String>,
    pub gas_mol_per_batch: f64,
    pub gas_m3_at_stp: f64,
    pub scale: Scale,
    /// Moles of reaction per batch.
    pub reaction_mol: f64,
    /// Maximum decomposition heat of the mass after the step, kJ/kg; `None` when not computed.
    pub decomposition_heat_kj_per_kg: Option<f64>,
    /// Energetic groups (UN Table A6.1) of the species in that mass.
    pub energetic_groups: Vec<String>,
}

impl From<&CaseProcess> for StepFacts {
    fn from(p: &CaseProcess) -> StepFacts {
        StepFacts {
            heat_kj_per_batch: p.heat.heat_kj_per_batch,
            adiabatic_rise_k: p.heat.adiabatic_rise_k,
            class: p.criticality.value().map(|c| c.class),
            in_valid_range: p.heat.in_valid_range,
            estimated_species: p.estimated_species.clone(),
            gas_mol_per_batch: p.gas.gas_mol_per_batch,
            gas_m3_at_stp: p.gas.gas_m3_at_stp,
            scale: p.conditions.scale.clone(),
            reaction_mol: p.conditions.reaction_mol,
            decomposition_heat_kj_per_kg: p.decomposition.as_ref().ok().map(|d| d.heat_kj_per_kg),
            energetic_groups: p
                .decomposition
                .as_ref()
                .map(|d| d.energetic_groups.iter().map(|g| g.to_string()).collect())
                .unwrap_or_default(),
        }
    }
}

/// One case as the roll-up sees it.
#[derive(Clone, Debug)]
pub struct RouteStep<'a> {
    pub case_id: &'a str,
    pub route_id: &'a str,
    pub step: i64,
    /// The case's process view, or its error message.
    pub result: Result<StepFacts, &'a str>,
}

/// A step singled out by the roll-up.
#[derive(Clone, Debug, PartialEq)]
pub struct StepValue<T> {
    pub case_id: String,
    pub step: i64,
    pub value: T,
}

/// A step that needs attention, with why.
#[derive(Clone, Debug, PartialEq)]
pub struct FlaggedStep {
    pub case_id: String,
    pub step: i64,
    pub reasons: Vec<String>,
}

/// Heat over the whole route per unit of final product.
#[derive(Clone, Debug, PartialEq)]
pub enum HeatPerProduct {
    /// kJ per kg of the last step's product (its scale was given in kg of that product).
    KjPerKg { species: String, value: f64 },
    /// kJ per mole of the last step's reaction (its scale was in mol of reaction).
    KjPerMolOfFinalReaction(f64),
}

/// The roll-up of one route.
#[derive(Clone, Debug, PartialEq)]
pub struct RouteSummary {
    pub route_id: String,
    /// 1 = least hazardous in this batch (see the module's score).
    pub rank: usize,
    /// Case ids in step order.
    pub case_ids: Vec<String>,
    /// The first failed step (in step order), with its error message.
    pub failed: Option<StepValue<String>>,
    /// How many steps failed.
    pub failed_steps: usize,
    /// Sum of Q per batch over the steps, kJ; `None` when a step failed.
    pub total_heat_kj: Option<f64>,
    pub heat_per_final_product: Option<HeatPerProduct>,
    /// Sum of the gas evolved over the steps, mol and m³ at 0 °C, 1 atm; `None` when a step failed.
    pub total_gas_mol: Option<f64>,
    pub total_gas_m3_at_stp: Option<f64>,
    /// Over the steps that succeeded.
    pub worst_adiabatic_rise_k: Option<StepValue<f64>>,
    /// Over the steps whose class was assessed.
    pub worst_class: Option<StepValue<CriticalityClass>>,
    /// The largest maximum decomposition heat of a step's mass after reaction, kJ/kg, over the
    /// steps that have one.
    pub worst_decomposition_heat_kj_per_kg: Option<StepValue<f64>>,
    /// Steps whose mass after reaction carries an energetic group (UN Table A6.1), with them.
    pub energetic_steps: Vec<StepValue<Vec<String>>>,
    /// Steps whose class was not assessed (missing MTT or T_D24).
    pub class_not_assessed: Vec<String>,
    /// Steps with class ≥ 3, thermo data extrapolated (or a phase past its boiling or melting
    /// point) at the process temperature, or estimated species.
    pub flagged_steps: Vec<FlaggedStep>,
    pub notes: Vec<String>,
    /// [`CAUTION`], carried with every result.
    pub caution: &'static str,
}

/// Roll up every route in `steps` and rank the routes. Steps with an empty `route_id` belong to
/// no route and are skipped. The result is in rank order.
pub fn roll_up(steps: &[RouteStep]) -> Vec<RouteSummary> {
    let mut by_route: BTreeMap<&str, Vec<&RouteStep>> = BTreeMap::new();
    for s in steps.iter().filter(|s| !s.route_id.is_empty()) {
        by_route.entry(s.route_id).or_default().push(s);
    }
    let mut summaries: Vec<RouteSummary> = by_route.into_iter().map(|(id, route)| summarise(id, route)).collect();
    let ranks = ranks(&summaries.iter().map(RouteSummary::score).collect::<Vec<_>>());
    for (s, r) in summaries.iter_mut().zip(ranks) {
        s.rank = r;
    }
    summaries.sort_by_key(|s| s.rank);
    summaries
}

/// The rank (from 1) of each score, in the order given. For a caller that rolls up routes a few
/// at a time (with [`summarise`]) and keeps only their scores.
pub fn ranks(scores: &[RouteScore]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..scores.len()).collect();
    order.sort_by(|&a, &b| scores[a].rank_order(&scores[b]));
    let mut ranks = vec![0; scores.len()];
    for (position, &i) in order.iter().enumerate() {
        ranks[i] = position + 1;
    }
    ranks
}

/// Roll up one route's steps (any order; they are sorted by step, then case id). The rank is
/// left at 0 for [`ranks`] to set.
pub fn summarise(route_id: &str, mut route: Vec<&RouteStep>) -> RouteSummary {
    route.sort_by(|a, b| a.step.cmp(&b.step).then_with(|| a.case_id.cmp(b.case_id)));
    roll_up_route(route_id, &route)
}

/// The keys of the module's score for one route: small, so a caller ranking many routes can keep
/// these instead of whole summaries.
#[derive(Clone, Debug, PartialEq)]
pub struct RouteScore {
    pub failed: bool,
    /// Worst class number; 6 when a step's class was not assessed, or none was.
    pub class: u8,
    /// Worst ΔT_ad, K (infinite when no step succeeded).
    pub worst_rise_k: f64,
    /// Total heat, kJ per batch (infinite when a step failed).
    pub total_heat_kj: f64,
    pub route_id: String,
}

impl RouteScore {
    /// The order of the score (less is better).
    pub fn rank_order(&self, o: &RouteScore) -> Ordering {
        self.failed
            .cmp(&o.failed)
            .then(self.class.cmp(&o.class))
            .then(self.worst_rise_k.total_cmp(&o.worst_rise_k))
            .then(self.total_heat_kj.total_cmp(&o.total_heat_kj))
            .then_with(|| self.route_id.cmp(&o.route_id))
    }
}

impl RouteSummary {
    /// The keys of the module's score.
    pub fn score(&self) -> RouteScore {
        let class = if self.class_not_assessed.is_empty() {
            self.worst_class.as_ref().map_or(6, |w| w.value.number())
        } else {
            6
        };
        RouteScore {
            failed: self.failed.is_some(),
            class,
            worst_rise_k: self.worst_adiabatic_rise_k.as_ref().map_or(f64::INFINITY, |w| w.value),
            total_heat_kj: self.total_heat_kj.unwrap_or(f64::INFINITY),
            route_id: self.route_id.clone(),
        }
    }
}

fn roll_up_route(route_id: &str, route: &[&RouteStep]) -> RouteSummary {
    let mut notes = Vec::new();
    for w in route.windows(2) {
        if w[0].step == w[1].step {
            notes.push(format!("cases {} and {} are both step {}", w[0].case_id, w[1].case_id, w[0].step));
        }
    }
    let failed = route.iter().find_map(|s| match s.result {
        Err(m) => Some(StepValue {
            case_id: s.case_id.to_string(),
            step: s.step,
            value: m.to_string(),
        }),
        Ok(_) => None,
    });
    let failed_steps = route.iter().filter(|s| s.result.is_err()).count();
    let ok: Vec<(&RouteStep, &StepFacts)> = route.iter().filter_map(|s| s.result.as_ref().ok().map(|p| (*s, p))).collect();

    let mut worst_rise: Option<StepValue<f64>> = None;
    let mut worst_class: Option<StepValue<CriticalityClass>> = None;
    let mut class_not_assessed = Vec::new();
    let mut flagged_steps = Vec::new();
    let mut worst_decomposition: Option<StepValue<f64>> = None;
    let mut energetic_steps = Vec::new();
    for (s, p) in &ok {
        if let Some(q) = p.decomposition_heat_kj_per_kg {
            if worst_decomposition.as_ref().is_none_or(|w| q > w.value) {
                worst_decomposition = Some(StepValue {
                    case_id: s.case_id.to_string(),
                    step: s.step,
                    value: q,
                });
            }
        }
        if !p.energetic_groups.is_empty() {
            energetic_steps.push(StepValue {
                case_id: s.case_id.to_string(),
                step: s.step,
                value: p.energetic_groups.clone(),
            });
        }
        let rise = p.adiabatic_rise_k;
        if worst_rise.as_ref().is_none_or(|w| rise > w.value) {
            worst_rise = Some(StepValue {
                case_id: s.case_id.to_string(),
                step: s.step,
                value: rise,
            });
        }
        let mut reasons = Vec::new();
        match p.class {
            Some(class) => {
                if worst_class.as_ref().is_none_or(|w| class > w.value) {
                    worst_class = Some(StepValue {
                        case_id: s.case_id.to_string(),
                        step: s.step,
                        value: class,
                    });
                }
                if class >= CriticalityClass::Class3 {
                    reasons.push(format!("criticality class {}", class.number()));
                }
            }
            None => class_not_assessed.push(s.case_id.to_string()),
        }
        if !p.in_valid_range {
            reasons.push("thermo data extrapolated, or a phase past its boiling or melting point, at the process temperature".to_string());
        }
        if !p.estimated_species.is_empty() {
            reasons.push(format!("estimated species: {}", p.estimated_species.join(", ")));
        }
        if !reasons.is_empty() {
            flagged_steps.push(FlaggedStep {
                case_id: s.case_id.to_string(),
                step: s.step,
                reasons,
            });
        }
    }

    let complete = failed.is_none();
    let total_heat_kj = complete.then(|| ok.iter().map(|(_, p)| p.heat_kj_per_batch).sum::<f64>());
    let total_gas_mol = complete.then(|| ok.iter().map(|(_, p)| p.gas_mol_per_batch).sum::<f64>());
    let total_gas_m3_at_stp = complete.then(|| ok.iter().map(|(_, p)| p.gas_m3_at_stp).sum::<f64>());
    let heat_per_final_product = match (total_heat_kj, ok.last()) {
        (Some(q), Some((_, last))) => Some(match &last.scale {
            Scale::KgOfProduct { species, kg } => HeatPerProduct::KjPerKg {
                species: species.clone(),
                value: q / kg,
            },
            Scale::MolOfReaction(_) => HeatPerProduct::KjPerMolOfFinalReaction(q / last.reaction_mol),
        }),
        _ => None,
    };

    RouteSummary {
        route_id: route_id.to_string(),
        rank: 0,
        case_ids: route.iter().map(|s| s.case_id.to_string()).collect(),
        failed,
        failed_steps,
        total_heat_kj,
        heat_per_final_product,
        total_gas_mol,
        total_gas_m3_at_stp,
        worst_adiabatic_rise_k: worst_rise,
        worst_class,
        worst_decomposition_heat_kj_per_kg: worst_decomposition,
        energetic_steps,
        class_not_assessed,
        flagged_steps,
        notes,
        caution: CAUTION,
    }
}
