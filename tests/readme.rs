//! The README's commands are run here, so the README cannot rot.

use crate::util::Workdir;

/// Lines of the README's quick start (the fenced block after "## Quick start").
fn quick_start() -> Vec<String> {
    let readme = include_str!("../README.md");
    let start = readme
        .find("## Quick start")
        .expect("README has a quick start");
    let block = &readme[start..];
    let open = block.find("```").unwrap() + 3;
    let body = &block[open..];
    let body = &body[body.find('\n').unwrap() + 1..];
    let close = body.find("```").unwrap();
    body[..close]
        .lines()
        .map(str::to_owned)
        .filter(|l| !l.trim().is_empty())
        .collect()
}

#[test]
fn quick_start_has_exactly_the_two_commands() {
    let lines = quick_start();
    assert_eq!(lines.len(), 2, "{lines:?}");
    assert!(lines[0].starts_with("cargo run --release -- "), "{lines:?}");
    assert_eq!(lines[1], "cargo test");
}

#[test]
fn quick_start_demo_command_runs() {
    // Run the same arguments through the built binary, from the repository root.
    let lines = quick_start();
    let args: Vec<&str> = lines[0]
        .trim_start_matches("cargo run --release -- ")
        .split_whitespace()
        .collect();
    let wd = Workdir::new();
    let root = env!("CARGO_MANIFEST_DIR");
    let args: Vec<String> = args
        .iter()
        .map(|a| {
            if a.starts_with("src/") {
                format!("{root}/{a}")
            } else {
                (*a).to_owned()
            }
        })
        .collect();
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    wd.run(&args)
        .expect_code(0)
        .stdout_has("Planning-level estimates only");
}

/// The first fenced block after the heading `heading`.
fn block_after(heading: &str) -> String {
    let readme = include_str!("../README.md");
    let start = readme
        .find(heading)
        .unwrap_or_else(|| panic!("README lacks {heading}"));
    let block = &readme[start..];
    let open = block.find("```").unwrap() + 3;
    let body = &block[open..];
    let body = &body[body.find('\n').unwrap() + 1..];
    body[..body.find("```").unwrap()].to_owned()
}

#[test]
fn cashflow_examples_run() {
    let wd = Workdir::new();
    let demo = std::fs::read(format!(
        "{}/src/demo/cashflow.csv",
        env!("CARGO_MANIFEST_DIR")
    ))
    .unwrap();
    wd.write("flows.csv", &demo);
    wd.write("projects.csv", &demo);
    let mut ran = 0;
    for line in block_after("### `cashflow`").lines() {
        let cmd = line.split('#').next().unwrap().trim();
        let Some(rest) = cmd.strip_prefix("pavestrat ") else {
            continue;
        };
        let args: Vec<&str> = rest.split_whitespace().collect();
        wd.run(&args).expect_code(0);
        ran += 1;
    }
    assert_eq!(ran, 5);
    assert!(wd.join("results/cashflow.json").exists());
}

#[test]
fn file_format_examples_parse() {
    use pavestrat::diag::Diagnostics;
    let mut d = Diagnostics::new();
    let s = pavestrat::input::scenario::parse(
        "README scenario",
        &block_after("### Scenario"),
        std::path::Path::new("."),
        &mut d,
    );
    assert!(s.is_some() && !d.has_errors(), "{d}");
    let (c, _) = pavestrat::input::treatments::parse(
        "README catalogue",
        &block_after("### Treatment catalogue"),
        &mut d,
    );
    assert!(c.is_some() && !d.has_errors(), "{d}");
    let t = pavestrat::input::templates::parse(
        "README templates",
        &block_after("### Strategy templates"),
        &mut d,
    );
    assert!(t.is_some_and(|t| t.len() == 2) && !d.has_errors(), "{d}");
}

#[test]
fn appraise_examples_run() {
    let wd = Workdir::new();
    let mut ran = 0;
    for line in block_after("### `appraise`").lines() {
        let cmd = line.split('#').next().unwrap().trim();
        let Some(rest) = cmd.strip_prefix("pavestrat ") else {
            continue;
        };
        let mut args: Vec<&str> = rest.split_whitespace().collect();
        args.push("--quiet");
        wd.run(&args).expect_code(0);
        ran += 1;
    }
    assert_eq!(ran, 5);
    assert!(wd.join("results/yearly.csv").exists());
    assert_eq!(wd.read("big/network.csv").lines().count(), 10_001);
}

/// The fenced block of language `lang` after `marker` in the README.
fn fenced_after(marker: &str, lang: &str) -> String {
    let readme = include_str!("../README.md");
    let at = readme.find(marker).expect("the marker is in the README");
    let rest = &readme[at..];
    let open = rest.find(&format!("```{lang}\n")).unwrap() + 4 + lang.len();
    let body = &rest[open..];
    let close = body.find("```").unwrap();
    body[..close]
        .lines()
        .map(|l| l.trim_start())
        .collect::<Vec<_>>()
        .join("\n")
}

/// The README's worked examples of the network's forms read without a problem, and the CSV's
/// first section is the GeoJSON's, field for field.
#[test]
fn the_network_examples_read_the_same() {
    use pavestrat::diag::Diagnostics;
    let marker = "The same two sections in each form";
    let csv = fenced_after(marker, "csv");
    let json = fenced_after(marker, "json");
    let mut d = Diagnostics::new();
    let a = pavestrat::input::network::parse("example.csv", &csv, &mut d);
    let b = pavestrat::input::network::parse_features("example.geojson", json.as_bytes(), &mut d);
    assert!(!d.has_errors(), "{d}");
    let (a, b) = (a.unwrap(), b.unwrap());
    assert_eq!(a.sections.len(), 2);
    let lengths: Vec<f64> = a.sections.iter().map(|s| s.length_km).collect();
    assert_eq!(lengths, [2.4, 2.7], "lengths from the chainage");
    let (mut x, mut y) = (a.sections[0].clone(), b.sections[0].clone());
    x.line = 0;
    y.line = 0;
    assert_eq!(x, y);
}

/// The commands of "Using the installed binary" run as written, one after the other.
#[test]
fn installed_binary_examples_run() {
    let wd = Workdir::new();
    let block = block_after("### Using the installed binary");
    let mut ran = 0;
    for line in block.lines().filter(|l| !l.trim().is_empty()) {
        let command = line.split('#').next().unwrap().trim();
        let args: Vec<&str> = command
            .strip_prefix("pavestrat ")
            .unwrap_or_else(|| panic!("not a pavestrat command: {line}"))
            .split_whitespace()
            .collect();
        wd.run(&args).expect_code(0);
        ran += 1;
    }
    assert_eq!(ran, 3);
    assert!(wd.join("mydistrict/plan/report.html").is_file());
}

/// The README's fenced `sh` block that starts with the line `first`.
fn sh_starting(first: &str) -> String {
    let readme = include_str!("../README.md");
    let open = format!("```sh\n{first}");
    let start = readme
        .find(&open)
        .unwrap_or_else(|| panic!("README lacks a block starting {first}"))
        + "```sh\n".len();
    let body = &readme[start..];
    body[..body.find("```").unwrap()].to_owned()
}

/// The batch-array example: its two scripts, run through `sh` with the task numbers set by hand
/// and `pavestrat` on the PATH, give one whole run's risk.csv and risk_draws.csv.
#[test]
fn batch_array_example_merges_to_the_whole_run() {
    let wd = Workdir::new();
    wd.run(&["-q", "plan", "--out", "plan"]).expect_code(0);
    let slices = sh_starting("# slices.sh");
    let merge = sh_starting("# merge.sh");
    let bin = std::path::Path::new(env!("CARGO_BIN_EXE_pavestrat"))
        .parent()
        .unwrap()
        .to_owned();
    let path = format!(
        "{}:{}",
        bin.display(),
        std::env::var("PATH").unwrap_or_default()
    );
    let sh = |script: &str, task: Option<usize>| {
        let mut c = std::process::Command::new("sh");
        c.arg("-c")
            .arg(script)
            .current_dir(wd.path())
            .env("PATH", &path);
        if let Some(k) = task {
            c.env("SLURM_ARRAY_TASK_ID", k.to_string());
        }
        let out = c.output().unwrap();
        assert!(
            out.status.success(),
            "{script}\n{}",
            String::from_utf8_lossy(&out.stderr)
        );
    };
    for k in 0..4 {
        sh(&slices, Some(k));
    }
    sh(&merge, None);
    wd.run(&[
        "-q", "risk", "--from", "plan", "--seed", "7", "--draws", "400", "--out", "whole",
    ])
    .expect_code(0);
    for f in ["risk.csv", "risk_draws.csv"] {
        assert!(
            wd.read(&format!("risk/{f}")) == wd.read(&format!("whole/{f}")),
            "{f} differs"
        );
    }
}
