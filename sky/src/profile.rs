//! Reading the observatory profile (TOML).
//!
//! **Caution.** Plans are planning proposals to be confirmed by the operations team's
//! validated tools.
//!
//! # Keys
//!
//! Units are in the key names. Top-level keys are required unless the second table below marks
//! them optional; unknown keys are refused anywhere. Integers are accepted where a number is expected. `instances/sky/demo-profile.toml`
//! is a commented example.
//!
//! | key                      | unit / range                                                              |
//! |--------------------------|---------------------------------------------------------------------------|
//! | `name`                   | text, not empty                                                           |
//! | `slew_rate_deg_s`        | degrees per second, > 0 (rate limit ω)                                    |
//! | `slew_accel_deg_s2`      | degrees per second squared, > 0 (acceleration limit a)                    |
//! | `thermal_warm_s_per_deg` | seconds per degree of elongation lost (toward the Sun), ≥ 0 (k_warm)      |
//! | `thermal_cool_s_per_deg` | seconds per degree of elongation gained (away from the Sun), ≥ 0 (k_cool) |
//! | `elongation_min_deg`     | degrees, 0 ≤ min < max                                                    |
//! | `elongation_max_deg`     | degrees, min < max ≤ 180                                                  |
//! | `shield_area_m2`         | square metres, > 0 (S)                                                    |
//! | `shield_normal`          | body-frame vector `[x, y, z]`, non-zero; scaled to unit length            |
//! | `specular_reflectivity`  | 0 to 1 (ρs)                                                               |
//! | `diffuse_reflectivity`   | 0 to 1 (ρd), with ρs + ρd ≤ 1                                             |
//! | `pressure_offset_m`      | body-frame vector `[x, y, z]`, metres (r_cp)                              |
//! | `wheel_limit_nms`        | newton metre seconds, > 0 (H_max)                                         |
//! | `wheel_margin`           | share of the wheel limit planning may use, in (0, 1]                      |
//! | `thruster_arm_m`         | metres, > 0 (L)                                                           |
//! | `thruster_isp_s`         | seconds, > 0 (Isp)                                                        |
//! | `dump_s`                 | seconds one momentum dump takes, ≥ 0                                      |
//!
//! Optional keys (top level, before the first `[[instrument]]` table), with their defaults:
//!
//! | key                  | unit / range                                                              | default   |
//! |----------------------|---------------------------------------------------------------------------|-----------|
//! | `roll_min_deg`       | least roll offset from the nominal roll, degrees, −180 ≤ min ≤ max        | 0         |
//! | `roll_max_deg`       | greatest roll offset, degrees, min ≤ max ≤ 180; with `roll_min_deg` only  | 0         |
//! | `roll_steps`         | whole number of candidate rolls tried across the range (ends included), 2 to 9 | 3     |
//! | `start_ra_deg`       | right ascension pointed at when the plan starts, ICRS, degrees in [0, 360) | none: already on the first target |
//! | `start_dec_deg`      | declination pointed at then, degrees in [−90, 90]; with `start_ra_deg` only | none    |
//! | `start_roll_deg`     | roll offset then, degrees in [−180, 180]; only with the two above         | 0         |
//! | `start_momentum_nms` | wheel momentum at the plan start, inertial frame, `[x, y, z]`, finite; its length below `wheel_limit_nms × wheel_margin` | `[0, 0, 0]` |
//!
//! `roll_min_deg` and `roll_max_deg` come together (both or neither), and so do `start_ra_deg`
//! and `start_dec_deg`.
//!
//! Instruments, at least one, in `[[instrument]]` tables (the first is the default for targets
//! that name none): `name` (unique, not empty, no leading or trailing spaces) and `settle_s`
//! (seconds, ≥ 0).
//!
//! Setup times in `[[setup]]` tables: `from`, `to` (instrument names, different) and `time_s`
//! (seconds, ≥ 0). Every ordered pair of two different instruments appears exactly once;
//! changing to the same instrument costs 0 s and is not listed.
//!
//! No single step of a plan may take longer than [`MAX_STEP_S`] (10⁹ s, about 32 years):
//! `settle_s`, `time_s` and `dump_s` are at most that, the thermal rates at most a 180th of it
//! per degree, and the slew limits at least what a 180° slew needs to fit in it
//! (`slew_rate_deg_s` ≥ 3.6·10⁻⁷, `slew_accel_deg_s2` ≥ 7.2·10⁻¹⁶).
//!
//! Errors name the file, the key and, where the TOML reader tells it, the line. Values quoted
//! in them have control characters escaped, so that every error is one line.

use std::collections::HashMap;
use std::ops::Range;
use std::path::Path;

use crate::{Instrument, Profile, StartPointing};
use serde::Deserialize;
use toml::Spanned;

use super::input::{escape_controls, shown};

/// The longest time any one step of a plan may take, seconds (about 32 years, far beyond the
/// longest horizon of ten years): settling, a setup change, a momentum dump, the thermal
/// settling after the largest change of solar elongation (180°) and the slowest slew (180°) must
/// each fit in it. Longer values can only be typing errors, and would make transition costs
/// overflow the planner's integer milliseconds (common practice: refuse what no plan can use).
pub const MAX_STEP_S: f64 = 1.0e9;

/// A profile that could not be read, with the place the trouble was found.
///
/// Displayed as `{source_name}:{line}: {key}: {message}`; the line part is left out when
/// `line == 0` and the key part when `key` is empty.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{source_name}{}: {}{message}", super::line_part(*.line), key_part(.key))]
pub struct ProfileError {
    /// The file name (or other label) the text came from.
    pub source_name: String,
    /// 1-based line in the file; 0 when the trouble is not tied to one line.
    pub line: usize,
    /// The key at fault: a top-level key, or `instrument.<key>` / `setup.<key>` inside those
    /// tables; empty when no single key is at fault (a syntax error).
    pub key: String,
    /// What was expected and what was found.
    pub message: String,
}

fn key_part(key: &str) -> String {
    if key.is_empty() {
        String::new()
    } else {
        format!("{key}: ")
    }
}

/// The file as written; every value keeps its place for error messages.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProfile {
    name: Spanned<String>,
    slew_rate_deg_s: Spanned<f64>,
    slew_accel_deg_s2: Spanned<f64>,
    thermal_warm_s_per_deg: Spanned<f64>,
    thermal_cool_s_per_deg: Spanned<f64>,
    elongation_min_deg: Spanned<f64>,
    elongation_max_deg: Spanned<f64>,
    shield_area_m2: Spanned<f64>,
    shield_normal: Spanned<[f64; 3]>,
    specular_reflectivity: Spanned<f64>,
    diffuse_reflectivity: Spanned<f64>,
    pressure_offset_m: Spanned<[f64; 3]>,
    wheel_limit_nms: Spanned<f64>,
    wheel_margin: Spanned<f64>,
    thruster_arm_m: Spanned<f64>,
    thruster_isp_s: Spanned<f64>,
    dump_s: Spanned<f64>,
    roll_min_deg: Option<Spanned<f64>>,
    roll_max_deg: Option<Spanned<f64>>,
    roll_steps: Option<Spanned<i64>>,
    start_ra_deg: Option<Spanned<f64>>,
    start_dec_deg: Option<Spanned<f64>>,
    start_roll_deg: Option<Spanned<f64>>,
    start_momentum_nms: Option<Spanned<[f64; 3]>>,
    instrument: Vec<RawInstrument>,
    #[serde(default)]
    setup: Vec<RawSetup>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawInstrument {
    name: Spanned<String>,
    settle_s: Spanned<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSetup {
    from: Spanned<String>,
    to: Spanned<String>,
    time_s: Spanned<f64>,
}

/// Reads an observatory profile file; see [`parse_profile`]. The path, as displayed, names
/// the file in errors. Bytes that are not UTF-8 are refused.
pub fn read_profile(path: &Path) -> Result<Profile, ProfileError> {
    let source = path.display().to_string();
    let text = super::read_utf8(path).map_err(|(line, message)| ProfileError {
        source_name: source.clone(),
        line,
        key: String::new(),
        message,
    })?;
    parse_profile(&text, &source)
}

/// Parses an observatory profile (keys in the [module documentation](self)) and checks every
/// value. `source` names the text in errors (usually the file name). A byte-order mark and
/// CRLF line endings are accepted. The shield normal is scaled to unit length.
pub fn parse_profile(text: &str, source: &str) -> Result<Profile, ProfileError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let ctx = Ctx { text, source };
    let raw: RawProfile = toml::from_str(text).map_err(|e| ctx.toml_error(&e))?;
    ctx.check(raw)
}

struct Ctx<'a> {
    text: &'a str,
    source: &'a str,
}

impl Ctx<'_> {
    fn err(
        &self,
        key: &str,
        span: Option<Range<usize>>,
        message: impl Into<String>,
    ) -> ProfileError {
        ProfileError {
            source_name: self.source.to_string(),
            line: span.map_or(0, |s| super::line_of(self.text, s.start)),
            key: escape_controls(key),
            // Names may hold line breaks (`"a\nb"`); an error stays one line.
            message: escape_controls(&message.into()),
        }
    }

    fn toml_error(&self, e: &toml::de::Error) -> ProfileError {
        // Some messages span several lines (a syntax error and what was expected).
        let message = e
            .message()
            .lines()
            .map(str::trim)
            .filter(|l| !l.is_empty())
            .collect::<Vec<_>>()
            .join("; ");
        let mut span = e.span();
        let key = if message.starts_with("unknown field") || message.starts_with("missing field") {
            // serde names the field: "unknown field `x`, expected ...", "missing field `x`".
            if message.starts_with("missing field") && span.as_ref().is_some_and(|s| s.start == 0) {
                // The whole document is the table that lacks the key: no line to name.
                span = None;
            }
            message.split('`').nth(1).unwrap_or("").to_string()
        } else {
            span.as_ref()
                .map(|s| self.key_on_line_of(s.start))
                .unwrap_or_default()
        };
        self.err(&key, span, message)
    }

    /// The bare key assigned on the line holding byte `offset` (`key = ...`), or "".
    fn key_on_line_of(&self, offset: usize) -> String {
        let at = offset.min(self.text.len());
        let start = self.text.as_bytes()[..at]
            .iter()
            .rposition(|&b| b == b'\n')
            .map_or(0, |i| i + 1);
        let line = self.text[start..].lines().next().unwrap_or("");
        match line.split_once('=') {
            Some((key, _)) => {
                let key = key.trim();
                let bare = !key.is_empty()
                    && key
                        .chars()
                        .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
                if bare {
                    key.to_string()
                } else {
                    String::new()
                }
            }
            None => String::new(),
        }
    }

    fn finite(&self, key: &str, v: &Spanned<f64>) -> Result<f64, ProfileError> {
        let x = *v.get_ref();
        if x.is_finite() {
            Ok(x)
        } else {
            Err(self.err(
                key,
                Some(v.span()),
                format!("must be a finite number, found {x}"),
            ))
        }
    }

    fn positive(&self, key: &str, v: &Spanned<f64>) -> Result<f64, ProfileError> {
        let x = self.finite(key, v)?;
        if x > 0.0 {
            Ok(x)
        } else {
            Err(self.err(
                key,
                Some(v.span()),
                format!("must be greater than 0, found {x}"),
            ))
        }
    }

    fn non_negative(&self, key: &str, v: &Spanned<f64>) -> Result<f64, ProfileError> {
        let x = self.finite(key, v)?;
        if x >= 0.0 {
            Ok(x)
        } else {
            Err(self.err(
                key,
                Some(v.span()),
                format!("must be at least 0, found {x}"),
            ))
        }
    }

    /// A time of one step: at least 0 and at most `MAX_STEP_S / per` (`per` degrees of a
    /// rate in seconds per degree, 1 for a plain time).
    fn step_time(&self, key: &str, v: &Spanned<f64>, per: f64) -> Result<f64, ProfileError> {
        let x = self.non_negative(key, v)?;
        if x * per <= MAX_STEP_S {
            Ok(x)
        } else {
            let what = if per == 1.0 {
                String::new()
            } else {
                format!(" per degree ({per}° of change may take at most {MAX_STEP_S:e} s)")
            };
            Err(self.err(
                key,
                Some(v.span()),
                format!(
                    "must be at most {:e} s{what}, found {x:e}",
                    MAX_STEP_S / per
                ),
            ))
        }
    }

    fn within(&self, key: &str, v: &Spanned<f64>, lo: f64, hi: f64) -> Result<f64, ProfileError> {
        let x = self.finite(key, v)?;
        if (lo..=hi).contains(&x) {
            Ok(x)
        } else {
            Err(self.err(
                key,
                Some(v.span()),
                format!("must be in [{lo}, {hi}], found {x}"),
            ))
        }
    }

    fn vector(&self, key: &str, v: &Spanned<[f64; 3]>) -> Result<[f64; 3], ProfileError> {
        let x = *v.get_ref();
        if x.iter().all(|c| c.is_finite()) {
            Ok(x)
        } else {
            Err(self.err(
                key,
                Some(v.span()),
                format!("every component must be a finite number, found {x:?}"),
            ))
        }
    }

    fn check(&self, raw: RawProfile) -> Result<Profile, ProfileError> {
        let name = raw.name.get_ref().trim().to_string();
        if name.is_empty() {
            return Err(self.err("name", Some(raw.name.span()), "must not be empty"));
        }

        let elongation_min_deg =
            self.within("elongation_min_deg", &raw.elongation_min_deg, 0.0, 180.0)?;
        let elongation_max_deg =
            self.within("elongation_max_deg", &raw.elongation_max_deg, 0.0, 180.0)?;
        if elongation_min_deg >= elongation_max_deg {
            return Err(self.err(
                "elongation_max_deg",
                Some(raw.elongation_max_deg.span()),
                format!(
                    "must be greater than elongation_min_deg ({elongation_min_deg}), found \
                     {elongation_max_deg}"
                ),
            ));
        }

        let normal = self.vector("shield_normal", &raw.shield_normal)?;
        let length = normal.iter().map(|c| c * c).sum::<f64>().sqrt();
        // Components up to ~1e154 square to a finite sum; beyond that the length overflows.
        if !(length.is_finite() && length > 1e-9) {
            return Err(self.err(
                "shield_normal",
                Some(raw.shield_normal.span()),
                format!("must be a non-zero vector of moderate size, found {normal:?}"),
            ));
        }
        let shield_normal = normal.map(|c| c / length);

        let specular_reflectivity = self.within(
            "specular_reflectivity",
            &raw.specular_reflectivity,
            0.0,
            1.0,
        )?;
        let diffuse_reflectivity =
            self.within("diffuse_reflectivity", &raw.diffuse_reflectivity, 0.0, 1.0)?;
        if specular_reflectivity + diffuse_reflectivity > 1.0 + 1e-12 {
            return Err(self.err(
                "diffuse_reflectivity",
                Some(raw.diffuse_reflectivity.span()),
                format!(
                    "specular_reflectivity + diffuse_reflectivity must be at most 1, found \
                     {specular_reflectivity} + {diffuse_reflectivity}"
                ),
            ));
        }

        let wheel_margin = self.finite("wheel_margin", &raw.wheel_margin)?;
        if !(wheel_margin > 0.0 && wheel_margin <= 1.0) {
            return Err(self.err(
                "wheel_margin",
                Some(raw.wheel_margin.span()),
                format!("must be in (0, 1], found {wheel_margin}"),
            ));
        }

        let (instruments, setup_s) = self.instruments(&raw)?;

        // A 180° slew takes 2 √(180 / a) when the rate limit is not reached, and less than
        // 2 · 180 / ω when it is: bounding both bounds the slowest slew.
        let slew_rate_deg_s = self.positive("slew_rate_deg_s", &raw.slew_rate_deg_s)?;
        if 2.0 * 180.0 / slew_rate_deg_s > MAX_STEP_S {
            return Err(self.err(
                "slew_rate_deg_s",
                Some(raw.slew_rate_deg_s.span()),
                format!(
                    "must be at least {:e} so that a 180° slew takes at most {MAX_STEP_S:e} s, \
                     found {slew_rate_deg_s:e}",
                    2.0 * 180.0 / MAX_STEP_S
                ),
            ));
        }
        let slew_accel_deg_s2 = self.positive("slew_accel_deg_s2", &raw.slew_accel_deg_s2)?;
        if 2.0 * (180.0 / slew_accel_deg_s2).sqrt() > MAX_STEP_S {
            return Err(self.err(
                "slew_accel_deg_s2",
                Some(raw.slew_accel_deg_s2.span()),
                format!(
                    "must be at least {:e} so that a 180° slew takes at most {MAX_STEP_S:e} s, \
                     found {slew_accel_deg_s2:e}",
                    4.0 * 180.0 / (MAX_STEP_S * MAX_STEP_S)
                ),
            ));
        }

        let wheel_limit_nms = self.positive("wheel_limit_nms", &raw.wheel_limit_nms)?;
        let roll_range_deg = self.roll_range(&raw)?;
        let roll_steps = match &raw.roll_steps {
            None => 3,
            Some(v) => {
                let n = *v.get_ref();
                match usize::try_from(n) {
                    Ok(n) if (2..=9).contains(&n) => n,
                    _ => {
                        return Err(self.err(
                            "roll_steps",
                            Some(v.span()),
                            format!("must be a whole number from 2 to 9, found {n}"),
                        ))
                    }
                }
            }
        };
        let start_pointing = self.start_pointing(&raw)?;
        let start_momentum_nms = match &raw.start_momentum_nms {
            None => [0.0; 3],
            Some(v) => {
                let h = self.vector("start_momentum_nms", v)?;
                let length = h.iter().map(|c| c * c).sum::<f64>().sqrt();
                let limit = wheel_limit_nms * wheel_margin;
                // An overflowing length (inf) is refused too.
                if !length.is_finite() || length >= limit {
                    return Err(self.err(
                        "start_momentum_nms",
                        Some(v.span()),
                        format!(
                            "its length, {length:.6e} N·m·s, must be below wheel_limit_nms × \
                             wheel_margin = {limit} N·m·s (the wheels would need a dump before \
                             the plan starts), found {h:?}"
                        ),
                    ));
                }
                h
            }
        };

        Ok(Profile {
            name,
            slew_rate_deg_s,
            slew_accel_deg_s2,
            thermal_warm_s_per_deg: self.step_time(
                "thermal_warm_s_per_deg",
                &raw.thermal_warm_s_per_deg,
                180.0,
            )?,
            thermal_cool_s_per_deg: self.step_time(
                "thermal_cool_s_per_deg",
                &raw.thermal_cool_s_per_deg,
                180.0,
            )?,
            instruments,
            setup_s,
            elongation_min_deg,
            elongation_max_deg,
            shield_area_m2: self.positive("shield_area_m2", &raw.shield_area_m2)?,
            shield_normal,
            specular_reflectivity,
            diffuse_reflectivity,
            pressure_offset_m: self.vector("pressure_offset_m", &raw.pressure_offset_m)?,
            wheel_limit_nms,
            wheel_margin,
            thruster_arm_m: self.positive("thruster_arm_m", &raw.thruster_arm_m)?,
            thruster_isp_s: self.positive("thruster_isp_s", &raw.thruster_isp_s)?,
            dump_s: self.step_time("dump_s", &raw.dump_s, 1.0)?,
            roll_range_deg,
            roll_steps,
            start_pointing,
            start_momentum_nms,
        })
    }

    /// Two keys that come together: both values, or None; one alone is refused.
    #[allow(clippy::type_complexity)]
    fn both<'v>(
        &self,
        (a, va): (&str, &'v Option<Spanned<f64>>),
        (b, vb): (&str, &'v Option<Spanned<f64>>),
    ) -> Result<Option<(&'v Spanned<f64>, &'v Spanned<f64>)>, ProfileError> {
        match (va, vb) {
            (Some(x), Some(y)) => Ok(Some((x, y))),
            (None, None) => Ok(None),
            (Some(x), None) => Err(self.err(
                a,
                Some(x.span()),
                format!("is given without {b}: give both or neither"),
            )),
            (None, Some(y)) => Err(self.err(
                b,
                Some(y.span()),
                format!("is given without {a}: give both or neither"),
            )),
        }
    }

    fn roll_range(&self, raw: &RawProfile) -> Result<(f64, f64), ProfileError> {
        let Some((lo, hi)) = self.both(
            ("roll_min_deg", &raw.roll_min_deg),
            ("roll_max_deg", &raw.roll_max_deg),
        )?
        else {
            return Ok((0.0, 0.0));
        };
        let min = self.within("roll_min_deg", lo, -180.0, 180.0)?;
        let max = self.within("roll_max_deg", hi, -180.0, 180.0)?;
        if min > max {
            return Err(self.err(
                "roll_max_deg",
                Some(hi.span()),
                format!("must be at least roll_min_deg ({min}), found {max}"),
            ));
        }
        Ok((min, max))
    }

    fn start_pointing(&self, raw: &RawProfile) -> Result<Option<StartPointing>, ProfileError> {
        let Some((ra, dec)) = self.both(
            ("start_ra_deg", &raw.start_ra_deg),
            ("start_dec_deg", &raw.start_dec_deg),
        )?
        else {
            return match &raw.start_roll_deg {
                None => Ok(None),
                Some(v) => Err(self.err(
                    "start_roll_deg",
                    Some(v.span()),
                    "is given without start_ra_deg and start_dec_deg, which it goes with",
                )),
            };
        };
        let ra_deg = self.finite("start_ra_deg", ra)?;
        if !(0.0..360.0).contains(&ra_deg) {
            return Err(self.err(
                "start_ra_deg",
                Some(ra.span()),
                format!("must be in [0, 360), found {ra_deg}"),
            ));
        }
        let dec_deg = self.within("start_dec_deg", dec, -90.0, 90.0)?;
        let roll_deg = match &raw.start_roll_deg {
            None => 0.0,
            Some(v) => self.within("start_roll_deg", v, -180.0, 180.0)?,
        };
        Ok(Some(StartPointing {
            ra_deg,
            dec_deg,
            roll_deg,
        }))
    }

    /// The instruments and the full setup matrix.
    #[allow(clippy::type_complexity)]
    fn instruments(
        &self,
        raw: &RawProfile,
    ) -> Result<(Vec<Instrument>, Vec<Vec<f64>>), ProfileError> {
        if raw.instrument.is_empty() {
            return Err(self.err(
                "instrument",
                None,
                "a profile needs at least one [[instrument]] table",
            ));
        }
        let mut instruments = Vec::with_capacity(raw.instrument.len());
        let mut index: HashMap<&str, (usize, usize)> = HashMap::new();
        for (i, inst) in raw.instrument.iter().enumerate() {
            let name = inst.name.get_ref().as_str();
            let line = super::line_of(self.text, inst.name.span().start);
            if name.is_empty() || name.trim() != name {
                return Err(self.err(
                    "instrument.name",
                    Some(inst.name.span()),
                    format!(
                        "`{}` must be non-empty without leading or trailing spaces",
                        shown(name)
                    ),
                ));
            }
            if let Some(&(_, first_line)) = index.get(name) {
                return Err(self.err(
                    "instrument.name",
                    Some(inst.name.span()),
                    format!(
                        "instrument `{}` is defined twice (lines {first_line} and {line})",
                        shown(name)
                    ),
                ));
            }
            index.insert(name, (i, line));
            instruments.push(Instrument {
                name: name.to_string(),
                settle_s: self.step_time("instrument.settle_s", &inst.settle_s, 1.0)?,
            });
        }

        let known = || {
            instruments
                .iter()
                .map(|i| format!("`{}`", shown(&i.name)))
                .collect::<Vec<_>>()
                .join(", ")
        };
        let n = instruments.len();
        let mut setup_s = vec![vec![0.0; n]; n];
        let mut given: Vec<Vec<Option<usize>>> = vec![vec![None; n]; n];
        for entry in &raw.setup {
            let mut ends = [0; 2];
            for (k, (key, end)) in [("setup.from", &entry.from), ("setup.to", &entry.to)]
                .into_iter()
                .enumerate()
            {
                let name = end.get_ref().as_str();
                let Some(&(i, _)) = index.get(name) else {
                    return Err(self.err(
                        key,
                        Some(end.span()),
                        format!(
                            "unknown instrument `{}`; the profile defines {}",
                            shown(name),
                            known()
                        ),
                    ));
                };
                ends[k] = i;
            }
            let [from, to] = ends;
            let line = super::line_of(self.text, entry.from.span().start);
            if from == to {
                return Err(self.err(
                    "setup.to",
                    Some(entry.to.span()),
                    format!(
                        "from and to are both `{}`; staying with an instrument costs 0 s and is \
                         not listed",
                        shown(&instruments[from].name)
                    ),
                ));
            }
            if let Some(first_line) = given[from][to] {
                return Err(self.err(
                    "setup.from",
                    Some(entry.from.span()),
                    format!(
                        "the setup from `{}` to `{}` is given twice (lines {first_line} and {line})",
                        shown(&instruments[from].name),
                        shown(&instruments[to].name)
                    ),
                ));
            }
            given[from][to] = Some(line);
            setup_s[from][to] = self.step_time("setup.time_s", &entry.time_s, 1.0)?;
        }
        let mut missing = Vec::new();
        for (i, row) in given.iter().enumerate() {
            for (j, g) in row.iter().enumerate() {
                if i != j && g.is_none() {
                    missing.push(format!(
                        "`{}` -> `{}`",
                        shown(&instruments[i].name),
                        shown(&instruments[j].name)
                    ));
                }
            }
        }
        if !missing.is_empty() {
            return Err(self.err(
                "setup",
                None,
                format!(
                    "every change between two different instruments needs a [[setup]] table; \
                     missing: {}",
                    missing.join(", ")
                ),
            ));
        }
        Ok((instruments, setup_s))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// A valid profile; line numbers below are counted by hand.
    const BASE: &str = r#"# test profile
name = "Test bench"
slew_rate_deg_s = 0.2
slew_accel_deg_s2 = 0.004
thermal_warm_s_per_deg = 9
thermal_cool_s_per_deg = 3.5
elongation_min_deg = 97
elongation_max_deg = 153.5
shield_area_m2 = 66
shield_normal = [0, 3, 4]
specular_reflectivity = 0.6
diffuse_reflectivity = 0.25
pressure_offset_m = [0.1, -0.2, 1.25]
wheel_limit_nms = 30
wheel_margin = 0.75
thruster_arm_m = 1.5
thruster_isp_s = 230
dump_s = 500

[[instrument]]
name = "cam"
settle_s = 60

[[instrument]]
name = "spec"
settle_s = 240.5

[[setup]]
from = "cam"
to = "spec"
time_s = 100

[[setup]]
from = "spec"
to = "cam"
time_s = 20
"#;

    fn parse(text: &str) -> Result<Profile, ProfileError> {
        parse_profile(text, "p.toml")
    }

    /// BASE with the line starting with `key =` (the first one) replaced by `line`.
    fn with(key: &str, line: &str) -> String {
        let mut done = false;
        let out: Vec<&str> = BASE
            .lines()
            .map(|l| {
                if !done && l.starts_with(&format!("{key} =")) {
                    done = true;
                    line
                } else {
                    l
                }
            })
            .collect();
        assert!(done, "no line for {key}");
        out.join("\n") + "\n"
    }

    /// The error for `text`, checked to name the file, the key and the line.
    fn error_at(text: &str, key: &str, line: usize) -> String {
        let e = match parse(text) {
            Ok(p) => panic!("expected an error, got {p:?}"),
            Err(e) => e,
        };
        assert_eq!(e.source_name, "p.toml");
        assert_eq!((e.key.as_str(), e.line), (key, line), "{e}");
        let shown = e.to_string();
        let place = if line == 0 {
            String::new()
        } else {
            format!(":{line}")
        };
        let key_shown = if key.is_empty() {
            String::new()
        } else {
            format!("{key}: ")
        };
        assert!(
            shown.starts_with(&format!("p.toml{place}: {key_shown}")),
            "{shown}"
        );
        shown
    }

    #[test]
    fn reads_every_key() {
        let p = parse(BASE).unwrap();
        assert_eq!(
            p,
            Profile {
                name: "Test bench".to_string(),
                slew_rate_deg_s: 0.2,
                slew_accel_deg_s2: 0.004,
                thermal_warm_s_per_deg: 9.0,
                thermal_cool_s_per_deg: 3.5,
                instruments: vec![
                    Instrument {
                        name: "cam".to_string(),
                        settle_s: 60.0
                    },
                    Instrument {
                        name: "spec".to_string(),
                        settle_s: 240.5
                    },
                ],
                setup_s: vec![vec![0.0, 100.0], vec![20.0, 0.0]],
                elongation_min_deg: 97.0,
                elongation_max_deg: 153.5,
                shield_area_m2: 66.0,
                shield_normal: [0.0, 0.6, 0.8],
                specular_reflectivity: 0.6,
                diffuse_reflectivity: 0.25,
                pressure_offset_m: [0.1, -0.2, 1.25],
                wheel_limit_nms: 30.0,
                wheel_margin: 0.75,
                thruster_arm_m: 1.5,
                thruster_isp_s: 230.0,
                dump_s: 500.0,
                roll_range_deg: (0.0, 0.0),
                roll_steps: 3,
                start_pointing: None,
                start_momentum_nms: [0.0; 3],
            }
        );
    }

    #[test]
    fn crlf_and_byte_order_mark_are_accepted() {
        let text = format!("\u{feff}{}", BASE.replace('\n', "\r\n"));
        assert_eq!(parse(&text).unwrap(), parse(BASE).unwrap());
        // Line numbers still count each CRLF line once.
        let text = format!(
            "\u{feff}{}",
            with("dump_s", "dump_s = -1").replace('\n', "\r\n")
        );
        error_at(&text, "dump_s", 18);
    }

    #[test]
    fn one_instrument_needs_no_setup_table() {
        let text = "name = \"x\"\n".to_string()
            + &BASE.lines().skip(2).take(17).collect::<Vec<_>>().join("\n")
            + "\n[[instrument]]\nname = \"solo\"\nsettle_s = 0\n";
        let p = parse(&text).unwrap();
        assert_eq!(
            p.instruments,
            vec![Instrument {
                name: "solo".to_string(),
                settle_s: 0.0
            }]
        );
        assert_eq!(p.setup_s, vec![vec![0.0]]);
    }

    #[test]
    fn rates_and_sizes_must_be_positive() {
        for (key, line) in [
            ("slew_rate_deg_s", 3),
            ("slew_accel_deg_s2", 4),
            ("shield_area_m2", 9),
            ("wheel_limit_nms", 14),
            ("thruster_arm_m", 16),
            ("thruster_isp_s", 17),
        ] {
            for bad in ["0", "-1.5"] {
                let shown = error_at(&with(key, &format!("{key} = {bad}")), key, line);
                assert!(
                    shown.contains(&format!("must be greater than 0, found {bad}")),
                    "{shown}"
                );
            }
        }
    }

    #[test]
    fn times_must_not_be_negative() {
        for (key, line) in [
            ("thermal_warm_s_per_deg", 5),
            ("thermal_cool_s_per_deg", 6),
            ("dump_s", 18),
        ] {
            let shown = error_at(&with(key, &format!("{key} = -2")), key, line);
            assert!(shown.contains("must be at least 0, found -2"), "{shown}");
        }
        let shown = error_at(
            &with("settle_s", "settle_s = -1"),
            "instrument.settle_s",
            22,
        );
        assert!(shown.contains("must be at least 0"), "{shown}");
        let shown = error_at(&with("time_s", "time_s = -0.5"), "setup.time_s", 31);
        assert!(shown.contains("must be at least 0, found -0.5"), "{shown}");
    }

    #[test]
    fn times_no_plan_can_use_are_refused() {
        // Each at its limit is accepted; beyond it, refused at its line.
        for (key, line, ok, bad) in [
            ("dump_s", 18, "1e9", "1.5e9"),
            ("thermal_warm_s_per_deg", 5, "5e6", "1e300"),
            ("thermal_cool_s_per_deg", 6, "5e6", "6e6"),
        ] {
            assert!(parse(&with(key, &format!("{key} = {ok}"))).is_ok(), "{key}");
            let shown = error_at(&with(key, &format!("{key} = {bad}")), key, line);
            assert!(shown.contains("must be at most"), "{shown}");
        }
        let shown = error_at(
            &with("settle_s", "settle_s = 1e300"),
            "instrument.settle_s",
            22,
        );
        assert!(
            shown.contains("must be at most 1e9 s, found 1e300"),
            "{shown}"
        );
        let shown = error_at(&with("time_s", "time_s = 2e9"), "setup.time_s", 31);
        assert!(shown.contains("must be at most 1e9 s"), "{shown}");
    }

    #[test]
    fn slews_no_plan_can_use_are_refused() {
        // 2 · 180 / rate ≤ 1e9 s: rate ≥ 3.6e-7 °/s; 2 √(180 / a) ≤ 1e9 s: a ≥ 7.2e-16 °/s².
        assert!(parse(&with("slew_rate_deg_s", "slew_rate_deg_s = 4e-7")).is_ok());
        let shown = error_at(
            &with("slew_rate_deg_s", "slew_rate_deg_s = 3e-7"),
            "slew_rate_deg_s",
            3,
        );
        assert!(shown.contains("180° slew takes at most 1e9 s"), "{shown}");
        assert!(parse(&with("slew_accel_deg_s2", "slew_accel_deg_s2 = 7.3e-16")).is_ok());
        let shown = error_at(
            &with("slew_accel_deg_s2", "slew_accel_deg_s2 = 1e-300"),
            "slew_accel_deg_s2",
            4,
        );
        assert!(shown.contains("found 1e-300"), "{shown}");
        // A huge rate is harmless: the acceleration limit then sets the slew time.
        assert!(parse(&with("slew_rate_deg_s", "slew_rate_deg_s = 1e300")).is_ok());
    }

    #[test]
    fn errors_stay_one_line_whatever_the_names() {
        // An instrument named with a line break, without the setup tables it needs.
        let text = BASE.replace("name = \"spec\"", "name = \"sp\\nec\"");
        let e = parse(&text).unwrap_err();
        let shown = e.to_string();
        assert!(!shown.contains('\n'), "{shown}");
        assert!(shown.contains("`sp\\nec`"), "{shown}");
        // A quoted key with control characters.
        let text = BASE.to_string() + "\"a\\r\\nb\" = 1\n";
        let shown = parse(&text).unwrap_err().to_string();
        assert!(!shown.contains('\n') && !shown.contains('\r'), "{shown}");
    }

    #[test]
    fn non_finite_numbers_are_refused() {
        for (key, line, value) in [
            ("slew_rate_deg_s", 3, "nan"),
            ("dump_s", 18, "inf"),
            ("wheel_margin", 15, "nan"),
            ("elongation_min_deg", 7, "-inf"),
        ] {
            let shown = error_at(&with(key, &format!("{key} = {value}")), key, line);
            assert!(shown.contains("must be a finite number"), "{shown}");
        }
        let shown = error_at(
            &with("pressure_offset_m", "pressure_offset_m = [0, nan, 1]"),
            "pressure_offset_m",
            13,
        );
        assert!(
            shown.contains("every component must be a finite number"),
            "{shown}"
        );
        let shown = error_at(
            &with("shield_normal", "shield_normal = [inf, 0, 0]"),
            "shield_normal",
            10,
        );
        assert!(shown.contains("finite"), "{shown}");
    }

    #[test]
    fn reflectivities_are_fractions_summing_to_at_most_one() {
        let shown = error_at(
            &with("specular_reflectivity", "specular_reflectivity = 1.1"),
            "specular_reflectivity",
            11,
        );
        assert!(shown.contains("must be in [0, 1], found 1.1"), "{shown}");
        let shown = error_at(
            &with("diffuse_reflectivity", "diffuse_reflectivity = -0.1"),
            "diffuse_reflectivity",
            12,
        );
        assert!(shown.contains("must be in [0, 1], found -0.1"), "{shown}");
        let shown = error_at(
            &with("diffuse_reflectivity", "diffuse_reflectivity = 0.45"),
            "diffuse_reflectivity",
            12,
        );
        assert!(
            shown.contains(
                "specular_reflectivity + diffuse_reflectivity must be at most 1, found 0.6 + 0.45"
            ),
            "{shown}"
        );
        // Exactly 1 is allowed.
        let p = parse(&with("diffuse_reflectivity", "diffuse_reflectivity = 0.4")).unwrap();
        assert_eq!(p.diffuse_reflectivity, 0.4);
    }

    #[test]
    fn the_elongation_band_must_be_ordered_within_0_to_180() {
        let shown = error_at(
            &with("elongation_min_deg", "elongation_min_deg = -5"),
            "elongation_min_deg",
            7,
        );
        assert!(shown.contains("must be in [0, 180], found -5"), "{shown}");
        let shown = error_at(
            &with("elongation_max_deg", "elongation_max_deg = 180.5"),
            "elongation_max_deg",
            8,
        );
        assert!(
            shown.contains("must be in [0, 180], found 180.5"),
            "{shown}"
        );
        let shown = error_at(
            &with("elongation_max_deg", "elongation_max_deg = 97"),
            "elongation_max_deg",
            8,
        );
        assert!(
            shown.contains("must be greater than elongation_min_deg (97), found 97"),
            "{shown}"
        );
    }

    #[test]
    fn wheel_margin_is_in_0_exclusive_to_1() {
        for bad in ["0", "1.01", "-0.5"] {
            let shown = error_at(
                &with("wheel_margin", &format!("wheel_margin = {bad}")),
                "wheel_margin",
                15,
            );
            assert!(
                shown.contains(&format!("must be in (0, 1], found {bad}")),
                "{shown}"
            );
        }
        assert_eq!(
            parse(&with("wheel_margin", "wheel_margin = 1"))
                .unwrap()
                .wheel_margin,
            1.0
        );
    }

    #[test]
    fn the_shield_normal_must_be_non_zero_and_is_scaled_to_unit_length() {
        let shown = error_at(
            &with("shield_normal", "shield_normal = [0, 0, 0]"),
            "shield_normal",
            10,
        );
        assert!(shown.contains("must be a non-zero vector"), "{shown}");
        let shown = error_at(
            &with("shield_normal", "shield_normal = [1e200, 0, 0]"),
            "shield_normal",
            10,
        );
        assert!(
            shown.contains("must be a non-zero vector of moderate size"),
            "{shown}"
        );
        let p = parse(&with("shield_normal", "shield_normal = [0, 0, -2.5]")).unwrap();
        assert_eq!(p.shield_normal, [0.0, 0.0, -1.0]);
        let shown = error_at(
            &with("shield_normal", "shield_normal = [1, 0]"),
            "shield_normal",
            10,
        );
        assert!(shown.contains("length 3"), "{shown}");
    }

    #[test]
    fn unknown_keys_are_refused_with_their_line() {
        let text = BASE.replace("dump_s = 500\n", "dump_s = 500\nslew_rate_deg = 1\n");
        let shown = error_at(&text, "slew_rate_deg", 19);
        assert!(shown.contains("unknown field `slew_rate_deg`"), "{shown}");
        let text = BASE.replace("settle_s = 60\n", "settle_s = 60\nsettle = 4\n");
        let shown = error_at(&text, "settle", 23);
        assert!(shown.contains("unknown field `settle`"), "{shown}");
        let text = BASE.replace("time_s = 20\n", "time_s = 20\nnote = \"x\"\n");
        let shown = error_at(&text, "note", 37);
        assert!(shown.contains("unknown field `note`"), "{shown}");
    }

    #[test]
    fn missing_keys_are_named() {
        let text = with("thruster_isp_s", "");
        let shown = error_at(&text, "thruster_isp_s", 0);
        assert!(shown.contains("missing field `thruster_isp_s`"), "{shown}");
        // Inside an [[instrument]] table, the line of the table that lacks the key.
        let text = BASE.replace("settle_s = 240.5\n", "");
        let shown = error_at(&text, "settle_s", 24);
        assert!(shown.contains("missing field `settle_s`"), "{shown}");
    }

    #[test]
    fn wrong_types_and_syntax_errors_name_the_line() {
        let shown = error_at(
            &with("slew_rate_deg_s", "slew_rate_deg_s = \"fast\""),
            "slew_rate_deg_s",
            3,
        );
        assert!(shown.contains("invalid type: string \"fast\""), "{shown}");
        let shown = error_at(&with("dump_s", "dump_s = = 5"), "dump_s", 18);
        assert!(!shown.contains('\n'), "one line: {shown}");
        let text = BASE.replacen("[[setup]]", "[setup]", 2);
        let shown = error_at(&text, "", 33);
        assert!(shown.contains("duplicate key `setup`"), "{shown}");
        let shown = error_at(&with("name", "name = \"\""), "name", 2);
        assert!(shown.contains("must not be empty"), "{shown}");
    }

    #[test]
    fn instruments_must_exist_and_be_named_once() {
        let text: String = BASE.lines().take(19).collect::<Vec<_>>().join("\n") + "\n";
        let e = parse(&text).unwrap_err();
        assert_eq!(e.key, "instrument", "{e}");
        let text = text + "instrument = []\n";
        let shown = error_at(&text, "instrument", 0);
        assert!(shown.contains("at least one [[instrument]]"), "{shown}");

        let text = BASE.replace("name = \"spec\"", "name = \"cam\"");
        let shown = error_at(&text, "instrument.name", 25);
        assert!(
            shown.contains("instrument `cam` is defined twice (lines 21 and 25)"),
            "{shown}"
        );
        let text = BASE.replace("name = \"spec\"", "name = \" spec\"");
        let shown = error_at(&text, "instrument.name", 25);
        assert!(
            shown.contains("without leading or trailing spaces"),
            "{shown}"
        );
        let text = BASE.replace("name = \"spec\"", "name = \"\"");
        error_at(&text, "instrument.name", 25);
    }

    #[test]
    fn setup_entries_must_name_known_different_instruments_once_each() {
        let text = BASE.replace("to = \"spec\"", "to = \"imager\"");
        let shown = error_at(&text, "setup.to", 30);
        assert!(
            shown.contains("unknown instrument `imager`; the profile defines `cam`, `spec`"),
            "{shown}"
        );
        let text = BASE.replace("from = \"spec\"", "from = \"Spec\"");
        let shown = error_at(&text, "setup.from", 34);
        assert!(shown.contains("unknown instrument `Spec`"), "{shown}");

        let text = BASE.replace("to = \"spec\"", "to = \"cam\"");
        let shown = error_at(&text, "setup.to", 30);
        assert!(shown.contains("from and to are both `cam`"), "{shown}");

        let text = BASE.to_string() + "\n[[setup]]\nfrom = \"cam\"\nto = \"spec\"\ntime_s = 5\n";
        let shown = error_at(&text, "setup.from", 39);
        assert!(
            shown.contains("the setup from `cam` to `spec` is given twice (lines 29 and 39)"),
            "{shown}"
        );

        let text: String = BASE.lines().take(32).collect::<Vec<_>>().join("\n") + "\n";
        let shown = error_at(&text, "setup", 0);
        assert!(shown.contains("missing: `spec` -> `cam`"), "{shown}");
    }

    #[test]
    fn read_profile_names_the_path() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("obs.toml");
        std::fs::write(&path, with("dump_s", "dump_s = -3")).unwrap();
        let e = read_profile(&path).unwrap_err();
        assert_eq!(e.source_name, path.display().to_string());
        assert_eq!((e.key.as_str(), e.line), ("dump_s", 18));

        std::fs::write(&path, b"name = \"\xff\"\n").unwrap();
        let e = read_profile(&path).unwrap_err();
        assert_eq!(e.line, 1);
        assert!(e.message.contains("not UTF-8"), "{e}");

        let missing = dir.path().join("absent.toml");
        let e = read_profile(&missing).unwrap_err();
        assert!(e
            .to_string()
            .starts_with(&format!("{}: cannot read the file", missing.display())));

        std::fs::write(&path, BASE).unwrap();
        assert_eq!(read_profile(&path).unwrap().name, "Test bench");
    }

    /// BASE with `lines` added after `dump_s` (line 18), so that they are lines 19, 20, ...
    fn plus(lines: &str) -> String {
        with("dump_s", &format!("dump_s = 500\n{lines}"))
    }

    #[test]
    fn reads_the_optional_keys() {
        let p = parse(&plus(
            "roll_min_deg = -30\nroll_max_deg = 45.5\nroll_steps = 7\nstart_ra_deg = 359.5\n\
             start_dec_deg = -90\nstart_roll_deg = -180\nstart_momentum_nms = [3, -4, 12]",
        ))
        .unwrap();
        assert_eq!(p.roll_range_deg, (-30.0, 45.5));
        assert_eq!(p.roll_steps, 7);
        assert_eq!(
            p.start_pointing,
            Some(StartPointing {
                ra_deg: 359.5,
                dec_deg: -90.0,
                roll_deg: -180.0
            })
        );
        // |(3, -4, 12)| = 13, below 30 × 0.75 = 22.5.
        assert_eq!(p.start_momentum_nms, [3.0, -4.0, 12.0]);
        // The start roll defaults to 0.
        let p = parse(&plus("start_ra_deg = 0\nstart_dec_deg = 12.5")).unwrap();
        assert_eq!(
            p.start_pointing,
            Some(StartPointing {
                ra_deg: 0.0,
                dec_deg: 12.5,
                roll_deg: 0.0
            })
        );
        assert_eq!((p.roll_range_deg, p.roll_steps), ((0.0, 0.0), 3));
    }

    #[test]
    fn pairs_of_keys_come_together() {
        for (line, key, other) in [
            ("roll_min_deg = -5", "roll_min_deg", "roll_max_deg"),
            ("roll_max_deg = 5", "roll_max_deg", "roll_min_deg"),
            ("start_ra_deg = 10", "start_ra_deg", "start_dec_deg"),
            ("start_dec_deg = 10", "start_dec_deg", "start_ra_deg"),
        ] {
            let shown = error_at(&plus(line), key, 19);
            assert!(
                shown.contains(&format!("is given without {other}: give both or neither")),
                "{shown}"
            );
        }
        let shown = error_at(&plus("start_roll_deg = 10"), "start_roll_deg", 19);
        assert!(
            shown.contains("is given without start_ra_deg and start_dec_deg"),
            "{shown}"
        );
    }

    #[test]
    fn roll_ranges_are_ordered_within_a_half_turn() {
        let shown = error_at(
            &plus("roll_min_deg = -180.5\nroll_max_deg = 0"),
            "roll_min_deg",
            19,
        );
        assert!(
            shown.contains("must be in [-180, 180], found -180.5"),
            "{shown}"
        );
        let shown = error_at(
            &plus("roll_min_deg = 0\nroll_max_deg = nan"),
            "roll_max_deg",
            20,
        );
        assert!(shown.contains("must be a finite number"), "{shown}");
        let shown = error_at(
            &plus("roll_min_deg = 10\nroll_max_deg = -10"),
            "roll_max_deg",
            20,
        );
        assert!(
            shown.contains("must be at least roll_min_deg (10), found -10"),
            "{shown}"
        );
        let p = parse(&plus("roll_min_deg = -180\nroll_max_deg = 180")).unwrap();
        assert_eq!(p.roll_range_deg, (-180.0, 180.0));
    }

    #[test]
    fn roll_steps_is_a_whole_number_from_2_to_9() {
        for bad in ["1", "10", "-3", "0"] {
            let shown = error_at(&plus(&format!("roll_steps = {bad}")), "roll_steps", 19);
            assert!(
                shown.contains(&format!("must be a whole number from 2 to 9, found {bad}")),
                "{shown}"
            );
        }
        let shown = error_at(&plus("roll_steps = 3.5"), "roll_steps", 19);
        assert!(shown.contains("invalid type: floating point"), "{shown}");
        let shown = error_at(&plus("roll_steps = 99999999999999999999"), "roll_steps", 19);
        assert!(!shown.is_empty());
        assert_eq!(parse(&plus("roll_steps = 2")).unwrap().roll_steps, 2);
        assert_eq!(parse(&plus("roll_steps = 9")).unwrap().roll_steps, 9);
    }

    #[test]
    fn the_start_pointing_is_on_the_sky() {
        for (lines, key, line, wanted) in [
            (
                "start_ra_deg = 360\nstart_dec_deg = 0",
                "start_ra_deg",
                19,
                "must be in [0, 360), found 360",
            ),
            (
                "start_ra_deg = -1\nstart_dec_deg = 0",
                "start_ra_deg",
                19,
                "must be in [0, 360), found -1",
            ),
            (
                "start_ra_deg = inf\nstart_dec_deg = 0",
                "start_ra_deg",
                19,
                "must be a finite number",
            ),
            (
                "start_ra_deg = 1\nstart_dec_deg = 90.5",
                "start_dec_deg",
                20,
                "must be in [-90, 90], found 90.5",
            ),
            (
                "start_ra_deg = 1\nstart_dec_deg = 0\nstart_roll_deg = 181",
                "start_roll_deg",
                21,
                "must be in [-180, 180], found 181",
            ),
            (
                "start_ra_deg = 1\nstart_dec_deg = 0\nstart_roll_deg = nan",
                "start_roll_deg",
                21,
                "must be a finite number",
            ),
        ] {
            let shown = error_at(&plus(lines), key, line);
            assert!(shown.contains(wanted), "{lines}: {shown}");
        }
    }

    #[test]
    fn the_start_momentum_is_finite_and_below_the_planning_limit() {
        // BASE: wheel_limit_nms = 30, wheel_margin = 0.75, so the limit is 22.5 N·m·s.
        let shown = error_at(
            &plus("start_momentum_nms = [0, 22.5, 0]"),
            "start_momentum_nms",
            19,
        );
        assert!(
            shown.contains("must be below wheel_limit_nms × wheel_margin = 22.5 N·m·s"),
            "{shown}"
        );
        // |(13.5, 18, 0)| = 22.5 too, from components each below the limit.
        error_at(
            &plus("start_momentum_nms = [13.5, -18, 0]"),
            "start_momentum_nms",
            19,
        );
        // Components that overflow the length.
        error_at(
            &plus("start_momentum_nms = [1e200, 1e200, 0]"),
            "start_momentum_nms",
            19,
        );
        let shown = error_at(
            &plus("start_momentum_nms = [0, nan, 0]"),
            "start_momentum_nms",
            19,
        );
        assert!(
            shown.contains("every component must be a finite number"),
            "{shown}"
        );
        let shown = error_at(
            &plus("start_momentum_nms = [1, 2]"),
            "start_momentum_nms",
            19,
        );
        assert!(shown.contains("length 3"), "{shown}");
        assert_eq!(
            parse(&plus("start_momentum_nms = [0, 22.4, 0]"))
                .unwrap()
                .start_momentum_nms,
            [0.0, 22.4, 0.0]
        );
    }

    #[test]
    fn the_demo_profile_keeps_the_defaults_of_the_optional_keys() {
        // The demo sets a roll range; the start examples are commented out: defaults.
        let p = parse(crate::DEMO_PROFILE_TOML).unwrap();
        assert_eq!((p.roll_range_deg, p.roll_steps), ((-20.0, 20.0), 3));
        assert_eq!((p.start_pointing, p.start_momentum_nms), (None, [0.0; 3]));
        // And uncommented (the example lines start with `# ` and a key), they are read.
        let uncommented: String = crate::DEMO_PROFILE_TOML
            .lines()
            .map(|l| match l.strip_prefix("# ") {
                Some(rest)
                    if rest.split_once(" = ").is_some_and(|(k, _)| {
                        !k.contains(' ') && (k.starts_with("roll_") || k.starts_with("start_"))
                    }) =>
                {
                    rest.to_string() + "\n"
                }
                _ => l.to_string() + "\n",
            })
            .collect();
        let p = parse(&uncommented).unwrap();
        assert!(p.start_pointing.is_some());
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn random_text_never_panics(text in "[ -~\t\r\n\u{feff}é]{0,300}") {
            let _ = parse(&text);
        }

        #[test]
        fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..300)) {
            let _ = parse(&String::from_utf8_lossy(&bytes));
        }

        #[test]
        fn edited_profiles_never_panic(at in 0usize..BASE.len(), cut in 0usize..8, insert in "[-\\[\\]=.,0-9eE\"#\r\n a-z]{0,8}") {
            let mut text = BASE.to_string();
            let mut at = at;
            while !text.is_char_boundary(at) { at -= 1; }
            let end = (at + cut).min(text.len());
            text.replace_range(at..end, &insert);
            let _ = parse(&text);
        }
    }
}
