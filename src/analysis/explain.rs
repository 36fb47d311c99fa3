//! Why a section got its strategy in a plan, read back from the plan's output directory
//! (`explain`).
//!
//! Every candidate of the section is valued at the plan's budget prices: its objective value
//! (NPV, or −PV agency cost for a least-cost plan) less the priced use of every line, Σ price ×
//! use. The chosen strategy is normally the one with the highest priced value; the margin to the
//! runner-up says how firm the choice is. Where the chosen one is not the highest, the section
//! is one of the few the budgets split (the whole-plan search placed it).

use crate::diag::did_you_mean;
use crate::error::{Error, Result};
use crate::schema::plan::{
    read_candidates, row_column, BudgetUse, SectionPlan, TargetUse, CANDIDATES, SUMMARY,
};
use crate::schema::summary::Summary;
use crate::schema::{self, Record as _};
use std::collections::HashMap;
use std::path::Path;

/// One candidate of the section at the plan's prices.
#[derive(Debug, Clone)]
pub struct Candidate {
    pub strategy: String,
    /// Its objective value: NPV, or −PV agency cost for a least-cost plan.
    pub value: f64,
    pub npv: f64,
    /// Σ price × use over the plan's budget lines and targets.
    pub priced: f64,
    /// Its use of each line, by the line's column in candidates.csv (`cost:LINE`, `use:LINE`).
    pub uses: Vec<(String, f64)>,
}

/// A line of the plan as `explain` shows it: its name, price in the bound and state under the
/// plan (`binding` or `slack`).
#[derive(Debug, Clone)]
pub struct Line {
    pub name: String,
    pub price: f64,
    pub state: String,
}

/// What another candidate would have used beyond the chosen one: each line where the two
/// differ, with the difference (positive: more than the chosen) and its worth at the line's
/// price, largest worth first.
#[derive(Debug, Clone)]
pub struct Difference {
    pub other: String,
    /// Why this candidate: the section's best with no limits, or the runner-up.
    pub unconstrained: bool,
    /// Its objective value less the chosen one's.
    pub more_value: f64,
    pub lines: Vec<(Line, f64, f64)>,
}

impl Candidate {
    /// The value less the priced use.
    pub fn priced_value(&self) -> f64 {
        self.value - self.priced
    }
}

/// A section's choice in a plan and its candidates, best priced value first (ties by name).
#[derive(Debug, Clone)]
pub struct Explanation {
    pub section: String,
    pub chosen: String,
    pub unconstrained: String,
    pub candidates: Vec<Candidate>,
    pub least_cost: bool,
    /// The money label.
    pub money: String,
    /// What the section's best with no limits (or, when that is the chosen one, the runner-up)
    /// would have used beyond the chosen one.
    pub difference: Option<Difference>,
}

/// The difference between candidate `other` and `chosen`, line by line (`lines` by column).
fn difference(
    chosen: &Candidate,
    other: &Candidate,
    unconstrained: bool,
    lines: &HashMap<String, Line>,
) -> Difference {
    let use_of = |c: &Candidate, col: &str| {
        c.uses
            .iter()
            .find(|(k, _)| k == col)
            .map_or(0.0, |(_, u)| *u)
    };
    let mut columns: Vec<&str> = chosen
        .uses
        .iter()
        .chain(&other.uses)
        .map(|(k, _)| k.as_str())
        .collect();
    columns.sort_unstable();
    columns.dedup();
    let mut out: Vec<(Line, f64, f64)> = columns
        .into_iter()
        .filter_map(|col| {
            let line = lines.get(col)?;
            let d = use_of(other, col) - use_of(chosen, col);
            (d.abs() >= 0.005).then(|| (line.clone(), d, d * line.price))
        })
        .collect();
    out.sort_by(|a, b| {
        b.2.abs()
            .total_cmp(&a.2.abs())
            .then(b.1.abs().total_cmp(&a.1.abs()))
            .then(a.0.name.cmp(&b.0.name))
    });
    Difference {
        other: other.strategy.clone(),
        unconstrained,
        more_value: other.value - chosen.value,
        lines: out,
    }
}

/// Read the plan in `dir` (written with `--candidates`) and value section `id`'s candidates at
/// its prices. A directory that is not a plan's, a plan without candidates or an unknown
/// section is a usage error that says what was expected.
pub fn read(dir: &Path, id: &str) -> Result<Explanation> {
    if let Some(m) = crate::io::verify(dir)? {
        crate::io::check_plan_set(
            dir,
            &m,
            &[
                SUMMARY,
                SectionPlan::FILE.name,
                CANDIDATES,
                BudgetUse::FILE.name,
            ],
        )?;
    }
    if dir.join(SUMMARY).is_file() && !dir.join(CANDIDATES).is_file() {
        return Err(Error::Usage(format!(
            "{} holds a plan but no candidates.csv; expected a plan written with every candidate: `explain` values each candidate of the section at the plan's prices, and `plan` writes them only when asked (run `pavestrat plan --scenario FILE --out {} --candidates`)",
            dir.display(),
            dir.display()
        )));
    }
    let summary_path = dir.join(SUMMARY);
    let summary: Summary = std::fs::read_to_string(&summary_path)
        .ok()
        .and_then(|t| serde_json::from_str(&t).ok())
        .ok_or_else(|| {
            Error::Usage(format!(
                "cannot read {}; expected the output directory of `pavestrat plan --out DIR` (give it with --from DIR)",
                summary_path.display()
            ))
        })?;
    let least_cost = summary.objective_kind == "least-cost";
    let money = summary.money;

    // Each selection row's price and state, by its column in candidates.csv.
    let mut lines: HashMap<String, Line> = HashMap::new();
    for r in schema::read::<BudgetUse>(dir)? {
        let line = Line {
            name: r.line.clone(),
            price: r.price.0,
            state: r.state,
        };
        lines.insert(row_column(true, &r.line), line);
    }
    for r in schema::read::<TargetUse>(dir)? {
        let line = Line {
            name: r.line.clone(),
            price: r.price.0,
            state: r.state,
        };
        lines.insert(row_column(false, &r.line), line);
    }
    let plan: Vec<SectionPlan> = schema::read(dir)?;
    let Some(row) = plan.iter().find(|r| r.section_id == id) else {
        let names: Vec<&str> = plan.iter().map(|r| r.section_id.as_str()).collect();
        let hint = did_you_mean(id, &names)
            .map(|m| format!(" (did you mean `{m}`?)"))
            .unwrap_or_default();
        return Err(Error::Usage(format!(
            "no section `{id}` in {}{hint}; expected a section_id of the plan",
            dir.join(SectionPlan::FILE.name).display()
        )));
    };
    let chosen = row.strategy.clone();
    let unconstrained = row.unconstrained_strategy.clone();

    let mut opts: Vec<Candidate> = Vec::new();
    for c in read_candidates(dir, |s| s == id)? {
        let (npv, pva) = (c.npv.to_f64(), c.pv_agency_cost.to_f64());
        let mut priced = 0.0;
        for (column, used) in &c.uses {
            match lines.get(column) {
                Some(l) if l.price != 0.0 => priced += l.price * used,
                _ => {}
            }
        }
        opts.push(Candidate {
            strategy: c.strategy,
            value: if least_cost { -pva } else { npv },
            npv,
            priced,
            uses: c.uses,
        });
    }
    opts.sort_by(|a, b| {
        b.priced_value()
            .total_cmp(&a.priced_value())
            .then(a.strategy.cmp(&b.strategy))
    });
    let mine = opts.iter().find(|o| o.strategy == chosen);
    let other = if unconstrained != chosen {
        opts.iter()
            .find(|o| o.strategy == unconstrained)
            .map(|o| (o, true))
    } else {
        opts.iter()
            .find(|o| o.strategy != chosen)
            .map(|o| (o, false))
    };
    let difference = mine
        .zip(other)
        .map(|(mine, (other, unc))| difference(mine, other, unc, &lines));
    Ok(Explanation {
        section: id.to_owned(),
        chosen,
        unconstrained,
        candidates: opts,
        least_cost,
        money,
        difference,
    })
}
