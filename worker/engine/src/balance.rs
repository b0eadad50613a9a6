//! Balancing: the element-by-species matrix (plus a charge row when any species is charged) and its
//! exact null space. Integer (fraction-free) Gauss–Jordan elimination in `i128` with checked
//! arithmetic and row-gcd reduction, so no float ever decides a coefficient.
//!
//! Outcomes: already balanced, balanced (smallest positive integers), impossible, underdetermined
//! (null space of dimension > 1, reported with a basis of independent reactions), or written
//! coefficients that do not balance (reported with the residual per element and charge; never
//! silently changed).

use crate::elements::{self, Z};
use crate::formula::Formula;
use crate::rational::{gcd_i128, Rational};

/// Which side of the arrow a species stands on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Side {
    Reactant,
    Product,
}

impl Side {
    fn sign(self) -> i128 {
        match self {
            Side::Reactant => -1,
            Side::Product => 1,
        }
    }
}

/// One distinct species of the reaction.
#[derive(Clone, Copy, Debug)]
pub struct Column<'a> {
    pub label: &'a str,
    pub formula: &'a Formula,
    pub side: Side,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Outcome {
    /// The written (or unit) coefficients conserve every element and the charge.
    AlreadyBalanced,
    /// Coefficients were found.
    Balanced,
}

/// Positive coefficients, one per column, and how they came about.
#[derive(Clone, Debug, PartialEq)]
pub struct Balance {
    pub outcome: Outcome,
    pub coefficients: Vec<Rational>,
}

/// A reaction with no unique set of positive coefficients.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum BalanceError {
    #[error("cannot be balanced: {reason}")]
    Impossible { reason: String },
    #[error("underdetermined: {} independent reactions fit these species ({}); write the coefficients you mean", basis.len(), basis.join("; "))]
    Underdetermined {
        /// Each independent reaction written out as an equation.
        basis: Vec<String>,
    },
    #[error("the written coefficients do not balance: {}", describe_residual(residual))]
    NotBalanced {
        /// Products minus reactants, per element symbol or `charge`; only nonzero entries.
        residual: Vec<(String, Rational)>,
    },
    #[error("coefficients too large to balance exactly")]
    Overflow,
}

fn describe_residual(r: &[(String, Rational)]) -> String {
    let parts: Vec<String> = r
        .iter()
        .map(|(k, v)| {
            let side = if v.signum() > 0 {
                "more on the product side"
            } else {
                "more on the reactant side"
            };
            let abs = if v.signum() < 0 { v.checked_neg().unwrap_or(*v) } else { *v };
            format!("{k}: {abs} {side}")
        })
        .collect();
    parts.join(", ")
}

/// The element-by-species matrix (a charge row last when any species is charged), row-major,
/// entries signed: negative for reactants.
struct Matrix {
    keys: Vec<Z>,
    charged: bool,
    cols: usize,
    a: Vec<i128>,
}

impl Matrix {
    fn new(columns: &[Column]) -> Matrix {
        let mut keys: Vec<Z> = Vec::with_capacity(8);
        for c in columns {
            for &(z, _) in &c.formula.atoms {
                if let Err(k) = keys.binary_search(&z) {
                    keys.insert(k, z);
                }
            }
        }
        let charged = columns.iter().any(|c| c.formula.charge != 0);
        let cols = columns.len();
        let mut a = Vec::with_capacity((keys.len() + 1) * cols);
        for &z in &keys {
            a.extend(columns.iter().map(|c| c.side.sign() * c.formula.count(z) as i128));
        }
        if charged {
            a.extend(columns.iter().map(|c| c.side.sign() * c.formula.charge as i128));
        }
        Matrix { keys, charged, cols, a }
    }

    fn rows(&self) -> usize {
        self.keys.len() + usize::from(self.charged)
    }

    fn row(&self, i: usize) -> &[i128] {
        &self.a[i * self.cols..(i + 1) * self.cols]
    }

    fn key(&self, i: usize) -> String {
        match self.keys.get(i) {
            Some(&z) => elements::symbol(z).to_string(),
            None => "charge".to_string(),
        }
    }

    /// Products minus reactants per row for positive coefficients; only nonzero rows.
    fn residual(&self, coefficients: &[Rational]) -> Result<Vec<(String, Rational)>, BalanceError> {
        let ov = BalanceError::Overflow;
        let mut out = Vec::new();
        let integral = coefficients.iter().all(|c| c.is_integer());
        for i in 0..self.rows() {
            let row = self.row(i);
            let sum = if integral {
                let mut n: i128 = 0;
                for (&a, k) in row.iter().zip(coefficients) {
                    n = n.checked_add(a.checked_mul(k.numer()).ok_or(ov.clone())?).ok_or(ov.clone())?;
                }
                Rational::integer(n)
            } else {
                let mut sum = Rational::ZERO;
                for (&a, &k) in row.iter().zip(coefficients) {
                    let term = Rational::integer(a).checked_mul(k).map_err(|_| ov.clone())?;
                    sum = sum.checked_add(term).map_err(|_| ov.clone())?;
                }
                sum
            };
            if !sum.is_zero() {
                out.push((self.key(i), sum));
            }
        }
        Ok(out)
    }

    /// True when unit coefficients conserve every row.
    fn balanced_with_ones(&self) -> bool {
        (0..self.rows()).all(|i| self.row(i).iter().sum::<i128>() == 0)
    }
}

/// Check written coefficients (one per column, all positive).
///
/// # Errors
/// `NotBalanced` with the residual when an element or the charge is not conserved.
pub fn check(columns: &[Column], coefficients: &[Rational]) -> Result<Balance, BalanceError> {
    let r = Matrix::new(columns).residual(coefficients)?;
    if r.is_empty() {
        Ok(Balance {
            outcome: Outcome::AlreadyBalanced,
            coefficients: coefficients.to_vec(),
        })
    } else {
        Err(BalanceError::NotBalanced { residual: r })
    }
}

/// Reduced row echelon form in integers, in place; returns the pivot column of each nonzero row
/// (rows past the last pivot are left zero).
fn row_reduce(m: &mut Matrix) -> Result<Vec<usize>, BalanceError> {
    let ov = || BalanceError::Overflow;
    let (rows, cols) = (m.rows(), m.cols);
    let mut pivots = Vec::with_capacity(rows);
    let mut r = 0;
    for col in 0..cols {
        let Some(p) = (r..rows).find(|&i| m.a[i * cols + col] != 0) else {
            continue;
        };
        if p != r {
            for j in 0..cols {
                m.a.swap(r * cols + j, p * cols + j);
            }
        }
        for i in 0..rows {
            if i == r || m.a[i * cols + col] == 0 {
                continue;
            }
            let (pa, pb) = (m.a[r * cols + col], m.a[i * cols + col]);
            let g = gcd_i128(pa, pb);
            let (fa, fb) = (pa / g, pb / g);
            let (pivot_row, row) = if i < r {
                let (lo, hi) = m.a.split_at_mut(r * cols);
                (&hi[..cols], &mut lo[i * cols..(i + 1) * cols])
            } else {
                let (lo, hi) = m.a.split_at_mut(i * cols);
                (&lo[r * cols..(r + 1) * cols], &mut hi[..cols])
            };
            let mut row_gcd = 0;
            for (x, &pv) in row.iter_mut().zip(pivot_row) {
                let v = x
                    .checked_mul(fa)
                    .ok_or_else(ov)?
                    .checked_sub(pv.checked_mul(fb).ok_or_else(ov)?)
                    .ok_or_else(ov)?;
                *x = v;
                row_gcd = gcd_i128(row_gcd, v);
            }
            if row_gcd > 1 {
                row.iter_mut().for_each(|v| *v /= row_gcd);
            }
        }
        pivots.push(col);
        r += 1;
        if r == rows {
            break;
        }
    }
    Ok(pivots)
}

/// Integer null-space basis vector for the free column `free[which]`, reduced to coprime entries.
fn null_vector(m: &Matrix, pivots: &[usize], free: &[usize], which: usize) -> Result<Vec<i128>, BalanceError> {
    let ov = || BalanceError::Overflow;
    let f = free[which];
    let mut l: i128 = 1;
    for (i, &pc) in pivots.iter().enumerate() {
        let p = m.row(i)[pc].abs();
        l = (l / gcd_i128(l, p)).checked_mul(p).ok_or_else(ov)?;
    }
    let mut x = vec![0i128; m.cols];
    x[f] = l;
    for (i, &pc) in pivots.iter().enumerate() {
        let row = m.row(i);
        x[pc] = (-row[f]).checked_mul(l / row[pc]).ok_or_else(ov)?;
    }
    let g = x.iter().fold(0, |g, &v| gcd_i128(g, v));
    if g > 1 {
        x.iter_mut().for_each(|v| *v /= g);
    }
    Ok(x)
}

fn write_reaction(columns: &[Column], x: &[i128]) -> String {
    let side = |positive: bool| -> String {
        let parts: Vec<String> = columns
            .iter()
            .zip(x)
            .filter(|(_, &v)| v != 0 && (v > 0) == positive)
            .map(|(c, &v)| {
                if v.abs() == 1 {
                    c.label.to_string()
                } else {
                    format!("{} {}", v.abs(), c.label)
                }
            })
            .collect();
        parts.join(" + ")
    };
    format!("{} -> {}", side(false), side(true))
}

/// Find the smallest positive integer coefficients.
///
/// # Errors
/// `Impossible`, `Underdetermined` or `Overflow` as described on [`BalanceError`].
pub fn balance(columns: &[Column]) -> Result<Balance, BalanceError> {
    let mut m = Matrix::new(columns);
    if m.balanced_with_ones() {
        return Ok(Balance {
            outcome: Outcome::AlreadyBalanced,
            coefficients: vec![Rational::ONE; columns.len()],
        });
    }
    let n = columns.len();
    let pivots = row_reduce(&mut m)?;
    let free: Vec<usize> = (0..n).filter(|c| !pivots.contains(c)).collect();
    match free.len() {
        0 => Err(BalanceError::Impossible {
            reason: "no coefficients conserve every element and the charge".into(),
        }),
        1 => {
            let mut x = null_vector(&m, &pivots, &free, 0)?;
            if x.iter().all(|&v| v <= 0) {
                x.iter_mut().for_each(|v| *v = -*v);
            }
            let zero: Vec<&str> = columns.iter().zip(&x).filter(|(_, &v)| v == 0).map(|(c, _)| c.label).collect();
            if !zero.is_empty() {
                return Err(BalanceError::Impossible {
                    reason: format!("{} cannot take part (its coefficient would be 0)", zero.join(", ")),
                });
            }
            let wrong: Vec<&str> = columns.iter().zip(&x).filter(|(_, &v)| v < 0).map(|(c, _)| c.label).collect();
            if !wrong.is_empty() {
                return Err(BalanceError::Impossible {
                    reason: format!("{} would have to be on the other side of the arrow", wrong.join(", ")),
                });
            }
            Ok(Balance {
                outcome: Outcome::Balanced,
                coefficients: x.into_iter().map(Rational::integer).collect(),
            })
        }
        k => {
            let mut basis = Vec::with_capacity(k);
            for i in 0..k {
                let x = null_vector(&m, &pivots, &free, i)?;
                basis.push(write_reaction(columns, &x));
            }
            Err(BalanceError::Underdetermined { basis })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::formula::parse_species;

    fn cols(reactants: &[&str], products: &[&str]) -> (Vec<String>, Vec<Formula>, Vec<Side>) {
        let mut labels = Vec::new();
        let mut fs = Vec::new();
        let mut sides = Vec::new();
        for (list, side) in [(reactants, Side::Reactant), (products, Side::Product)] {
            for s in list {
                labels.push(s.to_string());
                fs.push(parse_species(s, 0).unwrap().formula.unwrap());
                sides.push(side);
            }
        }
        (labels, fs, sides)
    }

    fn run(reactants: &[&str], products: &[&str]) -> Result<Balance, BalanceError> {
        let (l, f, s) = cols(reactants, products);
        let c: Vec<Column> = (0..l.len())
            .map(|i| Column {
                label: &l[i],
                formula: &f[i],
                side: s[i],
            })
            .collect();
        balance(&c)
    }

    fn ints(b: &Balance) -> Vec<i128> {
        b.coefficients.iter().map(|c| c.numer()).collect()
    }

    #[test]
    fn classic_equations() {
        assert_eq!(ints(&run(&["Al", "Fe2O3"], &["Al2O3", "Fe"]).unwrap()), [2, 1, 1, 2]);
        assert_eq!(ints(&run(&["C3H8", "O2"], &["CO2", "H2O"]).unwrap()), [1, 5, 3, 4]);
        assert_eq!(
            ints(&run(&["KMnO4", "HCl"], &["KCl", "MnCl2", "H2O", "Cl2"]).unwrap()),
            [2, 16, 2, 2, 8, 5]
        );
        // Charge row: MnO4- + Fe+2 + H+ -> Mn+2 + Fe+3 + H2O
        assert_eq!(
            ints(&run(&["MnO4-", "Fe+2", "H+"], &["Mn+2", "Fe+3", "H2O"]).unwrap()),
            [1, 5, 8, 1, 5, 4]
        );
        assert_eq!(ints(&run(&["Fe+3", "e-"], &["Fe+2"]).unwrap()), [1, 1, 1]);
        assert_eq!(run(&["CO", "H2O"], &["CO2", "H2"]).unwrap().outcome, Outcome::AlreadyBalanced);
    }

    #[test]
    fn impossible_and_underdetermined() {
        assert!(matches!(run(&["H2"], &["O2"]), Err(BalanceError::Impossible { .. })));
        let e = run(&["H2", "O2", "Ar"], &["H2O"]).unwrap_err();
        assert!(e.to_string().contains("Ar cannot take part"), "{e}");
        let e = run(&["H2O"], &["H2", "O2", "H2O2"]).unwrap_err();
        assert!(matches!(&e, BalanceError::Underdetermined { basis } if basis.len() == 2), "{e}");
    }

    #[test]
    fn written_coefficients_are_checked_not_changed() {
        let (l, f, s) = cols(&["H2", "O2"], &["H2O"]);
        let c: Vec<Column> = (0..3)
            .map(|i| Column {
                label: &l[i],
                formula: &f[i],
                side: s[i],
            })
            .collect();
        let ok = check(&c, &[Rational::integer(2), Rational::ONE, Rational::integer(2)]).unwrap();
        assert_eq!(ok.outcome, Outcome::AlreadyBalanced);
        let e = check(&c, &[Rational::ONE, Rational::ONE, Rational::ONE]).unwrap_err();
        assert_eq!(
            e,
            BalanceError::NotBalanced {
                residual: vec![("O".into(), Rational::integer(-1))]
            }
        );
        assert!(e.to_string().contains("O: 1 more on the reactant side"), "{e}");
    }
}
