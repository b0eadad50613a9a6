//! The process view of one screened reaction: what it does at the conditions it will run at.
//!
//! Pure functions over a [`Screened`] reaction and its [`ProcessConditions`]:
//! - equilibrium at the process temperature (K, log10 K, the direction of K with T, and the
//!   equilibrium conversion from a stoichiometric feed for ideal-gas / pure condensed systems);
//! - the heat budget (Q = −ΔrH(T_process) per mole, per kg and per batch, the adiabatic rise
//!   ΔT_ad, MTSR), the runaway criticality class and a severity rating;
//! - gas evolved, and the heat-release rate over the dosing time against the cooling capacity.
//!
//! Defaults for inputs the user left out are common practice, never physics: every default used
//! is written into [`CaseProcess::assumed`]. The safety temperatures (MTT, T_D24) are never
//! defaulted: without them the criticality class is "not assessed" and says what is missing.
//!
//! # Layout
//! - this file: conditions and their defaults, the result types, [`evaluate`].
//! - `safety`: criticality classes, severity, heat budget, decomposition screening of the mass,
//!   gas evolution, cooling check.
//! - `equilibrium`: the extent solver and the equilibrium conversion.

use crate::formula::Phase;
use crate::screen::Screened;
use crate::species::{Origin, R};
use crate::thermo::{self, ThermoPoint, GRID_RANGE_K};
use crate::CAUTION;

mod equilibrium;
mod safety;

pub use equilibrium::*;
pub use safety::*;

/// Standard-state pressure of the bundled data and of every K the engine reports, bar. The NASA
/// polynomials (McBride, Gordon & Reno, NASA TM-4513) are for 1 bar.
pub const STANDARD_PRESSURE_BAR: f64 = 1.0;
/// Molar volume of an ideal gas at 273.15 K and 101.325 kPa, m³/mol: CODATA 2018 value
/// 22.413 969 54... × 10⁻³ m³/mol (exact, since R is exact); computed here as R·T/p.
pub const MOLAR_VOLUME_STP_M3_PER_MOL: f64 = R * 273.15 / 101_325.0;
/// 1 atm in bar (exact).
pub const ATMOSPHERE_BAR: f64 = 1.01325;

/// Default specific heat capacity of the reaction mass, kJ/(kg·K): the low end of the 1.8–2.0
/// usual for organic reaction masses (common practice; the low end gives the larger ΔT_ad).
pub const DEFAULT_CP_KJ_PER_KG_K: f64 = 1.8;
/// Default scale: 1 kmol of reaction (an arbitrary, round plant-scale batch).
pub const DEFAULT_SCALE_MOL: f64 = 1000.0;
/// Default process temperature, K (the standard temperature of the data).
pub const DEFAULT_PROCESS_TEMPERATURE_K: f64 = 298.15;
/// Default pressure, bar (atmospheric).
pub const DEFAULT_PRESSURE_BAR: f64 = ATMOSPHERE_BAR;
/// Default margin between a DSC onset and T_D24, K, when only the onset is given. Common practice
/// (the "100 K rule" for dynamic DSC onsets), no primary source verified; the larger of the
/// margins in use (50 K and 100 K), so the lower, more conservative T_D24.
pub const DEFAULT_DSC_MARGIN_K: f64 = 100.0;

/// Kelvin from degrees Celsius (the services accept `_c` columns).
pub fn celsius_to_kelvin(celsius: f64) -> f64 {
    celsius + 273.15
}

/// Degrees Celsius from kelvin.
pub fn kelvin_to_celsius(kelvin: f64) -> f64 {
    kelvin - 273.15
}

/// How much reaction one batch runs.
#[derive(Clone, Debug, PartialEq)]
pub enum Scale {
    /// Moles of reaction (extent, for the equation as balanced).
    MolOfReaction(f64),
    /// Kilograms of one product, named by its label as resolved (`CO2(g)`, `H2O(l)`).
    KgOfProduct { species: String, kg: f64 },
}

/// Batch: everything charged at the start (X_acc = 1). Semi-batch: one reactant dosed over the
/// dosing time, with a fraction X_acc of unreacted material accumulated at worst.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Operation {
    Batch,
    SemiBatch,
}

/// Process conditions of one case. Every field is optional: a case's own values win over the
/// batch's ([`ProcessConditions::with_defaults`]), and the engine's common-practice defaults fill
/// the rest ([`evaluate`] lists each one it used).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ProcessConditions {
    /// Process temperature, K. Default 298.15 K.
    pub process_temperature_k: Option<f64>,
    /// Pressure, bar (absolute). Default 1.01325 bar.
    pub pressure_bar: Option<f64>,
    /// Default 1 kmol of reaction.
    pub scale: Option<Scale>,
    /// Reaction mass, kg. Default: the mass of the reactants at this scale (no solvent: the
    /// largest ΔT_ad).
    pub reaction_mass_kg: Option<f64>,
    /// Specific heat capacity of the reaction mass, kJ/(kg·K). Default 1.8.
    pub cp_kj_per_kg_k: Option<f64>,
    /// Default batch.
    pub operation: Option<Operation>,
    /// Dosing time, h (semi-batch), or the time over which the batch's heat is released.
    pub dosing_time_h: Option<f64>,
    /// Accumulated fraction X_acc of unreacted dosed material, 0..1 (semi-batch). Default 1.
    pub accumulation_fraction: Option<f64>,
    /// Maximum technical temperature MTT, K: the boiling point of the mass at the working
    /// pressure, or a set limit. Never defaulted.
    pub mtt_k: Option<f64>,
    /// T_D24, K: temperature at which the time to maximum rate of the decomposition under
    /// adiabatic conditions is 24 h. Never defaulted; may be derived from a DSC onset.
    pub t_d24_k: Option<f64>,
    /// DSC onset temperature of the decomposition, K; T_D24 ≈ onset − margin when T_D24 is absent.
    pub dsc_onset_k: Option<f64>,
    /// Margin between the DSC onset and T_D24, K. Default 100 K (only used with an onset).
    pub dsc_margin_k: Option<f64>,
    /// Coolant (jacket) temperature, K.
    pub coolant_temperature_k: Option<f64>,
    /// Overall heat-transfer coefficient times area of the cooled surface, W/K.
    pub ua_w_per_k: Option<f64>,
    /// Inert gas in the feed for the equilibrium conversion, mol per mol of reaction. Default 0.
    pub inert_gas_mol_per_mol_reaction: Option<f64>,
}

impl ProcessConditions {
    /// This case's values, with the batch's values where this case gives none.
    pub fn with_defaults(&self, batch: &ProcessConditions) -> ProcessConditions {
        fn pick<T: Clone>(own: &Option<T>, batch: &Option<T>) -> Option<T> {
            own.clone().or_else(|| batch.clone())
        }
        ProcessConditions {
            process_temperature_k: pick(&self.process_temperature_k, &batch.process_temperature_k),
            pressure_bar: pick(&self.pressure_bar, &batch.pressure_bar),
            scale: pick(&self.scale, &batch.scale),
            reaction_mass_kg: pick(&self.reaction_mass_kg, &batch.reaction_mass_kg),
            cp_kj_per_kg_k: pick(&self.cp_kj_per_kg_k, &batch.cp_kj_per_kg_k),
            operation: pick(&self.operation, &batch.operation),
            dosing_time_h: pick(&self.dosing_time_h, &batch.dosing_time_h),
            accumulation_fraction: pick(&self.accumulation_fraction, &batch.accumulation_fraction),
            mtt_k: pick(&self.mtt_k, &batch.mtt_k),
            // T_D24 and a DSC onset describe the same property: a case giving either one keeps
            // the batch's other one out, so a batch onset never overrides a case's T_D24.
            t_d24_k: if self.dsc_onset_k.is_some() {
                self.t_d24_k
            } else {
                pick(&self.t_d24_k, &batch.t_d24_k)
            },
            dsc_onset_k: if self.t_d24_k.is_some() {
                self.dsc_onset_k
            } else {
                pick(&self.dsc_onset_k, &batch.dsc_onset_k)
            },
            dsc_margin_k: pick(&self.dsc_margin_k, &batch.dsc_margin_k),
            coolant_temperature_k: pick(&self.coolant_temperature_k, &batch.coolant_temperature_k),
            ua_w_per_k: pick(&self.ua_w_per_k, &batch.ua_w_per_k),
            inert_gas_mol_per_mol_reaction: pick(&self.inert_gas_mol_per_mol_reaction, &batch.inert_gas_mol_per_mol_reaction),
        }
    }

    /// # Errors
    /// `ProcessError::Invalid` naming the first field that is not a finite number in its range.
    pub fn validate(&self) -> Result<(), ProcessError> {
        fn check(field: &'static str, v: Option<f64>, ok: impl Fn(f64) -> bool, expected: &'static str) -> Result<(), ProcessError> {
            match v {
                Some(x) if !(x.is_finite() && ok(x)) => Err(ProcessError::Invalid { field, value: x, expected }),
                _ => Ok(()),
            }
        }
        let positive = |x: f64| x > 0.0;
        let non_negative = |x: f64| x >= 0.0;
        let in_grid = |x: f64| (GRID_RANGE_K.0..=GRID_RANGE_K.1).contains(&x);
        check("process_temperature_k", self.process_temperature_k, in_grid, "10 to 20000 K")?;
        check("pressure_bar", self.pressure_bar, positive, "a positive pressure")?;
        match &self.scale {
            Some(Scale::MolOfReaction(n)) => check("scale_mol", Some(*n), positive, "positive")?,
            Some(Scale::KgOfProduct { kg, .. }) => check("scale_kg", Some(*kg), positive, "positive")?,
            None => {}
        }
        check("reaction_mass_kg", self.reaction_mass_kg, positive, "positive")?;
        check("cp_kj_per_kg_k", self.cp_kj_per_kg_k, positive, "positive")?;
        check("dosing_time_h", self.dosing_time_h, positive, "positive")?;
        let fraction = |x: f64| (0.0..=1.0).contains(&x);
        check("accumulation_fraction", self.accumulation_fraction, fraction, "0 to 1")?;
        check("mtt_k", self.mtt_k, positive, "a positive temperature")?;
        check("t_d24_k", self.t_d24_k, positive, "a positive temperature")?;
        check("dsc_onset_k", self.dsc_onset_k, positive, "a positive temperature")?;
        check("dsc_margin_k", self.dsc_margin_k, non_negative, "0 K or more")?;
        check("coolant_temperature_k", self.coolant_temperature_k, positive, "positive")?;
        check("ua_w_per_k", self.ua_w_per_k, non_negative, "0 W/K or more")?;
        check(
            "inert_gas_mol_per_mol_reaction",
            self.inert_gas_mol_per_mol_reaction,
            non_negative,
            "0 or more",
        )?;
        if let (Some(onset), Some(margin)) = (self.dsc_onset_k, self.dsc_margin_k) {
            if onset - margin <= 0.0 {
                return Err(ProcessError::Invalid {
                    field: "dsc_margin_k",
                    value: margin,
                    expected: "less than the DSC onset",
                });
            }
        }
        Ok(())
    }
}

/// Why the process view of one case could not be computed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ProcessError {
    #[error("{field} = {value}: expected {expected}")]
    Invalid {
        field: &'static str,
        value: f64,
        expected: &'static str,
    },
    /// A result that is not a finite number: inputs (scale, mass, c_p, U·A) beyond any plant's.
    #[error("{quantity} came out {value}: the process inputs (scale, reaction mass, c_p, U·A) lie outside any physical range")]
    NonFinite { quantity: &'static str, value: f64 },
    #[error("scale product {species} is not a product of {equation} (products: {})", products.join(", "))]
    UnknownProduct {
        species: String,
        equation: String,
        products: Vec<String>,
    },
}

/// A result that needs inputs or conditions a case may not have.
#[derive(Clone, Debug, PartialEq)]
pub enum Assessment<T> {
    Assessed(T),
    /// Why not, and the input fields whose absence is the reason (empty when it is not about inputs).
    NotAssessed {
        reason: String,
        missing: Vec<&'static str>,
    },
}

impl<T> Assessment<T> {
    pub fn value(&self) -> Option<&T> {
        match self {
            Assessment::Assessed(v) => Some(v),
            Assessment::NotAssessed { .. } => None,
        }
    }

    fn missing(missing: Vec<&'static str>) -> Assessment<T> {
        Assessment::NotAssessed {
            reason: format!("not assessed: no {}", missing.join(", ")),
            missing,
        }
    }

    fn not_applicable(reason: impl Into<String>) -> Assessment<T> {
        Assessment::NotAssessed {
            reason: reason.into(),
            missing: Vec::new(),
        }
    }
}

/// The conditions actually used, after the batch's values and the engine's defaults.
#[derive(Clone, Debug, PartialEq)]
pub struct EffectiveConditions {
    pub process_temperature_k: f64,
    pub pressure_bar: f64,
    pub scale: Scale,
    /// Moles of reaction per batch.
    pub reaction_mol: f64,
    pub reaction_mass_kg: f64,
    pub cp_kj_per_kg_k: f64,
    pub operation: Operation,
    /// X_acc used for MTSR (1 for batch).
    pub accumulation_fraction: f64,
    pub dosing_time_h: Option<f64>,
    pub mtt_k: Option<f64>,
    pub t_d24_k: Option<f64>,
    /// How T_D24 was obtained: "given" or "DSC onset 480 K − 100 K margin".
    pub t_d24_basis: Option<String>,
    pub coolant_temperature_k: Option<f64>,
    pub ua_w_per_k: Option<f64>,
    pub inert_gas_mol_per_mol_reaction: f64,
}

/// How K moves with temperature (van 't Hoff: d ln K/dT = ΔrH°/(RT²)).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum KTrend {
    /// Exothermic (ΔrH° < 0).
    FallsWithTemperature,
    /// Endothermic (ΔrH° > 0).
    RisesWithTemperature,
    /// ΔrH° = 0.
    Independent,
}

impl KTrend {
    pub fn from_delta_h(delta_h_kj_per_mol: f64) -> KTrend {
        if delta_h_kj_per_mol < 0.0 {
            KTrend::FallsWithTemperature
        } else if delta_h_kj_per_mol > 0.0 {
            KTrend::RisesWithTemperature
        } else {
            KTrend::Independent
        }
    }

    pub fn describe(self) -> &'static str {
        match self {
            KTrend::FallsWithTemperature => "K falls with T (exothermic)",
            KTrend::RisesWithTemperature => "K rises with T (endothermic)",
            KTrend::Independent => "K independent of T (ΔrH° = 0)",
        }
    }
}

/// The equilibrium extent from a stoichiometric feed.
#[derive(Clone, Debug, PartialEq)]
pub struct EquilibriumConversion {
    /// ξ, mol per mol of reaction fed (the feed is |ν_i| mol of each reactant, so ξmax = 1).
    pub extent: f64,
    pub extent_max: f64,
    /// ξ/ξmax, the conversion of every reactant (they are fed in stoichiometric ratio, so each is
    /// limiting).
    pub conversion: f64,
    /// The reactants (labels as resolved), all limiting together.
    pub limiting_reactants: Vec<String>,
    /// Mole fractions of the gas phase at equilibrium, (label, x), with the inert as `inert`.
    pub gas_mole_fractions: Vec<(String, f64)>,
    /// How the answer was reached when it is a bound rather than a root (e.g. "no gas products:
    /// the reaction does not proceed").
    pub note: Option<String>,
}

/// Equilibrium at the process temperature.
#[derive(Clone, Debug, PartialEq)]
pub struct Equilibrium {
    pub temperature_k: f64,
    pub pressure_bar: f64,
    /// ΔrH°, ΔrS°, ΔrG°, log10 K at the process temperature, species evaluated directly there.
    pub point: ThermoPoint,
    /// K itself; may be 0 or infinite where log10 K is beyond the f64 range.
    pub k: f64,
    pub k_trend: KTrend,
    /// From [`Screened::delta_g_zero_k`].
    pub delta_g_zero_k: Option<f64>,
    pub conversion: Assessment<EquilibriumConversion>,
}

/// Heat released at process conditions (positive = exothermic).
#[derive(Clone, Debug, PartialEq)]
pub struct HeatBudget {
    /// ΔrH at the process temperature, kJ per mol of reaction.
    pub delta_h_kj_per_mol: f64,
    /// Q = −ΔrH(T_process), kJ per mol of reaction.
    pub heat_kj_per_mol: f64,
    /// Q per kg of reaction mass, kJ/kg.
    pub heat_kj_per_kg: f64,
    pub heat_kj_per_batch: f64,
    /// ΔT_ad = Q_batch/(m·c_p), K (negative for an endothermic reaction).
    pub adiabatic_rise_k: f64,
    /// MTSR = T_process + X_acc·max(ΔT_ad, 0), K.
    pub mtsr_k: f64,
    /// Root-sum-square uncertainty of ΔrH°(298.15 K) from the species, where known, kJ/mol.
    pub delta_h_uncertainty_kj_per_mol: Option<f64>,
    /// False when a species is outside its data's valid range at the process temperature, or is
    /// not the stable phase there at 1 bar.
    pub in_valid_range: bool,
}

/// The criticality result with the temperatures it compared.
#[derive(Clone, Debug, PartialEq)]
pub struct Criticality {
    pub class: CriticalityClass,
    pub mtsr_k: f64,
    pub mtt_k: f64,
    pub t_d24_k: f64,
}

/// Gas evolved (negative = consumed).
#[derive(Clone, Debug, PartialEq)]
pub struct GasEvolution {
    /// Δn(gas): Σν over gas-phase species, mol per mol of reaction.
    pub delta_n_gas_per_mol: f64,
    pub gas_mol_per_batch: f64,
    /// At 0 °C and 1 atm (ideal gas, CODATA molar volume 22.41396954 L/mol).
    pub gas_m3_at_stp: f64,
    /// At the process temperature and pressure (ideal gas).
    pub gas_m3_at_process: f64,
}

/// Heat-release rate over the dosing time against the cooling capacity.
#[derive(Clone, Debug, PartialEq)]
pub struct CoolingCheck {
    /// Q_batch / dosing time, kW (mean rate; the peak is higher).
    pub heat_release_kw: f64,
    /// U·A·(T_process − T_coolant), kW.
    pub cooling_capacity_kw: f64,
    /// Cooling capacity minus heat release, kW (negative: the cooling cannot keep up).
    pub margin_kw: f64,
    /// Heat release / cooling capacity; `None` when the capacity is zero or negative.
    pub release_to_capacity: Option<f64>,
}

/// The process view of one case.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseProcess {
    pub conditions: EffectiveConditions,
    /// Each default the engine used, with why it is a default ("cp_kj_per_kg_k = 1.8 (...)").
    pub assumed: Vec<String>,
    pub equilibrium: Equilibrium,
    pub heat: HeatBudget,
    pub severity: Severity,
    pub criticality: Assessment<Criticality>,
    pub gas: GasEvolution,
    pub cooling: Assessment<CoolingCheck>,
    /// Labels of species whose data were estimated (any [`Origin::Estimated`] in their data).
    pub estimated_species: Vec<String>,
    /// What a decomposition of the reaction mass after reaction could release, or why it cannot
    /// be said.
    pub decomposition: Result<MassDecomposition, MassDecompositionError>,
    /// Things to know about this result (out-of-range data, process above MTT, ...).
    pub notes: Vec<String>,
    /// [`CAUTION`], carried with every result.
    pub caution: &'static str,
}

/// True when any of this species' data came from an estimation method. The match has no
/// wildcard on purpose: a new `Origin` must decide here whether it counts as estimated.
fn is_estimated(origin: &[Origin]) -> bool {
    origin.iter().any(|o| match o {
        Origin::Tabulated { .. } => false,
        Origin::Supplied => false,
        Origin::Estimated { .. } => true,
    })
}

/// The process view of one screened reaction.
///
/// # Errors
/// `ProcessError` when a condition is out of range or the scale names a species that is not a
/// product of the reaction.
pub fn evaluate(screened: &Screened, conditions: &ProcessConditions) -> Result<CaseProcess, ProcessError> {
    conditions.validate()?;
    let mut assumed = Vec::new();
    let mut notes = Vec::new();

    let t = match conditions.process_temperature_k {
        Some(t) => t,
        None => {
            assumed.push(format!(
                "process_temperature_k = {DEFAULT_PROCESS_TEMPERATURE_K} (standard temperature; no process temperature given)"
            ));
            DEFAULT_PROCESS_TEMPERATURE_K
        }
    };
    let p = match conditions.pressure_bar {
        Some(p) => p,
        None => {
            assumed.push(format!("pressure_bar = {DEFAULT_PRESSURE_BAR} (atmospheric, common practice)"));
            DEFAULT_PRESSURE_BAR
        }
    };
    let scale = match &conditions.scale {
        Some(s) => s.clone(),
        None => {
            assumed.push(format!("scale = {DEFAULT_SCALE_MOL} mol of reaction (1 kmol, common practice)"));
            Scale::MolOfReaction(DEFAULT_SCALE_MOL)
        }
    };
    let reaction_mol = reaction_mol(screened, &scale)?;
    let reaction_mass_kg = match conditions.reaction_mass_kg {
        Some(m) => m,
        None => {
            let m = reactant_mass_kg_per_mol(screened) * reaction_mol;
            assumed.push(format!(
                "reaction_mass_kg = {} (mass of the reactants alone, no solvent: the largest ΔT_ad)",
                round_sig(m, 6)
            ));
            m
        }
    };
    let cp = match conditions.cp_kj_per_kg_k {
        Some(c) => c,
        None => {
            assumed.push(format!(
                "cp_kj_per_kg_k = {DEFAULT_CP_KJ_PER_KG_K} (organic reaction mass, common practice)"
            ));
            DEFAULT_CP_KJ_PER_KG_K
        }
    };
    let operation = match conditions.operation {
        Some(o) => o,
        None => {
            assumed.push("operation = batch (all reactants charged at once: X_acc = 1)".to_string());
            Operation::Batch
        }
    };
    let accumulation_fraction = match (operation, conditions.accumulation_fraction) {
        (Operation::Batch, Some(x)) if x < 1.0 => {
            notes.push(format!("accumulation_fraction = {x} ignored for a batch process (X_acc = 1)"));
            1.0
        }
        (Operation::Batch, _) => 1.0,
        (Operation::SemiBatch, Some(x)) => x,
        (Operation::SemiBatch, None) => {
            assumed.push("accumulation_fraction = 1 (no accumulation measured: worst case, all dosed material unreacted)".to_string());
            1.0
        }
    };
    let (t_d24_k, t_d24_basis) = match (conditions.t_d24_k, conditions.dsc_onset_k) {
        (Some(td), _) => (Some(td), Some("given".to_string())),
        (None, Some(onset)) => {
            let margin = match conditions.dsc_margin_k {
                Some(m) => m,
                None => {
                    assumed.push(format!(
                        "dsc_margin_k = {DEFAULT_DSC_MARGIN_K} (T_D24 = DSC onset − margin; common practice, no source)"
                    ));
                    DEFAULT_DSC_MARGIN_K
                }
            };
            (
                Some(onset - margin),
                Some(format!("DSC onset {onset} K − {margin} K margin (common practice, no source)")),
            )
        }
        (None, None) => (None, None),
    };
    let inert = conditions.inert_gas_mol_per_mol_reaction.unwrap_or(0.0);
    let effective = EffectiveConditions {
        process_temperature_k: t,
        pressure_bar: p,
        scale,
        reaction_mol,
        reaction_mass_kg,
        cp_kj_per_kg_k: cp,
        operation,
        accumulation_fraction,
        dosing_time_h: conditions.dosing_time_h,
        mtt_k: conditions.mtt_k,
        t_d24_k,
        t_d24_basis,
        coolant_temperature_k: conditions.coolant_temperature_k,
        ua_w_per_k: conditions.ua_w_per_k,
        inert_gas_mol_per_mol_reaction: inert,
    };

    let point = point_at(screened, t);
    if !point.in_valid_range {
        let states: Vec<(&str, crate::species::State)> = screened
            .species
            .iter()
            .map(|s| (s.species.resolved.label.as_str(), s.species.resolved.state(t, t.ln())))
            .collect();
        let outside: Vec<&str> = states.iter().filter(|s| !s.1.in_range).map(|s| s.0).collect();
        let unstable: Vec<&str> = states.iter().filter(|s| !s.1.stable).map(|s| s.0).collect();
        if !outside.is_empty() {
            notes.push(format!(
                "{t} K is outside the valid range of the data for {}: values there are extrapolated",
                outside.join(", ")
            ));
        }
        if !unstable.is_empty() {
            notes.push(format!(
                "at {t} K and 1 bar {} is not the stable phase (it boils or melts below {t} K): \
                 results use the phase as written",
                unstable.join(", ")
            ));
        }
    }
    let equilibrium = Equilibrium {
        temperature_k: t,
        pressure_bar: p,
        point,
        k: 10f64.powf(point.log10_k),
        k_trend: KTrend::from_delta_h(point.delta_h_kj_per_mol),
        delta_g_zero_k: screened.delta_g_zero_k,
        conversion: equilibrium_conversion(screened, t, p, inert),
    };

    let heat = heat_budget(&point, &effective, screened.delta_h_uncertainty_kj_per_mol);
    if heat.adiabatic_rise_k < 0.0 {
        notes.push("endothermic at the process temperature: no adiabatic rise, MTSR = process temperature".to_string());
    }
    let severity = severity_from_adiabatic_rise(heat.adiabatic_rise_k);
    let criticality = criticality(&effective, heat.mtsr_k, &mut notes);
    let gas = gas_evolution(screened, &effective);
    if severity == Severity::Low && gas.delta_n_gas_per_mol > 0.0 {
        notes.push(
            "severity is rated from ΔT_ad alone; the reaction evolves gas, so pressure build-up needs its own assessment".to_string(),
        );
    }
    let cooling = cooling_check(&effective, heat.heat_kj_per_batch);
    let estimated_species = screened
        .species
        .iter()
        .filter(|s| is_estimated(&s.species.resolved.origin))
        .map(|s| s.species.resolved.label.clone())
        .collect();
    let decomposition = mass_decomposition(screened, &effective);
    let decomposition_figures = decomposition.as_ref().map_or([0.0; 2], |d| [d.heat_kj_per_kg, d.adiabatic_rise_k]);
    for (quantity, value) in [
        ("reaction_mol", effective.reaction_mol),
        ("reaction_mass_kg", effective.reaction_mass_kg),
        ("heat_kj_per_kg", heat.heat_kj_per_kg),
        ("heat_kj_per_batch", heat.heat_kj_per_batch),
        ("adiabatic_rise_k", heat.adiabatic_rise_k),
        ("mtsr_k", heat.mtsr_k),
        ("gas_mol_per_batch", gas.gas_mol_per_batch),
        ("gas_m3_at_0c_1atm", gas.gas_m3_at_stp),
        ("cooling_margin_kw", cooling.value().map_or(0.0, |c| c.margin_kw)),
        ("decomposition_heat_kj_per_kg", decomposition_figures[0]),
        ("decomposition_adiabatic_rise_k", decomposition_figures[1]),
    ] {
        if !value.is_finite() {
            return Err(ProcessError::NonFinite { quantity, value });
        }
    }
    Ok(CaseProcess {
        decomposition,
        conditions: effective,
        assumed,
        equilibrium,
        heat,
        severity,
        criticality,
        gas,
        cooling,
        estimated_species,
        notes,
        caution: CAUTION,
    })
}

fn round_sig(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let scale = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * scale).round() / scale
}
