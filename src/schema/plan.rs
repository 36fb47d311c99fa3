//! The files of `plan --out DIR`: their rows as the files hold them.
//!
//! `candidates.csv` has a column per budget line (`cost:<line>`) and per target line
//! (`use:<line>`) after its fixed ones ([`CANDIDATE_COLUMNS`]); [`candidate_head`] writes its
//! header and [`write_candidate`] a row, from the selection's own integers.

use super::value::{Cents, Dec, Fixed, Price, Real};
use super::{record, FileSpec, Record};
use crate::model::Year;

/// Who writes these files, for messages.
pub const MAKER: &str = "pavestrat plan";

record! {
    /// `work_programme.csv`: every treatment of the plan, by year.
    Work in "work_programme.csv" by "pavestrat plan" {
        year: Year = "year",
        section_id: String = "section_id",
        treatment: String = "treatment",
        cost: Cents = "cost",
        region: String = "region",
        category: String = "category",
    }
}

record! {
    /// `section_plan.csv`: each section's strategy, its NPV and PV agency cost, and its best
    /// with no limits.
    SectionPlan in "section_plan.csv" by "pavestrat plan" {
        section_id: String = "section_id",
        region: String = "region",
        strategy: String = "strategy",
        npv: Cents = "npv",
        pv_agency_cost: Cents = "pv_agency_cost",
        unconstrained_strategy: String = "unconstrained_strategy",
        unconstrained_npv: Cents = "unconstrained_npv",
        same: bool = "same",
        first_works_year: Option<Year> = "first_works_year",
    }
}

record! {
    /// `budget_use.csv`: one row per budget line — its limit and the plan's spending in
    /// exact decimals, and its budget price (value per unit of money added to the line).
    BudgetUse in "budget_use.csv" by "pavestrat plan" {
        line: String = "line",
        year: Year = "year",
        limit: Dec = "limit",
        used: Dec = "used",
        price: Price = "price",
        state: String = "state",
        category: String = "category",
        region: String = "region",
        slack: Dec = "slack",
        group: String = "group",
    }
}

record! {
    /// `target_use.csv`: one row per condition-target line, with the length it counts, to the
    /// metre (the row is Σ use ≤ at_most × length_km).
    TargetUse in "target_use.csv" by "pavestrat plan" {
        line: String = "line",
        year: Year = "year",
        measure: String = "measure",
        at_most: Real = "at_most",
        achieved: Fixed<6> = "achieved",
        price: Price = "price",
        state: String = "state",
        region: String = "region",
        length_km: Fixed<3> = "length_km",
    }
}

record! {
    /// `condition.csv`: the network's length-weighted condition each year under the plan, the
    /// base and the unconstrained choice.
    Condition in "condition.csv" by "pavestrat plan" {
        year: Year = "year",
        case: String = "case",
        mean_iri: Fixed<6> = "mean_iri",
        good_share: Fixed<6> = "good_share",
        fair_share: Fixed<6> = "fair_share",
        poor_share: Fixed<6> = "poor_share",
    }
}

record! {
    /// `widening_plan.csv`: for a section that can be widened, the best strategy widening in
    /// one year, its NPV and the widening's FYRR, and which of the plan and the two timing
    /// rules pick that year.
    Widening in "widening_plan.csv" by "pavestrat plan" {
        section_id: String = "section_id",
        year: Year = "year",
        strategy: String = "strategy",
        npv: Cents = "npv",
        fyrr: Option<Fixed<6>> = "fyrr",
        by_fyrr: bool = "by_fyrr",
        by_npv: bool = "by_npv",
        planned: bool = "planned",
    }
}

record! {
    /// `limits.csv`: each row of the selection as `select --limits` reads it, with the limit
    /// the selection held exactly (cents as money, millionths as a target's measure).
    Limit in "limits.csv" by "pavestrat plan" {
        row: String = "row",
        limit: Dec = "limit",
    }
}

/// `summary.json`'s name.
pub const SUMMARY: &str = "summary.json";

/// `candidates.csv`'s name (written with `--candidates`).
pub const CANDIDATES: &str = "candidates.csv";

/// `candidates.csv`'s fixed columns, before one per selection row.
pub const CANDIDATE_COLUMNS: [&str; 4] = ["section_id", "strategy", "npv", "pv_agency_cost"];

/// `candidates.csv` as a file spec (its fixed columns).
pub const CANDIDATES_FILE: FileSpec = FileSpec {
    name: CANDIDATES,
    maker: MAKER,
    columns: &CANDIDATE_COLUMNS,
};

/// `programme.csv`'s name (written by [`crate::output::programme`]).
pub const PROGRAMME: &str = "programme.csv";

/// Every file `plan --out` writes by default, in the order it writes them.
pub const FILES: [&str; 9] = [
    Work::FILE.name,
    PROGRAMME,
    SectionPlan::FILE.name,
    BudgetUse::FILE.name,
    TargetUse::FILE.name,
    SUMMARY,
    Condition::FILE.name,
    Widening::FILE.name,
    Limit::FILE.name,
];

/// A selection row's column in `candidates.csv` (and its name in `limits.csv`): `cost:<line>`
/// for a budget line, `use:<line>` for a target line.
pub fn row_column(budget: bool, line: &str) -> String {
    format!("{}:{line}", if budget { "cost" } else { "use" })
}

/// `candidates.csv`'s header for these selection rows (`true`: a budget line), with its line
/// break.
pub fn candidate_head<'a>(rows: impl IntoIterator<Item = (bool, &'a str)>) -> String {
    let mut s = CANDIDATE_COLUMNS.join(",");
    for (budget, name) in rows {
        s.push(',');
        super::value::write_text(&row_column(budget, name), &mut s);
    }
    s.push('\n');
    s
}

/// One row of `candidates.csv`: the fixed cells, then each selection row's use as the selection
/// holds it (`budget[j]`: cents of money; otherwise millionths of the target's measure), `0`
/// for none.
pub fn write_candidate(
    out: &mut String,
    section_id: &str,
    strategy: &str,
    npv: Cents,
    pv_agency_cost: Cents,
    uses: &[i64],
    budget: &[bool],
) {
    use super::value::write_text;
    use super::Value;
    write_text(section_id, out);
    out.push(',');
    write_text(strategy, out);
    out.push(',');
    npv.write(out);
    out.push(',');
    pv_agency_cost.write(out);
    for (x, &is_money) in uses.iter().zip(budget) {
        out.push(',');
        if *x == 0 {
            out.push('0');
        } else {
            let places = if is_money { 2 } else { 6 };
            Dec(rust_decimal::Decimal::new(*x, places)).write(out);
        }
    }
    out.push('\n');
}

/// A row of `candidates.csv` as read back: its fixed cells, and its use of each selection row
/// by the row's column name (`cost:<line>`, `use:<line>`), in the row's measure.
#[derive(Debug, Clone, PartialEq)]
pub struct Candidate {
    pub section_id: String,
    pub strategy: String,
    pub npv: Cents,
    pub pv_agency_cost: Cents,
    pub uses: Vec<(String, f64)>,
}

/// The rows of `dir/candidates.csv` whose section_id `keep` accepts.
pub fn read_candidates(
    dir: &std::path::Path,
    keep: impl Fn(&str) -> bool,
) -> crate::error::Result<Vec<Candidate>> {
    let t =
        crate::schema::readback::read(dir, CANDIDATES, MAKER, |r| keep(r.get(0).unwrap_or("")))?;
    let fixed = CANDIDATES_FILE.positions(&t)?;
    let rows: Vec<usize> = (0..t.head.len()).filter(|i| !fixed.contains(i)).collect();
    t.rows
        .iter()
        .map(|(line, rec)| {
            let mut cells = super::Cells::new(&t, &fixed, *line, rec);
            let (section_id, strategy, npv, pv_agency_cost) =
                (cells.take()?, cells.take()?, cells.take()?, cells.take()?);
            let uses = rows
                .iter()
                .map(|&col| Ok((t.head[col].clone(), t.number(*line, rec, col)?)))
                .collect::<crate::error::Result<_>>()?;
            Ok(Candidate {
                section_id,
                strategy,
                npv,
                pv_agency_cost,
                uses,
            })
        })
        .collect()
}
