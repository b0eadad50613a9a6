//! Reaction thermodynamics from species states: Hess's law at each temperature (ΔrX = Σ ν X,
//! with ν negative for reactants), ΔrG° = ΔrH° − TΔrS°, K = exp(−ΔrG°/RT), and the temperature
//! where ΔrG° = 0.

use crate::species::{Resolved, State, R};

/// Most temperatures in one grid.
pub const MAX_GRID_POINTS: usize = 200;
/// Temperatures accepted in a grid, K.
pub const GRID_RANGE_K: (f64, f64) = (10.0, 20_000.0);

/// Temperatures at which every reaction is evaluated, K, in the order given.
#[derive(Clone, Debug, PartialEq)]
pub struct TemperatureGrid(Vec<f64>);

/// A grid that cannot be used.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum GridError {
    #[error("temperature grid is empty")]
    Empty,
    #[error("temperature grid has {0} points; the limit is {MAX_GRID_POINTS}")]
    TooMany(usize),
    #[error("temperature {value} K at position {index} is outside {} to {} K", GRID_RANGE_K.0, GRID_RANGE_K.1)]
    OutOfRange { index: usize, value: f64 },
}

impl TemperatureGrid {
    /// # Errors
    /// `GridError` when the grid is empty, too long, or holds a temperature outside
    /// [`GRID_RANGE_K`] (or not a finite number).
    pub fn new(temperatures_k: Vec<f64>) -> Result<TemperatureGrid, GridError> {
        if temperatures_k.is_empty() {
            return Err(GridError::Empty);
        }
        if temperatures_k.len() > MAX_GRID_POINTS {
            return Err(GridError::TooMany(temperatures_k.len()));
        }
        for (index, &value) in temperatures_k.iter().enumerate() {
            if !(value.is_finite() && value >= GRID_RANGE_K.0 && value <= GRID_RANGE_K.1) {
                return Err(GridError::OutOfRange { index, value });
            }
        }
        Ok(TemperatureGrid(temperatures_k))
    }

    /// 0 °C to 350 °C in 25 K steps (273.15 K to 623.15 K, 15 points): the span of liquid-phase
    /// process chemistry. Reactions at 298.15 K are always reported besides the grid.
    pub fn default_process() -> TemperatureGrid {
        TemperatureGrid((0..15).map(|k| 273.15 + 25.0 * k as f64).collect())
    }

    pub fn temperatures_k(&self) -> &[f64] {
        &self.0
    }
}

/// Fixed temperatures at which each species is tabulated once, to look for ΔrG° = 0 without
/// evaluating polynomials per reaction.
pub struct Ladder {
    pub start_k: f64,
    pub step_k: f64,
    pub count: usize,
}

/// 200 K to 6000 K in 50 K steps.
pub const LADDER: Ladder = Ladder {
    start_k: 200.0,
    step_k: 50.0,
    count: 117,
};

impl Ladder {
    pub fn t(&self, i: usize) -> f64 {
        self.start_k + self.step_k * i as f64
    }

    /// First and last index with temperatures inside `[lo, hi]`, if any.
    pub fn indices_within(&self, lo: f64, hi: f64) -> Option<(usize, usize)> {
        let first = ((lo - self.start_k) / self.step_k).ceil().max(0.0) as usize;
        let last = (((hi - self.start_k) / self.step_k).floor() as isize).min(self.count as isize - 1);
        (last >= first as isize).then_some((first, last as usize))
    }
}

/// Reaction properties at one temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ThermoPoint {
    pub temperature_k: f64,
    pub delta_h_kj_per_mol: f64,
    pub delta_s_j_per_mol_k: f64,
    pub delta_g_kj_per_mol: f64,
    pub log10_k: f64,
    /// False when any species is outside the range its data is valid for (values extrapolated),
    /// or is past a phase change (a liquid above its boiling point at 1 bar).
    pub in_valid_range: bool,
}

/// Combine species states with stoichiometric numbers ν (negative for reactants).
pub fn point<'a>(t: f64, terms: impl Iterator<Item = (f64, &'a State)>) -> ThermoPoint {
    let (mut dh, mut ds, mut ok) = (0.0, 0.0, true);
    for (nu, s) in terms {
        dh += nu * s.h_j_per_mol;
        ds += nu * s.s_j_per_mol_k;
        ok &= s.in_range && s.stable;
    }
    let dg = dh - t * ds;
    ThermoPoint {
        temperature_k: t,
        delta_h_kj_per_mol: dh / 1000.0,
        delta_s_j_per_mol_k: ds,
        delta_g_kj_per_mol: dg / 1000.0,
        log10_k: -dg / (R * t * std::f64::consts::LN_10),
        in_valid_range: ok,
    }
}

/// ΔrG (J/mol) and ΔrS (J/mol/K) at `t` by direct evaluation.
fn delta_g_and_s(t: f64, species: &[(f64, &Resolved)]) -> (f64, f64) {
    let ln_t = t.ln();
    let (mut dh, mut ds) = (0.0, 0.0);
    for &(nu, r) in species {
        let s = r.state(t, ln_t);
        dh += nu * s.h_j_per_mol;
        ds += nu * s.s_j_per_mol_k;
    }
    (dh - t * ds, ds)
}

/// The lowest temperature inside `[lo, hi]` where ΔrG° changes sign, given ΔrG° (J/mol) at
/// ascending sample temperatures inside that span. Refined by Newton steps on dΔG/dT = −ΔS, kept
/// inside the bracket by bisection, to 1 mK.
pub fn delta_g_zero_k(species: &[(f64, &Resolved)], samples: &[(f64, f64)]) -> Option<f64> {
    let pair = samples.windows(2).find(|w| w[0].1 == 0.0 || w[0].1.signum() != w[1].1.signum())?;
    let ((mut a, fa), (mut b, _)) = (pair[0], pair[1]);
    if fa == 0.0 {
        return Some(a);
    }
    let mut t = 0.5 * (a + b);
    for _ in 0..60 {
        let (g, s) = delta_g_and_s(t, species);
        if g == 0.0 {
            return Some(t);
        }
        if g.signum() == fa.signum() {
            a = t;
        } else {
            b = t;
        }
        let newton = if s != 0.0 { t + g / s } else { f64::NAN };
        let next = if newton > a && newton < b { newton } else { 0.5 * (a + b) };
        if (next - t).abs() < 1e-3 || (b - a) < 1e-3 {
            return Some(next);
        }
        t = next;
    }
    Some(t)
}
