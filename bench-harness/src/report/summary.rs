//! The tables of `summary.md`, as data and as Markdown.

use super::gap_percent;
use crate::record::{RunKey, RunRecord};
use std::collections::{BTreeMap, BTreeSet};
use std::fmt::Write as _;
use std::path::PathBuf;

/// Instance size by node count; results are compared within a class because gaps and times
/// change with size far more than between methods.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum SizeClass {
    /// Fewer than 100 nodes.
    Under100,
    /// 100 to 999 nodes.
    Hundreds,
    /// 1000 to 9999 nodes.
    Thousands,
    /// 10000 nodes or more.
    TenThousandsUp,
}

impl SizeClass {
    /// The class of an instance with `nodes` nodes.
    pub fn of(nodes: usize) -> Self {
        match nodes {
            0..=99 => SizeClass::Under100,
            100..=999 => SizeClass::Hundreds,
            1000..=9999 => SizeClass::Thousands,
            _ => SizeClass::TenThousandsUp,
        }
    }

    /// How the class is shown in tables.
    pub fn label(self) -> &'static str {
        match self {
            SizeClass::Under100 => "< 100",
            SizeClass::Hundreds => "100–999",
            SizeClass::Thousands => "1000–9999",
            SizeClass::TenThousandsUp => "≥ 10000",
        }
    }
}

/// Figures of a group of runs. Gap figures cover only the runs with a known (positive)
/// optimum and a length (a run under constraints that found no feasible order has none); times
/// cover every run.
#[derive(Clone, Debug, PartialEq)]
pub struct GroupStats {
    /// Runs in the group.
    pub runs: usize,
    /// Runs whose result meets every constraint (all of them for problems without constraints).
    pub feasible: usize,
    /// Runs whose instance has a known optimum: the ones the gap figures are over.
    pub with_optimum: usize,
    /// Mean gap to the optimum, percent.
    pub mean_gap: Option<f64>,
    /// Median gap, percent; the mean of the middle two for an even count.
    pub median_gap: Option<f64>,
    /// Largest gap, percent.
    pub worst_gap: Option<f64>,
    /// Runs whose length equals the optimum.
    pub at_optimum: usize,
    /// Mean wall-clock seconds.
    pub mean_seconds: Option<f64>,
    /// Mean seconds until the best tour was found.
    pub mean_time_to_best: Option<f64>,
}

impl GroupStats {
    /// The figures of `runs`.
    pub fn of<'a>(runs: impl IntoIterator<Item = &'a RunRecord>) -> Self {
        let runs: Vec<&RunRecord> = runs.into_iter().collect();
        let mut gaps: Vec<f64> = runs.iter().filter_map(|r| gap_percent(r)).collect();
        gaps.sort_by(f64::total_cmp);
        let median_gap = match gaps.len() {
            0 => None,
            n if n % 2 == 1 => Some(gaps[n / 2]),
            n => Some((gaps[n / 2 - 1] + gaps[n / 2]) / 2.0),
        };
        GroupStats {
            runs: runs.len(),
            feasible: runs.iter().filter(|r| r.feasible).count(),
            with_optimum: gaps.len(),
            mean_gap: mean(gaps.iter().copied()),
            median_gap,
            worst_gap: gaps.last().copied(),
            at_optimum: runs
                .iter()
                .filter(|r| gap_percent(r).is_some() && r.optimum == r.length)
                .count(),
            mean_seconds: mean(runs.iter().map(|r| r.seconds)),
            mean_time_to_best: mean(runs.iter().map(|r| r.time_to_best)),
        }
    }

    /// Share of the runs with a known optimum that reached it, from 0 to 1.
    pub fn share_at_optimum(&self) -> Option<f64> {
        (self.with_optimum > 0).then(|| self.at_optimum as f64 / self.with_optimum as f64)
    }

    /// Share of the runs whose result is feasible, from 0 to 1: the feasibility rate.
    pub fn feasible_rate(&self) -> Option<f64> {
        (self.runs > 0).then(|| self.feasible as f64 / self.runs as f64)
    }
}

/// Mean of the finite values; None when there are none.
fn mean(values: impl Iterator<Item = f64>) -> Option<f64> {
    let (sum, n) = values
        .filter(|v| v.is_finite())
        .fold((0.0, 0usize), |(s, n), v| (s + v, n + 1));
    (n > 0).then(|| sum / n as f64)
}

/// One row of the table by method and size class.
#[derive(Clone, Debug, PartialEq)]
pub struct GroupRow {
    /// Kind of problem ([`RunRecord::kind`]): `TSP`, `ATSP`, or either with a kind of path or
    /// with constraints.
    pub problem_type: String,
    /// Whether the runs are of problems with constraints ([`RunRecord::is_constrained`]).
    pub constrained: bool,
    /// Method.
    pub method: String,
    /// Size class.
    pub size: SizeClass,
    /// Figures of the group.
    pub stats: GroupStats,
}

/// Groups by kind of problem, method and size class; rows come TSP first, then ATSP, then any
/// other type by name (closed tours before paths), and within a kind by method and size.
pub fn method_size_table(runs: &[RunRecord]) -> Vec<GroupRow> {
    let mut groups: BTreeMap<(u8, String, &str, SizeClass), Vec<&RunRecord>> = BTreeMap::new();
    for r in runs {
        let key = (
            type_rank(&r.problem_type),
            r.kind(),
            r.method.as_str(),
            SizeClass::of(r.nodes),
        );
        groups.entry(key).or_default().push(r);
    }
    groups
        .into_iter()
        .map(|((_, t, m, size), rs)| GroupRow {
            problem_type: t,
            constrained: rs[0].is_constrained(),
            method: m.to_string(),
            size,
            stats: GroupStats::of(rs),
        })
        .collect()
}

fn type_rank(t: &str) -> u8 {
    match t {
        "TSP" => 0,
        "ATSP" => 1,
        _ => 2,
    }
}

/// Results of one method on one instance under one time limit, over its seeds. Lengths are
/// over the runs that have one (under constraints, the feasible runs).
#[derive(Clone, Debug, PartialEq)]
pub struct MethodResult {
    /// Runs (seeds).
    pub runs: usize,
    /// Runs with a feasible result (all of them without constraints).
    pub feasible: usize,
    /// Shortest length; None when no run has one.
    pub best_length: Option<i64>,
    /// Mean length; None when no run has one.
    pub mean_length: Option<f64>,
    /// Gap of the shortest length, percent.
    pub best_gap: Option<f64>,
    /// Mean gap, percent.
    pub mean_gap: Option<f64>,
}

/// One row of the table by instance: one instance under one time limit.
#[derive(Clone, Debug, PartialEq)]
pub struct InstanceRow {
    /// Problem ([`RunRecord::problem`]): the instance name, with the kind of path for paths.
    pub instance: String,
    /// Kind of problem ([`RunRecord::kind`]).
    pub problem_type: String,
    /// Nodes.
    pub nodes: usize,
    /// Known optimum, from the first run that lists one.
    pub optimum: Option<i64>,
    /// Time limit, seconds.
    pub time_limit: f64,
    /// Results by method name.
    pub methods: BTreeMap<String, MethodResult>,
}

/// Rows by problem (instance, closed or kind of path) and then time limit: a run under 1 s and
/// one under 60 s are not seeds of the same experiment, so they are not averaged together.
pub fn instance_table(runs: &[RunRecord]) -> Vec<InstanceRow> {
    let mut groups: BTreeMap<(String, u64), Vec<&RunRecord>> = BTreeMap::new();
    for r in runs {
        groups
            .entry((r.problem(), r.key().time_limit_ms))
            .or_default()
            .push(r);
    }
    groups
        .into_values()
        .map(|rs| {
            let first = rs[0];
            let mut by_method: BTreeMap<&str, Vec<&RunRecord>> = BTreeMap::new();
            for r in &rs {
                by_method.entry(&r.method).or_default().push(r);
            }
            let methods = by_method
                .into_iter()
                .map(|(m, rs)| {
                    let best = rs
                        .iter()
                        .filter(|r| r.length.is_some())
                        .min_by_key(|r| r.length)
                        .copied();
                    let result = MethodResult {
                        runs: rs.len(),
                        feasible: rs.iter().filter(|r| r.feasible).count(),
                        best_length: best.and_then(|r| r.length),
                        mean_length: mean(rs.iter().filter_map(|r| r.length.map(|l| l as f64))),
                        best_gap: best.and_then(gap_percent),
                        mean_gap: mean(rs.iter().filter_map(|r| gap_percent(r))),
                    };
                    (m.to_string(), result)
                })
                .collect();
            InstanceRow {
                instance: first.problem(),
                problem_type: first.kind(),
                nodes: rs.iter().map(|r| r.nodes).max().unwrap_or(0),
                optimum: rs.iter().find_map(|r| r.optimum),
                time_limit: first.time_limit,
                methods,
            }
        })
        .collect()
}

/// Problems in the results themselves: tours below a known optimum, runs that appear twice, and
/// instances listed with different optima.
pub fn find_errors(runs: &[RunRecord]) -> Vec<String> {
    let mut errors = Vec::new();
    for r in runs.iter().filter(|r| r.beats_optimum()) {
        errors.push(format!(
            "{}: length {} is below the optimum {}: a distance bug or a wrong optimum",
            describe(&r.key()),
            r.length.unwrap_or_default(),
            r.optimum.unwrap_or_default()
        ));
    }
    let mut seen: BTreeMap<RunKey, usize> = BTreeMap::new();
    for r in runs {
        *seen.entry(r.key()).or_default() += 1;
    }
    for (key, n) in seen.iter().filter(|(_, n)| **n > 1) {
        errors.push(format!(
            "{}: duplicate run, present {n} times",
            describe(key)
        ));
    }
    let mut optima: BTreeMap<String, BTreeSet<i64>> = BTreeMap::new();
    for r in runs {
        if let Some(o) = r.optimum {
            optima.entry(r.problem()).or_default().insert(o);
        }
    }
    for (inst, os) in optima.iter().filter(|(_, os)| os.len() > 1) {
        let list: Vec<String> = os.iter().map(i64::to_string).collect();
        errors.push(format!(
            "{inst}: runs disagree on the optimum ({})",
            list.join(", ")
        ));
    }
    errors
}

fn describe(k: &RunKey) -> String {
    format!(
        "{}{} / {} / seed {} / {} s",
        k.instance,
        if k.ends == "closed" {
            String::new()
        } else {
            format!(" [{} path]", k.ends)
        },
        k.method,
        k.seed,
        k.time_limit_ms as f64 / 1000.0
    )
}

/// The figures `summary.md` links to, relative to it.
pub(crate) struct Figures {
    pub(crate) anytime: PathBuf,
    pub(crate) profile: PathBuf,
    /// (instance, drawing) pairs.
    pub(crate) tours: Vec<(String, PathBuf)>,
}

/// The whole of `summary.md`.
pub(crate) fn render(runs: &[RunRecord], errors: &[String], figures: &Figures) -> String {
    let mut md = String::new();
    header(&mut md, runs);
    if !errors.is_empty() {
        let _ = writeln!(md, "## Errors\n");
        let _ = writeln!(
            md,
            "These results are not to be trusted until each line below is explained.\n"
        );
        for e in errors {
            let _ = writeln!(md, "- {}", esc(e));
        }
        md.push('\n');
    }
    let rows = method_size_table(runs);
    by_method_and_size(&mut md, &rows);
    constrained(&mut md, &rows);
    by_instance(&mut md, runs);
    figure_list(&mut md, figures);
    md
}

fn header(md: &mut String, runs: &[RunRecord]) {
    let count = |f: fn(&RunRecord) -> &str| {
        let mut m: BTreeMap<&str, usize> = BTreeMap::new();
        for r in runs {
            *m.entry(f(r)).or_default() += 1;
        }
        m
    };
    let methods = count(|r| &r.method);
    let instances = count(|r| &r.instance);
    let mut limits: Vec<f64> = runs.iter().map(|r| r.time_limit).collect();
    limits.sort_by(f64::total_cmp);
    limits.dedup();
    let limits: Vec<String> = limits.iter().map(|l| format!("{} s", num(*l))).collect();
    let _ = writeln!(md, "# Benchmark report\n");
    let _ = writeln!(
        md,
        "{} runs of {} on {}; time limits: {}.\n",
        runs.len(),
        plural(methods.len(), "method"),
        plural(instances.len(), "instance"),
        limits.join(", ")
    );
    let _ = writeln!(md, "| seen | value (runs) |\n|---|---|");
    type Field = fn(&RunRecord) -> &str;
    let seen: [(&str, Field); 3] = [
        ("version", |r| &r.version),
        ("commit", |r| &r.commit),
        ("machine", |r| &r.machine),
    ];
    for (what, f) in seen {
        for (value, n) in count(f) {
            let _ = writeln!(md, "| {what} | {} ({n}) |", esc(value));
        }
    }
    md.push('\n');
}

fn by_method_and_size(md: &mut String, rows: &[GroupRow]) {
    let rows: Vec<&GroupRow> = rows.iter().filter(|r| !r.constrained).collect();
    if rows.is_empty() {
        return;
    }
    let _ = writeln!(md, "## By method and size\n");
    let _ = writeln!(
        md,
        "Gap: percent above the known optimum. Runs on instances without a known optimum count \
         in *runs* but not in the gap columns or *at optimum*; *with opt.* says how many runs \
         those columns are over. Times are means over all runs of the group.\n"
    );
    group_tables(md, &rows, false);
}

/// The runs on problems with constraints: the same figures as by method and size, with the
/// feasibility rate.
fn constrained(md: &mut String, rows: &[GroupRow]) {
    let rows: Vec<&GroupRow> = rows.iter().filter(|r| r.constrained).collect();
    if rows.is_empty() {
        return;
    }
    let _ = writeln!(md, "## Problems with constraints\n");
    let _ = writeln!(
        md,
        "Runs on problems with time windows or other constraints, by size (the default method \
         runs them as the constrained search). \
         *feasible*: the share of runs whose result meets every constraint (the feasibility \
         rate). A run that found no feasible order has no length: it counts in *runs* and \
         against *feasible*, never in the gap columns or *at optimum*, which are over the \
         feasible runs with a known optimum (*with opt.*); the length is the travel cost. \
         Times are means over all runs of the group.\n"
    );
    group_tables(md, &rows, true);
}

/// `a% (k/n)`, or a dash without a share.
fn share(share: Option<f64>, k: usize, n: usize) -> String {
    match share {
        Some(share) => format!("{:.0}% ({k}/{n})", 100.0 * share),
        None => "–".into(),
    }
}

/// One table per kind of problem; with `feasible`, a column of the feasibility rate after
/// *runs*.
fn group_tables(md: &mut String, rows: &[&GroupRow], feasible: bool) {
    for (i, row) in rows.iter().enumerate() {
        if i == 0 || rows[i - 1].problem_type != row.problem_type {
            let _ = writeln!(md, "### {}\n", esc(&row.problem_type));
            let (head, rule) = if feasible {
                (" feasible |", "--:|")
            } else {
                ("", "")
            };
            let _ = writeln!(
                md,
                "| method | nodes | runs |{head} with opt. | mean gap % | median gap % \
                 | worst gap % | at optimum | mean s | mean s to best |"
            );
            let _ = writeln!(md, "|---|---|--:|{rule}--:|--:|--:|--:|--:|--:|--:|");
        }
        let s = &row.stats;
        let at_opt = share(s.share_at_optimum(), s.at_optimum, s.with_optimum);
        let feasible_cell = if feasible {
            format!(" {} |", share(s.feasible_rate(), s.feasible, s.runs))
        } else {
            String::new()
        };
        // Under constraints the default method runs as the constrained search.
        let method = if feasible {
            "constrained search".to_string()
        } else {
            esc(&row.method)
        };
        let _ = writeln!(
            md,
            "| {} | {} | {} |{feasible_cell} {} | {} | {} | {} | {} | {} | {} |",
            method,
            row.size.label(),
            s.runs,
            s.with_optimum,
            fixed(s.mean_gap, 2),
            fixed(s.median_gap, 2),
            fixed(s.worst_gap, 2),
            at_opt,
            fixed(s.mean_seconds, 3),
            fixed(s.mean_time_to_best, 3),
        );
        let last_of_type = match rows.get(i + 1) {
            Some(n) => n.problem_type != row.problem_type,
            None => true,
        };
        if last_of_type {
            md.push('\n');
        }
    }
}

fn by_instance(md: &mut String, runs: &[RunRecord]) {
    let rows = instance_table(runs);
    let methods: BTreeSet<&str> = runs.iter().map(|r| r.method.as_str()).collect();
    let _ = writeln!(md, "## By instance\n");
    let _ = writeln!(
        md,
        "Per method, over its seeds: *best* is the shortest tour, *mean* the mean length; the gap \
         to the optimum follows in brackets when the optimum is known. – : the method has no run \
         there. Under constraints both are over the feasible runs, and *mean* ends with the \
         number of feasible runs (`3/5 feasible`) when some run found no feasible order; \
         *infeasible*: no run did.\n"
    );
    let mut head = String::from("| instance | type | nodes | optimum | limit s |");
    let mut rule = String::from("|---|---|--:|--:|--:|");
    for m in &methods {
        let m = esc(m);
        let _ = write!(head, " {m} best | {m} mean |");
        rule.push_str("--:|--:|");
    }
    let _ = writeln!(md, "{head}\n{rule}");
    for row in &rows {
        let _ = write!(
            md,
            "| {} | {} | {} | {} | {} |",
            esc(&row.instance),
            esc(&row.problem_type),
            row.nodes,
            row.optimum.map_or("–".into(), |o| o.to_string()),
            num(row.time_limit),
        );
        for m in &methods {
            match row.methods.get(*m) {
                Some(r) => match r.best_length {
                    Some(best) => {
                        let feasible = if r.feasible < r.runs {
                            format!(" {}/{} feasible", r.feasible, r.runs)
                        } else {
                            String::new()
                        };
                        let _ = write!(
                            md,
                            " {best}{} | {}{}{feasible} |",
                            bracket_gap(r.best_gap),
                            fixed(r.mean_length, 1),
                            bracket_gap(r.mean_gap),
                        );
                    }
                    None => md.push_str(" infeasible | infeasible |"),
                },
                None => md.push_str(" – | – |"),
            }
        }
        md.push('\n');
    }
    md.push('\n');
}

fn figure_list(md: &mut String, f: &Figures) {
    let _ = writeln!(md, "## Figures\n");
    let _ = writeln!(
        md,
        "- [Mean gap over time]({}): for each method, the mean over its runs of the best gap \
         found so far. A run counts from its first tour to the end of its time limit, so the \
         curve can rise where a run that was slow to start joins the mean.",
        link(&f.anytime)
    );
    let _ = writeln!(
        md,
        "- [Performance profile]({}): the share of problems (instance, seed, time limit run by \
         every method) on which a method's tour is within a factor τ of the shortest any method \
         found.",
        link(&f.profile)
    );
    if !f.tours.is_empty() {
        let list: Vec<String> = f
            .tours
            .iter()
            .map(|(inst, p)| format!("[{}]({})", esc(inst), link(p)))
            .collect();
        let _ = writeln!(
            md,
            "- Best tour of each instance with coordinates: {}",
            list.join(", ")
        );
    }
}

/// A relative path as a Markdown link target: forward slashes, spaces escaped.
fn link(p: &std::path::Path) -> String {
    p.to_string_lossy().replace('\\', "/").replace(' ', "%20")
}

fn plural(n: usize, word: &str) -> String {
    if n == 1 {
        format!("1 {word}")
    } else {
        format!("{n} {word}s")
    }
}

/// Fixed decimals, or a dash for a value that is missing or not a number (never `NaN`).
fn fixed(v: Option<f64>, decimals: usize) -> String {
    match v {
        Some(v) if v.is_finite() => format!("{v:.decimals$}"),
        _ => "–".into(),
    }
}

fn bracket_gap(g: Option<f64>) -> String {
    match g {
        Some(g) if g.is_finite() => format!(" ({g:.2}%)"),
        _ => String::new(),
    }
}

/// Shortest form of a finite number (`1`, `0.5`); a dash otherwise.
fn num(v: f64) -> String {
    if v.is_finite() {
        v.to_string()
    } else {
        "–".into()
    }
}

/// Text safe inside a Markdown table cell or list item: names come from files and command lines
/// and may hold anything.
fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '\\' | '|' | '*' | '_' | '`' | '<' | '>' | '[' | ']' => {
                out.push('\\');
                out.push(c);
            }
            '\n' | '\r' => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::record::sample;

    fn close(a: Option<f64>, b: f64) -> bool {
        a.is_some_and(|a| (a - b).abs() < 1e-9)
    }

    /// Five runs of one method on 100-node instances with optimum 1000:
    /// lengths 1000, 1000, 1010, 1030, 1100 give gaps 0, 0, 1, 3, 10 %;
    /// a sixth run without an optimum counts as a run only.
    fn five_plus_one() -> Vec<RunRecord> {
        let mut runs: Vec<RunRecord> = [1000, 1000, 1010, 1030, 1100]
            .iter()
            .enumerate()
            .map(|(i, &l)| sample("a", "two-opt", i as u64, l))
            .collect();
        for (r, s) in runs.iter_mut().zip([1.0, 2.0, 3.0, 4.0, 5.0]) {
            r.seconds = s;
            r.time_to_best = s / 2.0;
        }
        let mut no_opt = sample("b", "two-opt", 0, 5000);
        no_opt.optimum = None;
        no_opt.gap_percent = None;
        no_opt.seconds = 9.0;
        no_opt.time_to_best = 3.0;
        runs.push(no_opt);
        runs
    }

    #[test]
    fn group_figures_match_hand_computation() {
        let runs = five_plus_one();
        let rows = method_size_table(&runs);
        assert_eq!(rows.len(), 1);
        let s = &rows[0].stats;
        assert_eq!(rows[0].size, SizeClass::Hundreds);
        assert_eq!(s.runs, 6);
        assert_eq!(s.with_optimum, 5);
        // (0 + 0 + 1 + 3 + 10) / 5 = 2.8
        assert!(close(s.mean_gap, 2.8), "{s:?}");
        assert!(close(s.median_gap, 1.0), "{s:?}");
        assert!(close(s.worst_gap, 10.0), "{s:?}");
        assert_eq!(s.at_optimum, 2);
        assert!(close(s.share_at_optimum(), 0.4));
        // (1 + 2 + 3 + 4 + 5 + 9) / 6 = 4; (0.5 + 1 + 1.5 + 2 + 2.5 + 3) / 6 = 1.75
        assert!(close(s.mean_seconds, 4.0), "{s:?}");
        assert!(close(s.mean_time_to_best, 1.75), "{s:?}");
    }

    #[test]
    fn median_of_an_even_count_is_the_mean_of_the_middle_two() {
        let runs: Vec<RunRecord> = [1000, 1020, 1040, 1200]
            .iter()
            .map(|&l| sample("a", "m", l as u64, l))
            .collect();
        let s = GroupStats::of(&runs);
        // gaps 0, 2, 4, 20: median (2 + 4) / 2 = 3, mean 26 / 4 = 6.5
        assert!(close(s.median_gap, 3.0));
        assert!(close(s.mean_gap, 6.5));
        assert_eq!(s.at_optimum, 1);
    }

    #[test]
    fn groups_split_by_type_method_and_size() {
        let mut runs = vec![
            sample("a", "x", 1, 1000),
            sample("b", "x", 1, 1000),
            sample("c", "x", 1, 1000),
            sample("d", "y", 1, 1000),
        ];
        runs[1].nodes = 99;
        runs[2].problem_type = "ATSP".into();
        runs[2].nodes = 10000;
        let rows = method_size_table(&runs);
        let keys: Vec<(String, String, &str, usize)> = rows
            .iter()
            .map(|r| {
                (
                    r.problem_type.clone(),
                    r.method.clone(),
                    r.size.label(),
                    r.stats.runs,
                )
            })
            .collect();
        assert_eq!(
            keys,
            [
                ("TSP".into(), "x".into(), "< 100", 1),
                ("TSP".into(), "x".into(), "100–999", 1),
                ("TSP".into(), "y".into(), "100–999", 1),
                ("ATSP".into(), "x".into(), "≥ 10000", 1),
            ]
        );
        assert_eq!(SizeClass::of(999), SizeClass::Hundreds);
        assert_eq!(SizeClass::of(1000), SizeClass::Thousands);
        assert_eq!(SizeClass::of(9999), SizeClass::Thousands);
    }

    #[test]
    fn instance_rows_give_best_and_mean_per_method() {
        let runs = vec![
            sample("a", "x", 1, 1000),
            sample("a", "x", 2, 1030),
            sample("a", "y", 1, 1050),
        ];
        let rows = instance_table(&runs);
        assert_eq!(rows.len(), 1);
        let x = &rows[0].methods["x"];
        assert_eq!((x.runs, x.best_length), (2, Some(1000)));
        assert!(close(x.mean_length, 1015.0));
        assert!(close(x.best_gap, 0.0));
        assert!(close(x.mean_gap, 1.5));
        assert!(close(rows[0].methods["y"].mean_gap, 5.0));
    }

    #[test]
    fn a_tour_below_the_optimum_is_an_error() {
        let runs = vec![sample("a", "x", 1, 1000), sample("kroZ", "y", 7, 990)];
        let errors = find_errors(&runs);
        assert_eq!(errors.len(), 1, "{errors:?}");
        assert!(errors[0].contains("kroZ / y / seed 7"), "{errors:?}");
        assert!(errors[0].contains("990") && errors[0].contains("1000"));
        let figures = Figures {
            anytime: "g.svg".into(),
            profile: "p.svg".into(),
            tours: vec![],
        };
        let md = render(&runs, &errors, &figures);
        let section = md.split("## Errors").nth(1).expect("an Errors section");
        let section = section.split("\n## ").next().unwrap_or_default();
        assert!(section.contains("kroZ / y / seed 7"), "{md}");
        // Errors come before the tables.
        assert!(md.find("## Errors") < md.find("## By method"));
    }

    #[test]
    fn duplicates_and_disagreeing_optima_are_errors() {
        let mut runs = vec![
            sample("a", "x", 1, 1000),
            sample("a", "x", 1, 1001),
            sample("a", "x", 2, 1001),
        ];
        runs[2].optimum = Some(999);
        let errors = find_errors(&runs);
        assert_eq!(errors.len(), 2, "{errors:?}");
        assert!(errors[0].contains("duplicate") && errors[0].contains("2 times"));
        assert!(errors[1].contains("999, 1000"));
    }

    #[test]
    fn no_errors_section_without_errors_and_no_nan() {
        let mut runs = five_plus_one();
        runs[0].seconds = f64::NAN;
        let figures = Figures {
            anytime: "g.svg".into(),
            profile: "p.svg".into(),
            tours: vec![],
        };
        let md = render(&runs, &find_errors(&runs), &figures);
        assert!(!md.contains("## Errors"), "{md}");
        assert!(!md.contains("NaN"), "{md}");
        assert!(md.contains("6 runs of 1 method on 2 instances"), "{md}");
        assert!(md.contains("| two-opt | 100–999 | 6 | 5 | 2.80 | 1.00 | 10.00 | 40% (2/5) |"));
    }

    #[test]
    fn names_cannot_break_tables() {
        assert_eq!(esc("a|b_c\nd"), "a\\|b\\_c d");
    }
}
