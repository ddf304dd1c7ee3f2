//! Exact rational numbers for coefficients, charges, site counts and slopes.
//!
//! Everything the domain defines exactly is a `Q` (a reduced `i64` fraction).
//! Arithmetic goes through the checked helpers here, so an overflow becomes an
//! error the caller reports instead of a wrapped, silently wrong number.

#![deny(clippy::arithmetic_side_effects)]

use num_bigint::BigInt;
use num_integer::Integer;
use num_rational::{BigRational, Ratio};
use num_traits::ToPrimitive;
use std::cmp::Ordering;
use std::fmt;

/// An exact rational number: a reduced `i64` fraction with a positive
/// denominator.
///
/// `Q` has no arithmetic operators on purpose. Every sum, product or
/// quotient goes through a checked method (`checked_add`, [`sum`], ...)
/// that returns [`Overflow`] when the exact result does not fit, so a
/// wrapped number cannot reach the user and unchecked arithmetic does not
/// compile:
///
/// ```compile_fail
/// use lacuna::base::number::int;
/// let _ = int(1) + int(2); // no `Add` for `Q`
/// ```
///
/// ```compile_fail
/// use lacuna::base::number::int;
/// let _ = int(2) * int(3); // no `Mul` for `Q`
/// ```
///
/// ```compile_fail
/// use lacuna::base::number::{Q, int};
/// let _: Q = [int(1), int(2)].into_iter().sum(); // no `Sum` for `Q`
/// ```
///
/// ```compile_fail
/// use lacuna::base::number::int;
/// let _ = -int(1); // no `Neg` for `Q`
/// ```
///
/// ```
/// use lacuna::base::number::{Overflow, int};
/// assert_eq!(int(1).checked_add(int(2)), Ok(int(3)));
/// assert_eq!(int(i64::MAX).checked_add(int(1)), Err(Overflow));
/// ```
///
/// With the `serde` feature a `Q` serializes as its exact text, the one
/// [`to_plain`] writes: `"1/2"`, `"-3"`, `"0"`. It never becomes a
/// floating-point number, so `1/3` keeps its value through JSON, and
/// [`parse`] reads the text back to the same `Q` (all but a numerator of
/// exactly `i64::MIN`, whose magnitude the reader refuses as too large).
#[derive(Clone, Copy)]
pub struct Q(Ratio<i64>);

/// A checked arithmetic step overflowed `i64` numerators or denominators.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Overflow;

impl fmt::Display for Overflow {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("a number grew beyond the exact range (about 9.2e18)")
    }
}

impl std::error::Error for Overflow {}

/// `n/d` reduced, with a positive denominator, if it fits in `i64` parts.
/// A negative `d` comes only from products of two `i64` (far from
/// `i128::MIN`), so the negations cannot overflow; `n` may be `i128::MIN`
/// only with a positive `d` (from [`sum`]), and num-integer's gcd handles
/// that case without overflow (the gcd is then a power of two).
fn reduce_i128(n: i128, d: i128) -> Result<Q, Overflow> {
    if d == 0 {
        return Err(Overflow);
    }
    // The common case in i64, whose gcd is cheaper; i64::MIN is left to the
    // wide path (its size has no i64 negative).
    if let (Ok(n), Ok(d)) = (i64::try_from(n), i64::try_from(d)) {
        if n != i64::MIN && d != i64::MIN {
            let g = n.gcd(&d);
            let (mut n, mut d) = (
                n.checked_div(g).ok_or(Overflow)?,
                d.checked_div(g).ok_or(Overflow)?,
            );
            if d < 0 {
                n = n.checked_neg().ok_or(Overflow)?;
                d = d.checked_neg().ok_or(Overflow)?;
            }
            return Ok(Q(Ratio::new_raw(n, d)));
        }
    }
    let g = n.gcd(&d);
    // g > 0 because d != 0; the quotients are exact.
    let (mut n, mut d) = (
        n.checked_div(g).ok_or(Overflow)?,
        d.checked_div(g).ok_or(Overflow)?,
    );
    if d < 0 {
        n = n.checked_neg().ok_or(Overflow)?;
        d = d.checked_neg().ok_or(Overflow)?;
    }
    let n = i64::try_from(n).map_err(|_| Overflow)?;
    let d = i64::try_from(d).map_err(|_| Overflow)?;
    Ok(Q(Ratio::new_raw(n, d)))
}

impl Q {
    /// Zero.
    pub const ZERO: Q = Q(Ratio::new_raw(0, 1));
    /// One.
    pub const ONE: Q = Q(Ratio::new_raw(1, 1));

    /// `numer/denom` reduced. For constants written in the code: a zero
    /// denominator is a programming error and panics. Numbers from input go
    /// through [`Q::checked_new`] or [`parse`].
    pub fn new(numer: i64, denom: i64) -> Q {
        match Q::checked_new(numer, denom) {
            Some(q) => q,
            None => panic!("Q::new({numer}, {denom}): zero denominator or out of range"),
        }
    }

    /// `numer/denom` reduced, or `None` for a zero denominator or a result
    /// beyond the `i64` range (`i64::MIN / -1`).
    pub fn checked_new(numer: i64, denom: i64) -> Option<Q> {
        if denom == 1 {
            return Some(Q::from_integer(numer));
        }
        reduce_i128(i128::from(numer), i128::from(denom)).ok()
    }

    /// An integer.
    pub const fn from_integer(n: i64) -> Q {
        Q(Ratio::new_raw(n, 1))
    }

    /// Zero.
    pub const fn zero() -> Q {
        Q::ZERO
    }

    /// One.
    pub const fn one() -> Q {
        Q::ONE
    }

    /// The numerator (carries the sign).
    pub fn numer(&self) -> &i64 {
        self.0.numer()
    }

    /// The denominator, always positive.
    pub fn denom(&self) -> &i64 {
        self.0.denom()
    }

    pub fn is_integer(&self) -> bool {
        *self.denom() == 1
    }

    pub fn is_zero(&self) -> bool {
        *self.numer() == 0
    }

    pub fn is_one(&self) -> bool {
        *self == Q::ONE
    }

    pub fn is_positive(&self) -> bool {
        *self.numer() > 0
    }

    pub fn is_negative(&self) -> bool {
        *self.numer() < 0
    }

    /// -1, 0 or 1.
    pub fn signum(&self) -> Q {
        Q::from_integer(self.numer().signum())
    }

    /// The integer part, rounded toward zero (never overflows: the
    /// denominator is positive).
    pub fn to_integer(&self) -> i64 {
        self.0.to_integer()
    }

    /// The nearest `f64` (`None` never happens for `i64` parts, kept for
    /// the shape of `ToPrimitive`).
    pub fn to_f64(&self) -> Option<f64> {
        self.0.to_f64()
    }

    /// The same value as a big rational, for exact work beyond `i64`.
    pub fn to_big(&self) -> BigRational {
        BigRational::new_raw(BigInt::from(*self.numer()), BigInt::from(*self.denom()))
    }

    /// A big rational as a `Q`, or `Overflow` when its reduced parts do not
    /// fit in `i64`.
    pub fn from_big(r: &BigRational) -> Result<Q, Overflow> {
        let r = r.reduced();
        let n = r.numer().to_i64().ok_or(Overflow)?;
        let d = r.denom().to_i64().ok_or(Overflow)?;
        reduce_i128(i128::from(n), i128::from(d))
    }

    /// `self + rhs`, or `Overflow`.
    pub fn checked_add(self, rhs: Q) -> Result<Q, Overflow> {
        self.cross(rhs, i64::checked_add, i128::checked_add)
    }

    /// `self - rhs`, or `Overflow`.
    pub fn checked_sub(self, rhs: Q) -> Result<Q, Overflow> {
        self.cross(rhs, i64::checked_sub, i128::checked_sub)
    }

    /// `op` on two integers in `i64`, when both are integers: the common
    /// case, with no gcd work.
    fn integers(self, rhs: Q, op: fn(i64, i64) -> Option<i64>) -> Option<Result<Q, Overflow>> {
        (self.is_integer() && rhs.is_integer()).then(|| {
            op(*self.numer(), *rhs.numer())
                .map(Q::from_integer)
                .ok_or(Overflow)
        })
    }

    /// `a/b ∘ c/d = (a·d ∘ c·b) / (b·d)` for `∘` = + or −: in `i64` when
    /// every step fits, else in `i128`, where |a·d|, |c·b| < 2^126 so
    /// neither the products nor their sum or difference overflow.
    fn cross(
        self,
        rhs: Q,
        narrow: fn(i64, i64) -> Option<i64>,
        wide: fn(i128, i128) -> Option<i128>,
    ) -> Result<Q, Overflow> {
        if let Some(result) = self.integers(rhs, narrow) {
            return result;
        }
        if let Some((n, den)) = self.narrow_cross(rhs, narrow) {
            return reduce_i128(n.into(), den.into());
        }
        let (a, b) = self.wide();
        let (c, d) = rhs.wide();
        let n = a
            .checked_mul(d)
            .and_then(|x| c.checked_mul(b).and_then(|y| wide(x, y)));
        reduce_i128(n.ok_or(Overflow)?, b.checked_mul(d).ok_or(Overflow)?)
    }

    /// `(a·d ∘ c·b, b·d)` in i64 for `a/b` and `c/d`, when every step fits.
    fn narrow_cross(self, rhs: Q, op: fn(i64, i64) -> Option<i64>) -> Option<(i64, i64)> {
        let (a, b) = (*self.numer(), *self.denom());
        let (c, d) = (*rhs.numer(), *rhs.denom());
        let n = op(a.checked_mul(d)?, c.checked_mul(b)?)?;
        Some((n, b.checked_mul(d)?))
    }

    /// `self * rhs`, or `Overflow`.
    pub fn checked_mul(self, rhs: Q) -> Result<Q, Overflow> {
        if let Some(result) = self.integers(rhs, i64::checked_mul) {
            return result;
        }
        let (a, b) = self.wide();
        let (c, d) = rhs.wide();
        reduce_i128(
            a.checked_mul(c).ok_or(Overflow)?,
            b.checked_mul(d).ok_or(Overflow)?,
        )
    }

    /// `self / rhs`, or `Overflow` (also for division by zero).
    pub fn checked_div(self, rhs: Q) -> Result<Q, Overflow> {
        if self.is_integer() && rhs.is_integer() {
            // Exact integer quotients stay in i64 (checked: MIN / -1).
            let (a, c) = (*self.numer(), *rhs.numer());
            if a.checked_rem(c) == Some(0) {
                return a.checked_div(c).map(Q::from_integer).ok_or(Overflow);
            }
        }
        let (a, b) = self.wide();
        let (c, d) = rhs.wide();
        reduce_i128(
            a.checked_mul(d).ok_or(Overflow)?,
            b.checked_mul(c).ok_or(Overflow)?,
        )
    }

    /// `-self`, or `Overflow` for `i64::MIN`.
    pub fn checked_neg(self) -> Result<Q, Overflow> {
        let n = self.numer().checked_neg().ok_or(Overflow)?;
        Ok(Q(Ratio::new_raw(n, *self.denom())))
    }

    /// `|self|`, or `Overflow` for `i64::MIN`.
    pub fn checked_abs(self) -> Result<Q, Overflow> {
        if self.is_negative() {
            self.checked_neg()
        } else {
            Ok(self)
        }
    }

    /// `1/self`, or `Overflow` for zero and for `i64::MIN` as numerator.
    pub fn checked_recip(self) -> Result<Q, Overflow> {
        Q::ONE.checked_div(self)
    }

    /// `self * n` for an integer `n`, or `Overflow`.
    pub fn checked_mul_int(self, n: i64) -> Result<Q, Overflow> {
        self.checked_mul(Q::from_integer(n))
    }

    /// The integer part, rounded toward zero, as a `Q`.
    pub fn trunc(&self) -> Q {
        Q::from_integer(self.to_integer())
    }

    /// The greatest integer not above `self`, as a `Q`.
    pub fn floor(&self) -> Q {
        // div_floor by a positive denominator cannot overflow.
        Q::from_integer(self.numer().div_floor(self.denom()))
    }

    /// The least integer not below `self`, as a `Q`.
    pub fn ceil(&self) -> Q {
        // -(-n div_floor d) overflows only for n = MIN with d = 1, an integer.
        if self.is_integer() {
            return *self;
        }
        Q::from_integer(self.numer().div_floor(self.denom()).saturating_add(1))
    }

    fn wide(self) -> (i128, i128) {
        (i128::from(*self.numer()), i128::from(*self.denom()))
    }
}

impl Default for Q {
    fn default() -> Q {
        Q::ZERO
    }
}

impl From<i64> for Q {
    fn from(n: i64) -> Q {
        Q::from_integer(n)
    }
}

// Always reduced with a positive denominator: equal values have equal parts,
// so equality and hashing compare the parts (no arithmetic at all).
impl PartialEq for Q {
    fn eq(&self, other: &Q) -> bool {
        self.numer() == other.numer() && self.denom() == other.denom()
    }
}

impl Eq for Q {}

impl std::hash::Hash for Q {
    fn hash<H: std::hash::Hasher>(&self, state: &mut H) {
        self.numer().hash(state);
        self.denom().hash(state);
    }
}

impl Ord for Q {
    fn cmp(&self, other: &Q) -> Ordering {
        let (a, b) = self.wide();
        let (c, d) = other.wide();
        // Positive denominators; the cross products fit in i128.
        let left = a.checked_mul(d).unwrap_or_default();
        let right = c.checked_mul(b).unwrap_or_default();
        left.cmp(&right)
    }
}

impl PartialOrd for Q {
    fn partial_cmp(&self, other: &Q) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl fmt::Debug for Q {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Debug::fmt(&self.0, f)
    }
}

impl fmt::Display for Q {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(&self.0, f)
    }
}

/// The exact text (`"1/2"`, `"-3"`), never a float: see [`Q`].
#[cfg(feature = "serde")]
impl serde::Serialize for Q {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&to_plain(*self))
    }
}

/// The exact sum of `items`, or `Overflow` when it does not fit in `i64`
/// parts. Intermediate sums are kept in `i128` and then in big integers, so
/// the order of the terms never matters: the sum fails only when the result
/// itself is out of range.
pub fn sum<I: IntoIterator<Item = Q>>(items: I) -> Result<Q, Overflow> {
    let mut items = items.into_iter();
    // Fast path: an i128 fraction.
    let (mut n, mut d): (i128, i128) = (0, 1);
    for q in items.by_ref() {
        let (a, b) = q.wide();
        let step = if d == 1 && b == 1 {
            n.checked_add(a).map(|n| (n, 1))
        } else {
            add_i128(n, d, a, b)
        };
        match step {
            Some((n2, d2)) => (n, d) = (n2, d2),
            None => {
                // Continue exactly in big integers from here on.
                let mut big = BigRational::new(BigInt::from(n), BigInt::from(d));
                big += q.to_big();
                for q in items {
                    big += q.to_big();
                }
                return Q::from_big(&big);
            }
        }
    }
    reduce_i128(n, d)
}

/// The exact sum of fallible terms: the first `Err` among them, else
/// [`sum`] of the values.
pub fn sum_checked<I: IntoIterator<Item = Result<Q, Overflow>>>(items: I) -> Result<Q, Overflow> {
    let mut failed = None;
    let total = sum(items
        .into_iter()
        .map_while(|r| r.map_err(|e| failed = Some(e)).ok()));
    match failed {
        Some(e) => Err(e),
        None => total,
    }
}

/// `n/d + a/b` in `i128`, reduced, or `None` when it leaves `i128`.
fn add_i128(n: i128, d: i128, a: i128, b: i128) -> Option<(i128, i128)> {
    let g = d.gcd(&b);
    let l = d.checked_div(g)?.checked_mul(b)?;
    let x = n.checked_mul(l.checked_div(d)?)?;
    let y = a.checked_mul(l.checked_div(b)?)?;
    let s = x.checked_add(y)?;
    let h = s.gcd(&l);
    Some((s.checked_div(h)?, l.checked_div(h)?))
}

/// Whether `a·b = c·d` exactly, whatever the sizes (products that leave the
/// `i64` range are compared as big rationals).
pub fn products_equal(a: Q, b: Q, c: Q, d: Q) -> bool {
    match (a.checked_mul(b), c.checked_mul(d)) {
        (Ok(x), Ok(y)) => x == y,
        // Checked products are exact whenever they fit: one fits and the
        // other does not, so they differ.
        (Ok(_), Err(_)) | (Err(_), Ok(_)) => false,
        (Err(_), Err(_)) => big_mul(a, b) == big_mul(c, d),
    }
}

/// `a·b` as a big rational: never overflows.
fn big_mul(a: Q, b: Q) -> BigRational {
    a.to_big() * b.to_big()
}

/// `a + b`, or `Overflow`.
pub fn add(a: Q, b: Q) -> Result<Q, Overflow> {
    a.checked_add(b)
}

/// `a - b`, or `Overflow`.
pub fn sub(a: Q, b: Q) -> Result<Q, Overflow> {
    a.checked_sub(b)
}

/// `a * b`, or `Overflow`.
pub fn mul(a: Q, b: Q) -> Result<Q, Overflow> {
    a.checked_mul(b)
}

/// `a / b`, or `Overflow` (also for `b` = 0).
pub fn div(a: Q, b: Q) -> Result<Q, Overflow> {
    a.checked_div(b)
}

/// `-a`, or `Overflow`.
pub fn neg(a: Q) -> Result<Q, Overflow> {
    a.checked_neg()
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

/// Writes `q` for people: `3`, `−1/2`, `0`, with a true minus sign (U+2212).
/// Machine output (JSON, CSV, reaction text) keeps [`to_plain`]'s ASCII `-`.
pub fn minus_text(q: Q) -> String {
    let plain = to_plain(q);
    match plain.strip_prefix('-') {
        Some(magnitude) => format!("−{magnitude}"),
        None => plain,
    }
}

/// Writes `q` for people with its sign always shown: `+2`, `−1/2`, `0`
/// (a true minus sign, U+2212). For charges, changes and slopes.
pub fn signed(q: Q) -> String {
    if q.is_positive() {
        format!("+{}", to_plain(q))
    } else {
        minus_text(q)
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
        n.checked_div(d).map_err(|_| NumberError::TooLarge)?
    } else {
        parse_decimal(body)?
    };
    if negative {
        value.checked_neg().map_err(|_| NumberError::TooLarge)
    } else {
        Ok(value)
    }
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
            .and_then(|n| n.checked_add(i64::from(char::from(b).to_digit(10)?)))
            .ok_or(NumberError::TooLarge)?;
    }
    let denom = u32::try_from(frac.len())
        .ok()
        .and_then(|len| 10i64.checked_pow(len))
        .ok_or(NumberError::TooLarge)?;
    Q::checked_new(numer, denom).ok_or(NumberError::TooLarge)
}

/// Why a number could not be read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
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
    fn human_text_uses_a_true_minus_sign() {
        // source: Unicode Standard, U+2212 MINUS SIGN (the typographic minus
        // for people; ASCII hyphen-minus stays in machine output).
        assert_eq!(signed(Q::from_integer(2)), "+2");
        assert_eq!(signed(Q::new(-1, 2)), "\u{2212}1/2");
        assert_eq!(signed(Q::from_integer(0)), "0");
        assert_eq!(minus_text(Q::from_integer(2)), "2");
        assert_eq!(minus_text(Q::new(-3, 4)), "\u{2212}3/4");
        assert_eq!(
            minus_text(Q::from_integer(i64::MIN)),
            "\u{2212}9223372036854775808"
        );
        assert_eq!(to_plain(Q::new(-1, 2)), "-1/2");
    }

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

    // The edges of the i64 range. source: common practice (two's complement
    // i64 holds -2^63 ..= 2^63 - 1, so -i64::MIN does not exist).
    #[test]
    fn overflow_at_the_edges() {
        let max = int(i64::MAX);
        let min = int(i64::MIN);
        assert_eq!(add(max, int(1)), Err(Overflow));
        assert_eq!(add(max, int(0)), Ok(max));
        assert_eq!(sub(min, int(1)), Err(Overflow));
        assert_eq!(sub(min, int(0)), Ok(min));
        assert_eq!(add(min, max), Ok(int(-1)));
        assert_eq!(neg(min), Err(Overflow));
        assert_eq!(neg(max), Ok(int(-i64::MAX)));
        assert_eq!(min.checked_abs(), Err(Overflow));
        assert_eq!(mul(min, int(-1)), Err(Overflow));
        assert_eq!(mul(min, int(1)), Ok(min));
        assert_eq!(div(min, int(-1)), Err(Overflow));
        assert_eq!(div(int(1), int(0)), Err(Overflow));
        assert_eq!(min.checked_recip(), Err(Overflow));
        assert_eq!(max.checked_recip(), Ok(Q::new(1, i64::MAX)));
        // Fractions whose cross products leave i64 but whose result fits:
        // exact, not an error.
        let third = Q::new(i64::MAX, 3 * 1_000_000_007);
        assert_eq!(sub(third, third), Ok(int(0)));
        assert_eq!(
            add(Q::new(1, 3_037_000_499), Q::new(1, 3_037_000_499)),
            Ok(Q::new(2, 3_037_000_499))
        );
        // Denominators whose product leaves i64: an error, never a wrap.
        assert_eq!(
            add(Q::new(1, 3_037_000_499), Q::new(1, 3_037_000_507)),
            Err(Overflow)
        );
        assert_eq!(Q::checked_new(i64::MIN, -1), None);
        assert_eq!(Q::checked_new(1, 0), None);
        assert_eq!(Q::checked_new(6, -4), Some(Q::new(-3, 2)));
    }

    #[test]
    fn sums_fail_only_when_the_result_does_not_fit() {
        let max = int(i64::MAX);
        // The partial sum leaves i64, the total comes back: still exact.
        assert_eq!(sum([max, int(1), int(-1)]), Ok(max));
        assert_eq!(sum([max, max, int(-i64::MAX)]), Ok(max));
        assert_eq!(sum([max, int(1)]), Err(Overflow));
        // The measured case: two site counts of 2^62 add up to 2^63.
        let half = int(4_611_686_018_427_387_904);
        assert_eq!(sum([half, half]), Err(Overflow));
        assert_eq!(sum([half, half, int(-1)]), Ok(max));
        assert_eq!(sum(std::iter::empty()), Ok(int(0)));
        assert_eq!(
            sum_checked([Ok(int(1)), Err(Overflow), Ok(int(2))]),
            Err(Overflow)
        );
    }

    #[test]
    fn ordering_is_exact_near_the_edges() {
        assert!(Q::new(i64::MAX, i64::MAX - 1) < Q::new(i64::MAX - 1, i64::MAX - 2));
        assert!(Q::new(i64::MAX - 1, i64::MAX) < int(1));
        assert!(int(i64::MIN) < Q::new(i64::MIN + 1, 1));
        assert!(Q::new(-1, i64::MAX) > int(i64::MIN));
        assert!(products_equal(int(i64::MAX), int(2), int(2), int(i64::MAX)));
        assert!(!products_equal(
            int(i64::MAX),
            int(2),
            int(i64::MAX),
            int(3)
        ));
    }

    fn big(q: Q) -> BigRational {
        q.to_big()
    }

    /// Values near the edges as often as small ones.
    fn any_q() -> impl proptest::strategy::Strategy<Value = Q> {
        use proptest::prelude::*;
        let part = prop_oneof![
            -1000i64..1000,
            Just(i64::MAX),
            Just(i64::MIN),
            (i64::MAX - 1000)..=i64::MAX,
            i64::MIN..(i64::MIN + 1000),
            any::<i64>(),
        ];
        let denom = prop_oneof![Just(1i64), 1i64..100, 1i64..=i64::MAX];
        (part, denom).prop_filter_map("in range", |(n, d)| Q::checked_new(n, d))
    }

    proptest::proptest! {
        // source: num-bigint arbitrary-precision arithmetic (the reference
        // never overflows, so it gives the true sum to compare with).
        #[test]
        fn checked_sums_match_big_integer_sums(items in proptest::collection::vec(any_q(), 0..6)) {
            let mut reference = BigRational::from_integer(BigInt::from(0));
            for q in &items {
                reference += big(*q);
            }
            let fits = reference.numer().to_i64().is_some() && reference.denom().to_i64().is_some();
            match sum(items.iter().copied()) {
                Ok(total) => {
                    proptest::prop_assert!(fits);
                    proptest::prop_assert_eq!(big(total), reference);
                }
                Err(Overflow) => proptest::prop_assert!(!fits, "{} fits", reference),
            }
        }

        // source: num-bigint arbitrary-precision arithmetic.
        #[test]
        fn checked_steps_match_big_integer_steps(a in any_q(), b in any_q()) {
            let fits = |r: &BigRational| r.numer().to_i64().is_some() && r.denom().to_i64().is_some();
            let cases = [
                (a.checked_add(b), Some(big(a) + big(b))),
                (a.checked_sub(b), Some(big(a) - big(b))),
                (a.checked_mul(b), Some(big(a) * big(b))),
                (a.checked_div(b), (!b.is_zero()).then(|| big(a) / big(b))),
                (a.checked_neg(), Some(-big(a))),
            ];
            for (got, want) in cases {
                match (got, want) {
                    (Ok(q), Some(r)) => proptest::prop_assert_eq!(big(q), r),
                    (Err(Overflow), Some(r)) => proptest::prop_assert!(!fits(&r), "{} fits", r),
                    (Err(Overflow), None) => {}
                    (Ok(q), None) => proptest::prop_assert!(false, "{:?} divided by zero", q),
                }
            }
            proptest::prop_assert_eq!(a.cmp(&b), big(a).cmp(&big(b)));
        }
    }

    #[test]
    fn coefficient_text_forms() {
        assert_eq!(coefficient_text(int(1), true), "");
        assert_eq!(coefficient_text(Q::new(1, 2), true), "½");
        assert_eq!(coefficient_text(Q::new(1, 2), false), "1/2");
        assert_eq!(coefficient_text(int(3), false), "3");
    }
}
