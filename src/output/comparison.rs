//! What `compare` prints and writes: the terminal summary of two plans side by side, and the
//! text of `comparison.csv`, `comparison_lines.csv` and `comparison_years.csv`
//! ([`crate::schema::compare`]). The page, `comparison.html`, is drawn by
//! [`crate::output::report::compare`].

use crate::analysis::compare::{Change, Comparison, Side};
use crate::input::Run;
use crate::model::money::{grouped, price_figure};
use crate::output::files::Facts;
use crate::output::format::{signed, use_percent};
use crate::plan::Plan;
use crate::schema::compare::{LineChange, SectionChange, YearChange};
use crate::schema::value::{write_text, Dec};
use crate::schema::{self, Record as _};
use std::fmt::Write as _;

/// Rows of the changed sections shown on screen without `--all` (all are in comparison.csv).
pub const SCREEN_SECTIONS: usize = 20;
/// Years shown on screen (those where the plans' works differ, first ones first).
pub const SCREEN_YEARS: usize = 15;

/// `comparison.csv`'s text: every section row, then the carried columns.
pub fn sections_text(c: &Comparison) -> String {
    let mut s = SectionChange::FILE.head();
    s.pop();
    for n in &c.carried_names {
        s.push(',');
        write_text(n, &mut s);
    }
    s.push('\n');
    for (row, cells) in c.sections.iter().zip(&c.carried) {
        row.write_then(&mut s, |out| {
            for v in cells {
                out.push(',');
                write_text(v, out);
            }
        });
    }
    s
}

/// `comparison_lines.csv`'s text.
pub fn lines_text(c: &Comparison) -> String {
    schema::text::<LineChange>(&c.lines)
}

/// `comparison_years.csv`'s text.
pub fn years_text(c: &Comparison) -> String {
    schema::text::<YearChange>(&c.years)
}

/// A side's place and run, for the heading.
pub fn which(side: &Side) -> String {
    match &side.run {
        Some(r) => format!("{} (plan run {r})", side.dir.display()),
        None if side.afresh => format!("{} (planned afresh)", side.dir.display()),
        None => side.dir.display().to_string(),
    }
}

/// The plan `p` of `run`, made in this run from the scenario `file`, as a side of a
/// comparison: the rows its files would hold.
pub fn side_of(run: &Run, p: &Plan, facts: &Facts, file: &std::path::Path) -> Side {
    use crate::output::files;
    use crate::schema::carried::{carried, carried_names};
    let net = &run.network;
    let e = crate::enumerate::Enumerator::for_run(run);
    let first = files::first_works(p, net.sections.len());
    let sections = (0..net.sections.len())
        .map(|g| files::section_plan(run, &e, p, g, first[g]))
        .collect();
    let cells = net
        .sections
        .iter()
        .map(|sec| {
            carried(net, sec)
                .map(|(_, v)| v.text().into_owned())
                .collect()
        })
        .collect();
    crate::analysis::compare::planned_afresh(
        file,
        files::summary(run, p, facts, ""),
        sections,
        carried_names(net),
        cells,
        files::budget_use(run, p),
        files::condition(&p.condition),
        files::work_programme(run, p).collect(),
    )
}

/// `b − a` with its sign, and its share of `a` when `a` is not zero.
fn change_text(a: f64, b: f64, decimals: usize) -> String {
    let d = b - a;
    let mut t = signed(d, decimals);
    let sign = if t.starts_with('+') { "+" } else { "" };
    if a.abs() > 0.0 && d != 0.0 {
        let _ = write!(t, " ({sign}{:.1} %)", 100.0 * d / a.abs());
    }
    t
}

fn dec(x: Option<Dec>) -> f64 {
    x.map_or(0.0, Dec::to_f64)
}

/// The use of a line as a share of its limit, or `—` without the line.
fn share(limit: Option<Dec>, used: Option<Dec>) -> String {
    match (limit, used) {
        (Some(l), Some(u)) => format!("{:.1}%", use_percent(l.to_f64(), u.to_f64())),
        _ => "—".to_owned(),
    }
}

/// The terminal summary: the plans' totals side by side, the sections whose choice differs
/// (the largest NPV changes first; every one with `all`), money by budget group and by year,
/// and the budget lines whose price or state moved.
pub fn terminal(c: &Comparison, all: bool) -> String {
    let (sa, sb) = (&c.a.summary, &c.b.summary);
    let m = &sb.money;
    let mut s = String::from("Plan B held against plan A\n");
    let _ = writeln!(s, "  A: {}", which(&c.a));
    let _ = writeln!(s, "  B: {}", which(&c.b));
    if c.differences.is_empty() {
        s.push_str("  made under the same assumptions\n");
    } else {
        s.push_str("  made under different assumptions:\n");
        for d in &c.differences {
            let _ = writeln!(s, "    {d}");
        }
    }
    s.push('\n');
    let [(works_a, cost_a), (works_b, cost_b)] = c.works();
    let _ = writeln!(s, "{:<28} {:>16} {:>16}  B − A", "", "A", "B");
    let mut row = |name: &str, a: f64, b: f64, decimals: usize| {
        let _ = writeln!(
            s,
            "{name:<28} {:>16} {:>16}  {}",
            grouped(a, decimals),
            grouped(b, decimals),
            change_text(a, b, decimals)
        );
    };
    row(&format!("NPV ({m})"), sa.npv.plan, sb.npv.plan, 0);
    row(
        &format!("PV agency cost ({m})"),
        sa.pv_agency_cost.plan,
        sb.pv_agency_cost.plan,
        0,
    );
    row(
        &format!("PV capital ({m})"),
        sa.pv_capital.plan,
        sb.pv_capital.plan,
        0,
    );
    row(
        &format!("works cost ({m})"),
        cost_a.to_f64(),
        cost_b.to_f64(),
        0,
    );
    row("works", works_a as f64, works_b as f64, 0);
    if let Some((ia, ib)) = c.period_iri() {
        let span = match (c.years.first(), c.years.last()) {
            (Some(f), Some(l)) => format!(", {}–{}", f.year.0, l.year.0),
            _ => String::new(),
        };
        let _ = writeln!(
            s,
            "{:<28} {ia:>16.3} {ib:>16.3}  {}",
            format!("mean IRI (m/km{span})"),
            change_text(0.0, ib - ia, 3)
        );
    }
    let _ = writeln!(s, "{:<28} {:>16} {:>16}", "status", sa.status, sb.status);
    s.push('\n');

    // Sections.
    let n = |ch: Change| c.count(ch);
    let changed = c.changed();
    let in_a = c.sections.len() - n(Change::OnlyB);
    let in_b = c.sections.len() - n(Change::OnlyA);
    let count = |k: usize| grouped(k as f64, 0);
    let _ = writeln!(
        s,
        "Sections: {} in A, {} in B; {} chose differently ({} in timing, {} in treatment), {} only in A, {} only in B",
        count(in_a),
        count(in_b),
        count(n(Change::Timing) + n(Change::Treatment)),
        count(n(Change::Timing)),
        count(n(Change::Treatment)),
        count(n(Change::OnlyA)),
        count(n(Change::OnlyB))
    );
    if !changed.is_empty() {
        let mut shown = changed.clone();
        let size = |r: &SectionChange| r.npv_change.map_or(f64::INFINITY, |x| x.to_f64().abs());
        shown.sort_by(|x, y| size(y).total_cmp(&size(x)));
        let limit = if all { shown.len() } else { SCREEN_SECTIONS };
        let wa = shown
            .iter()
            .map(|r| r.strategy_a.len())
            .max()
            .unwrap_or(0)
            .max(1);
        let wb = shown
            .iter()
            .map(|r| r.strategy_b.len())
            .max()
            .unwrap_or(0)
            .max(1);
        let wid = shown
            .iter()
            .map(|r| r.section_id.len())
            .max()
            .unwrap_or(0)
            .max(7);
        let _ = writeln!(
            s,
            "\n  {:<wid$}  {:<9}  {:<wa$}  {:<wb$}  {:<13}  {:>14}",
            "section", "change", "A", "B", "first works", "NPV change"
        );
        for r in shown.iter().take(limit) {
            let year =
                |y: Option<crate::model::Year>| y.map_or("none".to_owned(), |y| y.0.to_string());
            let first = if r.first_works_year_a == r.first_works_year_b {
                year(r.first_works_year_a)
            } else {
                format!(
                    "{} → {}",
                    year(r.first_works_year_a),
                    year(r.first_works_year_b)
                )
            };
            let _ = writeln!(
                s,
                "  {:<wid$}  {:<9}  {:<wa$}  {:<wb$}  {first:<13}  {:>14}",
                r.section_id,
                r.change,
                if r.strategy_a.is_empty() {
                    "—"
                } else {
                    &r.strategy_a
                },
                if r.strategy_b.is_empty() {
                    "—"
                } else {
                    &r.strategy_b
                },
                r.npv_change
                    .map_or("—".to_owned(), |x| change_text(0.0, x.to_f64(), 0)),
            );
        }
        if shown.len() > limit {
            let _ = writeln!(
                s,
                "  … {} more (every section is in comparison.csv with --out DIR; --all lists them here)",
                shown.len() - limit
            );
        }
    }
    s.push('\n');

    // Money by budget group.
    let groups = c.groups();
    if !groups.is_empty() {
        let _ = writeln!(s, "Money used by budget group, all years ({m})");
        let wg = groups.iter().map(|g| g.0.len()).max().unwrap_or(0).max(5);
        let _ = writeln!(s, "  {:<wg$}  {:>16} {:>16}  B − A", "group", "A", "B");
        for (g, a, b) in &groups {
            let cell = |x: Option<Dec>| x.map_or("—".to_owned(), |v| grouped(v.to_f64(), 0));
            let _ = writeln!(
                s,
                "  {g:<wg$}  {:>16} {:>16}  {}",
                cell(*a),
                cell(*b),
                match (a, b) {
                    (Some(_), Some(_)) => change_text(dec(*a), dec(*b), 0),
                    _ => "—".to_owned(),
                }
            );
        }
        s.push('\n');
    }

    // Works by year.
    let differ: Vec<&YearChange> = c
        .years
        .iter()
        .filter(|y| y.cost_change.0 != 0 || y.works_a != y.works_b)
        .collect();
    if differ.is_empty() {
        s.push_str("Works by year: the same works in every year\n\n");
    } else {
        let _ = writeln!(
            s,
            "Works by year where the plans differ ({} of {} years; cost in {m})",
            differ.len(),
            c.years.len()
        );
        let _ = writeln!(
            s,
            "  {:<6}{:>8}{:>8}  {:>14} {:>14}  {:<22} {:>10} {:>10}",
            "year", "works A", "B", "cost A", "B", "B − A", "IRI A", "B"
        );
        let iri = |x: Option<crate::schema::value::Fixed<6>>| {
            x.map_or("—".to_owned(), |v| format!("{:.2}", v.to_f64()))
        };
        for y in differ.iter().take(SCREEN_YEARS) {
            let _ = writeln!(
                s,
                "  {:<6}{:>8}{:>8}  {:>14} {:>14}  {:<22} {:>10} {:>10}",
                y.year.0,
                y.works_a,
                y.works_b,
                grouped(y.cost_a.to_f64(), 0),
                grouped(y.cost_b.to_f64(), 0),
                change_text(y.cost_a.to_f64(), y.cost_b.to_f64(), 0),
                iri(y.mean_iri_a),
                iri(y.mean_iri_b)
            );
        }
        if differ.len() > SCREEN_YEARS {
            let _ = writeln!(
                s,
                "  … {} more years (comparison_years.csv has every year)",
                differ.len() - SCREEN_YEARS
            );
        }
        s.push('\n');
    }

    // Lines whose price or state moved.
    let moved: Vec<&LineChange> = c.moved_lines().collect();
    let only = c
        .lines
        .iter()
        .filter(|l| l.used_a.is_none() || l.used_b.is_none())
        .count();
    if moved.is_empty() {
        s.push_str("Budget lines: no price or state moved");
    } else {
        let _ = writeln!(
            s,
            "Budget lines whose price or state moved ({} of {})",
            moved.len(),
            c.lines.len()
        );
        let wl = moved.iter().map(|l| l.line.len()).max().unwrap_or(0).max(4);
        let _ = writeln!(
            s,
            "  {:<wl$}  {:>16}  {:<19}  price A → B",
            "line", "used A → B", "state A → B"
        );
        for l in &moved {
            let price = |p: Option<crate::schema::value::Price>| {
                p.map_or("—".to_owned(), |p| price_figure(p.0))
            };
            let _ = writeln!(
                s,
                "  {:<wl$}  {:>16}  {:<19}  {} → {}",
                l.line,
                format!(
                    "{} → {}",
                    share(l.limit_a, l.used_a),
                    share(l.limit_b, l.used_b)
                ),
                format!("{} → {}", l.state_a, l.state_b),
                price(l.price_a),
                price(l.price_b)
            );
        }
        s.pop();
    }
    if only > 0 {
        let _ = write!(
            s,
            "\n  ({only} lines are in one plan only: see comparison_lines.csv)"
        );
    }
    s.push('\n');
    s
}
