//! Reaction enthalpies of fine-chemical steps against experimental values the engine does not
//! bundle: `tests/reference/fine_chem_reactions.tsv`, written by `scripts/gen_reaction_checks.py`
//! (chemicals 1.5.2, rdkit 2026.09.1) from the CRC Handbook table "Standard Thermodynamic
//! Properties of Chemical Substances" (NIST WebBook constants where CRC has no value), never from
//! ATcT, ChemSep or NASA. Structures from PubChem by CAS (InChIKey-checked).
//!
//! The file's `split` column keeps a rule-setting set (the only rows any uncertainty rule may be
//! tuned on) apart from a held-out set; the bounds below are on the held-out set.

use std::collections::HashMap;
use thermosieve_engine::species::{self, Origin};
use thermosieve_engine::structures::{self, DefaultPhase};
use thermosieve_engine::{Screener, TemperatureGrid};

const REACTIONS: &str = include_str!("reference/fine_chem_reactions.tsv");

struct Check {
    id: String,
    split: String,
    smiles: String,
    states: String,
    standard: Option<f64>,
    gas: Option<f64>,
}

fn checks() -> Vec<Check> {
    let mut rows = REACTIONS.lines().filter(|l| !l.starts_with('#'));
    let header: Vec<&str> = rows.next().expect("header").split('\t').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap_or_else(|| panic!("no column {name}"));
    let (id, smiles, states, std, gas, split) = (
        col("id"),
        col("reaction_smiles"),
        col("states"),
        col("delta_h_standard_kj_per_mol"),
        col("delta_h_gas_kj_per_mol"),
        col("split"),
    );
    rows.filter(|l| !l.trim().is_empty())
        .map(|l| {
            let f: Vec<&str> = l.split('\t').collect();
            let num = |k: usize| f[k].parse::<f64>().ok();
            Check {
                id: f[id].into(),
                split: f[split].into(),
                smiles: f[smiles].into(),
                states: f[states].into(),
                standard: num(std),
                gas: num(gas),
            }
        })
        .collect()
}

/// The reaction SMILES with each species' state written after it (`CCO{l}.O=O{g}>>…`).
fn with_states(smiles: &str, states: &str) -> String {
    let (r, p) = smiles.split_once(">>").expect("reaction SMILES");
    let (rs, ps) = states.split_once(">>").expect("states");
    let tag = |side: &str, st: &str| -> String {
        side.split('.')
            .zip(st.split('.'))
            .map(|(s, t)| format!("{s}{{{t}}}"))
            .collect::<Vec<_>>()
            .join(".")
    };
    format!("{}>>{}", tag(r, rs), tag(p, ps))
}

#[derive(Default, Debug)]
struct Figures {
    n: usize,
    failed: usize,
    abs_err: Vec<f64>,
    sigma: Vec<f64>,
    within_8: usize,
    within_2_sigma: usize,
    sign_errors: Vec<String>,
}

impl Figures {
    /// `ref_sigma`: the reference value's own standard uncertainty, which the 2σ test includes.
    fn add(&mut self, id: &str, reference: f64, ref_sigma: f64, got: Result<(f64, f64), String>) {
        self.n += 1;
        let (dh, sigma) = match got {
            Ok(v) => v,
            Err(e) => {
                self.failed += 1;
                eprintln!("  {id}: {e}");
                return;
            }
        };
        let err = (dh - reference).abs();
        self.abs_err.push(err);
        self.sigma.push(sigma);
        self.within_8 += usize::from(err <= 8.0);
        self.within_2_sigma += usize::from(err <= 2.0 * sigma.hypot(ref_sigma));
        if reference.abs() > 20.0 && dh.signum() != reference.signum() {
            self.sign_errors.push(format!("{id}: {dh:.1} vs {reference:.1}"));
        }
    }
    fn mae(&self) -> f64 {
        self.abs_err.iter().sum::<f64>() / self.abs_err.len().max(1) as f64
    }
    fn share(&self, k: usize) -> f64 {
        k as f64 / self.abs_err.len().max(1) as f64
    }
    fn median_sigma(&self) -> f64 {
        let mut s = self.sigma.clone();
        s.sort_by(f64::total_cmp);
        s.get(s.len() / 2).copied().unwrap_or(f64::NAN)
    }
    fn report(&self, what: &str) {
        eprintln!(
            "{what}: {} reactions, {} not screened, MAE {:.1} kJ/mol, within 8 kJ/mol {:.0}%, within 2σ {:.0}%, median σ {:.1}, sign errors {}",
            self.n,
            self.failed,
            self.mae(),
            100.0 * self.share(self.within_8),
            100.0 * self.share(self.within_2_sigma),
            self.median_sigma(),
            self.sign_errors.len()
        );
        for s in &self.sign_errors {
            eprintln!("    sign: {s}");
        }
    }
}

/// Robust standard spread of the CRC Handbook's ΔfH° against ATcT 1.112 over the 156 gases both
/// carry in chemicals 1.5.2: 1.4826 × the median absolute difference (0.685 kJ/mol) ≈ 1.0 kJ/mol.
/// The reference values carry it too, so a tabulated reaction whose engine σ is 0.1 kJ/mol is
/// not counted as a miss for a 1 kJ/mol disagreement between two experimental tables.
const REFERENCE_SIGMA_PER_SPECIES_KJ_PER_MOL: f64 = 1.0;

/// √Σν² over the species of a reaction SMILES (a species repeated n times has ν = n).
fn nu_norm(smiles: &str) -> f64 {
    let mut counts: HashMap<&str, f64> = HashMap::new();
    for side in smiles.split(">>") {
        for s in side.split('.') {
            *counts.entry(s).or_default() += 1.0;
        }
    }
    counts.values().map(|n| n * n).sum::<f64>().sqrt()
}

fn run(split: &str) -> HashMap<&'static str, Figures> {
    let mut s = Screener::new(species::bundled(), TemperatureGrid::new(vec![298.15]).expect("grid"));
    let mut out: HashMap<&'static str, Figures> = HashMap::new();
    let mut screen = |eq: &str, phase: DefaultPhase| -> Result<(f64, f64), String> {
        let r = s.screen_with(eq, phase).map_err(|e| e.to_string())?;
        Ok((r.standard.delta_h_kj_per_mol, r.delta_h_uncertainty_kj_per_mol.ok_or("no σ")?))
    };
    for c in checks().iter().filter(|c| c.split == split) {
        let ref_sigma = REFERENCE_SIGMA_PER_SPECIES_KJ_PER_MOL * nu_norm(&c.smiles);
        if let Some(v) = c.standard {
            out.entry("standard state chosen by the engine").or_default().add(
                &c.id,
                v,
                ref_sigma,
                screen(&c.smiles, DefaultPhase::Standard),
            );
            out.entry("states as tabulated, written per species").or_default().add(
                &c.id,
                v,
                ref_sigma,
                screen(&with_states(&c.smiles, &c.states), DefaultPhase::Standard),
            );
        }
        if let Some(v) = c.gas {
            out.entry("ideal gas")
                .or_default()
                .add(&c.id, v, ref_sigma, screen(&c.smiles, DefaultPhase::Gas));
        }
    }
    for (k, f) in &out {
        f.report(&format!("{split}, {k}"));
    }
    out
}

#[test]
fn every_species_of_the_check_set_resolves_to_its_own_structure() {
    // Identity is structure: a tabulated record is used only when its bundled structure is the
    // SMILES's (never a record found by formula).
    let table = species::bundled();
    let structs = structures::bundled();
    let mut wrong = Vec::new();
    for c in checks() {
        for smiles in c.smiles.split(">>").flat_map(|side| side.split('.')) {
            let Ok(r) = structures::resolve_smiles(table, structs, smiles, 0, DefaultPhase::Gas) else {
                continue;
            };
            let m = thermosieve_engine::smiles::Molecule::parse(smiles, 0).expect("reference SMILES parse");
            for o in &r.resolved.origin {
                if let Origin::Tabulated { record, .. } = o {
                    let base = table
                        .records
                        .iter()
                        .find(|x| &x.name == record)
                        .map(|x| x.base.as_str())
                        .unwrap_or("");
                    if structs.key_of(base) != Some(m.canonical_key().as_str()) {
                        wrong.push(format!("{smiles} -> {record}"));
                    }
                }
            }
        }
    }
    assert!(wrong.is_empty(), "resolved to another compound: {wrong:?}");
}

#[test]
fn held_out_reaction_enthalpies_agree_with_experiment() {
    let _rule = run("rule");
    let held = run("heldout");
    let gas = &held["ideal gas"];
    let tagged = &held["states as tabulated, written per species"];
    let standard = &held["standard state chosen by the engine"];
    // Bounds on the held-out set, just outside the figures measured when they were set (README).
    // Targets: ≥ 90% inside 2σ and no sign error where |ΔrH°| > 20 kJ/mol in every state. Measured
    // with Benson's groups for the ideal gas and the zwitterion rule for amino-acid solids (2σ
    // including the reference's own σ): gas 109 reactions, 14 not screened, MAE 10.3 kJ/mol, 69%
    // within 8, 96% inside 2σ, 1 sign error (oxamide from diethyl oxalate: oxamide by Joback, as
    // Benson's table lacks CO(CO)(N)); standard state 128, 19, MAE 17.0, 94%, 0; states written
    // per species 128, 18, MAE 16.9, 95%, 0. (Before Benson: gas MAE 14.4, 55% within 8; standard
    // MAE 21.3, 1 sign error per state.)
    assert!(gas.n >= 100, "{}", gas.n);
    assert!(gas.failed <= 15, "{} of {} not screened", gas.failed, gas.n);
    assert!(gas.mae() < 11.5, "gas MAE {}", gas.mae());
    assert!(gas.share(gas.within_8) >= 0.65, "gas within 8 kJ/mol {}", gas.share(gas.within_8));
    assert!(
        gas.share(gas.within_2_sigma) >= 0.90,
        "gas 2σ coverage {}",
        gas.share(gas.within_2_sigma)
    );
    assert!(gas.sign_errors.len() <= 1, "{:?}", gas.sign_errors);
    for (what, f) in [("standard", standard), ("tagged", tagged)] {
        assert!(f.failed <= 20, "{what}: {} of {} not screened", f.failed, f.n);
        assert!(f.mae() < 18.5, "{what}: MAE {}", f.mae());
        assert!(
            f.share(f.within_2_sigma) >= 0.90,
            "{what}: 2σ coverage {}",
            f.share(f.within_2_sigma)
        );
        assert!(f.sign_errors.is_empty(), "{what}: {:?}", f.sign_errors);
    }
}
