//! What `select` writes and prints: `selection.csv`, `row_use.csv` (columns in
//! [`crate::schema::others::select`]), `summary.json` and the terminal certificate.

use crate::input::candidates::{self, CandidateFile};
use crate::input::candidates::{amount, Built};
use crate::model::money::grouped;
use crate::output::format::Field;
use crate::schema::others::select::{ROW_USE, SELECTION};
use crate::select::network::Outcome;
use std::fmt::Write as _;

/// What the user asked of the selection: its gap and time limit (the status's meaning says how
/// the run stands against them).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Asked {
    pub gap: f64,
    pub time_limit: f64,
}

/// The chosen candidate of each section.
fn chosen<'a>(
    file: &'a CandidateFile,
    b: &Built,
    o: &Outcome,
) -> impl Iterator<Item = (&'a str, &'a candidates::Candidate)> {
    let picks: Vec<usize> = b
        .kept
        .iter()
        .zip(&o.plan)
        .map(|(k, &i)| k[i as usize])
        .collect();
    file.sections
        .iter()
        .zip(picks)
        .map(|(s, i)| (s.id.as_str(), &s.candidates[i]))
}

pub fn selection_csv(file: &CandidateFile, b: &Built, o: &Outcome) -> String {
    let mut s = SELECTION.columns.join(",");
    for c in &file.carried {
        let _ = write!(s, ",{}", Field(c));
    }
    s.push('\n');
    for (id, c) in chosen(file, b, o) {
        let _ = write!(
            s,
            "{},{},{}",
            Field(id),
            Field(&c.strategy),
            Field(&c.value_text)
        );
        for x in &c.carried {
            let _ = write!(s, ",{}", Field(x));
        }
        s.push('\n');
    }
    s
}

/// Prices per unit of each row's own measure (the selection's are per unit of its finest
/// decimal place), as the objective counts (a gain in value, or a saving when minimising).
fn price(b: &Built, o: &Outcome, j: usize) -> f64 {
    o.prices[j] * 10f64.powi(b.decimals[j] as i32)
}

pub fn row_use_csv(file: &CandidateFile, b: &Built, o: &Outcome) -> String {
    let mut s = ROW_USE.head();
    for (j, name) in file.rows.iter().enumerate() {
        let _ = writeln!(
            s,
            "{},{},{},{}",
            Field(name),
            amount(b.problem.limits[j], b.decimals[j]),
            amount(o.used[j], b.decimals[j]),
            price(b, o, j)
        );
    }
    s
}

pub fn summary_text(
    file: &CandidateFile,
    b: &Built,
    o: &Outcome,
    asked: &Asked,
    seconds: f64,
) -> String {
    let mut s = String::new();
    let verb = if b.sign < 0.0 { "least" } else { "largest" };
    let _ = writeln!(
        s,
        "Selection from {}: {} sections, {} candidates ({} after dominated ones were removed), {} rows; {verb} total {}",
        file.file,
        file.sections.len(),
        file.sections.iter().map(|x| x.candidates.len()).sum::<usize>(),
        b.problem.candidate_count(),
        file.rows.len(),
        file.value_column
    );
    let binding: Vec<usize> = (0..file.rows.len())
        .filter(|&j| o.prices[j] > 0.0)
        .collect();
    if !binding.is_empty() {
        let _ = writeln!(
            s,
            "\nrows that bind (price = {} per unit added to the limit):",
            if b.sign < 0.0 { "saving" } else { "gain" }
        );
        for &j in binding.iter().take(20) {
            let _ = writeln!(
                s,
                "  {:<32} limit {:>18}  used {:>18}  price {:.6}",
                file.rows[j],
                amount(b.problem.limits[j], b.decimals[j]).to_string(),
                amount(o.used[j], b.decimals[j]).to_string(),
                price(b, o, j)
            );
        }
        if binding.len() > 20 {
            let _ = writeln!(
                s,
                "  … and {} more (row_use.csv lists every row)",
                binding.len() - 20
            );
        }
    }
    let _ = writeln!(
        s,
        "\nCertificate: total {} {}, bound {}, gap {:.4} % — {} ({} path, {:.2} s)",
        file.value_column,
        grouped(b.sign * o.value, 2),
        grouped(b.sign * o.bound, 2),
        o.gap * 100.0,
        o.status.name(),
        o.method.name(),
        seconds
    );
    let _ = writeln!(
        s,
        "{}",
        o.status.meaning(o.gap, asked.gap, asked.time_limit)
    );
    let _ = writeln!(s, "\n{}", crate::CAUTION);
    s
}

pub fn summary_json(
    file: &CandidateFile,
    b: &Built,
    o: &Outcome,
    asked: &Asked,
    seconds: f64,
    total_seconds: f64,
) -> String {
    let v = serde_json::json!({
        "candidates_file": file.file,
        "value_column": file.value_column,
        "sense": if b.sign < 0.0 { "minimise" } else { "maximise" },
        "objective": b.sign * o.value,
        "bound": b.sign * o.bound,
        "gap": o.gap,
        "status": o.status.name(),
        "meaning": o.status.meaning(o.gap, asked.gap, asked.time_limit),
        "method": o.method.name(),
        "requested_gap": asked.gap,
        "time_limit": asked.time_limit,
        "seconds": seconds,
        "total_seconds": total_seconds,
        "sections": file.sections.len(),
        "candidates": file.sections.iter().map(|x| x.candidates.len()).sum::<usize>(),
        "candidates_kept": b.problem.candidate_count(),
        "rows": file.rows.len(),
        "caution": crate::CAUTION,
    });
    let mut s = serde_json::to_string_pretty(&v).unwrap_or_default();
    s.push('\n');
    s
}
