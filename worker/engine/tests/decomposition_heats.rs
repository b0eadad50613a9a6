//! The maximum heat of decomposition (`decomposition.rs`) against measured heats of explosion of
//! seven energetic compounds: `tests/reference/energetic_heats.tsv`, written by
//! `scripts/gen_decomposition_checks.py` (heats of explosion from the Römpp values of
//! Chemgapedia's Table 1 and, for tetryl, a secondary table; condensed ΔfH° from the CRC Handbook
//! or the NIST WebBook via chemicals 1.5.2).
//!
//! The maximum is an upper bound: it sends all hydrogen to liquid water and the rest of the
//! oxygen to CO2, while a real detonation also leaves CO, H2 and carbon (more so the more
//! oxygen-poor the compound) and the measured water may be vapour. So the measured heat must lie
//! below the maximum, and not far below it for these oxygen-rich compounds: measured/maximum
//! between 0.65 and 1.02 (nitroglycerin, whose oxygen balance is positive, reaches the maximum).

mod common;
use common::Tsv;
use thermosieve_engine::decomposition::{energetic_groups, maximum, EnergeticGroup, ProductSet};
use thermosieve_engine::formula::parse_species;
use thermosieve_engine::smiles::Molecule;
use thermosieve_engine::species;

#[test]
fn maximum_bounds_measured_heats_of_explosion() {
    let t = Tsv::parse(include_str!("reference/energetic_heats.tsv"));
    let set = ProductSet::from_table(species::bundled());
    let (name, smi, formula, dhf, q) = (
        t.col("name"),
        t.col("smiles"),
        t.col("formula"),
        t.col("dhf_condensed_kj_per_mol"),
        t.col("heat_of_explosion_kj_per_kg"),
    );
    assert!(t.rows.len() >= 7);
    for r in &t.rows {
        let f = parse_species(&r[formula], 0).unwrap().formula.unwrap();
        let d = maximum(&f, r[dhf].parse().unwrap(), None, &set).unwrap();
        let measured: f64 = r[q].parse().unwrap();
        let ratio = measured / d.heat_kj_per_kg;
        println!(
            "{:<14} maximum {:>6.0} kJ/kg, measured {measured:>5.0}, ratio {ratio:.2} ({})",
            r[name], d.heat_kj_per_kg, d.products
        );
        assert!((0.65..=1.02).contains(&ratio), "{}: measured/maximum {ratio:.2}", r[name]);
        // Every one of them carries a Table A6.1 group: N–O (nitro, nitrate).
        let groups = energetic_groups(&Molecule::parse(&r[smi], 0).unwrap());
        assert!(groups.contains(&EnergeticGroup::NitrogenOxygen), "{}: {groups:?}", r[name]);
    }
}
