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

use crate::formula::Phase;
use crate::screen::Screened;
use crate::species::{Origin, R};
use crate::thermo::{self, ThermoPoint, GRID_RANGE_K};
use crate::CAUTION;

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
    pub decomposition: Result<MassDecomposition, String>,
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

/// UN Recommendations on the Transport of Dangerous Goods, Manual of Tests and Criteria (Rev. 6,
/// 2015), Appendix 6 (screening procedures): a substance whose exothermic decomposition energy
/// is below 500 J/g (with an onset below 500 °C) need not be tested for explosive properties.
/// At or above it, the screening does not clear the mass.
pub const EXPLOSIVE_SCREENING_KJ_PER_KG: f64 = 500.0;
/// The same Appendix: below 300 J/g a substance is screened out as a self-reactive candidate.
pub const SELF_REACTIVE_SCREENING_KJ_PER_KG: f64 = 300.0;

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

fn mass_decomposition(screened: &Screened, c: &EffectiveConditions) -> Result<MassDecomposition, String> {
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
        let d = p
            .decomposition
            .as_ref()
            .map_err(|e| format!("{}: no decomposition heat ({e})", p.resolved.label))?;
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

fn heat_budget(point: &ThermoPoint, c: &EffectiveConditions, uncertainty: Option<f64>) -> HeatBudget {
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

fn criticality(c: &EffectiveConditions, mtsr: f64, notes: &mut Vec<String>) -> Assessment<Criticality> {
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

fn gas_evolution(screened: &Screened, c: &EffectiveConditions) -> GasEvolution {
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

fn cooling_check(c: &EffectiveConditions, heat_kj_per_batch: f64) -> Assessment<CoolingCheck> {
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

fn round_sig(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let scale = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * scale).round() / scale
}

// ---------------------------------------------------------------------------------------------
// Equilibrium conversion

/// One species of the equilibrium problem.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EquilibriumSpecies {
    /// Stoichiometric number (negative for reactants).
    pub nu: f64,
    /// Gas (ideal, activity x·P/P°) or a pure condensed phase (activity 1).
    pub gas: bool,
}

/// The solved extent.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Extent {
    /// ξ in [0, 1] (ξmax = 1 for a feed of |ν_i| mol of each reactant).
    pub extent: f64,
    /// 1 − ξ, computed without cancellation (meaningful when ξ is within 1e-16 of 1).
    pub remaining: f64,
    /// Which case gave the answer.
    pub kind: ExtentKind,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ExtentKind {
    /// A root of Σν ln a − ln K inside (0, 1).
    Root,
    /// No root above ξ = 1e-300: the quotient at ξ → 0 already exceeds K (no gas product, or
    /// K below about 1e-300).
    DoesNotProceed,
    /// No root below 1 − 1e-300: the quotient at ξ → 1 stays below K (no gas reactant, or K
    /// beyond about 1e300).
    Complete,
}

/// Solve K = Π a_i^ν_i for the extent ξ from a feed of |ν_i| mol of each reactant, no products
/// and `inert_mol` of inert gas, at `p_over_p0` = P/P°. Gas activities are x_i·P/P°; condensed
/// pure phases have activity 1 (and are assumed present).
///
/// f(ξ) = Σ_gas ν_i ln n_i − Δν_g ln n_T + Δν_g ln(P/P°) − ln K is non-decreasing in ξ
/// (df/dξ = Σ ν_i²/n_i − Δν_g²/n_T ≥ 0 by Cauchy–Schwarz), −∞ at ξ → 0 when a product is a gas
/// and +∞ at ξ → 1 when a reactant is a gas, so the root is unique. It is found in the log-odds
/// variable u = ln(ξ/(1 − ξ)), so extents within 1e-300 of either end keep full relative
/// precision, by Newton steps kept inside a shrinking bracket (bisection when a step leaves it).
pub fn solve_extent(species: &[EquilibriumSpecies], ln_k: f64, p_over_p0: f64, inert_mol: f64) -> Extent {
    let dnu: f64 = species.iter().filter(|s| s.gas).map(|s| s.nu).sum();
    let ln_p = p_over_p0.ln();
    // f and df/du at u, with ξ = 1/(1 + e^−u), 1 − ξ = 1/(1 + e^u).
    let eval = |u: f64| -> (f64, f64, f64, f64) {
        let (xi, rem) = logistic(u);
        let (mut sum_ln, mut sum_sq, mut n_t) = (0.0, 0.0, inert_mol);
        for s in species.iter().filter(|s| s.gas) {
            let n = if s.nu < 0.0 { -s.nu * rem } else { s.nu * xi };
            n_t += n;
            sum_ln += s.nu * n.ln();
            sum_sq += s.nu * s.nu / n;
        }
        // With Δν_g = 0 the total amount drops out (and may be 0 when no species is a gas).
        let f = if dnu == 0.0 {
            sum_ln - ln_k
        } else {
            sum_ln - dnu * n_t.ln() + dnu * ln_p - ln_k
        };
        let df_dxi = sum_sq - if n_t > 0.0 { dnu * dnu / n_t } else { 0.0 };
        (f, df_dxi * xi * rem, xi, rem)
    };
    // Beyond |u| = 700, e^u overflows; ξ there is within 1e-304 of its bound.
    const U_MAX: f64 = 700.0;
    let (mut lo, mut hi) = (-U_MAX, U_MAX);
    if eval(lo).0 >= 0.0 {
        return Extent {
            extent: 0.0,
            remaining: 1.0,
            kind: ExtentKind::DoesNotProceed,
        };
    }
    if eval(hi).0 <= 0.0 {
        return Extent {
            extent: 1.0,
            remaining: 0.0,
            kind: ExtentKind::Complete,
        };
    }
    let mut u = 0.0;
    for _ in 0..200 {
        let (f, df, _, _) = eval(u);
        if f == 0.0 {
            break;
        }
        if f < 0.0 {
            lo = u;
        } else {
            hi = u;
        }
        let newton = if df > 0.0 { u - f / df } else { f64::NAN };
        let next = if newton > lo && newton < hi { newton } else { 0.5 * (lo + hi) };
        if (next - u).abs() <= 1e-13 * (1.0 + u.abs()) || hi - lo <= 1e-13 * (1.0 + u.abs()) {
            u = next;
            break;
        }
        u = next;
    }
    let (xi, rem) = logistic(u);
    Extent {
        extent: xi,
        remaining: rem,
        kind: ExtentKind::Root,
    }
}

/// (ξ, 1 − ξ) for u = ln(ξ/(1 − ξ)), each without cancellation.
fn logistic(u: f64) -> (f64, f64) {
    (1.0 / (1.0 + (-u).exp()), 1.0 / (1.0 + u.exp()))
}

/// The equilibrium conversion of a screened reaction at `t` (K) and `p_bar`, from a stoichiometric
/// feed with `inert_mol` of inert gas per mole of reaction.
///
/// Not assessed for reactions with aqueous or charged species (non-ideal solutions, no activity
/// model here) or where the reaction has no reactants.
pub fn equilibrium_conversion(screened: &Screened, t: f64, p_bar: f64, inert_mol: f64) -> Assessment<EquilibriumConversion> {
    let mut eq_species = Vec::with_capacity(screened.species.len());
    for s in &screened.species {
        let r = &s.species.resolved;
        if r.phase == Phase::Aqueous {
            return Assessment::not_applicable(format!(
                "{} is aqueous: equilibrium conversion needs activity coefficients, which the engine does not model",
                r.label
            ));
        }
        if r.formula.charge != 0 {
            return Assessment::not_applicable(format!(
                "{} is charged: equilibrium conversion is computed for neutral ideal gases and pure condensed phases only",
                r.label
            ));
        }
        eq_species.push(EquilibriumSpecies {
            nu: s.nu.to_f64(),
            gas: r.phase == Phase::Gas,
        });
    }
    let reactants: Vec<String> = screened
        .species
        .iter()
        .filter(|s| s.nu.signum() < 0)
        .map(|s| s.species.resolved.label.clone())
        .collect();
    if reactants.is_empty() {
        return Assessment::not_applicable("the reaction has no reactants");
    }
    let point = point_at(screened, t);
    let ln_k = point.log10_k * std::f64::consts::LN_10;
    let ext = solve_extent(&eq_species, ln_k, p_bar / STANDARD_PRESSURE_BAR, inert_mol);
    let mut fractions = Vec::new();
    let mut n_t = inert_mol;
    for (s, e) in screened.species.iter().zip(&eq_species) {
        if e.gas {
            let n = if e.nu < 0.0 { -e.nu * ext.remaining } else { e.nu * ext.extent };
            n_t += n;
            fractions.push((s.species.resolved.label.clone(), n));
        }
    }
    if inert_mol > 0.0 {
        fractions.push(("inert".to_string(), inert_mol));
    }
    for f in &mut fractions {
        f.1 = if n_t > 0.0 { f.1 / n_t } else { 0.0 };
    }
    let note = match ext.kind {
        ExtentKind::Root => None,
        ExtentKind::DoesNotProceed => Some("the reaction quotient already exceeds K as ξ → 0: the reaction does not proceed".to_string()),
        ExtentKind::Complete => Some("the reaction quotient stays below K up to ξ = 1: the reaction goes to completion".to_string()),
    };
    let mut note = note;
    if !point.in_valid_range {
        let extra = "data extrapolated at this temperature";
        note = Some(match note {
            Some(n) => format!("{n}; {extra}"),
            None => extra.to_string(),
        });
    }
    Assessment::Assessed(EquilibriumConversion {
        extent: ext.extent,
        extent_max: 1.0,
        conversion: ext.extent,
        limiting_reactants: reactants,
        gas_mole_fractions: fractions,
        note,
    })
}
