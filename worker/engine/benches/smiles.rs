//! SMILES species on one core: parse + canonical identity + estimate (Benson's groups for the
//! ideal gas where they cover the molecule, Joback's for the rest and for Tb, Tc, Pc) for
//! molecules seen for the first time (the 1,489 PubChem molecules of `tests/reference/joback_thermo.tsv`), each
//! step alone, and reaction SMILES through a Screener whose cache already holds their species
//! (the batch case: repeated species cost a hash lookup by text).

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::hint::black_box;
use thermosieve_engine::benson::Benson;
use thermosieve_engine::joback::Estimate;
use thermosieve_engine::smiles::Molecule;
use thermosieve_engine::structures::DefaultPhase;
use thermosieve_engine::{species, Screener, TemperatureGrid};

fn molecules() -> Vec<String> {
    let text = include_str!("../tests/reference/joback_thermo.tsv");
    let mut lines = text.lines().filter(|l| !l.starts_with('#'));
    let header: Vec<&str> = lines.next().expect("header").split('\t').collect();
    let c = header.iter().position(|h| *h == "smiles").expect("smiles column");
    lines.map(|l| l.split('\t').nth(c).expect("smiles").to_string()).collect()
}

const REACTIONS: [&str; 8] = [
    "CCO.O=O>>CC(=O)O.O",
    "CCOC(C)=O.O>>CC(=O)O.CCO",
    "c1ccccc1.[H][H]>>C1CCCCC1",
    "CC(=O)Cl.OCC>>CC(=O)OCC.Cl",
    "C=CC(=O)OC.[H][H]>[Pd]>CCC(=O)OC",
    "Nc1ccccc1.CC(=O)OC(C)=O>>CC(=O)Nc1ccccc1.CC(=O)O",
    "CC(C)=O.[H][H]>>CC(C)O",
    "O=C(O)c1ccccc1.OC>>COC(=O)c1ccccc1.O",
];

fn bench(c: &mut Criterion) {
    let smiles = molecules();
    let mut g = c.benchmark_group("smiles_unseen");
    g.throughput(Throughput::Elements(smiles.len() as u64));
    g.bench_function("parse", |b| {
        b.iter(|| {
            for s in &smiles {
                black_box(Molecule::parse(black_box(s), 0).ok());
            }
        })
    });
    let parsed: Vec<Molecule> = smiles
        .iter()
        .map(|s| Molecule::parse(s, 0).expect("reference SMILES parse"))
        .collect();
    // A molecule keeps its ranking once computed (the estimate's symmetry number reuses it), so
    // the key is timed with the parse it follows.
    g.bench_function("parse_canonical_key", |b| {
        b.iter(|| {
            for s in &smiles {
                let m = Molecule::parse(black_box(s), 0).expect("parse");
                black_box(m.canonical_key());
            }
        })
    });
    // Benson's symmetry number reuses the canonical ranking the identity step made (the parsed
    // molecules above were ranked once, in the first iterations, as in the engine's path).
    g.bench_function("benson", |b| {
        b.iter(|| {
            for m in &parsed {
                black_box(Benson::of(m).ok());
            }
        })
    });
    g.bench_function("estimate_benson_and_joback", |b| {
        b.iter(|| {
            for m in &parsed {
                black_box(Estimate::of(m).ok());
            }
        })
    });
    g.bench_function("parse_identity_estimate", |b| {
        b.iter(|| {
            for s in &smiles {
                let m = Molecule::parse(black_box(s), 0).expect("parse");
                black_box(m.canonical_key());
                black_box(Estimate::of(&m).ok());
            }
        })
    });
    g.finish();

    let mut screener = Screener::new(species::bundled(), TemperatureGrid::default_process());
    screener.set_default_phase(DefaultPhase::Standard);
    for r in REACTIONS {
        screener.screen(r).unwrap_or_else(|e| panic!("{r}: {e}"));
    }
    let mut g = c.benchmark_group("reaction_smiles_cached");
    g.throughput(Throughput::Elements(REACTIONS.len() as u64));
    g.bench_function("screen_15_temperatures", |b| {
        b.iter(|| {
            for r in REACTIONS {
                black_box(screener.screen(black_box(r)).ok());
            }
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
