//! Blossom (2-matching) inequalities from an LP point, by the odd-component heuristic.
//!
//! For a handle `H` and an odd number `|T| ≥ 3` of node-disjoint teeth (edges with one end in
//! `H`), every tour satisfies `x(δ(H) \ T) − x(T) ≥ 1 − |T|`, the comb inequality whose teeth
//! are single edges (see [`Cut`]). The heuristic takes as handles
//! the connected components of the fractional edges (`0 < x_e < 1`) and as teeth the edges at
//! 1 leaving them: when those are odd in number and share no node, the inequality's left side
//! is `x(δ(H) \ T) − |T|`, and `δ(H) \ T` holds no fractional edge, so it is violated by 1
//! (Padberg and Hong's construction, as described in the published literature on the exact
//! TSP; the exact odd-cut separation is left for later).

use crate::subtour::Cut;
use crate::support::{support_components, Weighted};

/// Values closer than this to 0 or 1 count as 0 or 1.
const INTEGRAL_EPS: f64 = 1e-6;

/// Violated blossoms found by the odd-component heuristic, with the violation checked on the
/// point (at least `tol`).
pub fn violated_blossoms(n: usize, support: &[Weighted], tol: f64) -> Vec<Cut> {
    let fractional: Vec<Weighted> = support
        .iter()
        .copied()
        .filter(|&(_, _, x)| x > INTEGRAL_EPS && x < 1.0 - INTEGRAL_EPS)
        .collect();
    if fractional.is_empty() {
        return Vec::new();
    }
    let mut out = Vec::new();
    for handle in support_components(n, &fractional, 0.0) {
        if handle.len() < 2 || handle.len() >= n {
            continue;
        }
        let mut inside = vec![false; n];
        for &v in &handle {
            inside[v] = true;
        }
        let mut teeth: Vec<(usize, usize)> = support
            .iter()
            .filter(|&&(i, j, x)| inside[i] != inside[j] && x >= 1.0 - INTEGRAL_EPS)
            .map(|&(i, j, _)| (i.min(j), i.max(j)))
            .collect();
        teeth.sort_unstable();
        if teeth.len() < 3 || teeth.len().is_multiple_of(2) {
            continue;
        }
        let mut ends: Vec<usize> = teeth.iter().flat_map(|&(i, j)| [i, j]).collect();
        ends.sort_unstable();
        if ends.windows(2).any(|w| w[0] == w[1]) {
            continue;
        }
        let cut = Cut {
            set: handle,
            teeth: teeth.iter().map(|&(i, j)| vec![i, j]).collect(),
        };
        if cut.violated(n, support, tol) {
            out.push(cut);
        }
    }
    out
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    /// The two triangles at 1/2 of the "prism" point (a common textbook example of a point
    /// that meets every subtour constraint and breaks a blossom and so a comb): {0, 1, 2} and
    /// {3, 4, 5}, smaller end first.
    pub(crate) fn triangles() -> Vec<Weighted> {
        vec![
            (0, 1, 0.5),
            (1, 2, 0.5),
            (0, 2, 0.5),
            (3, 4, 0.5),
            (4, 5, 0.5),
            (3, 5, 0.5),
        ]
    }

    /// The classic fractional point on the two triangles joined by three edges at 1 (the
    /// "prism"): every subtour cut holds, and the blossom with a triangle as handle and the
    /// three joining edges as teeth is violated by 1.
    fn prism() -> Vec<Weighted> {
        let mut e = triangles();
        e.extend([(0, 3, 1.0), (1, 4, 1.0), (2, 5, 1.0)]);
        e
    }

    #[test]
    fn the_prism_point_breaks_a_blossom_and_no_subtour_cut() {
        let e = prism();
        assert!(crate::support::violated_subtours(6, &e, 1e-6).is_empty());
        let b = violated_blossoms(6, &e, 1e-6);
        assert_eq!(b.len(), 2, "{b:?}");
        assert_eq!(b[0].set, vec![0, 1, 2]);
        assert_eq!(b[0].teeth, vec![vec![0, 3], vec![1, 4], vec![2, 5]]);
        // Every tour of the six nodes satisfies it (all 120 orders from node 0, each of the 60
        // tours in both directions).
        let mut order: Vec<usize> = (1..6).collect();
        let mut tours = 0;
        permute(&mut order, 0, &mut |p| {
            let t: Vec<usize> = std::iter::once(0).chain(p.iter().copied()).collect();
            let mut lhs = 0.0;
            for k in 0..6 {
                let (i, j) = (t[k], t[(k + 1) % 6]);
                let inside = |v: usize| v < 3;
                if inside(i) != inside(j) {
                    let e = vec![i.min(j), i.max(j)];
                    lhs += if b[0].teeth.contains(&e) { -1.0 } else { 1.0 };
                }
            }
            assert!(lhs >= 1.0 - 3.0, "tour {t:?}: {lhs}");
            tours += 1;
        });
        assert_eq!(tours, 120);
    }

    #[test]
    fn an_integral_point_or_even_teeth_give_none() {
        let tour: Vec<Weighted> = (0..6).map(|i| (i, (i + 1) % 6, 1.0)).collect();
        assert!(violated_blossoms(6, &tour, 1e-6).is_empty());
        // A handle with two teeth only.
        let e = vec![
            (0, 1, 0.5),
            (1, 2, 1.0),
            (0, 2, 0.5),
            (0, 3, 1.0),
            (2, 4, 0.0),
        ];
        assert!(violated_blossoms(5, &e, 1e-6).is_empty());
    }

    /// Calls `f` with every order of `v[k..]` (the prefix kept).
    pub(crate) fn permute(v: &mut Vec<usize>, k: usize, f: &mut impl FnMut(&[usize])) {
        if k == v.len() {
            f(v);
            return;
        }
        for i in k..v.len() {
            v.swap(k, i);
            permute(v, k + 1, f);
            v.swap(k, i);
        }
    }
}
