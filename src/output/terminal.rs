//! What the commands print on the terminal. `plan`: the plan's value against the unconstrained
//! choice and the base, spending against every budget line with its price, the condition
//! targets, and the certificate with what its status means; `risk`, `sensitivity`, `frontier`
//! `check` and `explain`: their summaries.

use crate::analysis::explain::Explanation;
use crate::analysis::frontier::{Lines, Point};
use crate::analysis::risk::{precision, stats, Slice};
use crate::analysis::sensitivity::INPUTS;
use crate::input::plan::Objective;
use crate::input::Run;
use crate::model::money::grouped;
use crate::output::files::Facts;
use crate::output::format::{price_beside_state, share_text, use_percent};
use crate::plan::{LineState, Plan, RowKind};
use std::fmt::Write as _;

/// The terminal summary of a plan.
pub fn plan(run: &Run, p: &Plan, f: &Facts, full: bool) -> String {
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
    s.push_str(&programme(run, p, full));
    let states = p.line_states(run);
    let within = sc.plan.binding_within();
    let _ = writeln!(
        s,
        "\nBudget lines (money in {money}; binding = used to within {} of the limit; price = the \
         bound's gain in the objective per unit of money added to the line):",
        share_text(within)
    );
    let _ = writeln!(
        s,
        "{:<26} {:>16} {:>16} {:>7}  {:<8} {:>10}",
        "line", "limit", "used", "use", "state", "price"
    );
    let bracketed = |j: usize| states[j] == LineState::Slack && o.prices[j] > 0.0;
    for (j, row) in c.rows.iter().enumerate() {
        if let RowKind::Budget(b) = row.kind {
            let limit = row.money.unwrap_or_default().to_f64();
            let used = p.spent[b].to_f64();
            let _ = writeln!(
                s,
                "{:<26} {:>16} {:>16} {:>6.1}%  {:<8} {:>10}",
                row.name,
                grouped(limit, 0),
                grouped(used, 0),
                use_percent(limit, used),
                states[j].name(),
                price_beside_state(o.prices[j], states[j] == LineState::Binding)
            );
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
                    "{:<26} {:<11} at most {:<8} achieved {:<10.4} {:<8} price {}",
                    row.name,
                    tl.measure.name(),
                    tl.at_most,
                    p.achieved[ti],
                    states[j].name(),
                    price_beside_state(o.prices[j], states[j] == LineState::Binding)
                );
                ti += 1;
            }
        }
    }
    let count = |budget: bool| {
        let rows = || {
            c.rows
                .iter()
                .enumerate()
                .filter(move |(_, r)| matches!(r.kind, RowKind::Budget(_)) == budget)
        };
        (
            rows()
                .filter(|(j, _)| states[*j] == LineState::Binding)
                .count(),
            rows().count(),
        )
    };
    let (b, nb) = count(true);
    let _ = write!(s, "\n{b} of {nb} budget lines are binding");
    if !sc.plan.targets.is_empty() {
        let (t, nt) = count(false);
        let _ = write!(s, ", {t} of {nt} condition targets");
    }
    let _ = writeln!(s, ".");
    let slack_priced = (0..c.rows.len()).filter(|j| bracketed(*j)).count();
    if slack_priced > 0 {
        let _ = writeln!(
            s,
            "Prices in brackets: {slack_priced} slack line{} the bound prices all the same. That \
             price is the relaxation's, where a section's strategy may be taken in part; the \
             plan's whole choices leave room under the line.",
            if slack_priced == 1 { "" } else { "s" }
        );
    }
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

/// The terminal summary of a risk slice: the plan's NPV over the draws with the precision of its
/// statistics, and the budget lines the plan overspends in some draws.
pub fn risk(s: &Slice) -> String {
    let l = &s.layout;
    let m = &l.money;
    let net = s.network();
    let st = stats(&net);
    let se = precision(&net, s.first);
    let mut out = format!(
        "Risk of the network plan — draws {} to {} (seed {}, {} sampling), uncertain inputs: {}\n\n",
        s.first,
        s.first + s.draws - 1,
        s.seed,
        s.sampling.name(),
        l.inputs.join(", ")
    );
    let _ = writeln!(
        out,
        "plan NPV ({m}): mean {}, P10 {}, P50 {}, P90 {}; NPV above zero in {:.1} % of draws",
        grouped(st.mean, 0),
        grouped(st.p10, 0),
        grouped(st.p50, 0),
        grouped(st.p90, 0),
        100.0 * net.iter().filter(|x| **x > 0.0).count() as f64 / net.len().max(1) as f64
    );
    if se.p50.is_finite() {
        let _ = writeln!(
            out,
            "precision (standard error, from the spread over {} replicate groups of the draws): mean ±{}, P10 ±{}, P50 ±{}, P90 ±{}",
            crate::analysis::risk::REPLICATES,
            grouped(se.mean, 0),
            grouped(se.p10, 0),
            grouped(se.p50, 0),
            grouped(se.p90, 0)
        );
    } else {
        let _ = writeln!(
            out,
            "precision: too few draws to estimate it (at least {} needed)",
            2 * crate::analysis::risk::REPLICATES
        );
    }
    let n: usize = l.strategies.iter().map(Vec::len).sum();
    let w = l.width();
    let mut over: Vec<(f64, &str)> = l
        .lines
        .iter()
        .enumerate()
        .map(|(j, name)| {
            let c = (0..s.draws as usize)
                .filter(|k| s.values[k * w + n + 1 + j] > l.limits[j] + 0.005)
                .count();
            (c as f64 / s.draws.max(1) as f64, name.as_str())
        })
        .filter(|x| x.0 > 0.0)
        .collect();
    over.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(b.1)));
    if over.is_empty() {
        let _ = writeln!(out, "the plan stays within every budget line in every draw");
    } else {
        let _ = writeln!(out, "budget lines the plan overspends in some draws:");
        for (p, name) in over.iter().take(10) {
            let _ = writeln!(out, "  {name:<24} {:.1} % of draws", p * 100.0);
        }
    }
    let _ = writeln!(
        out,
        "\nPer section and strategy (mean, P10/P50/P90 of NPV, chance NPV > 0, chance of being best) in risk.csv (--out DIR).\n\n{}",
        crate::CAUTION
    );
    out
}

/// The terminal summary of the sensitivity tests: the network plan's NPV at each input's low and
/// high value, where it reaches zero, and how many sections' best strategies switch.
pub fn sensitivity(run: &Run, rows: &[crate::analysis::sensitivity::Row]) -> String {
    let m = &run.scenario.money_label;
    let net: Vec<_> = rows.iter().filter(|r| r.section.is_none()).collect();
    let n0 = net[0].npv.unwrap_or(0.0);
    let mut s = format!(
        "Sensitivity of the network plan's NPV ({} {m} at the scenario's values)\n\n{:<16} {:>12} {:>20} {:>12} {:>20}\n",
        grouped(n0, 0),
        "input",
        "low",
        "NPV",
        "high",
        "NPV"
    );
    for (i, (_, label)) in INPUTS.iter().enumerate() {
        let get = |t: &str| net.iter().find(|r| r.input == Some(i) && r.test == t);
        if let (Some(lo), Some(hi)) = (get("low"), get("high")) {
            let _ = writeln!(
                s,
                "{label:<16} {:>12} {:>20} {:>12} {:>20}",
                show(i, lo.value),
                grouped(lo.npv.unwrap_or(f64::NAN), 0),
                show(i, hi.value),
                grouped(hi.npv.unwrap_or(f64::NAN), 0)
            );
        }
    }
    let _ = writeln!(s, "\nSwitching values (the plan's NPV reaches zero):");
    for (i, (_, label)) in INPUTS.iter().enumerate() {
        for r in net
            .iter()
            .filter(|r| r.input == Some(i) && r.test == "npv-zero")
        {
            let _ = writeln!(
                s,
                "  {label:<16} {:<5} {}",
                r.direction,
                match r.value {
                    Some(v) => show(i, Some(v)),
                    None => "none within the search range".to_owned(),
                }
            );
        }
    }
    let sections = rows
        .iter()
        .filter(|r| r.section.is_some() && r.test == "best-changes" && r.value.is_some())
        .count();
    let _ = writeln!(
        s,
        "\n{sections} section switching values where another strategy becomes best; every section's tests and switching values are in sensitivity.csv (--out DIR).\n\n{}",
        crate::CAUTION
    );
    s
}

/// An input's value as people say it: factors as %, growth in points, rates as %.
fn show(i: usize, v: Option<f64>) -> String {
    let Some(v) = v else { return "—".into() };
    match i {
        0 | 1 => format!("{:+.1} %", (v - 1.0) * 100.0),
        2 => format!("{:+.2} pt", v * 100.0),
        _ => format!("{:.2} %", v * 100.0),
    }
}

/// The money behind a choice: what the other candidate (the section's best with no limits, or
/// the runner-up) would have used beyond the chosen one, line by line, at the lines' prices.
fn explain_difference(
    d: &crate::analysis::explain::Difference,
    chosen: &str,
    value_name: &str,
    money: &str,
) -> String {
    let mut s = String::new();
    let (other, more) = (&d.other, d.more_value);
    let _ = writeln!(
        s,
        "\n{} `{other}`{}? Its {value_name} is {} {money} {} than the chosen one's.",
        if d.unconstrained {
            "Why not"
        } else {
            "Against the runner-up"
        },
        if d.unconstrained {
            " (its best with no budget limits)"
        } else {
            ""
        },
        grouped(more.abs(), 0),
        if more >= 0.0 { "more" } else { "less" }
    );
    if d.lines.is_empty() {
        let _ = writeln!(
            s,
            "It uses every line as `{chosen}` does: nothing but the whole-plan search tells them apart."
        );
        return s;
    }
    let _ = writeln!(
        s,
        "What it would use beyond `{chosen}`, by line (money in {money}; a target's use in its \
         measure × km):\n  {:<26} {:<8} {:>10} {:>16} {:>18}",
        "line", "state", "price", "more use", "worth at the price"
    );
    for (line, du, worth) in &d.lines {
        let _ = writeln!(
            s,
            "  {:<26} {:<8} {:>10} {:>16} {:>18}",
            line.name,
            line.state,
            price_beside_state(line.price, line.state == "binding"),
            grouped(*du, 0),
            grouped(*worth, 0)
        );
    }
    let worth: f64 = d.lines.iter().map(|l| l.2).sum();
    if d.unconstrained && worth > 0.0 {
        let binding: Vec<&str> = d
            .lines
            .iter()
            .filter(|l| l.1 > 0.0 && l.0.state == "binding")
            .map(|l| l.0.name.as_str())
            .collect();
        let _ =
            writeln!(
            s,
            "At the lines' prices that use is worth {} {money}, {} the {} {money} it would add: \
             the money was worth more to other sections{}.",
            grouped(worth, 0),
            if worth >= more { "more than" } else { "less than" },
            grouped(more, 0),
            if binding.is_empty() {
                String::new()
            } else {
                format!(", which get it in {}", binding.join(", "))
            }
        );
    } else {
        let _ = writeln!(
            s,
            "At the lines' prices that use is worth {} {money}.",
            grouped(worth, 0)
        );
    }
    s
}

/// Years listed one by one in the programme on screen; later years with works are summed in one
/// row (`--full` lists every works).
const PROGRAMME_YEARS: usize = 12;

/// The programme on screen: the money spent on works and the km treated, then each year's works
/// (sections, km, cost and the largest works), and with `full` every works by year.
fn programme(run: &Run, p: &Plan, full: bool) -> String {
    let secs = &run.network.sections;
    let y0 = run.scenario.base_year;
    let mut s = String::new();
    let total: f64 = p.works.iter().map(|w| w.cost).sum();
    let mut treated: Vec<usize> = p.works.iter().map(|w| w.section).collect();
    treated.sort_unstable();
    treated.dedup();
    let km: f64 = treated.iter().map(|&g| secs[g].length_km).sum();
    let _ = writeln!(
        s,
        "works: {} on {} of {} sections ({} of {} km), {} {} in all",
        p.works.len(),
        treated.len(),
        secs.len(),
        grouped(km, 1),
        grouped(run.network.length_km(), 1),
        grouped(total, 0),
        run.scenario.money_label
    );
    if p.works.is_empty() {
        return s;
    }
    // Each year's works, in the plan's order (by year).
    let mut years: Vec<(i32, Vec<&crate::plan::PlannedWork>)> = Vec::new();
    for w in &p.works {
        let y = (y0 + w.year).0;
        match years.last_mut() {
            Some((yy, v)) if *yy == y => v.push(w),
            _ => years.push((y, vec![w])),
        }
    }
    years.sort_by_key(|(y, _)| *y);
    let label = |w: &crate::plan::PlannedWork| {
        format!(
            "{} {} {}",
            secs[w.section].id.as_str(),
            run.catalogue.treatments[w.treatment].id,
            grouped(w.cost, 0)
        )
    };
    let _ = writeln!(
        s,
        "\nProgramme by year{}:\n{:<11} {:>6} {:>9} {:>14}   largest works",
        if full {
            ""
        } else {
            " (--full lists every works)"
        },
        "year",
        "works",
        "km",
        "cost"
    );
    let row = |s: &mut String, label_year: String, ws: &[&crate::plan::PlannedWork]| {
        let cost: f64 = ws.iter().map(|w| w.cost).sum();
        let km: f64 = ws.iter().map(|w| secs[w.section].length_km).sum();
        let mut by_cost = ws.to_vec();
        by_cost.sort_by(|a, b| b.cost.total_cmp(&a.cost));
        let largest = match by_cost.len() {
            1 => label(by_cost[0]),
            n => format!("{}, +{} more", label(by_cost[0]), n - 1),
        };
        let _ = writeln!(
            s,
            "{label_year:<11} {:>6} {:>9} {:>14}   {largest}",
            ws.len(),
            grouped(km, 1),
            grouped(cost, 0)
        );
    };
    // Years whose capital works no budget line limits.
    let unlimited = |y: i32| {
        !run.scenario
            .year_has_line(y, crate::model::catalogue::Category::Capital)
    };
    let mark = |a: i32, b: i32| if (a..=b).any(unlimited) { "*" } else { "" };
    let shown = if full {
        years.len()
    } else {
        years.len().min(PROGRAMME_YEARS)
    };
    for (y, ws) in &years[..shown] {
        row(&mut s, format!("{y}{}", mark(*y, *y)), ws);
    }
    if shown < years.len() {
        let rest: Vec<&crate::plan::PlannedWork> = years[shown..]
            .iter()
            .flat_map(|(_, v)| v.iter().copied())
            .collect();
        let (a, b) = (years[shown].0, years[years.len() - 1].0);
        row(&mut s, format!("{a}–{b}{}", mark(a, b)), &rest);
    }
    if years.iter().any(|(y, _)| unlimited(*y)) {
        let _ = writeln!(
            s,
            "* no budget line limits capital works in these years: the plan spends there as \
             much as pays"
        );
    }
    // Spending by budget group, over its years.
    let sc = &run.scenario;
    let groups = sc.budget_groups();
    if !groups.is_empty() {
        let _ = writeln!(
            s,
            "\nSpending by budget group ({}):\n{:<20} {:<11} {:>16} {:>16} {:>7}",
            sc.money_label, "group", "years", "limit", "used", "use"
        );
        for g in groups {
            let lines: Vec<usize> = (0..sc.budget_lines.len())
                .filter(|&b| sc.budget_lines[b].group == g)
                .collect();
            // The limits as the selection held them (scaled by --budget-scale).
            let limit: f64 = p
                .candidates
                .rows
                .iter()
                .filter_map(|r| match r.kind {
                    RowKind::Budget(b) if lines.contains(&b) => r.money,
                    _ => None,
                })
                .map(|m| m.to_f64())
                .sum();
            let used: f64 = lines.iter().map(|&b| p.spent[b].to_f64()).sum();
            let first = lines
                .iter()
                .map(|&b| sc.budget_lines[b].year.0)
                .min()
                .unwrap_or(0);
            let last = lines
                .iter()
                .map(|&b| sc.budget_lines[b].year.0)
                .max()
                .unwrap_or(0);
            let _ = writeln!(
                s,
                "{g:<20} {:<11} {:>16} {:>16} {:>6.1}%",
                if first == last {
                    first.to_string()
                } else {
                    format!("{first}–{last}")
                },
                grouped(limit, 0),
                grouped(used, 0),
                use_percent(limit, used)
            );
        }
        for o in sc.budget_overlaps() {
            let _ = writeln!(s, "{o}");
        }
    }
    if full {
        let _ = writeln!(
            s,
            "\nEvery works:\n{:<6} {:<16} {:<18} {:>14}  region",
            "year", "section", "treatment", "cost"
        );
        for (y, ws) in &years {
            for w in ws {
                let sec = &secs[w.section];
                let _ = writeln!(
                    s,
                    "{y:<6} {:<16} {:<18} {:>14}  {}",
                    sec.id.as_str(),
                    run.catalogue.treatments[w.treatment].id,
                    grouped(w.cost, 0),
                    sec.region.as_deref().unwrap_or("")
                );
            }
        }
    }
    s
}

/// What `frontier` prints: each budget level's total budget, objective, bound, gap and status
/// (money in `m`).
pub fn frontier(points: &[Point], lines: &Lines, m: &str, objective: Objective) -> String {
    let mut s = format!(
        "Budget frontier — {} ({}; objective: {})\n\n{:>10} {:>20} {:>20} {:>20} {:>9}  status\n",
        match lines {
            Lines::All => "every budget line scaled".to_owned(),
            Lines::Only(n) => format!("only `{n}` scaled"),
        },
        m,
        objective.name(),
        "level",
        "total budget",
        "objective",
        "bound",
        "gap"
    );
    for p in points {
        let level = if p.unlimited {
            format!("{:.4}*", p.level)
        } else {
            format!("{}", p.level)
        };
        match &p.solved {
            Some(v) => {
                let _ = writeln!(
                    s,
                    "{level:>10} {:>20} {:>20} {:>20} {:>8.4}%  {}",
                    grouped(p.total_budget, 0),
                    grouped(v.objective, 0),
                    grouped(v.bound, 0),
                    v.gap * 100.0,
                    v.status
                );
            }
            None => {
                let _ = writeln!(
                    s,
                    "{level:>10} {:>20} {:>20} {:>20} {:>9}  infeasible: {}",
                    grouped(p.total_budget, 0),
                    "—",
                    "—",
                    "—",
                    p.reason
                );
            }
        }
    }
    let _ = writeln!(
        s,
        "\n* the level at which no scaled line can bind.\n\n{}",
        crate::CAUTION
    );
    s
}

/// What `check` prints for a scenario that loaded with no errors and `notes` notes: what was
/// read (scenario, network, catalogue, templates, budgets) and what `plan` will cost.
pub fn check(run: &Run, notes: usize) -> String {
    let s = &run.scenario;
    let net = &run.network;
    let regions = net.regions();
    let lane_km: f64 = net
        .sections
        .iter()
        .map(|x| x.length_km * f64::from(x.lanes))
        .sum();
    let per_section: u64 = 1 + run
        .templates
        .iter()
        .map(|t| t.max_strategies())
        .fold(0u64, u64::saturating_add);
    let total =
        crate::input::scenario::total_limit(s.budget_lines.iter().map(|b| (b, b.limit.to_f64())));
    let groups = s.budget_groups();
    let money = if s.money_label.is_empty() {
        String::new()
    } else {
        format!(" {}", s.money_label)
    };
    let mut out = String::new();
    out.push_str(&format!(
        "{}: no errors, {} note{}\n",
        s.file,
        notes,
        if notes == 1 { "" } else { "s" }
    ));
    out.push_str(&format!(
        "  scenario    {}; base year {}, {} years to {}; discount rate {:.2} % ({})\n",
        if s.title.is_empty() {
            "(untitled)"
        } else {
            &s.title
        },
        s.base_year,
        s.analysis_years,
        s.last_year(),
        s.discounting.rate() * 100.0,
        s.discounting.timing()
    ));
    out.push_str(&format!(
        "  network     {} sections, {} km, {} lane-km{}\n",
        net.sections.len(),
        grouped(net.length_km(), 1),
        grouped(lane_km, 1),
        if regions.is_empty() {
            String::new()
        } else {
            format!(", regions {}", regions.join(", "))
        }
    ));
    out.push_str(&format!(
        "  treatments  {} in {}, plus routine maintenance\n",
        run.catalogue.treatments.len(),
        run.catalogue.file
    ));
    let e = crate::enumerate::Enumerator::for_run(run);
    let strategies: usize = net.sections.iter().map(|x| e.strategies(x).len()).sum();
    out.push_str(&format!(
        "  templates   {}, at most {} strategies per section before feasibility rules (base included); {} strategies in all after them\n",
        run.templates.len(),
        per_section,
        strategies
    ));
    let steps = strategies as f64 * f64::from(s.analysis_years);
    let (seconds, bytes) = crate::resources::plan_cost(strategies as f64, s.analysis_years);
    out.push_str(&format!(
        "  work        `plan` simulates {steps:.0} section-years of strategies: {} on {} threads and {} at its peak (estimates from measured rates)\n",
        match crate::resources::duration(seconds) {
            d if d.starts_with("under") => d,
            d => format!("about {d}"),
        },
        rayon::current_num_threads(),
        crate::resources::bytes(bytes)
    ));
    if s.budget_lines.is_empty() {
        out.push_str("  budgets     none (selection will be unconstrained)\n");
    } else {
        let first = s
            .budget_lines
            .iter()
            .map(|b| b.year)
            .min()
            .unwrap_or(s.base_year);
        let last = s
            .budget_lines
            .iter()
            .map(|b| b.year)
            .max()
            .unwrap_or(s.base_year);
        out.push_str(&format!(
            "  budgets     {} lines in {} group{} ({}), {first}–{last}, {}{money} in all\n",
            s.budget_lines.len(),
            groups.len(),
            if groups.len() == 1 { "" } else { "s" },
            groups.join(", "),
            grouped(total, 0),
        ));
        for o in s.budget_overlaps() {
            out.push_str(&format!("              {o}\n"));
        }
        // Years of the analysis no line limits, as ranges.
        use crate::model::catalogue::Category;
        for (cat, word) in [
            (Category::Capital, "capital works"),
            (Category::Routine, "routine maintenance"),
        ] {
            let free: Vec<i32> = (s.base_year.0..=s.last_year().0)
                .filter(|y| !s.year_has_line(*y, cat))
                .collect();
            if free.is_empty() {
                continue;
            }
            let mut ranges: Vec<(i32, i32)> = Vec::new();
            for y in free {
                match ranges.last_mut() {
                    Some((_, b)) if *b + 1 == y => *b = y,
                    _ => ranges.push((y, y)),
                }
            }
            let text: Vec<String> = ranges
                .iter()
                .map(|(a, b)| {
                    if a == b {
                        a.to_string()
                    } else {
                        format!("{a}–{b}")
                    }
                })
                .collect();
            out.push_str(&format!(
                "              no line limits {word} in {}: spending there is not limited\n",
                text.join(", ")
            ));
        }
    }
    out
}

/// What `explain` prints: every candidate of the section at the plan's prices, the chosen one
/// marked, and how firm the choice is.
pub fn explain(e: &Explanation) -> String {
    let (id, chosen, unconstrained) = (&e.section, e.chosen.as_str(), &e.unconstrained);
    let (opts, least_cost, money) = (&e.candidates, e.least_cost, &e.money);
    let mut s = format!(
        "Section {id}: the plan gives it `{chosen}`{}.\n\n",
        if chosen == unconstrained {
            " — also its best with no budget limits".to_owned()
        } else {
            format!("; with no budget limits it would get `{unconstrained}`")
        }
    );
    let value_name = if least_cost { "−PV agency" } else { "NPV" };
    let _ = writeln!(
        s,
        "Each candidate at the plan's budget prices (money in {money}); priced value = {value_name} − Σ price × use:"
    );
    let _ = writeln!(
        s,
        "  {:<36} {:>16} {:>16} {:>16}",
        "strategy", value_name, "priced use", "priced value"
    );
    for o in opts {
        let mark = if o.strategy == chosen { "*" } else { " " };
        let _ = writeln!(
            s,
            "{mark} {:<36} {:>16} {:>16} {:>16}",
            o.strategy,
            grouped(o.value, 0),
            grouped(o.priced, 0),
            grouped(o.priced_value(), 0)
        );
    }
    let pos = opts.iter().position(|o| o.strategy == chosen);
    match pos {
        Some(0) if opts.len() > 1 => {
            let m = opts[0].priced_value() - opts[1].priced_value();
            let _ = writeln!(
                s,
                "\n`{chosen}` has the highest priced value, {} {money} ahead of the runner-up `{}`.",
                grouped(m, 0),
                opts[1].strategy
            );
            if m.abs() < 1e-6 * opts[0].value.abs().max(1.0) {
                s.push_str("The two tie at these prices: the budgets split between them.\n");
            }
        }
        Some(0) => s.push_str("\nIt is the only candidate left (the others are dominated or excluded by commitments).\n"),
        Some(k) => {
            let m = opts[0].priced_value() - opts[k].priced_value();
            let _ = writeln!(
                s,
                "\n`{}` has a higher priced value by {} {money}, but the budgets cannot give every section its \
                 best at these prices: this section is one the whole-plan search settled, trading with others \
                 for whole projects.",
                opts[0].strategy,
                grouped(m, 0)
            );
        }
        None => s.push_str("\nThe chosen strategy is missing from candidates.csv: the directory's files do not belong to one run.\n"),
    }
    if let Some(o) = opts.iter().find(|o| o.strategy == chosen) {
        let _ = writeln!(
            s,
            "Its NPV against the base: {} {money}.",
            grouped(o.npv, 0)
        );
    }
    if let Some(d) = &e.difference {
        s.push_str(&explain_difference(d, chosen, value_name, money));
    }
    let _ = writeln!(s, "\n{}", crate::CAUTION);
    s
}
