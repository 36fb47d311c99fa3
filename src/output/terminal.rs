//! What `plan` prints on the terminal: the plan's value against the unconstrained choice and the
//! base, spending against every budget line with its price, the condition targets, and the
//! certificate with what its status means.

use crate::input::plan::Objective;
use crate::input::Run;
use crate::model::money::grouped;
use crate::output::files::Facts;
use crate::plan::{Plan, RowKind};
use std::fmt::Write as _;

/// The terminal summary of a plan.
pub fn plan(run: &Run, p: &Plan, f: &Facts) -> String {
    let sc = &run.scenario;
    let c = &p.candidates;
    let o = &p.outcome;
    let money = &sc.money_label;
    let t = p.totals();
    let mut s =
        format!(
        "Work programme for {} — {} sections, {} candidates after dominated ones were removed\n",
        if sc.title.is_empty() { &sc.file } else { &sc.title },
        c.sections(),
        c.problem.candidate_count()
    );
    if (f.budget_scale - 1.0).abs() > 1e-12 {
        let _ = writeln!(s, "every budget line scaled by {}", f.budget_scale);
    }
    let _ = writeln!(
        s,
        "objective: {}\n",
        match c.objective {
            Objective::Npv => "largest total NPV against the base",
            Objective::LeastCost => "least PV agency cost within the condition targets",
        }
    );
    let _ = writeln!(s, "{:<28} {:>18} {:>20}", "", "NPV", "PV agency cost");
    for (label, x) in [
        ("this plan", t.plan),
        ("no budget limits", t.unconstrained),
        ("base (routine only)", t.base),
    ] {
        let _ = writeln!(
            s,
            "{:<28} {:>18} {:>20}",
            label,
            grouped(x.npv, 0),
            grouped(x.pv_agency, 0)
        );
    }
    if t.unconstrained.npv.abs() > 0.0 {
        let _ = writeln!(
            s,
            "the plan keeps {:.1} % of the NPV the network could earn with no budget limits",
            100.0 * t.plan.npv / t.unconstrained.npv
        );
    }
    let _ = writeln!(s, "\nBudget lines (money in {money}; price = gain in the objective per unit of money added to the line):");
    let _ = writeln!(
        s,
        "{:<26} {:>16} {:>16} {:>7} {:>10}",
        "line", "limit", "used", "use", "price"
    );
    for (j, row) in c.rows.iter().enumerate() {
        match row.kind {
            RowKind::Budget(b) => {
                let limit = row.money.unwrap_or_default().to_f64();
                let used = p.spent[b].to_f64();
                let _ = writeln!(
                    s,
                    "{:<26} {:>16} {:>16} {:>6.1}% {:>10}",
                    row.name,
                    grouped(limit, 0),
                    grouped(used, 0),
                    if limit > 0.0 {
                        100.0 * used / limit
                    } else {
                        0.0
                    },
                    if o.prices[j] > 0.0 {
                        format!("{:.4}", o.prices[j])
                    } else {
                        "slack".to_owned()
                    }
                );
            }
            RowKind::Target(_) => {}
        }
    }
    if !sc.plan.targets.is_empty() {
        let _ = writeln!(s, "\nCondition targets:");
        let mut ti = 0;
        for (j, row) in c.rows.iter().enumerate() {
            if let RowKind::Target(k) = row.kind {
                let tl = &sc.plan.targets[k];
                let _ = writeln!(
                    s,
                    "{:<26} {:<11} at most {:<8} achieved {:<10.4} price {}",
                    row.name,
                    tl.measure.name(),
                    tl.at_most,
                    p.achieved[ti],
                    if o.prices[j] > 0.0 {
                        format!("{:.4}", o.prices[j])
                    } else {
                        "slack".to_owned()
                    }
                );
                ti += 1;
            }
        }
    }
    let binding = o.prices.iter().filter(|x| **x > 0.0).count();
    let _ = writeln!(
        s,
        "\n{binding} of {} lines bind (price above zero).",
        c.rows.len()
    );
    let _ = writeln!(
        s,
        "Certificate: plan {} {money}, bound {} {money}, gap {:.4} % — {} ({} path, {} price updates, {} contested sections, {:.2} s selection, {:.2} s simulation)",
        grouped(c.objective_of(o.value), 0),
        grouped(c.objective_of(o.bound), 0),
        o.gap * 100.0,
        o.status.name(),
        o.method.name(),
        o.iterations,
        o.contested,
        f.selection_seconds,
        f.candidate_seconds
    );
    let _ = writeln!(
        s,
        "{}",
        o.status.meaning(o.gap, f.requested_gap, f.time_limit)
    );
    let _ = writeln!(s, "\n{}", crate::CAUTION);
    s
}
