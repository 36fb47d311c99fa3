//! `pavestrat select`: candidates from anywhere, one per section, within row limits.

use crate::util::{rows, Workdir};
use std::collections::HashMap;

fn summary(wd: &Workdir, dir: &str) -> serde_json::Value {
    serde_json::from_str(&wd.read(&format!("{dir}/summary.json"))).unwrap()
}

fn choices(text: &str) -> HashMap<String, String> {
    rows(text)
        .into_iter()
        .map(|r| (r["section_id"].clone(), r["strategy"].clone()))
        .collect()
}

#[test]
fn a_plans_own_files_reproduce_its_selection_and_objective() {
    let wd = Workdir::new();
    wd.run(&["plan", "-q", "--out", "p", "--candidates"])
        .expect_code(0);
    wd.run(&[
        "select",
        "p/candidates.csv",
        "--limits",
        "p/limits.csv",
        "--out",
        "s",
    ])
    .expect_code(0)
    .stdout_has("optimal");
    let (p, s) = (summary(&wd, "p"), summary(&wd, "s"));
    assert_eq!(p["status"], "optimal");
    assert_eq!(s["status"], "optimal");
    // candidates.csv holds NPVs to the cent: the objectives differ by at most half a cent per
    // section.
    let sections = s["sections"].as_f64().unwrap();
    let diff = (p["objective"].as_f64().unwrap() - s["objective"].as_f64().unwrap()).abs();
    assert!(diff <= 0.005 * sections, "objectives differ by {diff}");
    assert_eq!(
        choices(&wd.read("p/section_plan.csv")),
        choices(&wd.read("s/selection.csv"))
    );
    // Every row's use is within its limit, to the cent, and equals the plan's spending.
    let plan_use: HashMap<String, String> = rows(&wd.read("p/budget_use.csv"))
        .into_iter()
        .map(|r| (format!("cost:{}", r["line"]), r["used"].clone()))
        .collect();
    for r in rows(&wd.read("s/row_use.csv")) {
        let (used, limit): (f64, f64) = (r["used"].parse().unwrap(), r["limit"].parse().unwrap());
        assert!(used <= limit, "{} uses {used} of {limit}", r["row"]);
        if let Some(u) = plan_use.get(&r["row"]) {
            let u: f64 = u.parse().unwrap();
            assert!(
                (u - used).abs() < 0.005,
                "{}: plan {u}, select {used}",
                r["row"]
            );
        }
    }
}

#[test]
fn a_least_cost_plan_is_reproduced_by_minimising_its_cost_column() {
    let wd = Workdir::new();
    wd.run(&[
        "plan",
        "-q",
        "--objective",
        "least-cost",
        "--out",
        "p",
        "--candidates",
    ])
    .expect_code(0);
    wd.run(&[
        "select",
        "-q",
        "p/candidates.csv",
        "--limits",
        "p/limits.csv",
        "--minimise",
        "pv_agency_cost",
        "--out",
        "s",
    ])
    .expect_code(0);
    let (p, s) = (summary(&wd, "p"), summary(&wd, "s"));
    let sections = s["sections"].as_f64().unwrap();
    let diff = (p["objective"].as_f64().unwrap() - s["objective"].as_f64().unwrap()).abs();
    assert!(diff <= 0.005 * sections, "objectives differ by {diff}");
    assert_eq!(s["sense"], "minimise");
    assert!(s["bound"].as_f64().unwrap() <= s["objective"].as_f64().unwrap());
}

#[test]
fn the_reference_budget_case_takes_the_best_set_not_the_largest_project() {
    // ../shared/REFERENCES.md, budget-constrained selection: budget 2000; P1 (cost 1000, NPV
    // 536), P2 (1600, 612), P3 (900, 400) → P1 + P3, NPV 936. Each project is a section that
    // may be built or not; a carried column comes through.
    let wd = Workdir::new();
    wd.write(
        "c.csv",
        "section_id,strategy,npv,cost:money,owner\n\
         P1,skip,0,0,east\nP1,build,536,1000,east\n\
         P2,skip,0,0,west\nP2,build,612,1600,west\n\
         P3,skip,0,,east\nP3,build,400,900,east\n",
    );
    wd.write("l.csv", "row,limit\ncost:money,2000\n");
    wd.run(&["select", "c.csv", "--limits", "l.csv", "--out", "o"])
        .expect_code(0);
    let sel = rows(&wd.read("o/selection.csv"));
    let got: Vec<(&str, &str, &str)> = sel
        .iter()
        .map(|r| {
            (
                r["section_id"].as_str(),
                r["strategy"].as_str(),
                r["owner"].as_str(),
            )
        })
        .collect();
    assert_eq!(
        got,
        [
            ("P1", "build", "east"),
            ("P2", "skip", "west"),
            ("P3", "build", "east")
        ]
    );
    let s = summary(&wd, "o");
    assert!((s["objective"].as_f64().unwrap() - 936.0).abs() < 1e-9);
    assert_eq!(s["status"], "optimal");
    let ru = rows(&wd.read("o/row_use.csv"));
    assert_eq!(ru[0]["used"], "1900");
}

#[test]
fn a_cost_exactly_at_the_limit_fits_and_a_thousandth_over_does_not() {
    // Rows are counted in their finest decimal place, so a limit is exactly what the file says.
    let wd = Workdir::new();
    wd.write(
        "c.csv",
        "section_id,strategy,npv,cost:m\nA,none,0,0\nA,works,10,122000.000\nB,works,5,0.001\nB,none,0,0\n",
    );
    wd.write("l.csv", "row,limit\ncost:m,122000\n");
    wd.run(&["select", "-q", "c.csv", "--limits", "l.csv", "--out", "o"])
        .expect_code(0);
    let c = choices(&wd.read("o/selection.csv"));
    assert_eq!(c["A"], "works");
    assert_eq!(c["B"], "none");
    assert_eq!(summary(&wd, "o")["status"], "optimal");
}

#[test]
fn sections_without_a_zero_option_and_rows_nobody_can_meet_exit_3() {
    let wd = Workdir::new();
    wd.write(
        "c.csv",
        "section_id,strategy,npv,cost:m,use:crew\nA,x,1,500,2\nA,y,2,700,1\nB,x,1,400,3\n",
    );
    wd.write("l.csv", "row,limit\ncost:m,800\nuse:crew,10\n");
    wd.run(&["select", "c.csv", "--limits", "l.csv", "--out", "o"])
        .expect_code(3)
        .stderr_has("cost:m: limit 800, least possible 900");
    assert!(
        !wd.join("o").exists(),
        "nothing is written without a selection"
    );
}

#[test]
fn malformed_candidates_and_limits_are_located() {
    let wd = Workdir::new();
    wd.write(
        "c.csv",
        "section_id,strategy,npv,cost:m\nA,x,1,5\nA,x,2,6\nB,y,lots,7\nC,z,3,1.0000000001\n",
    );
    wd.write("l.csv", "row,limit\ncost:m,10\n");
    let out = wd.run(&["select", "c.csv", "--limits", "l.csv", "--out", "o"]);
    out.expect_code(2)
        .stderr_has("c.csv:3")
        .stderr_has("a second time (first on line 2)")
        .stderr_has("c.csv:4")
        .stderr_has("npv")
        .stderr_has("c.csv:5")
        .stderr_has("at most 9 decimal places");
    wd.write("c.csv", "section_id,strategy,npv,cost:m,use:k\nA,x,1,5,1\n");
    wd.write("l.csv", "row,limit\ncost:mm,10\ncost:m,ten\n");
    wd.run(&["select", "c.csv", "--limits", "l.csv"])
        .expect_code(2)
        .stderr_has("l.csv:2")
        .stderr_has("did you mean `cost:m`?")
        .stderr_has("l.csv:3")
        .stderr_has("no limit for `use:k`");
    wd.write("c.csv", "section_id,value,cost:m\nA,1,5\n");
    wd.run(&["select", "c.csv", "--limits", "l.csv"])
        .expect_code(2)
        .stderr_has("no `strategy` column")
        .stderr_has("no `npv` column");
    assert!(!wd.join("o").exists());
}
