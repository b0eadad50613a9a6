//! SMILES formulas, molar masses and identity against RDKit.
//! Reference values: `tests/reference/smiles_rdkit.tsv`, written by
//! `scripts/gen_smiles_reference.py` with RDKit 2026.9.1 on the SMILES bundled in chemicals 1.5.2
//! (pinned in `scripts/requirements-structures.txt`).

mod common;
use common::Tsv;
use thermosieve_engine::elements;
use thermosieve_engine::smiles::Molecule;

fn composition(m: &Molecule) -> String {
    let f = m.formula();
    let mut parts: Vec<(String, u32)> = f.atoms.iter().map(|&(z, n)| (elements::symbol(z).to_string(), n)).collect();
    parts.sort();
    parts.iter().map(|(s, n)| format!("{s}:{n}")).collect::<Vec<_>>().join(" ")
}

#[test]
fn formulas_masses_and_identity_match_rdkit() {
    let t = Tsv::parse(include_str!("reference/smiles_rdkit.tsv"));
    let (smi, comp, charge, mass, canon, rand) = (
        t.col("smiles"),
        t.col("composition"),
        t.col("charge"),
        t.col("molar_mass_rdkit"),
        t.col("rdkit_canonical"),
        t.col("rdkit_random"),
    );
    assert!(t.rows.len() >= 500, "{} molecules", t.rows.len());
    let mut failures = Vec::new();
    for r in &t.rows {
        let m = match Molecule::parse(&r[smi], 0) {
            Ok(m) => m,
            Err(e) => {
                failures.push(format!("{}: {e}", r[smi]));
                continue;
            }
        };
        if composition(&m) != r[comp] || m.formula().charge.to_string() != r[charge] {
            failures.push(format!(
                "{}: engine {} charge {}, RDKit {} charge {}",
                r[smi],
                composition(&m),
                m.formula().charge,
                r[comp],
                r[charge]
            ));
            continue;
        }
        // RDKit uses its own atomic weights (S 32.065, Cl 35.453, ...); the engine IUPAC 2021
        // conventional ones: agree to 0.03 % or 0.01 g/mol.
        // Isotope labels are kept in the structure but the formula counts elements, so its mass
        // is the element's standard weight: not compared for labelled molecules.
        let rd: f64 = r[mass].parse().unwrap();
        let ours = m.formula().molar_mass_g_per_mol();
        let labelled = m.atoms().iter().any(|a| a.isotope.is_some());
        if !labelled && (ours - rd).abs() > (3e-4 * rd).max(0.01) {
            failures.push(format!("{}: molar mass {ours} vs RDKit {rd}", r[smi]));
        }
        let key = m.canonical_key();
        for other in [&r[canon], &r[rand]] {
            match Molecule::parse(other, 0) {
                Ok(o) if o.canonical_key() == key => {}
                Ok(_) => failures.push(format!("{}: a different key for {other}", r[smi])),
                Err(e) => failures.push(format!("{}: {other}: {e}", r[smi])),
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
