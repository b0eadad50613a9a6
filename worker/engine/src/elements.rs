//! The periodic table: symbols, names and standard atomic weights, from `data/elements.tsv`
//! (written by `scripts/gen_elements.py`; the table's origin is in that file's header).
//! Loaded once per process; symbol lookup is a flat array index, no hashing.

use std::sync::OnceLock;

/// Atomic number, 1..=118.
pub type Z = u8;

/// One element of the table.
#[derive(Clone, Debug)]
pub struct Element {
    pub z: Z,
    pub symbol: String,
    pub name: String,
    /// g/mol: the IUPAC standard (conventional) atomic weight, or for elements without stable
    /// isotopes the mass number of the longest-lived isotope (`has_standard_weight` false).
    pub atomic_weight: f64,
    pub has_standard_weight: bool,
}

struct Table {
    by_z: Vec<Element>,
    /// Index `(first - b'A') * 27 + (second - b'a' + 1 | 0)` -> Z (0 = none).
    by_symbol: [Z; 26 * 27],
    header: String,
}

const ELEMENTS_TSV: &str = include_str!("../data/elements.tsv");

fn table() -> &'static Table {
    static TABLE: OnceLock<Table> = OnceLock::new();
    TABLE.get_or_init(|| {
        let mut by_z = Vec::with_capacity(118);
        let mut by_symbol = [0; 26 * 27];
        let mut header = String::new();
        let mut seen_header_row = false;
        for line in ELEMENTS_TSV.lines() {
            if let Some(c) = line.strip_prefix('#') {
                header.push_str(c.trim());
                header.push('\n');
                continue;
            }
            if line.trim().is_empty() {
                continue;
            }
            if !seen_header_row {
                seen_header_row = true;
                continue;
            }
            let f: Vec<&str> = line.split('\t').collect();
            // The file is generated and committed; a malformed line is a build defect that the
            // unit tests catch, so a panic with the line is the right report here.
            let z: Z = f[0].parse().unwrap_or_else(|_| panic!("elements.tsv: bad z in {line:?}"));
            let w: f64 = f[3].parse().unwrap_or_else(|_| panic!("elements.tsv: bad weight in {line:?}"));
            let e = Element {
                z,
                symbol: f[1].to_string(),
                name: f[2].to_string(),
                atomic_weight: w,
                has_standard_weight: f[4] == "standard",
            };
            if let Some(i) = symbol_index(e.symbol.as_bytes()) {
                by_symbol[i] = z;
            }
            by_z.push(e);
        }
        by_z.sort_by_key(|e| e.z);
        Table { by_z, by_symbol, header }
    })
}

fn symbol_index(s: &[u8]) -> Option<usize> {
    let first = *s.first()?;
    if !first.is_ascii_uppercase() {
        return None;
    }
    let second = match s.get(1) {
        None => 0,
        Some(c) if c.is_ascii_lowercase() => (c - b'a' + 1) as usize,
        Some(_) => return None,
    };
    if s.len() > 2 {
        return None;
    }
    Some((first - b'A') as usize * 27 + second)
}

/// The element with this symbol (`"Fe"`), if any.
pub fn by_symbol(symbol: &[u8]) -> Option<Z> {
    let z = table().by_symbol[symbol_index(symbol)?];
    (z != 0).then_some(z)
}

/// The element with atomic number `z`.
///
/// # Panics
/// When `z` is not 1..=118; a `Z` only comes from this table.
pub fn element(z: Z) -> &'static Element {
    &table().by_z[z as usize - 1]
}

pub fn symbol(z: Z) -> &'static str {
    &element(z).symbol
}

/// Where the atomic weights come from (the data file's header comment).
pub fn source() -> &'static str {
    &table().header
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_has_all_118_elements_in_order() {
        for z in 1..=118u8 {
            assert_eq!(element(z).z, z);
            assert_eq!(by_symbol(element(z).symbol.as_bytes()), Some(z));
        }
        assert_eq!(by_symbol(b"Xx"), None);
        assert_eq!(by_symbol(b"fe"), None);
    }

    #[test]
    fn conventional_weights_match_iupac() {
        // IUPAC/CIAAW standard atomic weights 2021, abridged/conventional values
        // (Prohaska et al., Pure Appl. Chem. 94 (2022) 573, Table 2).
        let cases = [
            ("H", 1.008),
            ("C", 12.011),
            ("N", 14.007),
            ("O", 15.999),
            ("S", 32.06),
            ("Cl", 35.45),
            ("Fe", 55.845),
        ];
        for (s, w) in cases {
            let z = by_symbol(s.as_bytes()).unwrap();
            assert!((element(z).atomic_weight - w).abs() < 1e-3, "{s}: {}", element(z).atomic_weight);
        }
    }
}
