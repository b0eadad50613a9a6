//! `thermosieve eval`: one reaction for a human, balanced, with its thermodynamics over
//! temperature and the data behind every species.

use std::fmt::Write as _;
use std::process::ExitCode;
use thermosieve_engine::balance::Outcome;
use thermosieve_engine::{species, Screened, Screener, TemperatureGrid, CAUTION};

#[derive(clap::Args, Debug)]
pub struct EvalArgs {
    /// The reaction, e.g. "Al(cr) + Fe2O3(s) -> Al2O3(s) + Fe(cr)". Coefficients are optional;
    /// arrows ->, =>, = and <=> are accepted; phase tags (g) (l) (s) (cr) (aq) (gr).
    pub reaction: String,

    /// Temperatures to evaluate, in K, comma-separated (default: 273.15 to 623.15 K in 25 K steps).
    #[arg(long, value_delimiter = ',', env = "THERMOSIEVE_TEMPERATURES_K")]
    pub temperatures_k: Option<Vec<f64>>,
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
    match screener.screen(&args.reaction) {
        Ok(s) => {
            print!("{}", render(&s, screener.table()));
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
        ScreenError::Balance(_) => None,
    }
}

fn fmt_opt(v: Option<f64>, digits: usize) -> String {
    v.map_or("—".to_string(), |x| format!("{x:.digits$}"))
}

/// The human report: equation, a table over temperature, species sources, notes and cautions.
pub fn render(s: &Screened, table: &species::Table) -> String {
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
            r.source_line(table)
        );
    }
    if !s.notes.is_empty() {
        let _ = writeln!(o);
        for n in &s.notes {
            let _ = writeln!(o, "note: {n}");
        }
    }
    let _ = writeln!(o);
    let _ = writeln!(o, "caution: {CAUTION}");
    o
}
