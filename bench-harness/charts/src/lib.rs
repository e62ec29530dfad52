//! The look shared by every picture of wend: the sweep report's charts, the sky map, the
//! momentum chart and the front picture.
//!
//! - [`style`]: fonts, font sizes, the colour-blind-safe colours and one colour per series.
//! - [`text`]: measuring, wrapping and fitting text; centred lines, the caution block, the
//!   framed picture (title, body, legend, caution) and labels on pale boxes.
//! - [`labels`]: tick and number labels, log-axis ticks.
//! - [`axes`]: a chart with two linear axes, titled and labelled.
//! - [`legend`]: legend entries, their keys, layout, width, height and drawing.
//! - [`svg`]: the "check, draw, write" step, SVG text from a drawing, the placeholder picture.
//!
//! Everything is drawn with `plotters` on its SVG backend; nothing here needs a font file.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::expect_used))]

pub mod axes;
pub mod frame;
pub mod labels;
pub mod legend;
pub mod style;
pub mod svg;
pub mod text;

pub use axes::{linear_chart, LinearChart};
pub use frame::Framed;
pub use labels::{log_ticks, number_label, seconds_label};
pub use legend::{
    draw_legend, legend_height, legend_lines, legend_width, Key, LegendEntry, LegendKey,
    LegendLayout,
};
pub use style::Colours;
pub use svg::{placeholder, render_svg, write_checked, Area, DrawError, DrawResult};
pub use text::{draw_caution, draw_centred, em, line_step, text_fits, wrap};
