//! `pavestrat plan` and `pavestrat explain`: the network selection on the demo and on synthetic
//! networks, its files, its promises (no line exceeded, exact and decomposed paths agreeing within
//! their reported gaps, unlimited budgets giving every section its best) and bad input.

use crate::util::{rows, Workdir};
use std::collections::HashMap;

/// An amount written to the cent, as whole cents.
fn cents(s: &str) -> i64 {
    let x: f64 = s.parse().unwrap_or_else(|_| panic!("not an amount: {s:?}"));
    (x * 100.0).round() as i64
}

fn summary(wd: &Workdir, dir: &str) -> serde_json::Value {
    serde_json::from_str(&wd.read(&format!("{dir}/summary.json"))).unwrap()
}

#[test]
fn plans_the_built_in_demo_within_every_line() {
    let wd = Workdir::new();
    wd.run(&["plan", "--out", "res", "--time-limit", "3"])
        .expect_code(0)
        .stdout_has("Certificate: plan")
        .stdout_has("licensed engineer");
    let mut names = std::fs::read_dir(wd.join("res"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| !n.starts_with('.'))
        .collect::<Vec<_>>();
    names.sort();
    assert_eq!(
        names,
        [
            "budget_use.csv",
            "condition.csv",
            "limits.csv",
            "manifest.json",
            "programme.csv",
            "section_plan.csv",
            "section_plan.geojson",
            "summary.json",
            "target_use.csv",
            "widening_plan.csv",
            "work_programme.csv",
            "work_programme.geojson"
        ]
    );
    let budget = rows(&wd.read("res/budget_use.csv"));
    assert_eq!(budget.len(), 30, "the demo has 30 budget lines");
    for b in &budget {
        assert!(
            cents(&b["used"]) <= cents(&b["limit"]),
            "{} uses {} of {}",
            b["line"],
            b["used"],
            b["limit"]
        );
        let price: f64 = b["price"].parse().unwrap();
        assert!(price >= 0.0);
    }
    // Every treatment of the work programme, summed by year, is what the capital lines without a
    // region count (the capital treatments; routine ones go to the upkeep lines).
    let works = rows(&wd.read("res/work_programme.csv"));
    let mut by_year: HashMap<String, i64> = HashMap::new();
    for w in &works {
        if w["category"] == "capital" {
            *by_year.entry(w["year"].clone()).or_default() += cents(&w["cost"]);
        }
    }
    for b in budget
        .iter()
        .filter(|b| b["region"].is_empty() && b["category"] == "capital")
    {
        let sum = by_year.get(&b["year"]).copied().unwrap_or(0);
        assert!(
            (sum - cents(&b["used"])).abs() <= 5,
            "{}: work programme {sum} vs used {}",
            b["line"],
            b["used"]
        );
    }
    // The commitment is kept: HER-02 gets an overlay in 2028.
    assert!(works.iter().any(|w| w["section_id"] == "HER-02"
        && w["year"] == "2028"
        && w["treatment"] == "overlay"));
    let plan = rows(&wd.read("res/section_plan.csv"));
    assert_eq!(plan.len(), 40);
    let targets = rows(&wd.read("res/target_use.csv"));
    assert_eq!(targets.len(), 6);
    for t in &targets {
        let a: f64 = t["achieved"].parse().unwrap();
        assert!(a <= 0.10 + 1e-9, "{}: {a}", t["line"]);
    }
    let s = summary(&wd, "res");
    for key in [
        "objective",
        "bound",
        "gap",
        "status",
        "method",
        "sections",
        "candidates",
        "seconds",
    ] {
        assert!(!s[key].is_null(), "summary.json lacks {key}");
    }
    let (v, bound, gap) = (
        s["objective"].as_f64().unwrap(),
        s["bound"].as_f64().unwrap(),
        s["gap"].as_f64().unwrap(),
    );
    assert!(v <= bound + 1e-6 * bound.abs());
    assert!((bound - v) / bound.abs() <= gap + 1e-12);
    // The plan's NPV is the sum of the sections' NPVs.
    let total: f64 = plan.iter().map(|r| r["npv"].parse::<f64>().unwrap()).sum();
    assert!(
        (total - v).abs() < 0.01 * plan.len() as f64,
        "{total} vs {v}"
    );

    // explain values every candidate: without candidates.csv it says how to get it.
    wd.run(&["explain", "OR-01", "--from", "res"])
        .expect_code(2)
        .stderr_has("--candidates");
    // --candidates adds that one file and changes no other.
    wd.run(&[
        "plan",
        "--out",
        "res2",
        "--time-limit",
        "3",
        "--candidates",
        "-q",
    ])
    .expect_code(0);
    assert!(!wd.join("res/candidates.csv").exists());
    for name in [
        "budget_use.csv",
        "condition.csv",
        "limits.csv",
        "section_plan.csv",
        "target_use.csv",
        "widening_plan.csv",
        "work_programme.csv",
    ] {
        assert_eq!(
            wd.read(&format!("res/{name}")),
            wd.read(&format!("res2/{name}")),
            "{name}"
        );
    }
    let plan_again = rows(&wd.read("res2/section_plan.csv"));
    assert_eq!(plan_again.len(), plan.len());
    let cands = rows(&wd.read("res2/candidates.csv"));
    assert!(plan
        .iter()
        .all(|p| cands.iter().any(|c| c["section_id"] == p["section_id"]
            && c["strategy"] == p["strategy"]
            && c["npv"] == p["npv"])));

    // explain: the chosen strategy is marked, with the margin or the reason.
    let out = wd.run(&["explain", "OR-01", "--from", "res2"]);
    out.expect_code(0)
        .stdout_has("Section OR-01: the plan gives it");
    let chosen = &plan.iter().find(|r| r["section_id"] == "OR-01").unwrap()["strategy"];
    assert!(
        out.stdout.contains(&format!("* {chosen}")),
        "{}",
        out.stdout
    );
    wd.run(&["explain", "OR-1", "--from", "res2"])
        .expect_code(2)
        .stderr_has("did you mean `OR-01`?");
    wd.run(&["explain", "OR-01", "--from", "nowhere"])
        .expect_code(2)
        .stderr_has("summary.json");
}

/// `programme.csv` holds the work programme's money exactly: each section's cell of a year is
/// the sum of its works that year in `work_programme.csv`, with their treatments; the `all`
/// row is the column sums of the sections' rows; the treatment, category and region totals
/// partition it, to the cent and the metre.
#[test]
fn the_programme_sums_the_work_programme_to_the_cent() {
    let wd = Workdir::new();
    wd.run(&["plan", "--out", "res", "-q"]).expect_code(0);
    let works = rows(&wd.read("res/work_programme.csv"));
    let prog = rows(&wd.read("res/programme.csv"));
    let mut by_cell: HashMap<(String, String), (i64, Vec<String>)> = HashMap::new();
    for w in &works {
        let e = by_cell
            .entry((w["section_id"].clone(), w["year"].clone()))
            .or_default();
        e.0 += cents(&w["cost"]);
        e.1.push(w["treatment"].clone());
    }
    let years: Vec<String> = (2027..2057).map(|y| y.to_string()).collect();
    let sections: Vec<&HashMap<String, String>> =
        prog.iter().filter(|r| r["kind"] == "section").collect();
    let mut cells = 0;
    for r in &sections {
        for y in &years {
            let got = cents(&r[&format!("cost_{y}")]);
            match by_cell.get(&(r["section_id"].clone(), y.clone())) {
                Some((c, names)) => {
                    cells += 1;
                    assert_eq!(got, *c, "{} {y}", r["section_id"]);
                    let mut written: Vec<&str> = r[&format!("treatment_{y}")].split('+').collect();
                    let mut want: Vec<&str> = names.iter().map(String::as_str).collect();
                    written.sort_unstable();
                    want.sort_unstable();
                    assert_eq!(written, want, "{} {y}", r["section_id"]);
                }
                None => assert_eq!(got, 0, "{} {y}", r["section_id"]),
            }
        }
    }
    assert_eq!(
        cells,
        by_cell.len(),
        "every works' cell has its section's row"
    );
    // Exact totals: money in cents, quantities in metres (square metres for the area).
    let units = |s: &str| -> i64 {
        let (int, frac) = s.split_once('.').unwrap_or((s, ""));
        format!("{int}{frac}").parse().unwrap()
    };
    let cols: Vec<String> = ["works", "km", "lane_km", "area_m2", "cost"]
        .iter()
        .map(|c| c.to_string())
        .chain(years.iter().map(|y| format!("cost_{y}")))
        .collect();
    let sum = |rows: &[&HashMap<String, String>], c: &str| -> i64 {
        rows.iter().map(|r| units(&r[c])).sum()
    };
    let all: Vec<&HashMap<String, String>> = prog.iter().filter(|r| r["kind"] == "total").collect();
    assert_eq!(all.len(), 1);
    assert_eq!(units(&all[0]["works"]), works.len() as i64);
    for kind in ["section", "treatment", "category", "region"] {
        let part: Vec<&HashMap<String, String>> =
            prog.iter().filter(|r| r["kind"] == kind).collect();
        assert!(!part.is_empty(), "{kind}");
        for c in &cols {
            assert_eq!(sum(&part, c), units(&all[0][c]), "{kind} rows' {c}");
        }
    }
    // A rate is its row's cost over its quantity, to the cent.
    for r in &prog {
        let rate = cents(&r["cost_per_lane_km"]) as f64 / 100.0;
        let want = cents(&r["cost"]) as f64 / 100.0 / (units(&r["lane_km"]) as f64 / 1000.0);
        assert!((rate - want).abs() <= 0.005 + 1e-9, "{r:?}");
    }
}

#[test]
fn with_unlimited_budgets_every_section_gets_its_best() {
    let wd = Workdir::new();
    wd.run(&["plan", "--out", "res", "--budget-scale", "1000", "--quiet"])
        .expect_code(0);
    for r in rows(&wd.read("res/section_plan.csv")) {
        assert_eq!(
            r["same"], "true",
            "{}: {} vs {}",
            r["section_id"], r["strategy"], r["unconstrained_strategy"]
        );
    }
    for b in rows(&wd.read("res/budget_use.csv")) {
        assert_eq!(b["price"], "0", "{} is slack", b["line"]);
    }
    assert_eq!(summary(&wd, "res")["status"], "optimal");
}

#[test]
fn exact_and_decomposed_agree_within_their_gaps() {
    let wd = Workdir::new();
    wd.run(&["init", "net", "--sections", "60", "--seed", "5", "--quiet"])
        .expect_code(0);
    let mut got = Vec::new();
    for m in ["exact", "decomposed"] {
        let dir = format!("res-{m}");
        wd.run(&[
            "plan",
            "--scenario",
            "net/scenario.toml",
            "--method",
            m,
            "--time-limit",
            "4",
            "--out",
            &dir,
            "--quiet",
        ])
        .expect_code(0);
        let s = summary(&wd, &dir);
        assert_eq!(s["method"], m);
        got.push((
            s["objective"].as_f64().unwrap(),
            s["bound"].as_f64().unwrap(),
        ));
    }
    // Each plan is worth no more than either bound.
    for (v, _) in &got {
        for (_, b) in &got {
            assert!(*v <= b + 1e-6 * b.abs(), "{v} above bound {b}");
        }
    }
}

#[test]
fn raising_the_budget_never_lowers_the_plan_value_much() {
    // The optimum cannot fall when money is added. Plans are proven only within their gap, so
    // the comparison allows the two gaps.
    let wd = Workdir::new();
    let mut last: Option<(f64, f64)> = None;
    for scale in ["0.9", "1", "1.5"] {
        let dir = format!("res-{scale}");
        wd.run(&[
            "plan",
            "--budget-scale",
            scale,
            "--time-limit",
            "2",
            "--out",
            &dir,
            "--quiet",
        ])
        .expect_code(0);
        let s = summary(&wd, &dir);
        let (v, b) = (
            s["objective"].as_f64().unwrap(),
            s["bound"].as_f64().unwrap(),
        );
        if let Some((pv, pb)) = last {
            assert!(b >= pb - 1e-6 * pb.abs(), "bound fell from {pb} to {b}");
            assert!(
                v >= pv - (pb - pv) - 1e-6 * pv.abs(),
                "value fell from {pv} to {v}"
            );
        }
        last = Some((v, b));
    }
}

#[test]
fn lines_that_cannot_be_met_exit_3_and_are_named() {
    let wd = Workdir::new();
    wd.demo_files();
    let s = wd
        .read("scenario.toml")
        .replace("per_year = \"560000\"", "per_year = \"1000\"");
    wd.write("scenario.toml", s);
    wd.run(&["plan", "--scenario", "scenario.toml", "--out", "res"])
        .expect_code(3)
        .stderr_has("north-upkeep-2027: limit 1,000.00");
    assert!(!wd.join("res").exists(), "nothing is written");
}

#[test]
fn bad_commitments_are_located() {
    let wd = Workdir::new();
    wd.demo_files();
    let s = wd.read("scenario.toml");
    let bad = s.replace(
        "section = \"HER-02\"\ntreatment = \"overlay\"\nyear = 2028",
        "section = \"HER-02\"\nstrategy = \"overlay@never\"",
    );
    assert_ne!(bad, s);
    wd.write("scenario.toml", &bad);
    wd.run(&["plan", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("commit[1].strategy: the strategy `overlay@never`, which no strategy of section `HER-02` gives");
    let bad = s.replace("section = \"HER-02\"", "section = \"HER-99\"");
    wd.write("scenario.toml", &bad);
    wd.run(&["plan", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("commit[1].section: the section `HER-99`");
    let bad = s.replace(
        "treatment = \"overlay\"\nyear = 2028",
        "treatment = \"overlai\"\nyear = 2028",
    );
    wd.write("scenario.toml", &bad);
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("did you mean `overlay`?");
    let bad = s.replace("measure = \"poor-share\"", "measure = \"poorness\"");
    wd.write("scenario.toml", &bad);
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("target[1].measure");
    wd.run(&["plan", "--gap", "2"]).expect_code(2);
    wd.run(&["plan", "--time-limit", "0"]).expect_code(2);
    wd.run(&["plan", "--budget-scale", "-1"]).expect_code(2);
}

#[test]
fn least_cost_meets_the_targets() {
    let wd = Workdir::new();
    wd.run(&[
        "plan",
        "--objective",
        "least-cost",
        "--time-limit",
        "2",
        "--out",
        "res",
        "--quiet",
    ])
    .expect_code(0);
    let s = summary(&wd, "res");
    assert_eq!(s["objective_kind"], "least-cost");
    // The objective is the PV agency cost, no less than the bound (a lower bound on cost).
    let (v, b) = (
        s["objective"].as_f64().unwrap(),
        s["bound"].as_f64().unwrap(),
    );
    assert!(v >= b - 1e-6 * b.abs(), "{v} below its bound {b}");
    for t in rows(&wd.read("res/target_use.csv")) {
        let a: f64 = t["achieved"].parse().unwrap();
        assert!(a <= 0.10 + 1e-9, "{}: {a}", t["line"]);
    }
}

/// Run `plan` with a method into `out` (exit 0 expected): the plan's objective and bound.
fn planned(wd: &Workdir, scenario: &str, method: &str, out: &str) -> (f64, f64) {
    wd.run(&[
        "plan",
        "--scenario",
        scenario,
        "--method",
        method,
        "--out",
        out,
    ])
    .expect_code(0);
    let s = summary(wd, out);
    (
        s["objective"].as_f64().unwrap(),
        s["bound"].as_f64().unwrap(),
    )
}

/// A scenario with every `[[budget]]` and `[[target]]` entry replaced by `budget`.
fn with_budget(scenario: &str, budget: &str) -> String {
    let mut out = String::new();
    let mut skipping = false;
    for line in scenario.lines() {
        let t = line.trim_start();
        if t.starts_with("[[budget]]") || t.starts_with("[[target]]") {
            skipping = true;
            continue;
        }
        if skipping && (t.is_empty() || t.starts_with('[')) {
            skipping = false;
        }
        if !skipping {
            out.push_str(line);
            out.push('\n');
        }
    }
    out.push_str(budget);
    out
}

#[test]
fn a_line_limited_to_exactly_one_candidates_cost_is_met_with_it() {
    // Three sections and one capital line in 2027. With the limit set to exactly what the most
    // valuable 2027-spending candidate costs, that candidate (with every other section at its
    // base) fits, so the plan is worth at least its NPV, and the bound is at least that much.
    let wd = Workdir::new();
    wd.run(&["init", "--sections", "3", "--seed", "4", "net"])
        .expect_code(0);
    let line = |limit: &str| {
        format!(
            "\n[[budget]]\nname = \"works\"\ncategory = \"capital\"\nfirst_year = 2027\nlast_year = 2027\nper_year = \"{limit}\"\n"
        )
    };
    let original = wd.read("net/scenario.toml");
    wd.write(
        "net/scenario.toml",
        with_budget(&original, &line("1000000000")),
    );
    wd.run(&[
        "plan",
        "--scenario",
        "net/scenario.toml",
        "--out",
        "wide",
        "--candidates",
    ])
    .expect_code(0);
    let cands = rows(&wd.read("wide/candidates.csv"));
    let best = cands
        .iter()
        .filter(|c| cents(&c["cost:works-2027"]) > 0)
        .max_by(|a, b| {
            let (x, y): (f64, f64) = (a["npv"].parse().unwrap(), b["npv"].parse().unwrap());
            x.total_cmp(&y)
        })
        .expect("some candidate spends in 2027")
        .clone();
    let npv: f64 = best["npv"].parse().unwrap();
    let limit = &best["cost:works-2027"];
    for (name, text) in [
        ("exact", limit.clone()),
        ("a cent more", {
            let c = cents(limit) + 1;
            format!("{}.{:02}", c / 100, c % 100)
        }),
    ] {
        wd.write("net/scenario.toml", with_budget(&original, &line(&text)));
        for method in ["auto", "exact", "decomposed"] {
            let out = format!("tight-{method}");
            let _ = std::fs::remove_dir_all(wd.join(&out));
            let (objective, bound) = planned(&wd, "net/scenario.toml", method, &out);
            assert!(
                objective >= npv - 0.01,
                "{name}, {method}: plan {objective} below the fitting candidate's {npv} ({} at {limit})",
                best["strategy"]
            );
            assert!(
                bound >= objective - 0.01,
                "{name}, {method}: bound {bound} < {objective}"
            );
            let used = rows(&wd.read(&format!("{out}/budget_use.csv")));
            assert!(cents(&used[0]["used"]) <= cents(&used[0]["limit"]));
            assert_eq!(cents(&used[0]["limit"]), cents(&text));
        }
    }
}

#[test]
fn a_zero_line_that_no_section_must_spend_on_is_feasible() {
    let wd = Workdir::new();
    wd.run(&["init", "--sections", "3", "--seed", "4", "net"])
        .expect_code(0);
    let original = wd.read("net/scenario.toml");
    let line = "\n[[budget]]\nname = \"works\"\ncategory = \"capital\"\nfirst_year = 2027\nlast_year = 2031\nper_year = \"900000\"\nyears = { 2030 = \"0\" }\n";
    wd.write("net/scenario.toml", with_budget(&original, line));
    wd.run(&["plan", "--scenario", "net/scenario.toml", "--out", "a"])
        .expect_code(0);
    let used = rows(&wd.read("a/budget_use.csv"));
    let zero = used.iter().find(|u| u["line"] == "works-2030").unwrap();
    assert_eq!(cents(&zero["used"]), 0);
    // The budget scale 0, which the help allows, makes every line zero: the base spends no
    // capital, so the plan is the base and it is feasible.
    wd.run(&[
        "plan",
        "--scenario",
        "net/scenario.toml",
        "--budget-scale",
        "0",
        "--out",
        "b",
    ])
    .expect_code(0);
}

#[test]
fn limits_equal_to_some_plans_spending_are_never_called_infeasible() {
    // Tiny networks whose every line's limit is exactly what one plan (a random pick of one
    // candidate per section) spends there: that plan fits, so every method must find a plan
    // worth at least as much, and never exit 3.
    let wd = Workdir::new();
    let mut state = 0x2545_f491_4f6c_dd1d_u64;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    for seed in ["4", "9"] {
        let net = format!("net{seed}");
        wd.run(&["init", "--sections", "3", "--seed", seed, &net])
            .expect_code(0);
        let original = wd.read(&format!("{net}/scenario.toml"));
        let mut lines = String::new();
        let line = |name: &str, category: &str, year: u32, limit: &str| {
            format!(
                "\n[[budget]]\nname = \"{name}\"\ncategory = \"{category}\"\nfirst_year = {year}\nlast_year = {year}\nper_year = \"{limit}\"\n"
            )
        };
        for year in 2027..=2030 {
            lines.push_str(&line(&format!("cap{year}"), "capital", year, "1000000000"));
            lines.push_str(&line(&format!("run{year}"), "routine", year, "1000000000"));
        }
        let path = format!("{net}/scenario.toml");
        wd.write(&path, with_budget(&original, &lines));
        wd.run(&[
            "plan",
            "--scenario",
            &path,
            "--out",
            &format!("{net}/wide"),
            "--candidates",
        ])
        .expect_code(0);
        let cands = rows(&wd.read(&format!("{net}/wide/candidates.csv")));
        let mut by_section: Vec<Vec<&HashMap<String, String>>> = Vec::new();
        for c in &cands {
            match by_section.last_mut() {
                Some(v) if v[0]["section_id"] == c["section_id"] => v.push(c),
                _ => by_section.push(vec![c]),
            }
        }
        for pick in 0..4 {
            let chosen: Vec<&HashMap<String, String>> = by_section
                .iter()
                .map(|v| v[(next() as usize) % v.len()])
                .collect();
            let npv: f64 = chosen
                .iter()
                .map(|c| c["npv"].parse::<f64>().unwrap())
                .sum();
            let mut exact = String::new();
            for year in 2027..=2030 {
                for (prefix, category) in [("cap", "capital"), ("run", "routine")] {
                    let name = format!("{prefix}{year}");
                    let col = format!("cost:{name}-{year}");
                    let spent: i64 = chosen.iter().map(|c| cents(&c[&col])).sum();
                    let text = format!("{}.{:02}", spent / 100, spent % 100);
                    exact.push_str(&line(&name, category, year, &text));
                }
            }
            wd.write(&path, with_budget(&original, &exact));
            for method in ["auto", "exact", "decomposed"] {
                let out = format!("{net}/tight-{pick}-{method}");
                let (objective, bound) = planned(&wd, &path, method, &out);
                assert!(
                    objective >= npv - 0.02,
                    "{net} pick {pick} {method}: {objective} below the fitting plan's {npv}"
                );
                assert!(bound >= objective - 0.01);
            }
        }
    }
}

#[test]
fn huge_amounts_are_located_input_errors_not_panics() {
    let wd = Workdir::new();
    wd.demo_files();
    let t = wd.read("treatments.toml");
    assert!(t.contains("cost = \"61000\""));
    // A treatment cost at the largest amount: the network's totals pass what a line can count.
    wd.write(
        "treatments.toml",
        t.replace("cost = \"61000\"", "cost = \"1e15\""),
    );
    for args in [
        vec!["check"],
        vec!["plan", "--time-limit", "1"],
        vec!["frontier", "--time-limit", "1"],
        vec!["sensitivity"],
        vec!["risk", "--draws", "2"],
    ] {
        let mut a = args.clone();
        a.extend(["--scenario", "scenario.toml"]);
        wd.run(&a)
            .expect_code(2)
            .stderr_has("scenario.toml:")
            .stderr_has("largest supported total");
    }
    // Beyond the largest amount: refused where it is written.
    wd.write(
        "treatments.toml",
        t.replace("cost = \"61000\"", "cost = \"1e16\""),
    );
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("treatments.toml:")
        .stderr_has("largest supported amount");
    wd.write("treatments.toml", &t);
    let s = wd.read("scenario.toml");
    wd.write(
        "scenario.toml",
        s.replace("per_year = \"560000\"", "per_year = \"1e15\""),
    );
    wd.run(&[
        "plan",
        "--scenario",
        "scenario.toml",
        "--budget-scale",
        "1000000",
    ])
    .expect_code(2)
    .stderr_has("budget scale 1000000");
}

#[test]
fn budget_prices_are_per_unit_of_money_and_bound_the_plan() {
    // Weak duality (common practice for Lagrangian prices): for prices λ ≥ 0 per unit of money,
    // Σ λ·limit + Σ over sections of max over candidates (NPV − Σ λ·cost) bounds every plan's
    // NPV. Computed from the written files, it must be no lower than the plan and, when the
    // prices are per unit of money as labelled, close to it: much closer than the NPV the network
    // would earn with no limits (prices mislabelled by a factor of 100 would give nearly that).
    let wd = Workdir::new();
    wd.run(&["plan", "-q", "--out", "res", "--candidates"])
        .expect_code(0);
    let s = summary(&wd, "res");
    let objective = s["objective"].as_f64().unwrap();
    let mut price: HashMap<String, f64> = HashMap::new();
    let mut dual = 0.0;
    for b in rows(&wd.read("res/budget_use.csv")) {
        let p: f64 = b["price"].parse().unwrap();
        dual += p * b["limit"].parse::<f64>().unwrap();
        price.insert(format!("cost:{}", b["line"]), p);
    }
    let mut best: HashMap<String, f64> = HashMap::new();
    let mut unlimited: HashMap<String, f64> = HashMap::new();
    for c in rows(&wd.read("res/candidates.csv")) {
        let npv: f64 = c["npv"].parse().unwrap();
        let priced: f64 = price
            .iter()
            .map(|(col, p)| p * c[col].parse::<f64>().unwrap())
            .sum();
        let e = best.entry(c["section_id"].clone()).or_insert(f64::MIN);
        *e = e.max(npv - priced);
        let u = unlimited.entry(c["section_id"].clone()).or_insert(f64::MIN);
        *u = u.max(npv);
    }
    let bound = dual + best.values().sum::<f64>();
    let free: f64 = unlimited.values().sum();
    // Candidates' NPVs are to the cent: allow half a cent per candidate section.
    assert!(
        bound >= objective - 0.005 * best.len() as f64,
        "{bound} < {objective}"
    );
    assert!(
        bound - objective < 0.25 * (free - objective),
        "the priced bound {bound} is not near the plan {objective} (no limits: {free})"
    );
}

/// The widening table of `plan` (from the candidates stage's NPVs) says what `appraise`'s
/// widening analysis says, row by row, on the demo and on a synthetic network.
#[test]
fn plan_widening_table_agrees_with_appraise() {
    let wd = Workdir::new();
    wd.run(&["-q", "init", "net", "--sections", "30", "--seed", "9"])
        .expect_code(0);
    for (scenario, tag) in [(None, "demo"), (Some("net/scenario.toml"), "net")] {
        let mut plan = vec!["-q", "plan", "--out"];
        let mut appraise = vec!["-q", "appraise", "--out"];
        let (p, a) = (format!("{tag}-plan"), format!("{tag}-appraise"));
        plan.push(&p);
        appraise.push(&a);
        if let Some(s) = scenario {
            plan.extend(["--scenario", s]);
            appraise.extend(["--scenario", s]);
        }
        // By default only the picked years are written: exactly the rows of the full table
        // that the plan or a timing rule picks, every section with one.
        wd.run(&plan).expect_code(0);
        let picked = rows(&wd.read(&format!("{p}/widening_plan.csv")));
        plan.push("--every-widening-year");
        wd.run(&plan).expect_code(0);
        wd.run(&appraise).expect_code(0);
        let from_plan = rows(&wd.read(&format!("{p}/widening_plan.csv")));
        let picks = |r: &HashMap<String, String>| {
            ["by_fyrr", "by_npv", "planned"]
                .iter()
                .any(|k| r[*k] == "true")
        };
        let expected: Vec<_> = from_plan.iter().filter(|r| picks(r)).cloned().collect();
        assert_eq!(picked, expected, "{tag}");
        assert!(picked.len() < from_plan.len(), "{tag}: nothing left out");
        let ids = |t: &[HashMap<String, String>]| {
            t.iter()
                .map(|r| r["section_id"].clone())
                .collect::<std::collections::BTreeSet<_>>()
        };
        assert_eq!(ids(&picked), ids(&from_plan), "{tag}");
        let summary = |dir: &str| -> serde_json::Value {
            serde_json::from_str(&wd.read(&format!("{dir}/summary.json"))).unwrap()
        };
        assert_eq!(summary(&p)["widening_years"], "every", "{tag}");
        let from_appraise = rows(&wd.read(&format!("{a}/widening.csv")));
        assert!(!from_plan.is_empty(), "{tag}: no widening rows");
        assert_eq!(from_plan.len(), from_appraise.len(), "{tag}");
        for (x, y) in from_plan.iter().zip(&from_appraise) {
            for (px, ax) in [
                ("section_id", "section_id"),
                ("year", "widen_year"),
                ("strategy", "strategy"),
                ("npv", "npv"),
                ("fyrr", "fyrr"),
                ("by_fyrr", "best_by_fyrr"),
                ("by_npv", "best_by_npv"),
            ] {
                assert_eq!(x[px], y[ax], "{tag}: {px} of {x:?} against {y:?}");
            }
        }
    }
}

/// With a `geometry` column (the demo's, in an invented projected grid), `plan` writes
/// `section_plan.geojson` and `work_programme.geojson`: a FeatureCollection (RFC 7946) with a
/// feature per row of the CSV of the same name, its properties the row's cells and its geometry
/// the section's centre line as the network gives it.
#[test]
fn geojson_files_hold_the_csv_rows_on_the_networks_lines() {
    let wd = Workdir::new();
    wd.run(&["plan", "--out", "res", "-q"]).expect_code(0);
    // The demo network's centre lines, by section.
    let net_bytes = pavestrat::demo::FILES[1].1;
    let mut r = csv::Reader::from_reader(net_bytes);
    let head = r.headers().unwrap().clone();
    let (id_col, geo_col) = (
        head.iter().position(|h| h == "section_id").unwrap(),
        head.iter().position(|h| h == "geometry").unwrap(),
    );
    let lines: HashMap<String, Vec<[f64; 2]>> = r
        .records()
        .map(|rec| {
            let rec = rec.unwrap();
            let wkt = &rec[geo_col];
            let body = wkt.trim_start_matches("LINESTRING (").trim_end_matches(')');
            let pts = body
                .split(", ")
                .map(|p| {
                    let mut xy = p.split(' ').map(|v| v.parse::<f64>().unwrap());
                    [xy.next().unwrap(), xy.next().unwrap()]
                })
                .collect();
            (rec[id_col].to_owned(), pts)
        })
        .collect();
    for (file, csv_name) in [
        ("section_plan.geojson", "section_plan.csv"),
        ("work_programme.geojson", "work_programme.csv"),
    ] {
        let v: serde_json::Value = serde_json::from_str(&wd.read(&format!("res/{file}"))).unwrap();
        assert_eq!(v["type"], "FeatureCollection", "{file}");
        let features = v["features"].as_array().unwrap();
        let rows = rows(&wd.read(&format!("res/{csv_name}")));
        assert_eq!(features.len(), rows.len(), "{file}");
        for (f, row) in features.iter().zip(&rows) {
            assert_eq!(f["type"], "Feature");
            let p = f["properties"].as_object().unwrap();
            for (k, cell) in row {
                let got = match &p[k] {
                    serde_json::Value::String(s) => s.clone(),
                    serde_json::Value::Bool(b) => b.to_string(),
                    serde_json::Value::Number(n) => {
                        // Numbers as the CSV writes them: money to the cent, km to the metre.
                        let x = n.as_f64().unwrap();
                        match cell.split_once('.') {
                            Some((_, d)) => format!("{x:.*}", d.len()),
                            None => format!("{x}"),
                        }
                    }
                    other => panic!("{file}: {k} is {other}"),
                };
                assert_eq!(&got, cell, "{file}: {k} of {}", row["section_id"]);
            }
            let g = &f["geometry"];
            assert_eq!(g["type"], "LineString");
            let pts: Vec<[f64; 2]> = g["coordinates"]
                .as_array()
                .unwrap()
                .iter()
                .map(|p| [p[0].as_f64().unwrap(), p[1].as_f64().unwrap()])
                .collect();
            assert_eq!(
                pts, lines[&row["section_id"]],
                "{file}: {}",
                row["section_id"]
            );
        }
    }
}

/// `[plan] binding_within` sets how close to its limit a line must be used to be binding: the
/// demo's works-2027, 95.7 % used, is binding at the default 5 % and slack at 2 % (its price
/// then in brackets); a share over a half is refused where it is written.
#[test]
fn binding_within_moves_a_line_between_binding_and_slack() {
    let wd = Workdir::new();
    wd.demo_files();
    let base = wd.read("scenario.toml");
    assert!(!base.contains("[plan]"));
    let with = |share: &str| {
        base.replacen(
            "[unit_values]",
            &format!("[plan]\nbinding_within = \"{share}\"\n\n[unit_values]"),
            1,
        )
    };
    let state = |dir: &str| {
        crate::util::rows(&wd.read(&format!("{dir}/budget_use.csv")))
            .into_iter()
            .find(|r| r["line"] == "works-2027")
            .map(|r| r["state"].clone())
            .unwrap()
    };
    wd.run(&["-q", "plan", "--scenario", "scenario.toml", "--out", "five"])
        .expect_code(0);
    assert_eq!(state("five"), "binding");
    wd.write("scenario.toml", with("2%"));
    let out = wd.run(&["plan", "--scenario", "scenario.toml", "--out", "two"]);
    out.expect_code(0)
        .stdout_has("binding = used to within 2 % of the limit");
    assert_eq!(state("two"), "slack");
    let line = out
        .stdout
        .lines()
        .find(|l| l.starts_with("works-2027 "))
        .unwrap();
    assert!(line.trim_end().ends_with(')'), "a bracketed price: {line}");
    wd.write("scenario.toml", with("70%"));
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("plan.binding_within: found \"70%\"");
}

/// The programme on screen: `plan` prints each year's works (their counts and costs add up to
/// work_programme.csv), marks the years no budget line limits, sums budget groups to
/// budget_use.csv, and with `--full` lists every works; `check` names the years with no line.
#[test]
fn plan_shows_the_programme_by_year_and_full_lists_every_works() {
    let wd = Workdir::new();
    let out = wd.run(&["plan", "--out", "p"]);
    out.expect_code(0)
        .stdout_has("Programme by year (--full lists every works):");
    let works = rows(&wd.read("p/work_programme.csv"));
    let cents = |x: &str| (x.replace(',', "").parse::<f64>().unwrap() * 100.0).round() as i64;
    // The table's rows: year (or range), works, km, cost, largest works.
    let table: Vec<Vec<&str>> = out
        .stdout
        .lines()
        .skip_while(|l| !l.starts_with("Programme by year"))
        .skip(2)
        .take_while(|l| l.starts_with("20"))
        .map(|l| l.split_whitespace().collect())
        .collect();
    assert!(table.len() >= 10, "{}", out.stdout);
    let n: usize = table.iter().map(|r| r[1].parse::<usize>().unwrap()).sum();
    assert_eq!(n, works.len(), "works counted once each");
    let cost: i64 = table.iter().map(|r| cents(r[3])).sum();
    let want: i64 = works.iter().map(|w| cents(&w["cost"])).sum();
    // The screen shows whole units: each row within half a unit.
    assert!(
        (cost - want).abs() <= 50 * table.len() as i64,
        "{cost} against {want}"
    );
    // The demo's lines end in 2036: later years are marked, earlier ones not.
    for r in &table {
        let first: i32 = r[0][..4].parse().unwrap();
        assert_eq!(r[0].ends_with('*'), first > 2036, "{}", r[0]);
    }
    out.stdout_has("* no budget line limits capital works in these years");
    // Spending by budget group: each group's use is budget_use.csv's sum.
    let budget = rows(&wd.read("p/budget_use.csv"));
    let group_line = out
        .stdout
        .lines()
        .find(|l| l.starts_with("works-later "))
        .unwrap()
        .to_owned();
    let used: i64 = budget
        .iter()
        .filter(|r| r["group"] == "works-later")
        .map(|r| cents(&r["used"]))
        .sum();
    let shown = cents(group_line.split_whitespace().nth(3).unwrap());
    assert!(
        (shown - used).abs() <= 50,
        "{group_line} against {used} cents"
    );
    // --full: every works, one line each.
    let full = wd.run(&["plan", "--full"]);
    full.expect_code(0);
    let listed = full
        .stdout
        .lines()
        .skip_while(|l| !l.starts_with("Every works:"))
        .skip(2)
        .take_while(|l| l.starts_with("20"))
        .count();
    assert_eq!(listed, works.len());
    wd.run(&["check"])
        .expect_code(0)
        .stdout_has("no line limits capital works in 2037–2056");
}

/// `[plan] years_without_lines`: by default the years after the demo's lines end (2037 on) are
/// unlimited, and the report lists the capital works there, summing to work_programme.csv's;
/// `last-limit` holds each scope's last line on to 2056; `error` names each `[[budget]]` whose
/// lines end early.
#[test]
fn years_without_lines_are_unlimited_held_on_or_an_error() {
    let wd = Workdir::new();
    wd.demo_files();
    let base = wd.read("scenario.toml");
    let with = |rule: &str| {
        base.replacen(
            "[unit_values]",
            &format!("[plan]\nyears_without_lines = \"{rule}\"\n\n[unit_values]"),
            1,
        )
    };
    let cents = |x: &str| (x.parse::<f64>().unwrap() * 100.0).round() as i64;
    wd.run(&[
        "-q",
        "plan",
        "--scenario",
        "scenario.toml",
        "--out",
        "free",
        "--report",
    ])
    .expect_code(0);
    let after: i64 = rows(&wd.read("free/work_programme.csv"))
        .iter()
        .filter(|w| w["year"].parse::<i32>().unwrap() > 2036)
        .map(|w| cents(&w["cost"]))
        .sum();
    assert!(after > 0, "the demo plan has works after 2036");
    let doc = scraper::Html::parse_document(&wd.read("free/report.html"));
    let sel = |s: &str| scraper::Selector::parse(s).unwrap();
    let listed: i64 = doc
        .select(&sel("table.unlimited-years tbody tr td:nth-child(3)"))
        .map(|td| {
            let t: String = td.text().collect::<String>().replace(',', "");
            cents(t.split_whitespace().next().unwrap())
        })
        .sum();
    assert_eq!(
        listed, after,
        "the report's unlimited years hold every capital works after 2036"
    );

    wd.write("scenario.toml", with("last-limit"));
    wd.run(&["-q", "plan", "--scenario", "scenario.toml", "--out", "held"])
        .expect_code(0);
    let budget = rows(&wd.read("held/budget_use.csv"));
    let limit = |line: &str| {
        budget
            .iter()
            .find(|r| r["line"] == line)
            .map(|r| r["limit"].clone())
            .unwrap_or_else(|| panic!("no line {line}"))
    };
    assert_eq!(limit("works-later-2056"), "8000000");
    assert_eq!(limit("river-works-2040"), "2500000");
    assert_eq!(limit("north-upkeep-2056"), "560000");
    // works stops where works-later, of the same scope, takes over.
    assert!(!budget.iter().any(|r| r["line"] == "works-2032"));

    wd.write("scenario.toml", with("error"));
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("budget[2].last_year: the `works-later` lines end in 2036")
        .stderr_has("5 problems");
}

/// `explain` explains: on every demo section whose choice differs from its best with no limits,
/// it names the lines (each a group and year) where that best would have used more, and their
/// worth at the prices is the difference of the two candidates' priced use in its own table.
#[test]
fn explain_names_the_lines_and_years_behind_every_changed_choice() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--candidates"])
        .expect_code(0);
    let plan = rows(&wd.read("p/section_plan.csv"));
    let lines: Vec<String> = rows(&wd.read("p/budget_use.csv"))
        .into_iter()
        .chain(rows(&wd.read("p/target_use.csv")))
        .map(|r| r["line"].clone())
        .collect();
    let num = |t: &str| t.replace(',', "").parse::<f64>().unwrap();
    let mut changed = 0;
    for r in &plan {
        let id = &r["section_id"];
        let out = wd.run(&["explain", id, "--from", "p"]);
        out.expect_code(0);
        let text = &out.stdout;
        if r["same"] == "true" {
            // Held against the runner-up, when there is one.
            assert!(
                text.contains("Against the runner-up") || text.contains("the only candidate left"),
                "{id}\n{text}"
            );
            continue;
        }
        changed += 1;
        let (chosen, best) = (&r["strategy"], &r["unconstrained_strategy"]);
        assert!(
            text.contains(&format!(
                "Why not `{best}` (its best with no budget limits)?"
            )),
            "{id}\n{text}"
        );
        // The table of lines: each row a line of the plan, named with its year.
        let table: Vec<Vec<&str>> = text
            .lines()
            .skip_while(|l| !l.starts_with("What it would use beyond"))
            .skip(2)
            .take_while(|l| l.starts_with("  "))
            .map(|l| l.split_whitespace().collect())
            .collect();
        assert!(!table.is_empty(), "{id}: no line named\n{text}");
        for row in &table {
            assert!(lines.contains(&row[0].to_owned()), "{id}: {row:?}");
            assert!(row[0].rsplit('-').next().unwrap().parse::<i32>().is_ok());
        }
        // Σ worth = priced use of the best − priced use of the chosen (the candidates table),
        // each shown to the unit.
        let priced = |s: &str| {
            let l = text
                .lines()
                .find(|l| {
                    l.split_whitespace()
                        .nth(if l.starts_with('*') { 1 } else { 0 })
                        == Some(s)
                })
                .unwrap();
            let cells: Vec<&str> = l.split_whitespace().collect();
            num(cells[cells.len() - 2])
        };
        let worth: f64 = table.iter().map(|r| num(r[r.len() - 1])).sum();
        let want = priced(best) - priced(chosen);
        assert!(
            (worth - want).abs() <= table.len() as f64 + 2.0,
            "{id}: worth {worth} against {want}\n{text}"
        );
    }
    assert!(changed > 0, "the demo has sections the budgets move");
}
