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
