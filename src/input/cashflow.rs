//! A plain cash-flow file (CSV) for `pavestrat cashflow`: columns `year, benefit, cost`, and
//! optionally `alternative` to give several mutually exclusive alternatives in one file.
//!
//! Amounts are read as exact decimals; rows of the same alternative and year add up (with a
//! note); years without a row count as zero. Columns starting `x_` are ignored as notes.

use crate::diag::{did_you_mean, Diagnostics, Place};
use crate::model::money::Money;
use std::collections::BTreeMap;

/// One alternative's flows, by year.
#[derive(Debug, Clone, PartialEq)]
pub struct Flows {
    pub name: String,
    /// (benefit, cost) by year, summed exactly.
    pub years: BTreeMap<i32, (Money, Money)>,
}

impl Flows {
    /// The flows as an f64 stream for the economics core (the one place money becomes float).
    pub fn stream(&self) -> crate::economics::Stream {
        let rows: Vec<(crate::model::Year, f64, f64)> = self
            .years
            .iter()
            .map(|(y, (b, c))| (crate::model::Year(*y), b.to_f64(), c.to_f64()))
            .collect();
        crate::economics::Stream::from_rows(&rows)
    }
}

/// The longest stream accepted, in years (a guard against a mistyped year).
pub use crate::economics::alternatives::MAX_SPAN;

/// Name of the single alternative when the file has no `alternative` column.
pub const SINGLE: &str = "stream";

/// Read a cash-flow file from decoded text.
pub fn parse(file: &str, text: &str, d: &mut Diagnostics) -> Option<Vec<Flows>> {
    let before = d.error_count();
    let mut input = super::csvfile::CsvInput::open(
        file,
        text,
        "a header `year,benefit,cost` and one row per year",
        d,
    )?;
    input.text_columns(|c| c == "alternative");
    let headers = input.headers.clone();
    let known = ["year", "benefit", "cost", "alternative"];
    let mut pos = [None; 4];
    let mut header_ok = true;
    for (i, h) in headers.iter().enumerate() {
        let place = Place::line(file, 1).with_field(format!("column {} `{h}`", i + 1));
        match known.iter().position(|k| *k == h) {
            Some(k) if pos[k].is_some() => {
                d.error(place, format!("the column `{h}` twice"), "each column once");
                header_ok = false;
            }
            Some(k) => pos[k] = Some(i),
            None if h.starts_with("x_") => {}
            None => {
                let e = d.error(
                    place,
                    format!("unknown column `{h}`"),
                    "year, benefit, cost, alternative, or a name starting `x_`",
                );
                if let Some(m) = did_you_mean(h, &known) {
                    e.hint = Some(format!("did you mean `{m}`?"));
                }
                header_ok = false;
            }
        }
    }
    for (k, name) in known.iter().enumerate().take(3) {
        if pos[k].is_none() {
            d.error(
                Place::line(file, 1),
                format!("no `{name}` column"),
                "the columns year, benefit and cost",
            );
            header_ok = false;
        }
    }
    if !header_ok {
        return None;
    }
    let (iy, ib, ic, ia) = (
        pos[0].unwrap_or(0),
        pos[1].unwrap_or(0),
        pos[2].unwrap_or(0),
        pos[3],
    );

    let mut order: Vec<String> = Vec::new();
    let mut flows: BTreeMap<String, BTreeMap<i32, (Money, Money)>> = BTreeMap::new();
    let mut first_line: BTreeMap<(String, i32), usize> = BTreeMap::new();
    let mut noted_repeat = false;
    let mut ok = true;
    while let Some(line) = input.next_row(d) {
        let record = input.record();
        let at = |f: &str| Place::line(file, line).with_field(f.to_owned());
        let year_raw = record.get(iy).unwrap_or("");
        let year = match year_raw.parse::<i32>() {
            Ok(y) if (0..=9999).contains(&y) => Some(y),
            _ => {
                d.error(
                    at("year"),
                    format!("found `{year_raw}`"),
                    "a whole year from 0 to 9999",
                );
                None
            }
        };
        let money = |col: usize, name: &str, d: &mut Diagnostics| {
            let raw = record.get(col).unwrap_or("");
            if raw.is_empty() {
                return Some(Money::ZERO);
            }
            match Money::parse(raw) {
                Ok(m) => Some(m),
                Err(e) => {
                    d.error(
                        at(name),
                        format!("found {e}"),
                        "an amount as plain decimal text, such as 1250.50 (empty means 0)",
                    );
                    None
                }
            }
        };
        let benefit = money(ib, "benefit", d);
        let cost = money(ic, "cost", d);
        let alt = match ia {
            Some(i) => {
                let a = record.get(i).unwrap_or("").to_owned();
                if a.is_empty() {
                    d.error(
                        at("alternative"),
                        "an empty value",
                        "the alternative's name",
                    );
                    None
                } else {
                    Some(a)
                }
            }
            None => Some(SINGLE.to_owned()),
        };
        let (Some(year), Some(benefit), Some(cost), Some(alt)) = (year, benefit, cost, alt) else {
            ok = false;
            continue;
        };
        if !flows.contains_key(&alt) {
            order.push(alt.clone());
        }
        let entry = flows
            .entry(alt.clone())
            .or_default()
            .entry(year)
            .or_insert((Money::ZERO, Money::ZERO));
        entry.0 += benefit;
        entry.1 += cost;
        match first_line.get(&(alt.clone(), year)) {
            Some(first) if !noted_repeat => {
                d.note(
                    Place::line(file, line),
                    format!("a second row for year {year} of `{alt}` (first on line {first}); the rows are added"),
                );
                noted_repeat = true;
            }
            Some(_) => {}
            None => {
                first_line.insert((alt, year), line);
            }
        }
    }
    if !input.had_rows("one row per year after the header", d) {
        return None;
    }
    if !ok || d.error_count() > before {
        return None;
    }
    let mut out = Vec::with_capacity(order.len());
    for name in order {
        let years = flows.remove(&name).unwrap_or_default();
        let (lo, hi) = (
            years.keys().next().copied().unwrap_or(0),
            years.keys().last().copied().unwrap_or(0),
        );
        if hi - lo >= MAX_SPAN {
            d.error(
                Place::file(file).with_field("year"),
                format!("`{name}` spans the years {lo} to {hi}"),
                format!("a stream of at most {MAX_SPAN} years (a mistyped year?)"),
            );
            return None;
        }
        out.push(Flows { name, years });
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn single_stream_with_gaps_and_repeats() {
        let mut d = Diagnostics::new();
        let f = parse(
            "c.csv",
            "year,benefit,cost\n2027,,1000\n2029,250.10,\n2029,0.20,0\n",
            &mut d,
        )
        .unwrap();
        assert_eq!(f.len(), 1);
        assert_eq!(f[0].name, SINGLE);
        assert_eq!(f[0].years[&2029].0.to_string(), "250.3");
        let s = f[0].stream();
        assert_eq!(s.first_year, crate::model::Year(2027));
        assert_eq!(s.net().len(), 3);
        assert!(d.to_string().contains("a second row for year 2029"));
        assert!(!d.has_errors());
    }

    #[test]
    fn alternatives_keep_their_first_appearance_order() {
        let mut d = Diagnostics::new();
        let f = parse(
            "c.csv",
            "alternative,year,benefit,cost\nB,0,0,1600\nA,0,0,1000\nB,1,360,0\n",
            &mut d,
        )
        .unwrap();
        let names: Vec<&str> = f.iter().map(|x| x.name.as_str()).collect();
        assert_eq!(names, ["B", "A"]);
    }

    #[test]
    fn a_row_of_the_wrong_width_fails_the_file() {
        let mut d = Diagnostics::new();
        assert!(parse("c.csv", "year,benefit,cost\n2027,1\n2028,1,2\n", &mut d).is_none());
        assert_eq!(d.error_count(), 1);
    }

    #[test]
    fn bad_values_are_all_reported() {
        let mut d = Diagnostics::new();
        assert!(parse(
            "c.csv",
            "year,benefit,cost,colour\n20x7,1,1,red\n2028,1;5,NaN,blue\n",
            &mut d
        )
        .is_none());
        let t = d.to_string();
        assert!(t.contains("unknown column `colour`"), "{t}");
        let mut d = Diagnostics::new();
        assert!(parse(
            "c.csv",
            "year,benefit,cost\n20x7,1,1\n2028,1;5,NaN\n",
            &mut d
        )
        .is_none());
        let t = d.to_string();
        for want in ["c.csv:2: year", "c.csv:3: benefit", "c.csv:3: cost"] {
            assert!(t.contains(want), "missing {want} in\n{t}");
        }
    }
}
