//! The safety rules of the process view: Stoessel's criticality classes, severity by adiabatic
//! rise, the heat budget, the decomposition screening of the mass (UN Appendix 6), gas evolution
//! and the cooling check.

use super::*;

/// Stoessel's criticality classes of a cooling-failure scenario.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum CriticalityClass {
    /// MTSR < MTT, MTSR < T_D24, MTT < T_D24.
    Class1 = 1,
    /// MTSR < MTT, MTSR < T_D24, MTT ≥ T_D24.
    Class2 = 2,
    /// MTT ≤ MTSR < T_D24.
    Class3 = 3,
    /// MTT < T_D24 ≤ MTSR.
    Class4 = 4,
    /// T_D24 ≤ MTT and T_D24 ≤ MTSR.
    Class5 = 5,
}

impl CriticalityClass {
    pub fn number(self) -> u8 {
        self as u8
    }

    /// The class with this number (1 to 5), as tables store it.
    pub fn from_number(n: u8) -> Option<CriticalityClass> {
        use CriticalityClass::*;
        [Class1, Class2, Class3, Class4, Class5].into_iter().find(|c| c.number() == n)
    }

    pub fn describe(self) -> &'static str {
        match self {
            CriticalityClass::Class1 => "class 1: MTT not reached, decomposition not triggered",
            CriticalityClass::Class2 => {
                "class 2: MTT not reached, decomposition not triggered, but T_D24 lies below MTT \
                 (hold-up at MTT could trigger it)"
            }
            CriticalityClass::Class3 => "class 3: MTT reached (boiling or set limit is a barrier), decomposition not triggered",
            CriticalityClass::Class4 => "class 4: MTT reached before T_D24, MTSR above T_D24: the barrier at MTT must hold",
            CriticalityClass::Class5 => "class 5: decomposition triggered before MTT is reached: no barrier",
        }
    }
}

/// Stoessel's criticality class from MTSR, MTT and T_D24 (all K).
///
/// Ties count against safety: a temperature that reaches MTT or T_D24 exactly has reached it, and
/// MTT = T_D24 counts as "T_D24 not above MTT" (class 2 or 5, not 1 or 4). The class never falls
/// as MTSR rises with MTT and T_D24 fixed.
pub fn criticality_class(mtsr_k: f64, mtt_k: f64, t_d24_k: f64) -> CriticalityClass {
    let barrier_below_decomposition = mtt_k < t_d24_k;
    if mtsr_k >= t_d24_k {
        if barrier_below_decomposition {
            CriticalityClass::Class4
        } else {
            CriticalityClass::Class5
        }
    } else if mtsr_k >= mtt_k {
        CriticalityClass::Class3
    } else if barrier_below_decomposition {
        CriticalityClass::Class1
    } else {
        CriticalityClass::Class2
    }
}

/// Severity of a cooling failure from the adiabatic rise alone (three-level bands; see
/// [`severity_from_adiabatic_rise`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Severity {
    Low,
    Medium,
    High,
}

impl Severity {
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Low => "low",
            Severity::Medium => "medium",
            Severity::High => "high",
        }
    }
}

/// ΔT_ad < 50 K low, 50–200 K medium, > 200 K high: Stoessel's three-level severity bands (from
/// memory, not verified against the book; common practice). "Low" assumes no pressure build-up:
/// gas evolution is reported separately and is not folded in.
pub fn severity_from_adiabatic_rise(adiabatic_rise_k: f64) -> Severity {
    if adiabatic_rise_k > 200.0 {
        Severity::High
    } else if adiabatic_rise_k >= 50.0 {
        Severity::Medium
    } else {
        Severity::Low
    }
}

/// UN Recommendations on the Transport of Dangerous Goods, Manual of Tests and Criteria (Rev. 6,
/// 2015), Appendix 6 (screening procedures): a substance whose exothermic decomposition energy
/// is below 500 J/g (with an onset below 500 °C) need not be tested for explosive properties.
/// At or above it, the screening does not clear the mass.
pub const EXPLOSIVE_SCREENING_KJ_PER_KG: f64 = 500.0;
/// The same Appendix: below 300 J/g a substance is screened out as a self-reactive candidate.
pub const SELF_REACTIVE_SCREENING_KJ_PER_KG: f64 = 300.0;

/// Why the decomposition heat of the mass after reaction cannot be said: a species of it has
/// none.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
#[error("{species}: no decomposition heat ({source})")]
pub struct MassDecompositionError {
    pub species: String,
    pub source: crate::decomposition::DecompositionError,
}

/// The reaction mass after reaction, as a decomposition hazard.
#[derive(Clone, Debug, PartialEq)]
pub struct MassDecomposition {
    /// The most heat a decomposition of the mass could release, kJ per kg of reaction mass: the
    /// products' maximum heats of decomposition; for a semi-batch step the larger of that and the
    /// mix of (1 − X_acc) products and X_acc unreacted reagents. Solvent in the mass dilutes it;
    /// its own decomposition is not counted, nor is the charge before reaction (each reagent's
    /// own figure is in the species table).
    pub heat_kj_per_kg: f64,
    /// σ of the heat from the species' ΔfH° σ, kJ/kg; None where a σ is unknown.
    pub sigma_kj_per_kg: Option<f64>,
    /// Adiabatic temperature rise of that decomposition: heat / c_p, K.
    pub adiabatic_rise_k: f64,
    /// Energetic groups of the species in the mass (UN Table A6.1), each once.
    pub energetic_groups: Vec<&'static str>,
    /// Screening limits reached, with their source.
    pub flags: Vec<String>,
}

pub(super) fn mass_decomposition(screened: &Screened, c: &EffectiveConditions) -> Result<MassDecomposition, MassDecompositionError> {
    // After a batch step the mass is its products; a semi-batch step may still hold the
    // accumulated fraction of its reagents unreacted, so the larger of the two mixtures counts.
    let reagents_count = c.operation == Operation::SemiBatch && c.accumulation_fraction > 0.0;
    let (mut products, mut reagents, mut var) = (0.0, 0.0, 0.0f64);
    let mut sigma_known = true;
    let mut groups: Vec<&'static str> = Vec::new();
    for t in &screened.species {
        let p = &t.species;
        let nu = t.nu.to_f64();
        if nu < 0.0 && !reagents_count {
            continue;
        }
        let d = p.decomposition.as_ref().map_err(|e| MassDecompositionError {
            species: p.resolved.label.clone(),
            source: e.clone(),
        })?;
        if nu > 0.0 {
            products += nu * d.heat_kj_per_mol;
        } else {
            reagents += -nu * d.heat_kj_per_mol;
        }
        match d.sigma_kj_per_mol {
            Some(s) => var += (nu * s).powi(2),
            None => sigma_known = false,
        }
        for g in p.energetic_groups.iter().flatten() {
            if !groups.contains(&g.name()) {
                groups.push(g.name());
            }
        }
    }
    let per_mol = if reagents_count {
        let x = c.accumulation_fraction;
        products.max((1.0 - x) * products + x * reagents)
    } else {
        products
    };
    let kg_per_mol = c.reaction_mass_kg / c.reaction_mol;
    let heat = per_mol / kg_per_mol;
    let mut flags = Vec::new();
    if heat >= EXPLOSIVE_SCREENING_KJ_PER_KG {
        flags.push(format!(
            "at or above {EXPLOSIVE_SCREENING_KJ_PER_KG} J/g: not cleared by the UN Manual of Tests and Criteria App. 6 screening for explosive properties"
        ));
    } else if heat >= SELF_REACTIVE_SCREENING_KJ_PER_KG {
        flags.push(format!(
            "at or above {SELF_REACTIVE_SCREENING_KJ_PER_KG} J/g: not cleared by the UN App. 6 screening for self-reactive substances"
        ));
    }
    Ok(MassDecomposition {
        heat_kj_per_kg: heat,
        sigma_kj_per_kg: sigma_known.then(|| var.sqrt() / kg_per_mol),
        adiabatic_rise_k: heat / c.cp_kj_per_kg_k,
        energetic_groups: groups,
        flags,
    })
}

/// Reaction properties at `t` with every species evaluated directly there.
pub fn point_at(screened: &Screened, t: f64) -> ThermoPoint {
    let ln_t = t.ln();
    let states: Vec<(f64, crate::species::State)> = screened
        .species
        .iter()
        .map(|s| (s.nu.to_f64(), s.species.resolved.state(t, ln_t)))
        .collect();
    thermo::point(t, states.iter().map(|(n, s)| (*n, s)))
}

/// Moles of reaction per batch for a scale.
///
/// # Errors
/// `ProcessError::UnknownProduct` when a kg scale names a species that is not a product.
pub fn reaction_mol(screened: &Screened, scale: &Scale) -> Result<f64, ProcessError> {
    match scale {
        Scale::MolOfReaction(n) => Ok(*n),
        Scale::KgOfProduct { species, kg } => {
            let products: Vec<&crate::screen::SpeciesTerm> = screened.species.iter().filter(|s| s.nu.signum() > 0).collect();
            let Some(term) = products.iter().find(|s| s.species.resolved.label == *species) else {
                return Err(ProcessError::UnknownProduct {
                    species: species.clone(),
                    equation: screened.balanced_equation.clone(),
                    products: products.iter().map(|s| s.species.resolved.label.clone()).collect(),
                });
            };
            let molar_mass_g_per_mol = term.species.resolved.formula.molar_mass_g_per_mol();
            if molar_mass_g_per_mol <= 0.0 {
                // The electron: no mass to count a batch in.
                return Err(ProcessError::Invalid {
                    field: "scale_product",
                    value: molar_mass_g_per_mol,
                    expected: "a product with mass",
                });
            }
            Ok(kg * 1000.0 / molar_mass_g_per_mol / term.nu.to_f64())
        }
    }
}

/// Mass of the reactants per mole of reaction, kg/mol (Σ|ν|·M over reactants).
pub fn reactant_mass_kg_per_mol(screened: &Screened) -> f64 {
    screened
        .species
        .iter()
        .filter(|s| s.nu.signum() < 0)
        .map(|s| -s.nu.to_f64() * s.species.resolved.formula.molar_mass_g_per_mol() / 1000.0)
        .sum()
}

/// ΔT_ad = Q/(m·c_p), K, for Q in kJ, m in kg, c_p in kJ/(kg·K).
pub fn adiabatic_rise_k(heat_kj: f64, mass_kg: f64, cp_kj_per_kg_k: f64) -> f64 {
    heat_kj / (mass_kg * cp_kj_per_kg_k)
}

/// MTSR = T_process + X_acc·ΔT_ad, K; an endothermic reaction (ΔT_ad < 0) gives no rise.
pub fn mtsr_k(process_temperature_k: f64, accumulation_fraction: f64, adiabatic_rise_k: f64) -> f64 {
    process_temperature_k + accumulation_fraction * adiabatic_rise_k.max(0.0)
}

pub(super) fn heat_budget(point: &ThermoPoint, c: &EffectiveConditions, uncertainty: Option<f64>) -> HeatBudget {
    let per_mol = -point.delta_h_kj_per_mol;
    let per_batch = per_mol * c.reaction_mol;
    let rise = adiabatic_rise_k(per_batch, c.reaction_mass_kg, c.cp_kj_per_kg_k);
    HeatBudget {
        delta_h_kj_per_mol: point.delta_h_kj_per_mol,
        heat_kj_per_mol: per_mol,
        heat_kj_per_kg: per_batch / c.reaction_mass_kg,
        heat_kj_per_batch: per_batch,
        adiabatic_rise_k: rise,
        mtsr_k: mtsr_k(c.process_temperature_k, c.accumulation_fraction, rise),
        delta_h_uncertainty_kj_per_mol: uncertainty,
        in_valid_range: point.in_valid_range,
    }
}

pub(super) fn criticality(c: &EffectiveConditions, mtsr: f64, notes: &mut Vec<String>) -> Assessment<Criticality> {
    let mut missing = Vec::new();
    if c.mtt_k.is_none() {
        missing.push("mtt_k");
    }
    if c.t_d24_k.is_none() {
        missing.push("t_d24_k (or dsc_onset_k)");
    }
    let (Some(mtt), Some(td24)) = (c.mtt_k, c.t_d24_k) else {
        return Assessment::missing(missing);
    };
    if c.process_temperature_k >= mtt {
        notes.push(format!(
            "process temperature {} K is at or above MTT {mtt} K",
            c.process_temperature_k
        ));
    }
    if c.process_temperature_k >= td24 {
        notes.push(format!(
            "process temperature {} K is at or above T_D24 {td24} K",
            c.process_temperature_k
        ));
    }
    Assessment::Assessed(Criticality {
        class: criticality_class(mtsr, mtt, td24),
        mtsr_k: mtsr,
        mtt_k: mtt,
        t_d24_k: td24,
    })
}

pub(super) fn gas_evolution(screened: &Screened, c: &EffectiveConditions) -> GasEvolution {
    let dn: f64 = screened
        .species
        .iter()
        .filter(|s| s.species.resolved.phase == Phase::Gas)
        .map(|s| s.nu.to_f64())
        .sum();
    let mol = dn * c.reaction_mol;
    GasEvolution {
        delta_n_gas_per_mol: dn,
        gas_mol_per_batch: mol,
        gas_m3_at_stp: mol * MOLAR_VOLUME_STP_M3_PER_MOL,
        gas_m3_at_process: mol * R * c.process_temperature_k / (c.pressure_bar * 1e5),
    }
}

/// Mean heat-release rate over the dosing time against U·A·(T_process − T_coolant).
pub fn cooling_capacity_check(
    heat_kj_per_batch: f64,
    dosing_time_h: f64,
    ua_w_per_k: f64,
    process_temperature_k: f64,
    coolant_temperature_k: f64,
) -> CoolingCheck {
    let release = heat_kj_per_batch / (dosing_time_h * 3600.0);
    let capacity = ua_w_per_k * (process_temperature_k - coolant_temperature_k) / 1000.0;
    CoolingCheck {
        heat_release_kw: release,
        cooling_capacity_kw: capacity,
        margin_kw: capacity - release,
        release_to_capacity: (capacity > 0.0).then(|| release / capacity),
    }
}

pub(super) fn cooling_check(c: &EffectiveConditions, heat_kj_per_batch: f64) -> Assessment<CoolingCheck> {
    let mut missing = Vec::new();
    if c.dosing_time_h.is_none() {
        missing.push("dosing_time_h");
    }
    if c.ua_w_per_k.is_none() {
        missing.push("ua_w_per_k");
    }
    if c.coolant_temperature_k.is_none() {
        missing.push("coolant_temperature_k");
    }
    match (c.dosing_time_h, c.ua_w_per_k, c.coolant_temperature_k) {
        (Some(h), Some(ua), Some(tc)) => {
            Assessment::Assessed(cooling_capacity_check(heat_kj_per_batch, h, ua, c.process_temperature_k, tc))
        }
        _ => Assessment::missing(missing),
    }
}
