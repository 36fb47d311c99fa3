//! The appraisal of cash flows a user gives (`pavestrat cashflow`): each alternative's
//! indicators, the incremental analysis of mutually exclusive alternatives, or — for
//! independent projects within a budget — the set of greatest NPV beside what ranking by NPV or
//! by NPV per unit of cost would pick.
//!
//! Discounting follows [`crate::economics`]: base-year flows are not discounted
//! (numpy-financial's `npv`), so a spreadsheet's `NPV()` corresponds to a base year one year
//! before the first flow.

use crate::economics::budget::{best_set, greedy, Portfolio, Project, Ranking};
use crate::economics::incremental::{analyse, Analysis};
use crate::economics::{appraise, Discounting, Indicators, Timing};
use crate::error::{Error, Result};
use crate::model::Year;
use crate::select::SelectError;

/// The longest stream accepted, in years, and the farthest a base year may lie from a stream's
/// first year (a guard against a mistyped year).
pub const MAX_SPAN: i32 = 500;

/// How the flows are appraised.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// The real discount rate.
    pub rate: f64,
    /// The year money is discounted to (the first flow's year when `None`).
    pub base_year: Option<Year>,
    /// Discount each year's flows from its middle.
    pub mid_year: bool,
    /// The alternatives are independent projects, not mutually exclusive.
    pub independent: bool,
    /// With independent projects: the money available, against each one's PV of costs.
    pub budget: Option<f64>,
}

/// Everything computed for one run of the command.
pub struct Appraisal {
    pub file: String,
    pub discounting: Discounting,
    pub alternatives: Vec<(String, Indicators)>,
    pub incremental: Option<Analysis>,
    pub budget: Option<BudgetResult>,
}

pub struct BudgetResult {
    pub budget: f64,
    pub projects: Vec<Project>,
    pub best: Portfolio,
    pub by_npv: Portfolio,
    pub by_ratio: Portfolio,
}

/// Appraise named streams, the alternatives of a cash-flow file (`label` names it in the
/// result).
pub fn appraise_flows(
    label: &str,
    streams: Vec<(String, crate::economics::Stream)>,
    args: &Settings,
) -> Result<Appraisal> {
    let budget = args.budget;
    let first_year = streams
        .iter()
        .filter(|(_, s)| !s.is_empty())
        .map(|(_, s)| s.first_year.0)
        .min()
        .unwrap_or(0);
    let base_year = args.base_year.map_or(first_year, |y| y.0);
    if (i64::from(base_year) - i64::from(first_year)).abs() > i64::from(MAX_SPAN) {
        return Err(Error::Usage(format!(
            "--base-year {base_year} is more than {} years from the stream's first year {first_year}",
            MAX_SPAN
        )));
    }
    let timing = if args.mid_year {
        Timing::MidYear
    } else {
        Timing::EndOfYear
    };
    let discounting = Discounting::new(args.rate, crate::model::Year(base_year), timing)
        .map_err(|e| Error::Usage(format!("--rate: {e}")))?;
    let incremental =
        (streams.len() > 1 && !args.independent).then(|| analyse(&streams, &discounting));
    // The analysis already appraised every alternative; keep the file's order for the tables.
    let alternatives: Vec<(String, Indicators)> = match &incremental {
        Some(a) => streams
            .iter()
            .filter_map(|(n, _)| a.alternatives.iter().find(|r| &r.name == n))
            .map(|r| (r.name.clone(), r.indicators.clone()))
            .collect(),
        None => streams
            .iter()
            .map(|(n, s)| (n.clone(), appraise(s, &discounting)))
            .collect(),
    };
    let budget = match budget {
        Some(b) => {
            let projects: Vec<Project> = alternatives
                .iter()
                .map(|(n, i)| Project {
                    name: n.clone(),
                    cost: i.pv_costs,
                    npv: i.npv,
                })
                .collect();
            let located = |e: SelectError| match e {
                SelectError::Range(m) => Error::Usage(format!("--budget with these projects: {m}")),
                other => Error::Internal(format!("selection: {other}")),
            };
            let best = best_set(&projects, b).map_err(located)?;
            Some(BudgetResult {
                budget: b,
                by_npv: greedy(&projects, b, Ranking::Npv).map_err(located)?,
                by_ratio: greedy(&projects, b, Ranking::NpvPerCost).map_err(located)?,
                best,
                projects,
            })
        }
        None => None,
    };
    Ok(Appraisal {
        file: label.to_owned(),
        discounting,
        alternatives,
        incremental,
        budget,
    })
}
