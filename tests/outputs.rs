//! Output directories are all or nothing, whatever happens to the run: killed by SIGINT, SIGTERM
//! or SIGKILL at any moment, or racing another run into the same directory. Afterwards (for
//! SIGKILL: once the directory is opened again) it holds one complete set, old or new, and no
//! staging leftovers; every reader checks the set against its manifest.

use crate::util::{rows, Workdir};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_pavestrat");

fn staging_leftovers(wd: &Workdir, dir: &str) -> Vec<String> {
    std::fs::read_dir(wd.join(dir))
        .map(|r| {
            r.filter_map(|e| e.ok())
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .filter(|n| n.starts_with(".pavestrat-stage-") || n.ends_with(".tmp"))
                .collect()
        })
        .unwrap_or_default()
}

/// The directory holds one complete plan set: a reader accepts it, and summary.json's run is the
/// run every plan file of the manifest names.
fn assert_one_complete_set(wd: &Workdir, dir: &str) -> String {
    wd.run(&["report", "--from", dir, "--out", "check.html"])
        .expect_code(0);
    assert!(
        staging_leftovers(wd, dir).is_empty(),
        "{:?}",
        staging_leftovers(wd, dir)
    );
    let m: serde_json::Value =
        serde_json::from_str(&wd.read(&format!("{dir}/manifest.json"))).unwrap();
    let s: serde_json::Value =
        serde_json::from_str(&wd.read(&format!("{dir}/summary.json"))).unwrap();
    let run = s["run_id"].as_str().unwrap().to_owned();
    for (name, e) in m["files"].as_object().unwrap() {
        assert_eq!(
            e["run"].as_str(),
            Some(run.as_str()),
            "{name} from another run"
        );
        assert!(wd.join(&format!("{dir}/{name}")).exists(), "{name} missing");
    }
    run
}

fn plan_command(wd: &Workdir, dir: &str, scale: &str) -> Command {
    let mut c = Command::new(BIN);
    c.args([
        "-q",
        "plan",
        "--scenario",
        "net/scenario.toml",
        "--time-limit",
        "2",
        "--budget-scale",
        scale,
        "--out",
        dir,
    ])
    .current_dir(wd.path())
    .stdout(Stdio::null())
    .stderr(Stdio::null());
    c
}

#[test]
fn a_run_killed_at_any_moment_leaves_the_old_set_or_the_new_one() {
    let wd = Workdir::new();
    wd.run(&["init", "--sections", "600", "--seed", "3", "net"])
        .expect_code(0);
    let t = Instant::now();
    assert!(plan_command(&wd, "out", "1").status().unwrap().success());
    let whole = t.elapsed().as_secs_f64();
    let mut runs = vec![assert_one_complete_set(&wd, "out")];
    for (signal, name) in [("INT", "SIGINT"), ("TERM", "SIGTERM"), ("KILL", "SIGKILL")] {
        for fraction in [0.2, 0.6, 0.85, 0.95, 1.02] {
            let mut child = plan_command(&wd, "out", "1").spawn().unwrap();
            std::thread::sleep(Duration::from_secs_f64(whole * fraction));
            let _ = Command::new("kill")
                .args(["-s", signal, &child.id().to_string()])
                .status();
            let status = child.wait().unwrap();
            if name != "SIGKILL" {
                // The run's own handler cleaned up before it exited.
                assert!(
                    staging_leftovers(&wd, "out").is_empty(),
                    "{name} at {fraction}: {:?} ({status:?})",
                    staging_leftovers(&wd, "out")
                );
            }
            let run = assert_one_complete_set(&wd, "out");
            runs.push(run);
        }
    }
    // The sets seen were whole sets of the first run or of later ones, never a mixture (checked
    // above); and runs that finished replaced the set.
    assert_eq!(runs.len(), 16);
}

#[test]
fn two_runs_into_one_directory_never_mix_their_files() {
    let wd = Workdir::new();
    wd.run(&["init", "--sections", "300", "--seed", "8", "net"])
        .expect_code(0);
    // The limit of one line at scale 1, to tell which run a budget_use.csv comes from.
    assert!(plan_command(&wd, "alone", "1").status().unwrap().success());
    let limit_of = |dir: &str| -> f64 {
        let used = rows(&wd.read(&format!("{dir}/budget_use.csv")));
        let works = used.iter().find(|r| r["line"] == "works-2028").unwrap();
        works["limit"].parse().unwrap()
    };
    let full = limit_of("alone");
    for round in 0..4 {
        let mut a = plan_command(&wd, "both", "1").spawn().unwrap();
        let mut b = plan_command(&wd, "both", "0.8").spawn().unwrap();
        assert!(a.wait().unwrap().success() && b.wait().unwrap().success());
        assert_one_complete_set(&wd, "both");
        // The limits in budget_use.csv are those of the run summary.json describes.
        let s: serde_json::Value = serde_json::from_str(&wd.read("both/summary.json")).unwrap();
        let scale = s["budget_scale"].as_f64().unwrap();
        let limit = limit_of("both");
        assert!(
            (full * scale - limit).abs() < 0.02,
            "round {round}: budget_use.csv limit {limit} does not belong to scale {scale}"
        );
    }
}

#[test]
fn a_name_taken_by_a_directory_or_an_unwritable_workbook_leaves_the_old_set() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "o", "--time-limit", "1"])
        .expect_code(0);
    let before = assert_one_complete_set(&wd, "o");
    // summary.json replaced by a directory: refused before anything moves.
    std::fs::remove_file(wd.join("o/summary.json")).unwrap();
    std::fs::create_dir(wd.join("o/summary.json")).unwrap();
    wd.run(&["-q", "plan", "--out", "o", "--time-limit", "1"])
        .expect_code(1)
        .stderr_has("summary.json");
    assert!(staging_leftovers(&wd, "o").is_empty());
    std::fs::remove_dir(wd.join("o/summary.json")).unwrap();
    wd.run(&["-q", "plan", "--out", "o", "--time-limit", "1"])
        .expect_code(0);
    let again = assert_one_complete_set(&wd, "o");
    assert_ne!(before, again);
    // A workbook that cannot be written: the directory keeps its previous set.
    std::fs::create_dir(wd.join("locked")).unwrap();
    std::fs::write(wd.join("locked/x.xlsx"), b"").unwrap();
    std::fs::remove_file(wd.join("locked/x.xlsx")).unwrap();
    std::fs::create_dir(wd.join("locked/x.xlsx")).unwrap();
    wd.run(&[
        "-q",
        "plan",
        "--out",
        "o",
        "--time-limit",
        "1",
        "--xlsx",
        "locked/x.xlsx",
    ])
    .expect_code(1);
    assert_eq!(
        assert_one_complete_set(&wd, "o"),
        again,
        "the old set stays"
    );
}

#[test]
fn analyses_made_for_another_plan_are_refused_by_the_report() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "p", "--time-limit", "1"])
        .expect_code(0);
    wd.run(&["-q", "sensitivity", "--from", "p", "--out", "p"])
        .expect_code(0);
    wd.run(&["report", "--from", "p"]).expect_code(0);
    // A new plan into the same directory: the sensitivity is now of another plan.
    wd.run(&[
        "-q",
        "plan",
        "--out",
        "p",
        "--time-limit",
        "1",
        "--budget-scale",
        "0.9",
    ])
    .expect_code(0);
    wd.run(&["report", "--from", "p"])
        .expect_code(2)
        .stderr_has("sensitivity.csv")
        .stderr_has("made for the plan of run")
        .stderr_has("pavestrat sensitivity --from p --out p");
    // A file copied in by hand is not vouched for either.
    wd.run(&["-q", "sensitivity", "--from", "p", "--out", "p"])
        .expect_code(0);
    wd.run(&["report", "--from", "p"]).expect_code(0);
    wd.write("p/risk.csv", "kind,name\n");
    wd.run(&["report", "--from", "p"])
        .expect_code(2)
        .stderr_has("risk.csv")
        .stderr_has("does not list");
}
