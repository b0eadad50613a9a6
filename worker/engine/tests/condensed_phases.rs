//! Condensed phases from the gas: the estimated vaporization (liquids) and vaporization plus
//! fusion (solids) at 298.15 K against experiment, the estimate's share of the error apart from
//! the gas-phase estimate. Reference: `tests/reference/condensed_dhf.tsv`, written by
//! `scripts/gen_reaction_checks.py` (CRC Handbook "Standard Thermodynamic Properties of Chemical
//! Substances" via chemicals 1.5.2): experimental ΔfH° of the stable condensed phase and of the
//! gas, so ΔfH°(cond) − ΔfH°(g) = −ΔvapH or −ΔsubH. Its `split` column separates the rows the
//! fusion σ was set on (`rule`) from the held-out rows the bounds below are on.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use thermosieve_engine::species::{self, Origin, T_REF_K};
use thermosieve_engine::structures::{self, DefaultPhase};

const ROWS: &str = include_str!("reference/condensed_dhf.tsv");

#[derive(Default)]
struct Fig {
    n: usize,
    skipped: usize,
    abs: Vec<f64>,
    signed: Vec<f64>,
    inside: usize,
    sigma: Vec<f64>,
}

impl Fig {
    fn mae(&self) -> f64 {
        self.abs.iter().sum::<f64>() / self.abs.len().max(1) as f64
    }
    fn coverage(&self) -> f64 {
        self.inside as f64 / self.abs.len().max(1) as f64
    }
    fn median_sigma(&self) -> f64 {
        let mut s = self.sigma.clone();
        s.sort_by(f64::total_cmp);
        s.get(s.len() / 2).copied().unwrap_or(f64::NAN)
    }
}

/// (liquids, solids) of one split: error of the engine's −ΔphaseH against experiment.
fn compare(split: &str) -> (Fig, Fig) {
    let table = species::bundled();
    let structs = structures::bundled();
    let mut lines = ROWS.lines().filter(|l| !l.starts_with('#'));
    let header: Vec<&str> = lines.next().expect("header").split('\t').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).expect("column");
    let (smi, state, cond, gas, sp) = (
        col("smiles"),
        col("state"),
        col("dhf_condensed_kj_per_mol"),
        col("dhf_gas_kj_per_mol"),
        col("split"),
    );
    let (mut liquids, mut solids) = (Fig::default(), Fig::default());
    for l in lines.filter(|l| !l.trim().is_empty()) {
        let f: Vec<&str> = l.split('\t').collect();
        if f[sp] != split {
            continue;
        }
        let (fig, phase) = match f[state] {
            "l" => (&mut liquids, DefaultPhase::Liquid),
            "s" => (&mut solids, DefaultPhase::Solid),
            _ => continue,
        };
        fig.n += 1;
        let exp: f64 = f[cond].parse::<f64>().unwrap() - f[gas].parse::<f64>().unwrap();
        let at = |p: DefaultPhase| structures::resolve_smiles(table, structs, f[smi], 0, p).ok().map(|s| s.resolved);
        let (Some(c), Some(g)) = (at(phase), at(DefaultPhase::Gas)) else {
            fig.skipped += 1;
            continue;
        };
        // Only where the phase change is the engine's estimate (not a tabulated condensed phase).
        if !c.origin.iter().any(|o| matches!(o, Origin::Estimated { .. })) || c.phase != phase.phase().unwrap() {
            fig.skipped += 1;
            continue;
        }
        let h = |r: &species::Resolved| r.state(T_REF_K, T_REF_K.ln()).h_j_per_mol / 1000.0;
        let est = h(&c) - h(&g);
        let (sc, sg) = (c.dhf_uncertainty_kj_per_mol.unwrap(), g.dhf_uncertainty_kj_per_mol.unwrap());
        let sigma = (sc * sc - sg * sg).max(0.0).sqrt();
        let err = (est - exp).abs();
        fig.abs.push(err);
        fig.signed.push(est - exp);
        fig.sigma.push(sigma);
        fig.inside += usize::from(err <= 2.0 * sigma);
    }
    for (what, fig) in [("liquids (−ΔvapH)", &liquids), ("solids (−ΔsubH)", &solids)] {
        eprintln!(
            "{split}, {what}: {} rows, {} skipped (tabulated or not estimable), MAE {:.1} kJ/mol, mean signed {:+.1}, RMS {:.1}, inside 2σ {:.0}%, median σ {:.1}",
            fig.n,
            fig.skipped,
            fig.mae(),
            fig.signed.iter().sum::<f64>() / fig.signed.len().max(1) as f64,
            (fig.signed.iter().map(|x| x * x).sum::<f64>() / fig.signed.len().max(1) as f64).sqrt(),
            100.0 * fig.coverage(),
            fig.median_sigma()
        );
    }
    (liquids, solids)
}

#[test]
fn estimated_phase_changes_agree_with_experiment_on_held_out_rows() {
    let _ = compare("rule");
    let (liquids, solids) = compare("heldout");
    assert!(
        liquids.abs.len() >= 150 && solids.abs.len() >= 50,
        "{} liquids, {} solids",
        liquids.abs.len(),
        solids.abs.len()
    );
    assert!(
        liquids.skipped * 5 <= liquids.n,
        "{} of {} liquids skipped",
        liquids.skipped,
        liquids.n
    );
    assert!(solids.skipped * 4 <= solids.n, "{} of {} solids skipped", solids.skipped, solids.n);
    assert!(liquids.mae() < 6.0, "liquid MAE {}", liquids.mae());
    assert!(liquids.coverage() >= 0.85, "liquid coverage {}", liquids.coverage());
    assert!(solids.mae() < 18.0, "solid MAE {}", solids.mae());
    assert!(solids.coverage() >= 0.88, "solid coverage {}", solids.coverage());
}
