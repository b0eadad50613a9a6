//! Rings: the smallest ring through each bond (up to 8 atoms) and aromaticity by Hückel's rule.

use super::*;

/// Reusable breadth-first search state for ring finding (depth 0 = not reached).
pub(super) struct RingScratch {
    parent: Vec<u32>,
    depth: Vec<u16>,
    queue: Vec<u32>,
}

impl RingScratch {
    pub(super) fn new(n: usize) -> RingScratch {
        RingScratch {
            parent: vec![0; n],
            depth: vec![0; n],
            queue: Vec::with_capacity(n),
        }
    }
}

impl Molecule {
    /// Ring bonds are the bonds that are not bridges (Tarjan's low-link, iterative).
    pub(super) fn perceive_rings(&mut self) {
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
    pub(super) fn perceive_aromaticity(&mut self) {
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

    pub(super) fn huckel(&self, ring: &[usize]) -> bool {
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

    pub(super) fn find_rings(&self, max_size: usize) -> Vec<Vec<usize>> {
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
    pub(super) fn ring_path_with(&self, k: usize, max_size: usize, s: &mut RingScratch) -> Option<Vec<usize>> {
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
}
