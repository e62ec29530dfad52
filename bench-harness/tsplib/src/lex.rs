//! Line cursor, keyword lines, tokens and numbers, shared by every TSPLIB file kind.
//!
//! TSPLIB files are line-oriented for their headers and node lists but let matrix numbers wrap
//! across lines at will, so the cursor hands out whole lines and callers tokenise each one,
//! carrying the line number with every token. Nothing here copies the text.

use nom::{
    branch::alt,
    bytes::complete::{take_till1, take_while, take_while_m_n},
    character::complete::{char, digit0, digit1, satisfy, space0},
    combinator::{all_consuming, map, opt, recognize},
    sequence::{pair, tuple},
    IResult,
};

/// One line of input: its 1-based number and its text without surrounding whitespace (so a
/// CRLF file reads like an LF one).
#[derive(Clone, Copy, Debug)]
pub(crate) struct Line<'a> {
    pub no: usize,
    pub text: &'a str,
}

/// Hands out lines one at a time, with one line of push-back for sections that end when they
/// meet the next keyword.
pub(crate) struct Lines<'a> {
    rest: &'a str,
    no: usize,
    pending: Option<Line<'a>>,
}

impl<'a> Lines<'a> {
    pub(crate) fn new(text: &'a str) -> Self {
        Lines {
            rest: text.strip_prefix('\u{feff}').unwrap_or(text),
            no: 0,
            pending: None,
        }
    }

    /// The next line, blank or not.
    pub(crate) fn next_line(&mut self) -> Option<Line<'a>> {
        if let Some(line) = self.pending.take() {
            return Some(line);
        }
        if self.rest.is_empty() {
            return None;
        }
        let (head, tail) = match self.rest.find('\n') {
            Some(at) => (&self.rest[..at], &self.rest[at + 1..]),
            None => (self.rest, ""),
        };
        self.rest = tail;
        self.no += 1;
        Some(Line {
            no: self.no,
            text: head.trim(),
        })
    }

    /// The next line that is not blank.
    pub(crate) fn next_nonblank(&mut self) -> Option<Line<'a>> {
        while let Some(line) = self.next_line() {
            if !line.text.is_empty() {
                return Some(line);
            }
        }
        None
    }

    /// Gives a line back so that the next call returns it again.
    pub(crate) fn push_back(&mut self, line: Line<'a>) {
        self.pending = Some(line);
    }

    /// Number of the last line handed out (0 before the first).
    pub(crate) fn line_number(&self) -> usize {
        self.no
    }

    /// Bytes not yet handed out: an upper bound on what the rest of the file can hold, used to
    /// refuse absurd sizes before allocating for them.
    pub(crate) fn remaining_bytes(&self) -> usize {
        self.rest.len() + self.pending.map_or(0, |l| l.text.len() + 1)
    }

    /// Lines not yet handed out (counting a final unterminated one).
    pub(crate) fn remaining_lines(&self) -> usize {
        let newlines = self.rest.bytes().filter(|&b| b == b'\n').count();
        let unterminated = usize::from(!self.rest.is_empty() && !self.rest.ends_with('\n'));
        newlines + unterminated + usize::from(self.pending.is_some())
    }
}

/// A TSPLIB keyword: an uppercase letter, then uppercase letters, digits and underscores.
fn keyword(input: &str) -> IResult<&str, &str> {
    recognize(pair(
        satisfy(|c| c.is_ascii_uppercase()),
        take_while(|c: char| c.is_ascii_uppercase() || c.is_ascii_digit() || c == '_'),
    ))(input)
}

/// A line that starts with a keyword, split into its parts.
#[derive(Clone, Copy, Debug)]
pub(crate) struct KeyLine<'a> {
    pub key: &'a str,
    /// `Some(value)` (trimmed, possibly empty) when a colon followed the keyword.
    pub value: Option<&'a str>,
    /// Whatever followed the keyword when there was no colon; empty on a well-formed section or
    /// `EOF` line.
    pub trailing: &'a str,
}

fn key_line(input: &str) -> IResult<&str, KeyLine<'_>> {
    let (rest, key) = keyword(input)?;
    let (rest, _) = space0(rest)?;
    let (rest, colon) = opt(char(':'))(rest)?;
    let line = match colon {
        Some(_) => KeyLine {
            key,
            value: Some(rest.trim()),
            trailing: "",
        },
        None => KeyLine {
            key,
            value: None,
            trailing: rest.trim(),
        },
    };
    Ok(("", line))
}

/// Splits `KEY : VALUE`, `KEY: VALUE`, `KEY :VALUE` or a bare `KEY`; `None` when the line does
/// not start with a whole keyword (data lines start with a digit or a sign).
pub(crate) fn parse_key_line(text: &str) -> Option<KeyLine<'_>> {
    let (_, line) = key_line(text).ok()?;
    // "NaN 1 2" starts with an uppercase letter but is no keyword: the keyword must end at a
    // separator.
    let after = &text[line.key.len()..];
    match after.chars().next() {
        None => Some(line),
        Some(c) if c.is_whitespace() || c == ':' => Some(line),
        Some(_) => None,
    }
}

/// Length of the whitespace before the next token and of that token. Works on bytes: the
/// separators TSPLIB uses are ASCII, and byte scanning keeps 10^8-token matrices fast.
fn token_span(input: &[u8]) -> IResult<&[u8], (usize, usize)> {
    let (rest, gap) = take_while(|b: u8| b.is_ascii_whitespace())(input)?;
    let (rest, tok) = take_till1(|b: u8| b.is_ascii_whitespace())(rest)?;
    Ok((rest, (gap.len(), tok.len())))
}

/// The tokens of one line.
pub(crate) struct Tokens<'a> {
    rest: &'a str,
}

impl<'a> Tokens<'a> {
    pub(crate) fn new(text: &'a str) -> Self {
        Tokens { rest: text }
    }
}

impl<'a> Iterator for Tokens<'a> {
    type Item = &'a str;
    fn next(&mut self) -> Option<&'a str> {
        let (_, (gap, len)) = token_span(self.rest.as_bytes()).ok()?;
        // ASCII whitespace bytes are never inside a multi-byte character, so both cuts fall on
        // character boundaries; `get` keeps that an invariant rather than an assumption.
        let tok = self.rest.get(gap..gap + len)?;
        self.rest = self.rest.get(gap + len..)?;
        Some(tok)
    }
}

fn sign(input: &[u8]) -> IResult<&[u8], &[u8]> {
    take_while_m_n(0, 1, |b: u8| b == b'+' || b == b'-')(input)
}

/// `[+-]digits`, as (is negative, the digits).
fn integer_parts(input: &[u8]) -> IResult<&[u8], (bool, &[u8])> {
    map(pair(sign, digit1), |(s, d): (&[u8], &[u8])| (s == b"-", d))(input)
}

/// The value of ASCII `digits`, negated if asked; `None` outside `i64`. Accumulating towards
/// the sign keeps `i64::MIN` representable.
fn accumulate(negative: bool, digits: &[u8]) -> Option<i64> {
    let mut v: i64 = 0;
    for &d in digits {
        let d = i64::from(d - b'0');
        v = v.checked_mul(10)?;
        v = if negative {
            v.checked_sub(d)?
        } else {
            v.checked_add(d)?
        };
    }
    Some(v)
}

/// `[+-](digits[.digits*] | .digits)([eE][+-]digits)?`: what TSPLIB files write for
/// coordinates, e.g. `1.22430e+03`. Deliberately no `nan` or `inf`.
fn float_text(input: &[u8]) -> IResult<&[u8], &[u8]> {
    recognize(tuple((
        sign,
        alt((
            recognize(pair(digit1, opt(pair(char('.'), digit0)))),
            recognize(pair(char('.'), digit1)),
        )),
        opt(tuple((
            take_while_m_n(1, 1, |b: u8| b == b'e' || b == b'E'),
            sign,
            digit1,
        ))),
    )))(input)
}

/// Why a token is not the number wanted.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum NumError {
    /// Not a number at all.
    NotNumber,
    /// `nan`, `inf`, or a literal too large for `f64`.
    NotFinite,
    /// A float with a fractional part where an integer is needed.
    NotIntegral,
    /// An integer outside `i64`.
    Overflow,
}

fn names_non_finite(tok: &str) -> bool {
    let t = tok.trim_start_matches(['+', '-']).to_ascii_lowercase();
    t == "nan" || t == "inf" || t == "infinity"
}

/// A finite `f64`.
pub(crate) fn parse_f64(tok: &str) -> Result<f64, NumError> {
    if all_consuming(float_text)(tok.as_bytes()).is_err() {
        return Err(if names_non_finite(tok) {
            NumError::NotFinite
        } else {
            NumError::NotNumber
        });
    }
    let v: f64 = tok.parse().map_err(|_| NumError::NotNumber)?;
    if v.is_finite() {
        Ok(v)
    } else {
        Err(NumError::NotFinite)
    }
}

/// An `i64`; a float literal is accepted when it is integral (`12.0`, `1.2e+03`), since some
/// writers print integer data that way.
pub(crate) fn parse_i64(tok: &str) -> Result<i64, NumError> {
    if let Ok((_, (negative, digits))) = all_consuming(integer_parts)(tok.as_bytes()) {
        return accumulate(negative, digits).ok_or(NumError::Overflow);
    }
    let v = parse_f64(tok)?;
    if v.fract() != 0.0 {
        return Err(NumError::NotIntegral);
    }
    // 2^63 itself is not an i64; every f64 below it in magnitude converts exactly.
    const LIMIT: f64 = 9_223_372_036_854_775_808.0;
    if !(-LIMIT..LIMIT).contains(&v) {
        return Err(NumError::Overflow);
    }
    Ok(v as i64)
}

/// A count or node id: plain decimal digits, optionally after `+`.
pub(crate) fn parse_whole(tok: &str) -> Result<usize, NumError> {
    let digits = tok.strip_prefix('+').unwrap_or(tok);
    if all_consuming(digit1::<&[u8], nom::error::Error<&[u8]>>)(digits.as_bytes()).is_err() {
        return Err(NumError::NotNumber);
    }
    digits.parse().map_err(|_| NumError::Overflow)
}

/// A token quoted for an error message, cut short so that a megabyte of garbage does not end up
/// in one.
pub(crate) fn shown(tok: &str) -> String {
    const MAX: usize = 40;
    match tok.char_indices().nth(MAX) {
        Some((at, _)) => format!("{:?}...", &tok[..at]),
        None => format!("{tok:?}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn key_lines_in_every_spacing() {
        for text in [
            "NAME : x y",
            "NAME: x y",
            "NAME :x y",
            "NAME:x y",
            "NAME\t:\tx y",
        ] {
            let k = parse_key_line(text).unwrap();
            assert_eq!((k.key, k.value), ("NAME", Some("x y")), "{text}");
        }
        let k = parse_key_line("EOF").unwrap();
        assert_eq!((k.key, k.value, k.trailing), ("EOF", None, ""));
        assert!(parse_key_line("NaN 1 2").is_none());
        assert!(parse_key_line("1 2 3").is_none());
        assert!(parse_key_line("name : x").is_none());
    }

    #[test]
    fn numbers() {
        assert_eq!(parse_f64("1.22430e+03"), Ok(1224.3));
        assert_eq!(parse_f64("-.5"), Ok(-0.5));
        assert_eq!(parse_f64("+7."), Ok(7.0));
        assert_eq!(parse_f64("nan"), Err(NumError::NotFinite));
        assert_eq!(parse_f64("-Infinity"), Err(NumError::NotFinite));
        assert_eq!(parse_f64("1e400"), Err(NumError::NotFinite));
        assert_eq!(parse_f64("1.2.3"), Err(NumError::NotNumber));
        assert_eq!(parse_f64("abc"), Err(NumError::NotNumber));
        assert_eq!(parse_f64("e5"), Err(NumError::NotNumber));
        assert_eq!(parse_i64("-42"), Ok(-42));
        assert_eq!(parse_i64("+42"), Ok(42));
        assert_eq!(parse_i64("12.0"), Ok(12));
        assert_eq!(parse_i64("1.2e+03"), Ok(1200));
        assert_eq!(parse_i64("12.5"), Err(NumError::NotIntegral));
        assert_eq!(parse_i64("9223372036854775807"), Ok(i64::MAX));
        assert_eq!(parse_i64("9223372036854775808"), Err(NumError::Overflow));
        assert_eq!(parse_i64("9.3e18"), Err(NumError::Overflow));
        assert_eq!(parse_i64("-9223372036854775808"), Ok(i64::MIN));
        assert_eq!(parse_whole("+17"), Ok(17));
        assert_eq!(parse_whole("-1"), Err(NumError::NotNumber));
        assert_eq!(parse_whole("1e3"), Err(NumError::NotNumber));
        assert_eq!(
            parse_whole("99999999999999999999999"),
            Err(NumError::Overflow)
        );
    }

    #[test]
    fn lines_strip_bom_and_cr() {
        let mut l = Lines::new("\u{feff}A\r\n\r\nB  \r\nC");
        assert_eq!(l.remaining_lines(), 4);
        let a = l.next_nonblank().unwrap();
        assert_eq!((a.no, a.text), (1, "A"));
        let b = l.next_nonblank().unwrap();
        assert_eq!((b.no, b.text), (3, "B"));
        l.push_back(b);
        assert_eq!(l.next_line().unwrap().no, 3);
        assert_eq!(l.next_line().unwrap().text, "C");
        assert!(l.next_line().is_none());
    }

    #[test]
    fn tokens_split_on_any_whitespace() {
        let t: Vec<_> = Tokens::new(" 1\t22  333 ").collect();
        assert_eq!(t, ["1", "22", "333"]);
    }

    #[test]
    fn shown_cuts_long_tokens() {
        assert_eq!(shown("abc"), "\"abc\"");
        assert!(shown(&"x".repeat(1000)).len() < 60);
    }
}
