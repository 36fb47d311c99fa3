//! `comparison.html`: two plans side by side on one page, drawn from the same rows as
//! `compare`'s CSV files — the totals, works cost and condition by year (charts and a
//! table), the sections that chose differently, money by budget group, and every budget line
//! with its use, state and price in both plans.

use super::chart::{esc, Chart, Spec, Units, BLUE, ORANGE};
use super::extra::axis_title;
use super::{table_head, CSS};
use crate::analysis::compare::{Change, Comparison};
use crate::model::money::{grouped, price_figure};
use crate::output::format::signed;
use crate::schema::value::{Dec, Fixed, Price};
use std::fmt::Write as _;

/// Changed sections listed on the page (all are in comparison.csv).
pub const PAGE_SECTIONS: usize = 3000;

fn money(x: f64) -> String {
    grouped(x, 0)
}

fn opt_dec(x: Option<Dec>) -> String {
    x.map_or("—".to_owned(), |v| money(v.to_f64()))
}

fn opt_price(x: Option<Price>) -> String {
    x.map_or("—".to_owned(), |v| price_figure(v.0))
}

/// The page.
pub fn page(c: &Comparison) -> String {
    let (sa, sb) = (&c.a.summary, &c.b.summary);
    let m = esc(&sb.money);
    let title = "Two plans compared";
    let caution = esc(crate::CAUTION);
    let mut s = String::new();
    let _ = write!(
        s,
        r#"<header><h1>{title}</h1><p class="sub">Plan B held against plan A · money in {m}</p><p class="caution"><strong>Caution.</strong> {caution}</p></header>"#
    );
    // The plans.
    s.push_str(r#"<section id="plans"><h2>The plans</h2><table class="plans"><tbody>"#);
    for (k, side) in [("A", &c.a), ("B", &c.b)] {
        let _ = write!(
            s,
            "<tr><th>Plan {k}</th><td>{}</td><td>{}</td><td>{}</td></tr>",
            esc(&side.dir.display().to_string()),
            esc(if side.summary.assumptions.title.is_empty() {
                "(untitled scenario)"
            } else {
                &side.summary.assumptions.title
            }),
            esc(&match (&side.run, side.afresh) {
                (Some(r), _) => format!("plan run {r}"),
                (None, true) => "planned afresh from the scenario".to_owned(),
                (None, false) => String::new(),
            })
        );
    }
    s.push_str("</tbody></table>");
    if c.differences.is_empty() {
        s.push_str("<p>Both plans were made under the same assumptions.</p>");
    } else {
        s.push_str(
            "<p>The plans were made under different assumptions:</p><ul class=\"differences\">",
        );
        for d in &c.differences {
            let _ = write!(s, "<li>{}</li>", esc(d));
        }
        s.push_str("</ul>");
    }
    let [(_, cost_a), (_, cost_b)] = c.works();
    s.push_str(&table_head(
        r#"<table class="totals">"#,
        &[("item", false), ("A", true), ("B", true), ("B − A", true)],
    ));
    for (name, a, b) in [
        ("NPV", sa.npv.plan, sb.npv.plan),
        (
            "PV agency cost",
            sa.pv_agency_cost.plan,
            sb.pv_agency_cost.plan,
        ),
        ("PV capital", sa.pv_capital.plan, sb.pv_capital.plan),
        ("Works cost", cost_a.to_f64(), cost_b.to_f64()),
    ] {
        let _ = write!(
            s,
            r#"<tr><td>{name} ({m})</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td></tr>"#,
            money(a),
            money(b),
            signed(b - a, 0)
        );
    }
    if let Some((ia, ib)) = c.period_iri() {
        let _ = write!(
            s,
            r#"<tr><td>Mean IRI over the years (m/km)</td><td class="num">{ia:.3}</td><td class="num">{ib:.3}</td><td class="num">{}</td></tr>"#,
            signed(ib - ia, 3)
        );
    }
    let _ = write!(
        s,
        r#"<tr><td>Status</td><td class="num">{}</td><td class="num">{}</td><td></td></tr></tbody></table></section>"#,
        esc(&sa.status),
        esc(&sb.status)
    );

    s.push_str(&years_section(c, &m));
    s.push_str(&sections_section(c, &m));
    s.push_str(&lines_section(c, &m));
    let _ = write!(
        s,
        r#"<footer><p class="caution">{caution}</p><p class="small">Made by pavestrat {}. Every figure is drawn from the two plans' CSV files; comparison.csv, comparison_lines.csv and comparison_years.csv beside this page hold them all.</p></footer>"#,
        env!("CARGO_PKG_VERSION")
    );
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"><title>{title}</title><style>{CSS}</style></head><body><main>{s}</main></body></html>\n"
    )
}

fn years_section(c: &Comparison, m: &str) -> String {
    let mut s = String::from(
        r#"<section id="years"><h2>Works and condition by year</h2><p>Bars: the cost of each plan's works in each year, from its work programme (years no budget line limits included). Lines: the network's length-weighted mean roughness under each plan.</p><div class="charts">"#,
    );
    if let (Some(first), Some(last)) = (c.years.first(), c.years.last()) {
        let (y0, y1) = (f64::from(first.year.0), f64::from(last.year.0));
        let top = c
            .years
            .iter()
            .map(|y| y.cost_a.to_f64().max(y.cost_b.to_f64()))
            .fold(0.0, f64::max);
        let (units, word) = Units::money(top);
        let y_title = axis_title("Works cost", m, word);
        let mut ch = Chart::new(Spec {
            id: "compare-cost",
            title: "Works cost by year",
            width: 500.0,
            height: 280.0,
            x: (y0, y1),
            x_pad: 0.6,
            x_title: "Year",
            x_units: Units::plain(0),
            x_integer: true,
            y: (0.0, (top * 1.1).max(1.0)),
            y_title: &y_title,
            y_units: units,
            y2: None,
        });
        for y in &c.years {
            let x = f64::from(y.year.0);
            ch.bar("A", BLUE, x - 0.2, 0.4, 0.0, y.cost_a.to_f64(), "");
            ch.bar("B", ORANGE, x + 0.2, 0.4, 0.0, y.cost_b.to_f64(), "");
        }
        s.push_str(&ch.finish(&[("plan A", BLUE, ""), ("plan B", ORANGE, "")]));
        let series = |k: usize| -> Vec<(f64, f64)> {
            c.years
                .iter()
                .filter_map(|y| {
                    let v = if k == 0 { y.mean_iri_a } else { y.mean_iri_b }?;
                    Some((f64::from(y.year.0), v.to_f64()))
                })
                .collect()
        };
        let (pa, pb) = (series(0), series(1));
        if !pa.is_empty() || !pb.is_empty() {
            let imax = pa.iter().chain(&pb).map(|p| p.1).fold(0.0, f64::max);
            let mut ch = Chart::new(Spec {
                id: "compare-iri",
                title: "Mean roughness of the network",
                width: 500.0,
                height: 280.0,
                x: (y0, y1),
                x_pad: 0.5,
                x_title: "Year",
                x_units: Units::plain(0),
                x_integer: true,
                y: (0.0, (imax * 1.05).max(0.1)),
                y_title: "Mean IRI (m/km)",
                y_units: Units::plain(2),
                y2: None,
            });
            ch.line("A", BLUE, "", &pa, false);
            ch.line("B", ORANGE, "6 3", &pb, false);
            s.push_str(&ch.finish(&[("plan A", BLUE, ""), ("plan B", ORANGE, "6 3")]));
        }
    }
    s.push_str("</div>");
    s.push_str(&table_head(
        r#"<table class="years">"#,
        &[
            ("year", false),
            ("works_a", true),
            ("works_b", true),
            ("cost_a", true),
            ("cost_b", true),
            ("cost_change", true),
            ("mean_iri_a", true),
            ("mean_iri_b", true),
            ("poor_share_a", true),
            ("poor_share_b", true),
        ],
    ));
    let share = |x: Option<Fixed<6>>| {
        x.map_or("—".to_owned(), |v| format!("{:.1} %", 100.0 * v.to_f64()))
    };
    let iri = |x: Option<Fixed<6>>| x.map_or("—".to_owned(), |v| format!("{:.2}", v.to_f64()));
    for y in &c.years {
        let _ = write!(
            s,
            r#"<tr><td>{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td></tr>"#,
            y.year.0,
            y.works_a,
            y.works_b,
            money(y.cost_a.to_f64()),
            money(y.cost_b.to_f64()),
            signed(y.cost_change.to_f64(), 0),
            iri(y.mean_iri_a),
            iri(y.mean_iri_b),
            share(y.poor_share_a),
            share(y.poor_share_b)
        );
    }
    s.push_str("</tbody></table></section>");
    s
}

fn sections_section(c: &Comparison, m: &str) -> String {
    let n = |ch: Change| c.count(ch);
    let mut s = String::from(r#"<section id="sections"><h2>Sections that chose differently</h2>"#);
    let _ = write!(
        s,
        "<p>{} sections chose differently: {} in timing (the same treatments in other years or at other triggers), {} in treatment; {} are in plan A only and {} in plan B only. NPV in {m}.</p>",
        n(Change::Timing) + n(Change::Treatment),
        n(Change::Timing),
        n(Change::Treatment),
        n(Change::OnlyA),
        n(Change::OnlyB)
    );
    let changed = c.changed();
    if changed.is_empty() {
        s.push_str("</section>");
        return s;
    }
    s.push_str(&table_head(
        r#"<table class="sections">"#,
        &[
            ("section_id", false),
            ("region", false),
            ("change", false),
            ("strategy_a", false),
            ("strategy_b", false),
            ("first_works_year_a", true),
            ("first_works_year_b", true),
            ("npv_change", true),
        ],
    ));
    let year = |y: Option<crate::model::Year>| y.map_or("—".to_owned(), |y| y.0.to_string());
    for r in changed.iter().take(PAGE_SECTIONS) {
        let _ = write!(
            s,
            r#"<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td></tr>"#,
            esc(&r.section_id),
            esc(&r.region),
            esc(&r.change),
            esc(&r.strategy_a),
            esc(&r.strategy_b),
            year(r.first_works_year_a),
            year(r.first_works_year_b),
            r.npv_change
                .map_or("—".to_owned(), |x| signed(x.to_f64(), 0))
        );
    }
    s.push_str("</tbody></table>");
    if changed.len() > PAGE_SECTIONS {
        let _ = write!(
            s,
            "<p class=\"small\">The first {PAGE_SECTIONS} of {} are shown; comparison.csv lists them all.</p>",
            changed.len()
        );
    }
    s.push_str("</section>");
    s
}

fn lines_section(c: &Comparison, m: &str) -> String {
    let mut s = String::from(r#"<section id="lines"><h2>Money by budget group and line</h2>"#);
    let _ = write!(
        s,
        "<p>What each plan uses of each budget group over all its years, and of each line, with the line's state and budget price in each plan. Money in {m}.</p>"
    );
    s.push_str(&table_head(
        r#"<table class="groups">"#,
        &[
            ("group", false),
            ("used_a", true),
            ("used_b", true),
            ("used_change", true),
        ],
    ));
    for (g, a, b) in c.groups() {
        let change = match (a, b) {
            (Some(x), Some(y)) => signed(y.to_f64() - x.to_f64(), 0),
            _ => "—".to_owned(),
        };
        let _ = write!(
            s,
            r#"<tr><td>{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{change}</td></tr>"#,
            esc(&g),
            opt_dec(a),
            opt_dec(b)
        );
    }
    s.push_str("</tbody></table>");
    s.push_str(&table_head(
        r#"<table class="lines">"#,
        &[
            ("line", false),
            ("limit_a", true),
            ("limit_b", true),
            ("used_a", true),
            ("used_b", true),
            ("used_change", true),
            ("state_a", false),
            ("state_b", false),
            ("price_a", true),
            ("price_b", true),
        ],
    ));
    for l in &c.lines {
        let class = if l.price_moved || l.state_a != l.state_b {
            r#" class="moved""#
        } else {
            ""
        };
        let _ = write!(
            s,
            r#"<tr{class}><td>{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td>{}</td><td>{}</td><td class="num">{}</td><td class="num">{}</td></tr>"#,
            esc(&l.line),
            opt_dec(l.limit_a),
            opt_dec(l.limit_b),
            opt_dec(l.used_a),
            opt_dec(l.used_b),
            l.used_change
                .map_or("—".to_owned(), |d| signed(d.to_f64(), 0)),
            esc(&l.state_a),
            esc(&l.state_b),
            opt_price(l.price_a),
            opt_price(l.price_b)
        );
    }
    s.push_str("</tbody></table><p class=\"small\">Rows in bold: a line whose price or state moved.</p></section>");
    s
}
