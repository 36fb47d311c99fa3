//! Candidates and limits for `pavestrat select`, from any source.
//!
//! CANDIDATES (CSV): `section_id,strategy` and a value column (`npv` unless another is named),
//! then any number of `cost:<row>` and `use:<row>` columns; other columns are carried through
//! to the output. Exactly one candidate is chosen per section; a section need not have a
//! zero-cost candidate. LIMITS (CSV): `row,limit`, one line per `cost:`/`use:` column, the row
//! named as its column is.
//!
//! Amounts are read as exact decimals. Each row is counted in the finest unit its own amounts
//! use (its largest number of decimal places, at most [`MAX_DECIMALS`]), so every sum of a row
//! is exact and "within the limit" means exactly what the files say.

use crate::diag::{Diagnostics, Place};
use crate::error::Error;
use crate::select::network::Infeasible;
use crate::select::problem::{Offer, Problem, ProblemError, MAX_ROW_TOTAL};
use rust_decimal::Decimal;
use std::collections::HashMap;

/// Most decimal places an amount of a row may have.
pub const MAX_DECIMALS: u32 = 9;

/// One candidate.
#[derive(Debug, Clone)]
pub struct Candidate {
    pub strategy: String,
    /// The value column as written, and as a number.
    pub value_text: String,
    pub value: f64,
    /// Its use of each row (index into [`CandidateFile::rows`]), exact.
    pub uses: Vec<(usize, Decimal)>,
    /// The carried columns' values.
    pub carried: Vec<String>,
    pub line: usize,
}

/// A section and its candidates, in file order.
#[derive(Debug, Clone)]
pub struct Section {
    pub id: String,
    pub candidates: Vec<Candidate>,
}

/// The candidates file.
#[derive(Debug, Clone)]
pub struct CandidateFile {
    pub file: String,
    /// Row names, as their columns are headed (`cost:…` or `use:…`).
    pub rows: Vec<String>,
    /// Names of the carried columns.
    pub carried: Vec<String>,
    pub value_column: String,
    pub sections: Vec<Section>,
}

/// Read the candidates file. `value_column` names the column to optimise.
pub fn parse(
    file: &str,
    text: &str,
    value_column: &str,
    d: &mut Diagnostics,
) -> Option<CandidateFile> {
    let before = d.error_count();
    let mut input = super::csvfile::CsvInput::open(
        file,
        text,
        "a header `section_id,strategy,npv` (and `cost:<row>`/`use:<row>` columns) and one row per candidate",
        d,
    )?;
    input.text_columns(|c| matches!(c, "section_id" | "strategy"));
    let headers = input.headers.clone();
    let (mut is, mut ist, mut iv) = (None, None, None);
    let mut rows: Vec<(usize, String)> = Vec::new();
    let mut carried: Vec<(usize, String)> = Vec::new();
    let mut seen: HashMap<&str, usize> = HashMap::new();
    for (i, h) in headers.iter().enumerate() {
        let place = Place::line(file, 1).with_field(format!("column {} `{h}`", i + 1));
        if let Some(first) = seen.insert(h, i) {
            d.error(
                place,
                format!("the column `{h}` twice (first as column {})", first + 1),
                "each column once",
            );
            continue;
        }
        if h == "section_id" {
            is = Some(i);
        } else if h == "strategy" {
            ist = Some(i);
        } else if h == value_column {
            iv = Some(i);
        } else if let Some(name) = h.strip_prefix("cost:").or_else(|| h.strip_prefix("use:")) {
            if name.is_empty() {
                d.error(
                    place,
                    "a row column with no row name",
                    "`cost:<row>` or `use:<row>`",
                );
            } else {
                rows.push((i, h.to_owned()));
            }
        } else if h.is_empty() {
            d.error(place, "an empty column name", "a name for every column");
        } else {
            carried.push((i, h.to_owned()));
        }
    }
    for (pos, name) in [(is, "section_id"), (ist, "strategy"), (iv, value_column)] {
        if pos.is_none() {
            d.error(
                Place::line(file, 1),
                format!("no `{name}` column"),
                format!("the columns section_id, strategy and {value_column}"),
            );
        }
    }
    let (Some(is), Some(ist), Some(iv)) = (is, ist, iv) else {
        return None;
    };
    if d.error_count() > before {
        return None;
    }
    let mut sections: Vec<Section> = Vec::new();
    let mut index: HashMap<String, usize> = HashMap::new();
    let mut pairs: HashMap<(usize, String), usize> = HashMap::new();
    while let Some(line) = input.next_row(d) {
        let record = input.record();
        let at = |f: &str| Place::line(file, line).with_field(f.to_owned());
        let id = record.get(is).unwrap_or("").to_owned();
        let strategy = record.get(ist).unwrap_or("").to_owned();
        let mut ok = true;
        if id.is_empty() {
            d.error(at("section_id"), "an empty value", "the section's id");
            ok = false;
        }
        if strategy.is_empty() {
            d.error(at("strategy"), "an empty value", "the candidate's name");
            ok = false;
        }
        let value_text = record.get(iv).unwrap_or("").to_owned();
        let value = match value_text
            .parse::<Decimal>()
            .ok()
            .or_else(|| Decimal::from_scientific(&value_text).ok())
        {
            Some(v) if v.abs() <= Decimal::from(1_000_000_000_000_000i64) => {
                f64::try_from(v).unwrap_or(f64::NAN)
            }
            _ => {
                d.error(
                    at(value_column),
                    format!("found `{value_text}`"),
                    "a number of at most 10^15 in magnitude, such as 125000.50",
                );
                ok = false;
                0.0
            }
        };
        let mut uses = Vec::new();
        for (j, (col, name)) in rows.iter().enumerate() {
            let raw = record.get(*col).unwrap_or("");
            if raw.is_empty() {
                continue;
            }
            match parse_amount(raw) {
                Ok(x) if x.is_zero() => {}
                Ok(x) => uses.push((j, x)),
                Err(expected) => {
                    d.error(at(name), format!("found `{raw}`"), expected);
                    ok = false;
                }
            }
        }
        if !ok {
            continue;
        }
        let s = *index.entry(id.clone()).or_insert_with(|| {
            sections.push(Section {
                id: id.clone(),
                candidates: Vec::new(),
            });
            sections.len() - 1
        });
        if let Some(first) = pairs.insert((s, strategy.clone()), line) {
            d.error(
                at("strategy"),
                format!("`{strategy}` of section `{id}` a second time (first on line {first})"),
                "each strategy of a section once",
            );
            continue;
        }
        sections[s].candidates.push(Candidate {
            strategy,
            value_text,
            value,
            uses,
            carried: carried
                .iter()
                .map(|(c, _)| record.get(*c).unwrap_or("").to_owned())
                .collect(),
            line,
        });
    }
    if !input.had_rows("one row per candidate after the header", d) || d.error_count() > before {
        return None;
    }
    Some(CandidateFile {
        file: file.to_owned(),
        rows: rows.into_iter().map(|(_, n)| n).collect(),
        carried: carried.into_iter().map(|(_, n)| n).collect(),
        value_column: value_column.to_owned(),
        sections,
    })
}

/// An amount of a row: a plain decimal (or scientific notation) with at most [`MAX_DECIMALS`]
/// places; the error says what was expected.
fn parse_amount(raw: &str) -> Result<Decimal, String> {
    let x = raw
        .parse::<Decimal>()
        .ok()
        .or_else(|| Decimal::from_scientific(raw).ok())
        .ok_or_else(|| "a plain decimal amount, such as 402600.00 (empty means 0)".to_owned())?
        .normalize();
    if x.scale() > MAX_DECIMALS {
        return Err(format!(
            "an amount with at most {MAX_DECIMALS} decimal places"
        ));
    }
    Ok(x)
}

/// Read the limits file against the candidates' rows: one limit per row, in row order.
pub fn parse_limits(
    file: &str,
    text: &str,
    candidates: &CandidateFile,
    d: &mut Diagnostics,
) -> Option<Vec<Decimal>> {
    let before = d.error_count();
    let mut input =
        super::csvfile::CsvInput::open(file, text, "a header `row,limit` and one row per row", d)?;
    input.text_columns(|c| c == "row");
    let headers = input.headers.clone();
    let (mut ir, mut il) = (None, None);
    for (i, h) in headers.iter().enumerate() {
        match h {
            "row" if ir.is_none() => ir = Some(i),
            "limit" if il.is_none() => il = Some(i),
            _ => {
                d.error(
                    Place::line(file, 1).with_field(format!("column {} `{h}`", i + 1)),
                    format!("the column `{h}`"),
                    "the columns row and limit, each once",
                );
            }
        }
    }
    let (Some(ir), Some(il)) = (ir, il) else {
        d.error(
            Place::line(file, 1),
            "no `row` or no `limit` column",
            "the header `row,limit`",
        );
        return None;
    };
    let mut limits: Vec<Option<(Decimal, usize)>> = vec![None; candidates.rows.len()];
    while let Some(line) = input.next_row(d) {
        let record = input.record();
        let at = |f: &str| Place::line(file, line).with_field(f.to_owned());
        let name = record.get(ir).unwrap_or("");
        let raw = record.get(il).unwrap_or("");
        let Some(j) = candidates.rows.iter().position(|r| r == name) else {
            let e = d.error(
                at("row"),
                format!("`{name}`, which is not a column of {}", candidates.file),
                format!(
                    "one of the candidates' row columns ({})",
                    list(&candidates.rows)
                ),
            );
            if let Some(m) = crate::diag::did_you_mean(
                name,
                &candidates
                    .rows
                    .iter()
                    .map(String::as_str)
                    .collect::<Vec<_>>(),
            ) {
                e.hint = Some(format!("did you mean `{m}`?"));
            }
            continue;
        };
        let value = match parse_amount(raw) {
            Ok(x) => x,
            Err(expected) => {
                d.error(at("limit"), format!("found `{raw}`"), expected);
                continue;
            }
        };
        if let Some((_, first)) = limits[j] {
            d.error(
                at("row"),
                format!("a second limit for `{name}` (first on line {first})"),
                "one limit per row",
            );
            continue;
        }
        limits[j] = Some((value, line));
    }
    for (j, l) in limits.iter().enumerate() {
        if l.is_none() {
            d.error(
                Place::file(file),
                format!(
                    "no limit for `{}`, a column of {}",
                    candidates.rows[j], candidates.file
                ),
                "a line `row,limit` for every cost: and use: column",
            );
        }
    }
    if d.error_count() > before {
        return None;
    }
    Some(
        limits
            .into_iter()
            .map(|l| l.map(|x| x.0).unwrap_or_default())
            .collect(),
    )
}

fn list(names: &[String]) -> String {
    if names.is_empty() {
        return "none".into();
    }
    let shown: Vec<&str> = names.iter().take(5).map(String::as_str).collect();
    if names.len() > 5 {
        format!("{}, …", shown.join(", "))
    } else {
        shown.join(", ")
    }
}

/// Each row's unit: its largest number of decimal places among its limit and its uses.
pub fn row_decimals(c: &CandidateFile, limits: &[Decimal]) -> Vec<u32> {
    let mut dec: Vec<u32> = limits.iter().map(|l| l.normalize().scale()).collect();
    for s in &c.sections {
        for cand in &s.candidates {
            for (j, x) in &cand.uses {
                dec[*j] = dec[*j].max(x.scale());
            }
        }
    }
    dec
}

/// `x` in whole units of `decimals` places, or `None` beyond the supported range.
pub fn to_units(x: Decimal, decimals: u32) -> Option<i64> {
    let mut m = x.normalize();
    m.rescale(decimals);
    if m.scale() != decimals {
        return None;
    }
    let v = m.mantissa();
    (v.unsigned_abs() <= MAX_ROW_TOTAL as u128).then_some(v as i64)
}
// ---- The file as a selection problem -------------------------------------------------------

/// The candidates as a selection problem.
pub struct Built {
    pub problem: Problem,
    /// Per section: the file's candidate index of each kept position.
    pub kept: Vec<Vec<usize>>,
    pub limits: Vec<Decimal>,
    pub decimals: Vec<u32>,
    /// -1 when minimising.
    pub sign: f64,
}

/// The problem in exact integer rows; range problems are input errors naming the row.
pub fn build(
    file: &CandidateFile,
    limits_label: &str,
    limits: Vec<Decimal>,
    sign: f64,
    d: &mut Diagnostics,
) -> Option<Built> {
    let decimals = crate::input::candidates::row_decimals(file, &limits);
    let mut units = Vec::with_capacity(limits.len());
    for (j, l) in limits.iter().enumerate() {
        match crate::input::candidates::to_units(*l, decimals[j]) {
            Some(u) => units.push(u),
            None => {
                d.error(
                    Place::file(limits_label).with_field(file.rows[j].clone()),
                    format!("a limit of {l}, beyond the supported range at {} decimal places", decimals[j]),
                    format!(
                        "a limit whose magnitude, in units of the row's finest decimal place, is at most {}",
                        crate::select::problem::MAX_ROW_TOTAL
                    ),
                );
                return None;
            }
        }
    }
    let mut p = Problem::new(units);
    let mut kept = Vec::with_capacity(file.sections.len());
    for s in &file.sections {
        let mut offers = Vec::with_capacity(s.candidates.len());
        for c in &s.candidates {
            let mut uses = Vec::with_capacity(c.uses.len());
            for (j, x) in &c.uses {
                let Some(u) = crate::input::candidates::to_units(*x, decimals[*j]) else {
                    d.error(
                        Place::line(&file.file, c.line).with_field(file.rows[*j].clone()),
                        format!("{x}, beyond the supported range"),
                        "a smaller amount",
                    );
                    return None;
                };
                uses.push((*j as u16, u));
            }
            offers.push(Offer {
                value: sign * c.value,
                uses,
            });
        }
        match p.push_group(&offers) {
            Ok(k) => kept.push(k),
            Err(e) => {
                let line = s.candidates.first().map_or(0, |c| c.line);
                let (found, expected) = match e {
                    ProblemError::TooLarge(j) => (
                        format!(
                            "`{}`: the candidates' uses together pass the supported range",
                            file.rows[j]
                        ),
                        "smaller amounts, or fewer decimal places".to_owned(),
                    ),
                    ProblemError::TooMany(n) => (
                        format!("section `{}` with {n} candidates", s.id),
                        format!(
                            "at most {} candidates per section",
                            crate::select::problem::MAX_CANDIDATES
                        ),
                    ),
                    other => (
                        other.to_string(),
                        "candidates the selection can hold".to_owned(),
                    ),
                };
                d.error(
                    Place::line(&file.file, line).with_field("section_id"),
                    found,
                    expected,
                );
                return None;
            }
        }
    }
    Some(Built {
        problem: p,
        kept,
        limits,
        decimals,
        sign,
    })
}

/// A row's amount in units, as an exact decimal.
pub fn amount(units: i64, decimals: u32) -> Decimal {
    Decimal::new(units, decimals)
}

pub fn infeasible(file: &CandidateFile, b: &Built, e: Infeasible) -> Error {
    let describe = |rows: &[(usize, i64)], verb: &str| -> String {
        rows.iter()
            .map(|&(j, u)| {
                format!(
                    "{}: limit {}, {verb} {}",
                    file.rows[j],
                    b.limits[j],
                    amount(u, b.decimals[j])
                )
            })
            .collect::<Vec<_>>()
            .join("\n  ")
    };
    Error::Infeasible(crate::error::NoPlan::text(match e {
        Infeasible::Rows(r) => format!(
            "these rows cannot be met even with every section at its least use:\n  {}",
            describe(&r, "least possible")
        ),
        Infeasible::Together(r) => format!(
            "each row can be met on its own, but a complete search proved that no selection meets them all together; the closest found breaks:\n  {}",
            describe(&r, "closest found")
        ),
        Infeasible::NotFound(r) => format!(
            "no selection that meets every row was found within the time limit (not proven impossible; a longer --time-limit may find one); the closest found breaks:\n  {}",
            describe(&r, "closest found")
        ),
    }))
}
