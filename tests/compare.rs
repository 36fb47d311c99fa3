//! `compare`: two plans side by side. Checked against the plans' own files: the sections it
//! lists are exactly those whose strategy differs in the two `section_plan.csv` files, and every
//! money difference is the difference of the two files' cells.

use crate::util::{rows, Workdir};
use std::collections::{BTreeMap, BTreeSet, HashMap};

/// An amount as the files write it, in hundredths (cents), exactly.
fn cents(text: &str) -> i128 {
    let t = text.trim();
    let (neg, t) = match t.strip_prefix('-') {
        Some(r) => (true, r),
        None => (false, t),
    };
    let (whole, frac) = t.split_once('.').unwrap_or((t, ""));
    assert!(frac.len() <= 2, "{text}: more than two decimals");
    let mut f = frac.to_owned();
    while f.len() < 2 {
        f.push('0');
    }
    let x = whole.parse::<i128>().unwrap() * 100 + f.parse::<i128>().unwrap();
    if neg {
        -x
    } else {
        x
    }
}

fn by<'r>(
    rows: &'r [HashMap<String, String>],
    key: &str,
) -> BTreeMap<String, &'r HashMap<String, String>> {
    rows.iter().map(|r| (r[key].clone(), r)).collect()
}

/// A plan held against itself: no section, money, price or state changes.
#[test]
fn a_plan_against_itself_shows_no_change() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p"]).expect_code(0);
    let out = wd.run(&["compare", "p", "p", "--out", "c"]);
    out.expect_code(0)
        .stdout_has("made under the same assumptions")
        .stdout_has("0 chose differently (0 in timing, 0 in treatment), 0 only in A, 0 only in B")
        .stdout_has("Works by year: the same works in every year")
        .stdout_has("Budget lines: no price or state moved");
    let sections = rows(&wd.read("c/comparison.csv"));
    assert_eq!(sections.len(), rows(&wd.read("p/section_plan.csv")).len());
    for r in &sections {
        assert_eq!(r["change"], "none", "{r:?}");
        assert_eq!(cents(&r["npv_change"]), 0);
        assert_eq!(r["strategy_a"], r["strategy_b"]);
        // The carried location is there.
        assert!(!r["road"].is_empty(), "{r:?}");
    }
    for r in rows(&wd.read("c/comparison_lines.csv")) {
        assert_eq!(cents(&r["used_change"]), 0, "{r:?}");
        assert_eq!(r["price_moved"], "false");
        assert_eq!(r["state_a"], r["state_b"]);
    }
    for r in rows(&wd.read("c/comparison_years.csv")) {
        assert_eq!(cents(&r["cost_change"]), 0, "{r:?}");
        assert_eq!(r["works_a"], r["works_b"]);
    }
    let page = wd.read("c/comparison.html");
    assert!(page.contains("Both plans were made under the same assumptions."));
    assert!(page.contains(pavestrat::CAUTION));
}

/// A plan against the same network with every line cut by a fifth: the sections listed are
/// exactly those whose strategy differs in the two section_plan.csv files, and every money
/// difference is the two files' cells subtracted.
#[test]
fn a_budget_cut_lists_exactly_the_changed_sections_and_the_files_money() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "a"]).expect_code(0);
    wd.run(&["-q", "plan", "--out", "b", "--budget-scale", "0.8"])
        .expect_code(0);
    let out = wd.run(&["compare", "a", "b", "--out", "c", "--all"]);
    out.expect_code(0)
        .stdout_has("every budget line scaled by: 1 in A, 0.8 in B");

    // Sections.
    let (pa, pb) = (
        rows(&wd.read("a/section_plan.csv")),
        rows(&wd.read("b/section_plan.csv")),
    );
    let (ma, mb) = (by(&pa, "section_id"), by(&pb, "section_id"));
    let differ: BTreeSet<String> = ma
        .iter()
        .filter(|(id, r)| mb[*id]["strategy"] != r["strategy"])
        .map(|(id, _)| id.clone())
        .collect();
    assert!(
        !differ.is_empty(),
        "a fifth off every line changes some choice"
    );
    let cmp = rows(&wd.read("c/comparison.csv"));
    let listed: BTreeSet<String> = cmp
        .iter()
        .filter(|r| r["change"] != "none")
        .map(|r| r["section_id"].clone())
        .collect();
    assert_eq!(listed, differ);
    for r in &cmp {
        let (x, y) = (ma[&r["section_id"]], mb[&r["section_id"]]);
        assert_eq!(r["strategy_a"], x["strategy"]);
        assert_eq!(r["strategy_b"], y["strategy"]);
        assert_eq!(r["first_works_year_a"], x["first_works_year"]);
        assert_eq!(r["first_works_year_b"], y["first_works_year"]);
        assert_eq!(cents(&r["npv_change"]), cents(&y["npv"]) - cents(&x["npv"]));
        assert_eq!(
            cents(&r["pv_agency_cost_change"]),
            cents(&y["pv_agency_cost"]) - cents(&x["pv_agency_cost"])
        );
    }
    // Every changed section is on screen with --all, with its two strategies.
    for id in &differ {
        let line = out
            .stdout
            .lines()
            .find(|l| l.split_whitespace().next() == Some(id.as_str()))
            .unwrap_or_else(|| panic!("{id} not on screen\n{}", out.stdout));
        assert!(line.contains(&ma[id]["strategy"]) && line.contains(&mb[id]["strategy"]));
    }

    // Budget lines: use, limits and prices are the two budget_use.csv files'.
    let (ua, ub) = (
        rows(&wd.read("a/budget_use.csv")),
        rows(&wd.read("b/budget_use.csv")),
    );
    let (la, lb) = (by(&ua, "line"), by(&ub, "line"));
    let lines = rows(&wd.read("c/comparison_lines.csv"));
    assert_eq!(lines.len(), la.len());
    let mut group_a: BTreeMap<String, i128> = BTreeMap::new();
    let mut group_b: BTreeMap<String, i128> = BTreeMap::new();
    for r in &lines {
        let (x, y) = (la[&r["line"]], lb[&r["line"]]);
        assert_eq!(cents(&r["used_a"]), cents(&x["used"]));
        assert_eq!(cents(&r["used_b"]), cents(&y["used"]));
        assert_eq!(
            cents(&r["used_change"]),
            cents(&y["used"]) - cents(&x["used"]),
            "{r:?}"
        );
        assert_eq!(r["price_a"], x["price"]);
        assert_eq!(r["price_b"], y["price"]);
        assert_eq!((&r["state_a"], &r["state_b"]), (&x["state"], &y["state"]));
        *group_a.entry(x["group"].clone()).or_default() += cents(&x["used"]);
        *group_b.entry(y["group"].clone()).or_default() += cents(&y["used"]);
    }
    // The screen's money by group is the files' sums, to the unit shown.
    for (g, a) in &group_a {
        let b = group_b[g];
        let unit = |c: i128| format!("{}", (c as f64 / 100.0).round() as i64);
        let row: Vec<String> = out
            .stdout
            .lines()
            .skip_while(|l| !l.starts_with("Money used by budget group"))
            .find(|l| l.split_whitespace().next() == Some(g.as_str()))
            .unwrap_or_else(|| panic!("group {g} not on screen"))
            .split_whitespace()
            .map(|c| c.replace(',', ""))
            .collect();
        assert_eq!((row[1].clone(), row[2].clone()), (unit(*a), unit(b)), "{g}");
    }
    // Lines whose price moved are named on screen with both states.
    for r in lines.iter().filter(|r| r["price_moved"] == "true") {
        assert!(
            out.stdout
                .lines()
                .any(|l| l.trim_start().starts_with(&format!("{} ", r["line"]))
                    && l.contains(&format!("{} → {}", r["state_a"], r["state_b"]))),
            "{} not listed as moved\n{}",
            r["line"],
            out.stdout
        );
    }

    // Years: works and their cost are the two work programmes', year by year.
    let mut cost: BTreeMap<String, (i128, i128, u64, u64)> = BTreeMap::new();
    for (k, dir) in ["a", "b"].iter().enumerate() {
        for w in rows(&wd.read(&format!("{dir}/work_programme.csv"))) {
            let e = cost.entry(w["year"].clone()).or_default();
            if k == 0 {
                e.0 += cents(&w["cost"]);
                e.2 += 1;
            } else {
                e.1 += cents(&w["cost"]);
                e.3 += 1;
            }
        }
    }
    let years = rows(&wd.read("c/comparison_years.csv"));
    for y in &years {
        let e = cost.get(&y["year"]).copied().unwrap_or_default();
        assert_eq!(cents(&y["cost_a"]), e.0, "{y:?}");
        assert_eq!(cents(&y["cost_b"]), e.1, "{y:?}");
        assert_eq!(cents(&y["cost_change"]), e.1 - e.0);
        assert_eq!(y["works_a"], e.2.to_string());
        assert_eq!(y["works_b"], e.3.to_string());
    }
    assert!(cost.keys().all(|k| years.iter().any(|y| &y["year"] == k)));

    // The page lists the same sections.
    let page = wd.read("c/comparison.html");
    for id in &differ {
        assert!(
            page.contains(&format!("<tr><td>{id}</td>")),
            "{id} not on the page"
        );
    }
}

/// Sections in one plan only (a network that lost and gained a section) are listed as such,
/// with the other plan's cells empty.
#[test]
fn sections_in_one_plan_only_are_named() {
    let wd = Workdir::new();
    wd.demo_files();
    wd.run(&["-q", "plan", "--scenario", "scenario.toml", "--out", "a"])
        .expect_code(0);
    let net = wd.read("network.csv");
    let mut lines: Vec<&str> = net.lines().collect();
    let gone = lines.remove(3).to_owned();
    let gone_id = gone.split(',').next().unwrap().to_owned();
    let renamed = lines[5].replacen(',', "-NEW,", 1);
    let new_id = renamed.split(',').next().unwrap().to_owned();
    let old_id = lines[5].split(',').next().unwrap().to_owned();
    lines[5] = &renamed;
    wd.write("network.csv", lines.join("\n") + "\n");
    wd.run(&["-q", "plan", "--scenario", "scenario.toml", "--out", "b"])
        .expect_code(0);
    let out = wd.run(&["compare", "a", "b", "--out", "c"]);
    out.expect_code(0)
        .stdout_has("2 only in A, 1 only in B")
        .stdout_has("Sections: 40 in A, 39 in B");
    let cmp = rows(&wd.read("c/comparison.csv"));
    let row = |id: &str| cmp.iter().find(|r| r["section_id"] == id).unwrap();
    for id in [&gone_id, &old_id] {
        assert_eq!(row(id)["change"], "only-a");
        assert_eq!(row(id)["strategy_b"], "");
        assert_eq!(row(id)["npv_change"], "");
    }
    assert_eq!(row(&new_id)["change"], "only-b");
    assert_eq!(row(&new_id)["strategy_a"], "");
    assert!(!row(&new_id)["road"].is_empty());
}

/// A directory that holds no plan is refused with its name and what was expected, and nothing
/// is written.
#[test]
fn a_directory_without_a_plan_is_refused() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p"]).expect_code(0);
    std::fs::create_dir(wd.join("empty")).unwrap();
    wd.run(&["compare", "p", "empty", "--out", "c"])
        .expect_code(2)
        .stderr_has("plan B: empty holds no summary.json")
        .stderr_has("expected the directory `pavestrat plan --out DIR` wrote");
    assert!(!wd.join("c").exists());
}

/// A scenario planned afresh is held exactly as its written plan: against the directory `plan`
/// wrote from it, no change; and a budget cut asked of the scenario lists the same sections and
/// the same line use as the two written plans do.
#[test]
fn scenarios_planned_afresh_are_their_written_plans() {
    let wd = Workdir::new();
    wd.demo_files();
    wd.run(&["-q", "plan", "--scenario", "scenario.toml", "--out", "a"])
        .expect_code(0);
    wd.run(&[
        "-q",
        "plan",
        "--scenario",
        "scenario.toml",
        "--out",
        "b",
        "--budget-scale",
        "0.8",
    ])
    .expect_code(0);
    wd.run(&["compare", "a", "scenario.toml", "--out", "same"])
        .expect_code(0)
        .stdout_has("B: scenario.toml (planned afresh)")
        .stdout_has("made under the same assumptions")
        .stdout_has("0 chose differently")
        .stdout_has("Budget lines: no price or state moved");
    for r in rows(&wd.read("same/comparison_lines.csv")) {
        assert_eq!(r["used_a"], r["used_b"], "{r:?}");
        assert_eq!(r["price_a"], r["price_b"], "{r:?}");
    }
    wd.run(&["-q", "compare", "a", "b", "--out", "written"])
        .expect_code(0);
    wd.run(&[
        "-q",
        "compare",
        "scenario.toml",
        "scenario.toml",
        "--budget-scale-b",
        "0.8",
        "--out",
        "afresh",
    ])
    .expect_code(0);
    for name in [
        "comparison.csv",
        "comparison_lines.csv",
        "comparison_years.csv",
    ] {
        assert_eq!(
            wd.read(&format!("written/{name}")),
            wd.read(&format!("afresh/{name}")),
            "{name}"
        );
    }
    // A scale is for a scenario only; a path that is neither is named.
    wd.run(&["compare", "a", "b", "--budget-scale-b", "0.8"])
        .expect_code(2)
        .stderr_has("--budget-scale-b applies to a scenario planned afresh");
    // A side with no feasible plan is named.
    wd.run(&[
        "compare",
        "scenario.toml",
        "scenario.toml",
        "--budget-scale-b",
        "0",
    ])
    .expect_code(3)
    .stderr_has("plan B (scenario.toml planned afresh)");
    wd.run(&["compare", "a", "nowhere"])
        .expect_code(2)
        .stderr_has("plan B: nowhere does not exist");
}
