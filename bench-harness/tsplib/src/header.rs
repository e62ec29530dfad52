//! Helpers for `KEY : VALUE` header lines, shared by problem and tour files.

use super::error::{Ctx, TsplibError};
use super::lex::{shown, KeyLine};

/// A header value and the line it came from, kept so that later cross-checks can point at it.
#[derive(Clone, Copy, Debug)]
pub(crate) struct At<T> {
    pub value: T,
    pub line: usize,
}

/// The value after `KEY :`, possibly empty.
pub(crate) fn value<'a>(
    ctx: Ctx<'_>,
    line: usize,
    kl: KeyLine<'a>,
) -> Result<&'a str, TsplibError> {
    match kl.value {
        Some(v) => Ok(v),
        None if kl.trailing.is_empty() => Err(ctx.err(
            line,
            format!("expected \"{} : value\", found {} alone", kl.key, kl.key),
        )),
        None => Err(ctx.err(
            line,
            format!(
                "expected ':' after {}, found {}",
                kl.key,
                shown(kl.trailing)
            ),
        )),
    }
}

pub(crate) fn nonempty_value<'a>(
    ctx: Ctx<'_>,
    line: usize,
    kl: KeyLine<'a>,
) -> Result<&'a str, TsplibError> {
    let v = value(ctx, line, kl)?;
    if v.is_empty() {
        return Err(ctx.err(line, format!("expected a value after \"{} :\"", kl.key)));
    }
    Ok(v)
}

/// A section name or `EOF` stands alone on its line (a colon with nothing after it is
/// tolerated).
pub(crate) fn bare(ctx: Ctx<'_>, line: usize, kl: KeyLine<'_>) -> Result<(), TsplibError> {
    let extra = kl.value.unwrap_or(kl.trailing);
    if extra.is_empty() {
        Ok(())
    } else {
        Err(ctx.err(
            line,
            format!(
                "expected nothing after {} on its line, found {}",
                kl.key,
                shown(extra)
            ),
        ))
    }
}

pub(crate) fn set_once<T>(
    ctx: Ctx<'_>,
    slot: &mut Option<At<T>>,
    key: &str,
    value: T,
    line: usize,
) -> Result<(), TsplibError> {
    if let Some(prev) = slot {
        return Err(ctx.err(
            line,
            format!("{key} given twice (lines {} and {line})", prev.line),
        ));
    }
    *slot = Some(At { value, line });
    Ok(())
}
