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
