//! The one error type of the TSPLIB reader.

/// A file that could not be read as TSPLIB 95, with the place the trouble was found.
///
/// Displayed as `{source_name}:{line}: {message}`, the form editors and terminals turn into a
/// link; when the trouble is not tied to one line (`line == 0`) the line part is left out.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{source_name}{}: {message}", line_part(*.line))]
pub struct TsplibError {
    /// The file name (or other label) the text came from.
    pub source_name: String,
    /// 1-based line number; 0 when the trouble is not tied to one line.
    pub line: usize,
    /// What was expected and what was found.
    pub message: String,
}

fn line_part(line: usize) -> String {
    if line == 0 {
        String::new()
    } else {
        format!(":{line}")
    }
}

impl TsplibError {
    /// An error at `line` of `source`.
    pub fn new(source: &str, line: usize, message: impl Into<String>) -> Self {
        TsplibError {
            source_name: source.to_string(),
            line,
            message: message.into(),
        }
    }
}

/// Binds the source name once so that parsers can write `ctx.err(line, "...")`.
#[derive(Clone, Copy)]
pub(crate) struct Ctx<'a> {
    pub source: &'a str,
}

impl Ctx<'_> {
    pub(crate) fn err(&self, line: usize, message: impl Into<String>) -> TsplibError {
        TsplibError::new(self.source, line, message)
    }
}
