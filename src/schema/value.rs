//! The cell types of output files: each holds a number or a text exactly as the file holds it,
//! writes it, and reads it back to the same value.
//!
//! Numbers with a fixed number of decimals are whole units ([`Fixed`], [`Cents`]), made from a
//! float by the tool's one rounding rule ([`crate::model::money::units_half_even`]); a float wanted
//! in full is written in its shortest exact form ([`Real`], [`Price`]), which reads back to the
//! same bits. Their `to_f64` conversions give the float that parsing the written text
//! gives, so a chart drawn from a row in memory is the chart drawn from the file.

use rust_decimal::Decimal;
use std::str::FromStr;

/// A cell of an output file.
pub trait Value: Sized {
    /// What a cell of this type holds, for messages.
    const EXPECTED: &'static str;
    /// Append the cell's text (quoted where CSV needs it).
    fn write(&self, out: &mut String);
    /// The cell from its (unquoted) text; `None` when it is not one.
    fn parse(text: &str) -> Option<Self>;
}

/// Whether `text` must be quoted as a CSV cell: it holds a comma, quote or line break.
pub fn needs_quotes(text: &str) -> bool {
    text.contains([',', '"', '\n', '\r'])
}

/// `text` as a CSV cell: quoted when it holds a comma, quote or line break.
pub fn write_text(text: &str, out: &mut String) {
    if needs_quotes(text) {
        out.push('"');
        out.push_str(&text.replace('"', "\"\""));
        out.push('"');
    } else {
        out.push_str(text);
    }
}

/// Text, quoted when it holds a comma, quote or line break.
impl Value for String {
    const EXPECTED: &'static str = "a text";
    fn write(&self, out: &mut String) {
        write_text(self, out);
    }
    fn parse(text: &str) -> Option<Self> {
        Some(text.to_owned())
    }
}

/// A calendar year or another whole number.
impl Value for i32 {
    const EXPECTED: &'static str = "a whole number";
    fn write(&self, out: &mut String) {
        let mut b = itoa_buf();
        out.push_str(fmt_int(i128::from(*self), &mut b));
    }
    fn parse(text: &str) -> Option<Self> {
        text.trim().parse().ok()
    }
}

/// A calendar year.
impl Value for crate::model::Year {
    const EXPECTED: &'static str = "a year";
    fn write(&self, out: &mut String) {
        self.0.write(out);
    }
    fn parse(text: &str) -> Option<Self> {
        i32::parse(text).map(crate::model::Year)
    }
}

/// A count.
impl Value for u64 {
    const EXPECTED: &'static str = "a whole number of zero or more";
    fn write(&self, out: &mut String) {
        let mut b = itoa_buf();
        out.push_str(fmt_int(i128::from(*self), &mut b));
    }
    fn parse(text: &str) -> Option<Self> {
        text.trim().parse().ok()
    }
}

/// `true` or `false`.
impl Value for bool {
    const EXPECTED: &'static str = "true or false";
    fn write(&self, out: &mut String) {
        out.push_str(if *self { "true" } else { "false" });
    }
    fn parse(text: &str) -> Option<Self> {
        match text {
            "true" => Some(true),
            "false" => Some(false),
            _ => None,
        }
    }
}

/// An empty cell for `None`.
impl<T: Value> Value for Option<T> {
    const EXPECTED: &'static str = T::EXPECTED;
    fn write(&self, out: &mut String) {
        if let Some(v) = self {
            v.write(out);
        }
    }
    fn parse(text: &str) -> Option<Self> {
        if text.trim().is_empty() {
            Some(None)
        } else {
            T::parse(text).map(Some)
        }
    }
}

fn itoa_buf() -> [u8; 48] {
    [0; 48]
}

/// A whole number's decimal digits, written into `buf` (no allocation).
fn fmt_int(x: i128, buf: &mut [u8; 48]) -> &str {
    let mut i = buf.len();
    let mut a = x.unsigned_abs();
    loop {
        i -= 1;
        buf[i] = b'0' + (a % 10) as u8;
        a /= 10;
        if a == 0 {
            break;
        }
    }
    if x < 0 {
        i -= 1;
        buf[i] = b'-';
    }
    // Only ASCII digits and a sign were written.
    std::str::from_utf8(&buf[i..]).unwrap_or("")
}

/// A number with `P` decimals, as whole units of 10^−P.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
pub struct Fixed<const P: u32>(pub i128);

/// Money to the cent.
pub type Cents = Fixed<2>;

impl<const P: u32> Fixed<P> {
    /// `x` rounded to `P` decimals by the tool's one rule; `None` (an empty cell when written
    /// as an option) when it is not finite or out of range.
    pub fn of_f64(x: f64) -> Option<Fixed<P>> {
        crate::model::money::units_half_even(x, P).map(Fixed)
    }

    /// [`Fixed::of_f64`] for a value known to be finite and in range (zero otherwise).
    pub fn of(x: f64) -> Fixed<P> {
        Fixed::of_f64(x).unwrap_or_default()
    }

    /// The float that parsing the written text gives.
    pub fn to_f64(self) -> f64 {
        let p = 10f64.powi(P as i32);
        if self.0.unsigned_abs() < 1 << 53 && P <= 22 {
            // Both exact, so the quotient is correctly rounded: the parse of the text.
            self.0 as f64 / p
        } else {
            let mut s = String::new();
            self.write(&mut s);
            s.parse().unwrap_or(f64::NAN)
        }
    }
}

impl<const P: u32> Value for Fixed<P> {
    const EXPECTED: &'static str = "a number";
    fn write(&self, out: &mut String) {
        let p = 10u128.pow(P);
        let a = self.0.unsigned_abs();
        if self.0 < 0 {
            out.push('-');
        }
        let mut b = itoa_buf();
        out.push_str(fmt_int((a / p) as i128, &mut b));
        if P > 0 {
            out.push('.');
            let frac = fmt_int((a % p) as i128, &mut b);
            for _ in frac.len()..P as usize {
                out.push('0');
            }
            out.push_str(frac);
        }
    }
    fn parse(text: &str) -> Option<Self> {
        let d = Decimal::from_str(text.trim()).ok()?;
        let d = d.round_dp_with_strategy(P, rust_decimal::RoundingStrategy::MidpointNearestEven);
        let units = d.mantissa() * 10i128.pow(P - d.scale());
        Some(Fixed(units))
    }
}

/// A float in full: its shortest text that reads back to the same bits.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Real(pub f64);

impl Value for Real {
    const EXPECTED: &'static str = "a number";
    fn write(&self, out: &mut String) {
        use std::fmt::Write as _;
        let _ = write!(out, "{}", self.0);
    }
    fn parse(text: &str) -> Option<Self> {
        text.trim().parse().ok().map(Real)
    }
}

/// A budget price (or any float in full) written `0` when zero, of either sign.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Price(pub f64);

impl Value for Price {
    const EXPECTED: &'static str = "a number";
    fn write(&self, out: &mut String) {
        use std::fmt::Write as _;
        if self.0 == 0.0 {
            out.push('0');
        } else {
            let _ = write!(out, "{}", self.0);
        }
    }
    fn parse(text: &str) -> Option<Self> {
        text.trim().parse().ok().map(Price)
    }
}

/// A float in scientific notation with six decimals (`1.000310e-10`), as the file holds it.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Sci6(f64);

impl Sci6 {
    /// `x` as it is written: its value is the float the written text gives.
    pub fn of(x: f64) -> Sci6 {
        Sci6(format!("{x:.6e}").parse().unwrap_or(x))
    }

    pub fn to_f64(self) -> f64 {
        self.0
    }
}

impl Value for Sci6 {
    const EXPECTED: &'static str = "a number";
    fn write(&self, out: &mut String) {
        use std::fmt::Write as _;
        let _ = write!(out, "{:.6e}", self.0);
    }
    fn parse(text: &str) -> Option<Self> {
        text.trim().parse().ok().map(Sci6)
    }
}

/// An exact decimal amount (a budget line's limit, the plan's spending in it), written as held.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Dec(pub Decimal);

impl Dec {
    /// The float that parsing the written text gives.
    pub fn to_f64(self) -> f64 {
        let m = self.0.mantissa();
        let scale = self.0.scale();
        if m.unsigned_abs() < 1 << 53 && scale <= 22 {
            m as f64 / 10f64.powi(scale as i32)
        } else {
            self.0.to_string().parse().unwrap_or(f64::NAN)
        }
    }
}

impl Value for Dec {
    const EXPECTED: &'static str = "a decimal number";
    fn write(&self, out: &mut String) {
        use std::fmt::Write as _;
        let _ = write!(out, "{}", self.0);
    }
    fn parse(text: &str) -> Option<Self> {
        Decimal::from_str(text.trim()).ok().map(Dec)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each number type's text is what the tool's formats write, and its float is the float
    /// the text parses to.
    #[test]
    fn numbers_are_their_text() {
        let mut rng = crate::demo::synth::SplitMix64::new(3);
        for _ in 0..20_000 {
            let x = 10f64.powf(rng.range(-7.0, 12.0))
                * if rng.range(0.0, 1.0) < 0.3 { -1.0 } else { 1.0 };
            let mut s = String::new();
            Cents::of(x).write(&mut s);
            assert_eq!(s, crate::output::format::Amount(x).to_string(), "{x}");
            assert_eq!(
                Cents::of(x).to_f64().to_bits(),
                s.parse::<f64>().unwrap().to_bits(),
                "{x}"
            );
            assert_eq!(Cents::parse(&s), Some(Cents::of(x)));
            let mut s6 = String::new();
            Fixed::<6>::of(x).write(&mut s6);
            let want = format!("{x:.6}");
            let want = if want
                .trim_start_matches('-')
                .chars()
                .all(|c| c == '0' || c == '.')
            {
                want.trim_start_matches('-').to_owned()
            } else {
                want
            };
            assert_eq!(s6, want, "{x}");
            assert_eq!(
                Fixed::<6>::of(x).to_f64().to_bits(),
                s6.parse::<f64>().unwrap().to_bits(),
                "{x}"
            );
            let mut r = String::new();
            Real(x).write(&mut r);
            assert_eq!(Real::parse(&r), Some(Real(x)));
            let mut g = String::new();
            Sci6::of(x).write(&mut g);
            assert_eq!(g, format!("{x:.6e}"));
            assert_eq!(Sci6::parse(&g), Some(Sci6::of(x)));
            let d = Dec(Decimal::new((x * 100.0) as i64, 2));
            let mut t = String::new();
            d.write(&mut t);
            assert_eq!(
                d.to_f64().to_bits(),
                t.parse::<f64>().unwrap().to_bits(),
                "{t}"
            );
        }
        let mut p = String::new();
        Price(-0.0).write(&mut p);
        assert_eq!(p, "0");
        assert_eq!(Fixed::<0>::of(2.5).0, 2);
        assert_eq!(Cents::parse("1.005"), Some(Fixed(100)));
        assert_eq!(Cents::parse("12"), Some(Fixed(1200)));
        assert_eq!(Option::<Cents>::parse(""), Some(None));
    }
}
