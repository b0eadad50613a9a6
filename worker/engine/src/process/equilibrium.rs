//! Equilibrium conversion at process conditions: the extent of reaction that solves
//! Σν ln a = ln K for a stoichiometric feed, ideal gases and pure condensed phases.

use super::*;

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
pub(super) fn logistic(u: f64) -> (f64, f64) {
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
