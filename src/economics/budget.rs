//! Independent projects under one budget: the best set, and what ranking rules would pick.
//!
//! When projects are independent (any combination may be built) but money is short, the set of
//! greatest total NPV that fits the budget is a 0/1 knapsack, solved exactly by the network
//! selection engine ([`crate::select::network`], exact path, whole cents). Ranking rules —
//! largest NPV first, or largest BCR first, taking each project that still fits — are what
//! spreadsheets do; they are returned beside the optimum so a user can see how much value they
//! leave on the table.

use crate::select::network::{self, Method, Options};
use crate::select::problem::{Offer, Problem, ProblemError, MAX_ROW_TOTAL};
use crate::select::SelectError;
use std::time::Duration;

/// One independent project: its present cost (counted against the budget) and its NPV.
#[derive(Debug, Clone, PartialEq)]
pub struct Project {
    pub name: String,
    pub cost: f64,
    pub npv: f64,
}

/// A set of projects and its totals.
#[derive(Debug, Clone, PartialEq)]
pub struct Portfolio {
    /// Indices into the project list, ascending.
    pub chosen: Vec<usize>,
    pub cost: f64,
    pub npv: f64,
}

impl Portfolio {
    fn of(projects: &[Project], mut chosen: Vec<usize>) -> Portfolio {
        chosen.sort_unstable();
        Portfolio {
            cost: chosen.iter().map(|&i| projects[i].cost).sum(),
            npv: chosen.iter().map(|&i| projects[i].npv).sum(),
            chosen,
        }
    }
}

/// Which way an amount is rounded to whole cents.
#[derive(Debug, Clone, Copy)]
enum Toward {
    /// A cost: rounded up, so a set counted as fitting really fits.
    Up,
    /// A budget: rounded down, for the same reason.
    Down,
}

/// An amount in whole cents. An amount within floating-point noise (a billionth, relative) of a
/// whole cent is that cent, so a cost of exactly the budget still fits; any other fraction of a
/// cent is rounded `toward`. Counting costs up and the budget down means a set that fits in
/// cents has a true total cost within the budget.
fn cents(x: f64, toward: Toward) -> Result<i64, SelectError> {
    let c = x * 100.0;
    let nearest = c.round();
    let c = if (c - nearest).abs() <= 1e-9 * nearest.abs().max(1.0) {
        nearest
    } else {
        match toward {
            Toward::Up => c.ceil(),
            Toward::Down => c.floor(),
        }
    };
    if c.is_finite() && c.abs() <= MAX_ROW_TOTAL as f64 {
        Ok(c as i64)
    } else {
        Err(SelectError::Range(format!(
            "an amount ({x}) beyond the supported range"
        )))
    }
}

/// The exact best set: largest total NPV with total cost ≤ budget. Projects of negative NPV are
/// never worth taking and are offered only as "not built". Costs and the budget are counted in
/// whole cents (costs rounded up, the budget down; an amount within a billionth of a whole cent is
/// that cent), so "fits" is exact and never generous: a set that costs exactly the budget fits,
/// one that passes it by a fraction of a cent does not.
pub fn best_set(projects: &[Project], budget: f64) -> Result<Portfolio, SelectError> {
    let mut p = Problem::new(vec![cents(budget, Toward::Down)?]);
    let mut builds: Vec<Option<usize>> = Vec::with_capacity(projects.len());
    for pr in projects {
        let mut g = vec![Offer::default()];
        if pr.npv > 0.0 {
            let c = cents(pr.cost, Toward::Up)?;
            g.push(Offer {
                value: pr.npv,
                uses: if c == 0 { vec![] } else { vec![(0, c)] },
            });
        }
        // Dominance may drop "build" (a project that costs more than it is worth nothing
        // against) or "not built"; keep track of which position is which.
        let kept = p.push_group(&g).map_err(|e| match e {
            ProblemError::TooLarge(_) => SelectError::Range(format!(
                "the projects' costs together pass the largest supported total ({} money units)",
                MAX_ROW_TOTAL / 100
            )),
            other => SelectError::Solver(other.to_string()),
        })?;
        builds.push(kept.iter().position(|&k| k == 1));
    }
    let options = Options {
        method: Method::Exact,
        gap: 0.0,
        time_limit: Duration::from_secs(10),
    };
    let o = network::solve(&p, &options).map_err(|_| SelectError::Infeasible)?;
    let chosen = o
        .plan
        .iter()
        .zip(&builds)
        .enumerate()
        .filter(|(_, (&k, b))| **b == Some(k as usize))
        .map(|(i, _)| i)
        .collect();
    Ok(Portfolio::of(projects, chosen))
}

/// A ranking rule of the kind spreadsheets apply.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Ranking {
    /// Largest NPV first.
    Npv,
    /// Largest NPV per unit of cost first (NPV/cost = BCR − 1 for a pure up-front cost).
    NpvPerCost,
}

/// Walk the projects in ranking order, taking each of positive NPV that still fits (counted in
/// whole cents as [`best_set`] counts, so the two answer the same question).
pub fn greedy(projects: &[Project], budget: f64, rule: Ranking) -> Result<Portfolio, SelectError> {
    let key = |p: &Project| match rule {
        Ranking::Npv => p.npv,
        Ranking::NpvPerCost => {
            if p.cost > 0.0 {
                p.npv / p.cost
            } else {
                f64::INFINITY
            }
        }
    };
    let mut order: Vec<usize> = (0..projects.len()).collect();
    order.sort_by(|&a, &b| {
        key(&projects[b])
            .total_cmp(&key(&projects[a]))
            .then(a.cmp(&b))
    });
    let mut left = cents(budget, Toward::Down)?;
    let mut chosen = Vec::new();
    for i in order {
        let p = &projects[i];
        if p.npv > 0.0 {
            let c = cents(p.cost, Toward::Up)?;
            if c <= left {
                left -= c;
                chosen.push(i);
            }
        }
    }
    Ok(Portfolio::of(projects, chosen))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(name: &str, cost: f64, npv: f64) -> Project {
        Project {
            name: name.into(),
            cost,
            npv,
        }
    }

    // Source: shared reference values (derived): budget 2000; P1 (1000, 536), P2 (1600, 612),
    // P3 (900, 400) → best set P1 + P3 = 936; largest-NPV-first picks P2 alone, 612.
    #[test]
    fn budget_reference_case() {
        let projects = [
            p("P1", 1000.0, 536.0),
            p("P2", 1600.0, 612.0),
            p("P3", 900.0, 400.0),
        ];
        let best = best_set(&projects, 2000.0).unwrap();
        assert_eq!(best.chosen, vec![0, 2]);
        assert!((best.npv - 936.0).abs() < 1e-9);
        let by_npv = greedy(&projects, 2000.0, Ranking::Npv).unwrap();
        assert_eq!(by_npv.chosen, vec![1]);
        assert!((by_npv.npv - 612.0).abs() < 1e-9);
    }

    #[test]
    fn best_set_never_worse_than_rankings_and_fits() {
        // Small brute-force check over all 2^6 subsets of a fixed list.
        let projects = [
            p("a", 300.0, 120.0),
            p("b", 450.0, 200.0),
            p("c", 700.0, 260.0),
            p("d", 200.0, -10.0),
            p("e", 520.0, 210.0),
            p("f", 90.0, 20.0),
        ];
        for budget in [0.0, 250.0, 800.0, 1200.0, 5000.0] {
            let best = best_set(&projects, budget).unwrap();
            assert!(best.cost <= budget + 1e-9);
            let mut brute = 0.0f64;
            for mask in 0u32..64 {
                let (c, v) = (0..6)
                    .filter(|i| mask & (1 << i) != 0)
                    .fold((0.0, 0.0), |(c, v), i| {
                        (c + projects[i].cost, v + projects[i].npv)
                    });
                if c <= budget {
                    brute = brute.max(v);
                }
            }
            assert!((best.npv - brute).abs() < 1e-9, "budget {budget}");
            for rule in [Ranking::Npv, Ranking::NpvPerCost] {
                let g = greedy(&projects, budget, rule).unwrap();
                assert!(g.cost <= budget + 1e-9);
                assert!(g.npv <= best.npv + 1e-9);
            }
        }
    }

    #[test]
    fn fractions_of_a_cent_never_make_a_set_pass_the_budget() {
        // A cost a fraction of a cent over the budget does not fit; one exactly at it, or a
        // fraction of a cent under a whole-cent budget, does. Both answers agree with the rankings.
        let over = [p("a", 195.7742, 50.0)];
        assert!(best_set(&over, 195.77).unwrap().chosen.is_empty());
        assert!(greedy(&over, 195.77, Ranking::Npv)
            .unwrap()
            .chosen
            .is_empty());
        let exact = [p("a", 122_000.0, 50.0)];
        assert_eq!(best_set(&exact, 122_000.0).unwrap().chosen, vec![0]);
        assert_eq!(
            greedy(&exact, 122_000.0, Ranking::Npv).unwrap().chosen,
            vec![0]
        );
        let under = [p("a", 121_999.996, 50.0)];
        assert_eq!(best_set(&under, 122_000.0).unwrap().chosen, vec![0]);
        // 0.1 + 0.2 is not 0.3 in binary; counted in cents it is.
        let noisy = [p("a", 0.1 + 0.2, 1.0)];
        assert_eq!(best_set(&noisy, 0.3).unwrap().chosen, vec![0]);
    }
}
