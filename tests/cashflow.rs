//! `pavestrat cashflow` against published values, and its handling of bad input.

use crate::util::Workdir;
use serde_json::Value;

fn json(out: &crate::util::Output) -> Value {
    serde_json::from_str(&out.stdout).unwrap_or_else(|e| panic!("not JSON ({e})\n{}", out.shown))
}

fn close(v: &Value, want: f64, tol: f64) {
    let x = v.as_f64().unwrap_or_else(|| panic!("{v} is not a number"));
    assert!((x - want).abs() <= tol, "{x} vs {want} (±{tol})");
}

/// `cashflow - --format json ARGS` with `csv` on stdin; it must succeed.
fn cashflow_json(csv: &str, args: &[&str]) -> Value {
    let mut all = vec!["cashflow", "-", "--format", "json"];
    all.extend_from_slice(args);
    let out = Workdir::new().run_with_stdin(&all, csv.as_bytes());
    json(out.expect_code(0))
}

/// `cashflow - --rate RATE --format json` on a single stream of net values from year 0.
fn appraise_json(rate: &str, values: &[f64]) -> Value {
    cashflow_json(&stream(0, values), &["--rate", rate])
}

/// Single stream CSV from net values, one a year from `first`.
fn stream(first: i32, values: &[f64]) -> String {
    let mut s = String::from("year,benefit,cost\n");
    for (i, v) in values.iter().enumerate() {
        let (b, c) = if *v >= 0.0 { (*v, 0.0) } else { (0.0, -v) };
        s.push_str(&format!("{},{b},{c}\n", first + i as i32));
    }
    s
}

// Source: shared reference values — textbook ranking reversal at 10 % over 10 years, values
// computed with numpy-financial: A NPV 536.14, BCR 1.5361, IRR 21.41 %; B NPV 612.04, BCR
// 1.3825, IRR 18.31 %; B−A NPV 75.90, BCR 1.1265, IRR 12.87 %; B preferred.
#[test]
fn incremental_reference_case() {
    let mut csv = String::from("alternative,year,benefit,cost\nA,0,0,1000\nB,0,0,1600\n");
    for y in 1..=10 {
        csv.push_str(&format!("A,{y},250,0\nB,{y},360,0\n"));
    }
    let wd = Workdir::new();
    let out = wd.run_with_stdin(
        &["cashflow", "-", "--rate", "10%", "--format", "json"],
        csv.as_bytes(),
    );
    out.expect_code(0);
    let j = json(&out);
    let alts = j["alternatives"].as_array().unwrap();
    assert_eq!(alts[0]["name"], "A");
    close(&alts[0]["npv"], 536.14, 5e-3);
    close(&alts[0]["bcr"], 1.5361, 5e-5);
    close(&alts[0]["irr"][0], 0.2141, 5e-5);
    close(&alts[1]["npv"], 612.04, 5e-3);
    close(&alts[1]["bcr"], 1.3825, 5e-5);
    close(&alts[1]["irr"][0], 0.1831, 5e-5);
    let step = &j["incremental"]["steps"][1];
    assert_eq!(step["defender"], "A");
    close(&step["d_npv"], 75.90, 5e-3);
    close(&step["d_bcr"], 1.1265, 5e-5);
    close(&step["d_irr"][0], 0.1287, 5e-5);
    assert_eq!(j["incremental"]["winner"], "B");
    // The table says the same in words.
    let t = wd.run_with_stdin(&["cashflow", "-", "--rate", "0.10"], csv.as_bytes());
    t.expect_code(0)
        .stdout_has("B vs A")
        .stdout_has("Preferred: B")
        .stdout_has("Planning-level estimates only");
}

// Source: spreadsheet NPV() documentation: NPV(10%, -10000, 3000, 4200, 6800) = 1188.44. The
// spreadsheet discounts its first value one period, so the base year is the year before.
#[test]
fn spreadsheet_npv_by_base_year() {
    let csv = stream(2026, &[-10000.0, 3000.0, 4200.0, 6800.0]);
    let j = cashflow_json(&csv, &["--rate", "0.1", "--base-year", "2025"]);
    close(&j["npv"], 1188.44, 5e-3);
}

// Source: numpy-financial 1.0.0 documentation: npv(0.08, [-40000, 5000, 8000, 12000, 30000])
// = 3065.22267 (first value undiscounted = our default base year, the first year).
#[test]
fn numpy_financial_npv_by_default() {
    let csv = stream(2030, &[-40000.0, 5000.0, 8000.0, 12000.0, 30000.0]);
    let j = cashflow_json(&csv, &["--rate", "0.08"]);
    close(&j["npv"], 3065.22267, 5e-6);
    close(&j["pv_costs"], 40000.0, 1e-9);
    assert_eq!(j["irr_status"], "unique");
}

// Source: shared reference values: [-100, 230, -132] has the two rates 10 % and 20 %.
#[test]
fn several_rates_are_all_listed() {
    let j = appraise_json("0.05", &[-100.0, 230.0, -132.0]);
    assert_eq!(j["irr_status"], "multiple");
    close(&j["irr"][0], 0.10, 1e-10);
    close(&j["irr"][1], 0.20, 1e-10);
    Workdir::new()
        .run_with_stdin(
            &["cashflow", "-", "--rate", "0.05"],
            stream(0, &[-100.0, 230.0, -132.0]).as_bytes(),
        )
        .expect_code(0)
        .stdout_has("ambiguous: 10.00 %, 20.00 %");
}

// Source: numpy-financial returns nan for [-100, 50, -100]: no real rate.
#[test]
fn no_rate_is_said() {
    let j = appraise_json("0.05", &[-100.0, 50.0, -100.0]);
    assert_eq!(j["irr_status"], "none");
    assert_eq!(j["irr"], serde_json::json!([]));
}

#[test]
fn mid_year_discounting() {
    let j = cashflow_json(
        "year,benefit,cost\n2027,0,0\n2028,100,0\n",
        &["--rate", "0.1", "--mid-year"],
    );
    close(&j["npv"], 100.0 / 1.1f64.sqrt(), 1e-9);
    assert_eq!(j["discounting"], "mid-year");
}

// Source: shared reference values (derived): budget 2000; P1 (cost 1000, NPV 536), P2 (1600,
// 612), P3 (900, 400): best set P1 + P3 = 936; largest NPV first picks P2, 612.
#[test]
fn independent_projects_within_a_budget() {
    let csv = "alternative,year,benefit,cost\nP1,0,1536,1000\nP2,0,2212,1600\nP3,0,1300,900\n";
    let j = cashflow_json(csv, &["--rate", "0.1", "--independent", "--budget", "2000"]);
    assert_eq!(
        j["budget"]["best"]["projects"],
        serde_json::json!(["P1", "P3"])
    );
    close(&j["budget"]["best"]["npv"], 936.0, 1e-9);
    assert_eq!(
        j["budget"]["largest_npv_first"]["projects"],
        serde_json::json!(["P2"])
    );
    close(&j["budget"]["largest_npv_first"]["npv"], 612.0, 1e-9);
    assert!(j.get("incremental").is_none());
}

#[test]
fn writes_all_outputs_atomically() {
    let wd = Workdir::new();
    let out = wd.run(&[
        "cashflow",
        &format!("{}/src/demo/cashflow.csv", env!("CARGO_MANIFEST_DIR")),
        "--rate",
        "0.06",
        "--out",
        "res/a",
    ]);
    out.expect_code(0);
    let mut names: Vec<String> = std::fs::read_dir(wd.join("res/a"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| !n.starts_with('.'))
        .collect();
    names.sort();
    assert_eq!(
        names,
        [
            "cashflow.csv",
            "cashflow.json",
            "incremental.csv",
            "manifest.json"
        ]
    );
    let csv = wd.read("res/a/cashflow.csv");
    assert!(
        csv.starts_with("alternative,npv,pv_benefits,pv_costs,bcr,irr,irr_status,mirr,fyrr\n"),
        "{csv}"
    );
    assert_eq!(csv.lines().count(), 4);
}

/// Bad inputs: exit 2, the file and line named, and the output directory never created.
fn rejected(input: &[u8], needles: &[&str]) {
    let wd = Workdir::new();
    wd.write("flows.csv", input);
    let out = wd.run(&["cashflow", "flows.csv", "--rate", "0.06", "--out", "out"]);
    out.expect_code(2);
    for n in needles {
        out.stderr_has(n);
    }
    assert!(
        !wd.join("out").exists(),
        "output written despite bad input\n{}",
        out.shown
    );
}

#[test]
fn bad_inputs_are_rejected_with_their_place() {
    rejected(b"", &["flows.csv:1: the file is empty"]);
    rejected(
        b"year,benefit,cost\n",
        &["flows.csv:1: a header but no rows"],
    );
    rejected(
        b"year,benefit,cost\n2027,1,2\n2028,NaN,1\n",
        &["flows.csv:3: benefit: found `NaN`"],
    );
    rejected(
        b"year,benefit,cost\n2027,1,2\n2028,1,inf\n",
        &["flows.csv:3: cost: found `inf`"],
    );
    rejected(
        b"year,benefit,cost\n2027,\"1,000\",2\n",
        &["flows.csv:2: benefit: found `1,000` (separators or currency signs)"],
    );
    rejected(
        b"year,benefit,cost\n2027,1\n",
        &["flows.csv:2: found 2 fields; expected 3 fields"],
    );
    rejected(
        b"year,benefit,costs\n2027,1,2\n",
        &[
            "unknown column `costs`",
            "did you mean `cost`?",
            "no `cost` column",
        ],
    );
    rejected(
        b"year,benefit,cost\n2027,1,2\n99999,1,1\n",
        &["flows.csv:3: year: found `99999`"],
    );
}

#[test]
fn missing_file_and_bad_options() {
    let wd = Workdir::new();
    wd.run(&["cashflow", "nope.csv", "--rate", "0.06", "--out", "o"])
        .expect_code(2)
        .stderr_has("nope.csv: cannot read the file");
    assert!(!wd.join("o").exists());
    wd.write("f.csv", "year,benefit,cost\n2027,1,2\n");
    wd.run(&["cashflow", "f.csv", "--rate", "6"])
        .expect_code(2)
        .stderr_has("600 %");
    wd.run(&["cashflow", "f.csv", "--rate", "0.06", "--budget", "100"])
        .expect_code(2)
        .stderr_has("--independent");
    wd.run(&[
        "cashflow",
        "f.csv",
        "--rate",
        "0.06",
        "--independent",
        "--budget",
        "1,000",
    ])
    .expect_code(2)
    .stderr_has("--budget");
}

#[test]
fn harmless_variants_are_accepted_with_notes() {
    let wd = Workdir::new();
    wd.write("a.csv", "year,benefit,cost\r\n2027,0,100\r\n2028,120,0\r\n");
    wd.run(&["cashflow", "a.csv", "--rate", "0.1", "--format", "json"])
        .expect_code(0)
        .stderr_has("a.csv:1: CRLF");
    wd.write(
        "b.csv",
        "\"year\",\"benefit\",\"cost\"\n\"2027\",\"0\",\"100\"\n2028,120,0\n",
    );
    wd.run(&["cashflow", "b.csv", "--rate", "0.1", "--format", "json"])
        .expect_code(0)
        .stderr_has("b.csv:1: quoted fields");
    wd.write(
        "c.csv",
        b"year,benefit,cost,x_note\n2027,0,100,caf\xE9\n2028,120,0,\n",
    );
    let out = wd.run(&["cashflow", "c.csv", "--rate", "0.1", "--format", "json"]);
    close(&json(out.expect_code(0))["npv"], 120.0 / 1.1 - 100.0, 1e-9);
    out.stderr_has("c.csv:2: bytes that are not UTF-8");
    // --quiet drops the notes but keeps the requested output.
    let q = wd.run(&[
        "cashflow", "c.csv", "--rate", "0.1", "--format", "csv", "-q",
    ]);
    q.expect_code(0);
    assert!(
        q.stderr.is_empty() && q.stdout.starts_with("alternative,"),
        "{}",
        q.shown
    );
}

#[test]
fn help_carries_the_caution_and_exit_codes() {
    let wd = Workdir::new();
    let h = wd.run(&["--help"]);
    h.expect_code(0)
        .stdout_has("licensed engineer")
        .stdout_has("Exit codes");
    wd.run(&["cashflow", "--help"])
        .expect_code(0)
        .stdout_has("--base-year");
    wd.run(&["frobnicate"]).expect_code(2);
}

#[test]
fn an_unwritable_output_is_an_internal_fault_and_leaves_nothing() {
    let wd = Workdir::new();
    wd.write("f.csv", "year,benefit,cost\n2027,0,100\n2028,120,0\n");
    wd.write("blocker", "");
    wd.run(&["cashflow", "f.csv", "--rate", "0.1", "--out", "blocker/out"])
        .expect_code(1)
        .stderr_has("cannot write");
    assert_eq!(wd.listing(), ["blocker", "f.csv"]);
}

#[test]
fn independent_projects_too_large_to_count_are_bad_input() {
    // Each amount within the largest allowed (10¹⁵), but the projects' present costs together
    // pass what the whole-cent selection holds: exit 2 with what to change, never a fault.
    let wd = Workdir::new();
    let mut csv = String::from("alternative,year,benefit,cost\n");
    for a in ["a", "b"] {
        for y in 2027..2077 {
            csv.push_str(&format!("{a},{y},1000000000000000,900000000000000\n"));
        }
    }
    wd.write("huge.csv", csv);
    wd.run(&[
        "cashflow",
        "--rate",
        "6%",
        "--independent",
        "--budget",
        "1e15",
        "huge.csv",
    ])
    .expect_code(2)
    .stderr_has("largest supported total");
}
