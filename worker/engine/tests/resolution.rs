//! How written species find their data.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use thermosieve_engine::formula::{parse_species, Phase};
use thermosieve_engine::species::{self, ResolveError, SuppliedSpecies};
use thermosieve_engine::{ScreenError, Screener, TemperatureGrid};

fn resolve(s: &str) -> Result<species::Resolved, ResolveError> {
    species::bundled().resolve(&parse_species(s, 0).unwrap())
}

#[test]
fn bundled_table_loads_every_usable_record() {
    // 1,130 NASA records (748 gas + 382 condensed in Cantera 3.2.0) less 25 deuterated ones,
    // plus 56 open records (35 liquids, 21 gases) from data/open_species.tsv.
    assert_eq!(species::bundled().records.len(), 1105 + 56);
    assert!(species::bundled().provenance.contains("Cantera 3.2.0"));
}

#[test]
fn isomers_and_several_solids_are_errors_that_name_the_candidates() {
    // The table alone: a formula with records of two compounds is ambiguous.
    let e = resolve("C2H6O(g)").unwrap_err();
    assert!(
        matches!(&e, ResolveError::Ambiguous { candidates, .. } if candidates == &["C2H5OH", "CH3OCH3"]),
        "{e}"
    );
    assert_eq!(resolve("C2H5OH(g)").unwrap().label, "C2H5OH(g)");
    // Through the screener: a formula that fits several known compounds names them with their
    // SMILES, also where the table has only one record of it (C7H8O: cresol; benzyl alcohol,
    // anisole and the cresols are all known compounds).
    let mut s = thermosieve_engine::Screener::new(species::bundled(), thermosieve_engine::TemperatureGrid::new(vec![298.15]).unwrap());
    for written in ["C4H10(g)", "C6H5CH2OH(g)", "C7H8O(g)", "C3H6O(g)"] {
        let e = s.species(written, 0).unwrap_err().to_string();
        assert!(e.contains("fits several compounds") && e.contains('('), "{written}: {e}");
    }
    let e = s.species("C6H5CH2OH(g)", 0).unwrap_err().to_string();
    assert!(e.contains("benzyl alcohol (") || e.contains("phenylmethanol ("), "{e}");
    // Written by name, the isomer resolves to its own record by structure.
    let b = s.species("n-butane(g)", 0).unwrap();
    assert!(matches!(&b.resolved.origin[0], species::Origin::Tabulated { record, .. } if record == "C4H10,n-butane"));
    // A structural formula that is a bundled record's own is that record.
    assert!(s.species("CH3COCH3(l)", 0).is_ok());
}

#[test]
fn the_data_files_record_names_are_not_input_syntax() {
    // `formula,record` qualifiers and one-letter polymorph codes are provenance, not syntax.
    assert!(parse_species("C7H14,methylcyclohexane(g)", 0).is_err());
    assert!(parse_species("C4H10,n-butane(g)", 0).is_err());
    assert!(parse_species("Fe(a)", 0).is_err());
}

#[test]
fn labels_carry_one_phase_tag_also_for_bracketed_formulas() {
    assert_eq!(resolve("Ca(OH)2(s)").unwrap().label, "Ca(OH)2(s)");
    assert_eq!(resolve("Ca(OH)2").unwrap().label, "Ca(OH)2(s)");
    assert_eq!(resolve("NH4+").unwrap().label, "NH4+(g)");
}

#[test]
fn untagged_species_take_the_stable_phase_at_298() {
    assert_eq!(resolve("H2O").unwrap().phase, Phase::Liquid);
    assert_eq!(resolve("CO2").unwrap().phase, Phase::Gas);
    assert_eq!(resolve("Br2").unwrap().phase, Phase::Liquid);
    assert_eq!(resolve("Fe").unwrap().phase, Phase::Solid);
}

#[test]
fn polymorphs_form_a_series_and_tags_pick_one() {
    let fe = resolve("Fe(cr)").unwrap();
    assert_eq!(fe.origin.len(), 3, "alpha, gamma, delta iron");
    let alpha = resolve("Fe(cr,alpha)").unwrap();
    assert_eq!(alpha.origin.len(), 1);
    assert_eq!(alpha.label, "Fe(cr,alpha)");
    // Labels in IUPAC style however graphite is written.
    assert_eq!(resolve("C(gr)").unwrap().label, "C(cr,graphite)");
    assert_eq!(resolve("C(cr,graphite)").unwrap().label, "C(cr,graphite)");
    let sulfur = resolve("S(cr,rhombic)").unwrap();
    assert_eq!(sulfur.origin.len(), 1);
    assert!(matches!(resolve("NaCl(aq)"), Err(ResolveError::NotFound { .. })));
    assert!(matches!(resolve("XeF8(g)"), Err(ResolveError::NotFound { .. })));
}

#[test]
fn supplied_values_win_and_unknown_species_point_at_their_position() {
    let mut s = Screener::new(species::bundled(), TemperatureGrid::new(vec![298.15, 350.0]).unwrap());
    let e = s.screen("C2H4(g) + H2O(g) -> C2H5OH(g) + Xe2O(s)").unwrap_err();
    assert!(matches!(e, ScreenError::Species { position: 32, .. }), "{e}");
    // Illustrative values for a fictional species (not a check of data).
    s.supply(
        "HX(l)",
        SuppliedSpecies {
            formula: parse_species("HBr", 0).unwrap().formula.unwrap(),
            phase: Phase::Liquid,
            dhf_kj_per_mol: -100.0,
            s_j_per_mol_k: 100.0,
            cp_j_per_mol_k: None,
            t_min_k: 298.15,
            t_max_k: 298.15,
            dhf_uncertainty_kj_per_mol: Some(5.0),
        },
    );
    let r = s.screen("H2(g) + Br2(l) -> 2 HX(l)").unwrap();
    // 2 × (−100) − 0 − 0: Br2(l) and H2(g) are reference elements with ΔfH° = 0 in the NASA data.
    assert!(
        (r.standard.delta_h_kj_per_mol + 200.0).abs() < 0.01,
        "{}",
        r.standard.delta_h_kj_per_mol
    );
    // Without Cp, points away from 298.15 K are flagged.
    assert!(!r.points[1].in_valid_range);
    // Reference elements carry σ = 0, so only 2 × 5 kJ/mol of the supplied species remains.
    assert_eq!(r.delta_h_uncertainty_kj_per_mol, Some(10.0));
}

#[test]
fn open_liquids_and_atct_uncertainties() {
    let mut s = Screener::new(species::bundled(), TemperatureGrid::new(vec![298.15]).unwrap());
    // Standard enthalpy of combustion of liquid methanol, −726.1 kJ/mol (NIST WebBook, from memory).
    let r = s.screen("CH3OH(l) + 3/2 O2(g) -> CO2(g) + 2 H2O(l)").unwrap();
    assert!(
        (r.standard.delta_h_kj_per_mol - -726.1).abs() < 1.5,
        "{}",
        r.standard.delta_h_kj_per_mol
    );
    assert!(r.species[0].species.resolved.source_line().contains("ATcT"));
    // Water formation: H2 and O2 are reference elements (σ = 0), H2O(l) carries ATcT 1.112's
    // ±0.027 kJ/mol (data/nasa_uncertainty.tsv), a 95% interval: σ = 0.0135 kJ/mol.
    let w = s.screen("H2(g) + 1/2 O2(g) -> H2O(l)").unwrap();
    let u = w.delta_h_uncertainty_kj_per_mol.expect("uncertainty");
    assert!((u - 0.0135).abs() < 1e-9, "{u}");
    let water = &w
        .species
        .iter()
        .find(|t| t.species.resolved.label == "H2O(l)")
        .unwrap()
        .species
        .resolved;
    assert!(water.sigma_basis.contains("±/2"), "{}", water.sigma_basis);
    // A species whose source states no σ carries the table's source-typical σ
    // (data/source_sigma.tsv: NASA against ATcT 1.112), never none.
    let f = s.screen("2 Al(cr) + Fe2O3(s) -> Al2O3(s) + 2 Fe(cr)").unwrap();
    let fe2o3 = &f
        .species
        .iter()
        .find(|t| t.species.resolved.label.starts_with("Fe2O3"))
        .unwrap()
        .species
        .resolved;
    assert!(fe2o3.sigma_basis.contains("source-typical"), "{}", fe2o3.sigma_basis);
    assert!(f.delta_h_uncertainty_kj_per_mol.is_some_and(|u| u > 5.0));
}
