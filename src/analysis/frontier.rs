//! The budget frontier: the best objective at several budget levels, from one simulation.
//!
//! The candidates are built once; each level only changes the limits of the budget lines it
//! scales (all of them, or the lines of one budget group) and selects again. Two promises hold by
//! construction, whatever the selection's heuristics do at each level:
//! - **non-decreasing**: levels are solved from the lowest up, and a plan that fits one level fits
//!   every higher one (limits only grow), so a level whose own search ends below the level before
//!   it keeps the earlier plan;
//! - **bounds**: the optimum can only grow with the level, so every level's bound is also capped
//!   by the bounds of the levels above it.
//!
//! A level at which no scaled line can bind (each limit covers the most every section could put
//! on it) is added at the top, marked `unlimited`: there every section gets its own best strategy
//! (when targets and unscaled lines allow it).

use crate::error::{Error, Result};
use crate::input::Run;
use crate::plan::{solve_checked, Candidates, Row, RowKind};
use crate::progress::Progress;
use crate::schema::analysis::FrontierLevel;
use crate::schema::value::{Cents, Real, Sci6};
use crate::select::network::{relative_gap, Options, Status};

/// Budget levels written when none are asked for.
pub const DEFAULT_LEVELS: [f64; 8] = [0.25, 0.5, 0.75, 1.0, 1.25, 1.5, 2.0, 3.0];

/// One level of the frontier.
#[derive(Debug, Clone, PartialEq)]
pub struct Point {
    /// Factor on the scaled lines' limits.
    pub level: f64,
    /// Whether this is the level at which no scaled line can bind.
    pub unlimited: bool,
    /// Sum of every budget line's limit at this level (scaled or not).
    pub total_budget: f64,
    /// The plan's objective and the bound as reported (NPV, or PV agency cost for least-cost),
    /// with the relative gap; `None` when no plan meets the lines at this level.
    pub solved: Option<Solved>,
    /// Why no plan meets the lines at this level (empty when one does).
    pub reason: String,
}

/// A level's reason for having no plan, in one line: what kind of impossibility, and the
/// first lines it names.
fn reason(why: &crate::error::NoPlan) -> String {
    use crate::error::NoPlanKind;
    let kind = match why.kind {
        Some(NoPlanKind::LeastSpending) => "the least spending the sections allow exceeds",
        Some(NoPlanKind::ProvenTogether) => "no plan meets these together",
        Some(NoPlanKind::NotFound) | None => "no plan found in time meets",
    };
    // Four names at most; `;` between them, so that the CSV cell needs no quotes.
    let shown = why.lines.len().min(4);
    let more = match why.lines.len() - shown {
        0 => String::new(),
        n => format!("; and {n} more"),
    };
    format!("{kind}: {}{more}", why.lines[..shown].join("; "))
}

/// A solved level.
#[derive(Debug, Clone, PartialEq)]
pub struct Solved {
    pub objective: f64,
    pub bound: f64,
    pub gap: f64,
    pub status: &'static str,
    /// Whether the level kept the plan of a lower level (its own search ended lower).
    pub carried: bool,
}

/// Which budget lines a frontier scales.
#[derive(Debug, Clone, PartialEq)]
pub enum Lines {
    All,
    /// The lines of this group (or this one line), by name.
    Only(String),
}

impl Lines {
    /// Whether `row` is scaled. The scenario's lines are named `group-YEAR`.
    pub fn scales(&self, run: &Run, row: &Row) -> bool {
        match (self, &row.kind) {
            (_, RowKind::Target(_)) => false,
            (Lines::All, RowKind::Budget(_)) => true,
            (Lines::Only(name), RowKind::Budget(b)) => {
                let line = &run.scenario.budget_lines[*b];
                line.group == *name || line.name == *name
            }
        }
    }
}

/// Solve every level (and the unlimited one) on `c`, whose budget limits it changes.
pub fn frontier(
    run: &Run,
    c: &mut Candidates,
    levels: &[f64],
    lines: &Lines,
    options: &Options,
    progress: &Progress,
) -> Result<Vec<Point>> {
    let scaled = |r: &Row| lines.scales(run, r);
    let mut wanted: Vec<(f64, bool)> = levels.iter().map(|&l| (l, false)).collect();
    if let Some(top) = c.unlimited_level(&scaled) {
        wanted.push((top, true));
    }
    wanted.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    wanted.dedup_by(|later, earlier| {
        if later.0.total_cmp(&earlier.0).is_eq() {
            earlier.1 |= later.1;
            true
        } else {
            false
        }
    });
    let mut points = Vec::with_capacity(wanted.len());
    let mut reasons: Vec<(usize, String)> = Vec::new();
    let mut raw_bounds = Vec::with_capacity(wanted.len());
    // The best plan so far and its value (internal sign: larger is better).
    let mut carried: Option<(Vec<u16>, f64)> = None;
    for &(level, unlimited) in &wanted {
        c.set_budget_level(run, level, &scaled)?;
        // Each year's money counted once (a ring-fenced line's is part of its wider line's).
        let total_budget =
            crate::input::scenario::total_limit(c.rows.iter().filter_map(|r| {
                match (&r.kind, r.money) {
                    (crate::plan::RowKind::Budget(b), Some(m)) => {
                        Some((&run.scenario.budget_lines[*b], m.to_f64()))
                    }
                    _ => None,
                }
            }));
        let solved = match solve_checked(run, c, options, crate::plan::Series::None) {
            Ok((o, _)) => {
                let (plan, value, kept) = match &carried {
                    Some((p, v)) if *v > o.value => (p.clone(), *v, true),
                    _ => (o.plan.clone(), o.value, false),
                };
                carried = Some((plan, value));
                raw_bounds.push(Some(o.bound));
                Some((value, o.bound, o.status, kept))
            }
            Err(Error::Infeasible(why)) => {
                raw_bounds.push(None);
                reasons.push((points.len(), reason(&why)));
                None
            }
            Err(e) => return Err(e),
        };
        progress.inc(1);
        points.push((level, unlimited, total_budget, solved));
    }
    // Cap each bound by the bounds above it (the optimum only grows with the level).
    let mut cap = f64::INFINITY;
    let mut capped = vec![f64::INFINITY; raw_bounds.len()];
    for i in (0..raw_bounds.len()).rev() {
        if let Some(b) = raw_bounds[i] {
            cap = cap.min(b);
        }
        capped[i] = cap;
    }
    Ok(points
        .into_iter()
        .zip(capped)
        .enumerate()
        .map(
            |(k, ((level, unlimited, total_budget, solved), cap))| Point {
                level,
                unlimited,
                total_budget,
                reason: reasons
                    .iter()
                    .find(|(at, _)| *at == k)
                    .map(|(_, r)| r.clone())
                    .unwrap_or_default(),
                solved: solved.map(|(value, bound, status, kept)| {
                    let bound = bound.min(cap).max(value);
                    let gap = relative_gap(value, bound);
                    // A level the search proved optimal stays so (the plan at level 1 is
                    // `plan`'s, and says the same); a bound capped by a higher level's may
                    // close the gap of another.
                    let status = match status {
                        Status::Optimal => Status::Optimal,
                        _ if gap <= 1e-12 => Status::Optimal,
                        _ if gap <= options.gap => Status::WithinGap,
                        other => other,
                    };
                    Solved {
                        objective: c.objective_of(value),
                        bound: c.objective_of(bound),
                        gap,
                        status: status.name(),
                        carried: kept,
                    }
                }),
            },
        )
        .collect())
}

/// `frontier.csv`'s rows: each level's total budget, and the best plan's objective, bound, gap
/// and status (empty but for `infeasible` when no plan fits).
pub fn rows(points: &[Point]) -> Vec<FrontierLevel> {
    points
        .iter()
        .map(|p| FrontierLevel {
            level: Real(p.level),
            total_budget: Cents::of(p.total_budget),
            objective: p.solved.as_ref().and_then(|v| Cents::of_f64(v.objective)),
            bound: p.solved.as_ref().and_then(|v| Cents::of_f64(v.bound)),
            gap: p.solved.as_ref().map(|v| Sci6::of(v.gap)),
            status: p
                .solved
                .as_ref()
                .map_or("infeasible".to_owned(), |v| v.status.to_string()),
            unlimited: p.unlimited,
            reason: p.reason.clone(),
        })
        .collect()
}

#[cfg(test)]
mod reason_tests {
    use super::reason;
    use crate::error::{NoPlan, NoPlanKind};

    fn why(kind: NoPlanKind, n: usize) -> NoPlan {
        NoPlan {
            kind: Some(kind),
            lines: (1..=n).map(|k| format!("w-{k}")).collect(),
            text: String::new(),
        }
    }

    #[test]
    fn a_reason_names_the_kind_and_the_first_lines() {
        assert_eq!(
            reason(&why(NoPlanKind::LeastSpending, 2)),
            "the least spending the sections allow exceeds: w-1; w-2"
        );
        assert_eq!(
            reason(&why(NoPlanKind::ProvenTogether, 6)),
            "no plan meets these together: w-1; w-2; w-3; w-4; and 2 more"
        );
        assert_eq!(
            reason(&why(NoPlanKind::NotFound, 1)),
            "no plan found in time meets: w-1"
        );
    }
}
