//! A time axis in UTC for the momentum chart and the timeline: ticks at round UTC times
//! (every 10 minutes up to every 4 weeks), labelled with the day ("3 Mar") at midnight and the
//! time of day ("06:00") otherwise, and the axis title naming the span's first and last day.

use crate::Epoch;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use time::OffsetDateTime;
use wend_charts::style::{AXIS_TITLE_PX, FONT, INK, TICK_PX};
use wend_charts::text::{text_width, PAD};
use wend_charts::{number_label, Area, DrawResult, LinearChart};

/// A labelled tick: seconds since the axis' start and its label.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Tick {
    pub(crate) s: f64,
    pub(crate) label: String,
}

const DAY: f64 = 86_400.0;
const HOUR: f64 = 3_600.0;

/// Tick steps, seconds.
const STEPS: [f64; 14] = [
    600.0,
    1_800.0,
    HOUR,
    2.0 * HOUR,
    3.0 * HOUR,
    6.0 * HOUR,
    12.0 * HOUR,
    DAY,
    2.0 * DAY,
    5.0 * DAY,
    7.0 * DAY,
    14.0 * DAY,
    28.0 * DAY,
    56.0 * DAY,
];

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// UTC date and time of Unix time `unix_s` (rounded to the second), or `None` out of range.
fn utc(unix_s: f64) -> Option<OffsetDateTime> {
    let s = unix_s.round();
    if !(s.is_finite() && s.abs() < 1e14) {
        return None;
    }
    OffsetDateTime::from_unix_timestamp(s as i64).ok()
}

/// "2027-03-01 06:30" for Unix time `unix_s` ("?" out of range).
pub(crate) fn utc_minutes(unix_s: f64) -> String {
    utc(unix_s).map_or("?".into(), |t| {
        format!(
            "{:04}-{:02}-{:02} {:02}:{:02}",
            t.year(),
            u8::from(t.month()),
            t.day(),
            t.hour(),
            t.minute()
        )
    })
}

/// The label of a tick at Unix time `unix_s`: "3 Mar" at midnight, "06:00" otherwise.
fn tick_label(unix_s: f64) -> String {
    match utc(unix_s) {
        None => "?".into(),
        Some(t) if t.hour() == 0 && t.minute() == 0 => {
            format!(
                "{} {}",
                t.day(),
                MONTHS[usize::from(u8::from(t.month())) - 1]
            )
        }
        Some(t) => format!("{:02}:{:02}", t.hour(), t.minute()),
    }
}

/// The axis title for an axis from `start` over `span_s` seconds.
pub(crate) fn axis_title(start: Epoch, span_s: f64) -> String {
    let t0 = start.to_unix_seconds();
    format!(
        "time, UTC ({} to {})",
        utc_minutes(t0),
        utc_minutes(t0 + span_s)
    )
}

/// Ticks for an axis from `start` over `span_s` seconds (finite, above 0), at most
/// `max_ticks` of them (at least 2 are allowed): the smallest step that keeps within the
/// limit, at round UTC times: from the first midnight for steps of a day or more, at multiples of the
/// step otherwise.
pub(crate) fn ticks(start: Epoch, span_s: f64, max_ticks: usize) -> Vec<Tick> {
    let t0 = start.to_unix_seconds();
    if !(t0.is_finite() && span_s.is_finite() && span_s > 0.0) {
        return Vec::new();
    }
    let max_ticks = max_ticks.max(2) as f64;
    let step = STEPS
        .iter()
        .copied()
        .find(|&step| span_s / step <= max_ticks)
        .unwrap_or_else(|| {
            // Longer than the table: whole multiples of the longest step.
            let last = STEPS[STEPS.len() - 1];
            (span_s / max_ticks / last).ceil() * last
        });
    // Day steps and longer count from the first midnight; shorter ones from round times.
    let unit = if step >= DAY { DAY } else { step };
    // A millisecond of slack: the epochs' Julian dates round.
    let first = ((t0 - 1e-3) / unit).ceil() * unit;
    let mut out = Vec::new();
    let mut k = 0.0;
    loop {
        let unix = first + k * step;
        if unix > t0 + span_s + 1e-6 || out.len() > 1000 {
            break;
        }
        out.push(Tick {
            s: unix - t0,
            label: tick_label(unix),
        });
        k += 1.0;
    }
    out
}

/// Draws the axes of a chart over `span_s` seconds from `start` (x, in UTC) and `y` (low,
/// high) into `area` and gives the chart to draw on: the x axis with [`ticks`] that fit its
/// width and [`axis_title`]; the y axis titled `y_desc` with number labels when `y_numbers`,
/// or bare (the caller labels it) with `y_label_w` pixels of room on the left.
pub(crate) fn utc_chart<'a, 'b>(
    area: &'a Area<'b>,
    start: Epoch,
    span_s: f64,
    y: (f64, f64),
    y_desc: &str,
    y_numbers: bool,
    y_label_w: u32,
) -> DrawResult<LinearChart<'a, 'b>> {
    let mut chart = ChartBuilder::on(area)
        .margin_left(PAD as u32)
        .margin_right(PAD as u32)
        .margin_top(8)
        .margin_bottom(4)
        .x_label_area_size(56)
        .y_label_area_size(y_label_w)
        .build_cartesian_2d(0.0..span_s, y.0..y.1)?;
    let y_span = y.1 - y.0;
    let y_format = |v: &f64| number_label(*v, y_span);
    let mut mesh = chart.configure_mesh();
    mesh.disable_x_mesh()
        .x_labels(0)
        .axis_desc_style((FONT, AXIS_TITLE_PX))
        .label_style((FONT, TICK_PX))
        .y_label_formatter(&y_format)
        .bold_line_style(RGBColor(235, 235, 235))
        .max_light_lines(0);
    if y_numbers {
        mesh.y_desc(y_desc);
    } else {
        mesh.disable_y_mesh().y_labels(0);
    }
    mesh.draw()?;

    let plot = chart.plotting_area();
    let (plot_w, _) = plot.dim_in_pixel();
    let widest = text_width("00:00", TICK_PX, 0.6).max(text_width("30 Sep", TICK_PX, 0.6));
    let max_ticks = (f64::from(plot_w) / (widest + 28.0)).floor() as usize;
    let y_end = plot.get_pixel_range().1.end;
    let base = area.get_base_pixel();
    let label = TextStyle::from((FONT, TICK_PX).into_font())
        .color(&INK)
        .pos(Pos::new(HPos::Center, VPos::Top));
    for tick in ticks(start, span_s, max_ticks) {
        let (x, _) = plot.map_coordinate(&(tick.s, y.0));
        plot.draw(&PathElement::new(
            vec![(tick.s, y.0), (tick.s, y.1)],
            RGBColor(235, 235, 235).stroke_width(1),
        ))?;
        let (ax, ay) = (x - base.0, y_end - base.1);
        area.draw(&PathElement::new(
            vec![(ax, ay), (ax, ay + 5)],
            INK.stroke_width(1),
        ))?;
        area.draw(&Text::new(tick.label, (ax, ay + 8), label.clone()))?;
    }
    // The axis title, under the tick labels.
    let (w, _) = area.dim_in_pixel();
    let x_range = plot.get_pixel_range().0;
    let title_x = ((x_range.start + x_range.end) / 2 - base.0).clamp(0, w as i32);
    area.draw(&Text::new(
        axis_title(start, span_s),
        (title_x, y_end - base.1 + 30),
        TextStyle::from((FONT, AXIS_TITLE_PX).into_font()).pos(Pos::new(HPos::Center, VPos::Top)),
    ))?;
    Ok(chart)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// 2027-03-01T00:00:00Z.
    fn march_first() -> Epoch {
        Epoch::from_unix_seconds(1_803_859_200.0).unwrap()
    }

    #[test]
    fn a_thirty_day_axis_gets_weekly_or_five_day_ticks() {
        let t = ticks(march_first(), 30.0 * DAY, 8);
        // 30 days in at most 8 ticks: 5-day steps (2-day steps would give 16).
        let labels: Vec<&str> = t.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels[0], "1 Mar");
        assert!(t.iter().all(|t| t.s >= -1e-2 && t.s <= 30.0 * DAY + 1e-2));
        assert!(t.len() <= 8, "{labels:?}");
        assert!(labels.iter().all(|l| l.ends_with("Mar")), "{labels:?}");
    }

    #[test]
    fn a_short_axis_gets_times_of_day_and_the_date_at_midnight() {
        // 06:30 to 18:30 on 2 March, 12 h: hourly ticks would be 12, two-hourly 6.
        let start = Epoch::from_unix_seconds(1_803_859_200.0 + DAY + 6.5 * HOUR).unwrap();
        let t = ticks(start, 12.0 * HOUR, 7);
        let labels: Vec<&str> = t.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(
            labels,
            ["08:00", "10:00", "12:00", "14:00", "16:00", "18:00"]
        );
        assert!((t[0].s - 1.5 * HOUR).abs() < 1e-3);
        // Over midnight the date shows.
        let start = Epoch::from_unix_seconds(1_803_859_200.0 - 3.0 * HOUR).unwrap();
        let t = ticks(start, 6.0 * HOUR, 4);
        let labels: Vec<&str> = t.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["22:00", "1 Mar", "02:00"]);
        assert_eq!(
            axis_title(start, 6.0 * HOUR),
            "time, UTC (2027-02-28 21:00 to 2027-03-01 03:00)"
        );
    }

    #[test]
    fn odd_spans_give_no_ticks_or_few() {
        assert!(ticks(march_first(), 0.0, 5).is_empty());
        assert!(ticks(march_first(), f64::NAN, 5).is_empty());
        // Ten years in at most 5 ticks: steps beyond the table, still few.
        let t = ticks(march_first(), 3650.0 * DAY, 5);
        assert!(!t.is_empty() && t.len() <= 6, "{}", t.len());
    }
}
