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

/// A text field for CSV, quoted when it holds a comma, quote or line break.
pub fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_owned()
    }
}

/// A rate as a percentage with two decimals, `n/a` when undefined.
pub fn pct(x: Option<f64>) -> String {
    x.map_or("n/a".to_owned(), |r| format!("{:.2} %", r * 100.0))
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
    }
}
