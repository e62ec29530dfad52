//! Label placement shared by the pictures: rectangles in pixels, and a placer that puts each
//! label at the first candidate place that stays inside the drawing and clear of everything
//! placed or blocked before it, or leaves the label out.

/// A rectangle in pixels: (x0, y0, x1, y1), y downwards, x0 ≤ x1 and y0 ≤ y1.
pub(crate) type Rect = (f64, f64, f64, f64);

/// Whether `a` and `b` share some area (touching edges do not count).
pub(crate) fn overlaps(a: &Rect, b: &Rect) -> bool {
    a.0 < b.2 && b.0 < a.2 && a.1 < b.3 && b.1 < a.3
}

/// The square of half-side `r` around `p`.
pub(crate) fn square(p: (f64, f64), r: f64) -> Rect {
    (p.0 - r, p.1 - r, p.0 + r, p.1 + r)
}

/// The point of `r` nearest to `p`.
pub(crate) fn nearest_in(r: &Rect, p: (f64, f64)) -> (f64, f64) {
    (p.0.clamp(r.0, r.2), p.1.clamp(r.1, r.3))
}

/// Keeps what is taken inside a drawing and places labels clear of it.
pub(crate) struct Placer {
    bounds: Rect,
    taken: Vec<Rect>,
    /// Side of the grid cells that index `taken`, pixels.
    cell: f64,
    /// Per grid cell, the indices into `taken` of the rectangles touching it.
    grid: std::collections::HashMap<(i64, i64), Vec<usize>>,
}

impl Placer {
    /// A placer for labels that must stay inside `bounds`.
    pub(crate) fn new(bounds: Rect) -> Placer {
        Placer {
            bounds,
            taken: Vec::new(),
            cell: 40.0,
            grid: std::collections::HashMap::new(),
        }
    }

    /// The grid cells `r` touches (at most a bounded number: huge rectangles are rare and
    /// indexed by their corners' span anyway).
    fn cells(&self, r: &Rect) -> impl Iterator<Item = (i64, i64)> {
        let c = self.cell;
        let (i0, i1) = ((r.0 / c).floor() as i64, (r.2 / c).floor() as i64);
        let (j0, j1) = ((r.1 / c).floor() as i64, (r.3 / c).floor() as i64);
        (i0..=i1).flat_map(move |i| (j0..=j1).map(move |j| (i, j)))
    }

    /// Marks `r` as taken (a marker, a line's box, a label drawn elsewhere).
    pub(crate) fn block(&mut self, r: Rect) {
        if !(r.0.is_finite() && r.1.is_finite() && r.2.is_finite() && r.3.is_finite()) {
            return;
        }
        let k = self.taken.len();
        self.taken.push(r);
        let cells: Vec<(i64, i64)> = self.cells(&r).collect();
        for cell in cells {
            self.grid.entry(cell).or_default().push(k);
        }
    }

    /// Whether `r` lies inside the bounds and clear of everything taken.
    pub(crate) fn is_free(&self, r: &Rect) -> bool {
        let b = &self.bounds;
        let inside = r.0 >= b.0 && r.1 >= b.1 && r.2 <= b.2 && r.3 <= b.3;
        inside
            && self.cells(r).all(|cell| {
                self.grid
                    .get(&cell)
                    .is_none_or(|ks| ks.iter().all(|&k| !overlaps(r, &self.taken[k])))
            })
    }

    /// The first of `candidates` that is free, now taken; `None` when none is.
    pub(crate) fn place(&mut self, candidates: impl IntoIterator<Item = Rect>) -> Option<Rect> {
        let found = candidates.into_iter().find(|r| self.is_free(r))?;
        self.block(found);
        Some(found)
    }
}

/// Candidate places for a label of `w`×`h` pixels beside a marker of radius `radius` at `p`:
/// right, left, above, below, then the four corners, then the same `rings` times farther
/// out (for labels that need a leader line).
pub(crate) fn around(p: (f64, f64), radius: f64, w: f64, h: f64, rings: usize) -> Vec<Rect> {
    let (x, y) = p;
    let mut out = Vec::new();
    for ring in 0..=rings {
        let g = radius + 2.0 + ring as f64 * (h + 4.0);
        let corners = [
            (x + g, y - h / 2.0),
            (x - g - w, y - h / 2.0),
            (x - w / 2.0, y - g - h),
            (x - w / 2.0, y + g),
            (x + g * 0.7, y - g * 0.7 - h),
            (x - g * 0.7 - w, y - g * 0.7 - h),
            (x + g * 0.7, y + g * 0.7),
            (x - g * 0.7 - w, y + g * 0.7),
        ];
        out.extend(corners.iter().map(|&(x0, y0)| (x0, y0, x0 + w, y0 + h)));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn overlap_by_hand() {
        assert!(overlaps(&(0.0, 0.0, 10.0, 10.0), &(9.0, 9.0, 20.0, 20.0)));
        // Touching edges share no area.
        assert!(!overlaps(&(0.0, 0.0, 10.0, 10.0), &(10.0, 0.0, 20.0, 10.0)));
        assert!(!overlaps(&(0.0, 0.0, 10.0, 10.0), &(0.0, 11.0, 10.0, 20.0)));
    }

    #[test]
    fn the_placer_skips_taken_and_outside_places() {
        let mut p = Placer::new((0.0, 0.0, 100.0, 100.0));
        p.block((0.0, 0.0, 50.0, 50.0));
        // Inside the blocked square, then outside the bounds, then a free place.
        let got = p.place([
            (10.0, 10.0, 20.0, 20.0),
            (95.0, 95.0, 105.0, 105.0),
            (60.0, 60.0, 70.0, 70.0),
        ]);
        assert_eq!(got, Some((60.0, 60.0, 70.0, 70.0)));
        // What was placed is taken now.
        assert_eq!(p.place([(65.0, 65.0, 75.0, 75.0)]), None);
        assert_eq!(
            p.place([(70.0, 70.0, 80.0, 80.0)]),
            Some((70.0, 70.0, 80.0, 80.0))
        );
        // A rectangle spanning many grid cells is found from any of them.
        p.block((0.0, 90.0, 100.0, 91.0));
        assert!(!p.is_free(&(3.0, 85.0, 6.0, 95.0)));
    }

    #[test]
    fn candidates_start_beside_the_point() {
        let c = around((100.0, 100.0), 4.0, 20.0, 10.0, 1);
        assert_eq!(c.len(), 16);
        // First to the right, 6 px from the centre, centred vertically.
        assert_eq!(c[0], (106.0, 95.0, 126.0, 105.0));
        // Then to the left.
        assert_eq!(c[1], (74.0, 95.0, 94.0, 105.0));
        // The second ring is farther out by a line height and 4 px.
        assert_eq!(c[8], (120.0, 95.0, 140.0, 105.0));
    }
}
