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

use crate::smiles::Molecule;
use std::collections::HashMap;
use std::sync::{Mutex, OnceLock};

/// One compound of the name table.
#[derive(Clone, Debug)]
pub struct Compound {
    pub smiles: String,
    pub cas: String,
    /// Hill formula with charge, as [`crate::formula::Formula::hill`] writes it.
    pub formula: String,
    /// Names, the preferred one first.
    pub names: Vec<String>,
    /// Normal melting point, K, with the table it comes from.
    pub melting_k: Option<(f64, String)>,
    /// Normal boiling point, K, with the table it comes from.
    pub boiling_k: Option<(f64, String)>,
}

impl Compound {
    /// The preferred name.
    pub fn name(&self) -> &str {
        self.names.first().map_or(self.smiles.as_str(), String::as_str)
    }
}

/// The name table, indexed.
pub struct Names {
    compounds: Vec<Compound>,
    by_name: HashMap<String, usize>,
    by_cas: HashMap<String, usize>,
    by_formula: HashMap<String, Vec<usize>>,
    /// Canonical keys of the compounds of a formula, computed when a formula is first asked for
    /// (parsing every SMILES at start-up would cost every one-case run).
    keys: Mutex<HashMap<usize, Option<String>>>,
    /// Header comment of the data file.
    pub provenance: String,
}

const NAMES_TSV: &str = include_str!("../data/names.tsv");

/// The bundled name table, parsed on first use.
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

/// `98-95-3`: two to seven digits, two digits, one check digit.
pub fn looks_like_cas(s: &str) -> bool {
    let parts: Vec<&str> = s.split('-').collect();
    parts.len() == 3
        && (2..=7).contains(&parts[0].len())
        && parts[1].len() == 2
        && parts[2].len() == 1
        && parts.iter().all(|p| p.bytes().all(|b| b.is_ascii_digit()))
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
    /// Parse the `names.tsv` layout: `smiles`, `cas`, `formula`, `names` (`|`-separated),
    /// `melting_k`, `melting_source`, `boiling_k`, `boiling_source`.
    ///
    /// # Errors
    /// A message naming the line for a malformed row or a name given to two compounds.
    pub fn from_tsv(tsv: &str) -> Result<Names, String> {
        let table = crate::tsv::read(tsv, "names.tsv");
        let mut n = Names {
            compounds: Vec::new(),
            by_name: HashMap::new(),
            by_cas: HashMap::new(),
            by_formula: HashMap::new(),
            keys: Mutex::new(HashMap::new()),
            provenance: table.comments.clone(),
        };
        for row in table.rows() {
            let k = n.compounds.len();
            let point = |v: &str, src: &str| -> Result<Option<(f64, String)>, String> {
                if row.get(v)?.is_empty() {
                    return Ok(None);
                }
                let t: f64 = row.get(v)?.parse().map_err(|_| row.error(&format!("bad number in {v}")))?;
                Ok(Some((t, row.get(src)?.to_string())))
            };
            let c = Compound {
                smiles: row.get("smiles")?.to_string(),
                cas: row.get("cas")?.to_string(),
                // RDKit writes `C7H8O`, `C5H6N+`: read it as a formula and write it as the engine does.
                formula: crate::formula::parse_species(row.get("formula")?, 0)
                    .ok()
                    .and_then(|s| s.formula)
                    .map(|f| f.hill())
                    .ok_or_else(|| row.error("formula does not parse"))?,
                names: row.get("names")?.split('|').map(str::to_string).filter(|s| !s.is_empty()).collect(),
                melting_k: point("melting_k", "melting_source")?,
                boiling_k: point("boiling_k", "boiling_source")?,
            };
            for name in &c.names {
                if let Some(other) = n.by_name.insert(normalise(name), k) {
                    if other != k {
                        return Err(row.error(&format!("the name {name:?} is given to two compounds")));
                    }
                }
            }
            if !c.cas.is_empty() {
                n.by_cas.insert(c.cas.clone(), k);
            }
            n.by_formula.entry(c.formula.clone()).or_default().push(k);
            n.compounds.push(c);
        }
        Ok(n)
    }

    pub fn len(&self) -> usize {
        self.compounds.len()
    }

    pub fn is_empty(&self) -> bool {
        self.compounds.is_empty()
    }

    /// The compound of a name or CAS number, as written (case and spacing do not matter).
    pub fn find(&self, name_or_cas: &str) -> Option<&Compound> {
        let t = name_or_cas.trim();
        let k = if looks_like_cas(t) {
            self.by_cas.get(t)
        } else {
            self.by_name.get(&normalise(t))
        };
        k.map(|&k| &self.compounds[k])
    }

    /// Known compounds with this Hill formula (charge included).
    pub fn with_formula(&self, hill: &str) -> Vec<&Compound> {
        self.by_formula
            .get(hill)
            .map_or_else(Vec::new, |ks| ks.iter().map(|&k| &self.compounds[k]).collect())
    }

    /// The compound with this structure, if the table has it. `hill` is the molecule's formula.
    pub fn by_structure(&self, canonical_key: &str, hill: &str) -> Option<&Compound> {
        let ks = self.by_formula.get(hill)?;
        let mut keys = self.keys.lock().unwrap_or_else(|e| e.into_inner());
        ks.iter()
            .copied()
            .find(|k| {
                let key = keys
                    .entry(*k)
                    .or_insert_with(|| Molecule::parse(&self.compounds[*k].smiles, 0).ok().map(|m| m.canonical_key()));
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
            .by_name
            .iter()
            .filter(|(k, _)| k.len().abs_diff(want.len()) <= limit)
            .filter_map(|(k, &i)| {
                let d = edit_distance(&want, k);
                let shown = self.compounds[i].names.iter().find(|s| normalise(s) == *k)?;
                (d <= limit).then_some((d, shown.as_str()))
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
    }
}
