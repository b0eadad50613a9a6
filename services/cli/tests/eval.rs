//! The `eval` command as a user runs it.

use std::process::Command;

fn eval(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_thermosieve"))
        .arg("eval")
        .args(args)
        .output()
        .expect("run thermosieve");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn thermite_is_balanced_tabulated_and_cautioned() {
    let (code, out, err) = eval(&["Al(cr) + Fe2O3(s) -> Al2O3(s) + Fe(cr)", "--temperatures-k", "298.15,600,900"]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("2 Al(s) + Fe2O3(s) -> Al2O3(s) + 2 Fe(s)"), "{out}");
    // ΔrH°(298.15 K) from the NASA data (Cantera 3.2.0 gives -850.39 kJ/mol on the same
    // polynomials; see worker/engine/tests/reference/cantera_reactions.tsv).
    assert!(out.contains("ΔrH° = -850.39 kJ/mol"), "{out}");
    for t in ["298.15", "600.00", "900.00"] {
        assert!(out.contains(t), "{t} missing:\n{out}");
    }
    assert!(out.contains("NASA thermo data"), "{out}");
    assert!(out.contains("confirm thermal hazards by reaction calorimetry"), "{out}");
}

#[test]
fn bad_input_names_the_position_and_exits_3() {
    let (code, _, err) = eval(&["2 H2 + O2 -> 2 H2Q"]);
    assert_eq!(code, 3);
    assert!(err.contains("at byte 17: unknown element symbol 'Q'"), "{err}");
    assert!(err.contains("                 ^"), "{err}");
    let (code, _, err) = eval(&["H2O", "--temperatures-k", "298.15,-4"]);
    assert_eq!(code, 2);
    assert!(err.contains("position 1"), "{err}");
}

#[test]
fn process_options_print_the_heat_budget() {
    let (code, out, err) = eval(&[
        "N2(g) + 3 H2(g) -> 2 NH3(g)",
        "--process-temperature-c",
        "326.85",
        "--scale-mol",
        "100",
        "--reaction-mass-kg",
        "10",
        "--cp-kj-per-kg-k",
        "2.0",
        "--mtt-c",
        "400",
        "--t-d24-c",
        "500",
    ]);
    assert_eq!(code, 0, "{err}");
    // ΔrH°(600 K) = −102.918 kJ/mol from the NASA data, per Cantera 3.2.0
    // (worker/engine/tests/reference/cantera_reactions.tsv, ammonia_synthesis at 600 K):
    // Q = 100 mol × 102.918 kJ/mol = 10291.8 kJ; ΔT_ad = 10291.8 / (10 kg × 2.0) = 514.6 K.
    assert!(out.contains("adiabatic rise 514.6 K"), "{out}");
    // MTT 673 K < T_D24 773 K < MTSR 1114.6 K: class 4 in the scheme of process.rs.
    assert!(out.contains("criticality class 4"), "{out}");
    assert!(
        out.trim_end()
            .ends_with("licensed professional judgement. Estimated data can be wrong by tens of kJ/mol."),
        "{out}"
    );
}

/// ΔrH°(298.15 K) printed by `eval`, kJ/mol.
fn delta_h(out: &str) -> f64 {
    let rest = out.split("ΔrH° = ").nth(1).unwrap_or_else(|| panic!("no ΔrH° in\n{out}"));
    rest.split_whitespace()
        .next()
        .and_then(|v| v.parse().ok())
        .unwrap_or_else(|| panic!("bad ΔrH° in\n{out}"))
}

#[test]
fn the_phase_option_sets_the_state_of_smiles_species() {
    // Ethanol combustion from ATcT 1.112 ΔfH° (chemicals 1.5.2 'ATcT 1.112 (g).tsv', '(l).tsv'):
    // all gas −1277.8 kJ/mol; ethanol and water liquid (O2, CO2 stay gases) −1367.4 kJ/mol.
    let burn = "CCO.O=O.O=O.O=O>>O=C=O.O=C=O.O.O.O";
    for (phase, want) in [("gas", -1277.8), ("liquid", -1367.4)] {
        let (code, out, err) = eval(&[burn, "--phase", phase]);
        assert_eq!(code, 0, "{err}");
        assert!((delta_h(&out) - want).abs() < 0.6, "{phase}: {out}");
    }
    let (code, _, err) = eval(&[burn, "--phase", "plasma"]);
    assert_eq!(code, 2, "{err}");
}

#[test]
fn eval_shows_decomposition_heats_and_energetic_groups() {
    // Nitrobenzene(l) in its bundled record (ChemSep v8.3: ΔfH°(g) 67.500 − ΔvapH 55.949 =
    // 11.551 kJ/mol) decomposes at most to 2 H2O(l) (NASA −285.83) + 0.5 H2 + 0.5 N2 + 6 C(gr):
    // 11.551 + 571.66 = 583.2 kJ/mol. The mass after the reduction is aniline and water:
    // aniline(l) (ChemSep 87.100 − 55.107 = 31.993 kJ/mol) per 129.16 g of reactants = 248 kJ/kg.
    let (code, out, err) = eval(&[
        "nitrobenzene(l) + 3 H2(g) -> aniline(l) + 2 water(l)",
        "--process-temperature-c",
        "40",
    ]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("maximum decomposition heat 583.2 kJ/mol"), "{out}");
    assert!(out.contains("energetic groups: N-O"), "{out}");
    assert!(
        out.contains("decomposition of the mass after reaction (maximum): 248 kJ/kg"),
        "{out}"
    );
}
