//! Compounds by name and CAS number: `nitrobenzene`, `acetic anhydride`, `propan-2-ol`, `98-95-3`.
//!
//! A name or CAS number is only a way to write a structure: it resolves to the compound's SMILES,
//! and from there the species is found like any SMILES species (bundled record by structure, else
//! an estimate). The table also carries melting and boiling points where an open source gives
//! them, which decide the stable state at 298.15 K, and tells which compounds share a formula,
//! so that a formula written alone is never taken for one of several isomers.
//!
//! The data are `data/names.tsv`, written by `scripts/gen_names.py` from the identifier tables
//! shipped in `chemicals` (derived from PubChem, public domain); melting and boiling points only
//! from openly licensed tables (origins and terms in `scripts/README-open-data.md`).
//!
//! The file is 3 MB with some 60,000 names: its rows are cut once (a few milliseconds; a worker
//! does it on a thread of its own as it starts) and each index is built the first time it is
//! asked for, so a run that never writes a name does not pay for the name index. Every column
//! the layout names must be in the header, even one whose cells are all empty.

use crate::smiles::Molecule;
use crate::tsv::{Column, DataError};
use std::borrow::Cow;
use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};

/// One compound of the name table (borrowed from the bundled file).
#[derive(Clone, Debug)]
pub struct Compound {
    pub smiles: &'static str,
    pub cas: &'static str,
    /// Formula as RDKit writes it: Hill order for carbon compounds (then the engine's own), but
    /// hydrogen first for the others; [`hill_key`] turns it into the engine's.
    pub formula: &'static str,
    names: &'static str,
    /// Normal melting point, K, with the table it comes from.
    pub melting_k: Option<(f64, &'static str)>,
    /// Normal boiling point, K, with the table it comes from.
    pub boiling_k: Option<(f64, &'static str)>,
}

impl Compound {
    /// Names, the preferred one first.
    pub fn names(&self) -> impl Iterator<Item = &'static str> {
        self.names.split('|').filter(|s| !s.is_empty())
    }

    /// The preferred name.
    pub fn name(&self) -> &'static str {
        self.names().next().unwrap_or(self.smiles)
    }
}

/// The name table, indexed on demand.
pub struct Names {
    compounds: Vec<Compound>,
    by_name: OnceLock<HashMap<Cow<'static, str>, usize>>,
    by_cas: OnceLock<HashMap<&'static str, usize>>,
    by_formula: OnceLock<HashMap<Cow<'static, str>, Vec<usize>>>,
    /// Canonical keys of the compounds of a formula, computed when a formula is first asked for.
    keys: Mutex<HashMap<usize, Option<String>>>,
    /// Header comment of the data file.
    pub provenance: String,
}

const NAMES_TSV: &str = include_str!("../data/names.tsv");

/// The bundled name table, cut into rows on first use.
pub fn bundled() -> &'static Names {
    static N: OnceLock<Names> = OnceLock::new();
    N.get_or_init(|| Names::from_tsv(NAMES_TSV).unwrap_or_else(|e| panic!("{e}")))
}

/// How names are compared: lower case, single spaces, typographic dashes and primes as ASCII.
pub fn normalise(name: &str) -> String {
    let mut out = String::with_capacity(name.len());
    for w in name.split_whitespace() {
        if !out.is_empty() {
            out.push(' ');
        }
        for c in w.chars() {
            match c {
                '‐' | '‑' | '‒' | '–' | '−' => out.push('-'),
                '′' | '’' => out.push('\''),
                c => out.extend(c.to_lowercase()),
            }
        }
    }
    out
}

/// The engine's Hill formula of a row: RDKit's text for carbon compounds (the same order), read
/// and rewritten for the others (RDKit puts hydrogen first where Hill's rule does not).
pub fn hill_key(formula: &'static str) -> Cow<'static, str> {
    let carbon = formula.starts_with('C') && !formula[1..].starts_with(|c: char| c.is_ascii_lowercase());
    if carbon {
        return Cow::Borrowed(formula);
    }
    crate::formula::parse_species(formula, 0)
        .ok()
        .and_then(|s| s.formula)
        .map_or(Cow::Borrowed(formula), |f| Cow::Owned(f.hill()))
}

/// Whether [`normalise`] would leave a name as it is.
fn is_normalised(n: &str) -> bool {
    !n.starts_with(' ') && !n.ends_with(' ') && !n.contains("  ") && n.chars().all(|c| c.is_ascii() && !c.is_ascii_uppercase() && c != '\t')
}

/// `98-95-3`: two to seven digits, two digits, one check digit.
pub fn looks_like_cas(s: &str) -> bool {
    // Called for every species token of a batch: no allocation.
    let digits = |p: &str, lengths: std::ops::RangeInclusive<usize>| lengths.contains(&p.len()) && p.bytes().all(|b| b.is_ascii_digit());
    let mut parts = s.split('-');
    matches!(
        (parts.next(), parts.next(), parts.next(), parts.next()),
        (Some(a), Some(b), Some(c), None) if digits(a, 2..=7) && digits(b, 2..=2) && digits(c, 1..=1)
    )
}

/// Whether a CAS number's check digit is right (weighted digit sum modulo 10).
pub fn cas_checksum_ok(s: &str) -> bool {
    let digits: Vec<u32> = s.bytes().filter(u8::is_ascii_digit).map(|b| (b - b'0') as u32).collect();
    let Some((&check, body)) = digits.split_last() else {
        return false;
    };
    let sum: u32 = body.iter().rev().enumerate().map(|(i, d)| (i as u32 + 1) * d).sum();
    sum % 10 == check
}

impl Names {
    /// Cut the `names.tsv` layout: `#` comments, a header, then rows with `smiles`, `cas`,
    /// `formula`, `names` (`|`-separated), `melting_k`, `melting_source`, `boiling_k`,
    /// `boiling_source`.
    ///
    /// # Errors
    /// [`crate::DataError`] naming the line for a malformed row.
    pub fn from_tsv(tsv: &'static str) -> Result<Names, DataError> {
        let table = crate::tsv::read(tsv, "names.tsv");
        let col = |name| table.column(name);
        let (smiles, cas, formula, names) = (col("smiles")?, col("cas")?, col("formula")?, col("names")?);
        let melting = (col("melting_k")?, col("melting_source")?);
        let boiling = (col("boiling_k")?, col("boiling_source")?);
        let mut compounds = Vec::new();
        for row in table.rows() {
            let point = |(v, src): (Column, Column)| -> Result<Option<(f64, &'static str)>, DataError> {
                let t = row.at(v)?;
                if t.is_empty() {
                    return Ok(None);
                }
                let value = t.parse().map_err(|_| row.error(&format!("bad number in {}", v.name())))?;
                Ok(Some((value, row.at(src)?)))
            };
            compounds.push(Compound {
                smiles: row.at(smiles)?,
                cas: row.at(cas)?,
                formula: row.at(formula)?,
                names: row.at(names)?,
                melting_k: point(melting)?,
                boiling_k: point(boiling)?,
            });
        }
        let provenance = table.comments;
        Ok(Names {
            compounds,
            by_name: OnceLock::new(),
            by_cas: OnceLock::new(),
            by_formula: OnceLock::new(),
            keys: Mutex::new(HashMap::new()),
            provenance,
        })
    }

    pub fn len(&self) -> usize {
        self.compounds.len()
    }

    pub fn is_empty(&self) -> bool {
        self.compounds.is_empty()
    }

    /// Every compound, in file order.
    pub fn compounds(&self) -> &[Compound] {
        &self.compounds
    }

    fn by_name(&self) -> &HashMap<Cow<'static, str>, usize> {
        self.by_name.get_or_init(|| {
            let mut m = HashMap::with_capacity(6 * self.compounds.len());
            for (k, c) in self.compounds.iter().enumerate() {
                for n in c.names() {
                    // The file's names are mostly written as compared already: borrow those.
                    let key = if is_normalised(n) {
                        Cow::Borrowed(n)
                    } else {
                        Cow::Owned(normalise(n))
                    };
                    // The generator drops names given to two compounds; first wins regardless.
                    m.entry(key).or_insert(k);
                }
            }
            m
        })
    }

    fn by_formula(&self) -> &HashMap<Cow<'static, str>, Vec<usize>> {
        self.by_formula.get_or_init(|| {
            let mut m: HashMap<Cow<'static, str>, Vec<usize>> = HashMap::with_capacity(self.compounds.len());
            for (k, c) in self.compounds.iter().enumerate() {
                m.entry(hill_key(c.formula)).or_default().push(k);
            }
            m
        })
    }

    /// The compound of a name or CAS number, as written (case and spacing do not matter).
    pub fn find(&self, name_or_cas: &str) -> Option<&Compound> {
        let t = name_or_cas.trim();
        let k = if looks_like_cas(t) {
            self.by_cas
                .get_or_init(|| {
                    self.compounds
                        .iter()
                        .enumerate()
                        .filter(|(_, c)| !c.cas.is_empty())
                        .map(|(k, c)| (c.cas, k))
                        .collect()
                })
                .get(t)
                .copied()
        } else {
            self.by_name().get(normalise(t).as_str()).copied()
        };
        k.map(|k| &self.compounds[k])
    }

    /// Known compounds with this Hill formula.
    pub fn with_formula(&self, hill: &str) -> Vec<&Compound> {
        self.by_formula()
            .get(hill)
            .map_or_else(Vec::new, |ks| ks.iter().map(|&k| &self.compounds[k]).collect())
    }

    /// The compound with this structure, if the table has it. `hill` is the molecule's formula.
    pub fn by_structure(&self, canonical_key: &str, hill: &str) -> Option<&Compound> {
        let ks = self.by_formula().get(hill)?;
        let mut keys = self.keys.lock().unwrap_or_else(|e| e.into_inner());
        ks.iter()
            .copied()
            .find(|k| {
                let key = keys
                    .entry(*k)
                    .or_insert_with(|| Molecule::parse(self.compounds[*k].smiles, 0).ok().map(|m| m.canonical_key()));
                key.as_deref() == Some(canonical_key)
            })
            .map(|k| &self.compounds[k])
    }

    /// Up to `n` known names closest to a misspelled one (edit distance), best first.
    pub fn closest(&self, name: &str, n: usize) -> Vec<&str> {
        let want = normalise(name);
        if want.len() > 80 {
            return Vec::new();
        }
        let limit = (want.chars().count() / 3).max(2);
        let mut scored: Vec<(usize, &str)> = self
            .by_name()
            .iter()
            .filter(|(k, _)| k.len().abs_diff(want.len()) <= limit)
            .filter_map(|(k, &i)| {
                let d = edit_distance(&want, k);
                let shown = self.compounds[i].names().find(|s| normalise(s) == k.as_ref())?;
                (d <= limit).then_some((d, shown))
            })
            .collect();
        scored.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.cmp(b.1)));
        scored.dedup_by(|a, b| a.1 == b.1);
        scored.into_iter().take(n).map(|(_, s)| s).collect()
    }
}

/// Levenshtein distance over characters.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.chars().enumerate() {
        cur[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            cur[j + 1] = (prev[j + 1] + 1).min(cur[j] + 1).min(prev[j] + usize::from(ca != cb));
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cas_numbers_are_recognised_and_checked() {
        // CAS check digits: nitrobenzene 98-95-3, water 7732-18-5 (CAS Registry, checksum rule).
        assert!(looks_like_cas("98-95-3") && cas_checksum_ok("98-95-3"));
        assert!(cas_checksum_ok("7732-18-5"));
        assert!(!cas_checksum_ok("98-95-4"));
        assert!(!looks_like_cas("2-nitrotoluene"));
    }

    #[test]
    fn names_are_normalised() {
        assert_eq!(normalise("  Acetic   Anhydride "), "acetic anhydride");
        assert_eq!(normalise("propan‐2‐ol"), "propan-2-ol");
        assert_eq!(edit_distance("nitrobenzen", "nitrobenzene"), 1);
        for n in ["acetic anhydride", "N,N-dimethylformamide", "propan‐2‐ol", " water"] {
            assert_eq!(is_normalised(n), normalise(n) == n, "{n}");
        }
    }

    #[test]
    fn the_files_formulas_are_the_engines_hill_formulas() {
        // The formula index is keyed on the file's text: RDKit's Hill formula must be the one the
        // engine writes for every row (neutral rows only), and every CAS number must check out.
        let n = bundled();
        assert!(n.len() > 10_000, "{}", n.len());
        for c in n.compounds() {
            let f = crate::formula::parse_species(c.formula, 0).unwrap().formula.unwrap();
            assert_eq!(f.hill(), hill_key(c.formula), "{}", c.smiles);
            assert!(c.cas.is_empty() || cas_checksum_ok(c.cas), "{} {}", c.cas, c.smiles);
        }
        assert_eq!(n.find("propan-2-ol").map(|c| c.smiles), n.find("isopropanol").map(|c| c.smiles));
        assert_eq!(n.find("98-95-3").map(Compound::name), Some("nitrobenzene"));
    }
}
