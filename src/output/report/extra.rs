//! The report's sensitivity and risk sections, drawn from `sensitivity.csv`, `risk.csv` and
//! `risk_draws.csv` when they are in the plan's directory.

use super::chart::{esc, Chart, Spec, Units, BLUE, GREY, ORANGE, SKY, VERMILLION};
use super::table_head;
use crate::model::money::grouped;
use crate::schema::analysis::{Risk, RiskDraw, Sensitivity};
use crate::schema::value::{Cents, Fixed};
use std::fmt::Write as _;

/// An axis title for money: `NPV (VCR)`, or `NPV (VCR, millions)` with the units' word.
pub(super) fn axis_title(what: &str, m: &str, word: &str) -> String {
    if word.is_empty() {
        format!("{what} ({m})")
    } else {
        format!("{what} ({m}, {word})")
    }
}

/// How a test's value reads: factors as a % change, growth in points, rates as %.
fn show(input: &str, value: f64) -> String {
    match input {
        "capital_cost" | "user_values" => format!("{:+.1} %", (value - 1.0) * 100.0),
        "growth" => format!("{:+.2} pt", value * 100.0),
        _ => format!("{:.2} %", value * 100.0),
    }
}

/// A section's best-strategy switching value: (section, input, value, best, new best).
type Change = (String, String, f64, String, String);

/// The tornado chart of the network plan's NPV, and its switching values.
pub fn sensitivity_section(rows: &[Sensitivity], m: &str) -> String {
    let mut base = None;
    // input → (low value, low NPV, high value, high NPV)
    let mut bars: Vec<(String, f64, f64, f64, f64)> = Vec::new();
    let mut switching: Vec<(String, String, Option<f64>)> = Vec::new();
    let mut sections_switch = 0usize;
    let mut changes: Vec<Change> = Vec::new();
    for r in rows {
        let input = r.input.clone();
        let test = r.test.as_str();
        let value = r.value.map(|v| v.to_f64());
        let npv = r.npv.map(|x| x.to_f64());
        if r.scope != "network" {
            if test == "best-changes" {
                if let Some(v) = value {
                    sections_switch += 1;
                    changes.push((
                        r.section_id.clone(),
                        input,
                        v,
                        r.strategy.clone(),
                        r.other_strategy.clone(),
                    ));
                }
            }
            continue;
        }
        match test {
            "scenario" => base = npv,
            "low" | "high" => {
                let v = value.unwrap_or(f64::NAN);
                let n = npv.unwrap_or(f64::NAN);
                let slot = match bars.iter_mut().position(|b| b.0 == input) {
                    Some(i) => i,
                    None => {
                        bars.push((input.clone(), f64::NAN, f64::NAN, f64::NAN, f64::NAN));
                        bars.len() - 1
                    }
                };
                if test == "low" {
                    bars[slot].1 = v;
                    bars[slot].2 = n;
                } else {
                    bars[slot].3 = v;
                    bars[slot].4 = n;
                }
            }
            "npv-zero" => switching.push((input, r.direction.clone(), value)),
            _ => {}
        }
    }
    let base = base.unwrap_or(0.0);
    // Widest swing first.
    bars.sort_by(|a, b| {
        let w = |x: &(String, f64, f64, f64, f64)| (x.4 - x.2).abs();
        w(b).total_cmp(&w(a)).then(a.0.cmp(&b.0))
    });
    let mut s =
        String::from(r#"<section id="sensitivity"><h2>Sensitivity and switching values</h2>"#);
    let _ = write!(
        s,
        "<p>The network plan's NPV ({} {}) when one input at a time is set lower (orange) or higher (blue) than in the scenario; the plan is held fixed. Widest swing at the top.</p>",
        grouped(base, 0),
        esc(m)
    );
    if !bars.is_empty() {
        let lo = bars.iter().flat_map(|b| [b.2, b.4]).fold(base, f64::min);
        let hi = bars.iter().flat_map(|b| [b.2, b.4]).fold(base, f64::max);
        let (u, word) = Units::money(lo.abs().max(hi.abs()));
        let title = axis_title("Network plan NPV", m, word);
        let n = bars.len() as f64;
        // Rows on the y axis: 1 (top) .. n; the chart's y runs 0..n+1.
        let mut c = Chart::new(Spec {
            id: "tornado",
            title: "What moves the plan's NPV",
            width: 1000.0,
            height: 90.0 + 60.0 * n,
            x: (lo - 0.05 * (hi - lo), hi + 0.05 * (hi - lo)),
            x_pad: 0.0,
            x_title: &title,
            x_units: u,
            x_integer: false,
            y: (0.0, n + 1.0),
            y_title: "Input tested",
            y_units: Units::hidden(),
            y2: None,
        });
        for (k, (input, lv, ln, hv, hn)) in bars.iter().enumerate() {
            let y = n - k as f64;
            for (series, colour, v, npv) in [("low", ORANGE, lv, ln), ("high", BLUE, hv, hn)] {
                let (xa, xb) = (c.x.at(base.min(*npv)), c.x.at(base.max(*npv)));
                let (ya, yb) = (c.y.at(y + 0.3), c.y.at(y - 0.3));
                c.raw(&format!(
                    r#"<rect class="mark" data-series="{series}" data-input="{}" data-x="{npv}" data-from="{base}" data-y="{y}" x="{:.3}" y="{:.3}" width="{:.3}" height="{:.3}" fill="{colour}"/>"#,
                    esc(input),
                    xa,
                    ya.min(yb),
                    (xb - xa).abs(),
                    (yb - ya).abs()
                ));
                let anchor = if *npv < base { "end" } else { "start" };
                let dx = if *npv < base { -4.0 } else { 4.0 };
                c.raw(&format!(
                    r#"<text class="note" x="{:.2}" y="{:.2}" text-anchor="{anchor}">{}</text>"#,
                    c.x.at(*npv) + dx,
                    c.y.at(y) + 4.0,
                    esc(&show(input, *v))
                ));
            }
            c.raw(&format!(
                r#"<text class="legend" x="{:.2}" y="{:.2}" text-anchor="start">{}</text>"#,
                c.x.at(base) + 6.0,
                c.y.at(y + 0.42),
                esc(&input.replace('_', " "))
            ));
        }
        let bx = c.x.at(base);
        c.raw(&format!(
            r#"<line class="reference" data-x="{base}" x1="{bx:.2}" x2="{bx:.2}" y1="{:.2}" y2="{:.2}" stroke="{GREY}" stroke-dasharray="5 4"/>"#,
            c.y.p0, c.y.p1
        ));
        s.push_str(&c.finish(&[("input lower", ORANGE, ""), ("input higher", BLUE, "")]));
    }
    s.push_str(&table_head(
        r#"<table>"#,
        &[
            ("input", false),
            ("direction", false),
            ("The plan's NPV reaches zero at", true),
        ],
    ));
    for (input, dir, v) in &switching {
        let _ = write!(
            s,
            r#"<tr><td>{}</td><td>{}</td><td class="num">{}</td></tr>"#,
            esc(&input.replace('_', " ")),
            esc(dir),
            v.map(|v| show(input, v))
                .unwrap_or_else(|| "not within the search range".into())
        );
    }
    s.push_str("</tbody></table>");
    // Choices that change within the tested ranges: the tests' own values bound each input.
    // Each kept with its distance from the scenario's value as a share of the test's half-range,
    // nearest (the most fragile choice) first.
    let mut within: Vec<(f64, &Change)> = changes
        .iter()
        .filter_map(|c| {
            let b = bars.iter().find(|b| b.0 == c.1)?;
            let (lo, hi) = (b.1.min(b.3), b.1.max(b.3));
            let half = 0.5 * (hi - lo);
            (c.2 >= lo && c.2 <= hi && half > 0.0)
                .then(|| ((c.2 - 0.5 * (lo + hi)).abs() / half, c))
        })
        .collect();
    within.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1 .0.cmp(&b.1 .0)));
    let _ = write!(
        s,
        "<h3>Choices that change within the tested ranges</h3><p>{} switching values at which a section's best strategy gives way to another lie within the ranges tested above (of {sections_switch} found in all; every one is in sensitivity.csv).</p>",
        within.len()
    );
    if !within.is_empty() {
        s.push_str(&table_head(
            r#"<table class="fragile">"#,
            &[
                ("section_id", false),
                ("input", false),
                ("At", true),
                ("Best at the scenario's values", false),
                ("Then best", false),
            ],
        ));
        for (_, (sec, input, v, best, other)) in within.iter().take(15) {
            let _ = write!(
                s,
                r#"<tr><td>{}</td><td>{}</td><td class="num">{}</td><td>{}</td><td>{}</td></tr>"#,
                esc(sec),
                esc(&input.replace('_', " ")),
                esc(&show(input, *v)),
                esc(best),
                esc(other)
            );
        }
        s.push_str("</tbody></table>");
        if within.len() > 15 {
            let _ = write!(
                s,
                "<p class=\"small\">The first 15 of {} are listed.</p>",
                within.len()
            );
        }
    }
    s.push_str("</section>");
    s
}

/// The histogram of the plan's NPV over the draws, and spending against each line.
pub fn risk_section(rows: &[Risk], draws: Option<&[RiskDraw]>, m: &str) -> String {
    let mut s = String::from(r#"<section id="risk"><h2>Risk</h2>"#);
    let share = |x: Option<Fixed<6>>| x.map_or(f64::NAN, |x| x.to_f64());
    let amount = |x: Option<Cents>| x.map_or(f64::NAN, |x| x.to_f64());
    let mut budget = Vec::new();
    // The plan's strategy of each section: (section, strategy, P(NPV > 0), P(best), P50).
    let mut planned: Vec<(String, String, f64, f64, f64)> = Vec::new();
    for r in rows {
        match r.kind.as_str() {
            "strategy" if r.in_plan == Some(true) => planned.push((
                r.section_id.clone(),
                r.strategy.clone(),
                share(r.prob_positive),
                share(r.prob_best),
                amount(r.p50),
            )),
            "plan" => {
                let _ = write!(
                    s,
                    "<p>Over {} draws of the scenario's uncertain inputs, the network plan's NPV has mean {}, P10 {}, P50 {} and P90 {} ({}); it is above zero in {:.1} % of draws.</p>",
                    grouped(r.draws as f64, 0),
                    grouped(amount(r.mean), 0),
                    grouped(amount(r.p10), 0),
                    grouped(amount(r.p50), 0),
                    grouped(amount(r.p90), 0),
                    esc(m),
                    100.0 * share(r.prob_positive)
                );
            }
            "budget" => budget.push((
                r.line.clone(),
                amount(r.limit),
                amount(r.p10),
                amount(r.p50),
                amount(r.p90),
                share(r.prob_over),
            )),
            _ => {}
        }
    }
    if let Some(d) = draws {
        let xs: Vec<f64> = d.iter().map(|r| amount(r.plan_npv)).collect();
        if !xs.is_empty() {
            let (lo, hi) = (
                xs.iter().copied().fold(f64::INFINITY, f64::min),
                xs.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            );
            let bins = ((xs.len() as f64).sqrt().ceil() as usize).clamp(5, 40);
            let width = if hi > lo {
                (hi - lo) / bins as f64
            } else {
                1.0
            };
            let mut counts = vec![0usize; bins];
            for x in &xs {
                let b = (((x - lo) / width) as usize).min(bins - 1);
                counts[b] += 1;
            }
            let (u, word) = Units::money(lo.abs().max(hi.abs()));
            let title = axis_title("Network plan NPV", m, word);
            let top = counts.iter().copied().max().unwrap_or(1) as f64;
            let mut c = Chart::new(Spec {
                id: "risk-npv",
                title: "Distribution of the plan's NPV over the draws",
                width: 1000.0,
                height: 320.0,
                x: (lo, lo + bins as f64 * width),
                x_pad: 0.0,
                x_title: &title,
                x_units: u,
                x_integer: false,
                y: (0.0, top * 1.1),
                y_title: "Draws",
                y_units: Units::plain(0),
                y2: None,
            });
            for (b, n) in counts.iter().enumerate() {
                let from = lo + b as f64 * width;
                let (xa, xb) = (c.x.at(from), c.x.at(from + width));
                let (ya, yb) = (c.y.at(0.0), c.y.at(*n as f64));
                c.raw(&format!(
                    r#"<rect class="mark" data-series="draws" data-x="{from}" data-width="{width}" data-y="{n}" x="{:.3}" y="{:.3}" width="{:.3}" height="{:.3}" fill="{SKY}" stroke="white" stroke-width="0.5"/>"#,
                    xa,
                    ya.min(yb),
                    (xb - xa).abs(),
                    (yb - ya).abs()
                ));
            }
            if lo < 0.0 {
                c.raw(&format!(
                    r#"<line class="reference" data-x="0" x1="{0:.2}" x2="{0:.2}" y1="{1:.2}" y2="{2:.2}" stroke="{VERMILLION}" stroke-dasharray="5 4"/>"#,
                    c.x.at(0.0),
                    c.y.p0,
                    c.y.p1
                ));
            }
            s.push_str(&c.finish(&[("draws in each band of NPV", SKY, "")]));
        }
    }
    if !budget.is_empty() {
        s.push_str(r#"<h3>Spending by the plan against each budget line</h3><p>Bars: the median spending over the draws; whiskers: P10 to P90; black marks: the line's limit.</p><div class="charts">"#);
        // Lines are named GROUP-YEAR: one chart per group, years along x.
        let mut groups: Vec<(String, Vec<usize>)> = Vec::new();
        for (i, b) in budget.iter().enumerate() {
            let group = match b.0.rsplit_once('-') {
                Some((g, y)) if y.len() == 4 && y.bytes().all(|c| c.is_ascii_digit()) => g,
                _ => b.0.as_str(),
            };
            match groups.iter_mut().find(|g| g.0 == group) {
                Some(g) => g.1.push(i),
                None => groups.push((group.to_owned(), vec![i])),
            }
        }
        for (group, lines) in &groups {
            let year = |i: usize| -> f64 {
                budget[i]
                    .0
                    .rsplit_once('-')
                    .and_then(|(_, y)| y.parse().ok())
                    .unwrap_or(i as f64)
            };
            let top = lines
                .iter()
                .map(|&i| budget[i].1.max(budget[i].4))
                .fold(0.0, f64::max);
            let (u, word) = Units::money(top);
            let title = axis_title("Spending", m, word);
            let ys: Vec<f64> = lines.iter().map(|&i| year(i)).collect();
            let id = format!("risk-spending-{group}");
            let mut c = Chart::new(Spec {
                id: &id,
                title: group,
                width: 500.0,
                height: 260.0,
                x: (
                    ys.iter().copied().fold(f64::INFINITY, f64::min),
                    ys.iter().copied().fold(f64::NEG_INFINITY, f64::max),
                ),
                x_pad: 0.6,
                x_title: "Year",
                x_units: Units::plain(0),
                x_integer: true,
                y: (0.0, top * 1.1),
                y_title: &title,
                y_units: u,
                y2: None,
            });
            for &i in lines {
                let (_, limit, p10, p50, p90, _) = &budget[i];
                let x = year(i);
                c.bar("p50", SKY, x, 0.6, 0.0, *p50, "");
                c.whisker("p10-p90", GREY, x, *p10, *p90);
                c.level("limit", "#1a1a1a", x, 0.8, *limit);
            }
            s.push_str(&c.finish(&[
                ("median", SKY, ""),
                ("P10–P90", GREY, ""),
                ("limit", "#1a1a1a", ""),
            ]));
        }
        s.push_str("</div>");
        s.push_str(&table_head(
            r#"<table>"#,
            &[
                ("line", false),
                ("limit", true),
                ("p10", true),
                ("p50", true),
                ("p90", true),
                ("prob_over", true),
            ],
        ));
        for (name, limit, p10, p50, p90, over) in &budget {
            let _ = write!(
                s,
                r#"<tr><td>{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{:.1} %</td></tr>"#,
                esc(name),
                grouped(*limit, 0),
                grouped(*p10, 0),
                grouped(*p50, 0),
                grouped(*p90, 0),
                over * 100.0
            );
        }
        s.push_str("</tbody></table>");
    }
    if !planned.is_empty() {
        planned.sort_by(|a, b| a.3.total_cmp(&b.3).then(a.0.cmp(&b.0)));
        let firm = planned.iter().filter(|p| p.3 >= 0.5).count();
        let _ = write!(
            s,
            "<h3>How often each section's planned strategy is its best</h3><p>In {firm} of {} sections the plan's strategy has the highest NPV of the section's strategies in at least half of the draws. The ten least often best:</p>",
            planned.len()
        );
        s.push_str(&table_head(
            r#"<table class="robustness">"#,
            &[
                ("section_id", false),
                ("strategy", false),
                ("P50 of NPV", true),
                ("prob_positive", true),
                ("prob_best", true),
            ],
        ));
        for (sec, st, pos, best, p50) in planned.iter().take(10) {
            let _ = write!(
                s,
                r#"<tr><td>{}</td><td>{}</td><td class="num">{}</td><td class="num">{:.1} %</td><td class="num">{:.1} %</td></tr>"#,
                esc(sec),
                esc(st),
                grouped(*p50, 0),
                pos * 100.0,
                best * 100.0
            );
        }
        s.push_str("</tbody></table>");
    }
    s.push_str("<p class=\"small\">Every section's strategies (mean, P10, P50, P90 of NPV, chance of NPV above zero and of being the section's best) are in risk.csv; every draw's plan NPV and spending in risk_draws.csv.</p></section>");
    s
}
