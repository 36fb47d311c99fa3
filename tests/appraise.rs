//! `pavestrat appraise` and `pavestrat init`: the main job on the demo and on a user's own
//! scenario, its output files, and bad input (exit 2, the place named, nothing written).

use crate::util::{rows, Workdir};

#[test]
fn appraises_the_built_in_demo() {
    let wd = Workdir::new();
    let out = wd.run(&["appraise", "--out", "res"]);
    out.expect_code(0)
        .stderr_has("using the built-in demo")
        .stdout_has("Planning-level estimates only")
        .stdout_has("Widening timing")
        .stdout_has("of the length in poor condition");
    let text = wd.read("res/appraisal.csv");
    let head = text.lines().next().unwrap();
    for col in [
        "section_id",
        "strategy",
        "pv_agency_cost",
        "pv_user_cost",
        "npv",
        "bcr",
        "irr",
        "irr_status",
        "fyrr",
    ] {
        assert!(head.split(',').any(|h| h == col), "missing {col} in {head}");
    }
    let rows = rows(&text);
    let sections: std::collections::BTreeSet<&str> =
        rows.iter().map(|r| r["section_id"].as_str()).collect();
    assert_eq!(sections.len(), 40);
    for s in &sections {
        let of: Vec<_> = rows.iter().filter(|r| r["section_id"] == *s).collect();
        // The base is there once, with NPV zero against itself; one strategy is preferred.
        let base: Vec<_> = of.iter().filter(|r| r["strategy"] == "base").collect();
        assert_eq!(base.len(), 1, "{s}");
        assert_eq!(base[0]["npv"], "0.00");
        assert_eq!(
            of.iter().filter(|r| r["preferred"] == "true").count(),
            1,
            "{s}"
        );
        // Names are unique within a section.
        let mut names: Vec<&str> = of.iter().map(|r| r["strategy"].as_str()).collect();
        names.sort_unstable();
        names.dedup();
        assert_eq!(names.len(), of.len());
    }
    // Strategy names follow tag@year and tag@iriX.
    assert!(
        rows.iter()
            .any(|r| r["strategy"].starts_with("strengthen@20")
                && r["strategy"].contains("+widen@20"))
    );
    assert!(rows.iter().any(|r| r["strategy"].starts_with("reseal@iri")));
    let widening = rows_of(&wd, "res/widening.csv");
    assert!(!widening.is_empty());
    assert!(wd.read("res/incremental.csv").lines().count() > 40);
    assert!(!wd.join("res/yearly.csv").exists());
}

fn rows_of(wd: &Workdir, name: &str) -> Vec<std::collections::HashMap<String, String>> {
    rows(&wd.read(name))
}

#[test]
fn picked_sections_get_their_yearly_trace() {
    let wd = Workdir::new();
    wd.run(&[
        "appraise",
        "--section",
        "OR-01",
        "ML-02",
        "--out",
        "res",
        "--quiet",
    ])
    .expect_code(0);
    let yearly = rows_of(&wd, "res/yearly.csv");
    let base: Vec<f64> = yearly
        .iter()
        .filter(|r| r["section_id"] == "ML-02" && r["strategy"] == "base" && !r["iri"].is_empty())
        .map(|r| r["iri"].parse().unwrap())
        .collect();
    assert_eq!(base.len(), 30);
    assert!(base.windows(2).all(|w| w[1] >= w[0]), "{base:?}");
    let sections: std::collections::BTreeSet<String> = rows_of(&wd, "res/appraisal.csv")
        .into_iter()
        .map(|r| r["section_id"].clone())
        .collect();
    assert_eq!(sections.into_iter().collect::<Vec<_>>(), ["ML-02", "OR-01"]);
}

#[test]
fn an_unknown_section_is_named_with_a_suggestion() {
    let wd = Workdir::new();
    wd.run(&["appraise", "--section", "OR-1", "--out", "res"])
        .expect_code(2)
        .stderr_has("no section `OR-1`")
        .stderr_has("did you mean `OR-01`?");
    assert!(wd.listing().is_empty());
}

#[test]
fn bad_model_input_is_located_and_nothing_is_written() {
    let wd = Workdir::new();
    wd.run(&["init", "mine", "--quiet"]).expect_code(0);
    let scenario = wd.read("mine/scenario.toml").replace(
        "{ name = \"night\", hours = 3360, share = 0.20 }",
        "{ name = \"night\", hours = 3360, share = 0.25 }",
    );
    wd.write("mine/scenario.toml", scenario);
    let net = wd
        .read("mine/network.csv")
        .replacen(",asphalt,", ",ashpalt,", 1);
    wd.write("mine/network.csv", net);
    // Both problems in one pass: the scenario's and the network's against it.
    wd.run(&[
        "appraise",
        "--scenario",
        "mine/scenario.toml",
        "--out",
        "res",
    ])
    .expect_code(2)
    .stderr_has("scenario.toml:")
    .stderr_has("traffic.flow_bands")
    .stderr_has("shares that add up to 1.05")
    .stderr_has("network.csv:2")
    .stderr_has("surface")
    .stderr_has("did you mean `asphalt`?")
    .stderr_has("2 problems found");
    assert!(!wd.join("res").exists());
}

#[test]
fn init_writes_an_editable_scenario_and_never_overwrites() {
    let wd = Workdir::new();
    wd.run(&["init", "mine"]).expect_code(0).stderr_has("wrote");
    let mut names: Vec<String> = std::fs::read_dir(wd.join("mine"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(
        names,
        [
            "network.csv",
            "scenario.toml",
            "templates.toml",
            "treatments.toml"
        ]
    );
    wd.run(&["check", "--scenario", "mine/scenario.toml"])
        .expect_code(0);
    wd.run(&[
        "appraise",
        "--scenario",
        "mine/scenario.toml",
        "--quiet",
        "--out",
        "a",
    ])
    .expect_code(0);
    // The same numbers as the built-in demo.
    wd.run(&["appraise", "--quiet", "--out", "b"])
        .expect_code(0);
    assert_eq!(wd.read("a/appraisal.csv"), wd.read("b/appraisal.csv"));
    // A second init refuses, and leaves the user's edits alone.
    wd.write("mine/network.csv", "edited");
    wd.run(&["init", "mine"])
        .expect_code(2)
        .stderr_has("already exist")
        .stderr_has("--force");
    assert_eq!(wd.read("mine/network.csv"), "edited");
    wd.run(&["init", "mine", "--force", "--quiet"])
        .expect_code(0);
    assert_ne!(wd.read("mine/network.csv"), "edited");
}

#[test]
fn init_draws_synthetic_networks_reproducibly() {
    let wd = Workdir::new();
    wd.run(&["init", "a", "--sections", "120", "--seed", "9", "--quiet"])
        .expect_code(0);
    wd.run(&["init", "b", "--sections", "120", "--seed", "9", "--quiet"])
        .expect_code(0);
    wd.run(&["init", "c", "--sections", "120", "--seed", "10", "--quiet"])
        .expect_code(0);
    assert_eq!(wd.read("a/network.csv"), wd.read("b/network.csv"));
    assert_ne!(wd.read("a/network.csv"), wd.read("c/network.csv"));
    assert_eq!(wd.read("a/network.csv").lines().count(), 121);
    // Budgets are scaled to the network's size (120 sections: three times the demo's 40).
    assert!(wd
        .read("a/scenario.toml")
        .contains("per_year = \"19500000\""));
    wd.run(&[
        "appraise",
        "--scenario",
        "a/scenario.toml",
        "--quiet",
        "--out",
        "res",
    ])
    .expect_code(0);
    assert_eq!(
        rows_of(&wd, "res/appraisal.csv")
            .iter()
            .filter(|r| r["strategy"] == "base")
            .count(),
        120
    );
    wd.run(&["init", "d", "--seed", "3"])
        .expect_code(2)
        .stderr_has("--sections");
    wd.run(&["init", "d", "--sections", "0"]).expect_code(2);
}

#[test]
fn templates_that_cannot_be_expanded_sensibly_are_refused() {
    let wd = Workdir::new();
    wd.run(&["init", "mine", "--quiet"]).expect_code(0);
    let extra = r#"
[template.everything]
steps = [
  { treatment = "overlay", tag = "strengthen", window = [0, 29] },
  { treatment = "reseal", after = [0, 29] },
  { treatment = "mill-inlay", tag = "inlay", after = [0, 29] },
]

[template.clash]
steps = [ { treatment = "thick-overlay", tag = "strengthen", window = [0, 3] } ]
"#;
    let t = wd.read("mine/templates.toml") + extra;
    wd.write("mine/templates.toml", t);
    wd.run(&["check", "--scenario", "mine/scenario.toml"])
        .expect_code(2)
        .stderr_has("templates.toml:")
        .stderr_has("`everything` expands into up to 27000 strategies per section")
        .stderr_has("every = 2")
        .stderr_has("the tag `strengthen` on the treatment `overlay`; it names `thick-overlay`");
}

#[test]
fn quiet_keeps_the_data_asked_for() {
    let wd = Workdir::new();
    // Without --out the summary is the output: --quiet only drops the notes.
    let out = wd.run(&["appraise", "--quiet", "--section", "VA-01"]);
    out.expect_code(0).stdout_has("VA-01");
    assert!(out.stderr.is_empty(), "{}", out.shown);
    // With --out, the files are the output and nothing is printed.
    let out = wd.run(&["appraise", "--quiet", "--section", "VA-01", "--out", "res"]);
    out.expect_code(0);
    assert!(
        out.stdout.is_empty() && out.stderr.is_empty(),
        "{}",
        out.shown
    );
    assert!(wd.join("res/yearly.csv").exists());
}

#[test]
fn a_users_own_template_file_needs_no_code() {
    let wd = Workdir::new();
    wd.run(&["init", "mine", "--quiet"]).expect_code(0);
    wd.write(
        "mine/extra.toml",
        r#"
[template.seal-then-overlay]
label = "Seal soon, overlay some years later"
only_if = { max_iri = 4.0 }
min_gap_years = 4
steps = [
  { treatment = "reseal", tag = "reseal", window = [0, 1] },
  { treatment = "overlay", tag = "resurface", after = [4, 6], every = 2 },
]
"#,
    );
    let scenario = wd.read("mine/scenario.toml").replace(
        "strategies = [\"templates.toml\"]",
        "strategies = [\"templates.toml\", \"extra.toml\"]",
    );
    wd.write("mine/scenario.toml", scenario);
    wd.run(&[
        "appraise",
        "--scenario",
        "mine/scenario.toml",
        "--section",
        "OR-01",
        "ML-02",
        "--out",
        "res",
        "--quiet",
    ])
    .expect_code(0);
    let rows = rows_of(&wd, "res/appraisal.csv");
    let mine: Vec<&str> = rows
        .iter()
        .filter(|r| r["template"] == "seal-then-overlay")
        .map(|r| r["strategy"].as_str())
        .collect();
    // OR-01 (IRI 2.7) qualifies, ML-02 (IRI 7.9) does not; 2 seal years × offsets 4 and 6.
    assert_eq!(
        mine,
        [
            "reseal@2027+resurface@2031",
            "reseal@2027+resurface@2033",
            "reseal@2028+resurface@2032",
            "reseal@2028+resurface@2034",
        ]
    );
    assert!(rows
        .iter()
        .filter(|r| r["template"] == "seal-then-overlay")
        .all(|r| r["section_id"] == "OR-01"));
}

#[test]
fn results_do_not_depend_on_the_thread_count() {
    let wd = Workdir::new();
    wd.run(&["init", "net", "--sections", "120", "--seed", "4", "--quiet"])
        .expect_code(0);
    for (threads, dir) in [("1", "one"), ("2", "two"), ("3", "three")] {
        wd.run_env(
            &[
                "appraise",
                "--scenario",
                "net/scenario.toml",
                "--quiet",
                "--out",
                dir,
            ],
            &[("RAYON_NUM_THREADS", threads)],
        )
        .expect_code(0);
    }
    for file in ["appraisal.csv", "incremental.csv", "widening.csv"] {
        let one = wd.read(&format!("one/{file}"));
        assert_eq!(one, wd.read(&format!("two/{file}")), "{file}");
        assert_eq!(one, wd.read(&format!("three/{file}")), "{file}");
    }
}

#[test]
fn no_irr_skips_only_the_rates() {
    let wd = Workdir::new();
    wd.run(&["appraise", "--out", "all", "-q"]).expect_code(0);
    wd.run(&["appraise", "--out", "fast", "-q", "--no-irr"])
        .expect_code(0);
    for file in ["appraisal.csv", "incremental.csv"] {
        let (all, fast) = (
            rows(&wd.read(&format!("all/{file}"))),
            rows(&wd.read(&format!("fast/{file}"))),
        );
        assert_eq!(all.len(), fast.len(), "{file}");
        let (irr, status) = if file == "appraisal.csv" {
            ("irr", "irr_status")
        } else {
            ("d_irr", "d_irr_status")
        };
        assert!(all.iter().any(|r| r[status] == "unique"), "{file}");
        for (a, f) in all.iter().zip(&fast) {
            assert_eq!(f[status], "skipped", "{file}");
            assert_eq!(f[irr], "", "{file}");
            // Everything else is the same, to the byte.
            for (k, v) in a {
                if k != irr && k != status {
                    assert_eq!(&f[k], v, "{file} {k}");
                }
            }
        }
    }
    // Without --out only the preferred strategies' IRRs are looked for: the summary is the
    // same as with every IRR.
    let plain = wd.run(&["appraise"]);
    plain.expect_code(0);
    let with_out = wd.run(&["appraise", "--out", "again"]);
    with_out.expect_code(0);
    assert!(plain.stdout.contains("Widening timing"));
    assert_eq!(plain.stdout, with_out.stdout);
}
