//! Property tests of balancing: conservation is exact, and scaling written coefficients changes
//! nothing but the scale.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use proptest::prelude::*;
use thermosieve_engine::balance::{self, Column, Side};
use thermosieve_engine::formula::{parse_species, Formula};
use thermosieve_engine::rational::Rational;

const POOL: [&str; 24] = [
    "H2", "O2", "H2O", "CO", "CO2", "CH4", "C2H6", "C3H8", "N2", "NH3", "NO", "NO2", "HNO3", "Fe", "Fe2O3", "Fe3O4", "Al", "Al2O3", "H+",
    "OH-", "Fe+2", "Fe+3", "e-", "MnO4-",
];

fn formula(s: &str) -> Formula {
    parse_species(s, 0).unwrap().formula.unwrap()
}

fn conserved(cols: &[Column], coefficients: &[Rational]) -> bool {
    let mut zs: Vec<u8> = cols.iter().flat_map(|c| c.formula.atoms.iter().map(|a| a.0)).collect();
    zs.sort_unstable();
    zs.dedup();
    let net = |amount: &dyn Fn(&Formula) -> i128| -> Rational {
        cols.iter().zip(coefficients).fold(Rational::ZERO, |acc, (c, k)| {
            let sign = if c.side == Side::Product { 1 } else { -1 };
            acc.checked_add(Rational::integer(sign * amount(c.formula)).checked_mul(*k).unwrap())
                .unwrap()
        })
    };
    zs.iter().all(|&z| net(&|f| f.count(z) as i128).is_zero()) && net(&|f| f.charge as i128).is_zero()
}

proptest! {
    #[test]
    fn balanced_results_conserve_every_element_and_charge(
        picks in proptest::collection::btree_set(0usize..POOL.len(), 2..6),
        split in 1usize..5,
    ) {
        let names: Vec<&str> = picks.iter().map(|&i| POOL[i]).collect();
        let split = split.min(names.len() - 1);
        let formulas: Vec<Formula> = names.iter().map(|n| formula(n)).collect();
        let cols: Vec<Column> = names
            .iter()
            .zip(&formulas)
            .enumerate()
            .map(|(i, (n, f))| Column { label: n, formula: f, side: if i < split { Side::Reactant } else { Side::Product } })
            .collect();
        if let Ok(b) = balance::balance(&cols) {
            prop_assert!(b.coefficients.iter().all(|c| c.signum() > 0));
            prop_assert!(conserved(&cols, &b.coefficients), "{names:?} -> {:?}", b.coefficients);
            // Smallest integers: their gcd is 1.
            let g = b.coefficients.iter().fold(0i128, |g, c| thermosieve_engine::rational::gcd_i128(g, c.numer()));
            prop_assert_eq!(g, 1);
            // Scaling the written coefficients changes nothing but the scale.
            for k in [2i128, 3, 7] {
                let scaled: Vec<Rational> = b.coefficients.iter().map(|c| c.checked_mul(Rational::integer(k)).unwrap()).collect();
                let checked = balance::check(&cols, &scaled).unwrap();
                prop_assert_eq!(checked.coefficients, scaled);
            }
        }
    }
}

#[test]
fn known_reactions_balance_and_conserve() {
    // Standard redox and combustion equations: their unique smallest-integer answers (checked by hand: each element and the charge sum to zero).
    let cases: [(&[&str], &[&str], &[i128]); 3] = [
        (&["C2H6", "O2"], &["CO2", "H2O"], &[2, 7, 4, 6]),
        (&["Cu", "HNO3"], &["Cu(NO3)2", "NO", "H2O"], &[3, 8, 3, 2, 4]),
        (&["Cr2O7^2-", "Fe+2", "H+"], &["Cr+3", "Fe+3", "H2O"], &[1, 6, 14, 2, 6, 7]),
    ];
    for (r, p, want) in cases {
        let fs: Vec<Formula> = r.iter().chain(p).map(|s| formula(s)).collect();
        let labels: Vec<&str> = r.iter().chain(p).copied().collect();
        let cols: Vec<Column> = (0..fs.len())
            .map(|i| Column {
                label: labels[i],
                formula: &fs[i],
                side: if i < r.len() { Side::Reactant } else { Side::Product },
            })
            .collect();
        let b = balance::balance(&cols).unwrap();
        let got: Vec<i128> = b.coefficients.iter().map(|c| c.numer()).collect();
        assert_eq!(got, want, "{labels:?}");
        assert!(conserved(&cols, &b.coefficients));
    }
}

#[test]
fn exhaustive_small_sets_conserve_and_some_balance() {
    // Every 3- and 4-species selection of the pool with every split: whatever balances must
    // conserve exactly; enough must balance for the property above to mean something.
    let fs: Vec<Formula> = POOL.iter().map(|s| formula(s)).collect();
    let n = POOL.len();
    let mut balanced = 0;
    let mut sets: Vec<Vec<usize>> = Vec::new();
    for a in 0..n {
        for b in a + 1..n {
            for c in b + 1..n {
                sets.push(vec![a, b, c]);
                for d in c + 1..n {
                    sets.push(vec![a, b, c, d]);
                }
            }
        }
    }
    for set in &sets {
        for split in 1..set.len() {
            let cols: Vec<Column> = set
                .iter()
                .enumerate()
                .map(|(i, &k)| Column {
                    label: POOL[k],
                    formula: &fs[k],
                    side: if i < split { Side::Reactant } else { Side::Product },
                })
                .collect();
            if let Ok(b) = balance::balance(&cols) {
                balanced += 1;
                assert!(conserved(&cols, &b.coefficients), "{set:?}");
            }
        }
    }
    assert!(balanced >= 30, "only {balanced} selections balanced");
}
