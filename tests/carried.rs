//! The columns carried from the network: every section-level file of every command ends its
//! rows with the section's road, chainage and `x_` notes — a note holding a comma and a quote
//! comes back as written — and the rows that are no section's (the network's, a budget line's,
//! a total) leave those cells empty.

use crate::util::Workdir;
use std::collections::HashMap;

/// The columns carried, in order, after each file's own.
const CARRIED: [&str; 4] = ["road", "from_km", "to_km", "x_note"];

/// The demo with an `x_note` column, and each section's expected carried cells.
fn demo_with_notes() -> (Workdir, HashMap<String, Vec<String>>) {
    let wd = Workdir::new();
    wd.demo_files();
    let text = wd.read("network.csv");
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let head = r.headers().unwrap().clone();
    let col = |n: &str| head.iter().position(|h| h == n).unwrap();
    let (road, from, to) = (col("road"), col("from_km"), col("to_km"));
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(head.iter().chain(["x_note"])).unwrap();
    let mut want = HashMap::new();
    for (k, rec) in r.records().enumerate() {
        let rec = rec.unwrap();
        // Every third section has a note with a comma and a quote; the others none.
        let note = if k % 3 == 0 {
            format!("culvert at km {k}, \"old\"")
        } else {
            String::new()
        };
        w.write_record(rec.iter().chain([note.as_str()])).unwrap();
        let km = |x: &str| format!("{:.3}", x.parse::<f64>().unwrap());
        want.insert(
            rec[0].to_owned(),
            vec![rec[road].to_owned(), km(&rec[from]), km(&rec[to]), note],
        );
    }
    wd.write("network.csv", w.into_inner().unwrap());
    (wd, want)
}

/// Check `file`: its header ends with the carried columns; a row with a `section_id` ends with
/// that section's cells, any other row with empty ones. Returns the rows of sections seen.
fn check(wd: &Workdir, file: &str, want: &HashMap<String, Vec<String>>) -> usize {
    let text = wd.read(file);
    let mut r = csv::Reader::from_reader(text.as_bytes());
    let head: Vec<String> = r.headers().unwrap().iter().map(str::to_owned).collect();
    let n = head.len();
    assert!(n > CARRIED.len(), "{file}: {head:?}");
    assert_eq!(&head[n - CARRIED.len()..], CARRIED, "{file}'s last columns");
    let id = head.iter().position(|h| h == "section_id").unwrap();
    let mut sections = 0;
    for (k, rec) in r.records().enumerate() {
        let rec = rec.unwrap_or_else(|e| panic!("{file} row {}: {e}", k + 1));
        assert_eq!(rec.len(), n, "{file} row {}: cells", k + 1);
        let got: Vec<&str> = rec.iter().skip(n - CARRIED.len()).collect();
        match want.get(&rec[id]) {
            Some(cells) => {
                sections += 1;
                assert_eq!(got, *cells, "{file} row {} ({})", k + 1, &rec[id]);
            }
            None => {
                assert_eq!(
                    rec[id].to_owned(),
                    "",
                    "{file} row {}: unknown section",
                    k + 1
                );
                assert!(
                    got.iter().all(|c| c.is_empty()),
                    "{file} row {}: {got:?}",
                    k + 1
                );
            }
        }
    }
    sections
}

#[test]
fn every_section_level_file_carries_the_location_and_notes() {
    let (wd, want) = demo_with_notes();
    wd.run(&[
        "-q",
        "plan",
        "--scenario",
        "scenario.toml",
        "--out",
        "p",
        "--every-widening-year",
    ])
    .expect_code(0);
    wd.run(&[
        "-q",
        "appraise",
        "--scenario",
        "scenario.toml",
        "--out",
        "a",
        "--section",
        "OR-01",
        "OR-04",
        "CP-02",
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
        "s",
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
        "8",
        "--out",
        "r",
    ])
    .expect_code(0);
    let sections = want.len();
    let files = [
        ("p/work_programme.csv", 1),
        ("p/section_plan.csv", sections),
        ("p/programme.csv", 1),
        ("p/widening_plan.csv", 1),
        ("a/appraisal.csv", 3),
        ("a/incremental.csv", 3),
        ("a/widening.csv", 1),
        ("a/yearly.csv", 3),
        ("s/sensitivity.csv", sections),
        ("r/risk.csv", sections),
    ];
    for (file, least) in files {
        let seen = check(&wd, file, &want);
        assert!(
            seen >= least,
            "{file}: {seen} section rows, expected {least} at least"
        );
    }
}
