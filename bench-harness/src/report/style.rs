//! The report's part of the look: the size of its charts, their legend panel, and drawing into
//! a file with the report's errors. Fonts, colours, labels and legends are the shared chart kit
//! (`wend_charts`), the same as in the sky pictures.

use super::ReportError;
use std::path::Path;
use wend_charts::legend::{draw_legend, legend_width, Key, LegendEntry, LegendLayout};
use wend_charts::style::REPORT_LEGEND_PX;
use wend_charts::{placeholder, render_svg, Area, DrawResult};

/// Canvas of the two charts without their legend panel, in pixels.
pub(crate) const CHART_SIZE: (u32, u32) = (900, 600);

/// Draws an SVG picture of `size` pixels with `draw` and writes it to `path`.
pub(crate) fn write_svg(
    path: &Path,
    size: (u32, u32),
    draw: impl FnOnce(&Area) -> DrawResult<()>,
) -> Result<(), ReportError> {
    let svg = render_svg(size, draw).map_err(|e| ReportError::Plot {
        path: path.to_owned(),
        message: e.to_string(),
    })?;
    std::fs::write(path, svg).map_err(|source| ReportError::Io {
        path: path.to_owned(),
        source,
    })
}

/// Writes a chart of [`CHART_SIZE`] to `path`, with `legend` in a panel on its right as wide as
/// its labels need; or, when `missing` gives a title and a message, a page saying why there is
/// no chart.
pub(crate) fn write_chart(
    path: &Path,
    legend: &[LegendEntry<Key>],
    missing: Option<(&str, &str)>,
    draw: impl FnOnce(&Area) -> DrawResult<()>,
) -> Result<(), ReportError> {
    let (w, h) = CHART_SIZE;
    if let Some((title, message)) = missing {
        return write_svg(path, (w, h), |root| placeholder(root, title, message));
    }
    let layout = LegendLayout::spaced(REPORT_LEGEND_PX);
    let lw = legend_width(legend, layout);
    write_svg(path, (w + lw, h), |root| {
        let (plot, side) = root.split_horizontally(w);
        draw(&plot)?;
        draw_legend(&side, 70, legend, layout)
    })
}
