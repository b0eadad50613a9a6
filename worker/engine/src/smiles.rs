//! SMILES structures, after the OpenSMILES specification (opensmiles.org, 2016 draft).
//!
//! Read: the organic subset (`B C N O P S F Cl Br I` and aromatic `b c n o p s`) with implicit
//! hydrogens by the standard valences (B 3; C 4; N 3, 5; O 2; P 3, 5; S 2, 4, 6; halogens 1);
//! bracket atoms `[isotope symbol chirality hcount charge :class]` (chirality is accepted and
//! ignored, as are the directional bonds `/` and `\`); bonds `- = # $ :`; branches; ring closures
//! `0-9` and `%nn`; `.` between disconnected parts.
//!
//! Aromatic atoms are kekulized: each aromatic atom that still needs a π bond (a `c` with two ring
//! bonds, a pyridine `n`, but not `[nH]`, `o` or `s`) is paired with an aromatic neighbour by a
//! maximum matching (Edmonds' blossom algorithm), and implicit hydrogens follow from the Kekulé
//! structure. A system with no perfect matching (`c1cccc1`, or pyrrole written `c1ccnc1` without
//! its `[nH]`) is an error, as in RDKit and Open Babel.
//!
//! Explicit hydrogen atoms (`[H]C([H])([H])[H]`) are folded into their neighbour's hydrogen count,
//! so a molecule has one graph however it is written.
//!
//! Identity: [`Molecule::canonical_key`] ranks atoms by iterated neighbourhood refinement
//! (Morgan/Weininger-style) with tie-breaking, then writes every atom's invariants and the edge
//! list in canonical order. The key holds the whole graph, so two different graphs never share a
//! key; bond orders are left out and each atom's valence put in, so Kekulé structures of one
//! aromatic system (and `c1ccccc1` versus `C1=CC=CC=C1`) share a key, as in InChI's connection
//! layer. Stereochemistry is not part of the key.

use crate::elements::{self, Z};
use crate::formula::Formula;

/// Longest SMILES accepted, in bytes.
pub const MAX_SMILES_BYTES: usize = 2000;
/// Most heavy (non-hydrogen) atoms in one SMILES.
pub const MAX_HEAVY_ATOMS: usize = 500;
/// Most atoms of any kind as written (explicit `[H]` included).
pub const MAX_ATOMS: usize = 1000;
/// Largest ring [`Molecule::rings`] lists (aromaticity and the Joback ring rules look no further).
pub const MAX_RING_SIZE: usize = 8;
/// Largest absolute formal charge on one atom.
pub const MAX_ATOM_CHARGE: i32 = 15;

/// The order of a bond as written. Aromatic bonds also get a Kekulé order ([`Bond::kekule_order`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum BondOrder {
    Single,
    Double,
    Triple,
    Quadruple,
    Aromatic,
}

impl BondOrder {
    fn written(self) -> u8 {
        match self {
            BondOrder::Single | BondOrder::Aromatic => 1,
            BondOrder::Double => 2,
            BondOrder::Triple => 3,
            BondOrder::Quadruple => 4,
        }
    }
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Atom {
    pub element: Z,
    pub isotope: Option<u16>,
    pub charge: i8,
    /// Hydrogens on this atom: bracket count, implicit, and folded explicit `[H]` neighbours.
    pub hydrogens: u8,
    pub aromatic: bool,
    /// On at least one ring (a cycle of the graph).
    pub in_ring: bool,
    pub class: Option<u32>,
    /// Written in brackets.
    pub bracket: bool,
    /// Sum of Kekulé bond orders plus hydrogens.
    pub valence: u8,
    /// Byte offset of the atom in the SMILES.
    pub position: usize,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Bond {
    pub a: usize,
    pub b: usize,
    pub order: BondOrder,
    /// 1..=4; for aromatic bonds the order in the Kekulé structure found.
    pub kekule_order: u8,
    /// Not a bridge: the bond lies on a cycle.
    pub in_ring: bool,
}

impl Bond {
    pub fn other(&self, atom: usize) -> usize {
        if self.a == atom {
            self.b
        } else {
            self.a
        }
    }
}

/// A molecular graph with hydrogens held as counts on heavy atoms.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Molecule {
    pub atoms: Vec<Atom>,
    pub bonds: Vec<Bond>,
    /// `adjacency[adj_start[i]..adj_start[i+1]]` = (neighbour, bond index) of atom i.
    adj_start: Vec<u32>,
    adjacency: Vec<(u32, u32)>,
    /// Smallest ring (up to 8 atoms) through each ring bond, sorted atom indices, no repeats.
    ring_list: Vec<Vec<usize>>,
    /// Connected parts (found with the rings).
    components: usize,
    /// Symmetry classes, canonical ranks and automorphism count, computed once when first asked.
    ranked: Ranked,
}

/// Ranking results kept once computed. Not part of a molecule's identity: two equal molecules
/// compare equal whether or not either has been ranked.
#[derive(Clone, Debug, Default)]
struct Ranked(std::sync::OnceLock<(Vec<u32>, Vec<u32>, f64)>);

impl PartialEq for Ranked {
    fn eq(&self, _: &Ranked) -> bool {
        true
    }
}

impl Eq for Ranked {}

/// What went wrong reading a SMILES, and where (byte offset into the text given).
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("SMILES at byte {position}: {reason}")]
pub struct SmilesError {
    pub position: usize,
    pub reason: String,
}

fn err<T>(position: usize, reason: impl Into<String>) -> Result<T, SmilesError> {
    Err(SmilesError {
        position,
        reason: reason.into(),
    })
}

/// Standard valences of the organic subset, lowest first (OpenSMILES §3.1.5).
fn organic_valences(z: Z) -> &'static [u8] {
    match z {
        5 => &[3],
        6 => &[4],
        7 | 15 => &[3, 5],
        8 => &[2],
        16 => &[2, 4, 6],
        9 | 17 | 35 | 53 => &[1],
        _ => &[],
    }
}

/// Valence electrons of main-group elements the aromaticity rules cover.
fn valence_electrons(z: Z) -> Option<i32> {
    Some(match z {
        5 => 3,
        6 | 14 => 4,
        7 | 15 | 33 => 5,
        8 | 16 | 34 | 52 => 6,
        9 | 17 | 35 | 53 => 7,
        _ => return None,
    })
}

/// The lowest normal valence of an element with a formal charge, by the isoelectronic element
/// (N+ like C: 4; O+ like N: 3; C- like N: 3; B- like C: 4).
pub fn lowest_valence(z: Z, charge: i32) -> Option<u8> {
    let ve = valence_electrons(z)? - charge;
    let v = if ve >= 4 { 8 - ve } else { ve };
    (0..=8).contains(&v).then_some(v as u8)
}

const AROMATIC_SYMBOLS: [(&[u8], Z); 8] = [
    (b"se", 34),
    (b"as", 33),
    (b"te", 52),
    (b"b", 5),
    (b"c", 6),
    (b"n", 7),
    (b"o", 8),
    (b"p", 15),
];

struct Parser<'a> {
    s: &'a [u8],
    i: usize,
    base: usize,
    atoms: Vec<Atom>,
    bonds: Vec<Bond>,
}

#[derive(Clone, Copy)]
struct OpenRing {
    atom: usize,
    bond: Option<BondOrder>,
    position: usize,
}

impl Parser<'_> {
    fn pos(&self) -> usize {
        self.base + self.i
    }

    fn found(&self) -> String {
        match self.s.get(self.i) {
            None => "end of input".into(),
            Some(&c) if c.is_ascii_graphic() => format!("'{}'", c as char),
            Some(&c) => format!("byte 0x{c:02x}"),
        }
    }

    fn digits(&mut self, max_len: usize) -> Option<u32> {
        let start = self.i;
        let mut n: u32 = 0;
        while self.i < self.s.len() && self.s[self.i].is_ascii_digit() && self.i - start < max_len {
            n = n * 10 + (self.s[self.i] - b'0') as u32;
            self.i += 1;
        }
        (self.i > start).then_some(n)
    }

    fn push_atom(&mut self, atom: Atom) -> Result<usize, SmilesError> {
        if self.atoms.len() >= MAX_ATOMS {
            return err(atom.position, format!("more than {MAX_ATOMS} atoms"));
        }
        self.atoms.push(atom);
        Ok(self.atoms.len() - 1)
    }

    fn organic_atom(&mut self) -> Result<Option<usize>, SmilesError> {
        let start = self.i;
        let (sym, aromatic): (&[u8], bool) = match self.s[self.i] {
            b'C' if self.s.get(self.i + 1) == Some(&b'l') => (b"Cl", false),
            b'B' if self.s.get(self.i + 1) == Some(&b'r') => (b"Br", false),
            c @ (b'B' | b'C' | b'N' | b'O' | b'P' | b'S' | b'F' | b'I') => (
                std::slice::from_ref(match c {
                    b'B' => &b'B',
                    b'C' => &b'C',
                    b'N' => &b'N',
                    b'O' => &b'O',
                    b'P' => &b'P',
                    b'S' => &b'S',
                    b'F' => &b'F',
                    _ => &b'I',
                }),
                false,
            ),
            b'b' => (b"B", true),
            b'c' => (b"C", true),
            b'n' => (b"N", true),
            b'o' => (b"O", true),
            b'p' => (b"P", true),
            b's' => (b"S", true),
            b'*' => return err(self.pos(), "the wildcard atom '*' has no formula; write the element"),
            _ => return Ok(None),
        };
        let len = if sym.len() == 2 { 2 } else { 1 };
        let element = elements::by_symbol(sym).expect("organic subset symbols are elements");
        self.i += len;
        let atom = Atom {
            element,
            isotope: None,
            charge: 0,
            hydrogens: 0,
            aromatic,
            in_ring: false,
            class: None,
            bracket: false,
            valence: 0,
            position: self.base + start,
        };
        self.push_atom(atom).map(Some)
    }

    fn bracket_atom(&mut self) -> Result<usize, SmilesError> {
        let open = self.pos();
        self.i += 1; // '['
        let isotope = match self.digits(4) {
            Some(n) if n > 999 => return err(self.pos(), "an isotope mass of at most 999"),
            Some(n) => Some(n as u16),
            None => None,
        };
        let sym_pos = self.pos();
        let rest = &self.s[self.i..];
        let (element, aromatic, len) = if let Some(&(sym, z)) = AROMATIC_SYMBOLS.iter().find(|(sym, _)| rest.starts_with(sym)) {
            (z, true, sym.len())
        } else if rest.first() == Some(&b's') {
            (16, true, 1)
        } else if rest.first().is_some_and(u8::is_ascii_uppercase) {
            let two = rest.len() > 1 && rest[1].is_ascii_lowercase();
            let sym = if two { &rest[..2] } else { &rest[..1] };
            match elements::by_symbol(sym) {
                Some(z) => (z, false, sym.len()),
                None => return err(sym_pos, format!("unknown element symbol '{}'", String::from_utf8_lossy(sym))),
            }
        } else if rest.first() == Some(&b'*') {
            return err(sym_pos, "the wildcard atom '*' has no formula; write the element");
        } else {
            return err(sym_pos, format!("expected an element symbol, found {}", self.found()));
        };
        self.i += len;
        // Chirality: @, @@, @TH1, @AL2, @SP3, @TB12, @OH30: accepted and ignored.
        if self.s.get(self.i) == Some(&b'@') {
            self.i += 1;
            if self.s.get(self.i) == Some(&b'@') {
                self.i += 1;
            } else {
                let r = &self.s[self.i..];
                if ["TH", "AL", "SP", "TB", "OH"].iter().any(|p| r.starts_with(p.as_bytes())) {
                    self.i += 2;
                    if self.digits(2).is_none() {
                        return err(self.pos(), "a number after the chirality class");
                    }
                }
            }
        }
        let mut hydrogens = 0u8;
        if self.s.get(self.i) == Some(&b'H') {
            self.i += 1;
            hydrogens = self.digits(1).unwrap_or(1) as u8;
        }
        let mut charge: i32 = 0;
        if let Some(&c @ (b'+' | b'-')) = self.s.get(self.i) {
            let sign = if c == b'+' { 1 } else { -1 };
            self.i += 1;
            if let Some(n) = self.digits(2) {
                charge = sign * n as i32;
            } else {
                charge = sign;
                while self.s.get(self.i) == Some(&c) {
                    self.i += 1;
                    charge += sign;
                }
            }
            if charge.abs() > MAX_ATOM_CHARGE {
                return err(self.pos(), format!("a charge of at most {MAX_ATOM_CHARGE} in size"));
            }
        }
        let mut class = None;
        if self.s.get(self.i) == Some(&b':') {
            self.i += 1;
            class = Some(self.digits(9).ok_or_else(|| SmilesError {
                position: self.pos(),
                reason: "an atom class number after ':'".into(),
            })?);
        }
        if self.s.get(self.i) != Some(&b']') {
            return err(
                self.pos(),
                format!("expected ']' to close the atom opened at byte {open}, found {}", self.found()),
            );
        }
        self.i += 1;
        let atom = Atom {
            element,
            isotope,
            charge: charge as i8,
            hydrogens,
            aromatic,
            in_ring: false,
            class,
            bracket: true,
            valence: 0,
            position: open,
        };
        self.push_atom(atom)
    }

    /// `closure`: a ring-closure bond, the only kind that can repeat an existing bond.
    fn add_bond(&mut self, a: usize, b: usize, written: Option<BondOrder>, position: usize, closure: bool) -> Result<(), SmilesError> {
        if a == b {
            return err(position, "a ring closure back to the same atom");
        }
        if closure && self.bonds.iter().any(|x| (x.a == a && x.b == b) || (x.a == b && x.b == a)) {
            return err(position, "a second bond between the same two atoms");
        }
        let order = written.unwrap_or(if self.atoms[a].aromatic && self.atoms[b].aromatic {
            BondOrder::Aromatic
        } else {
            BondOrder::Single
        });
        self.bonds.push(Bond {
            a,
            b,
            order,
            kekule_order: order.written(),
            in_ring: false,
        });
        Ok(())
    }

    fn parse(&mut self) -> Result<(), SmilesError> {
        let mut prev: Option<usize> = None;
        let mut bond: Option<(BondOrder, usize)> = None;
        let mut branches: Vec<(usize, usize)> = Vec::new();
        let mut rings: [Option<OpenRing>; 100] = [None; 100];
        while self.i < self.s.len() {
            let c = self.s[self.i];
            let at = self.pos();
            match c {
                b'-' | b'=' | b'#' | b'$' | b':' | b'/' | b'\\' => {
                    if prev.is_none() {
                        return err(at, "a bond needs an atom before it");
                    }
                    if bond.is_some() {
                        return err(at, "two bond symbols in a row");
                    }
                    let order = match c {
                        b'=' => BondOrder::Double,
                        b'#' => BondOrder::Triple,
                        b'$' => BondOrder::Quadruple,
                        b':' => BondOrder::Aromatic,
                        _ => BondOrder::Single,
                    };
                    bond = Some((order, at));
                    self.i += 1;
                }
                b'(' => {
                    let Some(p) = prev else {
                        return err(at, "a branch needs an atom before it");
                    };
                    if bond.is_some() {
                        return err(at, "a bond symbol before '(' (write it inside the branch)");
                    }
                    branches.push((p, at));
                    self.i += 1;
                    if self.s.get(self.i) == Some(&b')') {
                        return err(self.pos(), "an empty branch '()'");
                    }
                }
                b')' => {
                    if bond.is_some() {
                        return err(at, "a bond with no atom after it");
                    }
                    let Some((p, _)) = branches.pop() else {
                        return err(at, "')' without a matching '('");
                    };
                    prev = Some(p);
                    self.i += 1;
                }
                b'.' => {
                    if prev.is_none() || bond.is_some() {
                        return err(at, "'.' must stand between two atoms");
                    }
                    prev = None;
                    self.i += 1;
                }
                b'0'..=b'9' | b'%' => {
                    let Some(p) = prev else {
                        return err(at, "a ring-closure digit needs an atom before it");
                    };
                    let n = if c == b'%' {
                        self.i += 1;
                        let start = self.i;
                        match self.digits(2) {
                            Some(n) if self.i - start == 2 => n as usize,
                            _ => return err(at, "two digits after '%'"),
                        }
                    } else {
                        self.i += 1;
                        (c - b'0') as usize
                    };
                    let written = bond.take();
                    match rings[n].take() {
                        None => {
                            rings[n] = Some(OpenRing {
                                atom: p,
                                bond: written.map(|b| b.0),
                                position: at,
                            })
                        }
                        Some(open) => {
                            let order = match (open.bond, written.map(|b| b.0)) {
                                (Some(a), Some(b)) if a != b => {
                                    return err(at, format!("ring bond {n} is written with two different orders"))
                                }
                                (a, b) => a.or(b),
                            };
                            self.add_bond(open.atom, p, order, at, true)?;
                        }
                    }
                }
                b'[' | b'A'..=b'Z' | b'a'..=b'z' | b'*' => {
                    let k = if c == b'[' {
                        self.bracket_atom()?
                    } else {
                        match self.organic_atom()? {
                            Some(k) => k,
                            None => {
                                return err(
                                    at,
                                    format!(
                                        "'{}' is not an organic-subset atom; write it in brackets, e.g. [{}]",
                                        c as char, c as char
                                    ),
                                )
                            }
                        }
                    };
                    if let Some(p) = prev {
                        self.add_bond(p, k, bond.take().map(|b| b.0), at, false)?;
                    } else if let Some((_, bpos)) = bond {
                        return err(bpos, "a bond with no atom before it");
                    }
                    prev = Some(k);
                }
                _ => return err(at, format!("unexpected {}", self.found())),
            }
        }
        if let Some((_, bpos)) = bond {
            return err(bpos, "a bond with no atom after it");
        }
        if let Some(&(_, bpos)) = branches.last() {
            return err(bpos, "'(' is never closed");
        }
        if let Some(open) = rings.iter().flatten().next() {
            return err(open.position, "ring bond is never closed");
        }
        if self.atoms.is_empty() {
            return err(self.base, "an empty SMILES");
        }
        Ok(())
    }
}

impl Molecule {
    /// Read one SMILES. `base` is added to every position in errors (the offset of this SMILES in a
    /// longer text).
    ///
    /// # Errors
    /// [`SmilesError`] with the byte position and reason: bad syntax, unknown element, unclosed
    /// ring or branch, an aromatic system that cannot be kekulized, or a limit exceeded.
    pub fn parse(smiles: &str, base: usize) -> Result<Molecule, SmilesError> {
        if smiles.len() > MAX_SMILES_BYTES {
            return err(base, format!("longer than {MAX_SMILES_BYTES} bytes"));
        }
        let mut p = Parser {
            s: smiles.as_bytes(),
            i: 0,
            base,
            // At most one atom per byte; a typical SMILES has about one atom per 1.3 bytes.
            atoms: Vec::with_capacity(smiles.len()),
            bonds: Vec::with_capacity(smiles.len()),
        };
        p.parse()?;
        let heavy = p.atoms.iter().filter(|a| a.element != 1).count();
        if heavy > MAX_HEAVY_ATOMS {
            return err(base, format!("more than {MAX_HEAVY_ATOMS} heavy atoms"));
        }
        let mut m = Molecule {
            atoms: p.atoms,
            bonds: p.bonds,
            adj_start: Vec::new(),
            adjacency: Vec::new(),
            ring_list: Vec::new(),
            components: 0,
            ranked: Ranked::default(),
        };
        m.build_adjacency();
        m.kekulize()?;
        m.implicit_hydrogens();
        m.charge_separate();
        m.fold_explicit_hydrogens();
        m.perceive_rings();
        m.ring_list = m.find_rings(MAX_RING_SIZE);
        m.perceive_aromaticity();
        Ok(m)
    }

    fn build_adjacency(&mut self) {
        let n = self.atoms.len();
        let mut deg = vec![0u32; n + 1];
        for b in &self.bonds {
            deg[b.a + 1] += 1;
            deg[b.b + 1] += 1;
        }
        for i in 0..n {
            deg[i + 1] += deg[i];
        }
        let mut fill = deg.clone();
        let mut adj = vec![(0u32, 0u32); 2 * self.bonds.len()];
        for (k, b) in self.bonds.iter().enumerate() {
            adj[fill[b.a] as usize] = (b.b as u32, k as u32);
            fill[b.a] += 1;
            adj[fill[b.b] as usize] = (b.a as u32, k as u32);
            fill[b.b] += 1;
        }
        self.adj_start = deg;
        self.adjacency = adj;
    }

    /// (neighbour, bond index) pairs of atom `i`.
    pub fn neighbours(&self, i: usize) -> impl Iterator<Item = (usize, usize)> + '_ {
        self.adjacency[self.adj_start[i] as usize..self.adj_start[i + 1] as usize]
            .iter()
            .map(|&(n, b)| (n as usize, b as usize))
    }

    /// Number of heavy-atom neighbours (hydrogens are counts, not atoms, except in `[H][H]`).
    pub fn degree(&self, i: usize) -> usize {
        (self.adj_start[i + 1] - self.adj_start[i]) as usize
    }

    /// Sum of bond orders with aromatic bonds counted as 1, plus bracket hydrogens.
    fn sigma(&self, i: usize) -> i32 {
        let bonds: i32 = self.neighbours(i).map(|(_, b)| self.bonds[b].order.written() as i32).sum();
        bonds + self.atoms[i].hydrogens as i32
    }

    /// Does aromatic atom `i` still need a π (double) bond in the Kekulé structure?
    fn needs_pi(&self, i: usize) -> bool {
        let a = &self.atoms[i];
        let Some(v0) = lowest_valence(a.element, a.charge as i32) else {
            return false;
        };
        self.sigma(i) < v0 as i32
    }

    fn kekulize(&mut self) -> Result<(), SmilesError> {
        if !self.atoms.iter().any(|a| a.aromatic) {
            return Ok(());
        }
        let n = self.atoms.len();
        let need: Vec<bool> = (0..n).map(|i| self.atoms[i].aromatic && self.needs_pi(i)).collect();
        let edges: Vec<(u32, u32)> = self
            .bonds
            .iter()
            .filter(|b| b.order == BondOrder::Aromatic && need[b.a] && need[b.b])
            .map(|b| (b.a as u32, b.b as u32))
            .collect();
        let mut matcher = Matching::new(n, &edges);
        matcher.solve();
        let bare_n = (0..n).any(|i| need[i] && self.atoms[i].element == 7 && !self.atoms[i].bracket);
        for (i, &needed) in need.iter().enumerate() {
            if needed && matcher.mate[i] == NONE {
                let a = &self.atoms[i];
                let hint = if bare_n { " (a pyrrole-type nitrogen is written [nH])" } else { "" };
                return err(
                    a.position,
                    format!("cannot kekulize the aromatic system: no double bond can be placed at this atom{hint}"),
                );
            }
        }
        for i in 0..n {
            let j = matcher.mate[i];
            if j != NONE && i < j as usize {
                let bond = self.neighbours(i).find(|&(nb, _)| nb == j as usize).map(|x| x.1);
                if let Some(k) = bond {
                    self.bonds[k].kekule_order = 2;
                }
            }
        }
        Ok(())
    }

    fn kekule_sum(&self, i: usize) -> u32 {
        self.neighbours(i).map(|(_, b)| self.bonds[b].kekule_order as u32).sum()
    }

    fn implicit_hydrogens(&mut self) {
        for i in 0..self.atoms.len() {
            let sum = self.kekule_sum(i);
            let a = &self.atoms[i];
            if !a.bracket {
                let h = organic_valences(a.element)
                    .iter()
                    .find(|&&v| v as u32 >= sum)
                    .map_or(0, |&v| v as u32 - sum);
                self.atoms[i].hydrogens = h as u8;
            }
            self.atoms[i].valence = (sum + self.atoms[i].hydrogens as u32).min(255) as u8;
        }
    }

    /// Write hypervalent N and halogen oxides charge-separated, as RDKit's sanitization does, so
    /// both spellings share one graph: a neutral five-valent N with `=O` becomes `[N+][O-]`
    /// (`CN(=O)=O` reads as `C[N+](=O)[O-]`), and each `=O` on Cl, Br or I becomes `[X+][O-]`
    /// (`OCl(=O)(=O)=O` reads as `O[Cl+3]([O-])([O-])[O-]`).
    fn charge_separate(&mut self) {
        for i in 0..self.atoms.len() {
            let a = &self.atoms[i];
            let convert_all = match a.element {
                7 if a.charge == 0 && a.valence == 5 => false,
                17 | 35 | 53 if a.charge == 0 && a.valence > 1 => true,
                _ => continue,
            };
            let oxo: Vec<(usize, usize)> = self
                .neighbours(i)
                .filter(|&(w, b)| {
                    self.bonds[b].kekule_order == 2
                        && self.atoms[w].element == 8
                        && self.atoms[w].charge == 0
                        && self.degree(w) == 1
                        && self.atoms[w].hydrogens == 0
                })
                .collect();
            for &(w, b) in oxo.iter().take(if convert_all { oxo.len() } else { 1 }) {
                self.bonds[b].kekule_order = 1;
                self.bonds[b].order = BondOrder::Single;
                self.atoms[w].charge = -1;
                self.atoms[w].valence -= 1;
                self.atoms[i].charge += 1;
                self.atoms[i].valence -= 1;
            }
        }
    }

    /// Fold `[H]` atoms bonded singly to one non-hydrogen atom into that atom's count. Dihydrogen
    /// written `[H][H]` folds the same way into `[HH]` (the second atom into the first), so both
    /// spellings are one graph.
    fn fold_explicit_hydrogens(&mut self) {
        let plain_h = |m: &Molecule, i: usize| {
            let a = &m.atoms[i];
            a.element == 1 && a.isotope.is_none() && a.charge == 0 && a.hydrogens == 0 && m.degree(i) == 1
        };
        let foldable = |m: &Molecule, i: usize| {
            plain_h(m, i) && {
                let (nb, b) = m.neighbours(i).next().expect("degree 1");
                m.bonds[b].kekule_order == 1 && (m.atoms[nb].element != 1 || (plain_h(m, nb) && nb < i))
            }
        };
        let fold: Vec<bool> = (0..self.atoms.len()).map(|i| foldable(self, i)).collect();
        if !fold.iter().any(|&f| f) {
            return;
        }
        let mut new_index = vec![usize::MAX; self.atoms.len()];
        let mut atoms = Vec::with_capacity(self.atoms.len());
        for (i, a) in self.atoms.iter().enumerate() {
            if !fold[i] {
                new_index[i] = atoms.len();
                atoms.push(a.clone());
            }
        }
        let mut bonds = Vec::with_capacity(self.bonds.len());
        for b in &self.bonds {
            match (fold[b.a], fold[b.b]) {
                (true, _) => atoms[new_index[b.b]].hydrogens += 1,
                (_, true) => atoms[new_index[b.a]].hydrogens += 1,
                _ => bonds.push(Bond {
                    a: new_index[b.a],
                    b: new_index[b.b],
                    ..*b
                }),
            }
        }
        self.atoms = atoms;
        self.bonds = bonds;
        self.build_adjacency();
    }

    /// Ring bonds are the bonds that are not bridges (Tarjan's low-link, iterative).
    fn perceive_rings(&mut self) {
        let n = self.atoms.len();
        let mut disc = vec![u32::MAX; n];
        let mut low = vec![0u32; n];
        let mut time = 0u32;
        // Every bond starts as a ring bond; bridges are cleared as the search finds them.
        for b in &mut self.bonds {
            b.in_ring = true;
        }
        // Stack of (atom, bond used to enter it, next adjacency offset).
        let mut stack: Vec<(usize, usize, usize)> = Vec::new();
        self.components = 0;
        for root in 0..n {
            if disc[root] != u32::MAX {
                continue;
            }
            self.components += 1;
            disc[root] = time;
            low[root] = time;
            time += 1;
            stack.push((root, usize::MAX, self.adj_start[root] as usize));
            while let Some(&mut (v, via, ref mut next)) = stack.last_mut() {
                if *next < self.adj_start[v + 1] as usize {
                    let (w, b) = self.adjacency[*next];
                    *next += 1;
                    let (w, b) = (w as usize, b as usize);
                    if b == via {
                        continue;
                    }
                    if disc[w] == u32::MAX {
                        disc[w] = time;
                        low[w] = time;
                        time += 1;
                        stack.push((w, b, self.adj_start[w] as usize));
                    } else {
                        low[v] = low[v].min(disc[w]);
                    }
                } else {
                    stack.pop();
                    if let Some(&(u, _, _)) = stack.last() {
                        low[u] = low[u].min(low[v]);
                        if low[v] > disc[u] {
                            self.bonds[via].in_ring = false;
                        }
                    }
                }
            }
        }
        for a in &mut self.atoms {
            a.in_ring = false;
        }
        for b in &self.bonds {
            if b.in_ring {
                self.atoms[b.a].in_ring = true;
                self.atoms[b.b].in_ring = true;
            }
        }
    }

    /// Mark rings written in Kekulé form (`C1=CC=CC=C1`) aromatic by Hückel's rule, ring by ring:
    /// each smallest ring (up to 8 atoms) through a ring bond counts one π electron for an atom
    /// with a double bond inside the ring, two for N, O or S with a lone pair and no double bond
    /// (and for a carbanion), none for a carbon with an exocyclic double bond to O, N or S; a ring
    /// with 4n + 2 and no sp3 atom is aromatic. Only `aromatic` flags change (the Joback phenol
    /// group and reporting use them); the graph and its identity do not.
    fn perceive_aromaticity(&mut self) {
        let candidate = self
            .bonds
            .iter()
            .any(|b| b.in_ring && b.kekule_order == 2 && !(self.atoms[b.a].aromatic && self.atoms[b.b].aromatic));
        if !candidate {
            return;
        }
        let rings = std::mem::take(&mut self.ring_list);
        // Fused rings: a ring whose double bond leaves it into a ring already found aromatic
        // (naphthalene's Kekulé form) is judged after that ring, so repeat until nothing changes.
        let mut done = vec![false; rings.len()];
        loop {
            let mut changed = false;
            for (r, ring) in rings.iter().enumerate() {
                if !done[r] && self.huckel(ring) {
                    for &i in ring {
                        self.atoms[i].aromatic = true;
                    }
                    done[r] = true;
                    changed = true;
                }
            }
            if !changed {
                break;
            }
        }
        self.ring_list = rings;
    }

    fn huckel(&self, ring: &[usize]) -> bool {
        let mut electrons = 0;
        for &i in ring {
            let a = &self.atoms[i];
            let mut inside = false;
            let mut outside_hetero = false;
            let mut outside_other = false;
            for (w, b) in self.neighbours(i) {
                if self.bonds[b].kekule_order != 2 {
                    continue;
                }
                if ring.binary_search(&w).is_ok() || (a.aromatic && self.atoms[w].aromatic && self.bonds[b].in_ring) {
                    inside = true;
                } else if matches!(self.atoms[w].element, 7 | 8 | 16) {
                    outside_hetero = true;
                } else {
                    outside_other = true;
                }
            }
            let connections = self.degree(i) + a.hydrogens as usize;
            electrons += match (a.element, inside, outside_hetero, outside_other) {
                (_, true, _, _) => 1,
                (6, false, true, false) => 0,
                (7 | 15, false, false, false) if connections == 3 && a.charge == 0 => 2,
                (8 | 16 | 34, false, false, false) if connections == 2 && a.charge == 0 => 2,
                (6, false, false, false) if a.charge == -1 && connections == 3 => 2,
                _ => return false,
            };
        }
        electrons % 4 == 2
    }

    /// The smallest ring of at most [`MAX_RING_SIZE`] atoms through each ring bond, without
    /// repeats; each ring as its sorted atom indices (found once, when the SMILES is read).
    pub fn rings(&self) -> &[Vec<usize>] {
        &self.ring_list
    }

    fn find_rings(&self, max_size: usize) -> Vec<Vec<usize>> {
        let mut rings: Vec<Vec<usize>> = Vec::new();
        if !self.bonds.iter().any(|b| b.in_ring) {
            return rings;
        }
        let mut scratch = RingScratch::new(self.atoms.len());
        for k in 0..self.bonds.len() {
            let Some(mut ring) = self.ring_path_with(k, max_size, &mut scratch) else {
                continue;
            };
            ring.sort_unstable();
            if !rings.contains(&ring) {
                rings.push(ring);
            }
        }
        rings
    }

    /// Atoms of the smallest ring (at most `max_size` atoms) through bond `k`.
    pub fn ring_path(&self, k: usize, max_size: usize) -> Option<Vec<usize>> {
        self.ring_path_with(k, max_size, &mut RingScratch::new(self.atoms.len()))
    }

    /// Breadth-first from one end of bond `k` to the other without using `k`.
    fn ring_path_with(&self, k: usize, max_size: usize, s: &mut RingScratch) -> Option<Vec<usize>> {
        let b = self.bonds[k];
        if !b.in_ring {
            return None;
        }
        s.queue.clear();
        s.queue.push(b.a as u32);
        s.parent[b.a] = b.a as u32;
        s.depth[b.a] = 1;
        let mut head = 0;
        let mut found = None;
        'search: while head < s.queue.len() {
            let v = s.queue[head] as usize;
            head += 1;
            if s.depth[v] as usize >= max_size {
                continue;
            }
            for (w, bond) in self.neighbours(v) {
                // A ring is made of ring bonds only, so bridges are never crossed.
                if bond == k || s.depth[w] != 0 || !self.bonds[bond].in_ring {
                    continue;
                }
                s.parent[w] = v as u32;
                s.depth[w] = s.depth[v] + 1;
                s.queue.push(w as u32);
                if w == b.b {
                    found = Some(w);
                    break 'search;
                }
            }
        }
        let path = found.map(|end| {
            let mut path = vec![end];
            let mut cur = end;
            while cur != b.a {
                cur = s.parent[cur] as usize;
                path.push(cur);
            }
            path
        });
        for &v in &s.queue {
            s.depth[v as usize] = 0;
        }
        path
    }

    /// Element counts (hydrogens included) and net charge.
    pub fn formula(&self) -> Formula {
        let mut counts = [0u32; 119];
        let mut charge = 0i32;
        for a in &self.atoms {
            counts[a.element as usize] += 1;
            counts[1] += a.hydrogens as u32;
            charge += a.charge as i32;
        }
        Formula {
            atoms: (1..=118u8)
                .filter(|&z| counts[z as usize] > 0)
                .map(|z| (z, counts[z as usize]))
                .collect(),
            charge,
        }
    }

    /// Heavy atoms (hydrogen atoms kept as atoms, as in `[H][H]`, are not counted).
    pub fn heavy_atom_count(&self) -> usize {
        self.atoms.iter().filter(|a| a.element != 1).count()
    }

    /// Number of connected parts (`.`-separated pieces that share no bond).
    pub fn component_count(&self) -> usize {
        self.components
    }

    /// Length of the smallest ring through bond `k` when it is at most `max_size`, else `None`.
    pub fn small_ring_through(&self, k: usize, max_size: usize) -> Option<usize> {
        let b = self.bonds[k];
        if !b.in_ring {
            return None;
        }
        // Breadth-first from b.a to b.b without bond k, at most max_size - 1 steps.
        let mut frontier = vec![b.a];
        let mut seen = vec![b.a];
        for depth in 1..max_size {
            let mut next = Vec::new();
            for &v in &frontier {
                for (w, bond) in self.neighbours(v) {
                    if bond == k || seen.contains(&w) {
                        continue;
                    }
                    if w == b.b {
                        return Some(depth + 1);
                    }
                    seen.push(w);
                    next.push(w);
                }
            }
            frontier = next;
        }
        None
    }

    /// What ranking starts from: element, isotope, charge, hydrogens, valence, degree.
    fn invariant(&self, i: usize) -> u64 {
        let a = &self.atoms[i];
        ((a.element as u64) << 48)
            | ((a.isotope.unwrap_or(0) as u64) << 36)
            | (((a.charge as i64 + 128) as u64) << 28)
            | ((a.hydrogens as u64) << 20)
            | ((a.valence as u64) << 12)
            | (self.degree(i) as u64).min(4095)
    }

    /// Canonical ranks 0..n: equal for no two atoms, and the same for any atom order of one graph
    /// (up to automorphism, which leaves the key unchanged).
    pub fn canonical_ranks(&self) -> Vec<u32> {
        self.ranked().1.clone()
    }

    /// (symmetry classes, canonical ranks, automorphisms), computed on first use.
    fn ranked(&self) -> &(Vec<u32>, Vec<u32>, f64) {
        self.ranked.0.get_or_init(|| {
            let n = self.atoms.len();
            let keys: Vec<u64> = (0..n).map(|i| self.invariant(i)).collect();
            let mut rank = ranks_from_keys(&keys);
            SCRATCH.with(|cell| {
                let mut scratch = cell.borrow_mut();
                refine(self, &mut rank, &mut scratch);
                let classes = rank.clone();
                let automorphisms = self.rank_with(&mut rank, &mut scratch);
                (classes, rank, automorphisms)
            })
        })
    }

    /// Symmetry classes (atoms no invariant of the graph tells apart: the orbits of its
    /// automorphisms for chemical graphs) and the number of automorphisms of the heavy-atom graph
    /// (hydrogens as counts), as the product of the orbit sizes met while individualizing atoms
    /// one by one — exact where refinement finds the orbits. Shares its work with
    /// [`Molecule::canonical_key`].
    pub fn symmetry(&self) -> (&[u32], f64) {
        let r = self.ranked();
        (&r.0, r.2)
    }

    /// Ranks until every atom has its own; returns the product of the sizes of the classes split
    /// on the way (the automorphism count of [`Molecule::symmetry`]).
    fn rank_with(&self, rank: &mut [u32], scratch: &mut Refiner) -> f64 {
        let n = rank.len();
        let mut counts = std::mem::take(&mut scratch.counts);
        let mut automorphisms = 1.0;
        loop {
            refine(self, rank, scratch);
            counts.clear();
            counts.resize(n, 0);
            for &r in rank.iter() {
                counts[r as usize] += 1;
            }
            // Tied leaves of one parent (the methyls of a t-butyl, the F of a CF3) are swapped by
            // an automorphism: give them consecutive ranks in input order, no refinement needed
            // (their parent's class holds only that parent, or the class would span parents).
            if self.split_leaf_ties(rank, &counts, &mut scratch.leaf, &mut automorphisms) {
                counts.clear();
                counts.resize(n, 0);
                for &r in rank.iter() {
                    counts[r as usize] += 1;
                }
            }
            // Tie-break: the lowest tied rank keeps one atom (the first in input order), the rest
            // move up by one; refine again until every rank is distinct.
            let Some(tied) = (0..n).find(|&r| counts[r] > 1) else {
                break;
            };
            automorphisms *= counts[tied] as f64;
            let chosen = (0..n).find(|&i| rank[i] as usize == tied).expect("a tied rank has atoms");
            for (i, r) in rank.iter_mut().enumerate() {
                if *r as usize == tied && i != chosen {
                    *r += 1;
                }
            }
        }
        scratch.counts = counts;
        automorphisms
    }

    /// Split every tied class made only of leaves on one parent; true when any was split. Each
    /// split class of m leaves multiplies `automorphisms` by m!.
    fn split_leaf_ties(&self, rank: &mut [u32], counts: &[u32], parent: &mut Vec<u32>, automorphisms: &mut f64) -> bool {
        const UNSET: u32 = u32::MAX;
        const MIXED: u32 = u32::MAX - 1;
        let n = rank.len();
        parent.clear();
        parent.resize(n, UNSET);
        for (i, &r) in rank.iter().enumerate() {
            let r = r as usize;
            if counts[r] < 2 {
                continue;
            }
            let p = if self.degree(i) == 1 {
                self.neighbours(i).next().map_or(MIXED, |(w, _)| w as u32)
            } else {
                MIXED
            };
            parent[r] = match parent[r] {
                UNSET => p,
                q if q == p => q,
                _ => MIXED,
            };
        }
        let splits = |r: usize| counts[r] >= 2 && parent[r] < MIXED;
        if !(0..n).any(splits) {
            return false;
        }
        let mut offset = vec![0u32; n];
        for r in rank.iter_mut() {
            let c = *r as usize;
            if splits(c) {
                *r = c as u32 + offset[c];
                offset[c] += 1;
                *automorphisms *= offset[c] as f64;
            }
        }
        true
    }

    /// The identity of the structure: atoms in canonical order with element, isotope, charge,
    /// hydrogens and valence, then the bonds between canonical indices. Equal for every way of
    /// writing one molecule (stereo marks aside), different for different graphs.
    pub fn canonical_key(&self) -> String {
        let rank = &self.ranked().1;
        let n = self.atoms.len();
        let mut order = vec![0usize; n];
        for (i, &r) in rank.iter().enumerate() {
            order[r as usize] = i;
        }
        let mut out = String::with_capacity(8 * n + 6 * self.bonds.len());
        for (k, &i) in order.iter().enumerate() {
            let a = &self.atoms[i];
            if k > 0 {
                out.push(';');
            }
            if let Some(iso) = a.isotope {
                push_number(&mut out, iso as u32);
            }
            out.push_str(elements::symbol(a.element));
            if a.hydrogens > 0 {
                out.push('H');
                push_number(&mut out, a.hydrogens as u32);
            }
            out.push('v');
            push_number(&mut out, a.valence as u32);
            if a.charge != 0 {
                out.push(if a.charge > 0 { '+' } else { '-' });
                push_number(&mut out, a.charge.unsigned_abs() as u32);
            }
        }
        out.push('|');
        let mut edges: Vec<(u32, u32)> = self
            .bonds
            .iter()
            .map(|b| (rank[b.a].min(rank[b.b]), rank[b.a].max(rank[b.b])))
            .collect();
        edges.sort_unstable();
        for (k, (x, y)) in edges.iter().enumerate() {
            if k > 0 {
                out.push(',');
            }
            push_number(&mut out, *x);
            out.push('-');
            push_number(&mut out, *y);
        }
        out
    }

    /// A SMILES of this graph in canonical atom order, every atom in brackets and every bond in
    /// its Kekulé order, so it reads back to the same graph. Depth-first from the lowest-ranked
    /// atom of each part, branches in rank order.
    pub fn to_smiles(&self) -> String {
        self.write_smiles(&self.canonical_ranks())
    }

    /// SMILES written with the atoms visited in the order `rank` gives (lowest first).
    pub fn write_smiles(&self, rank: &[u32]) -> String {
        let n = self.atoms.len();
        let mut visited = vec![false; n];
        let mut out = String::new();
        let mut starts: Vec<usize> = (0..n).collect();
        starts.sort_by_key(|&i| rank[i]);
        let mut ring_id: Vec<Option<usize>> = vec![None; self.bonds.len()];
        let mut free_ids: Vec<usize> = (1..100).rev().collect();
        // First pass: DFS tree to find ring-closure bonds.
        let mut tree_bond = vec![false; self.bonds.len()];
        let mut order_seen = vec![false; n];
        for &s in &starts {
            if order_seen[s] {
                continue;
            }
            order_seen[s] = true;
            self.dfs_tree(s, rank, &mut order_seen, &mut tree_bond);
        }
        for &s in &starts {
            if visited[s] {
                continue;
            }
            if !out.is_empty() {
                out.push('.');
            }
            self.write_from(s, usize::MAX, rank, &tree_bond, &mut visited, &mut ring_id, &mut free_ids, &mut out);
        }
        out
    }

    fn sorted_neighbours(&self, v: usize, rank: &[u32]) -> Vec<(usize, usize)> {
        let mut nb: Vec<(usize, usize)> = self.neighbours(v).collect();
        nb.sort_by_key(|&(w, _)| rank[w]);
        nb
    }

    /// Mark the bonds of a depth-first tree from `v`, visiting neighbours in rank order (the
    /// order [`Molecule::write_from`] writes them in); the other bonds become ring closures.
    fn dfs_tree(&self, v: usize, rank: &[u32], seen: &mut [bool], tree: &mut [bool]) {
        // Each frame: the atom's neighbours in rank order and the next one to look at.
        let mut stack: Vec<(Vec<(usize, usize)>, usize)> = vec![(self.sorted_neighbours(v, rank), 0)];
        while let Some((nbs, next)) = stack.last_mut() {
            if *next >= nbs.len() {
                stack.pop();
                continue;
            }
            let (w, b) = nbs[*next];
            *next += 1;
            if !seen[w] {
                seen[w] = true;
                tree[b] = true;
                stack.push((self.sorted_neighbours(w, rank), 0));
            }
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn write_from(
        &self,
        v: usize,
        via: usize,
        rank: &[u32],
        tree: &[bool],
        visited: &mut [bool],
        ring_id: &mut [Option<usize>],
        free: &mut Vec<usize>,
        out: &mut String,
    ) {
        visited[v] = true;
        self.write_atom(v, out);
        let nbs = self.sorted_neighbours(v, rank);
        // Ring closures at this atom: open new ones (non-tree bonds to unvisited-later atoms) and
        // close ones opened earlier.
        for &(_, b) in &nbs {
            if b == via || tree[b] {
                continue;
            }
            match ring_id[b] {
                Some(id) => {
                    push_bond(out, self.bonds[b].kekule_order);
                    push_ring(out, id);
                    free.push(id);
                    free.sort_unstable_by(|a, b| b.cmp(a));
                }
                None => {
                    let id = free.pop().unwrap_or(99);
                    ring_id[b] = Some(id);
                    push_bond(out, self.bonds[b].kekule_order);
                    push_ring(out, id);
                }
            }
        }
        let children: Vec<(usize, usize)> = nbs.into_iter().filter(|&(_, b)| b != via && tree[b]).collect();
        for (k, &(w, b)) in children.iter().enumerate() {
            let last = k + 1 == children.len();
            if !last {
                out.push('(');
            }
            push_bond(out, self.bonds[b].kekule_order);
            self.write_from(w, b, rank, tree, visited, ring_id, free, out);
            if !last {
                out.push(')');
            }
        }
    }

    fn write_atom(&self, i: usize, out: &mut String) {
        let a = &self.atoms[i];
        out.push('[');
        if let Some(iso) = a.isotope {
            out.push_str(&iso.to_string());
        }
        out.push_str(elements::symbol(a.element));
        match a.hydrogens {
            0 => {}
            1 => out.push('H'),
            h => {
                out.push('H');
                out.push_str(&h.to_string());
            }
        }
        match a.charge {
            0 => {}
            q => out.push_str(&format!("{q:+}")),
        }
        out.push(']');
    }

    /// The same molecule with atom `i` moved to position `perm[i]` (for testing identity).
    pub fn permuted(&self, perm: &[usize]) -> Molecule {
        let mut atoms = self.atoms.clone();
        for (i, a) in self.atoms.iter().enumerate() {
            atoms[perm[i]] = a.clone();
        }
        let bonds = self
            .bonds
            .iter()
            .map(|b| Bond {
                a: perm[b.a],
                b: perm[b.b],
                ..*b
            })
            .collect();
        let mut m = Molecule {
            atoms,
            bonds,
            adj_start: Vec::new(),
            adjacency: Vec::new(),
            ring_list: Vec::new(),
            components: 0,
            ranked: Ranked::default(),
        };
        m.build_adjacency();
        m.perceive_rings();
        m.ring_list = m.find_rings(MAX_RING_SIZE);
        m
    }
}

/// Decimal digits of `v` appended without a temporary string.
fn push_number(out: &mut String, mut v: u32) {
    let mut buf = [0u8; 10];
    let mut k = buf.len();
    loop {
        k -= 1;
        buf[k] = b'0' + (v % 10) as u8;
        v /= 10;
        if v == 0 {
            break;
        }
    }
    for &d in &buf[k..] {
        out.push(d as char);
    }
}

fn push_bond(out: &mut String, order: u8) {
    match order {
        2 => out.push('='),
        3 => out.push('#'),
        4 => out.push('$'),
        _ => {}
    }
}

fn push_ring(out: &mut String, id: usize) {
    if id < 10 {
        out.push((b'0' + id as u8) as char);
    } else {
        out.push('%');
        out.push_str(&format!("{id:02}"));
    }
}

/// Reusable breadth-first search state for ring finding (depth 0 = not reached).
struct RingScratch {
    parent: Vec<u32>,
    depth: Vec<u16>,
    queue: Vec<u32>,
}

impl RingScratch {
    fn new(n: usize) -> RingScratch {
        RingScratch {
            parent: vec![0; n],
            depth: vec![0; n],
            queue: Vec::with_capacity(n),
        }
    }
}

/// Rank = number of atoms with a smaller key (tied atoms share the lowest position).
fn ranks_from_keys(keys: &[u64]) -> Vec<u32> {
    let mut idx: Vec<u32> = (0..keys.len() as u32).collect();
    idx.sort_unstable_by_key(|&i| keys[i as usize]);
    let mut rank = vec![0u32; keys.len()];
    for k in 0..idx.len() {
        let i = idx[k] as usize;
        rank[i] = if k > 0 && keys[idx[k - 1] as usize] == keys[i] {
            rank[idx[k - 1] as usize]
        } else {
            k as u32
        };
    }
    rank
}

// Scratch buffers live per thread so a batch does not allocate them per molecule.
thread_local! {
    static SCRATCH: std::cell::RefCell<Refiner> = std::cell::RefCell::new(Refiner::default());
}

#[derive(Default)]
struct Refiner {
    counts: Vec<u32>,
    leaf: Vec<u32>,
    order: Vec<u32>,
    next: Vec<u32>,
    packed: Vec<(u128, u32)>,
    seen: Vec<bool>,
    sig: Vec<u32>,
    start: Vec<usize>,
    idx: Vec<u32>,
}

/// Refine ranks by (rank, sorted neighbour ranks) until the number of classes stops growing.
/// Ranks are below 1024 (at most [`MAX_ATOMS`] atoms), so an atom of degree ≤ 11 packs its
/// signature into one u128 (rank in the top bits, then the sorted neighbour ranks); within one
/// rank class degrees are equal, so comparing packed values is comparing the lists.
fn refine(m: &Molecule, rank: &mut [u32], s: &mut Refiner) {
    let n = rank.len();
    let packable = n <= 1024 && (0..n).all(|i| m.degree(i) <= 11);
    if packable {
        refine_packed(m, rank, s);
        return;
    }
    let mut classes = count_classes(rank, &mut s.seen);
    loop {
        if classes == n {
            return;
        }
        let new_classes = if packable {
            s.packed.clear();
            for i in 0..n {
                let mut nb = [0u32; 11];
                let d = m.degree(i);
                for (slot, (w, _)) in nb.iter_mut().zip(m.neighbours(i)) {
                    *slot = rank[w];
                }
                nb[..d].sort_unstable();
                let mut key = (rank[i] as u128) << 110;
                for (j, &r) in nb[..d].iter().enumerate() {
                    key |= (r as u128) << (100 - 10 * j);
                }
                s.packed.push((key, i as u32));
            }
            s.packed.sort_unstable();
            let mut c = 0;
            for k in 0..n {
                let (key, i) = s.packed[k];
                if k == 0 || s.packed[k - 1].0 != key {
                    c += 1;
                    rank[i as usize] = k as u32;
                } else {
                    rank[i as usize] = rank[s.packed[k - 1].1 as usize];
                }
            }
            c
        } else {
            s.sig.clear();
            s.start.clear();
            for i in 0..n {
                s.start.push(s.sig.len());
                s.sig.push(rank[i]);
                let from = s.sig.len();
                s.sig.extend(m.neighbours(i).map(|(w, _)| rank[w]));
                s.sig[from..].sort_unstable();
            }
            s.start.push(s.sig.len());
            s.idx.clear();
            s.idx.extend(0..n as u32);
            let (sig, start) = (&s.sig, &s.start);
            let slice = |i: u32| &sig[start[i as usize]..start[i as usize + 1]];
            s.idx.sort_unstable_by(|&a, &b| slice(a).cmp(slice(b)));
            let mut c = 0;
            for k in 0..n {
                let i = s.idx[k];
                if k > 0 && slice(s.idx[k - 1]) == slice(i) {
                    rank[i as usize] = rank[s.idx[k - 1] as usize];
                } else {
                    c += 1;
                    rank[i as usize] = k as u32;
                }
            }
            c
        };
        if new_classes == classes {
            return;
        }
        classes = new_classes;
    }
}

/// The packed form of [`refine`]: only classes with more than one atom are re-sorted, by their
/// atoms' sorted neighbour ranks packed into a u128 (10 bits a rank, up to 11 neighbours), and a
/// class that splits keeps its place before and after the other classes. Same result as sorting
/// every atom by (rank, neighbour ranks).
fn refine_packed(m: &Molecule, rank: &mut [u32], s: &mut Refiner) {
    let n = rank.len();
    s.order.clear();
    s.order.extend(0..n as u32);
    s.order.sort_unstable_by_key(|&i| rank[i as usize]);
    s.next.clear();
    s.next.extend_from_slice(rank);
    loop {
        let mut changed = false;
        let mut k = 0;
        while k < n {
            let r = rank[s.order[k] as usize];
            let mut e = k + 1;
            while e < n && rank[s.order[e] as usize] == r {
                e += 1;
            }
            if e - k > 1 {
                s.packed.clear();
                for &i in &s.order[k..e] {
                    let i = i as usize;
                    let mut nb = [0u32; 11];
                    let d = m.degree(i);
                    for (slot, (w, _)) in nb.iter_mut().zip(m.neighbours(i)) {
                        *slot = rank[w];
                    }
                    nb[..d].sort_unstable();
                    let mut key = 0u128;
                    for (j, &x) in nb[..d].iter().enumerate() {
                        key |= (x as u128) << (110 - 10 * j);
                    }
                    s.packed.push((key, i as u32));
                }
                s.packed.sort_unstable();
                let mut first = k;
                for (j, &(key, i)) in s.packed.iter().enumerate() {
                    if j > 0 && s.packed[j - 1].0 != key {
                        first = k + j;
                        changed = true;
                    }
                    s.next[i as usize] = first as u32;
                    s.order[k + j] = i;
                }
            }
            k = e;
        }
        rank.copy_from_slice(&s.next);
        if !changed {
            return;
        }
    }
}

fn count_classes(rank: &[u32], seen: &mut Vec<bool>) -> usize {
    seen.clear();
    seen.resize(rank.len(), false);
    let mut c = 0;
    for &r in rank {
        if !seen[r as usize] {
            seen[r as usize] = true;
            c += 1;
        }
    }
    c
}

const NONE: u32 = u32::MAX;

/// Maximum matching in a general graph: Edmonds' blossom algorithm, O(V³), after a greedy start.
struct Matching {
    n: usize,
    /// Neighbours of v: `adj[start[v]..start[v + 1]]`.
    start: Vec<u32>,
    adj: Vec<u32>,
    mate: Vec<u32>,
}

impl Matching {
    fn new(n: usize, edges: &[(u32, u32)]) -> Matching {
        let mut start = vec![0u32; n + 1];
        for &(a, b) in edges {
            start[a as usize + 1] += 1;
            start[b as usize + 1] += 1;
        }
        for v in 0..n {
            start[v + 1] += start[v];
        }
        let mut fill = start.clone();
        let mut adj = vec![0u32; 2 * edges.len()];
        for &(a, b) in edges {
            adj[fill[a as usize] as usize] = b;
            fill[a as usize] += 1;
            adj[fill[b as usize] as usize] = a;
            fill[b as usize] += 1;
        }
        Matching {
            n,
            start,
            adj,
            mate: vec![NONE; n],
        }
    }

    fn nb(&self, v: usize) -> &[u32] {
        &self.adj[self.start[v] as usize..self.start[v + 1] as usize]
    }

    fn solve(&mut self) {
        // Greedy: atoms with fewest options first.
        let mut order: Vec<usize> = (0..self.n).filter(|&v| !self.nb(v).is_empty()).collect();
        order.sort_by_key(|&v| self.nb(v).len());
        for &v in &order {
            if self.mate[v] == NONE {
                if let Some(&w) = self
                    .nb(v)
                    .iter()
                    .filter(|&&w| self.mate[w as usize] == NONE)
                    .min_by_key(|&&w| self.nb(w as usize).len())
                {
                    self.mate[v] = w;
                    self.mate[w as usize] = v as u32;
                }
            }
        }
        for &v in &order {
            if self.mate[v] == NONE {
                self.augment_from(v);
            }
        }
    }

    fn augment_from(&mut self, root: usize) {
        let n = self.n;
        let mut used = vec![false; n];
        let mut parent = vec![NONE; n];
        let mut base: Vec<u32> = (0..n as u32).collect();
        used[root] = true;
        let mut queue = std::collections::VecDeque::from([root]);
        while let Some(v) = queue.pop_front() {
            for k in self.start[v] as usize..self.start[v + 1] as usize {
                let to = self.adj[k] as usize;
                if base[v] == base[to] || self.mate[v] == to as u32 {
                    continue;
                }
                if to == root || (self.mate[to] != NONE && parent[self.mate[to] as usize] != NONE) {
                    let cur = self.lca(v, to, &base, &parent);
                    let mut blossom = vec![false; n];
                    self.mark_path(v, cur, to, &mut blossom, &base, &mut parent);
                    self.mark_path(to, cur, v, &mut blossom, &base, &mut parent);
                    for i in 0..n {
                        if blossom[base[i] as usize] {
                            base[i] = cur as u32;
                            if !used[i] {
                                used[i] = true;
                                queue.push_back(i);
                            }
                        }
                    }
                } else if parent[to] == NONE {
                    parent[to] = v as u32;
                    if self.mate[to] == NONE {
                        // Augment along the path ending at `to`.
                        let mut u = to;
                        while u as u32 != NONE {
                            let pv = parent[u] as usize;
                            let ppv = self.mate[pv];
                            self.mate[u] = pv as u32;
                            self.mate[pv] = u as u32;
                            u = ppv as usize;
                            if ppv == NONE {
                                break;
                            }
                        }
                        return;
                    }
                    let m = self.mate[to] as usize;
                    used[m] = true;
                    queue.push_back(m);
                }
            }
        }
    }

    fn lca(&self, mut a: usize, mut b: usize, base: &[u32], parent: &[u32]) -> usize {
        let mut used = vec![false; self.n];
        loop {
            a = base[a] as usize;
            used[a] = true;
            if self.mate[a] == NONE {
                break;
            }
            a = parent[self.mate[a] as usize] as usize;
        }
        loop {
            b = base[b] as usize;
            if used[b] {
                return b;
            }
            b = parent[self.mate[b] as usize] as usize;
        }
    }

    fn mark_path(&self, mut v: usize, b: usize, mut child: usize, blossom: &mut [bool], base: &[u32], parent: &mut [u32]) {
        while base[v] as usize != b {
            let m = self.mate[v] as usize;
            blossom[base[v] as usize] = true;
            blossom[base[m] as usize] = true;
            parent[v] = child as u32;
            child = m;
            v = parent[m] as usize;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn hill(s: &str) -> String {
        Molecule::parse(s, 0).unwrap_or_else(|e| panic!("{s}: {e}")).formula().hill()
    }

    fn key(s: &str) -> String {
        Molecule::parse(s, 0).unwrap_or_else(|e| panic!("{s}: {e}")).canonical_key()
    }

    #[test]
    fn organic_subset_and_implicit_hydrogens() {
        assert_eq!(hill("C"), "CH4");
        assert_eq!(hill("CCO"), "C2H6O");
        assert_eq!(hill("OCC"), "C2H6O");
        assert_eq!(hill("C=C"), "C2H4");
        assert_eq!(hill("C#N"), "CHN");
        assert_eq!(hill("ClC(Cl)(Cl)Cl"), "CCl4");
        assert_eq!(hill("BrCCBr"), "C2H4Br2");
        assert_eq!(hill("CS(=O)C"), "C2H6OS");
        assert_eq!(hill("OS(=O)(=O)O"), "H2O4S");
        assert_eq!(hill("B(F)(F)F"), "BF3");
        assert_eq!(hill("CP(C)C"), "C3H9P");
        assert_eq!(hill("O=P(O)(O)O"), "H3O4P");
        assert_eq!(hill("C1CCCCC1"), "C6H12");
        assert_eq!(hill("C%10CCCCC%10"), "C6H12");
        assert_eq!(hill("CC(C)(C)C"), "C5H12");
        assert_eq!(hill("C=1CC1"), "C3H4");
        assert_eq!(hill("C/C=C/C"), "C4H8");
        assert_eq!(hill("C[C@@H](O)CC"), "C4H10O");
        assert_eq!(hill("C$C"), "C2");
    }

    #[test]
    fn dihydrogen_is_one_graph_however_written() {
        // `[H][H]` (as RDKit writes H2) and `[HH]` (as PubChem-derived tables do) are one molecule.
        assert_eq!(key("[H][H]"), key("[HH]"));
        assert_eq!(hill("[H][H]"), "H2");
        assert_ne!(key("[H][H]"), key("[H]"));
    }

    #[test]
    fn bracket_atoms() {
        assert_eq!(hill("[CH4]"), "CH4");
        assert_eq!(hill("[NH4+]"), "H4N+");
        assert_eq!(hill("[O-]S(=O)(=O)[O-]"), "O4S-2");
        assert_eq!(hill("[Na+].[Cl-]"), "ClNa");
        assert_eq!(hill("[13CH4]"), "CH4");
        assert_eq!(hill("[CH3:1][OH:2]"), "CH4O");
        assert_eq!(hill("[Fe+++]"), "Fe+3");
        assert_eq!(hill("[Fe+3]"), "Fe+3");
        assert_eq!(hill("[Cu--]"), "Cu-2");
        assert_eq!(hill("[H][H]"), "H2");
        assert_eq!(hill("[H]C([H])([H])[H]"), "CH4");
        assert_eq!(hill("[C@TH1H](F)(Cl)Br"), "CHBrClF");
        assert_eq!(hill("[CH3]"), "CH3");
        // Hypervalent spellings are charge-separated (as RDKit sanitizes them): one graph.
        assert_eq!(key("CN(=O)=O"), key("C[N+](=O)[O-]"));
        assert_eq!(key("OCl(=O)(=O)=O"), key("O[Cl+3]([O-])([O-])[O-]"));
        assert_eq!(hill("CN(=O)=O"), "CH3NO2");
        let m = Molecule::parse("[13CH3:7][OH]", 0).unwrap();
        assert_eq!((m.atoms[0].isotope, m.atoms[0].class, m.atoms[0].hydrogens), (Some(13), Some(7), 3));
    }

    #[test]
    fn aromatic_rings_are_kekulized() {
        // Formulas as in any chemistry reference (and RDKit): the implicit hydrogens follow
        // from the Kekulé structure.
        assert_eq!(hill("c1ccccc1"), "C6H6");
        assert_eq!(hill("c1ccncc1"), "C5H5N");
        assert_eq!(hill("c1cc[nH]c1"), "C4H5N");
        assert_eq!(hill("c1ccoc1"), "C4H4O");
        assert_eq!(hill("c1ccsc1"), "C4H4S");
        assert_eq!(hill("c1ccc2ccccc2c1"), "C10H8");
        assert_eq!(hill("c1ccc2c(c1)cc[nH]2"), "C8H7N");
        assert_eq!(hill("Cn1cccc1"), "C5H7N");
        assert_eq!(hill("O=c1cccc[nH]1"), "C5H5NO");
        assert_eq!(hill("c1ccc(cc1)-c1ccccc1"), "C12H10");
        assert_eq!(hill("c1ccccc1c1ccccc1"), "C12H10");
        assert_eq!(hill("C[n+]1ccccc1"), "C6H8N+");
        assert_eq!(hill("[cH-]1cccc1"), "C5H5-");
        assert_eq!(hill("c1cnc[nH]1"), "C3H4N2");
        assert_eq!(hill("c1ccc2cc3ccccc3cc2c1"), "C14H10");
        // Kekulé input is perceived aromatic (Hückel, ring by ring); cyclohexene is not.
        let m = Molecule::parse("CC1=CC=CC=C1O", 0).unwrap();
        assert!(m.atoms[1..7].iter().all(|a| a.aromatic) && !m.atoms[0].aromatic && !m.atoms[7].aromatic);
        assert!(Molecule::parse("C1=CC2=CC=CC=C2C=C1", 0).unwrap().atoms.iter().all(|a| a.aromatic));
        assert!(Molecule::parse("C1=CNC=C1", 0).unwrap().atoms.iter().all(|a| a.aromatic));
        assert!(!Molecule::parse("C1=CCCCC1", 0).unwrap().atoms.iter().any(|a| a.aromatic));
        assert!(!Molecule::parse("C1=CC=CC1", 0).unwrap().atoms.iter().any(|a| a.aromatic));
        assert_eq!(hill("c1cc2ccc3cccc4ccc(c1)c2c34"), "C16H10");
        // Each atom needing a π bond got exactly one double bond.
        let m = Molecule::parse("c1ccc2ccccc2c1", 0).unwrap();
        for i in 0..m.atoms.len() {
            let doubles = m.neighbours(i).filter(|&(_, b)| m.bonds[b].kekule_order == 2).count();
            assert_eq!(doubles, 1, "atom {i}");
        }
    }

    #[test]
    fn aromatic_systems_that_cannot_be_kekulized_are_errors() {
        let e = Molecule::parse("c1ccnc1", 0).unwrap_err();
        assert!(e.reason.contains("[nH]"), "{e}");
        assert!(Molecule::parse("c1cccc1", 0).is_err());
        assert!(Molecule::parse("c1ccccc1c", 5).is_err());
    }

    #[test]
    fn rings_and_membership() {
        let m = Molecule::parse("CC1CCC1", 0).unwrap();
        assert!(!m.atoms[0].in_ring);
        assert!(m.atoms[1..].iter().all(|a| a.in_ring));
        let b = m.bonds.iter().position(|b| b.in_ring).unwrap();
        assert_eq!(m.small_ring_through(b, 4), Some(4));
        let m = Molecule::parse("C1CC1C1CCCCC1", 0).unwrap();
        assert_eq!(m.bonds.iter().filter(|b| !b.in_ring).count(), 1);
        assert_eq!(Molecule::parse("CCO.O", 0).unwrap().component_count(), 2);
    }

    #[test]
    fn errors_carry_position_and_reason() {
        let cases: [(&str, usize, &str); 14] = [
            ("C1CC", 1, "never closed"),
            ("CC(C", 2, "never closed"),
            ("CC)C", 2, "matching"),
            ("C(=)C", 3, "bond"),
            ("CQC", 1, "organic-subset"),
            ("C[Xx]", 2, "unknown element"),
            ("C[CH3", 5, "']'"),
            ("=C", 0, "before"),
            ("CC=", 2, "after"),
            ("C()C", 2, "empty branch"),
            ("C11", 2, "same atom"),
            ("C12CCCCC12", 9, "second bond"),
            ("C=1CCC#1", 7, "two different orders"),
            ("C*", 1, "wildcard"),
        ];
        for (s, pos, why) in cases {
            let e = Molecule::parse(s, 0).unwrap_err();
            assert_eq!(e.position, pos, "{s}: {e}");
            assert!(e.reason.contains(why), "{s}: {e}");
        }
        // Offsets are relative to the enclosing text.
        assert_eq!(Molecule::parse("C1CC", 100).unwrap_err().position, 101);
        assert!(Molecule::parse("", 0).is_err());
        assert!(Molecule::parse("C C", 0).is_err());
        assert!(Molecule::parse("C%1C", 0).is_err());
    }

    #[test]
    fn limits_are_errors_not_panics() {
        let long = "C".repeat(MAX_SMILES_BYTES + 1);
        assert!(Molecule::parse(&long, 0).unwrap_err().reason.contains("bytes"));
        let many = "C".repeat(MAX_HEAVY_ATOMS + 1);
        assert!(Molecule::parse(&many, 0).unwrap_err().reason.contains("heavy atoms"));
        assert!(Molecule::parse(&"C".repeat(MAX_HEAVY_ATOMS), 0).is_ok());
        assert!(Molecule::parse("[C+16]", 0).is_err());
        let deep = format!("C{}C{}", "(C".repeat(300), ")".repeat(300));
        assert!(Molecule::parse(&deep, 0).is_ok());
    }

    #[test]
    fn identity_is_independent_of_how_it_is_written() {
        let same = [
            &["OCC", "C(O)C", "CCO", "[CH3][CH2][OH]", "[H]OC([H])([H])C"][..],
            &["c1ccccc1", "C1=CC=CC=C1", "C=1C=CC=CC=1", "c1ccc(cc1)"],
            &["c1ccc2ccccc2c1", "C1=CC=C2C=CC=CC2=C1", "c12ccccc1cccc2"],
            &["CC(=O)O", "OC(C)=O", "C(C)(O)=O"],
            &["c1cc[nH]c1", "[nH]1cccc1", "C1=CNC=C1"],
            &["C[C@H](N)C(=O)O", "C[C@@H](N)C(=O)O", "NC(C)C(O)=O"],
            &["C/C=C/C", "C/C=C\\C", "CC=CC"],
        ];
        for group in same {
            let k0 = key(group[0]);
            for s in &group[1..] {
                assert_eq!(key(s), k0, "{s} vs {}", group[0]);
            }
        }
        let different = [
            ("CCO", "COC"),
            ("C1CCCCC1.C1CCCCC1", "C1CCCCCCCCCCC1"),
            ("CC=O", "C=CO"),
            ("[CH3]", "C"),
            ("c1ccncc1", "c1cnccc1C"),
        ];
        for (a, b) in different {
            assert_ne!(key(a), key(b), "{a} vs {b}");
        }
    }

    #[test]
    fn written_smiles_reads_back_to_the_same_graph() {
        for s in [
            "CCO",
            "c1ccc2ccccc2c1",
            "C1CC1C(=O)OC",
            "[NH4+].[Cl-]",
            "C12CC3CC(C1)CC(C3)C2",
            "O=C1CCCCC1",
            "C#CC=C",
            "c1ccc2c(c1)cc[nH]2",
        ] {
            let m = Molecule::parse(s, 0).unwrap();
            let w = m.to_smiles();
            let back = Molecule::parse(&w, 0).unwrap_or_else(|e| panic!("{s} -> {w}: {e}"));
            assert_eq!(back.canonical_key(), m.canonical_key(), "{s} -> {w}");
            assert_eq!(back.formula(), m.formula());
        }
    }
}
