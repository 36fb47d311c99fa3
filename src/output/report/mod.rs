//! The decision-maker's report: one self-contained HTML file (inline CSS and SVG; no scripts,
//! fonts or images from elsewhere), drawn from the files `plan --out DIR` writes (and
//! `frontier`, `sensitivity` and `risk` where present in the same directory).
//!
//! Everything the report plots comes from those files, so the report can be rebuilt (`pavestrat
//! report --from DIR`) and checked against them. Sections: the plan in numbers; network condition
//! over the period (plan, base, unconstrained); spending against every budget line with its
//! price; widening timing for sections that can be widened; the budget frontier; sensitivity and
//! risk when computed; the work programme by year; the assumptions; the planning-level caution.

pub mod chart;
pub mod compare;
mod extra;
pub mod map;

use crate::error::Result;
use crate::model::money::grouped;
use crate::output::titles::title;
use crate::schema::analysis::{FrontierLevel, Risk, RiskDraw, Sensitivity};
use crate::schema::plan::{BudgetUse, Condition, TargetUse, Widening, Work, SUMMARY};
use crate::schema::summary::Summary;
use crate::schema::{self, Record};
use chart::{esc, Chart, Spec, Units, BLUE, GREEN, GREY, ORANGE, VERMILLION};
use extra::axis_title;
use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;

/// Every file the report reads from a plan's directory.
pub const FILES_READ: [&str; 10] = [
    SUMMARY,
    Condition::FILE.name,
    BudgetUse::FILE.name,
    Work::FILE.name,
    TargetUse::FILE.name,
    Widening::FILE.name,
    FrontierLevel::FILE.name,
    Sensitivity::FILE.name,
    Risk::FILE.name,
    RiskDraw::FILE.name,
];

/// What a report is drawn from: a plan's summary and tables as typed rows — made in memory by
/// the run that writes them (`plan --report`), or read from the directory it wrote
/// ([`Inputs::read`]); the rows are the same either way ([`crate::schema`]).
#[derive(Debug, Clone, Default)]
pub struct Inputs {
    pub summary: Summary,
    pub condition: Vec<Condition>,
    pub budget: Vec<BudgetUse>,
    pub programme: Vec<Work>,
    pub targets: Option<Vec<TargetUse>>,
    pub widening: Option<Vec<Widening>>,
    pub frontier: Option<Vec<FrontierLevel>>,
    pub sensitivity: Option<Vec<Sensitivity>>,
    pub risk: Option<Vec<Risk>>,
    pub risk_draws: Option<Vec<RiskDraw>>,
    /// The network's lines, from `section_plan.geojson` (with a geometry column).
    pub map: Option<map::MapData>,
}

impl Inputs {
    /// The files of the directory `plan --out DIR` wrote (with those of `frontier`,
    /// `sensitivity` and `risk` when there): the summary, condition, budget use and work
    /// programme must be there.
    pub fn read(dir: &Path) -> Result<Inputs> {
        let path = dir.join(SUMMARY);
        let label = path.display().to_string();
        let text = std::fs::read_to_string(&path).map_err(|e| {
            crate::error::Error::Usage(format!(
                "cannot read {label}: {e}; expected the output directory of `pavestrat plan --out DIR` (give it with --from DIR)"
            ))
        })?;
        Ok(Inputs {
            summary: Summary::parse(&label, &text)?,
            condition: schema::read(dir)?,
            budget: schema::read(dir)?,
            programme: schema::read(dir)?,
            targets: schema::read_if_there(dir)?,
            widening: schema::read_if_there(dir)?,
            frontier: schema::read_if_there(dir)?,
            sensitivity: schema::read_if_there(dir)?,
            risk: schema::read_if_there(dir)?,
            risk_draws: schema::read_if_there(dir)?,
            map: read_map(dir)?,
        })
    }
}

/// The map's lines from `dir/section_plan.geojson`, when there.
fn read_map(dir: &Path) -> Result<Option<map::MapData>> {
    let path = dir.join(crate::output::geojson::SECTION_PLAN);
    let Ok(text) = std::fs::read_to_string(&path) else {
        return Ok(None);
    };
    map::MapData::parse(&text).map(Some).ok_or_else(|| {
        crate::error::Error::Usage(format!(
            "{}: not the GeoJSON feature collection `pavestrat plan` writes; write the plan again",
            path.display()
        ))
    })
}

/// Rows of the work programme shown in the report (all are in work_programme.csv).
pub const PROGRAMME_ROWS: usize = 3000;
/// Sections with widening charts (the ones with the most to gain first).
pub const WIDENING_CHARTS: usize = 12;

/// Money with thousands separators and the scenario's label.
fn money(x: f64, label: &str) -> String {
    format!("{} {}", grouped(x, 0), esc(label))
}

/// Render the report.
pub fn render(inputs: &Inputs) -> Result<String> {
    let sm = &inputs.summary;
    let title = if sm.assumptions.title.is_empty() {
        "Road work programme".to_owned()
    } else {
        sm.assumptions.title.clone()
    };
    let mut body = String::new();
    let mut nav: Vec<(&str, &str)> = Vec::new();
    let caution = esc(crate::CAUTION);
    let _ = write!(
        body,
        r#"<header><h1>{}</h1><p class="sub">Work programme and appraisal report · {} sections · money in {}</p><p class="caution"><strong>Caution.</strong> {caution}</p></header>"#,
        esc(&title),
        grouped(sm.sections as f64, 0),
        esc(&sm.money)
    );
    nav.push(("numbers", "The plan in numbers"));
    let numbers_at = body.len();
    body.push_str(&numbers(sm, inputs.targets.as_deref()));
    nav.push(("condition", "Network condition"));
    body.push_str(&condition_section(&inputs.condition));
    nav.push(("spending", "Spending and budget lines"));
    body.push_str(&spending_section(&inputs.budget, &inputs.programme, sm));
    if let Some(m) = &inputs.map {
        if !m.sections.is_empty() {
            nav.push(("map", "Map of the programme"));
            body.push_str(&map::section(m, &inputs.programme));
        }
    }
    if let Some(w) = &inputs.widening {
        if !w.is_empty() {
            nav.push(("widening", "Widening timing"));
            body.push_str(&widening_section(w, sm));
        }
    }
    nav.push(("frontier", "Budget frontier"));
    body.push_str(&frontier_section(inputs.frontier.as_deref(), sm));
    if let Some(t) = &inputs.sensitivity {
        nav.push(("sensitivity", "Sensitivity"));
        body.push_str(&extra::sensitivity_section(t, &sm.money));
    }
    if let Some(t) = &inputs.risk {
        nav.push(("risk", "Risk"));
        body.push_str(&extra::risk_section(
            t,
            inputs.risk_draws.as_deref(),
            &sm.money,
        ));
    }
    nav.push(("programme", "Work programme"));
    body.push_str(&programme_section(&inputs.programme, sm));
    nav.push(("assumptions", "Assumptions"));
    body.push_str(&assumptions_section(sm));
    let _ = write!(
        body,
        r#"<footer><p class="caution">{caution}</p><p class="small">Made by pavestrat {}. Every chart is drawn from the CSV files beside this report.</p></footer>"#,
        env!("CARGO_PKG_VERSION")
    );
    let mut n = String::from(r#"<nav><strong>Contents</strong><ol>"#);
    for (id, name) in &nav {
        let _ = write!(n, r##"<li><a href="#{id}">{name}</a></li>"##);
    }
    n.push_str("</ol></nav>");
    body.insert_str(numbers_at, &n);
    Ok(format!(
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"><title>{}</title><style>{CSS}</style></head><body><main>{body}</main></body></html>\n",
        esc(&title)
    ))
}

pub(super) const CSS: &str = "\
body{font-family:system-ui,-apple-system,'Segoe UI',Roboto,'Liberation Sans',Arial,sans-serif;color:#1a1a1a;background:#fff;max-width:1080px;margin:1.5em auto;padding:0 1em;line-height:1.45}\
h1{font-size:1.7em;margin:.2em 0}h2{font-size:1.3em;border-bottom:2px solid #1a1a1a;padding-bottom:.15em;margin-top:2em}h3{font-size:1.05em;margin:1.2em 0 .3em}\
.sub{color:#444;margin:0 0 .8em}.small{font-size:.85em;color:#555}\
.caution{border-left:5px solid #D55E00;background:#fff4ec;padding:.5em .9em}\
nav{border:1px solid #ccc;padding:.4em 1em;margin-bottom:1em;font-size:.92em}nav ol{margin:.2em 0;padding-left:1.4em;columns:2}\
table{border-collapse:collapse;margin:.4em 0 1em;font-size:.92em;display:block;max-width:100%;overflow-x:auto}th,td{padding:.22em .6em;border-bottom:1px solid #ddd;text-align:left;vertical-align:top}\
th{border-bottom:2px solid #888}td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}\
svg.chart{max-width:100%;height:auto;display:block;margin:.4em 0 1em;font-size:12px}\
svg.map{max-width:100%;height:auto;display:block;margin:.4em 0 1em;font-size:12px}\
svg .grid{stroke:#e4e4e4}svg .axis{stroke:#444}svg .tick{fill:#333;font-size:11px}svg .axis-title{fill:#1a1a1a;font-size:12px;font-weight:600}\
svg .chart-title{font-weight:700;font-size:13px;fill:#1a1a1a}svg .legend{font-size:11px;fill:#1a1a1a}svg .note,svg .price{font-size:10px;fill:#333}\
svg rect.planned{stroke:#1a1a1a;stroke-width:2}tr.moved td{font-weight:600}\
.charts{display:flex;flex-wrap:wrap;gap:.5em 1.2em}.charts figure{margin:0;flex:0 1 500px;max-width:500px}.charts svg.chart{margin:.2em 0}\
@media print{body{max-width:none;margin:0}nav{display:none}section{break-inside:avoid-page}svg.chart{break-inside:avoid}}";

fn numbers(sm: &Summary, targets: Option<&[TargetUse]>) -> String {
    let m = &sm.money;
    let mut s = String::from(r#"<section id="numbers"><h2>The plan in numbers</h2>"#);
    let least = sm.objective_kind == "least-cost";
    let _ = write!(
        s,
        "<p>Objective: {}. Status <strong>{}</strong>: the plan is within {:.4} % of the best any plan could reach (bound {}).</p>",
        if least {
            "least present value of agency cost within the condition targets"
        } else {
            "largest total NPV against the base (routine maintenance only)"
        },
        esc(&sm.status),
        sm.gap * 100.0,
        money(sm.bound, m)
    );
    s.push_str(&table_head(
        r#"<table class="numbers">"#,
        &[("", false), ("npv", true), ("pv_agency_cost", true)],
    ));
    for (label, npv, pv) in [
        ("This plan", sm.npv.plan, sm.pv_agency_cost.plan),
        (
            "No budget limits",
            sm.npv.unconstrained,
            sm.pv_agency_cost.unconstrained,
        ),
        ("Base (routine only)", sm.npv.base, sm.pv_agency_cost.base),
    ] {
        let _ = write!(
            s,
            r#"<tr><td>{label}</td><td class="num">{}</td><td class="num">{}</td></tr>"#,
            money(npv, m),
            money(pv, m)
        );
    }
    s.push_str("</tbody></table>");
    let cap = sm.pv_capital.plan;
    if cap > 0.0 && !least {
        let npv = sm.npv.plan;
        let _ = write!(
            s,
            "<p>Headline ratio: <strong>NPV per unit of present capital cost, {:.2}</strong> (PV capital {}), the ratio that ranks works when money binds. The same as a benefit-cost ratio on capital alone, {:.2}: every benefit and saving other than capital over the PV of capital. Appraisal files also give the benefit-cost ratio of road-user savings over the net agency cost (capital less routine savings and residual value), which runs high where that difference is small; NPV decides.</p>",
            npv / cap,
            money(cap, m),
            1.0 + npv / cap
        );
    }
    let (p, u) = (sm.npv.plan, sm.npv.unconstrained);
    if u.abs() > 0.0 && !least {
        let _ = write!(
            s,
            "<p>The plan keeps {:.1} % of the NPV the network could earn with no budget limits.</p>",
            100.0 * p / u
        );
    }
    if let Some(t) = targets {
        if !t.is_empty() {
            s.push_str(&table_head(
                r#"<h3>Condition targets</h3><table>"#,
                &[
                    ("target", false),
                    ("measure", false),
                    ("at_most", true),
                    ("achieved", true),
                    ("state", false),
                    ("target_price", true),
                ],
            ));
            for r in t {
                let binding = r.state == "binding";
                let _ = write!(
                    s,
                    r#"<tr><td>{}</td><td>{}</td><td class="num">{}</td><td class="num">{:.4}</td><td>{}</td><td class="num">{}</td></tr>"#,
                    esc(&r.line),
                    esc(&r.measure),
                    r.at_most.0,
                    r.achieved.to_f64(),
                    esc(&r.state),
                    crate::output::format::price_beside_state(r.price.0, binding)
                );
            }
            s.push_str("</tbody></table>");
        }
    }
    s.push_str("</section>");
    s
}

/// The three cases with their colour and dash.
const CASE_STYLE: [(&str, &str, &str, &str); 3] = [
    ("plan", "this plan", BLUE, ""),
    ("base", "base (routine only)", VERMILLION, "7 4"),
    ("unconstrained", "no budget limits", GREEN, "2 3"),
];

fn condition_section(rows: &[Condition]) -> String {
    // case → [(year, mean iri, [good, fair, poor])]
    type Point = (f64, f64, [f64; 3]);
    let mut by_case: BTreeMap<&str, Vec<Point>> = BTreeMap::new();
    for r in rows {
        let sh = [
            r.good_share.to_f64(),
            r.fair_share.to_f64(),
            r.poor_share.to_f64(),
        ];
        by_case.entry(r.case.as_str()).or_default().push((
            f64::from(r.year.0),
            r.mean_iri.to_f64(),
            sh,
        ));
    }
    let all: Vec<&(f64, f64, [f64; 3])> = by_case.values().flatten().collect();
    let (ymin, ymax) = all
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.0), b.max(p.0))
        });
    let imax = all.iter().map(|p| p.1).fold(0.0, f64::max);
    let mut s = String::from(
        r#"<section id="condition"><h2>Network condition over the analysis period</h2><p>Length-weighted mean roughness (IRI) of the network each year, and the share of length in each condition class, under this plan, the base (routine maintenance only) and every section's best strategy with no budget limits.</p>"#,
    );
    let mut c = Chart::new(Spec {
        id: "condition-iri",
        title: "Mean roughness of the network",
        width: 1000.0,
        height: 340.0,
        x: (ymin, ymax),
        x_pad: 0.5,
        x_title: "Year",
        x_units: Units::plain(0),
        x_integer: true,
        y: (0.0, imax * 1.05),
        y_title: "Mean IRI (m/km)",
        y_units: Units::plain(2),
        y2: None,
    });
    let mut legend = Vec::new();
    for (key, name, colour, dash) in CASE_STYLE {
        if let Some(pts) = by_case.get(key) {
            let p: Vec<(f64, f64)> = pts.iter().map(|q| (q.0, q.1)).collect();
            c.line(key, colour, dash, &p, false);
            legend.push((name, colour, dash));
        }
    }
    s.push_str(&c.finish(&legend));
    s.push_str(r#"<div class="charts">"#);
    let classes = [("good", GREEN), ("fair", ORANGE), ("poor", VERMILLION)];
    for (key, name, _, _) in CASE_STYLE {
        let Some(pts) = by_case.get(key) else {
            continue;
        };
        let id = format!("condition-classes-{key}");
        let title = format!("Condition: {name}");
        let mut c = Chart::new(Spec {
            id: &id,
            title: &title,
            width: 345.0,
            height: 270.0,
            x: (ymin, ymax),
            x_pad: 0.5,
            x_title: "Year",
            x_units: Units::plain(0),
            x_integer: true,
            y: (0.0, 1.0),
            y_title: "Share of length (%)",
            y_units: Units::percent(0),
            y2: None,
        });
        for &(y, _, sh) in pts {
            let mut from = 0.0;
            for (k, (cls, colour)) in classes.iter().enumerate() {
                c.bar(cls, colour, y, 0.8, from, sh[k], "");
                from += sh[k];
            }
        }
        let legend: Vec<(&str, &str, &str)> = classes.iter().map(|(n, c)| (*n, *c, "")).collect();
        s.push_str(&c.finish(&legend));
    }
    s.push_str("</div></section>");
    s
}

fn spending_section(rows: &[BudgetUse], works: &[Work], sm: &Summary) -> String {
    // group → (category, region, [(year, limit, used, price, line, binding)])
    type Line<'r> = (f64, f64, f64, f64, &'r str, bool);
    let mut groups: Vec<(&str, &str, &str, Vec<Line<'_>>)> = Vec::new();
    for r in rows {
        let entry = (
            f64::from(r.year.0),
            r.limit.to_f64(),
            r.used.to_f64(),
            r.price.0,
            r.line.as_str(),
            r.state == "binding",
        );
        match groups.iter_mut().find(|x| x.0 == r.group) {
            Some(x) => x.3.push(entry),
            None => groups.push((&r.group, &r.category, &r.region, vec![entry])),
        }
    }
    let m = &sm.money;
    let mut s =
        String::from(r#"<section id="spending"><h2>Spending against each budget line</h2>"#);
    let _ = write!(
        s,
        "<p>The first chart: the cost of the programme's capital works each year, orange where no budget line limits the year. Then, for each budget group, bars: what the plan spends in each line and year; black marks: the line's limit. A line is binding when the plan uses it to within {} of its limit; the figure above a binding line's bar is its budget price, how much the objective would gain per unit of money added to it, and a slack line says “slack”. In the table, a slack line's price in brackets is the bound's relaxation's, which the plan's whole choices leave room under. Money in {}.</p><div class=\"charts\">",
        esc(&crate::output::format::share_text(sm.binding_within)),
        esc(m)
    );
    // Capital works by year: their number and cost, and whether a line limits the year.
    let mut by_year: BTreeMap<i32, (usize, f64)> = BTreeMap::new();
    for w in works.iter().filter(|w| w.category != "routine") {
        let e = by_year.entry(w.year.0).or_default();
        e.0 += 1;
        e.1 += w.cost.to_f64();
    }
    s.push_str(&works_by_year_chart(rows, &by_year, m));
    for (g, cat, region, lines) in &groups {
        let top = lines.iter().map(|l| l.1.max(l.2)).fold(0.0, f64::max);
        let (units, word) = Units::money(top);
        let y_title = axis_title("Money", m, word);
        let ys: Vec<f64> = lines.iter().map(|l| l.0).collect();
        let (y0, y1) = (
            ys.iter().copied().fold(f64::INFINITY, f64::min),
            ys.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        );
        let id = format!("spending-{g}");
        let title = format!(
            "{g} ({cat}{})",
            if region.is_empty() {
                String::new()
            } else {
                format!(", {region}")
            }
        );
        let mut c = Chart::new(Spec {
            id: &id,
            title: &title,
            width: 500.0,
            height: 280.0,
            x: (y0, y1),
            x_pad: 0.6,
            x_title: "Year",
            x_units: Units::plain(0),
            x_integer: true,
            y: (0.0, top * 1.18),
            y_title: &y_title,
            y_units: units,
            y2: None,
        });
        for (year, limit, used, price, _, binding) in lines {
            c.bar("used", BLUE, *year, 0.6, 0.0, *used, "");
            c.level("limit", "#1a1a1a", *year, 0.8, *limit);
            let text = if *binding {
                crate::output::format::price_figure(*price)
            } else {
                "slack".to_owned()
            };
            c.label("price", *year, limit.max(*used), 6.0, &text, Some(*price));
        }
        s.push_str(&c.finish(&[("used", BLUE, ""), ("limit", "#1a1a1a", "")]));
    }
    s.push_str("</div>");
    // The same as a table.
    // Capital works in years no line limits: spent without a limit, said and listed.
    let free: BTreeMap<i32, (usize, f64)> = by_year
        .iter()
        .filter(|(y, _)| !capital_limited(rows, **y))
        .map(|(y, v)| (*y, *v))
        .collect();
    if !free.is_empty() {
        let total: f64 = free.values().map(|v| v.1).sum();
        let _ = write!(
            s,
            r#"<p class="unlimited">No budget line limits capital works in {} of the years the plan has works in; the plan spends {} there with no limit (the scenario's <code>[plan] years_without_lines</code> can hold the last limits on instead):</p>"#,
            free.len(),
            money(total, m)
        );
        s.push_str(&table_head(
            r#"<table class="unlimited-years">"#,
            &[("year", false), ("works", true), ("cost", true)],
        ));
        for (y, (n, cost)) in &free {
            let _ = write!(
                s,
                r#"<tr><td>{y}</td><td class="num">{n}</td><td class="num">{}</td></tr>"#,
                money(*cost, m)
            );
        }
        s.push_str("</tbody></table>");
    }
    s.push_str(&table_head(
        r#"<table class="budget-lines">"#,
        &[
            ("line", false),
            ("limit", true),
            ("used", true),
            ("used_share", true),
            ("state", false),
            ("price", true),
        ],
    ));
    for (_, _, _, lines) in &groups {
        for (_, limit, used, price, name, binding) in lines {
            let _ = write!(
                s,
                r#"<tr><td>{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{:.1} %</td><td>{}</td><td class="num">{}</td></tr>"#,
                esc(name),
                money(*limit, m),
                money(*used, m),
                crate::output::format::use_percent(*limit, *used),
                if *binding { "binding" } else { "slack" },
                crate::output::format::price_beside_state(*price, *binding)
            );
        }
    }
    s.push_str("</tbody></table></section>");
    s
}

/// Whether a budget line limits capital works in `year` (a capital or an `all` line).
fn capital_limited(rows: &[BudgetUse], year: i32) -> bool {
    rows.iter()
        .any(|r| r.year.0 == year && (r.category == "capital" || r.category == "all"))
}

/// The cost of the programme's capital works in every year it has works (`by_year`: each year's
/// number of works and their cost), each bar coloured by whether a budget line limits capital
/// works that year.
fn works_by_year_chart(
    rows: &[BudgetUse],
    by_year: &BTreeMap<i32, (usize, f64)>,
    m: &str,
) -> String {
    let (Some((&y0, _)), Some((&y1, _))) = (by_year.first_key_value(), by_year.last_key_value())
    else {
        return String::new();
    };
    let top = by_year.values().map(|v| v.1).fold(0.0, f64::max);
    let (units, word) = Units::money(top);
    let y_title = axis_title("Money", m, word);
    let mut c = Chart::new(Spec {
        id: "works-by-year",
        title: "Capital works each year, with and without a budget line",
        width: 1000.0,
        height: 300.0,
        x: (f64::from(y0), f64::from(y1)),
        x_pad: 0.6,
        x_title: "Year",
        x_units: Units::plain(0),
        x_integer: true,
        y: (0.0, top * 1.1),
        y_title: &y_title,
        y_units: units,
        y2: None,
    });
    let mut any_free = false;
    for (&y, &(_, cost)) in by_year {
        if capital_limited(rows, y) {
            c.bar("limited", BLUE, f64::from(y), 0.7, 0.0, cost, "");
        } else {
            any_free = true;
            c.bar("no-line", ORANGE, f64::from(y), 0.7, 0.0, cost, "");
        }
    }
    let mut legend = vec![("a line limits the year", BLUE, "")];
    if any_free {
        legend.push(("no line limits the year", ORANGE, ""));
    }
    c.finish(&legend)
}

/// A table's start: `open` (the `<table>` tag, and anything before it), then a heading row
/// of `columns` — each a CSV column name, shown by its title ([`title`]; one name per idea
/// across the files, the workbook and the report), or a heading of the report's own — right
/// aligned when the column holds numbers.
pub(super) fn table_head(open: &str, columns: &[(&str, bool)]) -> String {
    let mut s = String::from(open);
    s.push_str("<thead><tr>");
    for (key, num) in columns {
        let class = if *num { r#" class="num""# } else { "" };
        let _ = write!(s, "<th{class}>{}</th>", esc(&title(key)));
    }
    s.push_str("</tr></thead><tbody>");
    s
}

fn widening_section(rows: &[Widening], sm: &Summary) -> String {
    struct W<'r> {
        strategy: &'r str,
        year: f64,
        npv: f64,
        fyrr: Option<f64>,
        by_fyrr: bool,
        by_npv: bool,
        planned: bool,
    }
    let mut secs: Vec<(&str, Vec<W<'_>>)> = Vec::new();
    let mut at: std::collections::HashMap<&str, usize> = std::collections::HashMap::new();
    for r in rows {
        let id = r.section_id.as_str();
        let w = W {
            strategy: &r.strategy,
            year: f64::from(r.year.0),
            npv: r.npv.to_f64(),
            fyrr: r.fyrr.map(|f| f.to_f64()),
            by_fyrr: r.by_fyrr,
            by_npv: r.by_npv,
            planned: r.planned,
        };
        match at.get(id) {
            Some(&i) => secs[i].1.push(w),
            None => {
                at.insert(id, secs.len());
                secs.push((id, vec![w]));
            }
        }
    }
    let best = |ws: &[W]| ws.iter().map(|w| w.npv).fold(f64::NEG_INFINITY, f64::max);
    secs.sort_by(|a, b| best(&b.1).total_cmp(&best(&a.1)).then(a.0.cmp(b.0)));
    let rate = sm.assumptions.discount_rate;
    let m = &sm.money;
    let mut s = String::from(r#"<section id="widening"><h2>Widening timing</h2>"#);
    // A plan written without `--every-widening-year` lists only the years it and the timing
    // rules pick (a summary from before the key existed listed every year).
    let every = sm.widening_years != "picked";
    let years = if every {
        "in each year"
    } else {
        "in each year the plan or a timing rule picks (the plan was written without --every-widening-year, so the other years are not listed)"
    };
    let _ = write!(
        s,
        "<p>For each section that can be widened, the best strategy that widens {years}. Bars: its NPV against that of widening in the section's best year (left axis, {}), so that the best year stands at zero and small differences show. Points: the widening's own first-year rate of return (right axis), against the discount rate ({:.1} %, dashed). Outlined bar: the year the plan widens, if it does. Common practice widens in the first year the FYRR reaches the discount rate. A grey band marks a year in which no strategy the section's templates allow widens.</p>",
        esc(m),
        rate * 100.0
    );
    if secs.len() > WIDENING_CHARTS {
        let _ = write!(
            s,
            "<p class=\"small\">The {WIDENING_CHARTS} sections with the most to gain are drawn; all {} are in widening_plan.csv.</p>",
            secs.len()
        );
    }
    s.push_str(r#"<div class="charts">"#);
    for (id, ws) in secs.iter().take(WIDENING_CHARTS) {
        let top = best(ws);
        // The first year with the best NPV (`max_by` keeps the last of equals, so reversed).
        let best_year = ws
            .iter()
            .rev()
            .max_by(|a, b| a.npv.total_cmp(&b.npv))
            .map_or(0.0, |w| w.year);
        let lo = ws.iter().map(|w| w.npv - top).fold(0.0, f64::min);
        let (units, word) = Units::money(lo.abs());
        let y_title = axis_title("Against the best", m, word);
        let fy: Vec<f64> = ws.iter().filter_map(|w| w.fyrr).collect();
        let f_lo = fy.iter().copied().fold(rate.min(0.0), f64::min);
        let f_hi = fy.iter().copied().fold(rate, f64::max);
        let (y0, y1) = (
            ws.iter().map(|w| w.year).fold(f64::INFINITY, f64::min),
            ws.iter().map(|w| w.year).fold(f64::NEG_INFINITY, f64::max),
        );
        let chart_id = format!("widening-{id}");
        let title = format!("Section {id}");
        let mut c = Chart::new(Spec {
            id: &chart_id,
            title: &title,
            width: 500.0,
            height: 280.0,
            x: (y0, y1),
            x_pad: 0.6,
            x_title: "Widening year",
            x_units: Units::plain(0),
            x_integer: true,
            // Room under the deepest bar for its label; a single year still has an axis.
            y: if lo < 0.0 {
                (lo * 1.2, 0.0)
            } else {
                (-1.0, 0.0)
            },
            y_title: &y_title,
            y_units: units,
            y2: Some((
                (f_lo * 1.1, f_hi * 1.15),
                "First-year return (%)",
                Units::percent(1),
            )),
        });
        // Years inside the span with no strategy that widens then: a grey band each (known
        // only when every widening year is listed; otherwise the years not picked are missing).
        let missing: Vec<i32> = if every {
            (y0 as i32..=y1 as i32)
                .filter(|y| !ws.iter().any(|w| (w.year - f64::from(*y)).abs() < 0.5))
                .collect()
        } else {
            Vec::new()
        };
        for y in &missing {
            let (xa, xb) = (c.x.at(f64::from(*y) - 0.5), c.x.at(f64::from(*y) + 0.5));
            let band = format!(
                r#"<rect class="none" data-x="{y}" x="{xa:.3}" y="{:.3}" width="{:.3}" height="{:.3}" fill="{NONE_GREY}"/>"#,
                c.y.p1,
                xb - xa,
                c.y.p0 - c.y.p1
            );
            c.raw(&band);
        }
        for w in ws {
            let extra = if w.planned { " planned" } else { "" };
            c.bar(
                "below-best",
                chart::SKY,
                w.year,
                0.7,
                0.0,
                w.npv - top,
                extra,
            );
        }
        // Under the zero line, where the best year's bar would be.
        let best_word = if ws
            .iter()
            .any(|w| w.planned && (w.year - best_year).abs() < 0.5)
        {
            "best, planned"
        } else {
            "best"
        };
        c.label("note", best_year, 0.0, -12.0, best_word, Some(top));
        let pts: Vec<(f64, f64)> = ws
            .iter()
            .filter_map(|w| w.fyrr.map(|f| (w.year, f)))
            .collect();
        c.line("fyrr", VERMILLION, "", &pts, true);
        // The rate's label at the end away from the best year's label.
        let left = best_year - y0 > y1 - best_year;
        c.reference_at("discount rate", GREY, rate, true, left);
        let mut rules: Vec<String> = vec![format!("best in {best_year:.0}, NPV {}", money(top, m))];
        rules.extend(ws.iter().filter(|w| w.by_fyrr || w.by_npv).map(|w| {
            format!(
                "{:.0}{}",
                w.year,
                match (w.by_fyrr, w.by_npv) {
                    (true, true) => " by the FYRR rule and by highest NPV".to_owned(),
                    (true, false) => format!(
                        " by the FYRR rule, {} below the best",
                        money(top - w.npv, m)
                    ),
                    _ => " by highest NPV".to_owned(),
                }
            )
        }));
        match ws.iter().find(|w| w.planned) {
            Some(w) => rules.push(format!("the plan: {}", esc(w.strategy))),
            None => rules.push("the plan does not widen".to_owned()),
        }
        if !missing.is_empty() {
            rules.push(format!(
                "no strategy its templates allow widens in {}",
                year_runs(&missing)
            ));
        }
        s.push_str("<figure>");
        let mut legend = vec![("NPV", chart::SKY, ""), ("FYRR", VERMILLION, "")];
        if ws.iter().any(|w| w.planned) {
            legend.push(("planned (outlined)", "#1a1a1a", ""));
        }
        if !missing.is_empty() {
            legend.push(("no widening", NONE_GREY, ""));
        }
        s.push_str(&c.finish(&legend));
        let _ = write!(
            s,
            r#"<figcaption class="small">{}: {}</figcaption></figure>"#,
            esc(id),
            rules.join("; ")
        );
    }
    s.push_str("</div></section>");
    s
}

/// The band of a year in which no strategy widens.
const NONE_GREY: &str = "#e3e3e3";

/// Years as runs: `2028–2029, 2046`.
fn year_runs(years: &[i32]) -> String {
    let mut runs: Vec<(i32, i32)> = Vec::new();
    for &y in years {
        match runs.last_mut() {
            Some(r) if r.1 + 1 == y => r.1 = y,
            _ => runs.push((y, y)),
        }
    }
    runs.iter()
        .map(|&(a, b)| {
            if a == b {
                a.to_string()
            } else {
                format!("{a}–{b}")
            }
        })
        .collect::<Vec<_>>()
        .join(", ")
}

fn frontier_section(levels: Option<&[FrontierLevel]>, sm: &Summary) -> String {
    let m = &sm.money;
    let mut s = String::from(r#"<section id="frontier"><h2>Budget frontier</h2>"#);
    let Some(levels) = levels else {
        s.push_str("<p>No frontier was computed for this plan: run <code>pavestrat frontier --out DIR</code> into the plan's directory, then <code>pavestrat report --from DIR</code>.</p></section>");
        return s;
    };
    struct P<'r> {
        level: f64,
        total: f64,
        objective: Option<f64>,
        bound: Option<f64>,
        gap: Option<f64>,
        status: &'r str,
        reason: &'r str,
        unlimited: bool,
    }
    let pts: Vec<P<'_>> = levels
        .iter()
        .map(|r| P {
            level: r.level.0,
            total: r.total_budget.to_f64(),
            objective: r.objective.map(|x| x.to_f64()),
            bound: r.bound.map(|x| x.to_f64()),
            gap: r.gap.map(|x| x.to_f64()),
            status: &r.status,
            reason: &r.reason,
            unlimited: r.unlimited,
        })
        .collect();
    // Levels drawn as points; the level at which no line binds is drawn as the ceiling line
    // (its total budget is usually far to the right of the others).
    let solved: Vec<&P> = pts
        .iter()
        .filter(|p| p.objective.is_some() && !p.unlimited)
        .collect();
    let ceiling = pts
        .iter()
        .find(|p| p.unlimited)
        .and_then(|p| p.objective.map(|o| (p.level, o)));
    let _ = write!(
        s,
        "<p>The best objective the selection finds when the budget lines are scaled to each level (1 = the scenario's budgets), against the total budget; whiskers reach the bound no plan can pass. The slope between two points is what another unit of money buys. An NPV is drawn as a share of the NPV with no budget limits: the axis starts near the top, and its labels say how small the differences are.{} Money in {}.</p>",
        if ceiling.is_some() {
            " The dashed line is the objective when no line binds (every section gets its best strategy)."
        } else {
            ""
        },
        esc(m)
    );
    if !solved.is_empty() {
        // An NPV frontier is drawn as a share of the NPV with no budget limits, so that its
        // axis, which starts near the top to show the differences, says how small they are.
        let share_of = match ceiling {
            Some((_, o)) if sm.objective_kind != "least-cost" && o > 0.0 => Some(o),
            _ => None,
        };
        let y_of = |v: f64| share_of.map_or(v, |o| v / o);
        let xs: Vec<f64> = solved.iter().map(|p| p.total).collect();
        let mut ys: Vec<f64> = solved
            .iter()
            .flat_map(|p| [p.objective.unwrap_or(0.0), p.bound.unwrap_or(0.0)])
            .map(y_of)
            .collect();
        if let Some((_, o)) = ceiling {
            ys.push(y_of(o));
        }
        let (xu, xw) = Units::money(xs.iter().copied().fold(0.0, f64::max));
        let (y_lo, y_hi) = (
            ys.iter().copied().fold(f64::INFINITY, f64::min),
            ys.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        );
        let (yu, yw) = if share_of.is_some() {
            (Units::percent(2), "")
        } else {
            Units::money(y_lo.abs().max(y_hi.abs()))
        };
        let x_title = if xw.is_empty() {
            format!("Total budget over all lines ({m})")
        } else {
            format!("Total budget over all lines ({m}, {xw})")
        };
        let kind = if sm.objective_kind == "least-cost" {
            "PV agency cost"
        } else {
            "Total NPV"
        };
        let y_title = if share_of.is_some() {
            "Total NPV, % of the NPV with no budget limits".to_owned()
        } else if yw.is_empty() {
            format!("{kind} ({m})")
        } else {
            format!("{kind} ({m}, {yw})")
        };
        // The objective's own range, padded: the differences between levels are the message.
        let pad = ((y_hi - y_lo) * 0.12).max(y_hi.abs() * 1e-4);
        let mut c = Chart::new(Spec {
            id: "frontier",
            title: "What each budget level buys",
            width: 1000.0,
            height: 360.0,
            x: (
                xs.iter().copied().fold(f64::INFINITY, f64::min) * 0.9,
                xs.iter().copied().fold(0.0, f64::max) * 1.04,
            ),
            x_pad: 0.0,
            x_title: &x_title,
            x_units: xu,
            x_integer: false,
            y: (y_lo - pad, y_hi + pad),
            y_title: &y_title,
            y_units: yu,
            y2: None,
        });
        if let Some((level, o)) = ceiling {
            c.reference(
                &format!("no line binds (level ×{})", trim(level)),
                GREEN,
                y_of(o),
                false,
            );
        }
        for p in &solved {
            if let (Some(o), Some(b)) = (p.objective, p.bound) {
                c.whisker("bound", GREY, p.total, y_of(o), y_of(b));
            }
        }
        let line: Vec<(f64, f64)> = solved
            .iter()
            .map(|p| (p.total, y_of(p.objective.unwrap_or(0.0))))
            .collect();
        c.line("objective", BLUE, "", &line, false);
        // Each level's name under its point: the ceiling's label sits above its line.
        for p in &solved {
            c.label(
                "note",
                p.total,
                y_of(p.objective.unwrap_or(0.0)),
                -16.0,
                &format!("×{}", trim(p.level)),
                None,
            );
        }
        let mut legend = vec![("best plan found", BLUE, ""), ("bound", GREY, "")];
        if ceiling.is_some() {
            legend.push(("no line binds", GREEN, "5 4"));
        }
        s.push_str(&c.finish(&legend));
    }
    s.push_str(&table_head(
        r#"<table>"#,
        &[
            ("level", true),
            ("total_budget", true),
            ("objective", true),
            ("bound", true),
            ("gap", true),
            ("status", false),
        ],
    ));
    for p in &pts {
        let _ = write!(
            s,
            r#"<tr><td class="num">{}{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td class="num">{}</td><td>{}</td></tr>"#,
            trim(p.level),
            if p.unlimited { " (no line binds)" } else { "" },
            money(p.total, m),
            p.objective
                .map(|o| money(o, m))
                .unwrap_or_else(|| "—".into()),
            p.bound.map(|o| money(o, m)).unwrap_or_else(|| "—".into()),
            p.gap
                .map(|g| format!("{:.4} %", g * 100.0))
                .unwrap_or_else(|| "—".into()),
            if p.reason.is_empty() {
                esc(p.status)
            } else {
                format!("{} — {}", esc(p.status), esc(p.reason))
            }
        );
    }
    s.push_str("</tbody></table></section>");
    s
}

/// A level without trailing zeros.
fn trim(x: f64) -> String {
    let s = format!("{x:.4}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}

fn programme_section(rows: &[Work], sm: &Summary) -> String {
    let m = &sm.money;
    let mut years: BTreeMap<i64, (f64, usize)> = BTreeMap::new();
    for r in rows {
        let e = years.entry(i64::from(r.year.0)).or_default();
        e.0 += r.cost.to_f64();
        e.1 += 1;
    }
    let mut s = String::from(r#"<section id="programme"><h2>Work programme by year</h2>"#);
    s.push_str(&table_head(
        r#"<table class="years">"#,
        &[("year", false), ("works", true), ("cost", true)],
    ));
    for (y, (cost, n)) in &years {
        let _ = write!(
            s,
            r#"<tr><td>{y}</td><td class="num">{n}</td><td class="num">{}</td></tr>"#,
            money(*cost, m)
        );
    }
    s.push_str("</tbody></table>");
    if rows.len() > PROGRAMME_ROWS {
        let _ = write!(
            s,
            "<p class=\"small\">The first {PROGRAMME_ROWS} of {} treatments are listed; all are in work_programme.csv.</p>",
            rows.len()
        );
    }
    let mut current = None;
    for r in rows.iter().take(PROGRAMME_ROWS) {
        let y = i64::from(r.year.0);
        if current != Some(y) {
            if current.is_some() {
                s.push_str("</tbody></table>");
            }
            s.push_str(&table_head(
                &format!(r#"<h3>{y}</h3><table class="programme" data-year="{y}">"#),
                &[
                    ("section_id", false),
                    ("treatment", false),
                    ("region", false),
                    ("category", false),
                    ("cost", true),
                ],
            ));
            current = Some(y);
        }
        let _ = write!(
            s,
            r#"<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class="num">{}</td></tr>"#,
            esc(&r.section_id),
            esc(&r.treatment),
            esc(&r.region),
            esc(&r.category),
            money(r.cost.to_f64(), m)
        );
    }
    if current.is_some() {
        s.push_str("</tbody></table>");
    }
    s.push_str("</section>");
    s
}

fn assumptions_section(sm: &Summary) -> String {
    let a = &sm.assumptions;
    let m = &sm.money;
    let mut s = String::from(
        r#"<section id="assumptions"><h2>Key assumptions</h2><table class="assumptions"><tbody>"#,
    );
    let mut row = |k: &str, v: String| {
        let _ = write!(s, "<tr><th>{}</th><td>{v}</td></tr>", esc(k));
    };
    row(
        "Discount rate",
        format!(
            "{:.2} % a year ({} discounting)",
            a.discount_rate * 100.0,
            esc(&a.discounting)
        ),
    );
    let (y0, years) = (f64::from(a.base_year.0), f64::from(a.analysis_years));
    row(
        "Analysis period",
        format!(
            "{years:.0} years, {y0:.0} to {:.0} (base year {y0:.0})",
            y0 + years - 1.0
        ),
    );
    row("Money", esc(m));
    row(
        "Network",
        format!(
            "{} sections, {} km",
            grouped(a.sections as f64, 0),
            grouped(a.length_km, 1)
        ),
    );
    for (values, label, decimals) in [
        (
            &a.unit_values.time_per_vehicle_hour,
            "Value of travel time (per vehicle-hour)",
            2,
        ),
        (
            &a.unit_values.operating_per_vehicle_km,
            "Vehicle operating cost on a smooth road (per vehicle-km)",
            3,
        ),
    ] {
        let parts: Vec<String> = values
            .by_class()
            .iter()
            .map(|(c, v)| format!("{} {}", c.replace('_', " "), grouped(*v, decimals)))
            .collect();
        row(label, format!("{} ({})", parts.join(", "), esc(m)));
    }
    row("Cost of an injury crash", money(a.unit_values.crash, m));
    let fams: Vec<String> = a
        .families
        .iter()
        .map(|f| {
            format!(
                "{} ({})",
                esc(&f.name),
                esc(match f.model.as_str() {
                    "aashto93" => "AASHTO 1993 serviceability loss beside Paterson's structural term, converted to IRI",
                    "calibrated" => "calibrated roughness progression",
                    other => other,
                })
            )
        })
        .collect();
    row("Pavement model families", fams.join("; "));
    row(
        "Condition classes",
        format!(
            "good below IRI {:.2} m/km, poor above {:.2} m/km",
            a.condition_classes_iri.good_below, a.condition_classes_iri.poor_above
        ),
    );
    row(
        "Selection",
        format!(
            "{} path, {} price updates; {} treatments in the catalogue, {} strategy templates",
            esc(&sm.method),
            grouped(sm.price_updates as f64, 0),
            grouped(a.treatments as f64, 0),
            grouped(a.templates as f64, 0)
        ),
    );
    s.push_str("</tbody></table>");
    let list = &sm.unverified_coefficients;
    if !list.is_empty() {
        let _ = write!(
            s,
            "<h3>Coefficients not yet backed by local evidence</h3><p>{} model coefficients still stand at a calibration default (no published value fits every place) or at a published value quoted from memory. Replace them with local values; the roughness families can be fitted to the agency's surveys with <code>pavestrat calibrate</code>.</p><table class=\"assumptions\"><thead><tr><th>Coefficient</th><th>Value</th><th>Standing</th></tr></thead><tbody>",
            list.len()
        );
        for u in list {
            let _ = write!(
                s,
                "<tr><td><code>{}</code></td><td>{}</td><td>{}</td></tr>",
                esc(&u.key),
                esc(&u.value),
                esc(&u.standing)
            );
        }
        s.push_str("</tbody></table>");
    }
    s.push_str("</section>");
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;

    #[test]
    fn a_summary_without_a_number_the_report_reads_is_refused_by_name() {
        let text = r#"{"money": "VCR", "sections": 3, "npv": {"plan": 1.0, "base": 0.0}}"#;
        let Err(Error::Input(d)) = Summary::parse("summary.json", text) else {
            panic!("a summary missing numbers must be refused");
        };
        let text = d.to_string();
        for key in [
            "npv.unconstrained",
            "pv_agency_cost.plan",
            "assumptions.discount_rate",
        ] {
            assert!(text.contains(key), "{key} in {text}");
        }
        assert!(!text.contains("`npv.plan`"), "{text}");
    }
}
