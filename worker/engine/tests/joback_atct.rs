//! Estimated ΔfH°(g) against experiment — Benson's groups, Joback's, and the chain the species
//! use (Benson where every group has a value, else Joback) — on two sets written by
//! `scripts/gen_hfg_reference.py` (chemicals 1.5.2):
//! - `tests/reference/atct_hfg.tsv`: Active Thermochemical Tables 1.112. The rule-setting set:
//!   the uncertainty rules in `joback.rs` and `benson.rs` were chosen looking at these errors (and, before that,
//!   at cyclopropane, CCl4, benzene, naphthalene, furan, pyridine, thiophene and pyrrole, which
//!   are left out of both sets here). Its coverage is in-sample and only reported.
//! - `tests/reference/crc_hfg.tsv`: CRC Handbook gas-phase values for molecules not in the ATcT
//!   set, not looked at while choosing the rules: the held-out check, which must have at least
//!   80 % of the errors inside the reported 2σ.
//!
//! Both print the mean absolute error (MAE) and the 2σ coverage (`cargo test -- --nocapture`).

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

mod common;
use common::Tsv;
use thermosieve_engine::benson::Benson;
use thermosieve_engine::joback::Estimate;
use thermosieve_engine::smiles::Molecule;

const RULE_SETTING: [&str; 19] = [
    "C1CC1",
    "ClC(Cl)(Cl)Cl",
    "c1ccccc1",
    "c1ccc2ccccc2c1",
    "c1ccoc1",
    "c1ccncc1",
    "c1ccsc1",
    "c1cc[nH]c1",
    // The amide and peroxide corrections were set on these (rule rows of condensed_dhf.tsv;
    // joback::AMIDE_OFFSET_KJ_PER_MOL, PEROXIDE_OFFSET_KJ_PER_MOL): not held out.
    "CC(C)C(=O)N",
    "C1=CC=C(C=C1)C(=O)N",
    "C1CCC(=O)NCC1",
    "C(=O)N",
    "CC(=O)N(C)C",
    "CCCCC(=O)N",
    "CCCOC(=O)N",
    "C1CC(=O)NC1=O",
    "C1=CNC(=O)NC1=O",
    "C1=CC=C(C=C1)C(=O)OOC(=O)C2=CC=CC=C2",
    // The adjacent-carbonyl correction (joback::ADJACENT_CARBONYL_OFFSET_KJ_PER_MOL).
    "COC(=O)C(=O)OC",
];

#[derive(Clone, Copy, PartialEq)]
enum Method {
    Joback,
    /// Benson, on the molecules whose every group and correction has ΔfH°, S° and Cp.
    Benson,
    /// Benson's ΔfH°, on the molecules that need a second-tier row (ΔfH° without S° or Cp).
    BensonSecondTier,
    /// What a species uses: Benson where it covers the molecule, else Joback.
    Chain,
    /// Joback on exactly the molecules of the Benson tier named.
    JobackWhere(bool),
}

/// Benson's estimate of a molecule, when it is of the tier asked (second tier or complete).
fn benson_tier(m: &Molecule, second_tier: bool) -> Option<Benson> {
    Benson::of(m).ok().filter(|b| b.second_tier.is_empty() != second_tier)
}

struct Stats {
    n: usize,
    skipped: usize,
    mae: f64,
    coverage: f64,
    table: String,
}

/// Which rows of a file: all, or the half of the CRC set with an even CAS check digit (added to
/// the rule-setting set for Benson's σ rules) or an odd one (Benson's held-out set).
#[derive(Clone, Copy, PartialEq)]
enum Rows {
    All,
    EvenCas,
    OddCas,
}

fn even_cas(cas: &str) -> bool {
    cas.bytes().last().is_some_and(|d| (d - b'0').is_multiple_of(2))
}

fn compare(text: &str, method: Method) -> Stats {
    compare_rows(text, method, Rows::All)
}

fn compare_rows(text: &str, method: Method, which: Rows) -> Stats {
    let t = Tsv::parse(text);
    let cas = t.col("cas");
    let (smi, name, hf) = (t.col("smiles"), t.col("name"), t.col("dhf_gas_kj_per_mol"));
    let excluded: Vec<String> = RULE_SETTING
        .iter()
        .map(|s| Molecule::parse(s, 0).unwrap().canonical_key())
        .collect();
    let (mut n, mut abs_sum, mut inside, mut skipped) = (0usize, 0.0, 0usize, 0usize);
    let mut lines = vec![format!(
        "{:<40} {:>9} {:>9} {:>8} {:>6}",
        "molecule", "exp", "estimate", "error", "σ"
    )];
    for r in &t.rows {
        match which {
            Rows::EvenCas if !even_cas(&r[cas]) => continue,
            Rows::OddCas if even_cas(&r[cas]) => continue,
            _ => {}
        }
        let Ok(m) = Molecule::parse(&r[smi], 0) else {
            skipped += 1;
            continue;
        };
        if excluded.contains(&m.canonical_key()) {
            continue;
        }
        let (value, sigma) = match method {
            Method::Benson | Method::BensonSecondTier => match benson_tier(&m, method == Method::BensonSecondTier) {
                Some(b) => (b.dhf_gas_kj_per_mol, b.dhf_sigma_kj_per_mol),
                None => {
                    skipped += 1;
                    continue;
                }
            },
            Method::JobackWhere(second) => match (benson_tier(&m, second), Estimate::of(&m)) {
                (Some(_), Ok(e)) => (e.dhf_gas_kj_per_mol, e.groups.dhf_sigma_kj_per_mol()),
                _ => {
                    skipped += 1;
                    continue;
                }
            },
            Method::Joback | Method::Chain => {
                let Ok(e) = Estimate::of(&m) else {
                    skipped += 1;
                    continue;
                };
                if method == Method::Joback {
                    (e.dhf_gas_kj_per_mol, e.groups.dhf_sigma_kj_per_mol())
                } else {
                    (e.gas_dhf_kj_per_mol(), e.gas_dhf_sigma_kj_per_mol())
                }
            }
        };
        let exp: f64 = r[hf].parse().unwrap();
        let err = value - exp;
        n += 1;
        abs_sum += err.abs();
        let ok = err.abs() <= 2.0 * sigma;
        inside += usize::from(ok);
        lines.push(format!(
            "{:<40} {:>9.1} {:>9.1} {:>8.1} {:>6.1}{}",
            r[name],
            exp,
            value,
            err,
            sigma,
            if ok { "" } else { "  outside 2σ" }
        ));
    }
    Stats {
        n,
        skipped,
        mae: abs_sum / n as f64,
        coverage: inside as f64 / n as f64,
        table: lines.join("\n"),
    }
}

fn report(what: &str, s: &Stats) {
    println!("{}", s.table);
    println!(
        "{what}: {} molecules ({} not estimable), MAE {:.1} kJ/mol, inside 2σ {:.2}",
        s.n, s.skipped, s.mae, s.coverage
    );
}

#[test]
fn rule_setting_set_atct() {
    let s = compare(include_str!("reference/atct_hfg.tsv"), Method::Joback);
    report("Joback vs ATcT 1.112 (rule-setting, in-sample)", &s);
    assert!(s.n >= 50, "only {} molecules compared", s.n);
    // At most 10% of the set may be skipped as not estimable; the rules were set here, so the
    // in-sample coverage must reach the 95% they promise (measured: 136 compared, 7 skipped,
    // MAE 33.4 kJ/mol, 0.98 inside 2σ).
    assert!(s.skipped * 10 <= s.n + s.skipped, "{} of {} skipped", s.skipped, s.n + s.skipped);
    assert!(s.coverage >= 0.95, "in-sample 2σ coverage {:.2}", s.coverage);
    assert!(s.mae < 36.0, "in-sample MAE {:.1} kJ/mol", s.mae);
}

#[test]
fn held_out_set_crc_inside_two_sigma() {
    let s = compare(include_str!("reference/crc_hfg.tsv"), Method::Joback);
    report("Joback vs CRC Handbook (held out)", &s);
    assert!(s.n >= 50, "only {} molecules compared", s.n);
    // Measured: 833 compared, 35 skipped, MAE 22.5 kJ/mol, 0.90 inside 2σ (with the amide,
    // peroxide and adjacent-carbonyl corrections; 25.1 and 0.87 before). Still short of the 95%
    // the σ promises.
    assert!(s.skipped * 10 <= s.n + s.skipped, "{} of {} skipped", s.skipped, s.n + s.skipped);
    assert!(s.coverage >= 0.88, "2σ coverage {:.2} (MAE {:.1} kJ/mol)", s.coverage, s.mae);
    assert!(s.mae < 24.0, "held-out MAE {:.1} kJ/mol", s.mae);
}

#[test]
fn benson_rule_setting_set() {
    let a = compare(include_str!("reference/atct_hfg.tsv"), Method::Benson);
    report("Benson vs ATcT 1.112 (rule-setting, in-sample)", &a);
    let c = compare_rows(include_str!("reference/crc_hfg.tsv"), Method::Benson, Rows::EvenCas);
    report("Benson vs CRC, even CAS check digit (rule-setting, in-sample)", &c);
    let t = compare_rows(include_str!("reference/crc_hfg.tsv"), Method::BensonSecondTier, Rows::EvenCas);
    report("Benson ΔfH° with second-tier rows vs CRC, even CAS check digit (rule-setting)", &t);
    let tj = compare_rows(include_str!("reference/crc_hfg.tsv"), Method::JobackWhere(true), Rows::EvenCas);
    println!("(Joback on the same molecules: {} molecules, MAE {:.1} kJ/mol)", tj.n, tj.mae);
    assert!(a.n >= 30, "only {} ATcT molecules covered", a.n);
    assert!(c.n >= 150, "only {} CRC rule-setting molecules covered", c.n);
    assert!(
        a.coverage >= 0.95 && c.coverage >= 0.93,
        "in-sample 2σ coverage {:.2} / {:.2}",
        a.coverage,
        c.coverage
    );
}

#[test]
fn benson_held_out_set_crc() {
    let crc = include_str!("reference/crc_hfg.tsv");
    let s = compare_rows(crc, Method::Benson, Rows::OddCas);
    report("Benson vs CRC, odd CAS check digit (held out, every group complete)", &s);
    let j = compare_rows(crc, Method::JobackWhere(false), Rows::OddCas);
    println!(
        "(Joback on the same molecules, {} it estimates: MAE {:.1} kJ/mol, inside 2σ {:.2})",
        j.n, j.mae, j.coverage
    );
    assert!(s.n >= 150, "only {} held-out molecules covered", s.n);
    assert!(s.mae <= 6.0, "held-out MAE {:.1} kJ/mol", s.mae);
    assert!(s.coverage >= 0.90, "held-out 2σ coverage {:.2}", s.coverage);
    assert!(j.n * 10 >= s.n * 9, "Joback covers {} of {}", j.n, s.n);
    // Molecules that need a second-tier row: Benson's ΔfH° with a wider σ, Joback's S° and Cp.
    let t = compare_rows(crc, Method::BensonSecondTier, Rows::OddCas);
    report("Benson ΔfH° with second-tier rows vs CRC, odd CAS check digit (held out)", &t);
    let tj = compare_rows(crc, Method::JobackWhere(true), Rows::OddCas);
    println!(
        "(Joback on the same molecules, {} it estimates: MAE {:.1} kJ/mol, inside 2σ {:.2})",
        tj.n, tj.mae, tj.coverage
    );
    assert!(t.n >= 30, "only {} second-tier molecules", t.n);
    assert!(t.mae < tj.mae, "second tier MAE {:.1} vs Joback {:.1}", t.mae, tj.mae);
    assert!(t.coverage >= 0.80, "second tier 2σ coverage {:.2}", t.coverage);
}

#[test]
fn method_chain_held_out_set_crc() {
    let s = compare_rows(include_str!("reference/crc_hfg.tsv"), Method::Chain, Rows::OddCas);
    report("Benson-else-Joback vs CRC, odd CAS check digit (held out)", &s);
    assert!(s.skipped * 10 <= s.n + s.skipped, "{} of {} skipped", s.skipped, s.n + s.skipped);
    assert!(s.coverage >= 0.88, "2σ coverage {:.2}", s.coverage);
}

/// Benson's S°(g) — group entropies, −R ln σ for the symmetry number, +R ln n for optical
/// isomers — against the CRC Handbook's S°(g) (the `s_gas_j_per_mol_k` column of
/// `crc_hfg.tsv`; no S° rule was set on it). Joback's S° beside it.
#[test]
fn benson_entropy_against_crc() {
    let t = Tsv::parse(include_str!("reference/crc_hfg.tsv"));
    let (smi, name, s0) = (t.col("smiles"), t.col("name"), t.col("s_gas_j_per_mol_k"));
    let (mut n, mut abs_b, mut abs_j) = (0usize, 0.0, 0.0);
    let mut errors = Vec::new();
    let entropy = |z: u8| thermosieve_engine::structures::element_entropy(thermosieve_engine::species::bundled(), z);
    for r in t.rows.iter().filter(|r| !r[s0].is_empty()) {
        let m = Molecule::parse(&r[smi], 0).unwrap();
        let (Ok(b), Ok(e)) = (Benson::of(&m), Estimate::of(&m)) else {
            continue;
        };
        let Some(s_benson) = b.s_gas_j_per_mol_k else {
            continue;
        };
        let exp: f64 = r[s0].parse().unwrap();
        let joback = e.s_gas_j_per_mol_k(&m.formula(), &entropy).unwrap();
        println!(
            "{:<36} exp {exp:>7.1} Benson {:>7.1} (σ {:>4}, optical {}) Joback {joback:>7.1}",
            r[name], s_benson, b.symmetry_number, b.optical_isomers
        );
        n += 1;
        abs_b += (s_benson - exp).abs();
        errors.push((s_benson - exp).abs());
        abs_j += (joback - exp).abs();
    }
    let (mae_b, mae_j) = (abs_b / n as f64, abs_j / n as f64);
    errors.sort_by(f64::total_cmp);
    let median = errors[n / 2];
    let within_10 = errors.iter().filter(|&&e| e <= 10.0).count() as f64 / n as f64;
    println!(
        "S°(g) vs CRC: {n} molecules, Benson MAE {mae_b:.1} J/(mol·K), median {median:.1}, within 10: {:.0}%; Joback MAE {mae_j:.1}",
        100.0 * within_10
    );
    // The mean is dominated by a few rows whose homologous steps disagree with the rest of the
    // table (octanal: CRC 365.4 J/(mol·K), only 21.7 above butanal's 343.7 although four more CH2
    // groups add about 4 × 39.4 by Benson's C(C)2(H)2 entropy; 1-nitrobutane and 1-nitropentane
    // rise by 19.9 and 21.0 per CH2), so the bounds are on the median and the share within 10.
    assert!(n >= 20, "only {n} molecules");
    assert!(median < 5.0, "Benson S° median error {median:.1}");
    assert!(within_10 >= 0.75, "Benson S° within 10 J/(mol·K): {within_10:.2}");
    assert!(mae_b < mae_j, "Benson S° MAE {mae_b:.1} vs Joback {mae_j:.1}");
}
