//! Property tests of the economics core (proptest). Failing cases are saved by proptest under
//! `proptest-regressions/` beside this file; commit them so they are replayed on every run.

use super::budget::{best_set, greedy, Project, Ranking};
use super::incremental::analyse;
use super::irr::{irr, MAX_RATE, MIN_RATE};
use super::{Discounting, Stream, Timing};
use crate::model::Year;
use proptest::prelude::*;

fn npv_at(values: &[f64], r: f64) -> (f64, f64) {
    let mut f = 1.0;
    let (mut sum, mut scale) = (0.0, 0.0);
    for v in values {
        sum += v * f;
        scale += v.abs() * f;
        f /= 1.0 + r;
    }
    (sum, scale)
}

/// Any stream of 2–40 yearly values, some of them zero.
fn any_stream() -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(prop_oneof![3 => -1000.0..1000.0f64, 1 => Just(0.0)], 2..40)
}

/// A classic investment: an outlay now, then returns of zero or more, at least one positive.
fn investment() -> impl Strategy<Value = Vec<f64>> {
    (
        1.0..5000.0f64,
        prop::collection::vec(0.0..1000.0f64, 1..40),
        1.0..1000.0f64,
    )
        .prop_map(|(c, mut rest, last)| {
            let mut v = vec![-c];
            rest.push(last);
            v.extend(rest);
            v
        })
}

proptest! {
    // Common practice (definition of the IRR): NPV at every reported rate is zero.
    #[test]
    fn npv_is_zero_at_every_reported_rate(v in any_stream()) {
        let found = irr(&v);
        let rates = found.rates();
        for w in rates.windows(2) {
            prop_assert!(w[0] < w[1]);
        }
        for r in rates {
            prop_assert!(r > MIN_RATE && r <= MAX_RATE);
            let (npv, scale) = npv_at(&v, r);
            prop_assert!(npv.abs() <= 1e-9 * scale.max(1e-300), "npv {npv} at {r}, scale {scale}");
        }
        // Completeness: every sign change of NPV on a fine grid of rates holds a reported rate.
        let n = 3000;
        let (lo, hi) = ((1.0 + MIN_RATE).ln(), (1.0 + MAX_RATE).ln());
        let grid: Vec<f64> = (0..=n).map(|i| (lo + (hi - lo) * (i as f64 + 0.5) / (n as f64 + 1.0)).exp() - 1.0).collect();
        let rates = found.rates();
        for w in grid.windows(2) {
            let (a, sa) = npv_at(&v, w[0]);
            let (b, sb) = npv_at(&v, w[1]);
            // Only clear sign changes, not rounding noise at a root.
            if a.abs() > 1e-9 * sa && b.abs() > 1e-9 * sb && (a > 0.0) != (b > 0.0) {
                prop_assert!(rates.iter().any(|r| *r >= w[0] - 1e-12 && *r <= w[1] + 1e-12),
                    "no reported rate in [{}, {}]; found {rates:?}", w[0], w[1]);
            }
        }
    }

    // Common practice: for an outlay followed by returns, NPV falls as the rate rises, and the
    // IRR exists, is unique, and has the sign of the undiscounted net sum.
    #[test]
    fn npv_falls_with_the_rate_for_an_investment(v in investment(), r1 in -0.5..2.0f64, dr in 0.001..1.0f64) {
        let (a, _) = npv_at(&v, r1);
        let (b, _) = npv_at(&v, r1 + dr);
        prop_assert!(b < a);
        let total: f64 = v.iter().sum();
        match irr(&v).unique() {
            Some(r) => prop_assert!(r.signum() == total.signum() || r.abs() < 1e-12 || total.abs() < 1e-9),
            None => {
                // Only when the rate lies outside (-99 %, 1000 %].
                let (lo, _) = npv_at(&v, MIN_RATE + 1e-9);
                let (hi, _) = npv_at(&v, MAX_RATE);
                prop_assert!(lo.signum() == hi.signum());
            }
        }
    }

    // Common practice: present value is linear in the flows.
    #[test]
    fn pv_is_linear(x in prop::collection::vec(-1e6..1e6f64, 1..40), k in -10.0..10.0f64,
                    rate in -0.05..0.3f64, base in 1990..2060i32, first in 1990..2060i32, mid in any::<bool>()) {
        let y: Vec<f64> = x.iter().enumerate().map(|(i, v)| v * 0.5 + i as f64).collect();
        let d = Discounting::new(rate, Year(base), if mid { Timing::MidYear } else { Timing::EndOfYear }).unwrap();
        let combo: Vec<f64> = x.iter().zip(&y).map(|(a, b)| k * a + b).collect();
        let lhs = d.pv(Year(first), &combo);
        let rhs = k * d.pv(Year(first), &x) + d.pv(Year(first), &y);
        let scale: f64 = combo.iter().zip(&x).map(|(c, a)| c.abs() + (k * a).abs()).sum::<f64>()
            * d.factor(Year(first)).max(d.factor(Year(first + x.len() as i32)));
        prop_assert!((lhs - rhs).abs() <= 1e-12 * scale.max(1.0));
    }

    // Common practice: incremental analysis ends at the alternative of highest NPV (or doing
    // nothing when no NPV is positive).
    #[test]
    fn incremental_analysis_finds_the_highest_npv(
        alts in prop::collection::vec((0.0..5000.0f64, 0.0..900.0f64, 1usize..25), 1..7),
        rate in 0.0..0.15f64,
    ) {
        let d = Discounting::new(rate, Year(0), Timing::EndOfYear).unwrap();
        let named: Vec<(String, Stream)> = alts.iter().enumerate().map(|(i, (c, b, n))| {
            let mut rows = vec![(Year(0), 0.0, *c)];
            rows.extend((1..=*n as i32).map(|y| (Year(y), *b, 0.0)));
            (format!("alt{i}"), Stream::from_rows(&rows))
        }).collect();
        let a = analyse(&named, &d);
        let best = a.alternatives.iter().map(|x| x.indicators.npv).fold(f64::NEG_INFINITY, f64::max);
        match &a.winner {
            Some(w) => {
                let npv = a.alternatives.iter().find(|x| &x.name == w).unwrap().indicators.npv;
                prop_assert!(npv >= best - 1e-9 * best.abs().max(1.0));
                prop_assert!(npv > 0.0);
            }
            None => prop_assert!(best <= 1e-9 * best.abs().max(1.0)),
        }
    }

    // Common practice: the best set never exceeds the budget and is never worse than a ranking.
    #[test]
    fn best_set_fits_and_beats_rankings(
        ps in prop::collection::vec((1.0..1000.0f64, -100.0..800.0f64), 1..12),
        frac in 0.0..1.2f64,
    ) {
        let projects: Vec<Project> = ps.iter().enumerate()
            .map(|(i, (c, v))| Project { name: format!("p{i}"), cost: *c, npv: *v }).collect();
        let budget = frac * projects.iter().map(|p| p.cost).sum::<f64>();
        let best = best_set(&projects, budget).unwrap();
        prop_assert!(best.cost <= budget * (1.0 + 1e-9) + 1e-9);
        for rule in [Ranking::Npv, Ranking::NpvPerCost] {
            let g = greedy(&projects, budget, rule).unwrap();
            prop_assert!(g.cost <= budget + 1e-9);
            prop_assert!(g.npv <= best.npv + 1e-6);
        }
    }
}
