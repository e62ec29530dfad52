//! Comb inequalities from an LP point, by heuristics on the support graph.
//!
//! A comb is a handle `H` and an odd number `k ≥ 3` of pairwise disjoint teeth `T_i`, each
//! meeting `H` and leaving it; every tour satisfies `x(δ(H)) + Σ_i x(δ(T_i)) ≥ 3k + 1` (see
//! [`Cut`]). Writing the left side minus the right side as
//! `x(δ(H)) − 1 − Σ_i (3 − x(δ(T_i)))`, a comb is violated when its teeth are tight enough
//! (`x(δ(T)) = 2` gains 1 each) and its handle is crossed little.
//!
//! The search works on a sequence of shrunk support graphs: each node of a level is a set of
//! original nodes, edges between two sets carry the sum of the values between them, and a
//! comb found on a level expands to a comb on the original nodes with the same left side
//! (every set is a union of whole level nodes, and disjoint or crossing sets stay so). Level
//! 0 is the support graph itself; each next level shrinks one of, in this order of
//! preference:
//!
//! - the inner nodes of every path of edges at 1 (a 1-path) into one of its ends, so the
//!   path becomes a single edge at 1 and a tooth on it holds the whole path (Grötschel and
//!   Holland, "Solution of large-scale symmetric travelling salesman problems", Mathematical
//!   Programming 51, 1991);
//! - every edge `{s, t}` at 1 that is the only one at 1 at both ends and has a third node
//!   `w` with `x(s:w) + x(t:w) = 1`, so that `{s, t, w}` is tight (the condition of a
//!   shrinking rule of Padberg and Rinaldi, "Facet identification for the symmetric
//!   traveling salesman polytope", Mathematical Programming 47, 1990, which shrinks all three;
//!   here only the pair is shrunk, and becomes a node joined to `w` by an edge at 1);
//! - failing both, every edge at 1 that is the only one at 1 at both ends.
//!
//! On every level, the handles tried are the connected components and the blocks
//! (2-connected components) of the fractional subgraph (`0 < x_e < 1`), the odd-component
//! idea of Padberg and Hong ("On the symmetric travelling salesman problem: a computational
//! study", Mathematical Programming Study 12, 1980) and its block form by Grötschel and
//! Holland. For a handle, every edge leaving it is a candidate tooth, and so is the set grown
//! from that edge by adding, one at a time, the neighbour that lowers `x(δ(T))` most, until
//! it is tight (tight sets as teeth, grown greedily, after Naddef and Thienel, "Efficient
//! separation routines for the symmetric traveling salesman problem I: general tools and
//! comb separation", Mathematical Programming 92, 2002). The teeth are picked greedily,
//! tightest and smallest first, among those disjoint from the ones already picked; an even
//! count is made odd by dropping the loosest tooth or adding the best disjoint one, whichever
//! costs less. Then single nodes move into or out of the handle while that lowers
//! `x(δ(H))` and every tooth still meets the handle and leaves it, and the teeth are picked
//! again for the new handle.
//!
//! Every comb returned is checked on the original point; for each handle only the most
//! violated comb is kept.

use crate::subtour::Cut;
use crate::support::Weighted;
use pathfinding::undirected::connected_components;
use rustworkx_core::connectivity::articulation_points;
use rustworkx_core::petgraph::graph::{NodeIndex, UnGraph};
use rustworkx_core::petgraph::unionfind::UnionFind;
use std::collections::{HashMap, HashSet};

/// Values within this of 1 count as 1; cut values within this of 2 count as tight.
const ONE_EPS: f64 = 1e-6;
/// The least improvement a move or a growth step must make.
const STEP_EPS: f64 = 1e-9;
/// Levels of shrinking at most.
const MAX_LEVELS: usize = 16;
/// Nodes a grown tooth may add to its starting edge.
const GROW_STEPS: usize = 12;
/// Rounds of (teeth, handle moves) per handle.
const HANDLE_ROUNDS: usize = 3;
/// Passes of single-node moves over a handle's border per round.
const MOVE_PASSES: usize = 8;
/// No tooth.
const NONE: usize = usize::MAX;

/// Violated combs found from the support graph `support` over nodes `0..n` (each violated by
/// at least `tol`), by the heuristics of the module documentation.
pub fn violated_combs(n: usize, support: &[Weighted], tol: f64) -> Vec<Cut> {
    if n < 6 || support.iter().any(|&(i, j, _)| i >= n || j >= n) {
        return Vec::new();
    }
    let edges: Vec<Weighted> = support
        .iter()
        .copied()
        .filter(|&(i, j, x)| i != j && x > 0.0 && x.is_finite())
        .collect();
    if !edges.iter().any(|e| e.2 < 1.0 - ONE_EPS) {
        return Vec::new();
    }
    // The most violated comb of every handle, in the order the handles were first found.
    let mut best: HashMap<Vec<usize>, (f64, Cut)> = HashMap::new();
    let mut order: Vec<Vec<usize>> = Vec::new();
    let mut group: Vec<usize> = (0..n).collect();
    for _ in 0..MAX_LEVELS {
        let level = Level::new(&group, &edges);
        if level.len() < 6 {
            break;
        }
        for (handle, teeth) in level.combs(tol) {
            let cut = level.expand(&handle, &teeth);
            if !well_formed(n, &cut) || !cut.violated(n, support, tol) {
                continue;
            }
            let excess = cut.lhs(n, support) - cut.rhs();
            match best.get_mut(&cut.set) {
                Some(old) => {
                    if excess < old.0 - STEP_EPS {
                        *old = (excess, cut);
                    }
                }
                None => {
                    order.push(cut.set.clone());
                    best.insert(cut.set.clone(), (excess, cut));
                }
            }
        }
        match level.shrink() {
            Some(next) => {
                for g in group.iter_mut() {
                    *g = next[*g];
                }
            }
            None => break,
        }
    }
    order
        .into_iter()
        .filter_map(|h| best.remove(&h).map(|(_, c)| c))
        .collect()
}

/// True when `cut` is a comb over nodes `0..n`: sorted sets without repeats, a handle neither
/// empty nor everything, an odd number `k ≥ 3` of pairwise disjoint teeth, each meeting the
/// handle and leaving it.
fn well_formed(n: usize, cut: &Cut) -> bool {
    let sorted = |s: &Vec<usize>| s.windows(2).all(|w| w[0] < w[1]) && s.iter().all(|&v| v < n);
    let k = cut.teeth.len();
    if k < 3 || k.is_multiple_of(2) || cut.set.is_empty() || cut.set.len() >= n {
        return false;
    }
    if !sorted(&cut.set) || !cut.teeth.iter().all(sorted) {
        return false;
    }
    let mut inside = vec![false; n];
    for &v in &cut.set {
        inside[v] = true;
    }
    let mut used = vec![false; n];
    for t in &cut.teeth {
        if !t.iter().any(|&v| inside[v]) || t.iter().all(|&v| inside[v]) {
            return false;
        }
        for &v in t {
            if std::mem::replace(&mut used[v], true) {
                return false;
            }
        }
    }
    true
}

/// A candidate tooth on a level: its level nodes (sorted) and `x(δ(T))`.
#[derive(Clone, Debug)]
struct Tooth {
    nodes: Vec<usize>,
    cut: f64,
}

/// A shrunk support graph: every node a set of original nodes.
struct Level {
    /// The original nodes of every level node.
    members: Vec<Vec<usize>>,
    /// Neighbours and the summed value to each, sorted by neighbour.
    adj: Vec<Vec<(usize, f64)>>,
    /// `x(δ(s))` of every level node.
    degree: Vec<f64>,
}

impl Level {
    /// The level whose node `group[v]` holds original node `v` (groups numbered `0..k`).
    fn new(group: &[usize], edges: &[Weighted]) -> Level {
        let k = group.iter().map(|&g| g + 1).max().unwrap_or(0);
        let mut members = vec![Vec::new(); k];
        for (v, &g) in group.iter().enumerate() {
            members[g].push(v);
        }
        let mut pairs: Vec<(usize, usize, f64)> = edges
            .iter()
            .filter_map(|&(i, j, x)| {
                let (a, b) = (group[i], group[j]);
                (a != b).then(|| (a.min(b), a.max(b), x))
            })
            .collect();
        pairs.sort_by_key(|p| (p.0, p.1));
        let mut adj = vec![Vec::new(); k];
        let mut degree = vec![0.0; k];
        let mut at = 0;
        while at < pairs.len() {
            let (a, b, mut x) = pairs[at];
            at += 1;
            while at < pairs.len() && (pairs[at].0, pairs[at].1) == (a, b) {
                x += pairs[at].2;
                at += 1;
            }
            adj[a].push((b, x));
            adj[b].push((a, x));
            degree[a] += x;
            degree[b] += x;
        }
        for list in adj.iter_mut() {
            list.sort_by_key(|&(w, _)| w);
        }
        Level {
            members,
            adj,
            degree,
        }
    }

    fn len(&self) -> usize {
        self.members.len()
    }

    /// The neighbours joined to `s` by a value of 1.
    fn ones(&self, s: usize) -> Vec<usize> {
        self.adj[s]
            .iter()
            .filter(|&&(_, x)| x >= 1.0 - ONE_EPS)
            .map(|&(w, _)| w)
            .collect()
    }

    /// `x(δ(S))` for the level nodes `set`, with `mark` all false on entry and exit.
    fn cut_of(&self, set: &[usize], mark: &mut [bool]) -> f64 {
        for &v in set {
            mark[v] = true;
        }
        let value = set
            .iter()
            .flat_map(|&v| &self.adj[v])
            .filter(|&&(w, _)| !mark[w])
            .map(|&(_, x)| x)
            .sum();
        for &v in set {
            mark[v] = false;
        }
        value
    }

    /// The original-node comb of a level handle and level teeth.
    fn expand(&self, handle: &[usize], teeth: &[Tooth]) -> Cut {
        let grow = |set: &[usize]| {
            let mut out: Vec<usize> = set
                .iter()
                .flat_map(|&s| self.members[s].iter().copied())
                .collect();
            out.sort_unstable();
            out
        };
        Cut {
            set: grow(handle),
            teeth: teeth.iter().map(|t| grow(&t.nodes)).collect(),
        }
    }

    /// The handles to try: components and blocks of the fractional subgraph with at least 3
    /// nodes and at least 3 nodes outside, each sorted, without repeats.
    fn handles(&self) -> Vec<Vec<usize>> {
        let k = self.len();
        let fractional: Vec<Vec<usize>> = self
            .adj
            .iter()
            .map(|list| {
                list.iter()
                    .filter(|&&(_, x)| x < 1.0 - ONE_EPS)
                    .map(|&(w, _)| w)
                    .collect()
            })
            .collect();
        let mut seen: HashSet<Vec<usize>> = HashSet::new();
        let mut out = Vec::new();
        let candidates = components(&fractional)
            .into_iter()
            .chain(blocks(&fractional));
        for h in candidates {
            if h.len() >= 3 && h.len() + 3 <= k && seen.insert(h.clone()) {
                out.push(h);
            }
        }
        out
    }

    /// A violated comb on this level for every handle that gives one (excess below `−tol`).
    fn combs(&self, tol: f64) -> Vec<(Vec<usize>, Vec<Tooth>)> {
        let mut mark = vec![false; self.len()];
        self.handles()
            .into_iter()
            .filter_map(|h| self.best_comb(h, tol, &mut mark))
            .collect()
    }

    /// The most violated comb found from `handle`: teeth picked for it, the handle moved with
    /// the teeth held, and the teeth picked again, a few rounds.
    fn best_comb(
        &self,
        handle: Vec<usize>,
        tol: f64,
        mark: &mut [bool],
    ) -> Option<(Vec<usize>, Vec<Tooth>)> {
        let mut in_h = vec![false; self.len()];
        for &v in &handle {
            in_h[v] = true;
        }
        let mut handle = handle;
        let mut best: Option<(f64, Vec<usize>, Vec<Tooth>)> = None;
        let mut keep = |excess: f64, h: &[usize], teeth: &[Tooth]| {
            if best.as_ref().is_none_or(|b| excess < b.0 - STEP_EPS) {
                best = Some((excess, h.to_vec(), teeth.to_vec()));
            }
        };
        for _ in 0..HANDLE_ROUNDS {
            let Some(teeth) = self.choose_teeth(&handle, &in_h, mark) else {
                break;
            };
            let rhs = 3.0 * teeth.len() as f64 + 1.0;
            let teeth_cut: f64 = teeth.iter().map(|t| t.cut).sum();
            keep(
                self.cut_of(&handle, mark) + teeth_cut - rhs,
                &handle,
                &teeth,
            );
            if !self.move_handle(&mut handle, &mut in_h, &teeth) {
                break;
            }
            keep(
                self.cut_of(&handle, mark) + teeth_cut - rhs,
                &handle,
                &teeth,
            );
        }
        best.filter(|b| b.0 < -tol).map(|(_, h, t)| (h, t))
    }

    /// Disjoint teeth for the handle (`in_h` marks it), an odd number at least 3, picked
    /// greedily from the edges leaving it and the tight sets grown from them; `None` when
    /// there are not enough.
    fn choose_teeth(
        &self,
        handle: &[usize],
        in_h: &[bool],
        mark: &mut [bool],
    ) -> Option<Vec<Tooth>> {
        let mut candidates = Vec::new();
        for &u in handle {
            for &(v, x) in &self.adj[u] {
                if in_h[v] {
                    continue;
                }
                let cut = self.degree[u] + self.degree[v] - 2.0 * x;
                if cut > 2.0 + ONE_EPS {
                    if let Some(t) = self.grow(u, v, cut, mark) {
                        candidates.push(t);
                    }
                }
                candidates.push(Tooth {
                    nodes: vec![u.min(v), u.max(v)],
                    cut,
                });
            }
        }
        candidates.sort_by(|a, b| {
            a.cut
                .total_cmp(&b.cut)
                .then(a.nodes.len().cmp(&b.nodes.len()))
                .then_with(|| a.nodes.cmp(&b.nodes))
        });
        let mut chosen: Vec<Tooth> = Vec::new();
        let mut used = vec![false; self.len()];
        let mut taken = vec![false; candidates.len()];
        for (c, t) in candidates.iter().enumerate() {
            if t.cut < 3.0 - STEP_EPS && t.nodes.iter().all(|&v| !used[v]) {
                for &v in &t.nodes {
                    used[v] = true;
                }
                taken[c] = true;
                chosen.push(t.clone());
            }
        }
        if !chosen.is_empty() && chosen.len().is_multiple_of(2) {
            // Dropping tooth t changes the excess by 3 − x(δ(t)); adding one by x(δ(t)) − 3.
            let drop = (chosen.len() >= 4)
                .then(|| {
                    chosen
                        .iter()
                        .enumerate()
                        .max_by(|a, b| a.1.cut.total_cmp(&b.1.cut))
                        .map(|(i, t)| (i, 3.0 - t.cut))
                })
                .flatten();
            let add = candidates
                .iter()
                .enumerate()
                .find(|&(c, t)| !taken[c] && t.nodes.iter().all(|&v| !used[v]))
                .map(|(_, t)| (t.clone(), t.cut - 3.0));
            match (drop, add) {
                (Some((i, d)), Some((_, a))) if d <= a => {
                    chosen.remove(i);
                }
                (_, Some((t, _))) => chosen.push(t),
                (Some((i, _)), None) => {
                    chosen.remove(i);
                }
                (None, None) => return None,
            }
        }
        (chosen.len() >= 3 && !chosen.len().is_multiple_of(2)).then_some(chosen)
    }

    /// The set grown from the edge `{u, v}` (its cut value `cut`) by adding, while that lowers
    /// the cut value and it is not yet tight, the neighbour that lowers it most; `None` when
    /// no step lowers it.
    fn grow(&self, u: usize, v: usize, cut: f64, mark: &mut [bool]) -> Option<Tooth> {
        let mut nodes = vec![u, v];
        // Neighbours outside the set and their summed value to it.
        let mut touch: Vec<(usize, f64)> = Vec::new();
        let join = |touch: &mut Vec<(usize, f64)>, nodes: &[usize], s: usize| {
            for &(w, x) in &self.adj[s] {
                if nodes.contains(&w) {
                    continue;
                }
                match touch.iter_mut().find(|e| e.0 == w) {
                    Some(e) => e.1 += x,
                    None => touch.push((w, x)),
                }
            }
        };
        join(&mut touch, &nodes, u);
        join(&mut touch, &nodes, v);
        let mut value = cut;
        for _ in 0..GROW_STEPS {
            if value <= 2.0 + ONE_EPS {
                break;
            }
            // Adding w changes the cut value by x(δ(w)) − 2 x(w : T).
            let mut pick: Option<(usize, f64)> = None;
            for (i, &(w, c)) in touch.iter().enumerate() {
                let gain = 2.0 * c - self.degree[w];
                let better = match pick {
                    None => true,
                    Some((j, g)) => gain > g + STEP_EPS || (gain > g - STEP_EPS && w < touch[j].0),
                };
                if better {
                    pick = Some((i, gain));
                }
            }
            let Some((i, gain)) = pick.filter(|&(_, g)| g > STEP_EPS) else {
                break;
            };
            let (w, _) = touch.swap_remove(i);
            nodes.push(w);
            value -= gain;
            join(&mut touch, &nodes, w);
        }
        if nodes.len() == 2 {
            return None;
        }
        nodes.sort_unstable();
        let value = self.cut_of(&nodes, mark);
        (value < cut - STEP_EPS).then_some(Tooth { nodes, cut: value })
    }

    /// Moves single nodes into or out of the handle while that lowers `x(δ(H))`, keeping
    /// every tooth meeting the handle and leaving it; true when the handle changed.
    fn move_handle(&self, handle: &mut Vec<usize>, in_h: &mut [bool], teeth: &[Tooth]) -> bool {
        let k = self.len();
        let mut tooth_of = vec![NONE; k];
        let mut inside = vec![0usize; teeth.len()];
        let mut outside = vec![0usize; teeth.len()];
        for (t, tooth) in teeth.iter().enumerate() {
            for &v in &tooth.nodes {
                tooth_of[v] = t;
                if in_h[v] {
                    inside[t] += 1;
                } else {
                    outside[t] += 1;
                }
            }
        }
        let mut size = handle.len();
        let mut changed = false;
        for _ in 0..MOVE_PASSES {
            let mut border: Vec<usize> = handle
                .iter()
                .flat_map(|&v| std::iter::once(v).chain(self.adj[v].iter().map(|e| e.0)))
                .collect();
            border.sort_unstable();
            border.dedup();
            let mut moved = false;
            for v in border {
                let to_h: f64 = self.adj[v].iter().filter(|e| in_h[e.0]).map(|e| e.1).sum();
                let was_in = in_h[v];
                let delta = if was_in {
                    2.0 * to_h - self.degree[v]
                } else {
                    self.degree[v] - 2.0 * to_h
                };
                if delta >= -STEP_EPS {
                    continue;
                }
                let t = tooth_of[v];
                let allowed = if was_in {
                    size > 1 && (t == NONE || inside[t] >= 2)
                } else {
                    size + 1 < k && (t == NONE || outside[t] >= 2)
                };
                if !allowed {
                    continue;
                }
                in_h[v] = !was_in;
                if was_in {
                    size -= 1;
                    if t != NONE {
                        inside[t] -= 1;
                        outside[t] += 1;
                    }
                } else {
                    size += 1;
                    if t != NONE {
                        inside[t] += 1;
                        outside[t] -= 1;
                    }
                }
                moved = true;
            }
            if !moved {
                break;
            }
            changed = true;
            *handle = (0..k).filter(|&v| in_h[v]).collect();
        }
        changed
    }

    /// The next level's group of every node of this one (numbered `0..k'`), by the first
    /// shrinking rule that applies (see the module documentation); `None` when none does.
    fn shrink(&self) -> Option<Vec<usize>> {
        let k = self.len();
        let ones: Vec<Vec<usize>> = (0..k).map(|s| self.ones(s)).collect();
        let mut parent: UnionFind<usize> = UnionFind::new(k);
        let mut merged = false;
        // Inner nodes of 1-paths into the end the walk starts from.
        let mut done = vec![false; k];
        for s in 0..k {
            if ones[s].len() != 1 || done[s] {
                continue;
            }
            done[s] = true;
            let (mut prev, mut at) = (s, ones[s][0]);
            let mut steps = 0;
            while ones[at].len() == 2 && at != s && steps < k {
                parent.union(s, at);
                merged = true;
                let next = if ones[at][0] == prev {
                    ones[at][1]
                } else {
                    ones[at][0]
                };
                prev = at;
                at = next;
                steps += 1;
            }
            done[at] = true;
        }
        if !merged {
            // Edges at 1 alone at both ends.
            let lone: Vec<(usize, usize)> = (0..k)
                .filter(|&s| ones[s].len() == 1)
                .map(|s| (s, ones[s][0]))
                .filter(|&(s, t)| s < t && ones[t].len() == 1)
                .collect();
            for &(s, t) in &lone {
                if self.tight_triangle(s, t) {
                    parent.union(s, t);
                    merged = true;
                }
            }
            if !merged {
                for &(s, t) in &lone {
                    parent.union(s, t);
                    merged = true;
                }
            }
        }
        if !merged {
            return None;
        }
        let mut id = vec![NONE; k];
        let mut next = 0;
        let out = (0..k)
            .map(|s| {
                let r = parent.find_mut(s);
                if id[r] == NONE {
                    id[r] = next;
                    next += 1;
                }
                id[r]
            })
            .collect();
        Some(out)
    }

    /// True when some third node `w` has `x(s:w) + x(t:w) = 1`.
    fn tight_triangle(&self, s: usize, t: usize) -> bool {
        let mut sum: Vec<(usize, f64)> = Vec::new();
        for &(w, x) in self.adj[s].iter().chain(&self.adj[t]) {
            if w == s || w == t {
                continue;
            }
            match sum.iter_mut().find(|e| e.0 == w) {
                Some(e) => e.1 += x,
                None => sum.push((w, x)),
            }
        }
        sum.iter().any(|e| e.1 >= 1.0 - ONE_EPS)
    }
}

/// The connected components (at least 2 nodes) of the graph of neighbour lists `adj`, each
/// sorted.
fn components(adj: &[Vec<usize>]) -> Vec<Vec<usize>> {
    let groups: Vec<Vec<usize>> = adj
        .iter()
        .enumerate()
        .filter(|(_, a)| !a.is_empty())
        .map(|(v, a)| std::iter::once(v).chain(a.iter().copied()).collect())
        .collect();
    let mut out: Vec<Vec<usize>> = connected_components::components(&groups)
        .into_iter()
        .map(|c| {
            let mut c: Vec<usize> = c.into_iter().collect();
            c.sort_unstable();
            c
        })
        .filter(|c| c.len() >= 2)
        .collect();
    out.sort();
    out
}

/// The blocks (2-connected components, bridges included) of the graph of neighbour lists
/// `adj` (no parallel edges), each sorted, from the biconnected components of the graph
/// crate.
fn blocks(adj: &[Vec<usize>]) -> Vec<Vec<usize>> {
    let mut g: UnGraph<(), ()> = UnGraph::with_capacity(adj.len(), 0);
    let nodes: Vec<NodeIndex> = (0..adj.len()).map(|_| g.add_node(())).collect();
    for (v, a) in adj.iter().enumerate() {
        for &w in a {
            if v < w {
                g.add_edge(nodes[v], nodes[w], ());
            }
        }
    }
    let mut labels: hashbrown::HashMap<(NodeIndex, NodeIndex), usize> = hashbrown::HashMap::new();
    articulation_points(&g, Some(&mut labels));
    let mut by_label: HashMap<usize, Vec<usize>> = HashMap::new();
    for ((a, b), label) in labels {
        let block = by_label.entry(label).or_default();
        block.push(a.index());
        block.push(b.index());
    }
    let mut out: Vec<Vec<usize>> = by_label
        .into_values()
        .map(|mut b| {
            b.sort_unstable();
            b.dedup();
            b
        })
        .collect();
    out.sort();
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::blossom::tests::{permute, triangles};
    use crate::blossom::violated_blossoms;
    use crate::support::violated_subtours;

    const TOL: f64 = 1e-6;

    /// Edges `(i, j, x)` with the smaller end first.
    fn point(list: &[(usize, usize, f64)]) -> Vec<Weighted> {
        list.iter()
            .map(|&(i, j, x)| (i.min(j), i.max(j), x))
            .collect()
    }

    /// Joins `a` (first triangle) to `b` (second) through the pair `p`, `q` at 1: both
    /// `a` and `b` meet each of `p`, `q` at 1/2. A tooth over this link needs `{a, p, q}`
    /// (a variant of the prism constructed for these tests, not from the literature).
    fn gadget(a: usize, b: usize, p: usize, q: usize) -> Vec<(usize, usize, f64)> {
        vec![
            (a, p, 0.5),
            (a, q, 0.5),
            (p, q, 1.0),
            (p, b, 0.5),
            (q, b, 0.5),
        ]
    }

    /// The prism with the link 0–3 through the pair 6, 7; links 1–4 and 2–5 are edges at 1.
    fn one_gadget() -> Vec<Weighted> {
        let mut e = triangles();
        e.extend([(1, 4, 1.0), (2, 5, 1.0)]);
        e.extend(gadget(0, 3, 6, 7));
        point(&e)
    }

    /// The prism with links 0–3 and 1–4 through pairs; 2–5 an edge at 1.
    fn two_gadgets() -> Vec<Weighted> {
        let mut e = triangles();
        e.push((2, 5, 1.0));
        e.extend(gadget(0, 3, 6, 7));
        e.extend(gadget(1, 4, 8, 9));
        point(&e)
    }

    /// The prism with all three links through pairs.
    fn three_gadgets() -> Vec<Weighted> {
        let mut e = triangles();
        e.extend(gadget(0, 3, 6, 7));
        e.extend(gadget(1, 4, 8, 9));
        e.extend(gadget(2, 5, 10, 11));
        point(&e)
    }

    /// The prism with every link a path of two edges at 1 (through 6, 7 and 8).
    fn prism_with_paths() -> Vec<Weighted> {
        let mut e = triangles();
        e.extend([
            (0, 6, 1.0),
            (6, 3, 1.0),
            (1, 7, 1.0),
            (7, 4, 1.0),
            (2, 8, 1.0),
            (8, 5, 1.0),
        ]);
        point(&e)
    }

    /// `copies` copies of [`one_gadget`] (nodes `8c..8c + 8`) in a ring: the link 1–4 of
    /// each copy goes to node 4 of the next copy instead.
    fn ring(copies: usize) -> (usize, Vec<Weighted>) {
        let mut e = Vec::new();
        for c in 0..copies {
            let at = 8 * c;
            for &(i, j, x) in &one_gadget() {
                if (i, j) != (1, 4) {
                    e.push((at + i, at + j, x));
                }
            }
            e.push((at + 1, 8 * ((c + 1) % copies) + 4, 1.0));
        }
        (8 * copies, point(&e))
    }

    /// `coef[i][j]`: how many of the comb's sets (handle and teeth) the edge `{i, j}` crosses,
    /// so that a tour's left side is the sum over its edges.
    fn coefficients(n: usize, cut: &Cut) -> Vec<Vec<f64>> {
        let sets: Vec<Vec<bool>> = std::iter::once(&cut.set)
            .chain(&cut.teeth)
            .map(|s| (0..n).map(|v| s.contains(&v)).collect())
            .collect();
        (0..n)
            .map(|i| {
                (0..n)
                    .map(|j| sets.iter().filter(|s| s[i] != s[j]).count() as f64)
                    .collect()
            })
            .collect()
    }

    /// The least tour cost under `coef`, over every order of the nodes from node 0.
    fn least_by_enumeration(coef: &[Vec<f64>]) -> f64 {
        let n = coef.len();
        let mut rest: Vec<usize> = (1..n).collect();
        let mut least = f64::INFINITY;
        permute(&mut rest, 0, &mut |p| {
            let mut len = coef[0][p[0]] + coef[p[p.len() - 1]][0];
            for w in p.windows(2) {
                len += coef[w[0]][w[1]];
            }
            least = least.min(len);
        });
        least
    }

    /// The least tour cost under `coef`, by the dynamic programme over subsets (every tour
    /// from node 0, for a dozen nodes where enumeration is slow).
    fn least_by_subsets(coef: &[Vec<f64>]) -> f64 {
        let n = coef.len();
        let full = 1usize << (n - 1);
        // best[mask][j]: a path from 0 through the nodes of mask (bit j − 1 for node j),
        // ending at j.
        let mut best = vec![vec![f64::INFINITY; n]; full];
        for j in 1..n {
            best[1 << (j - 1)][j] = coef[0][j];
        }
        for mask in 1..full {
            for j in 1..n {
                let b = best[mask][j];
                if mask >> (j - 1) & 1 == 0 || !b.is_finite() {
                    continue;
                }
                for k in 1..n {
                    if mask >> (k - 1) & 1 == 0 {
                        let m = mask | 1 << (k - 1);
                        best[m][k] = best[m][k].min(b + coef[j][k]);
                    }
                }
            }
        }
        (1..n)
            .map(|j| best[full - 1][j] + coef[j][0])
            .fold(f64::INFINITY, f64::min)
    }

    /// Asserts `cut` is a comb (sorted sets, handle neither empty nor everything, an odd
    /// number ≥ 3 of disjoint teeth each meeting the handle and its outside) broken by the
    /// point by at least `TOL`.
    fn assert_comb(n: usize, e: &[Weighted], cut: &Cut) {
        let k = cut.teeth.len();
        assert!(k >= 3 && k % 2 == 1, "{cut:?}");
        assert!(!cut.set.is_empty() && cut.set.len() < n, "{cut:?}");
        for s in std::iter::once(&cut.set).chain(&cut.teeth) {
            assert!(s.windows(2).all(|w| w[0] < w[1]), "unsorted {s:?}");
            assert!(s.iter().all(|&v| v < n));
        }
        for (a, t) in cut.teeth.iter().enumerate() {
            assert!(t.iter().any(|v| cut.set.contains(v)), "{cut:?}");
            assert!(t.iter().any(|v| !cut.set.contains(v)), "{cut:?}");
            for u in &cut.teeth[a + 1..] {
                assert!(t.iter().all(|v| !u.contains(v)), "overlap in {cut:?}");
            }
        }
        assert!(
            cut.lhs(n, e) <= cut.rhs() - TOL,
            "{cut:?}: {}",
            cut.lhs(n, e)
        );
    }

    /// Asserts every tour meets `cut`: its least left side over all tours is at least the
    /// right side.
    fn assert_valid(n: usize, cut: &Cut) {
        let coef = coefficients(n, cut);
        let least = if n <= 10 {
            least_by_enumeration(&coef)
        } else {
            least_by_subsets(&coef)
        };
        assert!(least >= cut.rhs() - 1e-9, "{cut:?}: a tour of {least}");
    }

    /// The checks every hand-made point starts with: degrees 2, no subtour cut violated.
    fn assert_subtour_point(n: usize, e: &[Weighted]) {
        for v in 0..n {
            let d: f64 = e
                .iter()
                .filter(|&&(i, j, _)| i == v || j == v)
                .map(|x| x.2)
                .sum();
            assert!((d - 2.0).abs() < 1e-12, "node {v}: {d}");
        }
        assert!(violated_subtours(n, e, TOL).is_empty());
    }

    #[test]
    fn the_subset_programme_agrees_with_enumeration() {
        let mut state = 99u64;
        for n in 4..=8 {
            for _ in 0..20 {
                let coef: Vec<Vec<f64>> = (0..n)
                    .map(|_| {
                        (0..n)
                            .map(|_| {
                                state = state
                                    .wrapping_mul(6364136223846793005)
                                    .wrapping_add(1442695040888963407);
                                (state >> 60) as f64
                            })
                            .collect()
                    })
                    .collect();
                // Symmetric, as tour costs are.
                let coef: Vec<Vec<f64>> = (0..n)
                    .map(|i| (0..n).map(|j| coef[i.min(j)][i.max(j)]).collect())
                    .collect();
                assert_eq!(least_by_enumeration(&coef), least_by_subsets(&coef));
            }
        }
    }

    #[test]
    fn a_tooth_of_three_nodes_that_the_blossom_heuristic_misses() {
        let e = one_gadget();
        let n = 8;
        assert_subtour_point(n, &e);
        assert!(violated_blossoms(n, &e, TOL).is_empty());
        let combs = violated_combs(n, &e, TOL);
        assert!(!combs.is_empty());
        assert!(
            combs.iter().any(|c| c.teeth.iter().any(|t| t.len() >= 3)),
            "{combs:?}"
        );
        for c in &combs {
            assert_comb(n, &e, c);
            assert_valid(n, c);
        }
    }

    #[test]
    fn pairs_at_one_shrunk_give_teeth_of_three_nodes() {
        // Two links through pairs (10 nodes, every tour enumerated) and three (12 nodes, by
        // the subset programme): the fractional edges join everything into one block, so only
        // the shrunk graph shows the triangles as handles.
        for (n, e) in [(10, two_gadgets()), (12, three_gadgets())] {
            assert_subtour_point(n, &e);
            assert!(violated_blossoms(n, &e, TOL).is_empty());
            let combs = violated_combs(n, &e, TOL);
            assert!(!combs.is_empty(), "n = {n}");
            assert!(combs.iter().any(|c| c.teeth.iter().any(|t| t.len() >= 3)));
            for c in &combs {
                assert_comb(n, &e, c);
                assert_valid(n, c);
            }
        }
    }

    #[test]
    fn one_paths_shrunk_give_teeth_over_the_whole_path() {
        let e = prism_with_paths();
        let n = 9;
        assert_subtour_point(n, &e);
        let combs = violated_combs(n, &e, TOL);
        assert!(
            combs.iter().any(|c| c.teeth.iter().all(|t| t.len() == 3)),
            "{combs:?}"
        );
        for c in &combs {
            assert_comb(n, &e, c);
            assert_valid(n, c);
        }
    }

    #[test]
    fn a_ring_of_gadgets_gives_one_comb_a_copy() {
        let (n, e) = ring(15);
        assert_subtour_point(n, &e);
        assert!(violated_blossoms(n, &e, TOL).is_empty());
        let combs = violated_combs(n, &e, TOL);
        for c in &combs {
            assert_comb(n, &e, c);
        }
        // Every copy's first triangle is the handle of a violated comb.
        for c in 0..15 {
            let h = vec![8 * c, 8 * c + 1, 8 * c + 2];
            assert!(combs.iter().any(|cut| cut.set == h), "copy {c}");
        }
        // A thousand nodes, quickly.
        let (n, e) = ring(125);
        let combs = violated_combs(n, &e, TOL);
        assert!(combs.len() >= 125);
        for c in &combs {
            assert_comb(n, &e, c);
        }
    }

    #[test]
    fn a_tour_gives_nothing() {
        for n in [6, 10, 50] {
            let e: Vec<Weighted> =
                point(&(0..n).map(|i| (i, (i + 1) % n, 1.0)).collect::<Vec<_>>());
            assert!(violated_combs(n, &e, TOL).is_empty());
        }
    }

    #[test]
    fn points_inside_the_tour_polytope_give_nothing() {
        // Averages of a few random tours meet every comb inequality, so any cut found would
        // be a wrong one.
        let mut state = 2024u64;
        let mut next = |m: usize| {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((state >> 33) as usize) % m
        };
        for round in 0..300 {
            let n = 8 + next(40);
            let weights: &[f64] = match round % 4 {
                0 => &[0.5, 0.5],
                1 => &[1.0 / 3.0, 1.0 / 3.0, 1.0 / 3.0],
                2 => &[0.5, 0.25, 0.25],
                _ => &[0.4, 0.3, 0.2, 0.1],
            };
            let mut sum: HashMap<(usize, usize), f64> = HashMap::new();
            let mut tour: Vec<usize> = (0..n).collect();
            for &w in weights {
                // Random tours near one another, so the average has paths at 1 and
                // fractional pieces alike: a few random swaps of the last tour.
                for _ in 0..1 + next(4) {
                    let (a, b) = (next(n), next(n));
                    tour.swap(a, b);
                }
                for k in 0..n {
                    let (i, j) = (tour[k], tour[(k + 1) % n]);
                    *sum.entry((i.min(j), i.max(j))).or_insert(0.0) += w;
                }
            }
            let mut e: Vec<Weighted> = sum.into_iter().map(|((i, j), x)| (i, j, x)).collect();
            e.sort_by_key(|a| (a.0, a.1));
            let combs = violated_combs(n, &e, TOL);
            assert!(combs.is_empty(), "round {round}: {combs:?} at {e:?}");
        }
    }

    #[test]
    fn blocks_split_at_cut_nodes() {
        // Two triangles sharing node 2, and a bridge 4–5.
        let list = [(0, 1), (1, 2), (0, 2), (2, 3), (3, 4), (2, 4), (4, 5)];
        let mut adj = vec![Vec::new(); 7];
        for &(a, b) in &list {
            adj[a].push(b);
            adj[b].push(a);
        }
        let mut b = blocks(&adj);
        b.sort();
        assert_eq!(b, vec![vec![0, 1, 2], vec![2, 3, 4], vec![4, 5]]);
        assert_eq!(components(&adj), vec![vec![0, 1, 2, 3, 4, 5]]);
    }
}
