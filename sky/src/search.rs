//! Local search over observing sequences, every candidate measured by the planner's own rules
//! ([`Context::play`]): the building block of the polish of a single plan and of the front
//! search.
//!
//! A candidate is a list of [`Visit`]s (target and candidate roll). Moves: move a run of one
//! to three visits elsewhere, swap two visits, reverse a run, change one visit's roll; a
//! *chain* applies one to three random moves at once, so that the search reaches plans more
//! than one move away. Plays restart from a snapshot taken before the first position a move
//! changes, so that a move near the end of a long plan costs little.
//!
//! **Caution.** A planning aid: plans are proposals to be confirmed by the operations team's
//! validated tools.

use rand::Rng;
use rand_pcg::Pcg64;
use wend::{run_steps, Step, StepLimits, Stepped};

use super::schedule::{Context, Play, Visit};

/// Objective values `(elapsed seconds, propellant kilograms)`, both minimised.
pub type Point = (f64, f64);

/// Visits between two snapshots of a [`Replayer`].
const SNAPSHOT_EVERY: usize = 16;

/// Plays candidates that share a prefix with a base sequence from the last snapshot before
/// their first change.
pub struct Replayer<'c, 'a> {
    ctx: &'c Context<'a>,
    base: Vec<Visit>,
    /// `snaps[k]`: the play after the first `k × SNAPSHOT_EVERY` visits of `base`.
    snaps: Vec<Play<'c, 'a>>,
    /// Plays made.
    pub plays: u64,
}

impl<'c, 'a> Replayer<'c, 'a> {
    /// A replayer with `base` as its base sequence.
    pub fn new(ctx: &'c Context<'a>, base: &[Visit]) -> Replayer<'c, 'a> {
        let mut r = Replayer {
            ctx,
            base: Vec::new(),
            snaps: Vec::new(),
            plays: 0,
        };
        r.rebase(base);
        r
    }

    /// Makes `base` the base sequence (its snapshots taken as far as it plays).
    pub fn rebase(&mut self, base: &[Visit]) {
        self.base = base.to_vec();
        self.snaps.clear();
        let mut play = Play::new(self.ctx);
        self.snaps.push(play.clone());
        for (k, v) in base.iter().enumerate() {
            if play.push(*v).is_err() {
                break;
            }
            if (k + 1) % SNAPSHOT_EVERY == 0 {
                self.snaps.push(play.clone());
            }
        }
    }

    /// The objective values of `visits` (which agrees with the base before `first_change`),
    /// `None` when a visit cannot be made.
    pub fn score(&mut self, visits: &[Visit], first_change: usize) -> Option<Point> {
        self.plays += 1;
        let common = first_change.min(self.base.len()).min(visits.len());
        let k = (common / SNAPSHOT_EVERY).min(self.snaps.len() - 1);
        let mut play = self.snaps[k].clone();
        for v in &visits[k * SNAPSHOT_EVERY..] {
            play.push(*v).ok()?;
        }
        let s = play.finish(&[]);
        Some((s.elapsed_s(), s.propellant_kg))
    }
}

/// A random change of `visits` by one move: the new sequence and the first position it
/// changes. `None` when the sequence is too short for the move drawn.
pub fn random_move(
    ctx: &Context,
    visits: &[Visit],
    rng: &mut Pcg64,
) -> Option<(Vec<Visit>, usize)> {
    let n = visits.len();
    if n == 0 {
        return None;
    }
    let mut v = visits.to_vec();
    match rng.gen_range(0..4) {
        // Roll change.
        0 => {
            let i = rng.gen_range(0..n);
            let k = ctx.rolls(v[i].target).len();
            if k < 2 {
                return None;
            }
            let mut r = rng.gen_range(0..k - 1) as u8;
            if r >= v[i].roll {
                r += 1;
            }
            v[i].roll = r;
            Some((v, i))
        }
        // Move a run of one to three.
        1 if n >= 2 => {
            let len = rng.gen_range(1..=3.min(n - 1));
            let from = rng.gen_range(0..=n - len);
            let run: Vec<Visit> = v.drain(from..from + len).collect();
            let to = rng.gen_range(0..=v.len());
            if to == from {
                return None;
            }
            v.splice(to..to, run);
            Some((v, from.min(to)))
        }
        // Swap two.
        2 if n >= 2 => {
            let i = rng.gen_range(0..n);
            let j = rng.gen_range(0..n);
            if i == j {
                return None;
            }
            v.swap(i, j);
            Some((v, i.min(j)))
        }
        // Reverse a run.
        3 if n >= 3 => {
            let i = rng.gen_range(0..n - 1);
            let j = rng.gen_range(i + 1..n.min(i + 30));
            v[i..=j].reverse();
            Some((v, i))
        }
        _ => None,
    }
}

/// One to `depth` random moves in a row: the new sequence and the first position changed.
pub fn random_chain(
    ctx: &Context,
    visits: &[Visit],
    depth: usize,
    rng: &mut Pcg64,
) -> Option<(Vec<Visit>, usize)> {
    let k = rng.gen_range(1..=depth.max(1));
    let mut cur: Option<(Vec<Visit>, usize)> = None;
    for _ in 0..k {
        let base = cur.as_ref().map_or(visits, |c| c.0.as_slice());
        if let Some((next, at)) = random_move(ctx, base, rng) {
            let first = cur.as_ref().map_or(at, |c| c.1.min(at));
            cur = Some((next, first));
        }
    }
    cur
}

/// Every sequence one move from `visits`: each visit moved to every other position, every
/// pair swapped, every other roll of each visit. With the first position each changes.
pub fn neighbourhood(ctx: &Context, visits: &[Visit]) -> Vec<(Vec<Visit>, usize)> {
    let n = visits.len();
    let mut out = Vec::new();
    for i in 0..n {
        for r in 0..ctx.rolls(visits[i].target).len() as u8 {
            if r != visits[i].roll {
                let mut v = visits.to_vec();
                v[i].roll = r;
                out.push((v, i));
            }
        }
    }
    for i in 0..n {
        for j in 0..n {
            if j != i && j + 1 != i {
                let mut v = visits.to_vec();
                let x = v.remove(i);
                let to = if j > i { j } else { j + 1 };
                v.insert(to.min(v.len()), x);
                out.push((v, i.min(to)));
            }
        }
    }
    for i in 0..n {
        for j in i + 2..n {
            let mut v = visits.to_vec();
            v.swap(i, j);
            out.push((v, i));
        }
    }
    out
}

/// Scalarised objective: `elapsed / time_scale + weight × propellant / kg_scale`.
#[derive(Clone, Copy, Debug)]
pub struct Scalar {
    /// Seconds that count as one unit.
    pub time_scale: f64,
    /// Kilograms that count as one unit.
    pub kg_scale: f64,
    /// Weight of propellant against time.
    pub weight: f64,
}

impl Scalar {
    /// The scalarised value of a point.
    pub fn value(&self, p: Point) -> f64 {
        p.0 / self.time_scale + self.weight * p.1 / self.kg_scale
    }
}

/// Iterated local search on a scalarised objective, one candidate a step: a chain of one or
/// two random moves from the current sequence, kept when not worse; after a stall, a kick of
/// up to four moves from the best. Every candidate that plays goes to `seen`. Run it with
/// [`wend::run_steps`] (see [`improve`]).
pub struct Descent<'c, 'a, 's> {
    ctx: &'c Context<'a>,
    rep: Replayer<'c, 'a>,
    cur: (Vec<Visit>, Point),
    best: (Vec<Visit>, Point),
    objective: Scalar,
    stall: u64,
    stall_limit: u64,
    seen: &'s mut dyn FnMut(&[Visit], Point),
}

impl<'c, 'a, 's> Descent<'c, 'a, 's> {
    /// A descent from `start`; `None` when `start` does not play.
    pub fn new(
        ctx: &'c Context<'a>,
        start: &[Visit],
        objective: Scalar,
        seen: &'s mut dyn FnMut(&[Visit], Point),
    ) -> Option<Descent<'c, 'a, 's>> {
        let mut rep = Replayer::new(ctx, start);
        let p0 = rep.score(start, start.len())?;
        seen(start, p0);
        Some(Descent {
            ctx,
            rep,
            cur: (start.to_vec(), p0),
            best: (start.to_vec(), p0),
            objective,
            stall: 0,
            stall_limit: 50 + 4 * start.len() as u64,
            seen,
        })
    }

    /// The best sequence so far and its point.
    pub fn best(&self) -> &(Vec<Visit>, Point) {
        &self.best
    }

    /// Plays made.
    pub fn plays(&self) -> u64 {
        self.rep.plays
    }

    fn take(&mut self, cand: Vec<Visit>, p: Point) {
        let v = |q: Point| self.objective.value(q);
        if v(p) < v(self.best.1) {
            self.best = (cand.clone(), p);
        }
        self.cur = (cand, p);
        self.rep.rebase(&self.cur.0);
    }
}

impl Step for Descent<'_, '_, '_> {
    fn step(&mut self, rng: &mut Pcg64, _should_stop: &mut dyn FnMut() -> bool) {
        let value = |q: Point| self.objective.value(q);
        if self.stall > self.stall_limit {
            // A kick from the best: a few moves at once.
            self.stall = 0;
            if let Some((kicked, _)) = random_chain(self.ctx, &self.best.0, 4, rng) {
                match self.rep.score(&kicked, 0) {
                    Some(p) => {
                        (self.seen)(&kicked, p);
                        self.take(kicked, p);
                    }
                    None => {
                        let best = self.best.clone();
                        self.take(best.0, best.1);
                    }
                }
            }
            return;
        }
        let Some((cand, at)) = random_chain(self.ctx, &self.cur.0, 2, rng) else {
            self.stall += 1;
            return;
        };
        match self.rep.score(&cand, at) {
            Some(p) if value(p) <= value(self.cur.1) => {
                (self.seen)(&cand, p);
                self.stall = if value(p) < value(self.cur.1) {
                    0
                } else {
                    self.stall + 1
                };
                self.take(cand, p);
            }
            Some(p) => {
                (self.seen)(&cand, p);
                self.stall += 1;
            }
            None => self.stall += 1,
        }
    }
}

/// [`Descent`] from `start` under [`wend::run_steps`] with `limits` (one step a candidate):
/// the best sequence and its point, and how the loop ended; `None` when `start` does not play.
pub fn improve(
    ctx: &Context,
    start: &[Visit],
    objective: Scalar,
    limits: &StepLimits,
    seen: &mut dyn FnMut(&[Visit], Point),
) -> Option<((Vec<Visit>, Point), Stepped)> {
    let mut d = Descent::new(ctx, start, objective, seen)?;
    let out = run_steps(limits, &mut d, &mut |_| {});
    Some((d.best.clone(), out))
}
