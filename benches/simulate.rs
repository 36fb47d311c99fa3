//! Simulation throughput: section × strategy × year steps per second on a synthetic network
//! drawn like the demo's (`pavestrat init --sections N`), with the shipped catalogue and
//! templates.
//!
//! Run with `cargo bench --bench simulate [-- SECTIONS]` (default 10,000); results are recorded in
//! `benches/README.md`. Strategies are enumerated before the clock starts; each timed round
//! prepares every section ([`SectionSim::new`]) and plays every strategy of it, in parallel over
//! sections as `appraise` does. Best of three rounds, on all cores and on one.

use pavestrat::demo::synth::network_csv;
use pavestrat::diag::Diagnostics;
use pavestrat::enumerate::{Enumerator, Strategy};
use pavestrat::input::{self, network};
use pavestrat::simulate::{SectionSim, Trace};
use rayon::prelude::*;
use std::hint::black_box;
use std::path::Path;
use std::time::Instant;

fn main() {
    let sections: usize = std::env::args()
        .skip(1)
        .find_map(|a| a.parse().ok())
        .unwrap_or(10_000);
    let (run, d) = input::load(
        &pavestrat::demo::SOURCE,
        Path::new(pavestrat::demo::SCENARIO),
    );
    let mut run = run.unwrap_or_else(|| panic!("the demo loads: {d}"));
    let mut d = Diagnostics::new();
    run.network = network::parse("synthetic", &network_csv(sections, 20261202), &mut d)
        .unwrap_or_else(|| panic!("the synthetic network parses: {d}"));
    let s = &run.scenario;
    let e = Enumerator::for_run(&run);
    let strategies: Vec<Vec<Strategy>> = run
        .network
        .sections
        .iter()
        .map(|x| e.strategies(x))
        .collect();
    let runs: usize = strategies.iter().map(Vec::len).sum();
    let steps = runs as f64 * f64::from(s.analysis_years);
    println!(
        "simulate: {sections} sections, {runs} strategies ({:.1} per section), {} years: {:.3e} steps a round",
        runs as f64 / sections as f64,
        s.analysis_years,
        steps
    );
    let round = || {
        let t = Instant::now();
        let check: Vec<f64> = run
            .network
            .sections
            .par_iter()
            .zip(&strategies)
            .map_init(
                || std::array::from_fn(|_| Trace::default()),
                |traces, (sec, sts)| {
                    let sim = SectionSim::new(&run, sec);
                    let mut acc = 0.0;
                    sim.run_each(sts, traces, |_, trace| {
                        acc += trace.iri[trace.iri.len() - 1] + trace.residual;
                    });
                    acc
                },
            )
            .collect();
        black_box(check);
        t.elapsed().as_secs_f64()
    };
    for threads in [rayon::current_num_threads(), 1] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap();
        let best = pool.install(|| (0..3).map(|_| round()).fold(f64::INFINITY, f64::min));
        println!(
            "  {threads} thread{}: {:.3} s a round, {:.1} million steps/s ({:.0} ns a step per thread)",
            if threads == 1 { "" } else { "s" },
            best,
            steps / best / 1e6,
            best * 1e9 * threads as f64 / steps
        );
    }
}
