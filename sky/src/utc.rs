//! UTC times in and out: ISO 8601 text to [`Epoch`] and back.

use crate::Epoch;
use time::format_description::well_known::{Iso8601, Rfc3339};
use time::OffsetDateTime;

/// Parses an ISO 8601 UTC time (`2027-03-01T12:30:00Z`, an explicit offset such as `+02:00`,
/// or a bare date `2027-03-01`, taken as 00:00 UTC) into an [`Epoch`] (TT, see
/// [`Epoch::from_unix_seconds`]). Times without an offset are refused: a plan must not shift
/// by the local time zone.
pub fn parse_utc(text: &str) -> Result<Epoch, String> {
    let t = text.trim();
    let full = if t.len() == 10 && t.as_bytes().get(4) == Some(&b'-') {
        format!("{t}T00:00:00Z")
    } else {
        t.to_string()
    };
    let when = OffsetDateTime::parse(&full, &Iso8601::DEFAULT).map_err(|e| {
        format!(
            "'{text}' is not an ISO 8601 time with a UTC offset (like 2027-03-01T00:00:00Z): {e}"
        )
    })?;
    let unix = when.unix_timestamp_nanos() as f64 / 1e9;
    Epoch::from_unix_seconds(unix).ok_or_else(|| format!("'{text}' is out of range"))
}

/// The epoch as ISO 8601 UTC to the nearest second (`2027-03-01T00:00:00Z`); `invalid` for a
/// time out of the calendar's range.
pub fn format_utc(epoch: Epoch) -> String {
    let secs = epoch.to_unix_seconds().round();
    if !(secs.is_finite() && secs.abs() < 1e15) {
        return "invalid".into();
    }
    OffsetDateTime::from_unix_timestamp(secs as i64)
        .ok()
        .and_then(|t| t.format(&Rfc3339).ok())
        .unwrap_or_else(|| "invalid".into())
}
