//! Species as people write them in equations: `Fe2O3(s)`, `CuSO4·5H2O(cr)`, `[Cu(NH3)4]^2+(aq)`,
//! `SO4-2`, `e-`, `C(gr)`, `C2H5OH(l)` or a name such as `water(l)`.
//!
//! Grammar (positions in errors are byte offsets into the whole input):
//! ```text
//! species   := electron | name tags | body charge? tags
//! body      := groups ( ADDUCT count? groups )*        ADDUCT: · • * .
//! groups    := ( element count? | '(' groups ')' count? | '[' groups ']' count? )+
//! charge    := '^' digits? sign | '^' sign digits? | sign+ | sign digits
//! tags      := ( '(' tag (',' tag)* ')' )*              tag: g l s cr aq graphite alpha rhombic ...
//! ```
//! A parenthesised group whose content starts with a lower-case letter is a phase tag, otherwise a
//! group of atoms. Polymorphs and allotropes are written in IUPAC style (`Fe(cr,alpha)`,
//! `C(cr,graphite)`, `S(cr,rhombic)`); isomers by name or SMILES, never by the data file's record
//! names. Names (`water(l)`, `acetic anhydride(l)`) are resolved by [`crate::screen`].

use crate::elements::{self, Z};
use std::fmt;

/// Longest species token accepted, in bytes.
pub const MAX_SPECIES_BYTES: usize = 256;
/// Most atoms one species may hold (after expanding groups and hydrates).
pub const MAX_ATOMS_PER_SPECIES: u64 = 10_000;
/// Largest subscript or group multiplier.
pub const MAX_SUBSCRIPT: u64 = 10_000;
/// Deepest nesting of `()` and `[]`.
pub const MAX_NESTING: usize = 16;
/// Largest absolute charge.
pub const MAX_CHARGE: i32 = 20;

/// The aggregation state a species is asked for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Phase {
    Gas,
    Liquid,
    Solid,
    Aqueous,
}

impl Phase {
    /// `gas`, `liquid`, `solid`, `aqueous solution`.
    pub fn name(self) -> &'static str {
        match self {
            Phase::Gas => "gas",
            Phase::Liquid => "liquid",
            Phase::Solid => "solid",
            Phase::Aqueous => "aqueous solution",
        }
    }

    pub fn tag(self) -> &'static str {
        match self {
            Phase::Gas => "g",
            Phase::Liquid => "l",
            Phase::Solid => "s",
            Phase::Aqueous => "aq",
        }
    }
}

/// Element counts (sorted by atomic number, counts > 0) and charge.
#[derive(Clone, Debug, PartialEq, Eq, Hash, Default)]
pub struct Formula {
    pub atoms: Vec<(Z, u32)>,
    pub charge: i32,
}

impl Formula {
    /// g/mol from the standard atomic weights (electron mass neglected).
    pub fn molar_mass_g_per_mol(&self) -> f64 {
        self.atoms.iter().map(|&(z, n)| elements::element(z).atomic_weight * n as f64).sum()
    }

    pub fn count(&self, z: Z) -> u32 {
        self.atoms.iter().find(|a| a.0 == z).map_or(0, |a| a.1)
    }

    /// Hill-order formula with charge, the key species are indexed by: `C2H6O`, `SO4-2`, `e-`.
    pub fn hill(&self) -> String {
        let mut out = String::new();
        let c = elements::by_symbol(b"C");
        let h = elements::by_symbol(b"H");
        let mut order: Vec<(&str, u32)> = self.atoms.iter().map(|&(z, n)| (elements::symbol(z), n)).collect();
        let has_carbon = self.atoms.iter().any(|a| Some(a.0) == c);
        order.sort_by_key(|&(s, _)| {
            let rank = if has_carbon && Some(s) == c.map(elements::symbol) {
                0
            } else if has_carbon && Some(s) == h.map(elements::symbol) {
                1
            } else {
                2
            };
            (rank, s)
        });
        for (s, n) in order {
            out.push_str(s);
            if n != 1 {
                out.push_str(&n.to_string());
            }
        }
        if self.atoms.is_empty() && self.charge == -1 {
            return "e-".into();
        }
        push_charge(&mut out, self.charge);
        out
    }
}

fn push_charge(out: &mut String, charge: i32) {
    match charge {
        0 => {}
        1 => out.push('+'),
        -1 => out.push('-'),
        c if c > 0 => out.push_str(&format!("+{c}")),
        c => out.push_str(&format!("-{}", -c)),
    }
}

/// A species token as written, parsed.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
pub struct SpeciesSpec {
    /// The formula or name as written, without charge and phase tags (`C2H5OH`, `water`).
    pub text: String,
    /// Composition and charge; `None` for a species written by name.
    pub formula: Option<Formula>,
    pub phase: Option<Phase>,
    /// A polymorph or allotrope asked for, in the data's letters: `gr` (graphite), `a` (alpha,
    /// rhombic sulfur), `b` (beta, monoclinic sulfur), `c` (gamma), `d` (delta).
    pub form: Option<String>,
}

impl SpeciesSpec {
    pub fn charge(&self) -> i32 {
        self.formula.as_ref().map_or(0, |f| f.charge)
    }

    /// The written text with its charge, without phase or form tags: `NH4+`, `SO4-2`, `Ca(OH)2`.
    pub fn text_with_charge(&self) -> String {
        let mut s = self.text.clone();
        if self.text != "e" {
            push_charge(&mut s, self.charge());
        } else {
            s.push('-');
        }
        s
    }
}

impl fmt::Display for SpeciesSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.text_with_charge())?;
        match (self.phase, &self.form) {
            (Some(Phase::Solid) | None, Some(form)) => write!(f, "(cr,{form})"),
            (Some(p), Some(form)) => write!(f, "({},{})", p.tag(), form),
            (Some(p), None) => write!(f, "({})", p.tag()),
            (None, None) => Ok(()),
        }
    }
}

/// What went wrong reading an equation or species, and where.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum SyntaxError {
    #[error("at byte {position}: expected {expected}, found {found}")]
    Unexpected {
        position: usize,
        expected: &'static str,
        found: String,
    },
    #[error("at byte {position}: unknown element symbol '{symbol}'")]
    UnknownElement { position: usize, symbol: String },
    #[error("at byte {position}: {what} exceeds the limit of {limit}")]
    Limit { position: usize, what: &'static str, limit: u64 },
}

pub(crate) fn found_at(s: &str, i: usize) -> String {
    match s[i..].chars().next() {
        None => "end of input".to_string(),
        Some(c) => format!("'{c}'"),
    }
}

struct Cursor<'a> {
    s: &'a str,
    b: &'a [u8],
    i: usize,
    base: usize,
}

impl<'a> Cursor<'a> {
    fn peek(&self) -> Option<u8> {
        self.b.get(self.i).copied()
    }
    fn pos(&self) -> usize {
        self.base + self.i
    }
    fn unexpected(&self, expected: &'static str) -> SyntaxError {
        SyntaxError::Unexpected {
            position: self.pos(),
            expected,
            found: found_at(self.s, self.i),
        }
    }
    fn limit(&self, what: &'static str, limit: u64) -> SyntaxError {
        SyntaxError::Limit {
            position: self.pos(),
            what,
            limit,
        }
    }
    fn rest_starts_with(&self, t: &str) -> bool {
        self.s[self.i..].starts_with(t)
    }

    /// Optional unsigned integer; `None` when no digit follows.
    fn count(&mut self, what: &'static str, limit: u64) -> Result<Option<u64>, SyntaxError> {
        let start = self.i;
        let mut n: u64 = 0;
        while let Some(c @ b'0'..=b'9') = self.peek() {
            n = n * 10 + (c - b'0') as u64;
            if n > limit {
                self.i = start;
                return Err(self.limit(what, limit));
            }
            self.i += 1;
        }
        if self.i == start {
            return Ok(None);
        }
        // `Fe0.947O` is a fractional subscript; `CuSO4.5H2O` is a hydrate.
        if n == 0 && self.peek() == Some(b'.') && self.b.get(self.i + 1).is_some_and(u8::is_ascii_digit) {
            return Err(self.unexpected("an integer subscript (fractional subscripts are not supported)"));
        }
        if n == 0 {
            self.i = start;
            return Err(self.unexpected("a count of at least 1"));
        }
        Ok(Some(n))
    }
}

/// Add `n` × `atoms` into `acc` (kept sorted by Z), enforcing the atom limit.
fn merge(acc: &mut Vec<(Z, u64)>, atoms: &[(Z, u64)], n: u64, cur: &Cursor) -> Result<(), SyntaxError> {
    for &(z, c) in atoms {
        let add = c.checked_mul(n).filter(|v| *v <= MAX_ATOMS_PER_SPECIES);
        let add = add.ok_or_else(|| cur.limit("atoms per species", MAX_ATOMS_PER_SPECIES))?;
        match acc.binary_search_by_key(&z, |a| a.0) {
            Ok(k) => acc[k].1 += add,
            Err(k) => acc.insert(k, (z, add)),
        }
    }
    if acc.iter().map(|a| a.1).sum::<u64>() > MAX_ATOMS_PER_SPECIES {
        return Err(cur.limit("atoms per species", MAX_ATOMS_PER_SPECIES));
    }
    Ok(())
}

fn is_tag_group(cur: &Cursor) -> bool {
    // '(' already peeked at cur.i
    match cur.b.get(cur.i + 1) {
        Some(c) if c.is_ascii_lowercase() => true,
        Some(b'L') => cur.b.get(cur.i + 2) == Some(&b')'),
        _ => false,
    }
}

fn groups(cur: &mut Cursor, depth: usize) -> Result<Vec<(Z, u64)>, SyntaxError> {
    if depth > MAX_NESTING {
        return Err(cur.limit("nesting depth of brackets", MAX_NESTING as u64));
    }
    let mut acc: Vec<(Z, u64)> = Vec::new();
    loop {
        match cur.peek() {
            Some(c) if c.is_ascii_uppercase() => {
                let start = cur.i;
                cur.i += 1;
                if cur.peek().is_some_and(|c| c.is_ascii_lowercase()) {
                    cur.i += 1;
                }
                let sym = &cur.b[start..cur.i];
                let z = match elements::by_symbol(sym) {
                    Some(z) => z,
                    None => {
                        return Err(SyntaxError::UnknownElement {
                            position: cur.base + start,
                            symbol: String::from_utf8_lossy(sym).into_owned(),
                        })
                    }
                };
                let n = cur.count("subscript", MAX_SUBSCRIPT)?.unwrap_or(1);
                merge(&mut acc, &[(z, 1)], n, cur)?;
            }
            Some(open @ (b'(' | b'[')) => {
                if open == b'(' && is_tag_group(cur) {
                    break;
                }
                let close = if open == b'(' { b')' } else { b']' };
                cur.i += 1;
                let inner = groups(cur, depth + 1)?;
                if cur.peek() != Some(close) {
                    return Err(cur.unexpected(if close == b')' { "')'" } else { "']'" }));
                }
                cur.i += 1;
                let n = cur.count("group multiplier", MAX_SUBSCRIPT)?.unwrap_or(1);
                merge(&mut acc, &inner, n, cur)?;
            }
            _ => break,
        }
    }
    if acc.is_empty() {
        return Err(cur.unexpected("an element symbol or '('"));
    }
    Ok(acc)
}

fn adduct_separator(cur: &Cursor) -> Option<usize> {
    for sep in ["·", "•", "∙", "*", "."] {
        if cur.rest_starts_with(sep) {
            return Some(sep.len());
        }
    }
    None
}

fn charge(cur: &mut Cursor) -> Result<i32, SyntaxError> {
    let sign_of = |c: Option<u8>| match c {
        Some(b'+') => Some(1),
        Some(b'-') => Some(-1),
        _ => None,
    };
    let mut q: i64 = 0;
    if cur.peek() == Some(b'^') {
        cur.i += 1;
        if let Some(sign) = sign_of(cur.peek()) {
            cur.i += 1;
            q = sign * cur.count("charge", MAX_CHARGE as u64)?.unwrap_or(1) as i64;
        } else {
            let n = cur
                .count("charge", MAX_CHARGE as u64)?
                .ok_or_else(|| cur.unexpected("a charge such as ^2- or ^+"))?;
            let sign = sign_of(cur.peek()).ok_or_else(|| cur.unexpected("'+' or '-' after the charge number"))?;
            cur.i += 1;
            q = sign * n as i64;
        }
    } else if let Some(sign) = sign_of(cur.peek()) {
        cur.i += 1;
        if let Some(n) = cur.count("charge", MAX_CHARGE as u64)? {
            q = sign * n as i64;
        } else {
            q = sign;
            while sign_of(cur.peek()) == Some(sign) {
                cur.i += 1;
                q += sign;
                if q.unsigned_abs() > MAX_CHARGE as u64 {
                    return Err(cur.limit("charge", MAX_CHARGE as u64));
                }
            }
        }
    }
    Ok(q as i32)
}

/// A word of a phase tag: a state (`g`, `l`, `s`, `cr`, `aq`) or a polymorph or allotrope in
/// IUPAC style (`alpha` … `delta`, `graphite`, `rhombic`, `monoclinic`). Forms are kept as words;
/// [`crate::species`] maps them to the records of the bundled data.
pub(crate) fn tag_word(word: &str) -> Option<(Option<Phase>, Option<&'static str>)> {
    Some(match word {
        "g" | "gas" => (Some(Phase::Gas), None),
        "l" | "liq" | "liquid" => (Some(Phase::Liquid), None),
        "s" | "cr" | "solid" | "cryst" => (Some(Phase::Solid), None),
        "aq" => (Some(Phase::Aqueous), None),
        "gr" | "graphite" => (Some(Phase::Solid), Some("graphite")),
        "alpha" => (Some(Phase::Solid), Some("alpha")),
        "rhombic" | "orthorhombic" => (Some(Phase::Solid), Some("rhombic")),
        "beta" => (Some(Phase::Solid), Some("beta")),
        "monoclinic" => (Some(Phase::Solid), Some("monoclinic")),
        "gamma" => (Some(Phase::Solid), Some("gamma")),
        "delta" => (Some(Phase::Solid), Some("delta")),
        _ => return None,
    })
}

fn tags(cur: &mut Cursor, spec: &mut SpeciesSpec) -> Result<(), SyntaxError> {
    while cur.peek() == Some(b'(') {
        cur.i += 1;
        loop {
            let start = cur.i;
            while cur.peek().is_some_and(|c| c.is_ascii_alphabetic()) {
                cur.i += 1;
            }
            let word = &cur.s[start..cur.i];
            let (phase, form) = tag_word(word).ok_or_else(|| {
                cur.i = start;
                cur.unexpected("a phase tag: g, l, s, cr, aq, or a form such as cr,alpha, cr,graphite, cr,rhombic")
            })?;
            // A later, more specific tag refines an earlier one: `(cr,alpha)`, `(s)(gr)`.
            if phase.is_some() && (spec.phase.is_none() || spec.phase == Some(Phase::Solid)) {
                spec.phase = phase;
            }
            if form.is_some() {
                spec.form = form.map(str::to_string);
            }
            match cur.peek() {
                Some(b',') => {
                    cur.i += 1;
                    while cur.peek() == Some(b' ') {
                        cur.i += 1;
                    }
                }
                Some(b')') => {
                    cur.i += 1;
                    break;
                }
                _ => return Err(cur.unexpected("',' or ')' in the phase tag")),
            }
        }
    }
    Ok(())
}

/// Parse one species token. `base` is the token's byte offset in the whole input, for errors.
///
/// # Errors
/// `SyntaxError` with the byte position and what was expected there.
pub fn parse_species(s: &str, base: usize) -> Result<SpeciesSpec, SyntaxError> {
    if s.len() > MAX_SPECIES_BYTES {
        return Err(SyntaxError::Limit {
            position: base,
            what: "species length in bytes",
            limit: MAX_SPECIES_BYTES as u64,
        });
    }
    let mut cur = Cursor {
        s,
        b: s.as_bytes(),
        i: 0,
        base,
    };
    let mut spec = SpeciesSpec {
        text: String::new(),
        formula: None,
        phase: None,
        form: None,
    };
    match cur.peek() {
        None => return Err(cur.unexpected("a species")),
        Some(b'e') if matches!(&s[1..].split('(').next(), Some("-" | "^-")) => {
            cur.i = if s[1..].starts_with('^') { 3 } else { 2 };
            spec.text = "e".into();
            spec.formula = Some(Formula {
                atoms: Vec::new(),
                charge: -1,
            });
        }
        Some(c) if c.is_ascii_lowercase() => {
            while cur
                .peek()
                .is_some_and(|c| c.is_ascii_alphanumeric() || matches!(c, b'-' | b',' | b'\'' | b'_'))
            {
                cur.i += 1;
            }
            spec.text = s[..cur.i].to_string();
        }
        Some(_) => {
            let mut atoms = groups(&mut cur, 0)?;
            while let Some(len) = adduct_separator(&cur) {
                cur.i += len;
                let n = cur.count("adduct multiplier", MAX_SUBSCRIPT)?.unwrap_or(1);
                let part = groups(&mut cur, 0)?;
                merge(&mut atoms, &part, n, &cur)?;
            }
            spec.text = s[..cur.i].to_string();
            let q = charge(&mut cur)?;
            let atoms = atoms.into_iter().map(|(z, n)| (z, n as u32)).collect();
            spec.formula = Some(Formula { atoms, charge: q });
        }
    }
    tags(&mut cur, &mut spec)?;
    if cur.i != s.len() {
        return Err(cur.unexpected("end of species, a charge or a phase tag such as (g)"));
    }
    Ok(spec)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn atoms(s: &str) -> Vec<(String, u32)> {
        let f = parse_species(s, 0).unwrap().formula.unwrap();
        f.atoms.iter().map(|&(z, n)| (elements::symbol(z).to_string(), n)).collect()
    }

    fn hill(s: &str) -> String {
        parse_species(s, 0).unwrap().formula.unwrap().hill()
    }

    #[test]
    fn groups_hydrates_and_charges() {
        assert_eq!(hill("Ca3(PO4)2"), "Ca3O8P2");
        assert_eq!(hill("CuSO4·5H2O"), "CuH10O9S");
        assert_eq!(hill("CuSO4*5H2O"), "CuH10O9S");
        assert_eq!(hill("CuSO4.5H2O"), "CuH10O9S");
        assert_eq!(hill("K4[Fe(CN)6]"), "C6FeK4N6");
        assert_eq!(hill("[Cu(NH3)4]^2+"), "CuH12N4+2");
        assert_eq!(hill("SO4^2-"), "O4S-2");
        assert_eq!(hill("SO4-2"), "O4S-2");
        assert_eq!(hill("Fe+3"), "Fe+3");
        assert_eq!(hill("NH4+"), "H4N+");
        assert_eq!(hill("e-"), "e-");
        assert_eq!(hill("C2H5OH"), "C2H6O");
        // The data file's isomer qualifier is not input syntax: isomers are written by name or SMILES.
        assert!(parse_species("C4H10,n-butane(g)", 0).is_err());
        assert_eq!(atoms("H2O"), vec![("H".to_string(), 2), ("O".to_string(), 1)]);
    }

    #[test]
    fn phase_and_polymorph_tags() {
        let s = parse_species("C(gr)", 0).unwrap();
        assert_eq!((s.phase, s.form.as_deref()), (Some(Phase::Solid), Some("graphite")));
        let s = parse_species("C(cr,graphite)", 0).unwrap();
        assert_eq!((s.phase, s.form.as_deref()), (Some(Phase::Solid), Some("graphite")));
        let s = parse_species("S(cr,rhombic)", 0).unwrap();
        assert_eq!((s.phase, s.form.as_deref()), (Some(Phase::Solid), Some("rhombic")));
        let s = parse_species("Fe(cr,alpha)", 0).unwrap();
        assert_eq!((s.phase, s.form.as_deref()), (Some(Phase::Solid), Some("alpha")));
        assert_eq!(s.to_string(), "Fe(cr,alpha)");
        // The data file's one-letter polymorph codes and capital (L) are not input syntax.
        for coded in ["Fe(a)", "S(b)", "H2O(L)"] {
            assert!(parse_species(coded, 0).is_err(), "{coded}");
        }
        let s = parse_species("Fe(OH)3(s)", 0).unwrap();
        assert_eq!(s.phase, Some(Phase::Solid));
        assert_eq!(s.formula.unwrap().hill(), "FeH3O3");
        assert_eq!(parse_species("H2O(l)", 0).unwrap().phase, Some(Phase::Liquid));
        assert_eq!(parse_species("Fe+3(aq)", 0).unwrap().phase, Some(Phase::Aqueous));
        let s = parse_species("water(l)", 0).unwrap();
        assert_eq!((s.text.as_str(), s.formula.is_none()), ("water", true));
    }

    #[test]
    fn molar_mass_of_water() {
        // 2 × 1.008 + 15.999 with IUPAC 2021 conventional weights.
        let m = parse_species("H2O", 0).unwrap().formula.unwrap().molar_mass_g_per_mol();
        assert!((m - 18.015).abs() < 1e-9, "{m}");
    }

    #[test]
    fn errors_name_position_and_expectation() {
        let e = parse_species("Fe2Xq3", 10).unwrap_err();
        assert_eq!(
            e,
            SyntaxError::UnknownElement {
                position: 13,
                symbol: "Xq".into()
            }
        );
        let e = parse_species("Ca3(PO4", 0).unwrap_err();
        assert!(
            matches!(
                e,
                SyntaxError::Unexpected {
                    position: 7,
                    expected: "')'",
                    ..
                }
            ),
            "{e}"
        );
        let e = parse_species("H2O(plasma)", 0).unwrap_err();
        assert!(matches!(e, SyntaxError::Unexpected { position: 4, .. }), "{e}");
        let e = parse_species("H0", 0).unwrap_err();
        assert!(matches!(e, SyntaxError::Unexpected { position: 1, .. }), "{e}");
        let e = parse_species("Fe0.947O", 0).unwrap_err();
        assert!(e.to_string().contains("fractional"), "{e}");
    }

    #[test]
    fn limits_are_errors_not_panics() {
        assert!(matches!(
            parse_species("C10001", 0),
            Err(SyntaxError::Limit { what: "subscript", .. })
        ));
        assert!(matches!(
            parse_species("(C100)200", 0),
            Err(SyntaxError::Limit {
                what: "atoms per species",
                ..
            })
        ));
        let deep = format!("{}H{}", "(".repeat(40), ")".repeat(40));
        assert!(matches!(parse_species(&deep, 0), Err(SyntaxError::Limit { .. })));
        let long = "H".repeat(MAX_SPECIES_BYTES + 1);
        assert!(matches!(parse_species(&long, 0), Err(SyntaxError::Limit { .. })));
        assert!(matches!(parse_species("Fe^99+", 0), Err(SyntaxError::Limit { what: "charge", .. })));
        assert!(matches!(
            parse_species("(((H9999)9999)9999)9999", 0),
            Err(SyntaxError::Limit { .. })
        ));
    }
}
