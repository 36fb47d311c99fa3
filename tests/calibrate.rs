//! `pavestrat calibrate`: surveys in, fitted tables out (a scenario that loads with them), and
//! bad survey files refused with exit 2 and the place named, nothing written; plus the
//! common-practice plausibility of the demo and of a synthetic network's base case and ratios.

use crate::util::{rows, Workdir};

/// Surveys of the demo's surface-treatment sections, 2012–2026, rising by a made-up linear rule
/// with a little deterministic scatter (test data, not a published record).
fn surveys(wd: &Workdir) -> String {
    let net = rows(&wd.read("network.csv"));
    let mut s = String::from("section_id,year,iri,x_crew\n");
    for (k, r) in net.iter().enumerate() {
        let mut iri: f64 = r["iri"].parse::<f64>().unwrap() - 1.0;
        for (j, y) in (2012..=2026).enumerate() {
            s.push_str(&format!("{},{y},{iri:.3},crew{}\n", r["section_id"], k % 3));
            let scatter = (((k * 31 + j * 17) % 11) as f64 - 5.0) * 0.004;
            iri += 0.03 + 0.02 * iri + scatter;
        }
    }
    s
}

fn demo_with_old_works(wd: &Workdir) {
    wd.demo_files();
    // The surveys run from 2012: works before them.
    let net = wd.read("network.csv");
    let mut out = String::new();
    for (i, line) in net.lines().enumerate() {
        if i == 0 {
            out.push_str(line);
        } else {
            let mut f: Vec<&str> = line.split(',').collect();
            f[13] = "2005";
            out.push_str(&f.join(","));
        }
        out.push('\n');
    }
    wd.write("network.csv", out);
}

#[test]
fn fits_the_families_and_writes_a_scenario_that_loads() {
    let wd = Workdir::new();
    demo_with_old_works(&wd);
    wd.write("surveys.csv", surveys(&wd));
    let out = wd.run(&[
        "calibrate",
        "--scenario",
        "scenario.toml",
        "--surveys",
        "surveys.csv",
        "--out",
        "fit",
        "--write-scenario",
        "sub/calibrated.toml",
    ]);
    out.expect_code(0)
        .stderr_has("surface_treatment:")
        .stderr_has("standard error");
    let toml = wd.read("fit/calibration.toml");
    assert!(
        toml.contains("[condition.family.surface_treatment]"),
        "{toml}"
    );
    assert!(
        toml.contains("[condition.family.asphalt]") && toml.contains("load_factor = "),
        "{toml}"
    );
    let csv = rows(&wd.read("fit/calibration.csv"));
    assert!(csv.len() > 100);
    // The fitted coefficients predict the surveys better than the defaults did.
    let err = |col: &str| -> f64 {
        csv.iter()
            .filter(|r| r["family"] == "surface_treatment")
            .map(|r| {
                (r["observed_rise"].parse::<f64>().unwrap() - r[col].parse::<f64>().unwrap())
                    .powi(2)
            })
            .sum()
    };
    assert!(err("predicted_fitted") < err("predicted_scenario"));
    assert!(wd.read("fit/calibration.html").contains("<svg"));
    // The copy elsewhere still finds its files and carries the fitted tables.
    let text = wd.read("sub/calibrated.toml");
    assert!(text.contains("Fitted by pavestrat calibrate"), "{text}");
    wd.run(&["check", "--scenario", "sub/calibrated.toml"])
        .expect_code(0);
}

#[test]
fn bad_survey_files_are_refused_with_their_place() {
    let wd = Workdir::new();
    wd.demo_files();
    for (text, want) in [
        (
            "section_id,year,iri\nOR-01,2020,2.1\nXX-99,2021,2.2\n",
            "surveys.csv:3:1: section_id",
        ),
        (
            "section_id,year,iri\nOR-01,20x0,2.1\n",
            "surveys.csv:2:2: year",
        ),
        (
            "section_id,year,iri\nOR-01,2020,-1\n",
            "surveys.csv:2:3: iri",
        ),
        (
            "section_id,year,iri\nOR-01,2020,2.1\nOR-01,2020,2.2\n",
            "a second survey of OR-01 in 2020",
        ),
        (
            "section_id,year,iri,colour\nOR-01,2020,2.1,red\n",
            "the column `colour`",
        ),
        (
            "section_id,year,iri\nOR-01,2020,2.1\nOR-01,2021,2.2\n",
            "too few to fit any family",
        ),
    ] {
        wd.write("surveys.csv", text);
        let out = wd.run(&[
            "calibrate",
            "--scenario",
            "scenario.toml",
            "--surveys",
            "surveys.csv",
            "--out",
            "fit",
        ]);
        out.expect_code(2).stderr_has(want);
        assert!(!wd.join("fit").exists(), "nothing is written on error");
    }
}

/// Common practice (shared reference list, "Condition progression"): on the demo and on a
/// synthetic district, no base-case year rises by more than 1 m/km, fewer than 5 % of base-case
/// section-years sit at the maximum, sound pavements (SN ≥ 4) roughen 0.02–0.15 m/km a year in
/// their first ten years after works, fewer than 1 % of strategies have a capital benefit-cost
/// ratio above 50 (the report's headline ratio) and fewer than 5 % a single IRR above 100 %.
#[test]
fn the_demo_and_a_synthetic_district_are_plausible() {
    let wd = Workdir::new();
    wd.demo_files();
    wd.run(&["init", "syn", "--sections", "150", "--seed", "5"])
        .expect_code(0);
    for scenario in ["scenario.toml", "syn/scenario.toml"] {
        let dir = if scenario.starts_with("syn") {
            "syn/"
        } else {
            ""
        };
        let ids: Vec<String> = rows(&wd.read(&format!("{dir}network.csv")))
            .iter()
            .map(|r| r["section_id"].clone())
            .collect();
        let out_dir = format!("{dir}res");
        let mut args = vec![
            "-q",
            "appraise",
            "--scenario",
            scenario,
            "--out",
            &out_dir,
            "--section",
        ];
        args.extend(ids.iter().map(String::as_str));
        wd.run(&args).expect_code(0);
        let yearly = rows(&wd.read(&format!("{out_dir}/yearly.csv")));
        let mut base: std::collections::BTreeMap<&str, Vec<f64>> = Default::default();
        for r in &yearly {
            if r["strategy"] == "base" && !r["iri"].is_empty() {
                base.entry(r["section_id"].as_str())
                    .or_default()
                    .push(r["iri"].parse().unwrap());
            }
        }
        let years: usize = base.values().map(Vec::len).sum();
        let at_max = base
            .values()
            .flatten()
            .filter(|x| **x >= 16.0 - 1e-9)
            .count();
        assert!(
            (at_max as f64) < 0.05 * years as f64,
            "{scenario}: {at_max} of {years} at the maximum"
        );
        for (id, v) in &base {
            for w in v.windows(2) {
                assert!(w[1] - w[0] <= 1.0, "{scenario} {id}: {w:?}");
            }
        }
        // A strong overlay's first decade on every section that gets one in 2027.
        for r in yearly
            .iter()
            .filter(|r| r["strategy"] == "strengthen-thick@2027" && r["year"] == "2028")
        {
            let sn: f64 = r["structural_number"].parse().unwrap();
            if sn < 4.0 {
                continue;
            }
            let iri_at = |year: &str| -> f64 {
                yearly
                    .iter()
                    .find(|x| {
                        x["section_id"] == r["section_id"]
                            && x["strategy"] == r["strategy"]
                            && x["year"] == year
                    })
                    .unwrap()["iri"]
                    .parse()
                    .unwrap()
            };
            let rate = (iri_at("2038") - iri_at("2028")) / 10.0;
            assert!(
                (0.02..=0.15).contains(&rate),
                "{scenario} {}: {rate} m/km a year",
                r["section_id"]
            );
        }
        let ap = rows(&wd.read(&format!("{out_dir}/appraisal.csv")));
        let alts: Vec<_> = ap.iter().filter(|r| r["strategy"] != "base").collect();
        let high_bcr = alts
            .iter()
            .filter(|r| r["bcr_capital"].parse::<f64>().is_ok_and(|b| b > 50.0))
            .count();
        let high_irr = alts
            .iter()
            .filter(|r| r["irr_status"] == "unique" && r["irr"].parse::<f64>().unwrap() > 1.0)
            .count();
        assert!(
            (high_bcr as f64) < 0.01 * alts.len() as f64,
            "{scenario}: {high_bcr} of {}",
            alts.len()
        );
        assert!(
            (high_irr as f64) < 0.05 * alts.len() as f64,
            "{scenario}: {high_irr} of {}",
            alts.len()
        );
    }
}
