//! Reaction thermodynamics against Cantera 3.2.0 evaluating the same NASA polynomials.
//! Reference values: `tests/reference/cantera_reactions.tsv`, written by
//! `scripts/gen_cantera_reference.py` (pinned versions in `scripts/requirements-data.txt`).
//! Tolerances (the data are the same, so only arithmetic may differ): 0.1 kJ/mol for ΔrH° and
//! ΔrG°, 0.01 in log10 K; ΔrS° to 0.1 J/(mol·K).

use std::collections::BTreeMap;
use thermosieve_engine::{species, Screener, TemperatureGrid};

struct Row {
    kind: String,
    equation: String,
    t: f64,
    dh: f64,
    ds: f64,
    dg: f64,
    log10_k: f64,
}

fn rows() -> BTreeMap<String, Vec<Row>> {
    let text = include_str!("reference/cantera_reactions.tsv");
    let mut out: BTreeMap<String, Vec<Row>> = BTreeMap::new();
    let mut lines = text.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty());
    let header: Vec<&str> = lines.next().expect("header row").split('\t').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap_or_else(|| panic!("column {name}"));
    let (id, kind, eq, t, dh, ds, dg, lk) = (
        col("id"),
        col("kind"),
        col("equation"),
        col("temperature_k"),
        col("delta_h_kj_per_mol"),
        col("delta_s_j_per_mol_k"),
        col("delta_g_kj_per_mol"),
        col("log10_k"),
    );
    for line in lines {
        let f: Vec<&str> = line.split('\t').collect();
        let num = |k: usize| f[k].parse::<f64>().unwrap_or_else(|_| panic!("number in {line}"));
        out.entry(f[id].to_string()).or_default().push(Row {
            kind: f[kind].to_string(),
            // The generator writes isomers by their Cantera record names or bare formulas; the
            // engine's syntax names them (the record is then found by structure), as a molecular
            // formula that fits several known compounds (C7H8) is refused.
            equation: f[eq].replace("C6H12,cyclo-", "cyclohexane").replace("C7H8(", "toluene("),
            t: num(t),
            dh: num(dh),
            ds: num(ds),
            dg: num(dg),
            log10_k: num(lk),
        });
    }
    out
}

#[test]
fn reactions_match_cantera_on_the_same_polynomials() {
    let all = rows();
    assert!(all.len() >= 25, "need at least 25 reactions, have {}", all.len());
    let mut kinds: Vec<&str> = all.values().map(|r| r[0].kind.as_str()).collect();
    kinds.sort_unstable();
    kinds.dedup();
    for k in ["combustion", "hydrogenation", "oxidation", "decomposition", "solids", "liquids"] {
        assert!(kinds.contains(&k), "no {k} reactions in the reference set");
    }
    let mut failures = Vec::new();
    let mut crossings = 0;
    for (id, rs) in &all {
        assert!(rs.len() >= 3, "{id}: fewer than 3 temperatures");
        let grid = TemperatureGrid::new(rs.iter().map(|r| r.t).collect()).expect("grid");
        let mut screener = Screener::new(species::bundled(), grid);
        // The reference equations are balanced as written: checking them must accept them.
        let s = match screener.screen(&rs[0].equation) {
            Ok(s) => s,
            Err(e) => {
                failures.push(format!("{id}: {e}"));
                continue;
            }
        };
        for (r, p) in rs.iter().zip(&s.points) {
            let checks = [
                ("dH", p.delta_h_kj_per_mol, r.dh, 0.1),
                ("dS", p.delta_s_j_per_mol_k, r.ds, 0.1),
                ("dG", p.delta_g_kj_per_mol, r.dg, 0.1),
                ("log10K", p.log10_k, r.log10_k, 0.01),
            ];
            for (what, got, want, tol) in checks {
                if (got - want).abs() > tol {
                    failures.push(format!("{id} at {} K: {what} {got} vs Cantera {want}", r.t));
                }
            }
            // Cantera checks only the data range; the engine also flags a liquid past its boiling
            // point, so a flag is expected exactly there.
            let past_transition = s.species.iter().any(|sp| sp.species.transition_k.is_some_and(|tt| tt < r.t));
            if p.in_valid_range == past_transition {
                failures.push(format!(
                    "{id} at {} K: in_valid_range = {} but past a phase change = {past_transition}",
                    r.t, p.in_valid_range
                ));
            }
        }
        // Where Cantera's ΔrG° changes sign between two reference temperatures (and not before),
        // the engine's ΔrG° = 0 temperature must lie between them.
        if let Some(w) = rs.windows(2).find(|w| w[0].dg.signum() != w[1].dg.signum()) {
            crossings += 1;
            match s.delta_g_zero_k {
                Some(t0) if t0 >= w[0].t && t0 <= w[1].t => {}
                other => failures.push(format!(
                    "{id}: ΔrG° = 0 at {other:?}, Cantera's sign changes between {} and {} K",
                    w[0].t, w[1].t
                )),
            }
        }
        // The same reaction with its coefficients left out must balance to the same equation.
        let bare: String = rs[0]
            .equation
            .split(' ')
            .filter(|w| w.parse::<u32>().is_err())
            .collect::<Vec<_>>()
            .join(" ");
        match screener.screen(&bare) {
            Ok(b) => assert_eq!(b.balanced_equation, s.balanced_equation, "{id}: balancing {bare}"),
            Err(e) => failures.push(format!("{id}: balancing {bare}: {e}")),
        }
    }
    assert!(failures.is_empty(), "{} mismatches:\n{}", failures.len(), failures.join("\n"));
    assert!(crossings >= 3, "only {crossings} reference reactions change the sign of ΔrG°");
}

#[test]
fn formation_enthalpies_against_codata_key_values() {
    // CODATA Key Values for Thermodynamics (Cox, Wagman & Medvedev, 1989), from memory:
    // ΔfH°(H2O, l, 298.15 K) = −285.830 ± 0.040 kJ/mol; ΔfH°(CO2, g) = −393.51 ± 0.13 kJ/mol.
    let mut s = Screener::new(species::bundled(), TemperatureGrid::new(vec![298.15]).unwrap());
    let water = s.screen("H2(g) + 1/2 O2(g) -> H2O(l)").unwrap();
    assert!(
        (water.standard.delta_h_kj_per_mol - -285.830).abs() < 0.040,
        "{}",
        water.standard.delta_h_kj_per_mol
    );
    let co2 = s.screen("C(gr) + O2(g) -> CO2(g)").unwrap();
    assert!(
        (co2.standard.delta_h_kj_per_mol - -393.51).abs() < 0.13,
        "{}",
        co2.standard.delta_h_kj_per_mol
    );
}

#[test]
fn boiling_points_from_the_data() {
    // Normal boiling points (from memory): water 373.12 K at 1 atm, 372.76 K at 1 bar (IAPWS-95);
    // bromine 332.0 K (CRC Handbook). The data's liquid/gas pair must put ΔrG° = 0 there, and the
    // liquid's phase change must be found at the same temperature.
    let mut s = Screener::new(species::bundled(), TemperatureGrid::new(vec![298.15, 400.0]).unwrap());
    for (eq, want, tol) in [("H2O(l) -> H2O(g)", 372.76, 1.0), ("Br2(l) -> Br2(g)", 332.0, 1.5)] {
        let r = s.screen(eq).unwrap();
        let t0 = r.delta_g_zero_k.expect("a crossing");
        assert!((t0 - want).abs() < tol, "{eq}: {t0}");
        let tb = r.species[0].species.transition_k.expect("the liquid boils");
        assert!((tb - t0).abs() < 0.05, "{eq}: transition {tb} vs ΔrG° = 0 at {t0}");
        assert!(
            r.points[0].in_valid_range && !r.points[1].in_valid_range,
            "{eq}: 400 K must be flagged"
        );
    }
}
