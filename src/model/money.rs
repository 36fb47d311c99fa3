//! Money: exact decimal amounts as they enter and leave the tool.
//!
//! Costs, budgets and unit values are read from decimal text and kept as [`rust_decimal::Decimal`],
//! so that budget sums and the check of a plan against a budget line are exact (no binary
//! rounding). Discounting and root-finding need `f64`; [`Money::to_f64`] is the one place where
//! money becomes a float, and [`Money::from_f64_rounded`] the one place where a computed float
//! becomes money again, rounded half-to-even to the cent.

use rust_decimal::prelude::ToPrimitive;
use rust_decimal::Decimal;
use std::fmt;
use std::ops::{Add, AddAssign, Mul, Neg, Sub};
use std::str::FromStr;

/// An exact amount of money in the scenario's currency.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
pub struct Money(pub Decimal);

/// Why a text is not an amount of money.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum MoneyError {
    Empty,
    /// Thousands separators or currency signs: say what to remove.
    Decorated(String),
    NotANumber(String),
    /// Beyond [`MAX_AMOUNT`] in magnitude.
    TooLarge(String),
}

/// The largest amount of money (in magnitude) any input may hold: 10¹⁵ money units. With it,
/// no sum or product the tool forms from inputs can overflow its exact decimal arithmetic, and
/// every budget line's total fits the selection's whole-cent rows.
pub const MAX_AMOUNT: Decimal = Decimal::from_parts(2_764_472_320, 232_830, 0, false, 0);

impl fmt::Display for MoneyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            MoneyError::Empty => write!(f, "an empty value"),
            MoneyError::Decorated(s) => write!(f, "`{s}` (separators or currency signs)"),
            MoneyError::NotANumber(s) => write!(f, "`{s}`"),
            MoneyError::TooLarge(s) => write!(
                f,
                "`{s}`, beyond the largest supported amount ({})",
                MAX_AMOUNT
            ),
        }
    }
}

impl Money {
    pub const ZERO: Money = Money(Decimal::ZERO);

    /// Parse decimal text such as `1250`, `-3.75` or `1.5e6`.
    ///
    /// Thousands separators, spaces inside the number and currency signs are refused rather than
    /// guessed at: `1,250` means 1.25 in much of the world.
    pub fn parse(text: &str) -> Result<Money, MoneyError> {
        let t = text.trim();
        if t.is_empty() {
            return Err(MoneyError::Empty);
        }
        if t.chars().any(|c| {
            c == ',' || c == ' ' || c == '\'' || c == '_' || c == '$' || c == '€' || c == '£'
        }) {
            return Err(MoneyError::Decorated(t.to_owned()));
        }
        let parsed = if t.contains(['e', 'E']) {
            Decimal::from_scientific(t)
        } else {
            Decimal::from_str(t)
        };
        let m = parsed
            .map(Money)
            .map_err(|_| MoneyError::NotANumber(t.to_owned()))?;
        if m.0.abs() > MAX_AMOUNT {
            return Err(MoneyError::TooLarge(t.to_owned()));
        }
        Ok(m)
    }

    /// The amount as a float, for discounting.
    pub fn to_f64(self) -> f64 {
        self.0.to_f64().unwrap_or(f64::NAN)
    }

    /// A computed amount rounded to the cent by [`units_half_even`]; `None` if not finite or out
    /// of the decimal range.
    pub fn from_f64_rounded(x: f64) -> Option<Money> {
        let cents = units_half_even(x, 2)?;
        (cents.unsigned_abs() < 1u128 << 96).then(|| Money(Decimal::from_i128_with_scale(cents, 2)))
    }

    pub fn is_negative(self) -> bool {
        self.0.is_sign_negative() && !self.0.is_zero()
    }

    pub fn is_zero(self) -> bool {
        self.0.is_zero()
    }
}

impl Add for Money {
    type Output = Money;
    fn add(self, o: Money) -> Money {
        Money(self.0 + o.0)
    }
}

impl AddAssign for Money {
    fn add_assign(&mut self, o: Money) {
        self.0 += o.0;
    }
}

impl Sub for Money {
    type Output = Money;
    fn sub(self, o: Money) -> Money {
        Money(self.0 - o.0)
    }
}

impl Neg for Money {
    type Output = Money;
    fn neg(self) -> Money {
        Money(-self.0)
    }
}

impl Mul<Decimal> for Money {
    type Output = Money;
    fn mul(self, k: Decimal) -> Money {
        Money(self.0 * k)
    }
}

impl std::iter::Sum for Money {
    fn sum<I: Iterator<Item = Money>>(iter: I) -> Money {
        iter.fold(Money::ZERO, |a, b| a + b)
    }
}

impl fmt::Display for Money {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0.normalize())
    }
}

/// `x` in whole units of 10^−`places` (cents for 2), rounded half-to-even on its exact binary
/// value: the one rule by which a computed float becomes money or any other amount the tool
/// counts or writes with a fixed number of decimals. It is the rule of Rust's `{:.N}`
/// formatting too, so a file's text and the units agree. `None` when `x` is not finite, when
/// `places` is above 18, or when the units pass ±2¹²⁰.
pub fn units_half_even(x: f64, places: u32) -> Option<i128> {
    if !x.is_finite() || places > 18 {
        return None;
    }
    // The product x·10^places is within half an ulp of the exact one; unless it lies within an
    // ulp of a midpoint, rounding it rounds the exact value the same way (the common case, and
    // far cheaper than the exact path below).
    const SCALE: [f64; 19] = [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
        1e17, 1e18,
    ];
    let y = x * SCALE[places as usize];
    if y.abs() < 4.0e15 {
        let r = y.round();
        let margin = (0.5 - (y - r).abs()).abs();
        if margin > y.abs() * f64::EPSILON * 2.0 + f64::MIN_POSITIVE {
            // |y − r| is below 1/2 by more than the product's error: `r` is the nearest
            // integer to the exact value, and not a tie.
            if (y - r).abs() < 0.5 {
                return Some(i128::from(r as i64));
            }
        }
    }
    let bits = x.to_bits();
    let negative = bits >> 63 == 1;
    let exp = ((bits >> 52) & 0x7ff) as i32;
    let frac = bits & ((1u64 << 52) - 1);
    // x = m · 2^e exactly.
    let (m, e) = if exp == 0 {
        (frac, -1074)
    } else {
        (frac | 1 << 52, exp - 1075)
    };
    // m · 10^places < 2^53 · 10^18 < 2^113.
    let scaled = u128::from(m) * 10u128.pow(places);
    let units: u128 = if e >= 0 {
        if e > 120 || scaled.leading_zeros() <= e as u32 + 7 {
            return None;
        }
        scaled << e
    } else {
        let s = (-e) as u32;
        if s > 120 {
            0 // below half a unit: scaled < 2^113 ≤ 2^(s−1)
        } else {
            let q = scaled >> s;
            let r = scaled & ((1u128 << s) - 1);
            let half = 1u128 << (s - 1);
            if r > half || (r == half && q & 1 == 1) {
                q + 1
            } else {
                q
            }
        }
    };
    if units >= 1 << 120 {
        return None;
    }
    let units = units as i128;
    Some(if negative { -units } else { units })
}

/// A budget price as shown: four decimals, or two significant figures below 0.001 (never
/// `0.0000` for a price above zero); `0` for none.
pub fn price_figure(price: f64) -> String {
    if price == 0.0 {
        "0".to_owned()
    } else if price.abs() >= 0.001 {
        format!("{price:.4}")
    } else {
        let places = (-price.abs().log10().floor()) as usize + 1;
        format!("{price:.places$}")
    }
}

/// Format a float with thousands separators and `decimals` decimal places: `1234567.891` →
/// `1,234,567.89`. Non-finite values print as `n/a`.
pub fn grouped(x: f64, decimals: usize) -> String {
    if !x.is_finite() {
        return "n/a".to_owned();
    }
    let s = format!("{:.*}", decimals, x.abs());
    let (int, frac) = match s.split_once('.') {
        Some((i, f)) => (i.to_owned(), Some(f.to_owned())),
        None => (s.clone(), None),
    };
    let mut out = String::new();
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    if let Some(f) = frac {
        out.push('.');
        out.push_str(&f);
    }
    let is_zero = out.chars().all(|c| c == '0' || c == ',' || c == '.');
    if x < 0.0 && !is_zero {
        out.insert(0, '-');
    }
    out
}

#[cfg(test)]
mod amount_limit_tests {
    use super::*;

    #[test]
    fn the_largest_amount_is_ten_to_the_fifteen() {
        assert_eq!(MAX_AMOUNT, Decimal::from(1_000_000_000_000_000_i64));
        assert!(Money::parse("1e15").is_ok());
        assert!(matches!(
            Money::parse("1000000000000000.01"),
            Err(MoneyError::TooLarge(_))
        ));
        assert!(matches!(
            Money::parse("-2e15"),
            Err(MoneyError::TooLarge(_))
        ));
        assert!(matches!(
            Money::parse("79228162514264337593543950335"),
            Err(MoneyError::TooLarge(_))
        ));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_plain_decimals_exactly() {
        assert_eq!(
            Money::parse("0.1").unwrap() + Money::parse("0.2").unwrap(),
            Money::parse("0.3").unwrap()
        );
        assert_eq!(Money::parse(" -1250.50 ").unwrap().to_string(), "-1250.5");
        assert_eq!(Money::parse("1.5e6").unwrap().to_string(), "1500000");
    }

    #[test]
    fn refuses_decorated_or_bad_text() {
        assert!(matches!(
            Money::parse("1,250"),
            Err(MoneyError::Decorated(_))
        ));
        assert!(matches!(Money::parse("$12"), Err(MoneyError::Decorated(_))));
        assert!(matches!(Money::parse(""), Err(MoneyError::Empty)));
        assert!(matches!(
            Money::parse("NaN"),
            Err(MoneyError::NotANumber(_))
        ));
        assert!(matches!(
            Money::parse("inf"),
            Err(MoneyError::NotANumber(_))
        ));
    }

    #[test]
    fn rounds_half_to_even_at_the_cent() {
        assert_eq!(Money::from_f64_rounded(2.675).unwrap().to_string(), "2.67"); // 2.67499.. in binary
        assert_eq!(Money::from_f64_rounded(0.125).unwrap().to_string(), "0.12");
        assert!(Money::from_f64_rounded(f64::NAN).is_none());
    }

    /// The rule is Rust's own `{:.N}` formatting, digit for digit: exact midpoints in binary
    /// (0.125, 2.5), values just either side of a decimal midpoint (2.675 is 2.67499… in
    /// binary), negatives, subnormals, and random values over thirty orders of magnitude.
    #[test]
    fn units_are_the_formatted_digits() {
        let text = |u: i128, places: u32| -> String {
            let p = 10u128.pow(places);
            let a = u.unsigned_abs();
            let sign = if u < 0 { "-" } else { "" };
            if places == 0 {
                format!("{sign}{a}")
            } else {
                format!("{sign}{}.{:0w$}", a / p, a % p, w = places as usize)
            }
        };
        let mut rng = crate::demo::synth::SplitMix64::new(7);
        let mut xs = vec![
            0.125,
            0.375,
            2.5,
            3.5,
            2.675,
            1.005,
            -0.125,
            -2.5,
            0.5,
            1e-310,
            123456789.125,
            0.0,
            1e15,
            -1e-3,
        ];
        for _ in 0..20_000 {
            let x = 10f64.powf(rng.range(-8.0, 14.0));
            xs.push(if rng.range(0.0, 1.0) < 0.5 { -x } else { x });
            // Values on a decimal midpoint as computed money often is.
            xs.push((rng.range(0.0, 1e6) * 200.0).round() / 200.0 + 0.005);
        }
        for &x in &xs {
            for places in [0u32, 2, 6] {
                let u = units_half_even(x, places).unwrap();
                let want = format!("{x:.p$}", p = places as usize);
                // `{:.N}` keeps the sign of a negative that rounds to zero.
                let want = want
                    .strip_prefix('-')
                    .filter(|w| w.chars().all(|c| c == '0' || c == '.'))
                    .map_or(want.clone(), str::to_owned);
                assert_eq!(text(u, places), want, "{x} at {places}");
            }
        }
        assert_eq!(units_half_even(f64::NAN, 2), None);
        assert_eq!(units_half_even(1e300, 2), None);
    }

    #[test]
    fn grouping() {
        assert_eq!(grouped(1234567.891, 2), "1,234,567.89");
        assert_eq!(grouped(-999.5, 0), "-1,000");
        assert_eq!(grouped(-0.001, 2), "0.00");
        assert_eq!(grouped(12.0, 0), "12");
        assert_eq!(grouped(f64::INFINITY, 2), "n/a");
    }
}
