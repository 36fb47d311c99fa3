//! Number and field formats shared by every output: CSV numbers in full precision (empty where
//! undefined), IRR lists, and human-readable percentages for terminal tables.

use crate::economics::Irr;

/// A number for CSV: full precision, empty when not finite.
pub fn num(x: f64) -> String {
    if x.is_finite() {
        format!("{x}")
    } else {
        String::new()
    }
}

/// An optional number for CSV: empty when undefined.
pub fn opt(x: Option<f64>) -> String {
    x.map_or(String::new(), num)
}

/// Every IRR of a stream for CSV, joined by `;` (empty when there is none).
pub fn rates(irr: &Irr) -> String {
    irr.rates()
        .iter()
        .map(|r| num(*r))
        .collect::<Vec<_>>()
        .join(";")
}

/// A text field for CSV, quoted when it holds a comma, quote or line break (the schema's one
/// rule, [`crate::schema::value::write_text`]).
pub fn csv_field(s: &str) -> String {
    let mut out = String::new();
    crate::schema::value::write_text(s, &mut out);
    out
}

/// A rate as a percentage with two decimals, `n/a` when undefined.
pub fn pct(x: Option<f64>) -> String {
    x.map_or("n/a".to_owned(), |r| format!("{:.2} %", r * 100.0))
}

/// A share as a percentage with as few decimals as it needs: `5 %`, `2.5 %`.
pub fn share_text(x: f64) -> String {
    let t = format!("{:.4}", x * 100.0);
    let t = t.trim_end_matches('0').trim_end_matches('.');
    format!("{t} %")
}

/// An IRR for a terminal table: the rate, `ambiguous: …` with every rate, or `none`.
pub fn irr_text(irr: &Irr) -> String {
    match irr {
        Irr::Unique(r) => format!("{:.2} %", r * 100.0),
        Irr::Multiple(v) => format!(
            "ambiguous: {}",
            v.iter()
                .map(|r| format!("{:.2} %", r * 100.0))
                .collect::<Vec<_>>()
                .join(", ")
        ),
        Irr::None => "none".to_owned(),
        Irr::Skipped => "not computed".to_owned(),
    }
}

/// Money for CSV: two decimals, rounded by the tool's one rule
/// ([`crate::model::money::units_half_even`]), empty when not finite (written without allocating). A
/// value that rounds to zero prints as `0.00`, never `-0.00`.
#[derive(Debug, Clone, Copy)]
pub struct Amount(pub f64);

impl std::fmt::Display for Amount {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match crate::model::money::units_half_even(self.0, 2) {
            Some(c) => {
                let a = c.unsigned_abs();
                let sign = if c < 0 { "-" } else { "" };
                write!(f, "{sign}{}.{:02}", a / 100, a % 100)
            }
            None if self.0.is_finite() => write!(f, "{:.2}", self.0),
            None => Ok(()),
        }
    }
}

/// A ratio or rate for CSV with `digits` decimals, empty when undefined or not finite.
#[derive(Debug, Clone, Copy)]
pub struct Fixed(pub Option<f64>, pub usize);

impl std::fmt::Display for Fixed {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.0 {
            Some(x) if x.is_finite() => write!(f, "{x:.*}", self.1),
            _ => Ok(()),
        }
    }
}

/// Every IRR of a stream for CSV, six decimals, joined by `;`.
#[derive(Debug, Clone, Copy)]
pub struct Rates<'a>(pub &'a Irr);

impl std::fmt::Display for Rates<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        for (i, r) in self.0.rates().iter().enumerate() {
            if i > 0 {
                f.write_str(";")?;
            }
            write!(f, "{}", Fixed(Some(*r), 6))?;
        }
        Ok(())
    }
}

/// A text field for CSV, quoted when it holds a comma, quote or line break.
#[derive(Debug, Clone, Copy)]
pub struct Field<'a>(pub &'a str);

impl std::fmt::Display for Field<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        if crate::schema::value::needs_quotes(self.0) {
            f.write_str(&csv_field(self.0))
        } else {
            f.write_str(self.0)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_formats() {
        assert_eq!(Amount(1234.567).to_string(), "1234.57");
        assert_eq!(Amount(-0.001).to_string(), "0.00");
        assert_eq!(Amount(f64::NAN).to_string(), "");
        assert_eq!(Fixed(Some(0.1234567), 6).to_string(), "0.123457");
        assert_eq!(Fixed(None, 6).to_string(), "");
        assert_eq!(
            Rates(&Irr::Multiple(vec![0.1, 0.2])).to_string(),
            "0.100000;0.200000"
        );
        assert_eq!(Field("a,b").to_string(), "\"a,b\"");
        assert_eq!(Field("plain").to_string(), "plain");
        assert_eq!(Field("a\"b,").to_string(), "\"a\"\"b,\"");
    }
}

pub use crate::model::money::price_figure;

/// An amount with thousands separators and `decimals` places, `+` before it when it shows
/// above zero (a change: `+1,234`, `-567`, `0`).
pub fn signed(x: f64, decimals: usize) -> String {
    let t = crate::model::money::grouped(x, decimals);
    if x > 0.0 && t != crate::model::money::grouped(0.0, decimals) {
        format!("+{t}")
    } else {
        t
    }
}

/// How much of a line's limit is used, in percent (0 for a zero limit).
pub fn use_percent(limit: f64, used: f64) -> f64 {
    if limit > 0.0 {
        100.0 * used / limit
    } else {
        0.0
    }
}

/// A line's price beside its state, as the terminal, the workbook and the report show it: a
/// binding line's price; a slack line's price in brackets when the bound prices it (a price of
/// the relaxation, which the plan's whole choices leave room under); `—` for a slack line with
/// no price.
pub fn price_beside_state(price: f64, binding: bool) -> String {
    if binding {
        price_figure(price)
    } else if price > 0.0 {
        format!("({})", price_figure(price))
    } else {
        "—".to_owned()
    }
}

#[cfg(test)]
mod price_tests {
    use super::*;

    #[test]
    fn a_price_is_never_shown_as_zero_and_a_slack_line_never_as_priced() {
        assert_eq!(price_figure(0.16409), "0.1641");
        assert_eq!(price_figure(0.00004), "0.000040");
        assert_eq!(price_figure(0.0004999), "0.00050");
        assert_eq!(price_figure(0.0), "0");
        assert_eq!(price_beside_state(0.0015, true), "0.0015");
        assert_eq!(price_beside_state(0.0, true), "0");
        assert_eq!(price_beside_state(0.0015, false), "(0.0015)");
        assert_eq!(price_beside_state(0.0, false), "—");
    }
}
