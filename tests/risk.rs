//! `pavestrat risk` and `pavestrat sensitivity` through the real executable: zero spreads give
//! back the deterministic NPVs exactly; the same seed gives the same files with one or two
//! threads and as one run or merged slices; bad `[[uncertain]]` entries and bad merges are
//! refused with their place; a discount-rate switching value holds when `appraise` is run at it;
//! the report draws the tornado and the risk histogram from the files.

use crate::util::{rows, Workdir};
use scraper::{Html, Selector};
use std::collections::HashMap;

/// The demo's `[[uncertain]]` block as shipped, and with every spread set to zero (each
/// distribution collapsed onto the scenario's own value).
fn zero_spread(scenario: &str) -> String {
    let a = scenario
        .find("[[uncertain]]")
        .expect("the demo declares uncertain inputs");
    let b = scenario[a..].find("# ------").map(|i| a + i).unwrap();
    let zero = r#"[[uncertain]]
input = "factor.capital_cost"
distribution = "pert"
min = 1.0
mode = 1.0
max = 1.0

[[uncertain]]
input = "unit_values.time.car"
distribution = "triangular"
min = 7.8
mode = 7.8
max = 7.8

[[uncertain]]
input = "unit_values.time.heavy_truck"
distribution = "triangular"
min = 16.2
mode = 16.2
max = 16.2

[[uncertain]]
input = "unit_values.crash"
distribution = "lognormal"
median = 96000
sigma = 0

[[uncertain]]
input = "shift.growth"
distribution = "normal"
mean = 0.0
sd = 0

[[uncertain]]
input = "condition.family.asphalt.ageing"
distribution = "uniform"
min = 0.023
max = 0.023

"#;
    format!("{}{zero}{}", &scenario[..a], &scenario[b..])
}

#[test]
fn zero_spreads_reproduce_the_deterministic_npv_exactly() {
    let wd = Workdir::new();
    wd.demo_files();
    let text = zero_spread(&wd.read("scenario.toml"));
    wd.write("scenario.toml", text);
    wd.run(&[
        "-q",
        "plan",
        "--scenario",
        "scenario.toml",
        "--out",
        "p",
        "--time-limit",
        "1",
    ])
    .expect_code(0);
    wd.run(&[
        "-q",
        "appraise",
        "--scenario",
        "scenario.toml",
        "--out",
        "a",
    ])
    .expect_code(0);
    wd.run(&[
        "-q",
        "risk",
        "--scenario",
        "scenario.toml",
        "--from",
        "p",
        "--draws",
        "7",
        "--out",
        "r",
    ])
    .expect_code(0);
    let risk = rows(&wd.read("r/risk.csv"));
    let appraisal: HashMap<(String, String), String> = rows(&wd.read("a/appraisal.csv"))
        .into_iter()
        .map(|r| {
            (
                (r["section_id"].clone(), r["strategy"].clone()),
                r["npv"].clone(),
            )
        })
        .collect();
    let mut n = 0;
    for r in risk.iter().filter(|r| r["kind"] == "strategy") {
        let want = &appraisal[&(r["section_id"].clone(), r["strategy"].clone())];
        for col in ["mean", "p10", "p50", "p90"] {
            assert_eq!(&r[col], want, "{} {} {col}", r["section_id"], r["strategy"]);
        }
        assert_eq!(r["sd"], "0.00");
        n += 1;
    }
    assert_eq!(n, appraisal.len(), "every strategy of every section");
    // The plan held fixed: its NPV and spending are the plan's own.
    let summary: serde_json::Value = serde_json::from_str(&wd.read("p/summary.json")).unwrap();
    let plan = risk.iter().find(|r| r["kind"] == "plan").unwrap();
    let npv: f64 = plan["mean"].parse().unwrap();
    assert!((npv - summary["npv"]["plan"].as_f64().unwrap()).abs() <= 0.005);
    let used: HashMap<String, f64> = rows(&wd.read("p/budget_use.csv"))
        .into_iter()
        .map(|r| (r["line"].clone(), r["used"].parse().unwrap()))
        .collect();
    for r in risk.iter().filter(|r| r["kind"] == "budget") {
        let p50: f64 = r["p50"].parse().unwrap();
        assert!((p50 - used[&r["line"]]).abs() <= 0.01, "{}", r["line"]);
        assert_eq!(r["prob_over"], "0.000000");
    }
}

#[test]
fn same_seed_same_files_with_any_threads_and_as_merged_slices() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--time-limit", "1"])
        .expect_code(0);
    let risk = |dir: &str, extra: &[&str], threads: &str| {
        let mut args = vec!["-q", "risk", "--from", "p", "--out", dir];
        args.extend_from_slice(extra);
        if !extra.contains(&"--seed") {
            args.extend(["--seed", "99"]);
        }
        wd.run_env(&args, &[("RAYON_NUM_THREADS", threads)])
            .expect_code(0);
    };
    risk("one", &["--draws", "24", "--keep-raw"], "1");
    risk("two", &["--draws", "24", "--keep-raw"], "2");
    for f in ["risk.csv", "risk_draws.csv", "risk_slice.bin"] {
        assert_eq!(
            std::fs::read(wd.join(&format!("one/{f}"))).unwrap(),
            std::fs::read(wd.join(&format!("two/{f}"))).unwrap(),
            "{f} differs between 1 and 2 threads"
        );
    }
    risk("s1", &["--first-draw", "0", "--draws", "10"], "2");
    risk("s2", &["--first-draw", "10", "--draws", "5"], "1");
    risk("s3", &["--first-draw", "15", "--draws", "9"], "2");
    wd.run(&[
        "-q",
        "risk",
        "--merge",
        "s3",
        "s1",
        "s2",
        "--out",
        "merged",
        "--keep-raw",
    ])
    .expect_code(0);
    for f in ["risk.csv", "risk_draws.csv", "risk_slice.bin"] {
        assert_eq!(
            std::fs::read(wd.join(&format!("one/{f}"))).unwrap(),
            std::fs::read(wd.join(&format!("merged/{f}"))).unwrap(),
            "{f} differs between one run and three merged slices"
        );
    }
    // Another seed gives other draws.
    risk(
        "other",
        &["--draws", "24", "--seed", "100", "--keep-raw"],
        "2",
    );
    // A whole run keeps no raw results unless asked (they are 8 bytes × strategies × draws),
    // and a directory without them cannot be merged.
    risk("plain", &["--draws", "24"], "2");
    assert!(!wd.join("plain/risk_slice.bin").exists());
    assert_eq!(wd.read("plain/risk.csv"), wd.read("one/risk.csv"));
    wd.run(&["risk", "--merge", "s1", "plain"])
        .expect_code(2)
        .stderr_has("--merge plain: the directory has no raw results (risk_slice.bin)");
    // Run again without --keep-raw into a directory that had them: the old ones are taken away.
    risk("one", &["--draws", "24"], "2");
    assert!(!wd.join("one/risk_slice.bin").exists());
    assert_ne!(
        wd.read("one/risk_draws.csv"),
        wd.read("other/risk_draws.csv")
    );
    // Merging refuses gaps, overlaps and mixed seeds, naming the slice.
    wd.run(&["risk", "--merge", "s1", "s3", "--out", "bad"])
        .expect_code(2)
        .stderr_has("starts at draw 15 where draw 10 was expected");
    wd.run(&["risk", "--merge", "s1", "s1"])
        .expect_code(2)
        .stderr_has("where draw 10 was expected");
    wd.run(&["risk", "--merge", "s1", "other"])
        .expect_code(2)
        .stderr_has("seed");
    wd.write("junk/risk_slice.bin", "not a slice");
    wd.run(&["risk", "--merge", "junk"])
        .expect_code(2)
        .stderr_has("junk/risk_slice.bin")
        .stderr_has("not a risk slice");
    assert!(!wd.join("bad").exists(), "nothing written on error");
}

#[test]
fn sobol_draws_merge_exactly_and_measure_their_precision() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--time-limit", "1"])
        .expect_code(0);
    let risk = |dir: &str, extra: &[&str], threads: &str| {
        let mut args = vec!["-q", "risk", "--from", "p", "--out", dir, "--seed", "7"];
        args.extend_from_slice(extra);
        wd.run_env(&args, &[("RAYON_NUM_THREADS", threads)])
            .expect_code(0);
    };
    let sobol = ["--sampling", "sobol"];
    risk(
        "whole",
        &[&sobol[..], &["--draws", "24", "--keep-raw"]].concat(),
        "2",
    );
    risk(
        "a",
        &[&sobol[..], &["--first-draw", "0", "--draws", "10"]].concat(),
        "1",
    );
    risk(
        "b",
        &[&sobol[..], &["--first-draw", "10", "--draws", "14"]].concat(),
        "2",
    );
    wd.run(&[
        "-q",
        "risk",
        "--merge",
        "b",
        "a",
        "--out",
        "merged",
        "--keep-raw",
    ])
    .expect_code(0);
    for f in ["risk.csv", "risk_draws.csv", "risk_slice.bin"] {
        assert_eq!(
            std::fs::read(wd.join(&format!("whole/{f}"))).unwrap(),
            std::fs::read(wd.join(&format!("merged/{f}"))).unwrap(),
            "{f}: a whole Sobol' run and its merged slices differ"
        );
    }
    risk("r", &["--first-draw", "10", "--draws", "14"], "2");
    wd.run(&["risk", "--merge", "a", "r"])
        .expect_code(2)
        .stderr_has("--sampling");
    // 256 draws each way: the standard errors from the replicate groups. With independent
    // draws the mean's is close to the classical sd/√n; Sobol' points estimate the mean more
    // precisely on this smooth a quantity.
    let plan_row = |dir: &str| {
        rows(&wd.read(&format!("{dir}/risk.csv")))
            .into_iter()
            .find(|r| r["kind"] == "plan")
            .unwrap()
    };
    risk("r256", &["--draws", "256"], "2");
    risk("s256", &[&sobol[..], &["--draws", "256"]].concat(), "2");
    let num =
        |r: &std::collections::HashMap<String, String>, k: &str| -> f64 { r[k].parse().unwrap() };
    let (r, q) = (plan_row("r256"), plan_row("s256"));
    let classical = num(&r, "sd") / 16.0;
    let batch = num(&r, "se_mean");
    assert!(
        batch > 0.4 * classical && batch < 2.0 * classical,
        "random draws: batch SE {batch} against sd/√n {classical}"
    );
    assert!(
        num(&q, "se_mean") < batch,
        "Sobol' SE {} not below the random draws' {batch}",
        num(&q, "se_mean")
    );
    for k in ["se_p10", "se_p50", "se_p90"] {
        assert!(num(&q, k) > 0.0 && num(&r, k) > 0.0, "{k}");
    }
    // Below 16 draws there is no precision to report: the columns are empty.
    assert_eq!(plan_row("a")["se_p50"], "");
}

#[test]
fn risk_summaries_are_consistent_with_the_draws() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--time-limit", "1"])
        .expect_code(0);
    wd.run(&["-q", "risk", "--from", "p", "--draws", "60", "--out", "p"])
        .expect_code(0);
    let risk = rows(&wd.read("p/risk.csv"));
    let draws = rows(&wd.read("p/risk_draws.csv"));
    assert_eq!(draws.len(), 60);
    let mut npv: Vec<f64> = draws
        .iter()
        .map(|r| r["plan_npv"].parse().unwrap())
        .collect();
    let plan = risk.iter().find(|r| r["kind"] == "plan").unwrap();
    let mean = npv.iter().sum::<f64>() / 60.0;
    assert!((plan["mean"].parse::<f64>().unwrap() - mean).abs() < 0.01 * 60.0);
    npv.sort_by(f64::total_cmp);
    // P50 of 60 values: halfway between the 30th and 31st (numpy's linear rule).
    let p50 = 0.5 * (npv[29] + npv[30]);
    assert!((plan["p50"].parse::<f64>().unwrap() - p50).abs() < 0.02);
    // Each section's chances of being best add up to one.
    let mut best: HashMap<String, f64> = HashMap::new();
    for r in risk.iter().filter(|r| r["kind"] == "strategy") {
        *best.entry(r["section_id"].clone()).or_default() += r["prob_best"].parse::<f64>().unwrap();
        let (p10, p50, p90): (f64, f64, f64) = (
            r["p10"].parse().unwrap(),
            r["p50"].parse().unwrap(),
            r["p90"].parse().unwrap(),
        );
        assert!(p10 <= p50 && p50 <= p90);
    }
    assert_eq!(best.len(), 40);
    for (s, p) in best {
        assert!((p - 1.0).abs() < 1e-5, "{s}: {p}");
    }
}

#[test]
fn bad_uncertain_entries_are_located() {
    let wd = Workdir::new();
    wd.demo_files();
    let good = wd.read("scenario.toml");
    let cases: [(&str, &str, &str); 6] = [
        (
            "input = \"factor.capital_cost\"",
            "input = \"factor.capitl_cost\"",
            "did you mean `factor.capital_cost`",
        ),
        ("mode = 7.8", "mode = 9.9", "min ≤ mode ≤ max"),
        ("sd = 0.01", "sd = -1", "a standard deviation, 0 or more"),
        ("min = 0.015", "min = -0.5", "values the input accepts"),
        (
            "distribution = \"lognormal\"",
            "distribution = \"lognormall\"",
            "did you mean `lognormal`",
        ),
        ("median = 96000", "median = 96000\nmode = 3", "unknown key"),
    ];
    for (from, to, says) in cases {
        assert!(good.contains(from), "{from}");
        wd.write("bad.toml", good.replacen(from, to, 1));
        wd.run(&["check", "--scenario", "bad.toml"])
            .expect_code(2)
            .stderr_has("bad.toml:")
            .stderr_has(says);
    }
    // Declared twice.
    let a = good.find("[[uncertain]]").unwrap();
    let b = good[a + 5..].find("[[uncertain]]").unwrap() + a + 5;
    wd.write(
        "twice.toml",
        format!("{}{}{}", &good[..b], &good[a..b], &good[b..]),
    );
    wd.run(&["check", "--scenario", "twice.toml"])
        .expect_code(2)
        .stderr_has("declared uncertain twice");
    // A scenario with nothing uncertain: risk says what is missing.
    let c = good.find("# ------").unwrap();
    wd.write("none.toml", format!("{}{}", &good[..a], &good[c..]));
    wd.run(&["risk", "--scenario", "none.toml", "--draws", "2"])
        .expect_code(2)
        .stderr_has("declares no uncertain inputs");
}

#[test]
fn a_plan_from_elsewhere_is_refused_with_its_place() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--time-limit", "0.5"])
        .expect_code(0);
    let plan = wd.read("p/section_plan.csv");
    let second = plan.lines().nth(2).unwrap().to_owned();
    let strategy = second.split(',').nth(2).unwrap();
    let edited = plan.replacen(&second, &second.replacen(strategy, "resurface@2099", 1), 1);
    // Edited inside the plan's directory, the file no longer matches its manifest.
    wd.write("p/section_plan.csv", &edited);
    wd.run(&["sensitivity", "--from", "p", "--out", "s"])
        .expect_code(2)
        .stderr_has("section_plan.csv")
        .stderr_has("differ from what the `plan` run");
    // A plan put together by hand (no manifest) is read, and its bad line named.
    wd.write("q/section_plan.csv", &edited);
    wd.run(&["sensitivity", "--from", "q", "--out", "s"])
        .expect_code(2)
        .stderr_has("section_plan.csv:3")
        .stderr_has("strategy")
        .stderr_has("resurface@2099");
    assert!(!wd.join("s").exists(), "nothing written on error");
    wd.run(&["risk", "--from", "nowhere", "--draws", "2"])
        .expect_code(2)
        .stderr_has("nowhere/section_plan.csv");
}

#[test]
fn a_rate_switching_value_holds_when_appraised_at_it() {
    let wd = Workdir::new();
    wd.demo_files();
    wd.run(&[
        "-q",
        "plan",
        "--scenario",
        "scenario.toml",
        "--out",
        "p",
        "--time-limit",
        "1",
    ])
    .expect_code(0);
    wd.run(&[
        "-q",
        "sensitivity",
        "--scenario",
        "scenario.toml",
        "--from",
        "p",
        "--out",
        "p",
    ])
    .expect_code(0);
    let sens = rows(&wd.read("p/sensitivity.csv"));
    let row = sens
        .iter()
        .find(|r| {
            r["scope"] == "section"
                && r["input"] == "discount_rate"
                && r["test"] == "npv-zero"
                && !r["value"].is_empty()
        })
        .expect("a section whose NPV reaches zero at some rate");
    let (id, strategy) = (row["section_id"].clone(), row["strategy"].clone());
    let rate: f64 = row["value"].parse().unwrap();
    let scenario = wd.read("scenario.toml");
    let npv_at = |r: f64| -> f64 {
        let text = scenario.replacen("discount_rate = 0.06", &format!("discount_rate = {r}"), 1);
        wd.write("at.toml", text);
        wd.run(&[
            "-q",
            "appraise",
            "--scenario",
            "at.toml",
            "--section",
            &id,
            "--out",
            "at",
        ])
        .expect_code(0);
        let a = rows(&wd.read("at/appraisal.csv"));
        a.iter()
            .find(|x| x["strategy"] == strategy)
            .map(|x| x["npv"].parse().unwrap())
            .unwrap()
    };
    let scenario_npv = npv_at(0.06);
    assert!(scenario_npv > 0.0);
    assert!(
        npv_at(rate).abs() <= 1.0,
        "NPV at the switching rate {rate}"
    );
    let dir = if row["direction"] == "up" { 1.0 } else { -1.0 };
    assert!(
        npv_at(rate + dir * 1e-4) < 0.0,
        "NPV just past the switching rate"
    );
}

#[test]
fn report_draws_tornado_and_risk_histogram_from_the_files() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--time-limit", "1"])
        .expect_code(0);
    wd.run(&["-q", "sensitivity", "--from", "p", "--out", "p"])
        .expect_code(0);
    wd.run(&["-q", "risk", "--from", "p", "--draws", "50", "--out", "p"])
        .expect_code(0);
    wd.run(&["-q", "report", "--from", "p"]).expect_code(0);
    let doc = Html::parse_document(&wd.read("p/report.html"));
    let sel = |s: &str| Selector::parse(s).unwrap();
    let sens = rows(&wd.read("p/sensitivity.csv"));
    let tornado = doc
        .select(&sel(r#"svg[data-chart="tornado"]"#))
        .next()
        .expect("tornado");
    let bars: Vec<_> = tornado.select(&sel(".mark")).collect();
    assert_eq!(bars.len(), 8, "low and high for four inputs");
    for b in &bars {
        let input = b.value().attr("data-input").unwrap();
        let test = b.value().attr("data-series").unwrap();
        let want = sens
            .iter()
            .find(|r| r["scope"] == "network" && r["input"] == input && r["test"] == test)
            .unwrap();
        let x: f64 = b.value().attr("data-x").unwrap().parse().unwrap();
        assert!(
            (x - want["npv"].parse::<f64>().unwrap()).abs() < 1e-6,
            "{input} {test}"
        );
    }
    for axis in ["x", "y"] {
        assert_eq!(
            tornado
                .select(&sel(&format!(r#".axis-title[data-axis="{axis}"]"#)))
                .count(),
            1
        );
    }
    // The ten planned strategies least often best, with risk.csv's chances.
    let risk = rows(&wd.read("p/risk.csv"));
    let planned: Vec<_> = risk
        .iter()
        .filter(|r| r["kind"] == "strategy" && r["in_plan"] == "true")
        .collect();
    assert_eq!(planned.len(), 40, "one planned strategy per section");
    let table: Vec<Vec<String>> = doc
        .select(&sel("table.robustness tbody tr"))
        .map(|tr| {
            tr.select(&sel("td"))
                .map(|td| td.text().collect())
                .collect()
        })
        .collect();
    assert_eq!(table.len(), 10);
    let mut last = 0.0;
    for row in &table {
        let r = planned.iter().find(|r| r["section_id"] == row[0]).unwrap();
        assert_eq!(r["strategy"], row[1]);
        let best: f64 = r["prob_best"].parse().unwrap();
        assert_eq!(row[4], format!("{:.1} %", best * 100.0));
        assert!(best >= last, "least often best first");
        last = best;
    }
    // Choices that change within the tested ranges are switching values of sensitivity.csv.
    let fragile: Vec<Vec<String>> = doc
        .select(&sel("table.fragile tbody tr"))
        .map(|tr| {
            tr.select(&sel("td"))
                .map(|td| td.text().collect())
                .collect()
        })
        .collect();
    assert!(
        !fragile.is_empty(),
        "the demo has choices that change within ±20 %"
    );
    for td in &fragile {
        let input = td[1].replace(' ', "_");
        assert!(
            sens.iter().any(|r| r["scope"] == "section"
                && r["section_id"] == td[0]
                && r["input"] == input
                && r["test"] == "best-changes"
                && r["strategy"] == td[3]
                && r["other_strategy"] == td[4]),
            "{td:?} is a switching value of sensitivity.csv"
        );
    }
    // Spending over the draws against each line: median bars, P10–P90 whiskers, limits.
    let mut lines = 0;
    for r in risk.iter().filter(|r| r["kind"] == "budget") {
        let (group, year) = r["line"].rsplit_once('-').unwrap();
        let svg = doc
            .select(&sel(&format!(r#"svg[data-chart="risk-spending-{group}"]"#)))
            .next()
            .unwrap_or_else(|| panic!("a spending chart for {group}"));
        let at = |series: &str| {
            svg.select(&sel(&format!(
                r#".mark[data-series="{series}"][data-x="{year}"]"#
            )))
            .next()
            .unwrap_or_else(|| panic!("{series} of {}", r["line"]))
        };
        let val = |e: scraper::ElementRef<'_>, a: &str| -> f64 {
            e.value().attr(a).unwrap().parse().unwrap()
        };
        let close = |x: f64, col: &str| (x - r[col].parse::<f64>().unwrap()).abs() <= 0.005;
        assert!(close(val(at("p50"), "data-y"), "p50"), "{}", r["line"]);
        assert!(close(val(at("p10-p90"), "data-from"), "p10"));
        assert!(close(val(at("p10-p90"), "data-y"), "p90"));
        assert!(close(val(at("limit"), "data-y"), "limit"));
        lines += 1;
    }
    assert_eq!(lines, 30);
    let hist = doc
        .select(&sel(r#"svg[data-chart="risk-npv"]"#))
        .next()
        .expect("histogram");
    let draws: Vec<f64> = rows(&wd.read("p/risk_draws.csv"))
        .iter()
        .map(|r| r["plan_npv"].parse().unwrap())
        .collect();
    let mut total = 0usize;
    for bin in hist.select(&sel(".mark")) {
        let from: f64 = bin.value().attr("data-x").unwrap().parse().unwrap();
        let width: f64 = bin.value().attr("data-width").unwrap().parse().unwrap();
        let n: usize = bin.value().attr("data-y").unwrap().parse().unwrap();
        let last =
            (from + width - draws.iter().copied().fold(f64::MIN, f64::max)).abs() < 1e-6 * width;
        let inside = draws
            .iter()
            .filter(|x| **x >= from && (**x < from + width || last))
            .count();
        assert_eq!(n, inside, "bin from {from}");
        total += n;
    }
    assert_eq!(total, draws.len());
}

#[test]
fn a_run_too_large_to_hold_is_refused_before_it_starts() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--time-limit", "0.5"])
        .expect_code(0);
    wd.run(&["risk", "--from", "p", "--draws", "100000000", "--out", "r"])
        .expect_code(2)
        .stderr_has("GiB of raw results")
        .stderr_has("use fewer draws");
    assert!(!wd.join("r").exists());
}

/// `--rates R1,R2` as the README writes it: two rates in one argument, fractions or
/// percentages; a single rate is refused with the form expected.
#[test]
fn sensitivity_takes_two_rates_in_one_argument() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p"]).expect_code(0);
    wd.run(&[
        "sensitivity",
        "--from",
        "p",
        "--rates",
        "3%,10%",
        "--out",
        "s",
    ])
    .expect_code(0);
    let rows = rows(&wd.read("s/sensitivity.csv"));
    let mut rates: Vec<&str> = rows
        .iter()
        .filter(|r| {
            r["scope"] == "network" && r["input"] == "discount_rate" && !r["value"].is_empty()
        })
        .map(|r| r["value"].as_str())
        .collect();
    rates.sort_unstable();
    rates.dedup();
    assert!(
        rates.contains(&"0.030000") && rates.contains(&"0.100000"),
        "{rates:?}"
    );
    wd.run(&[
        "sensitivity",
        "--from",
        "p",
        "--rates",
        "0.1,0.03",
        "--out",
        "t",
    ])
    .expect_code(0);
    assert_eq!(wd.read("s/sensitivity.csv"), wd.read("t/sensitivity.csv"));
    wd.run(&["sensitivity", "--from", "p", "--rates", "3%"])
        .expect_code(2)
        .stderr_has("expected two rates separated by a comma");
}
