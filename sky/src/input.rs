//! Helpers of the readers (targets CSV, observatory profile TOML): UTF-8 text and line numbers.
//!
//! The sky adapter's input side: the targets CSV, the observatory profile TOML, and the
//! built-in demo observatory.
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools. Spacecraft operations can damage hardware; nothing read or made here is
//! a command to a spacecraft.
//!
//! - [`parse_targets`] / [`read_targets`]: a CSV of targets into [`crate::Target`]s,
//!   instrument names resolved against a [`crate::Profile`]. Format in [`targets`].
//! - [`parse_profile`] / [`read_profile`]: an observatory profile in TOML into a
//!   [`crate::Profile`], every value checked. Keys and units in [`profile`].
//! - [`demo_profile`] / [`demo_targets`]: the invented "Lantern Deep-Sky Observatory" and its
//!   72 invented targets, embedded in the binary (`instances/sky/demo-profile.toml`,
//!   `instances/sky/demo-targets.csv`).
//!
//! Errors name the file, the place (line; row for targets, key for profiles) and the problem,
//! in the `file:line: ...` form of the TSPLIB reader. Nothing a user feeds in makes these
//! functions panic.

use std::path::Path;

/// A file's text, refusing bytes that are not UTF-8 (ids and names must not change silently).
/// On failure: (line, message), line 0 when the file could not be read at all.
pub(crate) fn read_utf8(path: &Path) -> Result<String, (usize, String)> {
    let bytes = std::fs::read(path).map_err(|e| (0, format!("cannot read the file: {e}")))?;
    String::from_utf8(bytes).map_err(|e| {
        let at = e.utf8_error().valid_up_to();
        let line = 1 + e.as_bytes()[..at].iter().filter(|&&b| b == b'\n').count();
        (
            line,
            format!("the file is not UTF-8 text (bad byte at offset {at})"),
        )
    })
}

/// 1-based line of a byte offset in `text` (offsets past the end count as the last line).
pub(crate) fn line_of(text: &str, offset: usize) -> usize {
    let end = offset.min(text.len());
    1 + text.as_bytes()[..end]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
}

/// `:LINE` for an error message, or nothing for line 0 (an error not tied to one line).
pub(crate) fn line_part(line: usize) -> String {
    if line == 0 {
        String::new()
    } else {
        format!(":{line}")
    }
}
