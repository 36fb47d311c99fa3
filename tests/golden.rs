//! Every output file, byte for byte, against a recorded list of sizes and FNV-1a 64 hashes
//! (`tests/golden/outputs.txt`), so a restructure can show it changed nothing. Runs `plan` (with
//! and without `--report`), `appraise`, `sensitivity`, `risk`, `select` and `report` on the
//! built-in demo and on a synthetic network whose selection is proven optimal (nothing here
//! depends on a time limit: the frontier's levels are solved to their gap or shown infeasible).
//!
//! JSON files are compared after removing what differs between runs by design: the run id and
//! every key ending in `seconds`. `manifest.json` is left out (it holds run ids and the hashes of
//! the files compared here). A change to an output made on purpose is recorded by running
//! `PAVESTRAT_BLESS=1 cargo test --test tests golden` and committing the list with the change.

use crate::util::Workdir;

const LIST: &str = "tests/golden/outputs.txt";

/// FNV-1a, 64 bits (the hash the output manifests use).
fn fnv1a64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

/// The bytes compared for one file (JSON without its run ids and timings).
pub fn comparable(name: &str, bytes: Vec<u8>) -> Vec<u8> {
    if !name.ends_with(".json") {
        return bytes;
    }
    fn strip(v: &mut serde_json::Value) {
        match v {
            serde_json::Value::Object(m) => {
                m.retain(|k, _| k != "run_id" && !k.ends_with("seconds"));
                m.values_mut().for_each(strip);
            }
            serde_json::Value::Array(a) => a.iter_mut().for_each(strip),
            _ => {}
        }
    }
    let mut v: serde_json::Value =
        serde_json::from_slice(&bytes).unwrap_or_else(|e| panic!("{name}: not JSON: {e}"));
    strip(&mut v);
    serde_json::to_vec_pretty(&v).unwrap()
}

/// Each file of `plan --out res` run in `wd` (but the manifest), made comparable, by name.
pub fn plan_files(wd: &Workdir) -> Vec<(String, Vec<u8>)> {
    wd.run(&["plan", "--scenario", "scenario.toml", "--out", "res", "-q"])
        .expect_code(0);
    let mut files: Vec<(String, Vec<u8>)> = std::fs::read_dir(wd.join("res"))
        .unwrap()
        .map(|e| e.unwrap())
        .map(|e| {
            let name = e.file_name().to_string_lossy().into_owned();
            let bytes = comparable(&name, std::fs::read(e.path()).unwrap());
            (name, bytes)
        })
        .filter(|(n, _)| n != "manifest.json" && !n.starts_with('.'))
        .collect();
    files.sort();
    files
}

/// `dir/file size hash` for every file under the run's output directories, sorted.
fn listing(wd: &Workdir, dirs: &[&str]) -> String {
    let mut lines = Vec::new();
    for dir in dirs {
        let path = wd.join(dir);
        let is_dir = path.is_dir();
        let mut files: Vec<std::path::PathBuf> = if is_dir {
            std::fs::read_dir(&path)
                .unwrap()
                .map(|e| e.unwrap().path())
                .collect()
        } else {
            vec![path]
        };
        files.sort();
        for f in files {
            let name = f.file_name().unwrap().to_string_lossy().into_owned();
            if name == "manifest.json" || name.starts_with('.') {
                continue;
            }
            let bytes = comparable(&name, std::fs::read(&f).unwrap());
            let shown = if is_dir {
                format!("{dir}/{name}")
            } else {
                (*dir).to_owned()
            };
            lines.push(format!("{shown} {} {:016x}", bytes.len(), fnv1a64(&bytes)));
        }
    }
    lines.join("\n") + "\n"
}

#[test]
fn outputs_are_unchanged() {
    let wd = Workdir::new();
    let runs: &[&[&str]] = &[
        &[
            "-q",
            "plan",
            "--out",
            "demo",
            "--candidates",
            "--every-widening-year",
        ],
        &["-q", "appraise", "--out", "demo-appraise"],
        &["-q", "sensitivity", "--from", "demo", "--out", "demo-sens"],
        &[
            "-q",
            "risk",
            "--from",
            "demo",
            "--draws",
            "24",
            "--seed",
            "5",
            "--out",
            "demo-risk",
            "--keep-raw",
        ],
        &[
            "-q",
            "select",
            "demo/candidates.csv",
            "--limits",
            "demo/limits.csv",
            "--out",
            "demo-select",
        ],
        &["-q", "report", "--from", "demo", "--out", "demo.html"],
        &["-q", "plan", "--out", "demo-report", "--report"],
        &["-q", "init", "net", "--sections", "60", "--seed", "3"],
        &[
            "-q",
            "plan",
            "--scenario",
            "net/scenario.toml",
            "--out",
            "net-plan",
            "--candidates",
            "--every-widening-year",
        ],
        &[
            "-q",
            "appraise",
            "--scenario",
            "net/scenario.toml",
            "--out",
            "net-appraise",
        ],
        &["-q", "report", "--from", "net-plan", "--out", "net.html"],
        // A plan directory holding every analysis, and its report with every section.
        &["-q", "plan", "--out", "full"],
        &["-q", "sensitivity", "--from", "full", "--out", "full"],
        &[
            "-q", "risk", "--from", "full", "--draws", "24", "--seed", "5", "--out", "full",
        ],
        &["-q", "frontier", "--out", "full"],
        &["-q", "report", "--from", "full", "--out", "full.html"],
    ];
    for args in runs {
        wd.run(args).expect_code(0);
    }
    // Both selections are proven: their files cannot depend on how fast the machine is.
    for dir in ["demo", "net-plan", "demo-select", "demo-report"] {
        let s: serde_json::Value =
            serde_json::from_str(&wd.read(&format!("{dir}/summary.json"))).unwrap();
        assert_eq!(s["status"], "optimal", "{dir}: the selection is not proven");
    }
    let got = listing(
        &wd,
        &[
            "demo",
            "demo-appraise",
            "demo-sens",
            "demo-risk",
            "demo-select",
            "demo.html",
            "demo-report",
            "net",
            "net-plan",
            "net-appraise",
            "net.html",
            "full.html",
        ],
    );
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(LIST);
    if std::env::var_os("PAVESTRAT_BLESS").is_some() {
        std::fs::create_dir_all(path.parent().unwrap()).unwrap();
        std::fs::write(&path, &got).unwrap();
        return;
    }
    let want = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("{LIST}: {e}; record it with PAVESTRAT_BLESS=1"));
    if got != want {
        let changed: Vec<String> = want
            .lines()
            .zip(got.lines())
            .filter(|(a, b)| a != b)
            .map(|(a, b)| format!("  recorded {a}\n  now      {b}"))
            .collect();
        panic!(
            "outputs differ from {LIST} ({} recorded lines, {} now):\n{}\n\
             if the change is on purpose, record it with PAVESTRAT_BLESS=1 and say why in the commit",
            want.lines().count(),
            got.lines().count(),
            changed.join("\n")
        );
    }
}
