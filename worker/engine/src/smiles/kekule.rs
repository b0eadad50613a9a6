//! Kekulé structures of aromatic systems (a maximum matching by Edmonds' blossom algorithm),
//! implicit hydrogens, charge-separated forms and explicit hydrogens folded into counts.

use super::*;

pub(super) const NONE: u32 = u32::MAX;

/// Maximum matching in a general graph: Edmonds' blossom algorithm, O(V³), after a greedy start.
pub(super) struct Matching {
    n: usize,
    /// Neighbours of v: `adj[start[v]..start[v + 1]]`.
    start: Vec<u32>,
    adj: Vec<u32>,
    mate: Vec<u32>,
}

impl Matching {
    pub(super) fn new(n: usize, edges: &[(u32, u32)]) -> Matching {
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

    pub(super) fn nb(&self, v: usize) -> &[u32] {
        &self.adj[self.start[v] as usize..self.start[v + 1] as usize]
    }

    pub(super) fn solve(&mut self) {
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

    pub(super) fn augment_from(&mut self, root: usize) {
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

    pub(super) fn lca(&self, mut a: usize, mut b: usize, base: &[u32], parent: &[u32]) -> usize {
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

    pub(super) fn mark_path(&self, mut v: usize, b: usize, mut child: usize, blossom: &mut [bool], base: &[u32], parent: &mut [u32]) {
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

impl Molecule {
    /// Sum of bond orders with aromatic bonds counted as 1, plus bracket hydrogens.
    pub(super) fn sigma(&self, i: usize) -> i32 {
        let bonds: i32 = self.neighbours(i).map(|(_, b)| self.bonds[b].order.written() as i32).sum();
        bonds + self.atoms[i].hydrogens as i32
    }

    /// Does aromatic atom `i` still need a π (double) bond in the Kekulé structure?
    pub(super) fn needs_pi(&self, i: usize) -> bool {
        let a = &self.atoms[i];
        let Some(v0) = lowest_valence(a.element, a.charge as i32) else {
            return false;
        };
        self.sigma(i) < v0 as i32
    }

    pub(super) fn kekulize(&mut self) -> Result<(), SmilesError> {
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

    pub(super) fn kekule_sum(&self, i: usize) -> u32 {
        self.neighbours(i).map(|(_, b)| self.bonds[b].kekule_order as u32).sum()
    }

    pub(super) fn implicit_hydrogens(&mut self) {
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
    pub(super) fn charge_separate(&mut self) {
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
    pub(super) fn fold_explicit_hydrogens(&mut self) {
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
}
