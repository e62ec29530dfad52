//! The timeline picture of a plan: observations, slews, waits and momentum dumps as bars in
//! four lanes on a UTC time axis ([`write_timeline`]).
//!
//! Made to stay readable over a long plan with many items: an item narrower than
//! [`MIN_BAR_PX`] is drawn that wide, bars of one lane that would touch on screen are drawn as
//! one, and a label is written only inside its own bar and only when it fits there.
//!
//! Like the other pictures it carries the caller's caution sentence at the bottom: the
//! picture illustrates a planning proposal and is no command to a spacecraft.

use crate::place::Placer;
use crate::utc_axis::utc_chart;
use crate::Epoch;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use wend_charts::legend::{Key, LegendEntry};
use wend_charts::style::{AXIS_TITLE_PX, BLUE, FONT, INK, ORANGE, PURPLE, SOFT_TEXT, TICK_PX};
use wend_charts::text::{boxed_text, text_width};
use wend_charts::{write_checked, DrawResult};

pub use wend_charts::DrawError;

/// What an item of the timeline is; each kind has its lane, top to bottom in this order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TimelineKind {
    /// An observation (the dwell on a target).
    Observe,
    /// A slew, with its settling, between two targets.
    Slew,
    /// Waiting (for a target to enter the allowed band, for a window to open).
    Wait,
    /// A momentum dump.
    Dump,
}

impl TimelineKind {
    const ALL: [TimelineKind; 4] = [
        TimelineKind::Observe,
        TimelineKind::Slew,
        TimelineKind::Wait,
        TimelineKind::Dump,
    ];

    fn lane(self) -> usize {
        match self {
            TimelineKind::Observe => 0,
            TimelineKind::Slew => 1,
            TimelineKind::Wait => 2,
            TimelineKind::Dump => 3,
        }
    }

    fn lane_name(self) -> &'static str {
        match self {
            TimelineKind::Observe => "observing",
            TimelineKind::Slew => "slewing",
            TimelineKind::Wait => "waiting",
            TimelineKind::Dump => "dumps",
        }
    }

    fn colour(self) -> RGBColor {
        match self {
            TimelineKind::Observe => BLUE,
            TimelineKind::Slew => ORANGE,
            TimelineKind::Wait => RGBColor(150, 150, 150),
            TimelineKind::Dump => PURPLE,
        }
    }

    /// Text colour on a bar of this kind.
    fn text_colour(self) -> RGBColor {
        match self {
            TimelineKind::Observe => WHITE,
            _ => INK,
        }
    }

    fn noun(self, n: usize) -> String {
        let (one, many) = match self {
            TimelineKind::Observe => ("observation", "observations"),
            TimelineKind::Slew => ("slew", "slews"),
            TimelineKind::Wait => ("wait", "waits"),
            TimelineKind::Dump => ("momentum dump", "momentum dumps"),
        };
        format!("{n} {}", if n == 1 { one } else { many })
    }
}

/// One bar of the timeline.
#[derive(Clone, Debug, PartialEq)]
pub struct TimelineItem {
    /// What it is (its lane and colour).
    pub kind: TimelineKind,
    /// Start, seconds since [`Timeline::start`] (finite, at least 0).
    pub start_s: f64,
    /// End, seconds since [`Timeline::start`] (finite, at least `start_s`, at most the span
    /// from `start` to `end`).
    pub end_s: f64,
    /// Text written inside the bar when it fits there (a target's name, say); plain text.
    pub label: Option<String>,
}

/// What the timeline shows.
pub struct Timeline<'a> {
    /// Title drawn at the top (wrapped when it is longer than the picture is wide).
    pub title: &'a str,
    /// Start of the time axis (the plan's start).
    pub start: Epoch,
    /// End of the time axis (the plan's end), at or after `start`; when equal, the axis spans
    /// one hour.
    pub end: Epoch,
    /// The bars, in any order. May be empty (an empty plan).
    pub items: &'a [TimelineItem],
    /// A caution sentence that appears at the bottom of the picture (wrapped to its width).
    /// Must not be blank.
    pub caution: &'a str,
}

/// Narrowest bar drawn, pixels.
pub const MIN_BAR_PX: f64 = 2.0;

/// Width of the picture, of its legend panel, and height of the band holding the chart and
/// its legend, pixels.
const TIMELINE_W: u32 = 1100;
const TIMELINE_LEGEND_W: u32 = 250;
const TIMELINE_MIDDLE_H: u32 = 340;
/// Room left of the lanes for their names, pixels.
const LANE_NAME_W: u32 = 100;
/// Font size of the labels inside bars (library size).
const BAR_LABEL_PX: u32 = 15;
/// Seconds the axis spans when `start` and `end` are equal.
const EMPTY_SPAN_S: f64 = 3600.0;

/// Draws `timeline` as an SVG file at `path` (1100 px wide, about 560 tall; taller when the
/// title or the caution needs more lines): four lanes (observing, slewing, waiting, dumps)
/// on a UTC axis, a legend with each kind's count and total time, the title and the caution.
///
/// # Errors
/// [`DrawError::Input`] when the timeline cannot be drawn faithfully (a time that is not
/// finite, an item that ends before it starts or lies outside the span, `end` before
/// `start`, a blank caution; the message names the item); [`DrawError::Write`] when the file
/// cannot be written.
pub fn write_timeline(path: &std::path::Path, timeline: &Timeline) -> Result<(), DrawError> {
    write_checked(path, || check(timeline), |span| render(timeline, span))
}

/// Why `t` cannot be drawn, or the span of its axis in seconds.
fn check(t: &Timeline) -> Result<f64, String> {
    let (a, b) = (t.start.to_unix_seconds(), t.end.to_unix_seconds());
    if !(a.is_finite() && b.is_finite()) {
        return Err("the timeline's start or end is not a finite time".into());
    }
    let span = b - a;
    if span < -1e-3 {
        return Err(format!(
            "the timeline ends {} s before it starts",
            fmt_s(-span)
        ));
    }
    let span = if span <= 0.0 { EMPTY_SPAN_S } else { span };
    // Rounding of the epochs' Julian dates: a millisecond is far below a pixel.
    let slack = 1e-3 + 1e-9 * span;
    for (i, item) in t.items.iter().enumerate() {
        let (s, e) = (item.start_s, item.end_s);
        if !(s.is_finite() && e.is_finite()) {
            return Err(format!(
                "item {i} ({:?}) runs from {s} s to {e} s, not finite times",
                item.kind
            ));
        }
        if e < s {
            return Err(format!(
                "item {i} ({:?}) ends at {} s, before it starts at {} s",
                item.kind,
                fmt_s(e),
                fmt_s(s)
            ));
        }
        if s < -slack || e > span + slack {
            return Err(format!(
                "item {i} ({:?}) runs from {} s to {} s, outside the timeline's span of {} s",
                item.kind,
                fmt_s(s),
                fmt_s(e),
                fmt_s(span)
            ));
        }
    }
    if t.caution.trim().is_empty() {
        return Err("the caution text is blank; the picture must carry it".into());
    }
    Ok(span)
}

fn fmt_s(s: f64) -> String {
    format!("{s:.3}")
}

/// Hours with one decimal.
fn fmt_h(s: f64) -> String {
    format!("{:.1} h", s / 3600.0)
}

/// The legend: each kind with its count and total time, then a note.
fn legend(t: &Timeline) -> Vec<LegendEntry<Key>> {
    let mut entries: Vec<LegendEntry<Key>> = TimelineKind::ALL
        .iter()
        .map(|&kind| {
            let of_kind = t.items.iter().filter(|i| i.kind == kind);
            let (n, total) = of_kind.fold((0, 0.0), |(n, s), i| (n + 1, s + (i.end_s - i.start_s)));
            LegendEntry {
                key: Key::Swatch(kind.colour().to_rgba()),
                label: if n == 0 {
                    format!("{}: none", kind.lane_name())
                } else {
                    format!("{}, {} in all", kind.noun(n), fmt_h(total))
                },
            }
        })
        .collect();
    entries.push(LegendEntry {
        key: Key::Note,
        label: format!(
            "Short items are drawn {MIN_BAR_PX} px wide; names are written where they fit."
        ),
    });
    entries
}

/// Pixel spans `[x0, x1)` of one lane, each at least [`MIN_BAR_PX`] wide, merged where they
/// touch or overlap, in order.
fn merged_spans(mut spans: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
    for s in &mut spans {
        let w = s.1 - s.0;
        if w < MIN_BAR_PX {
            let c = (s.0 + s.1) / 2.0;
            *s = (c - MIN_BAR_PX / 2.0, c + MIN_BAR_PX / 2.0);
        }
    }
    spans.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<(f64, f64)> = Vec::new();
    for s in spans {
        match out.last_mut() {
            Some(last) if s.0 <= last.1 + 0.5 => last.1 = last.1.max(s.1),
            _ => out.push(s),
        }
    }
    out
}

/// The picture as SVG text.
fn render(t: &Timeline, span: f64) -> DrawResult<String> {
    let legend = legend(t);
    let frame = crate::draw::framed(
        TIMELINE_W,
        TIMELINE_LEGEND_W,
        TIMELINE_MIDDLE_H,
        t.title,
        t.caution,
        &legend,
    );
    let lanes = TimelineKind::ALL.len() as f64;
    frame.render(|root, area| {
        let chart = utc_chart(area, t.start, span, (0.0, lanes), "", false, LANE_NAME_W)?;
        let plot = chart.plotting_area();
        let px = |s: f64| f64::from(plot.map_coordinate(&(s, 0.0)).0);
        let (xr, yr) = plot.get_pixel_range();
        let lane_h = f64::from(yr.end - yr.start) / lanes;
        // Lane k's top in pixels (lane 0 at the top).
        let lane_top = |k: usize| f64::from(yr.start) + k as f64 * lane_h;
        let bar = (lane_h * 0.7).clamp(6.0, 40.0);

        // Lane names, left of the lanes, and faint rules between lanes.
        let name_style = TextStyle::from((FONT, TICK_PX).into_font())
            .color(&INK)
            .pos(Pos::new(HPos::Right, VPos::Center));
        for kind in TimelineKind::ALL {
            let k = kind.lane();
            let y = lane_top(k) + lane_h / 2.0;
            root.draw(&Text::new(
                kind.lane_name(),
                (xr.start - 8, y as i32),
                name_style.clone(),
            ))?;
            if k > 0 {
                let y = lane_top(k) as i32;
                root.draw(&PathElement::new(
                    vec![(xr.start, y), (xr.end, y)],
                    RGBColor(225, 225, 225).stroke_width(1),
                ))?;
            }
        }

        // The bars, a lane at a time.
        for kind in TimelineKind::ALL {
            let spans: Vec<(f64, f64)> = t
                .items
                .iter()
                .filter(|i| i.kind == kind)
                .map(|i| (px(i.start_s), px(i.end_s)))
                .collect();
            let y0 = lane_top(kind.lane()) + (lane_h - bar) / 2.0;
            for (x0, x1) in merged_spans(spans) {
                root.draw(&Rectangle::new(
                    [
                        (x0.round() as i32, y0 as i32),
                        (x1.round() as i32, (y0 + bar) as i32),
                    ],
                    kind.colour().filled(),
                ))?;
            }
        }

        // Labels inside their own bars, where they fit.
        let mut placer = Placer::new((
            f64::from(xr.start),
            f64::from(yr.start),
            f64::from(xr.end),
            f64::from(yr.end),
        ));
        for item in t.items {
            let Some(label) = item.label.as_deref().filter(|l| !l.trim().is_empty()) else {
                continue;
            };
            let (x0, x1) = (px(item.start_s), px(item.end_s));
            let w = text_width(label, BAR_LABEL_PX, 0.62) + 6.0;
            if w > x1 - x0 {
                continue;
            }
            let y0 = lane_top(item.kind.lane()) + (lane_h - bar) / 2.0;
            let c = (x0 + x1) / 2.0;
            let rect = (c - w / 2.0, y0, c + w / 2.0, y0 + bar);
            if placer.place([rect]).is_some() {
                let colour = item.kind.text_colour();
                let style = TextStyle::from((FONT, BAR_LABEL_PX).into_font())
                    .color(&colour)
                    .pos(Pos::new(HPos::Center, VPos::Center));
                root.draw(&Text::new(
                    label.to_string(),
                    (c as i32, (y0 + bar / 2.0) as i32),
                    style,
                ))?;
            }
        }

        if t.items.is_empty() {
            let style = TextStyle::from((FONT, AXIS_TITLE_PX).into_font())
                .color(&SOFT_TEXT)
                .pos(Pos::new(HPos::Center, VPos::Center));
            let text = "nothing scheduled (empty plan)";
            let w = text_width(text, AXIS_TITLE_PX, 0.62) + 8.0;
            let (cx, cy) = (
                f64::from(xr.start + xr.end) / 2.0,
                f64::from(yr.start + yr.end) / 2.0,
            );
            boxed_text(
                root,
                [
                    ((cx - w / 2.0) as i32, (cy - 14.0) as i32),
                    ((cx + w / 2.0) as i32, (cy + 14.0) as i32),
                ],
                text.to_string(),
                (cx as i32, cy as i32),
                &style,
            )?;
        }
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const CAUTION: &str = "Planning aid only: confirm with the operations team's tools.";

    /// 2027-03-01T00:00:00Z.
    fn start() -> Epoch {
        Epoch::from_unix_seconds(1_803_859_200.0).unwrap()
    }

    fn item(kind: TimelineKind, start_s: f64, end_s: f64, label: Option<&str>) -> TimelineItem {
        TimelineItem {
            kind,
            start_s,
            end_s,
            label: label.map(str::to_string),
        }
    }

    /// The texts of an SVG, in order.
    fn texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                t.split_once('>').map(|(_, rest)| {
                    rest.split("</text>")
                        .next()
                        .unwrap_or("")
                        .trim()
                        .to_string()
                })
            })
            .collect()
    }

    #[test]
    fn spans_get_a_minimum_width_and_merge_where_they_touch() {
        let s = merged_spans(vec![(10.0, 10.2), (50.0, 80.0), (11.5, 11.6), (79.0, 90.0)]);
        // 10.1 ± 1 and 11.55 ± 1 touch (11.1 ≥ 10.55 − 0.5): one bar 9.1..12.55.
        assert_eq!(s.len(), 2);
        assert!(
            (s[0].0 - 9.1).abs() < 1e-9 && (s[0].1 - 12.55).abs() < 1e-9,
            "{s:?}"
        );
        assert_eq!(s[1], (50.0, 90.0));
        assert!(merged_spans(Vec::new()).is_empty());
    }

    #[test]
    fn a_thirty_day_plan_with_hundreds_of_items() {
        let dir = tempfile::tempdir().unwrap();
        let mut items = Vec::new();
        // 300 cycles of slew (5 min), observation (1 h 50 min), with a wait every tenth and
        // a dump every 25th: 300 × 2.4 h = 30 days.
        let mut t = 0.0;
        for k in 0..300 {
            if k % 10 == 0 {
                items.push(item(TimelineKind::Wait, t, t + 1200.0, None));
            }
            if k % 25 == 0 {
                items.push(item(TimelineKind::Dump, t + 1200.0, t + 1500.0, None));
            }
            items.push(item(TimelineKind::Slew, t + 1500.0, t + 1800.0, None));
            let name = format!("T{k:03}");
            items.push(item(
                TimelineKind::Observe,
                t + 1800.0,
                t + 8640.0,
                Some(&name),
            ));
            t += 8640.0;
        }
        let end = Epoch {
            jd: start().jd + 30.0,
        };
        let title = "Plan <A> & timeline";
        let tl = Timeline {
            title,
            start: start(),
            end,
            items: &items,
            caution: CAUTION,
        };
        let path = dir.path().join("timeline.svg");
        write_timeline(&path, &tl).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        crate::draw::text_fits(&svg);
        assert!(svg.contains("Plan &lt;A&gt; &amp; timeline"));
        assert!(svg.contains("Planning aid only: confirm with the operations team&apos;s tools."));
        let labels: Vec<String> = legend(&tl).into_iter().map(|e| e.label).collect();
        let texts = texts(&svg);
        // A 1.9-hour bar is about 3 px wide over 30 days: no name fits.
        assert!(!texts.iter().any(|t| t.starts_with("T0")), "{texts:?}");
        // Counts and totals, by hand: 300 × 6840 s = 570.0 h observing; 30 waits of 20 min
        // = 10.0 h; 12 dumps of 5 min = 1.0 h; 300 slews of 5 min = 25.0 h.
        for want in [
            "300 observations, 570.0 h in all",
            "300 slews, 25.0 h in all",
            "30 waits, 10.0 h in all",
            "12 momentum dumps, 1.0 h in all",
        ] {
            assert!(
                labels.iter().any(|t| t == want),
                "missing {want:?} in {labels:?}"
            );
        }
        // Lanes and a date axis from 1 March.
        for want in ["observing", "slewing", "waiting", "dumps", "1 Mar"] {
            assert!(texts.iter().any(|t| t == want), "missing {want}");
        }
        assert!(texts
            .iter()
            .any(|t| t == "time, UTC (2027-03-01 00:00 to 2027-03-31 00:00)"));
        // Neighbouring thin bars merge: far fewer rectangles than items.
        let rects = svg.matches("<rect").count();
        assert!(rects < 400, "{rects} rectangles for {} items", items.len());
    }

    #[test]
    fn a_one_day_plan_writes_names_that_fit() {
        let dir = tempfile::tempdir().unwrap();
        let items = vec![
            item(TimelineKind::Slew, 0.0, 600.0, None),
            item(TimelineKind::Observe, 600.0, 30_000.0, Some("Wide field 7")),
            // Two minutes: no room for the name.
            item(TimelineKind::Observe, 30_600.0, 30_720.0, Some("Tiny")),
            item(TimelineKind::Dump, 30_000.0, 30_300.0, None),
        ];
        let tl = Timeline {
            title: "one day",
            start: start(),
            end: Epoch {
                jd: start().jd + 1.0,
            },
            items: &items,
            caution: CAUTION,
        };
        let path = dir.path().join("t.svg");
        write_timeline(&path, &tl).unwrap();
        let texts = texts(&std::fs::read_to_string(&path).unwrap());
        assert!(texts.iter().any(|t| t == "Wide field 7"));
        assert!(!texts.iter().any(|t| t == "Tiny"));
        // (30000 − 600 + 120) s = 29520 s = 8.2 h.
        let labels: Vec<String> = legend(&tl).into_iter().map(|e| e.label).collect();
        assert!(labels.iter().any(|t| t == "2 observations, 8.2 h in all"));
        assert!(labels.iter().any(|t| t == "waiting: none"));
    }

    #[test]
    fn odd_input_is_refused_or_drawn() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("t.svg");
        let day_end = Epoch {
            jd: start().jd + 1.0,
        };
        let go = |items: &[TimelineItem], end: Epoch, caution: &str| {
            write_timeline(
                &path,
                &Timeline {
                    title: "t",
                    start: start(),
                    end,
                    items,
                    caution,
                },
            )
        };
        let refused = |r: Result<(), DrawError>, needle: &str| match r {
            Err(DrawError::Input { message, .. }) => {
                assert!(message.contains(needle), "{message:?} lacks {needle:?}")
            }
            other => panic!("expected an input error, got {other:?}"),
        };
        let obs = |s, e| item(TimelineKind::Observe, s, e, None);
        refused(go(&[obs(f64::NAN, 1.0)], day_end, CAUTION), "item 0");
        refused(
            go(&[obs(0.0, 1.0), obs(5.0, 4.0)], day_end, CAUTION),
            "item 1",
        );
        refused(go(&[obs(0.0, 90_000.0)], day_end, CAUTION), "outside");
        refused(go(&[obs(-10.0, 5.0)], day_end, CAUTION), "outside");
        refused(
            go(
                &[],
                Epoch {
                    jd: start().jd - 1.0,
                },
                CAUTION,
            ),
            "before it starts",
        );
        refused(go(&[], day_end, " "), "caution");
        assert!(!path.exists());
        // An empty plan, and a plan that ends where it starts, are drawn.
        go(&[], start(), CAUTION).unwrap();
        let svg = std::fs::read_to_string(&path).unwrap();
        assert!(svg.contains("nothing scheduled (empty plan)"));
        go(&[obs(0.0, 0.0)], start(), CAUTION).unwrap();
    }
}
