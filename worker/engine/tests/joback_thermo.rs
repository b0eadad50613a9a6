//! Joback estimates against the `thermo` package's implementation (RDKit SMARTS fragmentation).
//! Reference values: `tests/reference/joback_thermo.tsv`, written by
//! `scripts/gen_joback_reference.py` with thermo 0.6.1 and RDKit 2026.9.1 (pinned in
//! `scripts/requirements-structures.txt`). Same group table, so: identical group counts and
//! ΔfH° within 0.1 kJ/mol; ΔfG° within 0.1 kJ/mol, Tb and Tc within 0.01 K, Cp within 0.01 J/mol/K.

mod common;
use common::Tsv;
use thermosieve_engine::joback::Estimate;
use thermosieve_engine::smiles::Molecule;

#[test]
fn joback_matches_thermo() {
    let t = Tsv::parse(include_str!("reference/joback_thermo.tsv"));
    let c = |n: &str| t.col(n);
    let (smi, groups, hf, gf, tb, tc, cp298, cp500) = (
        c("smiles"),
        c("groups"),
        c("dhf_gas_kj_per_mol"),
        c("dgf_gas_kj_per_mol"),
        c("tb_k"),
        c("tc_k"),
        c("cp_298_j_per_mol_k"),
        c("cp_500_j_per_mol_k"),
    );
    assert!(t.rows.len() >= 100, "{} molecules", t.rows.len());
    let mut failures = Vec::new();
    for r in &t.rows {
        let num = |k: usize| r[k].parse::<f64>().unwrap();
        let e = match Molecule::parse(&r[smi], 0)
            .map_err(|e| e.to_string())
            .and_then(|m| Estimate::of(&m).map_err(|e| e.to_string()))
        {
            Ok(e) => e,
            Err(e) => {
                failures.push(format!("{}: {e}", r[smi]));
                continue;
            }
        };
        let ours: Vec<String> = e
            .groups
            .counts
            .iter()
            .enumerate()
            .filter(|(_, &n)| n > 0)
            .map(|(k, n)| format!("{}:{n}", k + 1))
            .collect();
        if ours.join(",") != r[groups] {
            failures.push(format!("{}: groups {} vs thermo {}", r[smi], ours.join(","), r[groups]));
            continue;
        }
        let checks = [
            ("ΔfH°", e.published_dhf_gas_kj_per_mol, num(hf), 0.1),
            ("ΔfG°", e.dgf_gas_kj_per_mol - e.groups.correction_kj_per_mol(), num(gf), 0.1),
            ("Tb", e.tb_k, num(tb), 0.01),
            ("Tc", e.tc_k.unwrap_or(f64::NAN), num(tc), 0.01),
            ("Cp(298.15)", e.cp_gas_j_per_mol_k(298.15), num(cp298), 0.01),
            ("Cp(500)", e.cp_gas_j_per_mol_k(500.0), num(cp500), 0.01),
        ];
        for (what, a, b, tol) in checks {
            // NaN (a missing value) fails too.
            if (a - b).abs().is_nan() || (a - b).abs() > tol {
                failures.push(format!("{}: {what} {a} vs thermo {b}", r[smi]));
            }
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {} failed:\n{}",
        failures.len(),
        t.rows.len(),
        failures.join("\n")
    );
}
