//! Reaction equations: `2 Al(cr) + Fe2O3(s) -> Al2O3(s) + 2 Fe(cr)`.
//!
//! Arrows: `->`, `=>`, `=`, `<=>` (and `→`, `⇌`). Coefficients are optional and may be integers,
//! decimals (`0.5 O2`) or fractions (`1/2 O2(g)`); a space after the coefficient is optional
//! (`2H2O`). Species on one side are separated by a `+` with a space before it, or by a `+` written
//! directly before an upper-case letter or bracket (`H2+O2`); any other `+` is a charge (`NH4+ + OH-`).
//!
//! Reaction SMILES (`CCO.O=O>>CC(=O)O.O`, `reactants>agents>products`): recognised by a `>` that is
//! not the head of an arrow (`->`, `=>`, `<=>`); each `.`-separated component is one species
//! (the SMILES are read by the caller, see [`crate::structures`]); agents are recorded, not balanced.

use crate::formula::{found_at, parse_species, SpeciesSpec, SyntaxError};
use crate::rational::Rational;

/// Longest equation accepted, in bytes.
pub const MAX_EQUATION_BYTES: usize = 4096;
/// Most species terms in one equation (both sides together).
pub const MAX_TERMS: usize = 40;
/// Largest numerator or denominator of a written coefficient.
pub const MAX_COEFFICIENT: i128 = 1_000_000;
/// Most decimal places in a written coefficient.
pub const MAX_DECIMALS: usize = 6;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Arrow {
    /// `->`, `=>`, `=`, `→`
    Forward,
    /// `<=>`, `⇌`
    Equilibrium,
}

/// One species with its written coefficient.
#[derive(Clone, Debug, PartialEq)]
pub struct Term {
    pub coefficient: Option<Rational>,
    pub species: SpeciesSpec,
    /// Byte offset of the species token in the equation.
    pub position: usize,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Equation {
    pub reactants: Vec<Term>,
    pub products: Vec<Term>,
    pub arrow: Arrow,
}

impl Equation {
    /// True when at least one coefficient was written.
    pub fn has_coefficients(&self) -> bool {
        self.reactants.iter().chain(&self.products).any(|t| t.coefficient.is_some())
    }
}

const ARROWS: [(&str, Arrow); 6] = [
    ("<=>", Arrow::Equilibrium),
    ("⇌", Arrow::Equilibrium),
    ("->", Arrow::Forward),
    ("=>", Arrow::Forward),
    ("→", Arrow::Forward),
    ("=", Arrow::Forward),
];

fn find_arrow(s: &str) -> Result<(usize, usize, Arrow), SyntaxError> {
    let mut found: Option<(usize, usize, Arrow)> = None;
    let b = s.as_bytes();
    let mut i = 0;
    while i < b.len() {
        // Every arrow starts with one of these bytes (0xE2 leads → and ⇌ in UTF-8).
        if !matches!(b[i], b'-' | b'=' | b'<' | 0xE2) {
            i += 1;
            continue;
        }
        let hit = ARROWS.iter().find(|(a, _)| s[i..].starts_with(a));
        if let Some(&(a, kind)) = hit {
            if found.is_some() {
                return Err(SyntaxError::Unexpected {
                    position: i,
                    expected: "only one arrow",
                    found: format!("a second arrow '{a}'"),
                });
            }
            found = Some((i, a.len(), kind));
            i += a.len();
        } else {
            i += s[i..].chars().next().map_or(1, char::len_utf8);
        }
    }
    found.ok_or(SyntaxError::Unexpected {
        position: s.len(),
        expected: "an arrow: ->, =>, = or <=>",
        found: "end of input".into(),
    })
}

/// Call `each(offset, text)` for every term of one side.
fn split_terms<'a>(s: &'a str, base: usize, mut each: impl FnMut(usize, &'a str) -> Result<(), SyntaxError>) -> Result<(), SyntaxError> {
    let b = s.as_bytes();
    let mut start = 0;
    for i in 0..b.len() {
        if b[i] != b'+' {
            continue;
        }
        let before_space = i == 0 || b[i - 1].is_ascii_whitespace();
        let after = b.get(i + 1).copied();
        let glued_separator = i > 0 && matches!(after, Some(c) if c.is_ascii_uppercase() || c == b'(' || c == b'[');
        // `^+` and `^2+` are always charges.
        let in_caret = i > 0 && (b[i - 1] == b'^' || (b[i - 1].is_ascii_digit() && s[..i].contains('^')));
        if (before_space || glued_separator) && !in_caret {
            each(base + start, &s[start..i])?;
            start = i + 1;
        }
    }
    each(base + start, &s[start..])
}

fn parse_coefficient(t: &str, base: usize) -> Result<(Option<Rational>, usize), SyntaxError> {
    let b = t.as_bytes();
    let mut i = 0;
    let digits = |i: &mut usize| {
        let s = *i;
        while *i < b.len() && b[*i].is_ascii_digit() {
            *i += 1;
        }
        s..*i
    };
    let whole = digits(&mut i);
    if whole.is_empty() {
        return Ok((None, 0));
    }
    let limit = |pos: usize| SyntaxError::Limit {
        position: base + pos,
        what: "coefficient",
        limit: MAX_COEFFICIENT as u64,
    };
    let parse_int = |r: std::ops::Range<usize>| -> Result<i128, SyntaxError> {
        let v = &t[r.clone()];
        if v.len() > 7 {
            return Err(limit(r.start));
        }
        let n: i128 = v.parse().map_err(|_| limit(r.start))?;
        if n > MAX_COEFFICIENT {
            return Err(limit(r.start));
        }
        Ok(n)
    };
    let mut num = parse_int(whole.clone())?;
    let mut den: i128 = 1;
    if i < b.len() && b[i] == b'.' && b.get(i + 1).is_some_and(u8::is_ascii_digit) {
        i += 1;
        let frac = digits(&mut i);
        if frac.len() > MAX_DECIMALS {
            return Err(SyntaxError::Limit {
                position: base + frac.start,
                what: "decimal places in a coefficient",
                limit: MAX_DECIMALS as u64,
            });
        }
        let f: i128 = t[frac.clone()].parse().map_err(|_| limit(frac.start))?;
        den = 10i128.pow(frac.len() as u32);
        num = num * den + f;
    } else if i < b.len() && b[i] == b'/' {
        i += 1;
        let d = digits(&mut i);
        if d.is_empty() {
            return Err(SyntaxError::Unexpected {
                position: base + i,
                expected: "a denominator after '/'",
                found: found_at(t, i),
            });
        }
        den = parse_int(d)?;
    }
    if num == 0 || den == 0 {
        return Err(SyntaxError::Unexpected {
            position: base,
            expected: "a positive coefficient",
            found: format!("'{}'", &t[..i]),
        });
    }
    let r = Rational::new(num, den).map_err(|_| limit(0))?;
    while i < b.len() && b[i].is_ascii_whitespace() {
        i += 1;
    }
    Ok((Some(r), i))
}

/// A term before its species is parsed: the written coefficient and the species text.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RawTerm<'a> {
    pub coefficient: Option<Rational>,
    pub text: &'a str,
    /// Byte offset of `text` in the equation.
    pub position: usize,
}

/// An equation cut into terms; species are parsed by the caller (who may cache them by text).
#[derive(Clone, Debug, PartialEq)]
pub struct RawEquation<'a> {
    pub reactants: Vec<RawTerm<'a>>,
    pub products: Vec<RawTerm<'a>>,
    pub arrow: Arrow,
    /// How the species are written: formula tokens or SMILES.
    pub notation: Notation,
    /// Agents of a reaction SMILES (`r>agents>p`): recorded, not part of the balance.
    pub agents: Vec<RawTerm<'a>>,
}

/// How an equation writes its species.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Notation {
    Formula,
    Smiles,
}

/// True when `s` is a reaction SMILES: it holds a `>` that does not end `->`, `=>` or `<=>`.
pub fn is_reaction_smiles(s: &str) -> bool {
    let b = s.as_bytes();
    (0..b.len()).any(|i| b[i] == b'>' && (i == 0 || !matches!(b[i - 1], b'-' | b'=')))
}

/// Cut a reaction SMILES into reactants, agents and products (each `.`-separated component one
/// species, no coefficients).
fn split_reaction_smiles(s: &str) -> Result<RawEquation<'_>, SyntaxError> {
    let gts: Vec<usize> = s.match_indices('>').map(|(i, _)| i).collect();
    if gts.len() != 2 {
        let at = gts.get(2).copied().unwrap_or(s.len());
        return Err(SyntaxError::Unexpected {
            position: at,
            expected: "a reaction SMILES with exactly two '>' (reactants>>products or reactants>agents>products)",
            found: format!("{} '>'", gts.len()),
        });
    }
    let part = |from: usize, to: usize, what: &'static str, required: bool| -> Result<Vec<RawTerm<'_>>, SyntaxError> {
        let text = &s[from..to];
        if text.trim().is_empty() {
            if required {
                return Err(SyntaxError::Unexpected {
                    position: from,
                    expected: what,
                    found: "nothing".into(),
                });
            }
            return Ok(Vec::new());
        }
        let mut out: Vec<RawTerm<'_>> = Vec::new();
        let mut start = from;
        // Charge of the ion group being gathered: ions written next to each other whose charges
        // cancel (`[Na+].[OH-]`, `[NH4+].[Cl-]`) are one species, the salt.
        let mut open_charge = 0;
        for piece in text.split('.') {
            let lead = piece.len() - piece.trim_start().len();
            let t = piece.trim();
            if t.is_empty() {
                return Err(SyntaxError::Unexpected {
                    position: start,
                    expected: what,
                    found: "an empty component between '.'".into(),
                });
            }
            let q = smiles_charge(t);
            match out.last_mut() {
                Some(last) if open_charge != 0 && q != 0 => {
                    let begin = last.position;
                    last.text = s[begin..start + lead + t.len()].trim();
                    open_charge += q;
                }
                _ => {
                    out.push(RawTerm {
                        coefficient: None,
                        text: t,
                        position: start + lead,
                    });
                    open_charge = q;
                }
            }
            start += piece.len() + 1;
        }
        Ok(out)
    };
    let reactants = part(0, gts[0], "a reactant SMILES", true)?;
    let agents = part(gts[0] + 1, gts[1], "an agent SMILES", false)?;
    let products = part(gts[1] + 1, s.len(), "a product SMILES", true)?;
    if reactants.len() + products.len() + agents.len() > MAX_TERMS {
        return Err(SyntaxError::Limit {
            position: 0,
            what: "species terms per equation",
            limit: MAX_TERMS as u64,
        });
    }
    Ok(RawEquation {
        reactants,
        products,
        arrow: Arrow::Forward,
        notation: Notation::Smiles,
        agents,
    })
}

/// Net formal charge written in a SMILES component's bracket atoms (`[NH4+]` +1, `[O-2]` −2,
/// `[Fe+++]` +3); a state suffix such as `{s}` is outside brackets and does not count.
pub fn smiles_charge(t: &str) -> i32 {
    let mut q = 0i32;
    let mut in_bracket = false;
    let b = t.as_bytes();
    let mut i = 0;
    while i < b.len() {
        match b[i] {
            b'[' => in_bracket = true,
            b']' => in_bracket = false,
            c @ (b'+' | b'-') if in_bracket => {
                let sign = if c == b'+' { 1 } else { -1 };
                let mut j = i + 1;
                let mut n = 0i32;
                while j < b.len() && b[j].is_ascii_digit() {
                    n = n.saturating_mul(10).saturating_add((b[j] - b'0') as i32);
                    j += 1;
                }
                q = q.saturating_add(sign * if j > i + 1 { n } else { 1 });
                i = j;
                continue;
            }
            _ => {}
        }
        i += 1;
    }
    q
}

fn split_side<'a>(s: &'a str, base: usize, side: &'static str, out: &mut Vec<RawTerm<'a>>) -> Result<(), SyntaxError> {
    split_terms(s, base, |off, raw| {
        let lead = raw.len() - raw.trim_start().len();
        let t = raw.trim();
        let at = off + lead;
        if t.is_empty() {
            return Err(SyntaxError::Unexpected {
                position: at,
                expected: side,
                found: "nothing".into(),
            });
        }
        // A CAS number (`98-95-3`, `98-95-3(l)`) starts with digits but is a species.
        let species_text = t.split_once('(').map_or(t, |(head, _)| head);
        let (coefficient, used) = if crate::names::looks_like_cas(species_text) {
            (None, 0)
        } else {
            parse_coefficient(t, at)?
        };
        if used == t.len() {
            return Err(SyntaxError::Unexpected {
                position: at + used,
                expected: "a species after the coefficient",
                found: "nothing".into(),
            });
        }
        out.push(RawTerm {
            coefficient,
            text: &t[used..],
            position: at + used,
        });
        if out.len() > MAX_TERMS {
            return Err(SyntaxError::Limit {
                position: at,
                what: "species terms per equation",
                limit: MAX_TERMS as u64,
            });
        }
        Ok(())
    })
}

/// Cut an equation into sides and terms, reading coefficients but not species.
///
/// # Errors
/// `SyntaxError` with the byte position and what was expected there.
pub fn split_equation(s: &str) -> Result<RawEquation<'_>, SyntaxError> {
    if s.len() > MAX_EQUATION_BYTES {
        return Err(SyntaxError::Limit {
            position: 0,
            what: "equation length in bytes",
            limit: MAX_EQUATION_BYTES as u64,
        });
    }
    if is_reaction_smiles(s) {
        return split_reaction_smiles(s);
    }
    let (at, len, arrow) = find_arrow(s)?;
    let mut reactants = Vec::with_capacity(4);
    split_side(&s[..at], 0, "a reactant", &mut reactants)?;
    let mut products = Vec::with_capacity(4);
    split_side(&s[at + len..], at + len, "a product", &mut products)?;
    if reactants.len() + products.len() > MAX_TERMS {
        return Err(SyntaxError::Limit {
            position: 0,
            what: "species terms per equation",
            limit: MAX_TERMS as u64,
        });
    }
    Ok(RawEquation {
        reactants,
        products,
        arrow,
        notation: Notation::Formula,
        agents: Vec::new(),
    })
}

/// Parse a whole equation, species included.
///
/// # Errors
/// `SyntaxError` with the byte position and what was expected there.
pub fn parse_equation(s: &str) -> Result<Equation, SyntaxError> {
    let raw = split_equation(s)?;
    if raw.notation == Notation::Smiles {
        return Err(SyntaxError::Unexpected {
            position: 0,
            expected: "a formula equation (read reaction SMILES with split_equation and the structures module)",
            found: "a reaction SMILES".into(),
        });
    }
    let term = |t: &RawTerm| -> Result<Term, SyntaxError> {
        Ok(Term {
            coefficient: t.coefficient,
            species: parse_species(t.text, t.position)?,
            position: t.position,
        })
    };
    Ok(Equation {
        reactants: raw.reactants.iter().map(term).collect::<Result<_, _>>()?,
        products: raw.products.iter().map(term).collect::<Result<_, _>>()?,
        arrow: raw.arrow,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn texts(terms: &[Term]) -> Vec<String> {
        terms.iter().map(|t| t.species.to_string()).collect()
    }

    #[test]
    fn arrows_coefficients_and_charges() {
        let e = parse_equation("2 H2(g) + O2(g) -> 2H2O(l)").unwrap();
        assert_eq!(texts(&e.reactants), ["H2(g)", "O2(g)"]);
        assert_eq!(e.products[0].coefficient, Some(Rational::integer(2)));
        let e = parse_equation("H2 + 1/2 O2 = H2O").unwrap();
        assert_eq!(e.reactants[1].coefficient, Some(Rational::new(1, 2).unwrap()));
        let e = parse_equation("N2O4(g) <=> 2 NO2(g)").unwrap();
        assert_eq!(e.arrow, Arrow::Equilibrium);
        let e = parse_equation("NH4+ + OH- => NH3 + H2O").unwrap();
        assert_eq!(texts(&e.reactants), ["NH4+", "OH-"]);
        let e = parse_equation("Fe+3 + e- -> Fe+2").unwrap();
        assert_eq!(texts(&e.reactants), ["Fe+3", "e-"]);
        let e = parse_equation("H2+Cl2->2HCl").unwrap();
        assert_eq!(texts(&e.reactants), ["H2", "Cl2"]);
        let e = parse_equation("0.5 O2 + CO -> CO2").unwrap();
        assert_eq!(e.reactants[0].coefficient, Some(Rational::new(1, 2).unwrap()));
        let e = parse_equation("SO4^2- + Ba^2+ -> BaSO4(s)").unwrap();
        assert_eq!(texts(&e.reactants), ["SO4-2", "Ba+2"]);
    }

    #[test]
    fn errors_point_at_the_problem() {
        let e = parse_equation("H2 + O2").unwrap_err();
        assert!(matches!(e, SyntaxError::Unexpected { position: 7, .. }), "{e}");
        let e = parse_equation("H2 -> H2O -> H2O2").unwrap_err();
        assert!(matches!(e, SyntaxError::Unexpected { position: 10, .. }), "{e}");
        let e = parse_equation("H2 +  -> H2").unwrap_err();
        assert!(e.to_string().contains("expected a reactant"), "{e}");
        let e = parse_equation("2 H2 + O2 -> 2 H2Q").unwrap_err();
        assert_eq!(
            e,
            SyntaxError::UnknownElement {
                position: 17,
                symbol: "Q".into()
            }
        );
        let e = parse_equation("CCO>>CC=O").unwrap_err();
        assert!(e.to_string().contains("SMILES"), "{e}");
    }

    #[test]
    fn reaction_smiles_are_cut_into_species() {
        let r = split_equation("CCO.O=O>>CC(=O)O.O").unwrap();
        assert_eq!(r.notation, Notation::Smiles);
        let t: Vec<(&str, usize)> = r.reactants.iter().chain(&r.products).map(|t| (t.text, t.position)).collect();
        assert_eq!(t, [("CCO", 0), ("O=O", 4), ("CC(=O)O", 9), ("O", 17)]);
        let r = split_equation("C=C.[H][H]>[Pd]>CC").unwrap();
        assert_eq!(r.agents.iter().map(|t| t.text).collect::<Vec<_>>(), ["[Pd]"]);
        assert_eq!(r.products[0].position, 16);
        assert!(split_equation(">>CC").is_err());
        assert!(split_equation("CC>>").is_err());
        assert!(split_equation("CC>>C>C").is_err());
        assert!(split_equation("CC..C>>CCC").is_err());
        // Arrows of formula equations are not reaction SMILES.
        assert_eq!(split_equation("H2 + O2 -> H2O").unwrap().notation, Notation::Formula);
        assert_eq!(split_equation("N2O4 <=> 2 NO2").unwrap().notation, Notation::Formula);
        assert_eq!(split_equation("H2 + O2 => H2O").unwrap().notation, Notation::Formula);
    }

    #[test]
    fn limits() {
        let e = parse_equation("10000000 H2 -> H2").unwrap_err();
        assert!(matches!(e, SyntaxError::Limit { what: "coefficient", .. }), "{e}");
        let long = format!("{} -> H2", vec!["H2"; 3000].join(" + "));
        assert!(matches!(parse_equation(&long), Err(SyntaxError::Limit { .. })));
        let many = format!("{} -> H2", vec!["H2"; 41].join(" + "));
        assert!(matches!(
            parse_equation(&many),
            Err(SyntaxError::Limit {
                what: "species terms per equation",
                ..
            })
        ));
        let e = parse_equation("0.0000001 H2 -> H2").unwrap_err();
        assert!(matches!(e, SyntaxError::Limit { .. }), "{e}");
    }
}
