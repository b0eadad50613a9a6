//! Reading SMILES text into atoms and bonds (the grammar of the module documentation).

use super::*;

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
        let mut m = Molecule::from_graph(p.atoms, p.bonds);
        m.kekulize()?;
        m.implicit_hydrogens();
        m.charge_separate();
        m.fold_explicit_hydrogens();
        m.perceive_rings();
        m.ring_list = m.find_rings(MAX_RING_SIZE);
        m.perceive_aromaticity();
        Ok(m)
    }
}

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
    pub(super) fn pos(&self) -> usize {
        self.base + self.i
    }

    pub(super) fn found(&self) -> String {
        match self.s.get(self.i) {
            None => "end of input".into(),
            Some(&c) if c.is_ascii_graphic() => format!("'{}'", c as char),
            Some(&c) => format!("byte 0x{c:02x}"),
        }
    }

    pub(super) fn digits(&mut self, max_len: usize) -> Option<u32> {
        let start = self.i;
        let mut n: u32 = 0;
        while self.i < self.s.len() && self.s[self.i].is_ascii_digit() && self.i - start < max_len {
            n = n * 10 + (self.s[self.i] - b'0') as u32;
            self.i += 1;
        }
        (self.i > start).then_some(n)
    }

    pub(super) fn push_atom(&mut self, atom: Atom) -> Result<usize, SmilesError> {
        if self.atoms.len() >= MAX_ATOMS {
            return err(atom.position, format!("more than {MAX_ATOMS} atoms"));
        }
        self.atoms.push(atom);
        Ok(self.atoms.len() - 1)
    }

    pub(super) fn organic_atom(&mut self) -> Result<Option<usize>, SmilesError> {
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

    pub(super) fn bracket_atom(&mut self) -> Result<usize, SmilesError> {
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
    pub(super) fn add_bond(
        &mut self,
        a: usize,
        b: usize,
        written: Option<BondOrder>,
        position: usize,
        closure: bool,
    ) -> Result<(), SmilesError> {
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

    pub(super) fn parse(&mut self) -> Result<(), SmilesError> {
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
