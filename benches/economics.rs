//! Throughput of the economics core on streams shaped like section appraisals: 30-year net
//! streams, conventional (outlay then returns) and non-conventional (later outlays too).
//!
//! Run with `cargo bench --bench economics`; results are recorded in `benches/README.md`.
//! A plain harness (no benchmarking crate) keeps the default build light: each case is timed over
//! enough repetitions to last about a second, and the best of three rounds is reported.

use pavestrat::demo::synth::SplitMix64;
use pavestrat::economics::{appraise, irr, Discounting, Stream, Timing};
use pavestrat::model::Year;
use std::hint::black_box;
use std::time::Instant;

/// The library's deterministic generator, so runs are comparable.
struct Mix(SplitMix64);

impl Mix {
    fn next(&mut self) -> f64 {
        self.0.unit()
    }
}

fn streams(n: usize, conventional: bool) -> Vec<Stream> {
    let mut g = Mix(SplitMix64::new(42));
    (0..n)
        .map(|_| {
            let mut rows = vec![(Year(2027), 0.0, 1e6 * (0.5 + g.next()))];
            for y in 2028..2057 {
                let b = 1.2e5 * (0.5 + g.next());
                let c = if !conventional && (y == 2039 || y == 2048) {
                    6e5 * g.next()
                } else {
                    0.0
                };
                rows.push((Year(y), b, c));
            }
            Stream::from_rows(&rows)
        })
        .collect()
}

fn time<F: FnMut() -> usize>(name: &str, mut f: F) {
    let mut best = f64::INFINITY;
    for _ in 0..3 {
        let t = Instant::now();
        let mut done = 0;
        while t.elapsed().as_secs_f64() < 1.0 {
            done += f();
        }
        best = best.min(t.elapsed().as_secs_f64() / done as f64);
    }
    println!("| {name} | {:.0} | {:.2} µs |", 1.0 / best, best * 1e6);
}

fn main() {
    let d = Discounting::new(0.06, Year(2027), Timing::EndOfYear).unwrap();
    let conv = streams(1000, true);
    let nonconv = streams(1000, false);
    let nets: Vec<Vec<f64>> = nonconv.iter().map(Stream::net).collect();
    println!("| case (30-year streams) | per second | each |");
    println!("|---|---|---|");
    time("NPV (PV of benefits and of costs)", || {
        for s in &conv {
            black_box(d.pv(s.first_year, &s.benefits) - d.pv(s.first_year, &s.costs));
        }
        conv.len()
    });
    time("full appraisal, conventional stream", || {
        for s in &conv {
            black_box(appraise(s, &d));
        }
        conv.len()
    });
    time("full appraisal, three sign changes", || {
        for s in &nonconv {
            black_box(appraise(s, &d));
        }
        nonconv.len()
    });
    time("IRR alone, three sign changes", || {
        for v in &nets {
            black_box(irr(v));
        }
        nets.len()
    });
}
