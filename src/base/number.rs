//! Exact rational numbers for coefficients, charges, site counts and slopes.
//!
//! Everything the domain defines exactly is a `Q` (a reduced `i64` fraction).
//! Arithmetic goes through the checked helpers here, so an overflow becomes an
//! error the caller reports instead of a wrapped, silently wrong number.

use num_rational::Ratio;
use num_traits::{CheckedAdd, CheckedDiv, CheckedMul, CheckedSub, Zero};
use std::fmt;

/// An exact rational number.
pub type Q = Ratio<i64>;

/// A checked arithmetic step overflowed `i64` numerators or denominators.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Overflow;

impl fmt::Display for Overflow {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("a number grew beyond the exact range (about 9.2e18)")
    }
}

impl std::error::Error for Overflow {}

/// `a + b`, or `Overflow`.
pub fn add(a: Q, b: Q) -> Result<Q, Overflow> {
    // Integers are the common case; skip the gcd work for them.
    if a.is_integer() && b.is_integer() {
        return i64::checked_add(*a.numer(), *b.numer())
            .map(Q::from_integer)
            .ok_or(Overflow);
    }
    a.checked_add(&b).ok_or(Overflow)
}

/// `a - b`, or `Overflow`.
pub fn sub(a: Q, b: Q) -> Result<Q, Overflow> {
    a.checked_sub(&b).ok_or(Overflow)
}

/// `a * b`, or `Overflow`.
pub fn mul(a: Q, b: Q) -> Result<Q, Overflow> {
    if a.is_integer() && b.is_integer() {
        return i64::checked_mul(*a.numer(), *b.numer())
            .map(Q::from_integer)
            .ok_or(Overflow);
    }
    a.checked_mul(&b).ok_or(Overflow)
}

/// An integer as a `Q`.
pub fn int(n: i64) -> Q {
    Q::from_integer(n)
}

/// Writes `q` as `3`, `-1/2`: the form JSON and tables use.
pub fn to_plain(q: Q) -> String {
    if q.is_integer() {
        q.numer().to_string()
    } else {
        format!("{}/{}", q.numer(), q.denom())
    }
}

/// Writes a coefficient as a reader expects it in a reaction: nothing for 1,
/// `½` style glyphs for the common halves and thirds when `unicode` is set.
pub fn coefficient_text(q: Q, unicode: bool) -> String {
    if q == int(1) {
        return String::new();
    }
    if unicode {
        let glyph = match (*q.numer(), *q.denom()) {
            (1, 2) => Some("½"),
            (1, 3) => Some("⅓"),
            (2, 3) => Some("⅔"),
            (1, 4) => Some("¼"),
            (3, 4) => Some("¾"),
            _ => None,
        };
        if let Some(g) = glyph {
            return g.to_string();
        }
    }
    to_plain(q)
}

/// Parses `3`, `-2`, `1/2`, `0.25`, `+5/2` exactly. Decimals become exact
/// fractions (`0.1` is 1/10, never a float).
pub fn parse(text: &str) -> Result<Q, NumberError> {
    let text = text.trim();
    let (negative, body) = match text.as_bytes().first() {
        Some(b'-') => (true, &text[1..]),
        Some(b'+') => (false, &text[1..]),
        _ => (false, text),
    };
    if body.is_empty() {
        return Err(NumberError::Malformed);
    }
    let value = if let Some((n, d)) = body.split_once('/') {
        let n = parse_decimal(n)?;
        let d = parse_decimal(d)?;
        if d.is_zero() {
            return Err(NumberError::DivisionByZero);
        }
        n.checked_div(&d).ok_or(NumberError::TooLarge)?
    } else {
        parse_decimal(body)?
    };
    Ok(if negative { -value } else { value })
}

/// Parses an unsigned decimal such as `12` or `0.125` into an exact fraction.
pub fn parse_decimal(text: &str) -> Result<Q, NumberError> {
    let (whole, frac) = text.split_once('.').unwrap_or((text, ""));
    if (whole.is_empty() && frac.is_empty())
        || !whole.bytes().all(|b| b.is_ascii_digit())
        || !frac.bytes().all(|b| b.is_ascii_digit())
    {
        return Err(NumberError::Malformed);
    }
    let mut numer: i64 = 0;
    for b in whole.bytes().chain(frac.bytes()) {
        numer = numer
            .checked_mul(10)
            .and_then(|n| n.checked_add(i64::from(b - b'0')))
            .ok_or(NumberError::TooLarge)?;
    }
    let denom = u32::try_from(frac.len())
        .ok()
        .and_then(|len| 10i64.checked_pow(len))
        .ok_or(NumberError::TooLarge)?;
    Ok(Q::new(numer, denom))
}

/// Why a number could not be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NumberError {
    Malformed,
    TooLarge,
    DivisionByZero,
}

impl fmt::Display for NumberError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            NumberError::Malformed => "not a number",
            NumberError::TooLarge => "too large to hold exactly (the limit is about 9.2e18)",
            NumberError::DivisionByZero => "a fraction with denominator zero",
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_exact_forms() {
        for (text, n, d) in [
            ("3", 3, 1),
            ("-2", -2, 1),
            ("1/2", 1, 2),
            ("0.25", 1, 4),
            ("+5/2", 5, 2),
            ("0.1", 1, 10),
            ("2.5/5", 1, 2),
        ] {
            assert_eq!(parse(text), Ok(Q::new(n, d)), "{text}");
        }
    }

    #[test]
    fn rejects_bad_numbers() {
        assert_eq!(parse("1/0"), Err(NumberError::DivisionByZero));
        assert_eq!(parse("abc"), Err(NumberError::Malformed));
        assert_eq!(parse(""), Err(NumberError::Malformed));
        assert_eq!(
            parse("10000000000000000000000000000000000000000"),
            Err(NumberError::TooLarge)
        );
    }

    #[test]
    fn checked_ops_report_overflow() {
        assert_eq!(mul(int(i64::MAX), int(2)), Err(Overflow));
        assert_eq!(add(Q::new(1, 2), Q::new(1, 3)), Ok(Q::new(5, 6)));
    }

    #[test]
    fn coefficient_text_forms() {
        assert_eq!(coefficient_text(int(1), true), "");
        assert_eq!(coefficient_text(Q::new(1, 2), true), "½");
        assert_eq!(coefficient_text(Q::new(1, 2), false), "1/2");
        assert_eq!(coefficient_text(int(3), false), "3");
    }
}
