//! Group assignment: every heavy atom of a molecule to one Joback group, with the weak spots
//! the project's rules correct.

use super::*;

/// (neighbour, Kekulé order) of atom i.
pub(super) fn kbonds(m: &Molecule, i: usize) -> impl Iterator<Item = (usize, u8)> + '_ {
    m.neighbours(i).map(move |(n, b)| (n, m.bonds()[b].kekule_order))
}

pub(super) struct Assign<'m> {
    pub(super) m: &'m Molecule,
    pub(super) claimed: Vec<bool>,
    pub(super) counts: [u16; 41],
    pub(super) weak: Vec<WeakSpot>,
}

impl Assign<'_> {
    pub(super) fn add(&mut self, group: usize) {
        self.counts[group - 1] += 1;
    }

    pub(super) fn weak(&mut self, kind: &'static str, what: impl Into<Cow<'static, str>>, sigma: f64) {
        self.biased(kind, what, sigma, 0.0);
    }

    /// A weak spot whose bias is known: the estimate is corrected by `offset` kJ/mol.
    pub(super) fn biased(&mut self, kind: &'static str, what: impl Into<Cow<'static, str>>, sigma: f64, offset: f64) {
        self.weak.push(WeakSpot {
            kind,
            what: what.into(),
            sigma_kj_per_mol: sigma,
            offset_kj_per_mol: offset,
        });
    }

    pub(super) fn no_group(&self, i: usize, what: &str) -> JobackError {
        JobackError::NoGroup {
            what: what.to_string(),
            position: self.m.atoms()[i].position,
        }
    }

    pub(super) fn is_terminal_o(&self, i: usize) -> bool {
        let a = &self.m.atoms()[i];
        a.element == 8 && a.hydrogens == 0 && self.m.degree(i) == 1
    }

    pub(super) fn connections(&self, i: usize) -> usize {
        self.m.degree(i) + self.m.atoms()[i].hydrogens as usize
    }

    /// Multi-atom groups first: nitrile, nitro, and the carbonyl family (acid, ester, aldehyde,
    /// ketone), claiming their atoms.
    pub(super) fn multi_atom_groups(&mut self) -> Result<(), JobackError> {
        let m = self.m;
        for i in 0..m.atoms().len() {
            let a = &m.atoms()[i];
            if a.element == 7 && a.charge >= 0 {
                let o: Vec<usize> = kbonds(self.m, i).filter(|&(n, _)| m.atoms()[n].element == 8).map(|x| x.0).collect();
                let terminal = o.iter().filter(|&&n| self.is_terminal_o(n)).count();
                if o.len() >= 2 && terminal >= 2 && a.hydrogens == 0 {
                    if o.len() > 2 {
                        return Err(self.no_group(i, "a nitrate (O-NO2)"));
                    }
                    self.add(g::NO2);
                    self.claimed[i] = true;
                    for n in o {
                        self.claimed[n] = true;
                    }
                }
            }
        }
        for i in 0..m.atoms().len() {
            let a = &m.atoms()[i];
            if a.element != 6 || self.claimed[i] {
                continue;
            }
            if let Some((n, _)) =
                kbonds(self.m, i).find(|&(n, o)| o == 3 && m.atoms()[n].element == 7 && m.degree(n) == 1 && m.atoms()[n].charge == 0)
            {
                if self.connections(i) == 2 {
                    self.add(g::CN);
                    self.claimed[i] = true;
                    self.claimed[n] = true;
                    continue;
                }
            }
            if self.connections(i) != 3 {
                continue;
            }
            let Some((o_dbl, _)) = kbonds(self.m, i).find(|&(n, o)| o == 2 && self.is_terminal_o(n) && m.atoms()[n].charge == 0) else {
                continue;
            };
            let single_o: Vec<usize> = kbonds(self.m, i)
                .filter(|&(n, o)| o == 1 && m.atoms()[n].element == 8 && m.atoms()[n].charge == 0)
                .map(|x| x.0)
                .collect();
            let hydroxyl = single_o.iter().copied().find(|&n| m.atoms()[n].hydrogens == 1 && m.degree(n) == 1);
            let ether = single_o.iter().copied().find(|&n| m.atoms()[n].hydrogens == 0 && m.degree(n) == 2);
            self.claimed[i] = true;
            self.claimed[o_dbl] = true;
            if single_o.len() >= 2 {
                return Err(self.no_group(i, "a carbonate or orthoester-type carbon (C(=O) with two more oxygens)"));
            }
            if let Some(oh) = hydroxyl {
                self.add(g::COOH);
                self.claimed[oh] = true;
            } else if let (Some(o), 0) = (ether, a.hydrogens) {
                if self.claimed[o] {
                    self.weak("approximation", "an anhydride: its second C=O is taken as a ketone group", 40.0);
                    self.add(if a.in_ring { g::R_CO } else { g::CO });
                } else {
                    self.add(g::COO);
                    self.claimed[o] = true;
                }
            } else if a.hydrogens == 1 {
                if ether.is_some() {
                    self.weak("approximation", "a formate ester: taken as O=CH- plus -O-", 40.0);
                }
                self.add(g::CHO);
            } else if a.hydrogens == 2 {
                return Err(self.no_group(i, "formaldehyde's H2C=O"));
            } else {
                self.add(if a.in_ring { g::R_CO } else { g::CO });
            }
        }
        Ok(())
    }

    pub(super) fn atom_group(&mut self, i: usize) -> Result<(), JobackError> {
        let m = self.m;
        let a = &m.atoms()[i];
        let (h, ring, x) = (a.hydrogens, a.in_ring, self.connections(i));
        let doubles = kbonds(self.m, i).filter(|b| b.1 == 2).count();
        let triples = kbonds(self.m, i).filter(|b| b.1 == 3).count();
        if a.charge != 0 {
            return Err(JobackError::NotAMolecule(format!(
                "the atom at byte {} carries a charge",
                a.position
            )));
        }
        let group = match a.element {
            6 => match (triples, doubles, x, h) {
                (1, 0, 2, 1) => g::TR_CH,
                (1, 0, 2, 0) => g::TR_C,
                (0, 2, 2, 0) => g::EQ_C_EQ,
                (0, 1, 3, 2) => g::EQ_CH2,
                (0, 1, 3, 1) => {
                    if ring {
                        g::R_EQ_CH
                    } else {
                        g::EQ_CH
                    }
                }
                (0, 1, 3, 0) => {
                    if ring {
                        g::R_EQ_C
                    } else {
                        g::EQ_C
                    }
                }
                (0, 0, 4, 3) => g::CH3,
                (0, 0, 4, 2) => {
                    if ring {
                        g::R_CH2
                    } else {
                        g::CH2
                    }
                }
                (0, 0, 4, 1) => {
                    if ring {
                        g::R_CH
                    } else {
                        g::CH
                    }
                }
                (0, 0, 4, 0) => {
                    if ring {
                        g::R_C
                    } else {
                        g::C
                    }
                }
                (0, 0, 4, 4) => return Err(self.no_group(i, "methane")),
                _ => return Err(self.no_group(i, "a carbon with an unusual valence (radical or carbene)")),
            },
            8 => match (doubles, x, h) {
                (0, 2, 1) => {
                    let (n, _) = kbonds(self.m, i).next().expect("one neighbour");
                    if m.atoms()[n].aromatic {
                        g::OH_PHENOL
                    } else {
                        g::OH_ALCOHOL
                    }
                }
                (0, 2, 0) => {
                    if ring {
                        g::R_O
                    } else {
                        g::O
                    }
                }
                (1, 1, 0) => g::EQ_O,
                (0, 2, 2) => return Err(self.no_group(i, "water")),
                _ => return Err(self.no_group(i, "an oxygen with an unusual valence")),
            },
            7 => match (triples, doubles, x, h) {
                (0, 0, 3, 2) => g::NH2,
                (0, 0, 3, 1) => {
                    if ring {
                        g::R_NH
                    } else {
                        g::NH
                    }
                }
                (0, 0, 3, 0) => g::N,
                (0, 1, 2, 1) => g::EQ_NH,
                (0, 1, 2, 0) => {
                    if ring {
                        g::R_EQ_N
                    } else {
                        g::EQ_N
                    }
                }
                (0, 0, 3, 3) => return Err(self.no_group(i, "ammonia")),
                _ => return Err(self.no_group(i, "a nitrogen with this bonding (isonitrile, N-oxide or radical)")),
            },
            16 => match (doubles + triples, x, h) {
                (0, 2, 1) => g::SH,
                (0, 2, 0) => {
                    if ring {
                        g::R_S
                    } else {
                        g::S
                    }
                }
                (0, 2, 2) => return Err(self.no_group(i, "hydrogen sulfide")),
                _ => return Err(self.no_group(i, "sulfur above valence 2 (sulfoxide, sulfone, thione)")),
            },
            9 | 17 | 35 | 53 if x == 1 && m.degree(i) == 1 => match a.element {
                9 => g::F,
                17 => g::CL,
                35 => g::BR,
                _ => g::I,
            },
            9 | 17 | 35 | 53 => return Err(self.no_group(i, "a halogen not bonded to one carbon-chain atom")),
            _ => return Err(self.no_group(i, crate::elements::symbol(a.element))),
        };
        self.add(group);
        Ok(())
    }

    /// The engine's rules for where the method is weak (see the module documentation). Each
    /// occurrence adds its σ linearly to others of its kind (a group value that is off is off
    /// the same way every time it appears); kinds combine in quadrature.
    pub(super) fn weak_spots(&mut self) {
        let m = self.m;
        let n = m.atoms().len();
        let is_halogen = |z: Z| matches!(z, 9 | 17 | 35 | 53);
        if m.heavy_atom_count() <= 3 {
            self.weak("small", "a very small molecule (3 heavy atoms or fewer)", 40.0);
        }
        // Rings: strain is not in the ring groups (cyclopropane ≈ 115 kJ/mol), unsaturation in a
        // small ring still less; aliphatic rings are fitted loosely.
        let rings = m.rings();
        for ring in rings {
            let (mut double_inside, mut triple_inside) = (false, false);
            for &i in ring {
                for (w, b) in m.neighbours(i) {
                    let order = m.bonds()[b].kekule_order;
                    if order >= 2 && ring.binary_search(&w).is_ok() {
                        double_inside = true;
                        triple_inside |= order == 3;
                    }
                }
            }
            let aromatic = ring.iter().all(|&i| m.atoms()[i].aromatic);
            match (ring.len(), double_inside) {
                (3, true) => self.weak("strain", "an unsaturated three-membered ring", 120.0),
                (3, false) => self.weak("strain", "a three-membered ring", 40.0),
                (4, true) => self.weak("strain", "an unsaturated four-membered ring", 80.0),
                (4, false) => self.weak("strain", "a four-membered ring", 40.0),
                _ => {}
            }
            if triple_inside {
                self.weak("strain", "a triple bond in a ring", 150.0);
            }
            if aromatic && ring.iter().any(|&i| m.atoms()[i].element != 6) {
                self.weak(
                    "heteroaromatic",
                    "an aromatic ring with a heteroatom (aromaticity is not a group)",
                    15.0,
                );
            } else if !aromatic {
                self.weak("aliphatic ring", "a non-aromatic ring", 15.0);
            }
        }
        for i in 0..n {
            let a = &m.atoms()[i];
            let ring_bonds = m.neighbours(i).filter(|&(_, b)| m.bonds()[b].in_ring).count();
            if ring_bonds >= 3 {
                let smallest = rings
                    .iter()
                    .filter(|r| r.binary_search(&i).is_ok())
                    .map(Vec::len)
                    .min()
                    .unwrap_or(8);
                if smallest <= 5 {
                    self.weak("fusion", "a fused or bridged atom of a small ring", 40.0);
                } else {
                    self.weak("fusion", "a ring-fusion atom", 8.0);
                }
            }
            if a.element == 9 {
                self.weak("fluorine", "a fluorine (fluorocarbons are fitted poorly)", 15.0);
            }
            let heavy_halogens = m
                .neighbours(i)
                .filter(|&(w, _)| matches!(m.atoms()[w].element, 17 | 35 | 53))
                .count();
            let halogens = m.neighbours(i).filter(|&(w, _)| is_halogen(m.atoms()[w].element)).count();
            if a.element == 6 && halogens >= 2 && heavy_halogens >= 1 {
                for _ in 1..halogens.min(heavy_halogens + 1) {
                    self.weak("polyhalogen", "one more Cl, Br or I on a carbon (no interaction terms)", 20.0);
                }
            }
            let triple = m.neighbours(i).any(|(_, b)| m.bonds()[b].kekule_order == 3);
            if a.element == 6 && triple {
                let odd_neighbour = m.neighbours(i).any(|(w, b)| {
                    let wa = &m.atoms()[w];
                    m.bonds()[b].kekule_order != 3
                        && (wa.element != 6
                            || m.neighbours(w).any(|(_, b2)| {
                                m.bonds()[b2].kekule_order == 3
                                    || (m.bonds()[b2].kekule_order == 2
                                        && b2 != b
                                        && m.neighbours(w).filter(|&(_, b3)| m.bonds()[b3].kekule_order == 2).count() == 2)
                            }))
                });
                if odd_neighbour {
                    self.weak(
                        "substituted alkyne",
                        "a triple-bonded carbon on a heteroatom or another triple bond",
                        50.0,
                    );
                }
            }
            if a.element == 8 && m.neighbours(i).any(|(w, _)| m.atoms()[w].element == 8) {
                // Counted once per oxygen of the bond: half the bond's correction each.
                self.biased(
                    "peroxide",
                    "an O-O bond (no peroxide group; corrected by +216 kJ/mol per bond)",
                    50.0,
                    PEROXIDE_OFFSET_KJ_PER_MOL / 2.0,
                );
            }
        }
        // Carbonyl carbons next to each other or carrying a halogen.
        let carbonyl: Vec<bool> = (0..n)
            .map(|i| {
                m.atoms()[i].element == 6
                    && m.neighbours(i)
                        .any(|(w, b)| m.bonds()[b].kekule_order == 2 && m.atoms()[w].element == 8 && m.degree(w) == 1)
            })
            .collect();
        let carbonyl = |i: usize| carbonyl[i];
        let on_nitrogen = |i: usize| m.neighbours(i).any(|(w, _)| m.atoms()[w].element == 7);
        for b in m.bonds() {
            if carbonyl(b.a) && carbonyl(b.b) {
                if on_nitrogen(b.a) || on_nitrogen(b.b) {
                    // Oxamides and oxamic acids: the amide correction already applies.
                    self.weak("adjacent carbonyls", "two carbonyl groups bonded to each other", 30.0);
                } else {
                    self.biased(
                        "adjacent carbonyls",
                        "two carbonyl groups bonded to each other (corrected by +46 kJ/mol)",
                        ADJACENT_CARBONYL_SIGMA_KJ_PER_MOL,
                        ADJACENT_CARBONYL_OFFSET_KJ_PER_MOL,
                    );
                }
            }
        }
        for i in 0..n {
            if carbonyl(i) && m.neighbours(i).any(|(w, _)| is_halogen(m.atoms()[w].element)) {
                self.weak("acyl halide", "an acyl halide", 25.0);
            }
            if carbonyl(i) && m.neighbours(i).any(|(w, _)| m.atoms()[w].element == 7) {
                self.biased(
                    "amide",
                    "an amide-type carbonyl (C=O on N; corrected by −61 kJ/mol)",
                    AMIDE_SIGMA_KJ_PER_MOL,
                    AMIDE_OFFSET_KJ_PER_MOL,
                );
            }
        }
        let polar: usize = [
            g::OH_ALCOHOL,
            g::OH_PHENOL,
            g::O,
            g::R_O,
            g::CO,
            g::R_CO,
            g::CHO,
            g::COOH,
            g::COO,
            g::EQ_O,
            g::NH2,
            g::NH,
            g::R_NH,
            g::N,
            g::EQ_N,
            g::R_EQ_N,
            g::EQ_NH,
            g::CN,
            g::NO2,
            g::SH,
            g::S,
            g::R_S,
        ]
        .iter()
        .map(|&k| self.counts[k - 1] as usize)
        .sum();
        for _ in 1..polar {
            self.weak("polar", "one more polar group (no group-interaction terms)", 5.0);
        }
        for k in [g::EQ_C_EQ, g::R_C, g::EQ_N, g::EQ_NH] {
            for _ in 0..self.counts[k - 1] {
                let sigma = if k == g::EQ_C_EQ { 30.0 } else { 10.0 };
                self.weak(
                    "rare group",
                    format!("group {} (few compounds behind its value)", GROUPS[k - 1].name),
                    sigma,
                );
            }
        }
    }
}
