//! Monte Carlo throughput: draws per second of `pavestrat risk` on the built-in demo (40
//! sections) and on synthetic networks drawn like `pavestrat init --sections N` (the demo's
//! scenario, its uncertain inputs and its 30 budget lines scaled to the network). A draw samples
//! every uncertain input and simulates every strategy of every section (about 64 a section over
//! 30 years) plus the plan's spending; draws run in parallel. The plan held fixed is each
//! section's best strategy with no budget limits (selection is not what is measured here).
//!
//! Run with `cargo bench --bench risk [-- SIZES]`, SIZES a comma-separated list of synthetic
//! network sizes (default `10000`); the demo is always measured. Best of three rounds.

use pavestrat::analysis::held::{Every, HeldPlan};
use pavestrat::analysis::risk::{simulate, Sampling};
use pavestrat::demo::synth::synthetic_files;
use pavestrat::diag::Diagnostics;
use pavestrat::input::{self, network, scenario, Run};
use pavestrat::plan::{candidates, Settings};
use pavestrat::progress::Progress;
use std::path::Path;
use std::time::Instant;

fn unconstrained(run: &Run) -> Every {
    let c = candidates(
        run,
        &Settings {
            objective: run.scenario.plan.objective,
            budget_scale: 1.0,
            select: Default::default(),
        },
    )
    .expect("candidates");
    HeldPlan {
        chosen: c.unconstrained.iter().map(|u| u.strategy).collect(),
        plan_run: None,
    }
    .every(run)
}

fn measure(label: &str, run: &Run, draws: u64) {
    let held = unconstrained(run);
    let strategies: usize = held.strategies.iter().map(Vec::len).sum();
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let t = Instant::now();
        let s = simulate(
            run,
            &held,
            2027,
            Sampling::Random,
            0,
            draws,
            &Progress::none(),
        )
        .expect("the demo's rows");
        best = best.min(t.elapsed().as_secs_f64());
        assert_eq!(s.draws, draws);
    }
    println!(
        "  {label}: {} sections, {strategies} strategies, {} uncertain inputs, {draws} draws in {best:.2} s — {:.1} draws/s ({} threads)",
        run.network.sections.len(),
        run.scenario.uncertain.len(),
        draws as f64 / best,
        rayon::current_num_threads()
    );
}

fn main() {
    let sizes: Vec<usize> = std::env::args()
        .skip(1)
        .find(|a| a.chars().next().is_some_and(|c| c.is_ascii_digit()))
        .map(|a| a.split(',').filter_map(|x| x.parse().ok()).collect())
        .unwrap_or_else(|| vec![10_000]);
    let (run, d) = input::load(
        &pavestrat::demo::SOURCE,
        Path::new(pavestrat::demo::SCENARIO),
    );
    let demo = run.unwrap_or_else(|| panic!("the demo loads: {d}"));
    println!("risk: Monte Carlo draws per second");
    measure("demo", &demo, 1000);
    for n in sizes {
        let mut run = demo.clone();
        let mut d = Diagnostics::new();
        let (text, net) = synthetic_files(n, 7);
        run.network = network::parse("synthetic", &net, &mut d)
            .unwrap_or_else(|| panic!("the synthetic network parses: {d}"));
        run.scenario = scenario::parse("scenario.toml", &text, Path::new("."), &mut d)
            .unwrap_or_else(|| panic!("the scaled scenario parses: {d}"));
        let draws = (200_000 / n as u64).clamp(4, 1000);
        measure(&format!("synthetic {n}"), &run, draws);
        // The cost and unit-value inputs alone: every strategy simulated once, draws weigh
        // its split money.
        run.scenario
            .uncertain
            .retain(|u| pavestrat::evaluate::scales_money_only(&u.input));
        measure(
            &format!("synthetic {n}, money inputs only"),
            &run,
            draws * 20,
        );
    }
}
