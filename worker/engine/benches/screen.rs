//! Parse + balance + resolve + thermodynamics at 15 temperatures for typical tabulated reactions
//! of 3–6 species, on one core, as a batch sees them (the species cache warm after first sight).
//! Half the reactions come without coefficients, so balancing runs as well as checking.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::hint::black_box;
use thermosieve_engine::{species, Screener, TemperatureGrid};

include!("shared/reactions.rs");

fn bench(c: &mut Criterion) {
    let table = species::bundled();
    let mut screener = Screener::new(table, TemperatureGrid::default_process());
    for r in REACTIONS {
        screener.screen(r).unwrap_or_else(|e| panic!("{r}: {e}"));
    }
    let mut g = c.benchmark_group("screen");
    g.throughput(Throughput::Elements(REACTIONS.len() as u64));
    g.bench_function("tabulated_reactions_15_temperatures", |b| {
        b.iter(|| {
            for r in REACTIONS {
                black_box(screener.screen(black_box(r)).ok());
            }
        })
    });
    g.finish();
    c.bench_function("bundled_table_parse", |b| {
        b.iter(|| {
            black_box(species::Table::from_tsv(black_box(include_str!("../data/nasa_species.tsv")), "bench").map(|t| t.records.len()))
        })
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
