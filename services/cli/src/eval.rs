//! `thermosieve eval`: one reaction for a human, balanced, with its thermodynamics over
//! temperature and the data behind every species.

use std::fmt::Write as _;
use std::process::ExitCode;
use thermosieve_engine::balance::Outcome;
use thermosieve_engine::process::{self, celsius_to_kelvin, Assessment, CaseProcess, Operation, ProcessConditions, Scale};
use thermosieve_engine::structures::DefaultPhase;
use thermosieve_engine::{species, Screened, Screener, TemperatureGrid, CAUTION};

#[derive(clap::Args, Debug)]
pub struct EvalArgs {
    /// The reaction, e.g. "Al(cr) + Fe2O3(s) -> Al2O3(s) + Fe(cr)". Coefficients are optional;
    /// arrows ->, =>, = and <=> are accepted; phase tags (g) (l) (s) (cr) (aq), forms such as (cr,alpha) and (cr,graphite);
    /// species by formula, name ("acetic anhydride(l)"), CAS number, or a reaction SMILES ("CCO{l}.O=O>>...").
    pub reaction: String,

    /// State of species written as SMILES or names without their own state: gas, liquid, solid
    /// or standard (the stable state at 298.15 K and 1 bar).
    #[arg(long, default_value = "standard", value_parser = parse_phase)]
    pub phase: DefaultPhase,

    /// Temperatures to evaluate, in K, comma-separated (default: 273.15 to 623.15 K in 25 K steps).
    #[arg(long, value_delimiter = ',', env = "THERMOSIEVE_TEMPERATURES_K")]
    pub temperatures_k: Option<Vec<f64>>,

    /// Process temperature in °C; giving any process option prints the heat budget.
    #[arg(long, help_heading = "Process conditions")]
    pub process_temperature_c: Option<f64>,
    /// Absolute pressure, bar (default 1.01325).
    #[arg(long, help_heading = "Process conditions")]
    pub pressure_bar: Option<f64>,
    /// Scale: mol of reaction as balanced (default 1000).
    #[arg(long, help_heading = "Process conditions")]
    pub scale_mol: Option<f64>,
    /// Reaction mass, kg (default: the reactants' own mass, no solvent).
    #[arg(long, help_heading = "Process conditions")]
    pub reaction_mass_kg: Option<f64>,
    /// Specific heat capacity of the reaction mass, kJ/(kg·K) (default 1.8, common practice).
    #[arg(long, help_heading = "Process conditions")]
    pub cp_kj_per_kg_k: Option<f64>,
    /// Semi-batch: dosing time, h.
    #[arg(long, help_heading = "Process conditions")]
    pub dosing_time_h: Option<f64>,
    /// Semi-batch: accumulated fraction of unreacted dosed material, 0..1.
    #[arg(long, help_heading = "Process conditions")]
    pub accumulation_fraction: Option<f64>,
    /// Maximum technical temperature (boiling point of the mass or a set limit), °C.
    #[arg(long, help_heading = "Process conditions")]
    pub mtt_c: Option<f64>,
    /// T_D24 of the reaction mass, °C.
    #[arg(long, help_heading = "Process conditions")]
    pub t_d24_c: Option<f64>,
    /// DSC onset of decomposition, °C (T_D24 = onset − margin when T_D24 is not given).
    #[arg(long, help_heading = "Process conditions")]
    pub dsc_onset_c: Option<f64>,
    /// Coolant temperature, °C.
    #[arg(long, help_heading = "Process conditions")]
    pub coolant_temperature_c: Option<f64>,
    /// U·A of the cooled surface, W/K.
    #[arg(long, help_heading = "Process conditions")]
    pub ua_w_per_k: Option<f64>,
}

impl EvalArgs {
    /// The process conditions given, if any.
    fn conditions(&self) -> Option<ProcessConditions> {
        let k = |c: Option<f64>| c.map(celsius_to_kelvin);
        let pc = ProcessConditions {
            process_temperature_k: k(self.process_temperature_c),
            pressure_bar: self.pressure_bar,
            scale: self.scale_mol.map(Scale::MolOfReaction),
            reaction_mass_kg: self.reaction_mass_kg,
            cp_kj_per_kg_k: self.cp_kj_per_kg_k,
            // Only a positive dosing time makes the step semi-batch; an accumulation on a batch
            // step is ignored (X_acc = 1) with a note.
            operation: self
                .dosing_time_h
                .map(|h| if h == 0.0 { Operation::Batch } else { Operation::SemiBatch }),
            dosing_time_h: self.dosing_time_h.filter(|&h| h != 0.0),
            accumulation_fraction: self.accumulation_fraction,
            mtt_k: k(self.mtt_c),
            t_d24_k: k(self.t_d24_c),
            dsc_onset_k: k(self.dsc_onset_c),
            coolant_temperature_k: k(self.coolant_temperature_c),
            ua_w_per_k: self.ua_w_per_k,
            ..ProcessConditions::default()
        };
        (pc != ProcessConditions::default()).then_some(pc)
    }
}

fn parse_phase(s: &str) -> Result<DefaultPhase, String> {
    DefaultPhase::parse(s).ok_or_else(|| format!("expected one of gas, liquid, solid, standard, got {s:?}"))
}

/// Exit code for a reaction the engine rejects (parse, species or balance error).
pub const EXIT_REJECTED: u8 = 3;

pub fn run(args: &EvalArgs) -> ExitCode {
    let grid = match args
        .temperatures_k
        .clone()
        .map_or(Ok(TemperatureGrid::default_process()), TemperatureGrid::new)
    {
        Ok(g) => g,
        Err(e) => {
            eprintln!("error: --temperatures-k: {e}");
            return ExitCode::from(2);
        }
    };
    let mut screener = Screener::new(species::bundled(), grid);
    match screener.screen_with(&args.reaction, args.phase) {
        Ok(s) => {
            let mut out = render(&s);
            if let Some(pc) = args.conditions() {
                match process::evaluate(&s, &pc) {
                    Ok(p) => out.push_str(&render_process(&p)),
                    Err(e) => {
                        eprintln!("error: process conditions: {e}");
                        return ExitCode::from(2);
                    }
                }
            }
            let _ = writeln!(out, "\ncaution: {CAUTION}");
            print!("{out}");
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("error: {e}");
            eprintln!("  {}", args.reaction);
            if let Some(pos) = error_position(&e) {
                let col = args.reaction.get(..pos).map_or(pos, |p| p.chars().count());
                eprintln!("  {}^", " ".repeat(col));
            }
            ExitCode::from(EXIT_REJECTED)
        }
    }
}

fn error_position(e: &thermosieve_engine::ScreenError) -> Option<usize> {
    use thermosieve_engine::formula::SyntaxError;
    use thermosieve_engine::ScreenError;
    match e {
        ScreenError::Syntax(SyntaxError::Unexpected { position, .. })
        | ScreenError::Syntax(SyntaxError::UnknownElement { position, .. })
        | ScreenError::Syntax(SyntaxError::Limit { position, .. })
        | ScreenError::Species { position, .. } => Some(*position),
        ScreenError::Smiles(e) => Some(e.position),
        ScreenError::Balance(_) => None,
    }
}

fn fmt_opt(v: Option<f64>, digits: usize) -> String {
    v.map_or("—".to_string(), |x| format!("{x:.digits$}"))
}

/// The human report: equation, a table over temperature, species sources and notes (the caller
/// appends the caution last).
pub fn render(s: &Screened) -> String {
    let mut o = String::new();
    let how = match s.outcome {
        Outcome::AlreadyBalanced => "balanced as written",
        Outcome::Balanced => "balanced by thermosieve",
    };
    let _ = writeln!(o, "{}    ({how})", s.balanced_equation);
    let _ = writeln!(o);
    let st = &s.standard;
    let _ = writeln!(
        o,
        "at 298.15 K, 1 bar:  ΔrH° = {:.2} kJ/mol (± {})   ΔrS° = {:.2} J/(mol·K)   ΔrG° = {:.2} kJ/mol   log10 K = {:.3}",
        st.delta_h_kj_per_mol,
        fmt_opt(s.delta_h_uncertainty_kj_per_mol, 2),
        st.delta_s_j_per_mol_k,
        st.delta_g_kj_per_mol,
        st.log10_k
    );
    match s.delta_g_zero_k {
        Some(t) => {
            let _ = writeln!(o, "ΔrG° = 0 at {t:.1} K ({:.1} °C)", t - 273.15);
        }
        None => {
            let _ = writeln!(
                o,
                "ΔrG° keeps one sign from {:.0} to {:.0} K (the span every species' data covers)",
                s.valid_range_k.0, s.valid_range_k.1
            );
        }
    }
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "{:>10} {:>9} {:>12} {:>14} {:>12} {:>10}  data",
        "T / K", "T / °C", "ΔrH° kJ/mol", "ΔrS° J/(mol·K)", "ΔrG° kJ/mol", "log10 K"
    );
    for p in &s.points {
        let _ = writeln!(
            o,
            "{:>10.2} {:>9.2} {:>12.2} {:>14.2} {:>12.2} {:>10.3}  {}",
            p.temperature_k,
            p.temperature_k - 273.15,
            p.delta_h_kj_per_mol,
            p.delta_s_j_per_mol_k,
            p.delta_g_kj_per_mol,
            p.log10_k,
            if p.in_valid_range {
                "in range"
            } else {
                "FLAGGED: a species is outside its data range or past a phase change"
            }
        );
    }
    let _ = writeln!(o);
    let _ = writeln!(o, "species data:");
    for t in &s.species {
        let r = &t.species.resolved;
        let (lo, hi) = r.range_k();
        let _ = writeln!(
            o,
            "  {:<16} ν = {:>6}  valid {lo:.2}–{hi:.0} K  {}",
            r.label,
            t.nu.to_string(),
            r.source_line()
        );
        let decomposition = match &t.species.decomposition {
            Ok(d) => format!("{:.1} kJ/mol, {:.0} kJ/kg (to {})", d.heat_kj_per_mol, d.heat_kj_per_kg, d.products),
            Err(e) => format!("not computed: {e}"),
        };
        let groups = match &t.species.energetic_groups {
            Some(g) if g.is_empty() => "none".to_string(),
            Some(g) => g.iter().map(|g| g.name()).collect::<Vec<_>>().join("; "),
            None => "unknown (no structure)".to_string(),
        };
        let _ = writeln!(
            o,
            "  {:<16} maximum decomposition heat {decomposition}; energetic groups: {groups}",
            ""
        );
    }
    if !s.notes.is_empty() {
        let _ = writeln!(o);
        for n in &s.notes {
            let _ = writeln!(o, "note: {n}");
        }
    }
    o
}

fn c_and_k(t_k: f64) -> String {
    format!("{:.1} °C ({t_k:.2} K)", t_k - 273.15)
}

/// The heat budget, equilibrium and criticality under the given process conditions.
pub fn render_process(p: &CaseProcess) -> String {
    let mut o = String::new();
    let c = &p.conditions;
    let h = &p.heat;
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "process view at {}, {:.3} bar, {:.1} mol of reaction, {:.1} kg of mass, cp {:.2} kJ/(kg·K):",
        c_and_k(c.process_temperature_k),
        c.pressure_bar,
        c.reaction_mol,
        c.reaction_mass_kg,
        c.cp_kj_per_kg_k
    );
    let e = &p.equilibrium;
    let _ = writeln!(o, "  log10 K = {:.3}  ({})", e.point.log10_k, e.k_trend.describe());
    match &e.conversion {
        Assessment::Assessed(x) => {
            let _ = writeln!(o, "  equilibrium conversion from a stoichiometric feed: {:.4}", x.conversion);
        }
        Assessment::NotAssessed { reason, .. } => {
            let _ = writeln!(o, "  equilibrium conversion: {reason}");
        }
    }
    let _ = writeln!(
        o,
        "  heat released: {:.2} kJ/mol, {:.1} kJ/kg, {:.0} kJ per batch",
        h.heat_kj_per_mol, h.heat_kj_per_kg, h.heat_kj_per_batch
    );
    let _ = writeln!(
        o,
        "  adiabatic rise {:.1} K (severity {}), MTSR {}",
        h.adiabatic_rise_k,
        p.severity.as_str(),
        c_and_k(h.mtsr_k)
    );
    match &p.decomposition {
        Ok(d) => {
            let _ = writeln!(
                o,
                "  decomposition of the mass after reaction (maximum): {:.0} kJ/kg{}, adiabatic rise {:.0} K",
                d.heat_kj_per_kg,
                d.sigma_kj_per_kg.map_or(String::new(), |s| format!(" (σ {s:.0})")),
                d.adiabatic_rise_k
            );
            for f in d.flags.iter().map(String::as_str).chain(d.energetic_groups.iter().copied()) {
                let _ = writeln!(o, "    {f}");
            }
        }
        Err(e) => {
            let _ = writeln!(o, "  decomposition of the mass after reaction: {e}");
        }
    }
    match &p.criticality {
        Assessment::Assessed(k) => {
            let _ = writeln!(o, "  criticality {}", k.class.describe());
        }
        Assessment::NotAssessed { reason, .. } => {
            let _ = writeln!(o, "  criticality: {reason}");
        }
    }
    let g = &p.gas;
    let _ = writeln!(
        o,
        "  gas: Δn = {:+.3} mol per mol of reaction, {:.1} mol per batch ({:.3} m³ at 0 °C and 1 atm)",
        g.delta_n_gas_per_mol, g.gas_mol_per_batch, g.gas_m3_at_stp
    );
    match &p.cooling {
        Assessment::Assessed(k) => {
            let _ = writeln!(
                o,
                "  cooling: release {:.2} kW vs capacity {:.2} kW (margin {:.2} kW)",
                k.heat_release_kw, k.cooling_capacity_kw, k.margin_kw
            );
        }
        Assessment::NotAssessed { reason, .. } => {
            let _ = writeln!(o, "  cooling: {reason}");
        }
    }
    for a in &p.assumed {
        let _ = writeln!(o, "  assumed: {a}");
    }
    for n in &p.notes {
        let _ = writeln!(o, "  note: {n}");
    }
    o
}
