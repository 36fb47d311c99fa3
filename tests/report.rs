//! `pavestrat report`, `plan --report`, `frontier` and `plan --xlsx`: the HTML report parsed
//! with a real HTML parser (html5ever, through the `scraper` crate) and every plotted value
//! checked against the CSV it comes from, both as the value the mark carries and as its pixel
//! position on the chart's own scale; the frontier's promises; the workbook read back with
//! an independent reader (`calamine`); bad input; and, when a browser is given, the report
//! rendered by headless Chromium.

use crate::util::{rows, Workdir};
use scraper::{ElementRef, Html, Selector};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

/// One demo plan with `--report` (and `--xlsx`), shared by the tests that only read it.
fn demo() -> &'static Path {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("report-demo");
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_pavestrat"))
            .args(["plan", "--out", "res", "--report", "--time-limit", "1"])
            .args(if cfg!(feature = "xlsx") {
                vec!["--xlsx", "res/plan.xlsx"]
            } else {
                vec![]
            })
            .current_dir(&dir)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "plan --report failed:\n{}",
            String::from_utf8_lossy(&out.stderr)
        );
        dir.join("res")
    })
}

fn read(name: &str) -> String {
    std::fs::read_to_string(demo().join(name)).unwrap_or_else(|e| panic!("{name}: {e}"))
}

fn sel(s: &str) -> Selector {
    Selector::parse(s).unwrap()
}

fn num(e: &ElementRef<'_>, attr: &str) -> f64 {
    let v = e
        .value()
        .attr(attr)
        .unwrap_or_else(|| panic!("no {attr} on {:?}", e.value()));
    v.parse()
        .unwrap_or_else(|_| panic!("{attr}={v:?} is not a number"))
}

fn pair(e: &ElementRef<'_>, attr: &str) -> (f64, f64) {
    let v = e.value().attr(attr).unwrap_or_else(|| panic!("no {attr}"));
    let mut it = v.split(' ').map(|x| x.parse::<f64>().unwrap());
    (it.next().unwrap(), it.next().unwrap())
}

/// A chart with its scales as written on its root.
struct Drawn<'a> {
    svg: ElementRef<'a>,
    x: ((f64, f64), (f64, f64)),
    y: ((f64, f64), (f64, f64)),
}

impl<'a> Drawn<'a> {
    fn new(svg: ElementRef<'a>) -> Drawn<'a> {
        Drawn {
            svg,
            x: (pair(&svg, "data-x-domain"), pair(&svg, "data-x-range")),
            y: (pair(&svg, "data-y-domain"), pair(&svg, "data-y-range")),
        }
    }

    fn px(s: ((f64, f64), (f64, f64)), v: f64) -> f64 {
        let ((d0, d1), (p0, p1)) = s;
        p0 + (v - d0) / (d1 - d0) * (p1 - p0)
    }

    fn marks(&self, series: &str) -> Vec<ElementRef<'a>> {
        self.svg
            .select(&sel(&format!(r#".mark[data-series="{series}"]"#)))
            .collect()
    }

    /// Check a point mark sits where its value says on this chart's scales.
    fn check_point(&self, m: &ElementRef<'_>) {
        let (x, y) = (num(m, "data-x"), num(m, "data-y"));
        assert!(
            (num(m, "cx") - Self::px(self.x, x)).abs() < 0.01,
            "cx of {x},{y}"
        );
        assert!(
            (num(m, "cy") - Self::px(self.y, y)).abs() < 0.01,
            "cy of {x},{y}"
        );
    }

    /// Check a bar's top and bottom edges are at its base and base + value.
    fn check_bar(&self, m: &ElementRef<'_>) {
        let (from, v) = (num(m, "data-from"), num(m, "data-y"));
        let (a, b) = (Self::px(self.y, from), Self::px(self.y, from + v));
        assert!((num(m, "y") - a.min(b)).abs() < 0.01, "bar top of {v}");
        assert!(
            (num(m, "height") - (a - b).abs()).abs() < 0.01,
            "bar height of {v}"
        );
    }
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * a.abs().max(b.abs()).max(1.0)
}

#[test]
fn the_report_is_self_contained_with_every_chart_labelled() {
    let html = read("report.html");
    let doc = Html::parse_document(&html);
    assert_eq!(doc.select(&sel("script")).count(), 0, "no scripts");
    for (tag, attr) in [
        ("link", "href"),
        ("img", "src"),
        ("iframe", "src"),
        ("use", "href"),
    ] {
        assert_eq!(
            doc.select(&sel(&format!("{tag}[{attr}]"))).count(),
            0,
            "no external {tag}"
        );
    }
    assert!(
        html.matches("http").count() == html.matches("http://www.w3.org/2000/svg").count(),
        "the only URL is the SVG namespace"
    );
    assert!(
        html.contains("licensed engineer"),
        "the caution is in the report"
    );
    let charts: Vec<ElementRef<'_>> = doc.select(&sel("svg.chart")).collect();
    let ids: Vec<&str> = charts
        .iter()
        .map(|c| c.value().attr("data-chart").unwrap())
        .collect();
    let mut expected: Vec<String> = vec![
        "condition-iri".into(),
        "condition-classes-plan".into(),
        "condition-classes-base".into(),
        "condition-classes-unconstrained".into(),
        "frontier".into(),
    ];
    let mut groups: Vec<String> = rows(&read("budget_use.csv"))
        .into_iter()
        .map(|r| r["group"].clone())
        .collect();
    groups.dedup();
    assert_eq!(groups.len(), 6, "the demo's six budget groups");
    expected.extend(groups.iter().map(|g| format!("spending-{g}")));
    for id in &expected {
        assert!(
            ids.contains(&id.as_str()),
            "chart {id} missing; have {ids:?}"
        );
    }
    assert!(ids.iter().any(|i| i.starts_with("widening-")));
    for c in &charts {
        let id = c.value().attr("data-chart").unwrap();
        for axis in ["x", "y"] {
            let t: Vec<String> = c
                .select(&sel(&format!(r#"text.axis-title[data-axis="{axis}"]"#)))
                .map(|e| e.text().collect())
                .collect();
            assert_eq!(t.len(), 1, "{id}: one {axis} axis title");
            assert!(t[0].trim().len() > 2, "{id}: {axis} axis title {t:?}");
        }
        assert!(
            c.select(&sel(".tick")).count() >= 4,
            "{id}: the axes have tick labels"
        );
        assert!(
            c.select(&sel(".mark")).count() > 0,
            "{id}: something is drawn"
        );
    }
    // Money axes say their unit: the spending charts' y, the frontier's x (its y is a share).
    for c in &charts {
        let id = c.value().attr("data-chart").unwrap();
        let axis = match id {
            "frontier" => "x",
            id if id.starts_with("spending-") => "y",
            _ => continue,
        };
        let t: String = c
            .select(&sel(&format!(r#"text.axis-title[data-axis="{axis}"]"#)))
            .flat_map(|e| e.text())
            .collect();
        assert!(
            t.contains("VCR"),
            "{id}: money axis names the currency: {t}"
        );
    }
}

#[test]
fn condition_charts_plot_condition_csv() {
    let doc = Html::parse_document(&read("report.html"));
    let csv = rows(&read("condition.csv"));
    let svg = doc
        .select(&sel(r#"svg[data-chart="condition-iri"]"#))
        .next()
        .unwrap();
    let d = Drawn::new(svg);
    for case in ["plan", "base", "unconstrained"] {
        let want: Vec<(f64, f64)> = csv
            .iter()
            .filter(|r| r["case"] == case)
            .map(|r| (r["year"].parse().unwrap(), r["mean_iri"].parse().unwrap()))
            .collect();
        let marks = d.marks(case);
        assert_eq!(marks.len(), want.len(), "{case}: one point a year");
        assert_eq!(want.len(), 30, "the demo's 30-year period");
        for (m, (x, y)) in marks.iter().zip(&want) {
            assert_eq!(num(m, "data-x"), *x);
            assert!(close(num(m, "data-y"), *y, 1e-12), "{case} {x}");
            d.check_point(m);
        }
        let svg = doc
            .select(&sel(&format!(
                r#"svg[data-chart="condition-classes-{case}"]"#
            )))
            .next()
            .unwrap();
        let d2 = Drawn::new(svg);
        for (class, col) in [
            ("good", "good_share"),
            ("fair", "fair_share"),
            ("poor", "poor_share"),
        ] {
            let marks = d2.marks(class);
            let want: Vec<f64> = csv
                .iter()
                .filter(|r| r["case"] == case)
                .map(|r| r[col].parse().unwrap())
                .collect();
            assert_eq!(marks.len(), want.len());
            for (m, w) in marks.iter().zip(&want) {
                assert!(close(num(m, "data-y"), *w, 1e-12));
                d2.check_bar(m);
            }
        }
    }
}

#[test]
fn spending_charts_plot_budget_use_csv() {
    let doc = Html::parse_document(&read("report.html"));
    let lines = rows(&read("budget_use.csv"));
    let mut checked = 0;
    let mut groups: Vec<String> = lines.iter().map(|r| r["group"].clone()).collect();
    groups.dedup();
    for group in groups {
        let svg = doc
            .select(&sel(&format!(r#"svg[data-chart="spending-{group}"]"#)))
            .next()
            .unwrap();
        let d = Drawn::new(svg);
        let used = d.marks("used");
        let limits = d.marks("limit");
        let prices: Vec<ElementRef<'_>> = svg.select(&sel("text.price")).collect();
        let mine: Vec<&HashMap<String, String>> =
            lines.iter().filter(|r| r["group"] == group).collect();
        assert_eq!(used.len(), mine.len());
        for (i, r) in mine.iter().enumerate() {
            let year: f64 = r["year"].parse().unwrap();
            assert_eq!(num(&used[i], "data-x"), year);
            assert!(close(
                num(&used[i], "data-y"),
                r["used"].parse().unwrap(),
                1e-12
            ));
            d.check_bar(&used[i]);
            assert!(close(
                num(&limits[i], "data-y"),
                r["limit"].parse().unwrap(),
                1e-12
            ));
            let py = Drawn::px(d.y, num(&limits[i], "data-y"));
            assert!((num(&limits[i], "y1") - py).abs() < 0.01);
            assert!(close(
                num(&prices[i], "data-value"),
                r["price"].parse().unwrap(),
                1e-12
            ));
            checked += 1;
        }
    }
    assert_eq!(checked, lines.len(), "every budget line is drawn");
}

/// The capital works chart: a bar per year of the work programme with its capital works'
/// cost, orange (series `no-line`) exactly in the years no capital or `all` line limits.
#[test]
fn works_by_year_chart_plots_work_programme_csv_and_marks_years_without_lines() {
    let doc = Html::parse_document(&read("report.html"));
    let svg = doc
        .select(&sel(r#"svg[data-chart="works-by-year"]"#))
        .next()
        .unwrap();
    let d = Drawn::new(svg);
    let mut cost: std::collections::BTreeMap<i32, f64> = Default::default();
    for w in rows(&read("work_programme.csv")) {
        if w["category"] != "routine" {
            *cost.entry(w["year"].parse().unwrap()).or_default() +=
                w["cost"].parse::<f64>().unwrap();
        }
    }
    let lines = rows(&read("budget_use.csv"));
    let limited = |y: i32| {
        lines.iter().any(|r| {
            r["year"] == y.to_string() && (r["category"] == "capital" || r["category"] == "all")
        })
    };
    let (with, without) = (d.marks("limited"), d.marks("no-line"));
    assert_eq!(
        with.len() + without.len(),
        cost.len(),
        "a bar per year with works"
    );
    assert!(
        !without.is_empty(),
        "the demo has capital works in years with no line"
    );
    for (series, bars) in [(true, &with), (false, &without)] {
        for b in bars.iter() {
            let y = num(b, "data-x") as i32;
            assert_eq!(limited(y), series, "{y}");
            assert!(close(num(b, "data-y"), cost[&y], 1e-9), "{y}");
            d.check_bar(b);
        }
    }
}

#[test]
fn widening_charts_plot_widening_plan_csv() {
    let doc = Html::parse_document(&read("report.html"));
    let csv = rows(&read("widening_plan.csv"));
    let charts: Vec<ElementRef<'_>> = doc
        .select(&sel(r#"svg.chart[data-chart^="widening-"]"#))
        .collect();
    assert!(!charts.is_empty());
    for svg in charts {
        let id = svg
            .value()
            .attr("data-chart")
            .unwrap()
            .trim_start_matches("widening-");
        let mine: Vec<_> = csv.iter().filter(|r| r["section_id"] == id).collect();
        let d = Drawn::new(svg);
        // Each year's bar is its NPV less the best year's: the best year's is zero, labelled
        // with the best NPV.
        let npv = |r: &HashMap<String, String>| r["npv"].parse::<f64>().unwrap();
        let best = mine
            .iter()
            .map(|r| npv(r))
            .fold(f64::NEG_INFINITY, f64::max);
        let bars = d.marks("below-best");
        assert_eq!(bars.len(), mine.len(), "{id}: one bar per widening year");
        let label = svg
            .select(&sel("text.note"))
            .find(|t| t.text().collect::<String>().starts_with("best"))
            .unwrap();
        assert_eq!(num(&label, "data-value"), best);
        let best_year = mine.iter().find(|r| npv(r) == best).unwrap()["year"].clone();
        assert_eq!(label.value().attr("data-x"), Some(best_year.as_str()));
        for (b, r) in bars.iter().zip(&mine) {
            assert_eq!(num(b, "data-x"), r["year"].parse::<f64>().unwrap());
            assert_eq!(num(b, "data-y"), npv(r) - best);
            assert!(num(b, "data-y") <= 0.0);
            d.check_bar(b);
            let outlined = b.value().attr("class").unwrap().contains("planned");
            assert_eq!(
                outlined,
                r["planned"] == "true",
                "{id} {}: planned mark",
                r["year"]
            );
        }
        // A grey band for each year in the span with no widening, and the caption names them.
        let years: Vec<i32> = mine.iter().map(|r| r["year"].parse().unwrap()).collect();
        let (lo, hi) = (*years.iter().min().unwrap(), *years.iter().max().unwrap());
        let missing: Vec<String> = (lo..=hi)
            .filter(|y| !years.contains(y))
            .map(|y| y.to_string())
            .collect();
        let bands: Vec<String> = svg
            .select(&sel("rect.none"))
            .map(|r| r.value().attr("data-x").unwrap().to_owned())
            .collect();
        assert_eq!(bands, missing, "{id}: a band per year with no widening");
        if let Some(first) = missing.first() {
            let caption: String = doc
                .select(&sel("figcaption"))
                .map(|f| f.text().collect::<String>())
                .find(|t| t.starts_with(&format!("{id}:")))
                .unwrap();
            assert!(
                caption.contains("no strategy its templates allow widens in")
                    && caption.contains(first.as_str()),
                "{caption}"
            );
        }
        let y2 = (pair(&svg, "data-y2-domain"), pair(&svg, "data-y2-range"));
        let fy = d.marks("fyrr");
        let with_fyrr: Vec<_> = mine.iter().filter(|r| !r["fyrr"].is_empty()).collect();
        assert_eq!(fy.len(), with_fyrr.len());
        for (m, r) in fy.iter().zip(&with_fyrr) {
            assert!(close(num(m, "data-y"), r["fyrr"].parse().unwrap(), 1e-12));
            assert!((num(m, "cy") - Drawn::px(y2, num(m, "data-y"))).abs() < 0.01);
        }
    }
}

#[test]
fn frontier_is_monotone_reaches_the_unconstrained_plan_and_is_plotted() {
    let fr = rows(&read("frontier.csv"));
    let summary: serde_json::Value = serde_json::from_str(&read("summary.json")).unwrap();
    let solved: Vec<_> = fr.iter().filter(|r| !r["objective"].is_empty()).collect();
    assert!(solved.len() >= 4);
    let mut last = f64::NEG_INFINITY;
    let mut level = f64::NEG_INFINITY;
    for r in &fr {
        let l: f64 = r["level"].parse().unwrap();
        assert!(l > level, "levels ascend");
        level = l;
        // A level with no plan says why, naming lines of the scenario; a solved one does not.
        assert_eq!(
            r["objective"].is_empty(),
            !r["reason"].is_empty(),
            "level {l}"
        );
        if r["objective"].is_empty() {
            assert!(
                r["reason"].starts_with("the least spending the sections allow exceeds: ")
                    && r["reason"].contains("-upkeep-20"),
                "level {l}: {}",
                r["reason"]
            );
        }
        if let Ok(o) = r["objective"].parse::<f64>() {
            assert!(o >= last, "the frontier never falls: {o} after {last}");
            let b: f64 = r["bound"].parse().unwrap();
            assert!(b >= o - 0.01, "bound {b} below objective {o}");
            last = o;
        }
    }
    // The scenario's own level is there and agrees with the plan within both gaps.
    let one = fr.iter().find(|r| r["level"] == "1").expect("level 1");
    let plan = summary["objective"].as_f64().unwrap();
    let o1: f64 = one["objective"].parse().unwrap();
    let b1: f64 = one["bound"].parse().unwrap();
    assert!(o1 <= summary["bound"].as_f64().unwrap() + 0.01 && plan <= b1 + 0.01);
    // A plan proven optimal is optimal at its own level of the frontier too (it read
    // `within-gap` there, from the bound's 1e-10 of rounding).
    if summary["status"] == "optimal" {
        assert_eq!(one["status"], "optimal");
    }
    // Where no line binds, every section has its best strategy: the unconstrained NPV.
    let top = fr.last().unwrap();
    assert_eq!(top["unlimited"], "true");
    let unconstrained = summary["npv"]["unconstrained"].as_f64().unwrap();
    let o: f64 = top["objective"].parse().unwrap();
    assert!(close(o, unconstrained, 1e-9), "{o} vs {unconstrained}");
    assert_eq!(top["status"], "optimal");

    let doc = Html::parse_document(&read("report.html"));
    let svg = doc
        .select(&sel(r#"svg[data-chart="frontier"]"#))
        .next()
        .unwrap();
    let d = Drawn::new(svg);
    let pts = d.marks("objective");
    let drawn: Vec<_> = solved
        .iter()
        .filter(|r| r["unlimited"] == "false")
        .collect();
    assert_eq!(pts.len(), drawn.len());
    for (m, r) in pts.iter().zip(&drawn) {
        assert!(close(
            num(m, "data-x"),
            r["total_budget"].parse().unwrap(),
            1e-12
        ));
        // Drawn as a share of the NPV with no budget limits.
        assert!(close(
            num(m, "data-y"),
            r["objective"].parse::<f64>().unwrap() / o,
            1e-12
        ));
        d.check_point(m);
    }
    let ceiling = svg
        .select(&sel("line.reference"))
        .next()
        .expect("ceiling line");
    assert!(close(num(&ceiling, "data-y"), 1.0, 1e-12));
    let title: String = svg
        .select(&sel(r#"text.axis-title[data-axis="y"]"#))
        .next()
        .unwrap()
        .text()
        .collect();
    assert_eq!(title, "Total NPV, % of the NPV with no budget limits");
}

/// section_plan.csv's first works year is each section's earliest year in work_programme.csv,
/// and empty for a section with none.
#[test]
fn first_works_year_is_the_earliest_in_the_work_programme() {
    let mut first: std::collections::HashMap<String, i32> = std::collections::HashMap::new();
    for w in rows(&read("work_programme.csv")) {
        let y: i32 = w["year"].parse().unwrap();
        let e = first.entry(w["section_id"].clone()).or_insert(y);
        *e = (*e).min(y);
    }
    let plan = rows(&read("section_plan.csv"));
    assert_eq!(plan.len(), 40);
    let mut without = 0;
    for r in &plan {
        match first.get(&r["section_id"]) {
            Some(y) => assert_eq!(r["first_works_year"], y.to_string(), "{}", r["section_id"]),
            None => {
                without += 1;
                assert_eq!(r["first_works_year"], "", "{}", r["section_id"]);
            }
        }
    }
    // The demo plan treats every section (the empty cell is written by the same code).
    assert!(without < plan.len(), "{without} without works");
}

#[test]
fn work_programme_table_lists_every_treatment() {
    let doc = Html::parse_document(&read("report.html"));
    let works = rows(&read("work_programme.csv"));
    let tables: Vec<ElementRef<'_>> = doc.select(&sel("table.programme")).collect();
    let listed: usize = tables
        .iter()
        .map(|t| t.select(&sel("tbody tr")).count())
        .sum();
    assert_eq!(listed, works.len());
    for t in &tables {
        let year = t.value().attr("data-year").unwrap();
        let n = works.iter().filter(|w| w["year"] == year).count();
        assert_eq!(t.select(&sel("tbody tr")).count(), n, "year {year}");
    }
    // Money has thousands separators and the label.
    let text: String = doc.root_element().text().collect();
    assert!(text.contains(" VCR"));
    assert!(regex_like_thousands(&text));
    // The assumptions table names the discount rate and period.
    let a: String = doc
        .select(&sel("#assumptions"))
        .flat_map(|e| e.text())
        .collect();
    assert!(
        a.contains("6.00 % a year") && a.contains("30 years, 2027 to 2056"),
        "{a}"
    );
}

/// Whether the text has a number grouped by thousands (`1,234,567`).
fn regex_like_thousands(t: &str) -> bool {
    t.as_bytes().windows(9).any(|w| {
        w[0].is_ascii_digit()
            && w[1] == b','
            && w[2..5].iter().all(u8::is_ascii_digit)
            && w[5] == b','
            && w[6..9].iter().all(u8::is_ascii_digit)
    })
}

#[test]
fn report_from_the_directory_is_the_report_plan_wrote() {
    let wd = Workdir::new();
    let from = demo();
    let out = wd.join("again.html");
    wd.run(&[
        "report",
        "--from",
        from.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ])
    .expect_code(0);
    assert_eq!(wd.read("again.html"), read("report.html"));
}

#[test]
fn report_refuses_a_directory_without_a_plan_or_with_a_broken_file() {
    let wd = Workdir::new();
    wd.write("empty/.keep", "");
    wd.run(&["report", "--from", "empty"])
        .expect_code(2)
        .stderr_has("summary.json")
        .stderr_has("plan --out DIR");
    assert!(!wd.join("empty/report.html").exists());
    // A copy of the plan with one bad number: the error names file, line and column.
    for name in [
        "summary.json",
        "condition.csv",
        "budget_use.csv",
        "work_programme.csv",
        "target_use.csv",
        "widening_plan.csv",
        "frontier.csv",
    ] {
        wd.write(&format!("bad/{name}"), read(name));
    }
    let cond = read("condition.csv").replacen("2027,plan,", "2027,plan,x", 1);
    wd.write("bad/condition.csv", cond);
    wd.run(&["report", "--from", "bad"])
        .expect_code(2)
        .stderr_has("condition.csv:2")
        .stderr_has("mean_iri")
        .stderr_has("a number");
    assert!(
        !wd.join("bad/report.html").exists(),
        "nothing written on error"
    );
}

#[test]
fn frontier_scales_one_group_and_refuses_unknown_names() {
    let wd = Workdir::new();
    wd.run(&[
        "frontier",
        "--levels",
        "1,1.5",
        "--line",
        "works",
        "--time-limit",
        "0.5",
        "--out",
        "f",
    ])
    .expect_code(0)
    .stdout_has("only `works` scaled");
    let fr = rows(&wd.read("f/frontier.csv"));
    assert_eq!(
        fr.len(),
        3,
        "two levels and the one where works cannot bind"
    );
    // Only the five works lines (6.5M a year, 4M in 2027) grow: 30.0M × 0.5 more.
    let t1: f64 = fr[0]["total_budget"].parse().unwrap();
    let t15: f64 = fr[1]["total_budget"].parse().unwrap();
    assert!((t15 - t1 - 0.5 * 30_000_000.0).abs() < 0.01, "{t1} {t15}");
    wd.run(&["frontier", "--line", "werks"])
        .expect_code(2)
        .stderr_has("did you mean `works`");
    wd.run(&["frontier", "--levels", "1,abc"])
        .expect_code(2)
        .stderr_has("not a budget level");
}

#[test]
fn no_progress_bar_when_stderr_is_not_a_terminal() {
    let wd = Workdir::new();
    let out = wd.run(&["frontier", "--levels", "1", "--time-limit", "0.3"]);
    out.expect_code(0);
    assert!(!out.stderr.contains("left"), "{}", out.shown);
    assert!(!out.stderr.contains('\r'), "{}", out.shown);
    let quiet = wd.run(&["-q", "frontier", "--levels", "1", "--time-limit", "0.3"]);
    assert_eq!(quiet.stderr, "", "quiet leaves only errors");
}

#[cfg(feature = "xlsx")]
#[test]
fn workbook_has_typed_cells_matching_the_csv_files() {
    use calamine::{open_workbook, Data, Reader, Xlsx};
    let mut wb: Xlsx<_> = open_workbook(demo().join("plan.xlsx")).unwrap();
    let names = wb.sheet_names().to_vec();
    for s in [
        "Work programme",
        "Programme",
        "Section plan",
        "Budget use",
        "Appraisal",
        "About",
    ] {
        assert!(names.iter().any(|n| n == s), "sheet {s} in {names:?}");
    }
    let cents = |x: f64| (x * 100.0).round() as i64;
    let works = rows(&read("work_programme.csv"));
    let ws = wb.worksheet_range("Work programme").unwrap();
    let all: Vec<_> = ws.rows().collect();
    // Readable headings; the table, then a totals row.
    let head: Vec<String> = all[0].iter().map(|c| c.to_string()).collect();
    assert_eq!(
        head[..4],
        ["Year", "Section", "Treatment", "Cost"].map(String::from)
    );
    assert_eq!(
        head.last().map(String::as_str),
        Some("To km"),
        "carried columns"
    );
    let body = &all[1..all.len() - 1];
    assert_eq!(body.len(), works.len());
    let mut sum = 0i64;
    for (r, w) in body.iter().zip(&works) {
        assert!(matches!(r[0], Data::Float(_)), "year is a number");
        match r[3] {
            Data::Float(x) => {
                assert_eq!(cents(x), cents(w["cost"].parse().unwrap()));
                sum += cents(x);
            }
            ref other => panic!("cost is {other:?}, not a number"),
        }
        assert_eq!(r[1].to_string(), w["section_id"]);
    }
    // The totals row's formula holds the CSV's sum to the cent.
    let total = &all[all.len() - 1];
    assert_eq!(total[0].to_string(), "Total");
    match total[3] {
        Data::Float(x) => assert_eq!(cents(x), sum),
        ref other => panic!("total is {other:?}"),
    }
    // The programme sheet is programme.csv, cell for cell, typed.
    let prog = rows(&read("programme.csv"));
    let ws = wb.worksheet_range("Programme").unwrap();
    // Headings are titles; a year's columns read `2027 cost`, and `cost_per_lane_km` is no
    // year's (it read `per_lane_km cost` before).
    let head: Vec<String> = ws
        .rows()
        .next()
        .unwrap()
        .iter()
        .map(|c| c.to_string())
        .collect();
    for want in [
        "Cost per lane-km",
        "Cost per m²",
        "2027 cost",
        "2027 treatment",
    ] {
        assert!(head.iter().any(|h| h == want), "no `{want}` in {head:?}");
    }
    let sheet: Vec<_> = ws.rows().skip(1).collect();
    assert_eq!(sheet.len(), prog.len());
    for (r, p) in sheet.iter().zip(&prog) {
        assert_eq!(r[0].to_string(), p["kind"]);
        assert_eq!(r[2].to_string(), p["section_id"]);
        for (k, col) in [(8, "cost"), (11, "cost_2027"), (13, "cost_2028")] {
            match r[k] {
                Data::Float(x) => assert_eq!(cents(x), cents(p[col].parse().unwrap()), "{col}"),
                ref other => panic!("{col} is {other:?}"),
            }
        }
        assert_eq!(r[12].to_string(), p["treatment_2027"]);
    }
    // Filters on the heading rows and frozen headings, in the sheets' XML.
    let mut zip =
        zip::ZipArchive::new(std::fs::File::open(demo().join("plan.xlsx")).unwrap()).unwrap();
    for k in 1..=5 {
        let mut xml = String::new();
        std::io::Read::read_to_string(
            &mut zip.by_name(&format!("xl/worksheets/sheet{k}.xml")).unwrap(),
            &mut xml,
        )
        .unwrap();
        assert!(
            xml.contains("<autoFilter ref=\"A1:"),
            "sheet {k} has a filter"
        );
        assert!(
            xml.contains("state=\"frozen\""),
            "sheet {k} has frozen headings"
        );
    }
    let budget = rows(&read("budget_use.csv"));
    let ws = wb.worksheet_range("Budget use").unwrap();
    for (r, b) in ws.rows().skip(1).zip(&budget) {
        assert_eq!(r[0].to_string(), b["line"]);
        match (&r[2], &r[3]) {
            (Data::Float(l), Data::Float(u)) => {
                assert!(close(*l, b["limit"].parse().unwrap(), 1e-12));
                assert!(close(*u, b["used"].parse().unwrap(), 1e-12));
            }
            other => panic!("limit and used are {other:?}"),
        }
    }
    let ws = wb.worksheet_range("Appraisal").unwrap();
    let best = ws
        .rows()
        .skip(1)
        .filter(|r| matches!(r[13], Data::Bool(true)))
        .count();
    assert_eq!(best, 40, "one best strategy per demo section");
    // Each strategy's IRR and its status are appraise's (the workbook looks for each
    // strategy's own IRR, not the incremental steps').
    let wd = Workdir::new();
    wd.run(&["-q", "appraise", "--out", "a"]).expect_code(0);
    let appraisal = rows(&wd.read("a/appraisal.csv"));
    let sheet: Vec<_> = ws.rows().skip(1).collect();
    assert_eq!(sheet.len(), appraisal.len());
    for (r, a) in sheet.iter().zip(&appraisal) {
        assert_eq!(r[1].to_string(), a["strategy"]);
        // The columns carried from the network follow, as in appraisal.csv.
        assert_eq!(r[14].to_string(), a["road"]);
        assert_eq!(r[15], Data::Float(a["from_km"].parse().unwrap()));
        assert_eq!(r[10].to_string(), a["irr_status"], "{}", a["strategy"]);
        match &r[9] {
            Data::Float(x) => assert!(
                (x - a["irr"].parse::<f64>().unwrap()).abs() < 5e-7,
                "{} irr {x} against {}",
                a["strategy"],
                a["irr"]
            ),
            Data::Empty => assert_eq!(a["irr"], "", "{}", a["strategy"]),
            other => panic!("irr is {other:?}"),
        }
    }
}

/// The report in a real browser (`PAVESTRAT_BROWSER=/usr/bin/chromium`, as `.ci/run` sets it):
/// rendered headless to a PNG screenshot and to its DOM. The image must be the asked-for size and
/// not blank, the DOM must hold the charts, and the browser must log no console message at all.
/// (Without the variable the test says so and checks nothing: the default `cargo test` needs no
/// browser.)
#[test]
fn renders_in_a_real_browser() {
    let Some(browser) = std::env::var_os("PAVESTRAT_BROWSER") else {
        eprintln!("PAVESTRAT_BROWSER not set: the browser check runs in .ci/run");
        return;
    };
    let wd = Workdir::new();
    let report = demo().join("report.html");
    let url = format!("file://{}", report.display());
    let shot = wd.join("shot.png");
    let common = [
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--hide-scrollbars",
        "--no-first-run",
        "--enable-logging=stderr",
        "--v=0",
    ];
    let run = |extra: &[String]| {
        std::process::Command::new(&browser)
            .args(common)
            .arg(format!("--user-data-dir={}", wd.join("profile").display()))
            .args(extra)
            .arg(&url)
            .output()
            .expect("the browser runs")
    };
    let out = run(&[
        format!("--screenshot={}", shot.display()),
        "--window-size=1200,2000".into(),
    ]);
    let log = String::from_utf8_lossy(&out.stderr).into_owned();
    assert!(shot.exists(), "no screenshot:\n{log}");
    // The page has no scripts, so the console must stay silent: any message (an error, a
    // resource that failed to load) is a fault. Chromium logs them as `…:CONSOLE…] "text"`.
    let console: Vec<&str> = log.lines().filter(|l| l.contains(":CONSOLE")).collect();
    assert!(console.is_empty(), "console messages: {console:?}");

    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&shot).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!((info.width, info.height), (1200, 2000), "screenshot size");
    let px = info.color_type.samples();
    let bytes = &buf[..info.buffer_size()];
    let mut colours = std::collections::HashSet::new();
    let mut dark = 0usize;
    for p in bytes.chunks(px) {
        colours.insert((p[0] / 16, p[1] / 16, p[2] / 16));
        if p[0] < 100 && p[1] < 100 && p[2] < 100 {
            dark += 1;
        }
    }
    assert!(
        colours.len() > 20,
        "the page is not blank ({} colours)",
        colours.len()
    );
    assert!(dark > 5_000, "text and axes are drawn ({dark} dark pixels)");
    // The palette's blue (#0072B2) is on the page: the charts were painted.
    assert!(
        bytes
            .chunks(px)
            .any(|p| p[0] < 16 && (0x6a..0x7a).contains(&p[1]) && (0xaa..0xba).contains(&p[2])),
        "no chart colour on the screenshot"
    );

    let out = run(&["--dump-dom".into()]);
    let dom = String::from_utf8_lossy(&out.stdout).into_owned();
    let doc = Html::parse_document(&dom);
    assert!(
        doc.select(&sel("svg.chart")).count() >= 10,
        "charts in the DOM"
    );
    assert!(doc.select(&sel("svg.chart .mark")).count() > 100);
    // The map: a line per demo section, each coloured by the year band of its first works in
    // section_plan.csv (the demo's centre lines are in its network's geometry column).
    let first: std::collections::HashMap<String, i32> = rows(&read("section_plan.csv"))
        .into_iter()
        .filter(|r| !r["first_works_year"].is_empty())
        .map(|r| {
            (
                r["section_id"].clone(),
                r["first_works_year"].parse().unwrap(),
            )
        })
        .collect();
    let (lo, hi) = (
        *first.values().min().unwrap(),
        *first.values().max().unwrap(),
    );
    use pavestrat::output::report::map::{band_of, year_bands, YEAR_COLOURS};
    let bands = year_bands(lo, hi);
    let paths: Vec<_> = doc.select(&sel("svg.map-years path.sec")).collect();
    assert_eq!(paths.len(), 40, "a line per demo section");
    for p in &paths {
        let e = p.value();
        let id = e.attr("data-section").unwrap();
        assert!(e.attr("d").unwrap().starts_with('M'), "{id}: a drawn line");
        match first.get(id) {
            Some(y) => {
                assert_eq!(
                    e.attr("data-first-year"),
                    Some(y.to_string().as_str()),
                    "{id}"
                );
                assert_eq!(
                    e.attr("stroke"),
                    Some(YEAR_COLOURS[band_of(&bands, *y)]),
                    "{id}"
                );
            }
            None => assert_eq!(e.attr("data-first-year"), Some(""), "{id}"),
        }
    }
    assert_eq!(doc.select(&sel("svg.map-treatments path.sec")).count(), 40);
    assert_eq!(
        doc.select(&sel("svg.map .north")).count(),
        2,
        "north arrows"
    );
    assert_eq!(doc.select(&sel("svg.map .scale")).count(), 2, "scale bars");
    let log = String::from_utf8_lossy(&out.stderr);
    assert!(
        !log.lines().any(|l| l.contains(":CONSOLE")),
        "console messages while dumping the DOM:\n{log}"
    );
}

/// One name per idea: every column heading of the report's tables, with every analysis in it,
/// is the title the workbook gives the same CSV column (`output::titles`), or one of the few
/// headings only the report has.
#[test]
fn report_headings_are_the_workbooks_titles() {
    let wd = Workdir::new();
    for args in [
        &["-q", "plan", "--out", "p", "--time-limit", "1"][..],
        &["-q", "sensitivity", "--from", "p", "--out", "p"],
        &["-q", "risk", "--from", "p", "--draws", "16", "--out", "p"],
        &["-q", "frontier", "--levels", "0.8,1", "--out", "p"],
        &["-q", "report", "--from", "p"],
    ] {
        wd.run(args).expect_code(0);
    }
    let doc = Html::parse_document(&wd.read("p/report.html"));
    let titles: Vec<&str> = pavestrat::output::titles::TITLES
        .iter()
        .map(|(_, t)| *t)
        .collect();
    // Headings of the report's own, with no CSV column behind them.
    let own = [
        "",
        "The plan's NPV reaches zero at",
        "At",
        "Best at the scenario's values",
        "Then best",
        "P50 of NPV",
        "Coefficient",
        "Standing",
    ];
    let mut seen = std::collections::BTreeSet::new();
    for th in doc.select(&sel("thead th")) {
        let text = th.text().collect::<String>();
        assert!(
            titles.contains(&text.as_str()) || own.contains(&text.as_str()),
            "heading `{text}` is neither a title of output::titles nor one of the report's own"
        );
        seen.insert(text);
    }
    // The tables of every section were there to be checked.
    for want in [
        "Section",
        "Budget line",
        "Used",
        "Budget price",
        "Budget level",
        "Input",
        "Draws over the limit",
        "P50 of NPV",
    ] {
        assert!(seen.contains(want), "no `{want}` heading in {seen:?}");
    }
}

/// One truth about budget lines: for the demo and a synthetic network, the terminal, budget_use.csv,
/// the workbook, the report and summary.json give every line the same state, price and use; the
/// state follows the use (binding exactly when the plan leaves at most 5 % of the limit), and
/// a price is shown bare only beside a binding line.
#[test]
fn terminal_csv_workbook_and_report_agree_on_every_budget_line() {
    use calamine::{open_workbook, Data, Reader, Xlsx};
    use pavestrat::output::format::price_beside_state;
    let wd = Workdir::new();
    wd.run(&["-q", "init", "net", "--sections", "300", "--seed", "4"])
        .expect_code(0);
    let cases: [(&str, &[&str]); 2] =
        [("demo", &[]), ("net", &["--scenario", "net/scenario.toml"])];
    for (name, scenario) in cases {
        let out = format!("{name}-plan");
        let xlsx = format!("{out}/plan.xlsx");
        let mut args = vec!["plan", "--out", &out, "--report", "--time-limit", "5"];
        args.extend_from_slice(scenario);
        if cfg!(feature = "xlsx") {
            args.extend(["--xlsx", &xlsx]);
        }
        let run = wd.run(&args);
        run.expect_code(0);
        let csv = rows(&wd.read(&format!("{out}/budget_use.csv")));
        assert!(csv.len() >= 10, "{name}: {} lines", csv.len());
        let cents = |x: &str| (x.parse::<f64>().unwrap() * 100.0).round() as i64;
        // The terminal's table of budget lines.
        let terminal: HashMap<String, Vec<String>> = run
            .stdout
            .lines()
            .filter_map(|l| {
                let cells: Vec<String> = l.split_whitespace().map(str::to_owned).collect();
                let known = cells
                    .first()
                    .is_some_and(|c| csv.iter().any(|r| &r["line"] == c));
                (known && cells.len() == 6).then(|| (cells[0].clone(), cells))
            })
            .collect();
        assert_eq!(
            terminal.len(),
            csv.len(),
            "{name}: terminal lines\n{}",
            run.stdout
        );
        // The report's table of budget lines.
        let doc = Html::parse_document(&wd.read(&format!("{out}/report.html")));
        let report: HashMap<String, Vec<String>> = doc
            .select(&sel("#spending table.budget-lines tbody tr"))
            .map(|tr| {
                let cells: Vec<String> = tr
                    .select(&sel("td"))
                    .map(|td| td.text().collect::<String>())
                    .collect();
                (cells[0].clone(), cells)
            })
            .collect();
        assert_eq!(report.len(), csv.len(), "{name}: report lines");
        let summary: serde_json::Value =
            serde_json::from_str(&wd.read(&format!("{out}/summary.json"))).unwrap();
        let in_summary: Vec<&str> = summary["binding"]
            .as_array()
            .unwrap()
            .iter()
            .map(|b| b["line"].as_str().unwrap())
            .collect();
        let mut binding = 0;
        for r in &csv {
            let line = &r["line"];
            let (limit, used) = (cents(&r["limit"]), cents(&r["used"]));
            let state = r["state"].as_str();
            // The state follows the use, to the cent.
            let want = if (limit - used) as f64 <= 0.05 * limit as f64 {
                "binding"
            } else {
                "slack"
            };
            assert_eq!(state, want, "{name} {line}: limit {limit} used {used}");
            binding += usize::from(state == "binding");
            assert_eq!(
                in_summary.contains(&line.as_str()),
                state == "binding",
                "{name} {line}: summary.json's binding lines"
            );
            let price: f64 = r["price"].parse().unwrap();
            let shown = price_beside_state(price, state == "binding");
            let t = &terminal[line];
            assert_eq!(t[4], state, "{name} {line}: terminal state");
            assert_eq!(t[5], shown, "{name} {line}: terminal price");
            // The terminal shows whole units of money.
            let whole: f64 = t[2].replace(',', "").parse().unwrap();
            assert!(
                (whole - used as f64 / 100.0).abs() <= 0.5 + 1e-9,
                "{name} {line}: terminal use {whole} against {used} cents"
            );
            let h = &report[line];
            assert_eq!(h[4], state, "{name} {line}: report state");
            assert_eq!(h[5], shown, "{name} {line}: report price");
        }
        assert!(binding > 0, "{name}: no binding line to compare");
        if cfg!(feature = "xlsx") {
            let mut wb: Xlsx<_> = open_workbook(wd.join(&xlsx)).unwrap();
            let ws = wb.worksheet_range("Budget use").unwrap();
            let all: Vec<_> = ws.rows().collect();
            let head: Vec<String> = all[0].iter().map(|c| c.to_string()).collect();
            let col = |t: &str| head.iter().position(|h| h == t).unwrap();
            let (l, u, p, st) = (
                col("Budget line"),
                col("Used"),
                col("Budget price"),
                col("State"),
            );
            for (w, r) in all[1..=csv.len()].iter().zip(&csv) {
                assert_eq!(w[l].to_string(), r["line"]);
                assert_eq!(
                    w[st].to_string(),
                    r["state"],
                    "{name} {}: workbook state",
                    r["line"]
                );
                match (&w[u], &w[p]) {
                    (Data::Float(used), Data::Float(price)) => {
                        assert_eq!((used * 100.0).round() as i64, cents(&r["used"]));
                        assert_eq!(*price, r["price"].parse::<f64>().unwrap(), "{}", r["line"]);
                    }
                    other => panic!("{name}: used and price cells {other:?}"),
                }
            }
        }
    }
}

/// Measures, in the page as a real browser lays it out, every SVG text that reaches outside its
/// chart (the chart clips it) or overlaps another text of the same chart, and whether the page
/// is wider than the window; the findings are left in `body[data-layout]` as a JSON list.
const LAYOUT_PROBE: &str = r#"<script>(function(){
var out=[];
document.querySelectorAll('svg').forEach(function(svg){
  var r=svg.getBoundingClientRect(), name=svg.getAttribute('data-chart')||svg.getAttribute('class'), seen=[];
  svg.querySelectorAll('text').forEach(function(t){
    var b=t.getBoundingClientRect(), s=t.textContent;
    if(b.width<=0) return;
    if(b.left<r.left-0.5||b.top<r.top-0.5||b.right>r.right+0.5||b.bottom>r.bottom+0.5)
      out.push(name+': "'+s+'" reaches outside the chart');
    seen.forEach(function(o){
      var dx=Math.min(b.right,o.b.right)-Math.max(b.left,o.b.left), dy=Math.min(b.bottom,o.b.bottom)-Math.max(b.top,o.b.top);
      if(dx>1&&dy>1) out.push(name+': "'+s+'" overlaps "'+o.s+'"');
    });
    seen.push({b:b,s:s});
  });
});
if(document.documentElement.scrollWidth>window.innerWidth)
  out.push('the page is '+document.documentElement.scrollWidth+' px wide in a '+window.innerWidth+' px window');
document.body.setAttribute('data-layout', JSON.stringify(out));
})();</script>"#;

/// The report and the comparison page fit a 700 px window and A4 portrait's printable width
/// (190 mm at 96 px per inch: 718 px) with no chart text clipped, no two texts of a chart
/// overlapping, and no page wider than its window (run with PAVESTRAT_BROWSER, as .ci/run
/// does).
#[test]
fn pages_fit_700_px_and_a4_without_clipped_or_overlapping_text() {
    let Some(browser) = std::env::var_os("PAVESTRAT_BROWSER") else {
        eprintln!("PAVESTRAT_BROWSER not set: the browser check runs in .ci/run");
        return;
    };
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "cut", "--budget-scale", "0.8"])
        .expect_code(0);
    wd.run(&[
        "-q",
        "compare",
        demo().to_str().unwrap(),
        "cut",
        "--out",
        "cmp",
    ])
    .expect_code(0);
    let pages = [
        ("report", demo().join("report.html")),
        ("comparison", wd.join("cmp/comparison.html")),
    ];
    for (name, page) in pages {
        let html = std::fs::read_to_string(&page).unwrap();
        assert!(html.contains("</body>"));
        let probed = wd.join(&format!("{name}-probed.html"));
        std::fs::write(
            &probed,
            html.replace("</body>", &format!("{LAYOUT_PROBE}</body>")),
        )
        .unwrap();
        for width in [700, 718] {
            let out = std::process::Command::new(&browser)
                .args([
                    "--headless",
                    "--no-sandbox",
                    "--disable-gpu",
                    "--hide-scrollbars",
                    "--no-first-run",
                ])
                .arg(format!("--user-data-dir={}", wd.join("profile").display()))
                .arg(format!("--window-size={width},1400"))
                .arg("--dump-dom")
                .arg(format!("file://{}", probed.display()))
                .output()
                .expect("the browser runs");
            let doc = Html::parse_document(&String::from_utf8_lossy(&out.stdout));
            let body = doc.select(&sel("body")).next().unwrap();
            let found = body.value().attr("data-layout").unwrap_or_else(|| {
                panic!(
                    "{name} at {width} px: the probe did not run\n{}",
                    String::from_utf8_lossy(&out.stderr)
                )
            });
            let found: Vec<String> = serde_json::from_str(found).unwrap();
            assert!(
                found.is_empty(),
                "{name} at {width} px:\n  {}",
                found.join("\n  ")
            );
            // The probe measured the charts it should have.
            assert!(doc.select(&sel("svg.chart text")).count() > 20, "{name}");
        }
    }
}

/// A plan written without `--every-widening-year` lists only the picked widening years: its
/// report's charts shade no year as one no strategy widens in (the others are only not listed).
#[test]
fn a_report_of_picked_widening_years_claims_no_year_without_widening() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p"]).expect_code(0);
    wd.run(&["-q", "report", "--from", "p"]).expect_code(0);
    let html = wd.read("p/report.html");
    let doc = Html::parse_document(&html);
    assert!(doc
        .select(&sel(r#"svg.chart[data-chart^="widening-"]"#))
        .next()
        .is_some());
    assert_eq!(doc.select(&sel("rect.none")).count(), 0);
    assert!(!html.contains("no strategy its templates allow widens in"));
    assert!(html.contains("the other years are not listed"));
}
