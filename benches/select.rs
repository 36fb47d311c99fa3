//! Network selection at scale: synthetic networks drawn like `pavestrat init --sections N`
//! (the demo's scenario with its 30 budget lines scaled to the network, the shipped catalogue and
//! templates), planned with the decomposed path and, where it can start at all, the exact path
//! given the same time.
//!
//! Run with `cargo bench --bench select [-- SIZES]`, SIZES a comma-separated list (default
//! `1000,10000,100000`; the 1,000,000 row of `benches/README.md` was run by hand). For each size:
//! candidate building (simulation, NPV, budget use, dominance) and selection are timed
//! separately; the certified gap is the plan's own (bound − value)/bound; memory is the process's
//! peak resident set after the run (Linux `VmHWM`).

use pavestrat::demo::synth::synthetic_files;
use pavestrat::diag::Diagnostics;
use pavestrat::input::{self, network, scenario};
use pavestrat::plan::{candidates, select, Settings};
use pavestrat::select::network::{exact, relative_gap, Exact, Method, Options};
use std::path::Path;
use std::time::{Duration, Instant};

fn peak_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1)?.parse::<f64>().ok())
        })
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

fn main() {
    let sizes: Vec<usize> = std::env::args()
        .skip(1)
        .find(|a| a.chars().next().is_some_and(|c| c.is_ascii_digit()))
        .map(|a| a.split(',').filter_map(|x| x.parse().ok()).collect())
        .unwrap_or_else(|| vec![1_000, 10_000, 100_000]);
    let (run, d) = input::load(
        &pavestrat::demo::SOURCE,
        Path::new(pavestrat::demo::SCENARIO),
    );
    let demo = run.unwrap_or_else(|| panic!("the demo loads: {d}"));
    println!("select: decomposed path, then the exact path with the same time limit");
    let mut cold: Vec<(usize, pavestrat::select::problem::Problem, f64, f64)> = Vec::new();
    for &n in &sizes {
        let mut run = demo.clone();
        let mut d = Diagnostics::new();
        let (text, net) = synthetic_files(n, 7);
        run.network = network::parse("synthetic", &net, &mut d)
            .unwrap_or_else(|| panic!("the synthetic network parses: {d}"));
        run.scenario = scenario::parse("scenario.toml", &text, Path::new("."), &mut d)
            .unwrap_or_else(|| panic!("the scaled scenario parses: {d}"));
        let limit = 60.0;
        let settings = Settings {
            objective: run.scenario.plan.objective,
            budget_scale: 1.0,
            select: Options {
                method: Method::Decomposed,
                gap: 1e-4,
                time_limit: Duration::from_secs_f64(limit),
            },
        };
        let t = Instant::now();
        let c = candidates(&run, &settings).expect("candidates");
        let built = t.elapsed().as_secs_f64();
        let count_c = c.problem.candidate_count();
        let t = Instant::now();
        let rows = c.rows.len();
        let copy = (count_c <= 300_000).then(|| c.problem.clone());
        let plan = select(&run, c, &settings.select).expect("a plan");
        let took = t.elapsed().as_secs_f64();
        let o = &plan.outcome;
        println!(
            "  {n} sections, {count_c} candidates ({:.1} a section), {} lines: candidates {built:.2} s; \
             decomposed {took:.2} s, gap {:.2e} ({}), {} price updates, {} contested; peak {:.0} MB",
            count_c as f64 / n as f64,
            rows,
            o.gap,
            o.status.name(),
            o.iterations,
            o.contested,
            peak_mb()
        );
        if let Some(problem) = copy {
            cold.push((n, problem, took, o.bound));
        }
    }
    // The whole 0/1 programme from a cold start, given the decomposed path's time (run after
    // every decomposed measurement: a solver that overruns is abandoned but keeps its thread).
    for (n, problem, took, bound) in cold {
        let time = Duration::from_secs_f64(took.max(1.0));
        let t = Instant::now();
        let got = exact(problem.clone(), None, time, 1e-4);
        let spent = t.elapsed().as_secs_f64();
        match got {
            Exact::Found(x, proven) => println!(
                "  {n} sections, exact alone, {:.2} s allowed: {spent:.2} s, gap {:.2e} against the decomposed bound{}",
                time.as_secs_f64(),
                relative_gap(problem.plan_value(&x), bound),
                if proven { " (proven)" } else { "" }
            ),
            Exact::Infeasible | Exact::Nothing => println!(
                "  {n} sections, exact alone, {:.2} s allowed: no plan ({spent:.2} s)",
                time.as_secs_f64()
            ),
        }
    }
}
