//! Equilibrium conversion from a stoichiometric feed against Cantera 3.2.0's Gibbs minimiser on
//! the same NASA polynomials. Reference values: `tests/reference/cantera_equilibrium.tsv`, written
//! by `scripts/gen_cantera_equilibrium.py` (an ideal-gas Solution of only the reaction's species,
//! `equilibrate("TP")`, standard state 1 bar). Tolerance: 0.005 in conversion.

use thermosieve_engine::process::{equilibrium_conversion, Assessment};
use thermosieve_engine::{species, Screener, TemperatureGrid};

struct Row {
    id: String,
    equation: String,
    inert_mol: f64,
    t: f64,
    p_bar: f64,
    log10_k: f64,
    conversion: f64,
}

fn rows() -> Vec<Row> {
    let text = include_str!("reference/cantera_equilibrium.tsv");
    let mut lines = text.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty());
    let header: Vec<&str> = lines.next().expect("header row").split('\t').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap_or_else(|| panic!("column {name}"));
    let (id, eq, inert, t, p, lk, x) = (
        col("id"),
        col("equation"),
        col("inert_mol_per_mol_reaction"),
        col("temperature_k"),
        col("pressure_bar"),
        col("log10_k"),
        col("conversion"),
    );
    lines
        .map(|line| {
            let f: Vec<&str> = line.split('\t').collect();
            let num = |k: usize| f[k].parse::<f64>().unwrap_or_else(|_| panic!("number in {line}"));
            Row {
                id: f[id].to_string(),
                equation: f[eq].to_string(),
                inert_mol: num(inert),
                t: num(t),
                p_bar: num(p),
                log10_k: num(lk),
                conversion: num(x),
            }
        })
        .collect()
}

#[test]
fn conversions_match_cantera_equilibrate() {
    let all = rows();
    let mut reactions: Vec<&str> = all.iter().map(|r| r.id.as_str()).collect();
    reactions.dedup();
    assert!(reactions.len() >= 5, "need at least 5 reactions, have {}", reactions.len());
    let mut screener = Screener::new(species::bundled(), TemperatureGrid::default_process());
    let mut failures = Vec::new();
    let mut max_dev: f64 = 0.0;
    for r in &all {
        let s = screener.screen(&r.equation).unwrap_or_else(|e| panic!("{}: {e}", r.id));
        let got = match equilibrium_conversion(&s, r.t, r.p_bar, r.inert_mol) {
            Assessment::Assessed(c) => c,
            Assessment::NotAssessed { reason, .. } => panic!("{}: {reason}", r.id),
        };
        assert!(got.note.is_none(), "{} at {} K: {:?}", r.id, r.t, got.note);
        let dev = (got.conversion - r.conversion).abs();
        max_dev = max_dev.max(dev);
        // Cantera: conversion to 0.005; log10 K from the same polynomials to 0.01.
        if dev > 0.005 {
            failures.push(format!(
                "{} at {} K, {} bar: {} vs Cantera {}",
                r.id, r.t, r.p_bar, got.conversion, r.conversion
            ));
        }
        let lk = thermosieve_engine::process::point_at(&s, r.t).log10_k;
        if (lk - r.log10_k).abs() > 0.01 {
            failures.push(format!("{} at {} K: log10 K {lk} vs Cantera {}", r.id, r.t, r.log10_k));
        }
    }
    eprintln!("max |conversion - Cantera| over {} rows: {max_dev:.3e}", all.len());
    assert!(failures.is_empty(), "{} mismatches:\n{}", failures.len(), failures.join("\n"));
}
