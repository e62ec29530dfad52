//! Lists of optimal tour lengths: lines `name : length` or `name length`, `#` starting a
//! comment. Names may hold `/`, as in `set/instance 378`.

use std::collections::BTreeMap;
use std::path::Path;

use nom::{
    branch::alt,
    bytes::complete::take_till1,
    character::complete::{char, space0, space1},
    combinator::{recognize, rest},
    sequence::{delimited, pair},
    IResult,
};

use super::error::{Ctx, TsplibError};
use super::lex::{parse_i64, shown, Lines, NumError};
use super::read_text;

fn entry(input: &str) -> IResult<&str, (&str, &str)> {
    pair(
        take_till1(|c: char| c == ':' || c.is_whitespace()),
        nom::sequence::preceded(
            alt((recognize(delimited(space0, char(':'), space0)), space1)),
            rest,
        ),
    )(input)
}

/// Reads `name : length` or `name length` lines (blank lines and `#` comments ignored) into a
/// map from instance name to optimal length. A name given twice is an error, since the two
/// could disagree.
pub fn parse_optima(text: &str, source: &str) -> Result<BTreeMap<String, i64>, TsplibError> {
    let ctx = Ctx { source };
    let mut lines = Lines::new(text);
    let mut found: BTreeMap<String, (i64, usize)> = BTreeMap::new();
    while let Some(line) = lines.next_line() {
        let body = line.text.split('#').next().unwrap_or("").trim();
        if body.is_empty() {
            continue;
        }
        let (name, value) = entry(body).map(|(_, e)| e).map_err(|_| {
            ctx.err(
                line.no,
                format!(
                    "expected \"name : length\" or \"name length\", found {}",
                    shown(body)
                ),
            )
        })?;
        let value = value.trim();
        let length = parse_i64(value).map_err(|e| {
            let what = match e {
                NumError::Overflow => "does not fit a 64-bit integer",
                _ => "is not an integer length",
            };
            ctx.err(
                line.no,
                format!("the length {} of {name} {what}", shown(value)),
            )
        })?;
        if let Some(&(_, prev)) = found.get(name) {
            return Err(ctx.err(
                line.no,
                format!("{name} given twice (lines {prev} and {})", line.no),
            ));
        }
        found.insert(name.to_string(), (length, line.no));
    }
    Ok(found.into_iter().map(|(k, (v, _))| (k, v)).collect())
}

/// Reads a list of optimal lengths from a file; see [`parse_optima`].
pub fn read_optima(path: &Path) -> Result<BTreeMap<String, i64>, TsplibError> {
    let (text, source) = read_text(path)?;
    parse_optima(&text, &source)
}
