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
//!
//! # Layout
//! - this file: atoms, bonds, the molecule graph (adjacency, formula, counts), limits, errors.
//! - `parser`: SMILES text → atoms and bonds.
//! - `kekule`: Kekulé structures, implicit hydrogens, charge separation, explicit hydrogens.
//! - `rings`: smallest rings through each bond, aromaticity.
//! - `canon`: canonical ranks, symmetry, the identity key.
//! - `write`: the molecule back as (canonical) SMILES.

use crate::elements::{self, Z};
use crate::formula::Formula;

mod canon;
mod kekule;
mod parser;
mod rings;
mod write;

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
    atoms: Vec<Atom>,
    bonds: Vec<Bond>,
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

impl Molecule {
    /// A molecule of these atoms and bonds with its adjacency built; rings, aromaticity and
    /// ranks are left to the caller's steps.
    fn from_graph(atoms: Vec<Atom>, bonds: Vec<Bond>) -> Molecule {
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
        m
    }

    /// The atoms, hydrogens folded into counts; indices are the graph's vertex numbers.
    pub fn atoms(&self) -> &[Atom] {
        &self.atoms
    }

    /// The bonds, as Kekulé single and double bonds for aromatic systems.
    pub fn bonds(&self) -> &[Bond] {
        &self.bonds
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
        let mut m = Molecule::from_graph(atoms, bonds);
        m.perceive_rings();
        m.ring_list = m.find_rings(MAX_RING_SIZE);
        m
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
