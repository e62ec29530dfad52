//! The "check, draw, write" step, SVG text from a drawing, and the placeholder picture.

use crate::style::{AXIS_TITLE_PX, FONT, TITLE_PX};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::path::Path;

/// A drawing area of an SVG picture, in pixels.
pub type Area<'b> = DrawingArea<SVGBackend<'b>, Shift>;
/// What drawing gives.
pub type DrawResult<T> = Result<T, DrawingAreaErrorKind<std::io::Error>>;

/// Why a picture could not be written.
#[derive(Debug, thiserror::Error)]
pub enum DrawError {
    /// The input cannot be drawn faithfully (a value that is not finite or out of its range,
    /// lengths that do not match, an index past the end). Nothing was written.
    #[error("cannot draw {path}: {message}")]
    Input {
        /// The file that was to be written.
        path: String,
        /// What is wrong with the input, naming the offending item.
        message: String,
    },
    /// The picture could not be drawn or the file could not be written.
    #[error("cannot write {path}: {message}")]
    Write {
        /// The file that was to be written.
        path: String,
        /// What went wrong.
        message: String,
    },
}

/// Checks what is to be drawn (`check`: a message when it cannot be drawn faithfully), draws
/// it (`draw`: the file's text) and writes the text to `path`, naming the file in every error.
/// Nothing is written when the check or the drawing fails.
pub fn write_checked<T, E: std::fmt::Display>(
    path: &Path,
    check: impl FnOnce() -> Result<T, String>,
    draw: impl FnOnce(T) -> Result<String, E>,
) -> Result<(), DrawError> {
    let name = path.display().to_string();
    let checked = check().map_err(|message| DrawError::Input {
        path: name.clone(),
        message,
    })?;
    let text = draw(checked).map_err(|e| DrawError::Write {
        path: name.clone(),
        message: format!("drawing failed: {e}"),
    })?;
    std::fs::write(path, text).map_err(|e| DrawError::Write {
        path: name,
        message: e.to_string(),
    })
}

/// An SVG picture of `size` pixels as text: a white page, then what `draw` puts on it.
pub fn render_svg(
    size: (u32, u32),
    draw: impl FnOnce(&Area) -> DrawResult<()>,
) -> DrawResult<String> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        root.fill(&WHITE)?;
        draw(&root)?;
        root.present()?;
    }
    Ok(svg)
}

/// A titled page saying why the chart is missing: a file that is there but empty-handed says
/// more than one that is absent.
pub fn placeholder(root: &Area, title: &str, message: &str) -> DrawResult<()> {
    let body = root.titled(title, (FONT, TITLE_PX).into_font())?;
    let (w, h) = body.dim_in_pixel();
    let style = TextStyle::from((FONT, AXIS_TITLE_PX).into_font())
        .color(&RGBColor(80, 80, 80))
        .pos(Pos::new(HPos::Center, VPos::Center));
    body.draw(&Text::new(
        message.to_string(),
        (w as i32 / 2, h as i32 / 2),
        style,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn write_checked_writes_only_what_passed_and_names_the_file() {
        let dir = std::env::temp_dir().join(format!("wend-charts-test-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("a.svg");
        let _ = std::fs::remove_file(&path);

        let refused = write_checked(
            &path,
            || Err::<(), _>("bad value".into()),
            |()| Ok::<_, std::fmt::Error>("x".to_string()),
        );
        match refused {
            Err(e @ DrawError::Input { .. }) => {
                assert!(e.to_string().starts_with("cannot draw "));
                assert!(e.to_string().ends_with("a.svg: bad value"), "{e}");
            }
            other => panic!("{other:?}"),
        }
        assert!(!path.exists());

        let failed = write_checked(&path, || Ok(2), |_| Err::<String, _>("no ink"));
        assert!(matches!(failed, Err(DrawError::Write { ref message, .. })
            if message == "drawing failed: no ink"));
        assert!(!path.exists());

        write_checked(
            &path,
            || Ok(3),
            |k| Ok::<_, std::fmt::Error>(format!("{k}")),
        )
        .unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "3");

        let nowhere = dir.join("missing").join("a.svg");
        let e = write_checked(
            &nowhere,
            || Ok(()),
            |()| Ok::<_, std::fmt::Error>(String::new()),
        );
        assert!(matches!(e, Err(DrawError::Write { .. })));
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn a_placeholder_says_why() {
        let svg = render_svg((300, 200), |root| placeholder(root, "Gaps", "No <data>.")).unwrap();
        assert!(svg.starts_with("<svg"));
        assert!(svg.contains("width=\"300\"") && svg.contains("height=\"200\""));
        assert!(svg.contains("Gaps"));
        assert!(svg.contains("No &lt;data&gt;."));
        assert!(svg.trim_end().ends_with("</svg>"));
    }
}
