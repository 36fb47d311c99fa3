//! `pavestrat check`: every bad-input case gets exit 2 and a message naming file, line and field;
//! harmless variants are accepted with a note; nothing is written.

use crate::util::Workdir;

/// A working directory with the demo files and the network replaced by `network`.
fn with_network(network: &[u8]) -> Workdir {
    let wd = Workdir::new();
    wd.demo_files();
    wd.write("network.csv", network);
    wd
}

fn demo_network() -> String {
    String::from_utf8(pavestrat::demo::FILES[1].1.to_vec()).unwrap()
}

/// The demo network with line `line` (1-based, header = 1) replaced by `f(old)`.
fn edit_line(line: usize, f: impl Fn(&str) -> String) -> String {
    demo_network()
        .lines()
        .enumerate()
        .map(|(i, l)| if i + 1 == line { f(l) } else { l.to_owned() })
        .collect::<Vec<_>>()
        .join("\n")
        + "\n"
}

/// Replace field `k` (0-based) of a CSV line.
fn set_field(l: &str, k: usize, v: &str) -> String {
    let mut f: Vec<&str> = l.split(',').collect();
    f[k] = v;
    f.join(",")
}

fn expect_rejected(wd: &Workdir, needles: &[&str]) {
    let before = wd.listing();
    let out = wd.run(&["check", "--scenario", "scenario.toml"]);
    out.expect_code(2);
    for n in needles {
        out.stderr_has(n);
    }
    assert_eq!(wd.listing(), before, "check must not write files");
}

#[test]
fn demo_is_clean_and_says_it_is_the_demo() {
    let wd = Workdir::new();
    let out = wd.run(&["check"]);
    out.expect_code(0)
        .stderr_has("built-in demo")
        .stdout_has("40 sections");
    assert!(wd.listing().is_empty());
}

#[test]
fn written_demo_files_check_clean() {
    let wd = Workdir::new();
    wd.demo_files();
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(0)
        .stdout_has("scenario.toml: no errors");
}

#[test]
fn duplicate_section_ids() {
    let net = edit_line(3, |l| {
        let first = demo_network()
            .lines()
            .nth(1)
            .unwrap()
            .split(',')
            .next()
            .unwrap()
            .to_owned();
        set_field(l, 0, &first)
    });
    expect_rejected(
        &with_network(net.as_bytes()),
        &["network.csv:3: section_id: duplicate section_id `OR-01` (first on line 2)"],
    );
}

#[test]
fn negative_length() {
    let net = edit_line(5, |l| set_field(l, 1, "-1.5"));
    expect_rejected(
        &with_network(net.as_bytes()),
        &["network.csv:5: length_km: found -1.5 (negative)"],
    );
}

#[test]
fn nan_and_infinity() {
    let net = edit_line(4, |l| set_field(&set_field(l, 4, "NaN"), 6, "inf"));
    expect_rejected(
        &with_network(net.as_bytes()),
        &[
            "network.csv:4: iri: found `NaN` (NaN and infinity are not allowed)",
            "network.csv:4: aadt: found `inf`",
        ],
    );
}

#[test]
fn shares_outside_zero_to_one() {
    let net = edit_line(6, |l| set_field(&set_field(l, 7, "1.4"), 8, "4"));
    expect_rejected(
        &with_network(net.as_bytes()),
        &[
            "network.csv:6: heavy_share: found 1.4",
            "network.csv:6: growth_rate: found 4 (a percentage? write 0.04",
        ],
    );
}

#[test]
fn zero_lanes() {
    let net = edit_line(7, |l| set_field(l, 2, "0"));
    expect_rejected(
        &with_network(net.as_bytes()),
        &["network.csv:7: lanes: found `0`; expected a whole number of lanes from 1 to 12"],
    );
}

#[test]
fn empty_file_and_header_only() {
    expect_rejected(&with_network(b""), &["network.csv:1: the file is empty"]);
    let header = demo_network().lines().next().unwrap().to_owned() + "\n";
    expect_rejected(
        &with_network(header.as_bytes()),
        &["network.csv:1: a header but no rows"],
    );
}

#[test]
fn missing_referenced_file() {
    let wd = Workdir::new();
    wd.demo_files();
    std::fs::remove_file(wd.join("templates.toml")).unwrap();
    expect_rejected(
        &wd,
        &[
            "scenario.toml:21:15: files.strategies[1]: cannot read `",
            "templates.toml`",
        ],
    );
}

#[test]
fn missing_scenario_file() {
    let wd = Workdir::new();
    wd.run(&["check", "--scenario", "nowhere.toml"])
        .expect_code(2)
        .stderr_has("nowhere.toml: cannot read the file");
}

#[test]
fn byte_order_mark_is_accepted_with_a_note() {
    let mut net = b"\xEF\xBB\xBF".to_vec();
    net.extend_from_slice(demo_network().as_bytes());
    with_network(&net)
        .run(&["check", "--scenario", "scenario.toml"])
        .expect_code(0)
        .stderr_has("network.csv:1: UTF-8 with a byte-order mark");
}

/// The plan's files (all but the manifest, which records the input's bytes; JSON without its
/// run ids and timings) for `network`.
fn plan_files(network: &[u8]) -> Vec<(String, Vec<u8>)> {
    crate::golden::plan_files(&with_network(network))
}

/// The demo network saved as spreadsheets save it in other settings: semicolons with decimal
/// commas (where the comma is the decimal separator), tabs, and each with a byte-order mark
/// ("CSV UTF-8"); its words capitalised (`Single`, `DIVIDED`, `Asphalt`); its shares and rates
/// as percentages (`16%`, `2.2%`), and the scenario's discount rate as `"6%"`: every one gives
/// the plain file's plan, byte for byte.
#[test]
fn spreadsheet_variants_of_the_demo_give_the_same_plan() {
    // Without its geometry column (its well-known text holds commas of its own).
    let plain: String = demo_network()
        .lines()
        .map(|l| match l.find(",\"LINESTRING") {
            Some(k) => format!("{}\n", &l[..k]),
            None => format!("{}\n", l.trim_end_matches(",geometry")),
        })
        .collect();
    let semicolons: String = plain
        .lines()
        .map(|l| {
            // Fields hold no commas or semicolons of their own in the demo.
            l.split(',')
                .map(|f| f.replacen('.', ",", 1))
                .collect::<Vec<_>>()
                .join(";")
                + "\n"
        })
        .collect();
    assert!(semicolons.contains(";3,3;"), "decimal commas written");
    let tabs = plain.replace(',', "\t");
    // Enumerated words and surfaces in any case.
    let capitals = plain
        .replace(",single,", ",Single,")
        .replace(",divided,", ",DIVIDED,")
        .replace(",asphalt,", ",Asphalt,");
    assert!(capitals.contains(",Single,") && capitals.contains(",Asphalt,"));
    // Shares and rates as percentages: heavy_share and growth_rate (columns 8 and 9).
    let percent = |f: &str| {
        // 0.022 → 2.2%: the point moved two places in the text.
        let (int, frac) = f.split_once('.').unwrap_or((f, ""));
        let frac = format!("{frac:0<2}");
        let whole = format!("{}{}", int.trim_start_matches('0'), &frac[..2]);
        let whole = whole.trim_start_matches('0');
        let whole = if whole.is_empty() { "0" } else { whole };
        if frac.len() > 2 {
            format!("{whole}.{}%", &frac[2..])
        } else {
            format!("{whole}%")
        }
    };
    let percentages: String = plain
        .lines()
        .enumerate()
        .map(|(i, l)| {
            let mut f: Vec<String> = l.split(',').map(str::to_owned).collect();
            if i > 0 {
                f[7] = percent(&f[7]);
                f[8] = percent(&f[8]);
            }
            f.join(",") + "\n"
        })
        .collect();
    assert!(percentages.contains(",16%,2.2%,"), "{percentages}");
    let want = plan_files(plain.as_bytes());
    assert!(want.iter().any(|(n, _)| n == "section_plan.csv"));
    for (label, text) in [
        ("semicolons", &semicolons),
        ("tabs", &tabs),
        ("commas", &plain),
        ("capitals", &capitals),
        ("percentages", &percentages),
    ] {
        for bom in [false, true] {
            if label == "commas" && !bom {
                continue;
            }
            let mut bytes = if bom {
                b"\xEF\xBB\xBF".to_vec()
            } else {
                Vec::new()
            };
            bytes.extend_from_slice(text.as_bytes());
            let got = plan_files(&bytes);
            assert_eq!(
                got.iter().map(|f| &f.0).collect::<Vec<_>>(),
                want.iter().map(|f| &f.0).collect::<Vec<_>>(),
                "{label}, mark {bom}"
            );
            for ((name, a), (_, b)) in got.iter().zip(&want) {
                assert!(a == b, "{name} differs ({label}, mark {bom})");
            }
        }
    }
    // A rate as a percentage in the scenario.
    let wd = with_network(plain.as_bytes());
    let scenario = wd.read("scenario.toml");
    assert!(scenario.contains("discount_rate = 0.06\n"));
    wd.write(
        "scenario.toml",
        scenario.replace("discount_rate = 0.06\n", "discount_rate = \"6%\"\n"),
    );
    wd.run(&["plan", "--scenario", "scenario.toml", "--out", "res", "-q"])
        .expect_code(0);
    for (name, bytes) in &want {
        let got =
            crate::golden::comparable(name, std::fs::read(wd.join("res").join(name)).unwrap());
        assert!(&got == bytes, "{name} differs with discount_rate = \"6%\"");
    }
    // The notes name what was read.
    with_network(semicolons.as_bytes())
        .run(&["check", "--scenario", "scenario.toml"])
        .expect_code(0)
        .stderr_has("network.csv:1: fields separated by semicolons; accepted")
        .stderr_has("network.csv:2: length_km: `3,3` read as 3.3 (a decimal comma)");
}

#[test]
fn crlf_is_accepted_with_a_note() {
    let wd = with_network(demo_network().replace('\n', "\r\n").as_bytes());
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(0)
        .stderr_has("network.csv:1: CRLF (Windows) line ends; accepted");
}

#[test]
fn quoted_fields_are_accepted_with_a_note() {
    // Every field of line 3 quoted, as some spreadsheets save them (its geometry was quoted
    // already: its commas need the quotes, and that alone is worth no note).
    let plain = with_network(demo_network().as_bytes());
    let out = plain.run(&["check", "--scenario", "scenario.toml"]);
    out.expect_code(0);
    assert!(!out.stderr.contains("quoted fields"), "{}", out.stderr);
    let net = edit_line(3, |l| {
        let k = l.find(",\"LINESTRING").unwrap();
        let f: Vec<String> = l[..k].split(',').map(|x| format!("\"{x}\"")).collect();
        f.join(",") + &l[k..]
    });
    let wd = with_network(net.as_bytes());
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(0)
        .stderr_has("network.csv:3: quoted fields; accepted");
}

#[test]
fn non_utf8_bytes_are_accepted_with_a_note() {
    let mut net = demo_network().into_bytes();
    // "Orrin Road" on line 2 becomes "Orrín Road" in Windows-1252 (0xED).
    let pos = net.windows(5).position(|w| w == b"Orrin").unwrap();
    net[pos + 3] = 0xED;
    let wd = with_network(&net);
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(0)
        .stderr_has("network.csv:2: bytes that are not UTF-8")
        .stderr_has("Windows-1252");
}

#[test]
fn every_problem_in_every_file_at_once() {
    let wd = Workdir::new();
    wd.demo_files();
    let net = edit_line(3, |l| set_field(l, 3, "dual"));
    wd.write("network.csv", net);
    let sc = wd.read("scenario.toml").replace(
        "discount_rate = 0.06",
        "discount_rate = 0.06\ndiscount_rat = 0.05",
    );
    wd.write("scenario.toml", sc);
    let tr = wd
        .read("treatments.toml")
        .replace("life_years = 8", "life_years = 0");
    wd.write("treatments.toml", tr);
    let sc = wd.read("scenario.toml").replace(
        "last_year = 2031\nper_year = \"6500000\"",
        "last_year = 2071\nper_year = \"6500000\"",
    );
    wd.write("scenario.toml", sc);
    let tp = wd.read("templates.toml").replace(
        "treatment = \"thick-overlay\"",
        "treatment = \"thick-overlai\"",
    );
    wd.write("templates.toml", tp);
    let out = wd.run(&["check", "--scenario", "scenario.toml"]);
    out.expect_code(2)
        .stderr_has("scenario.toml:13:1: scenario.discount_rat: unknown key")
        .stderr_has("did you mean `discount_rate`?")
        .stderr_has("network.csv:3: carriageway: found `dual`")
        .stderr_has("treatments.toml:")
        .stderr_has("treatment.reseal.life_years: found 0")
        .stderr_has("unknown treatment `thick-overlai`")
        .stderr_has("did you mean `thick-overlay`?")
        .stderr_has(
            "budget[1].last_year: found 2071; expected a year of the analysis period, 2027 to 2056",
        )
        .stderr_has("5 problems found");
}

#[test]
fn unknown_columns_and_budget_regions() {
    let wd = Workdir::new();
    wd.demo_files();
    let net = demo_network().replacen(",road,", ",road_name,", 1);
    wd.write("network.csv", net);
    let sc = wd
        .read("scenario.toml")
        .replace("region = \"north\"", "region = \"nort\"");
    wd.write("scenario.toml", sc);
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("network.csv:1: column 16 `road_name`: unknown column `road_name`");
    // With the network fixed, the region is checked against it.
    wd.write("network.csv", demo_network());
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("budget[4].region: the region `nort`, which no section of")
        .stderr_has("did you mean `north`?");
}

#[test]
fn quiet_keeps_errors_only() {
    let wd = with_network(demo_network().replace('\n', "\r\n").as_bytes());
    let out = wd.run(&["--quiet", "check", "--scenario", "scenario.toml"]);
    out.expect_code(0);
    assert!(
        out.stdout.is_empty() && out.stderr.is_empty(),
        "{}",
        out.shown
    );
    let wd = with_network(b"");
    wd.run(&["check", "-q", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("the file is empty");
}

#[test]
fn scenario_from_stdin() {
    let wd = Workdir::new();
    wd.demo_files();
    let sc = wd.read("scenario.toml");
    wd.run_with_stdin(&["check", "--scenario", "-"], sc.as_bytes())
        .expect_code(0)
        .stdout_has("<stdin>: no errors");
}

#[test]
fn check_refuses_every_commitment_that_plan_would() {
    // What `plan` refuses, `check` reports, in one pass and with the same place.
    let wd = Workdir::new();
    wd.demo_files();
    let s = wd.read("scenario.toml");
    let commit = "section = \"HER-02\"\ntreatment = \"overlay\"\nyear = 2028";
    assert!(s.contains(commit));
    // A strategy name outside the period, which no template gives.
    let bad = s.replace(
        commit,
        "section = \"HER-02\"\nstrategy = \"strengthen@1999\"",
    );
    wd.write("scenario.toml", &bad);
    for cmd in ["check", "plan"] {
        wd.run(&[cmd, "--scenario", "scenario.toml"])
            .expect_code(2)
            .stderr_has("commit[1].strategy: the strategy `strengthen@1999`");
    }
    // Two treatment commitments for one section in one year.
    let bad = s.replace(
        commit,
        &format!("{commit}\n\n[[commit]]\nsection = \"HER-02\"\ntreatment = \"reconstruction\"\nyear = 2028"),
    );
    wd.write("scenario.toml", &bad);
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("a second treatment commitment for section `HER-02` in 2028");
    // A year outside the period is said once, as such, without "a treatment with no year".
    let bad = s.replace(
        commit,
        "section = \"HER-02\"\ntreatment = \"overlay\"\nyear = 2100",
    );
    wd.write("scenario.toml", &bad);
    let out = wd.run(&["check", "--scenario", "scenario.toml"]);
    out.expect_code(2).stderr_has("2100");
    assert!(!out.stderr.contains("no year"), "{}", out.stderr);
}

#[test]
fn streams_devices_and_wide_encodings_get_one_clear_line() {
    let wd = Workdir::new();
    wd.run(&["check", "--scenario", "/dev/zero"])
        .expect_code(2)
        .stderr_has("not a regular file");
    wd.demo_files();
    let net = wd.read("network.csv");
    let utf16: Vec<u8> = [0xFF, 0xFE]
        .into_iter()
        .chain(net.encode_utf16().flat_map(u16::to_le_bytes))
        .collect();
    wd.write("network.csv", utf16);
    let out = wd.run(&["check", "--scenario", "scenario.toml"]);
    out.expect_code(2).stderr_has("UTF-16 (little-endian)");
    assert!(out.stderr.contains("1 problem found"), "{}", out.stderr);
    // Nesting too deep for the TOML reader: the line is named.
    let deep = format!("[{}]\n", vec!["a"; 3000].join("."));
    wd.write("deep.toml", deep);
    wd.run(&["check", "--scenario", "deep.toml"])
        .expect_code(2)
        .stderr_has("deep.toml:1:");
}

#[test]
fn a_million_errors_print_a_page_and_a_closed_pipe_is_quiet() {
    let wd = Workdir::new();
    wd.demo_files();
    let net = wd.read("network.csv");
    let mut lines = net.lines();
    let header = lines.next().unwrap();
    let row = lines.next().unwrap();
    let mut big = format!("{header}\n");
    for _ in 0..5000 {
        big.push_str(row);
        big.push('\n');
    }
    wd.write("network.csv", big);
    let out = wd.run(&["check", "--scenario", "scenario.toml"]);
    out.expect_code(2).stderr_has("more, not shown");
    assert!(
        out.stderr.lines().count() < 260,
        "{} lines",
        out.stderr.lines().count()
    );
    // Into a pipe closed at once: no panic, the usual exit code.
    let bin = env!("CARGO_BIN_EXE_pavestrat");
    let mut child = std::process::Command::new(bin)
        .args(["check", "--scenario", "scenario.toml"])
        .current_dir(wd.path())
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stderr.take());
    drop(child.stdout.take());
    let code = child.wait().unwrap().code();
    assert_eq!(
        code,
        Some(2),
        "bad input, closed pipes: exit 2 and no panic"
    );
}

#[test]
fn mutated_demo_files_exit_0_or_2_with_a_place() {
    // A bounded fuzz of the whole binary: seeded byte mutations of each demo file, then `check`.
    // Never a panic or an internal fault; a rejection is exit 2 and every error line names the
    // file. PAVESTRAT_FUZZ_RUNS raises the count (CI runs more).
    let runs: u64 = std::env::var("PAVESTRAT_FUZZ_RUNS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(40);
    let wd = Workdir::new();
    let mut state = 0x9e37_79b9_7f4a_7c15_u64;
    let mut next = move || {
        // SplitMix64 (Steele, Lea & Flood 2014), as the tool's own streams.
        state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    };
    let names = [
        "scenario.toml",
        "network.csv",
        "treatments.toml",
        "templates.toml",
    ];
    for i in 0..runs {
        wd.demo_files();
        let name = names[(i % 4) as usize];
        let mut b = std::fs::read(wd.join(name)).unwrap();
        for _ in 0..1 + next() % 6 {
            let at = (next() as usize) % b.len().max(1);
            let x = next() as u8;
            match next() % 4 {
                0 if !b.is_empty() => b[at] ^= x | 1,
                1 => b.insert(at, x),
                2 if !b.is_empty() => {
                    b.remove(at);
                }
                _ => {
                    let end = (at + 1 + (next() as usize) % 40).min(b.len());
                    let piece = b[at..end].to_vec();
                    b.splice(at..at, piece);
                }
            }
        }
        wd.write(name, &b);
        let out = wd.run(&["check", "--scenario", "scenario.toml"]);
        assert!(
            out.code == 0 || out.code == 2,
            "run {i}, {name}: exit {}\n{}",
            out.code,
            out.shown
        );
        if out.code == 2 {
            for line in out.stderr.lines().filter(|l| l.starts_with("error: ")) {
                assert!(
                    names.iter().any(|n| line.contains(n)),
                    "run {i}: an error without its file: {line}"
                );
            }
        }
    }
}
