//! Identity by structure: the canonical key does not depend on atom order or on how the SMILES
//! is written. Property test over the molecules of `tests/reference/smiles_rdkit.tsv` (PubChem
//! SMILES bundled in chemicals 1.5.2): permute the atoms of the parsed graph, and write the graph
//! back as SMILES in a random atom order and read it again; the key must not change.

mod common;
use common::Tsv;
use proptest::prelude::*;
use std::sync::OnceLock;
use thermosieve_engine::smiles::Molecule;

fn molecules() -> &'static Vec<Molecule> {
    static M: OnceLock<Vec<Molecule>> = OnceLock::new();
    M.get_or_init(|| {
        let t = Tsv::parse(include_str!("reference/smiles_rdkit.tsv"));
        let c = t.col("smiles");
        t.rows.iter().filter_map(|r| Molecule::parse(&r[c], 0).ok()).collect()
    })
}

/// A permutation of 0..n from a seed (Fisher–Yates with SplitMix64).
fn permutation(n: usize, mut seed: u64) -> Vec<usize> {
    let mut next = || {
        seed = seed.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = seed;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    };
    let mut p: Vec<usize> = (0..n).collect();
    for i in (1..n).rev() {
        let j = (next() % (i as u64 + 1)) as usize;
        p.swap(i, j);
    }
    p
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 2000, ..ProptestConfig::default() })]

    #[test]
    fn key_is_invariant_under_atom_order(index in 0usize..100_000, seed in any::<u64>()) {
        let all = molecules();
        let m = &all[index % all.len()];
        let key = m.canonical_key();
        let perm = permutation(m.atoms().len(), seed);
        prop_assert_eq!(&m.permuted(&perm).canonical_key(), &key);
        let rank: Vec<u32> = perm.iter().map(|&p| p as u32).collect();
        let written = m.write_smiles(&rank);
        let back = Molecule::parse(&written, 0).map_err(|e| TestCaseError::fail(format!("{written}: {e}")))?;
        prop_assert_eq!(back.canonical_key(), key, "{}", written);
        prop_assert_eq!(back.formula(), m.formula());
    }
}

#[test]
fn many_molecules_are_distinct() {
    // Different PubChem compounds (stereoisomers aside) should mostly have different keys; equal
    // keys must at least have equal formulas.
    let all = molecules();
    let mut seen = std::collections::HashMap::new();
    for m in all {
        if let Some(f) = seen.insert(m.canonical_key(), m.formula()) {
            assert_eq!(f, m.formula());
        }
    }
    assert!(
        seen.len() as f64 > 0.95 * all.len() as f64,
        "{} keys for {} molecules",
        seen.len(),
        all.len()
    );
}
