//! Reaction SMILES end to end: balancing from structures, resolution order (tabulated by
//! structure, estimated otherwise), default phases, identity by structure and agents.

use thermosieve_engine::species::{self, Origin};
use thermosieve_engine::structures::DefaultPhase;
use thermosieve_engine::{ScreenError, Screener, TemperatureGrid};

fn screener() -> Screener<'static> {
    Screener::new(species::bundled(), TemperatureGrid::default_process())
}

#[test]
fn tabulated_reaction_smiles_matches_the_formula_equation() {
    // Same NASA records either way: methane combustion, gas phase.
    let mut s = screener();
    let smiles = s.screen_with("C.O=O>>O=C=O.O", DefaultPhase::Gas).unwrap();
    assert_eq!(smiles.balanced_equation.matches(" 2 ").count(), 2, "{}", smiles.balanced_equation);
    let formula = s.screen("CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)").unwrap();
    assert!((smiles.standard.delta_h_kj_per_mol - formula.standard.delta_h_kj_per_mol).abs() < 1e-9);
    assert_eq!(smiles.estimated_species, 0);
    // NASA TM-4513 data: ΔrH°(298) = −802.3 kJ/mol for CH4 + 2 O2 -> CO2 + 2 H2O(g).
    assert!(
        (smiles.standard.delta_h_kj_per_mol + 802.3).abs() < 0.5,
        "{}",
        smiles.standard.delta_h_kj_per_mol
    );
}

#[test]
fn estimated_species_are_counted_and_named() {
    let mut s = screener();
    // Propyl acetate hydrolysis: propyl acetate is in no bundled table (estimated, liquid);
    // water and the alcohol's liquid are tabulated (the open records carry structures); acetic
    // acid is tabulated as gas only, so its liquid takes an estimated vaporization.
    let r = s.screen_with("CCCOC(C)=O.O>>CC(=O)O.CCCO", DefaultPhase::Liquid).unwrap();
    assert_eq!(
        r.estimated_species,
        2,
        "{:#?}",
        r.species.iter().map(|t| &t.species.resolved.origin).collect::<Vec<_>>()
    );
    let ester = r
        .species
        .iter()
        .find(|t| t.species.resolved.label.contains("propyl acetate") || t.species.resolved.label.starts_with("CCCOC(C)=O"))
        .unwrap_or_else(|| panic!("{}", r.balanced_equation));
    assert!(matches!(ester.species.resolved.origin[0], Origin::Estimated { .. }));
    // Its ideal gas is Benson's (every group has a value), its liquid through Joback's Tb, Tc.
    assert!(
        ester.species.resolved.source_line().contains("Benson"),
        "{}",
        ester.species.resolved.source_line()
    );
    assert!(ester.species.resolved.dhf_uncertainty_kj_per_mol.unwrap() > 4.0);
    // Ethyl acetate, written as SMILES, is the bundled ChemSep liquid by structure, not an estimate.
    let e = s.screen_with("CCOC(C)=O.O>>CC(=O)O.CCO", DefaultPhase::Liquid).unwrap();
    assert_eq!(e.estimated_species, 1, "{}", e.balanced_equation);
    // Every species now carries an uncertainty (ATcT for the tabulated ones), so the reaction's
    // root-sum-square is given and is at least the ester's own.
    let u = r.delta_h_uncertainty_kj_per_mol.expect("all species have an uncertainty");
    assert!(u >= ester.species.resolved.dhf_uncertainty_kj_per_mol.unwrap(), "{u}");
    // Balanced 1:1:1:1 with no coefficient shown.
    assert!(!r.balanced_equation.contains(" 2 "), "{}", r.balanced_equation);
}

#[test]
fn two_spellings_are_one_species() {
    let mut s = screener();
    let e = s.screen_with("OCC>>C(O)C", DefaultPhase::Gas).unwrap_err();
    assert!(matches!(e, ScreenError::Balance(_)), "{e}");
    let a = s.smiles_species("CCCCCCCCCC(=O)OC", 0).unwrap();
    let b = s.smiles_species("COC(=O)CCCCCCCCC", 0).unwrap();
    assert!(std::sync::Arc::ptr_eq(&a, &b));
}

#[test]
fn default_phase_decides_the_record() {
    let mut s = screener();
    let g = s.screen_with("c1ccccc1.[H][H]>>C1CCCCC1", DefaultPhase::Gas).unwrap();
    let l = s.screen_with("c1ccccc1.[H][H]>>C1CCCCC1", DefaultPhase::Standard).unwrap();
    assert!(g.balanced_equation.contains("3 H2"), "{}", g.balanced_equation);
    assert!(g
        .species
        .iter()
        .all(|t| t.species.resolved.phase == thermosieve_engine::formula::Phase::Gas));
    assert_ne!(g.standard.delta_h_kj_per_mol, l.standard.delta_h_kj_per_mol);
    // Permanent gases keep their gas data in a liquid-phase case, with a note.
    let l = s.screen_with("C=C.O>>CCO", DefaultPhase::Liquid).unwrap();
    assert!(
        l.balanced_equation.starts_with("ethene(g) + H2O(l) -> ethanol(l)"),
        "{}",
        l.balanced_equation
    );
    assert!(l.notes.iter().any(|n| n.contains("default phase is liquid")));
    // A solid-phase case: species that melt below 298.15 K keep their stable state (methanol
    // melts at 175 K, 1-heptene at 154 K), with a note; a tagged solid is estimated as one.
    let e = s.screen_with("CCCCCCCOC>>CCCCCC=C.CO", DefaultPhase::Solid).unwrap();
    assert!(e.balanced_equation.contains("methanol(l)"), "{}", e.balanced_equation);
    assert!(e.notes.iter().any(|n| n.contains("asked as a solid")), "{:?}", e.notes);
    // Acetanilide melts at 387 K: in a standard-state case it is the estimated solid.
    let a = s
        .screen_with("CC(=O)OC(C)=O.Nc1ccccc1>>CC(=O)Nc1ccccc1.CC(=O)O", DefaultPhase::Standard)
        .unwrap();
    assert!(a.balanced_equation.contains("acetanilide(s)"), "{}", a.balanced_equation);
}

#[test]
fn agents_are_recorded_not_balanced() {
    let mut s = screener();
    let r = s.screen_with("C=C.[H][H]>[Pd]>CC", DefaultPhase::Gas).unwrap();
    assert_eq!(r.agents, ["[Pd]"]);
    assert!(r.notes.iter().any(|n| n.contains("agents")));
    assert!(
        r.balanced_equation.starts_with("ethene(g) + H2(g) -> ethane(g)"),
        "{}",
        r.balanced_equation
    );
}

#[test]
fn smiles_errors_carry_positions() {
    let mut s = screener();
    let e = s.screen("CCO.C1CC>>CC").unwrap_err();
    assert!(matches!(&e, ScreenError::Smiles(x) if x.position == 5), "{e}");
    let e = s.screen("CCO>>CC[Xx]").unwrap_err();
    assert!(matches!(&e, ScreenError::Smiles(x) if x.position == 8), "{e}");
    let e = s.screen("CCO>>CS(C)=O").unwrap_err();
    assert!(matches!(&e, ScreenError::Species { position: 5, .. }), "{e}");
}
