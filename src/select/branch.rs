//! Depth-first branch and bound for small selections, bounded by the Lagrangian at fixed prices.
//!
//! For prices λ ≥ 0, any plan that fits the rows and keeps some groups' choices fixed is worth at
//! most L(λ) − Σ over the fixed groups of their reduced-value loss (the best reduced value of the
//! group at λ less that of the fixed choice): fixing a choice can only lower its group's term of
//! L. With λ the budget prices, most candidates lose more than the gap between L and the best
//! plan known and are never tried; the rest are enumerated, deepest-first, with a feasibility
//! test on every row (the use fixed so far plus the least use the free groups can have). When the
//! search completes, the best plan found is optimal: the proof needs no LP solver.

use super::problem::Problem;
use std::time::Instant;

/// What the search ended with.
#[derive(Debug, Clone)]
pub struct Searched {
    pub plan: Vec<u16>,
    pub value: f64,
    /// `true` when every branch was explored or pruned: the plan is optimal (or, when none was
    /// found, no plan fits).
    pub complete: bool,
    /// `false` when there was no incumbent and the search found no plan that fits.
    pub found: bool,
    pub nodes: u64,
}

/// Search for a plan better than `incumbent` (which must fit), bounded by L(`prices`) =
/// `bound`; with no incumbent, for any plan that fits and then better ones (a complete search
/// that finds none proves that no plan fits). Stops at `deadline` or after `max_nodes` nodes.
pub fn search(
    p: &Problem,
    prices: &[f64],
    bound: f64,
    incumbent: Option<&[u16]>,
    deadline: Instant,
    max_nodes: u64,
) -> Searched {
    let groups = p.groups();
    let rows = p.rows();
    let mut best_plan = incumbent.map_or_else(|| vec![0; groups], <[u16]>::to_vec);
    let mut found = incumbent.is_some();
    let mut best_value = incumbent.map_or(f64::NEG_INFINITY, |i| p.plan_value(i));
    // Each group's candidates by reduced-value loss, ascending.
    let mut options: Vec<Vec<(f64, u16)>> = Vec::with_capacity(groups);
    for g in 0..groups {
        let range = p.candidates(g);
        let r: Vec<f64> = range.clone().map(|c| p.reduced(c, prices)).collect();
        let top = r.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let mut o: Vec<(f64, u16)> = r
            .iter()
            .enumerate()
            .map(|(k, x)| ((top - x).max(0.0), k as u16))
            .collect();
        o.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        options.push(o);
    }
    // Most contested groups (smallest second loss) first.
    let mut order: Vec<usize> = (0..groups).collect();
    let second = |g: usize| options[g].get(1).map_or(f64::INFINITY, |x| x.0);
    order.sort_by(|&a, &b| second(a).total_cmp(&second(b)).then(a.cmp(&b)));
    // Least use of each row by the groups from depth d on.
    let mut rest = vec![vec![0i64; rows]; groups + 1];
    for d in (0..groups).rev() {
        let g = order[d];
        let mut least = vec![i64::MAX; rows];
        for c in p.candidates(g) {
            let mut u = vec![0i64; rows];
            let (rs, vs) = p.uses(c);
            for (&j, &x) in rs.iter().zip(vs) {
                u[j as usize] = x;
            }
            for (l, x) in least.iter_mut().zip(u) {
                *l = (*l).min(x);
            }
        }
        for j in 0..rows {
            rest[d][j] = rest[d + 1][j] + least[j];
        }
    }
    let eps = tolerance(bound);

    let mut used = vec![0i64; rows];
    let mut choice = vec![0u16; groups];
    // Stack of (depth, next option index to try at that depth).
    let mut next = vec![0usize; groups + 1];
    let mut loss_at = vec![0.0f64; groups + 1];
    let mut value_at = vec![0.0f64; groups + 1];
    let mut d = 0usize;
    let mut nodes: u64 = 0;
    let mut complete = true;
    loop {
        if d == groups {
            // A complete plan that fits (checked on the way down).
            if !found || value_at[d] > best_value + eps {
                found = true;
                best_value = value_at[d];
                for (i, &g) in order.iter().enumerate() {
                    best_plan[g] = choice[i];
                }
            }
            if d == 0 {
                break;
            }
            d -= 1;
            undo(p, &mut used, order[d], choice[d]);
            continue;
        }
        let g = order[d];
        let mut advanced = false;
        while next[d] < options[g].len() {
            let (loss, k) = options[g][next[d]];
            next[d] += 1;
            nodes += 1;
            if found && bound - (loss_at[d] + loss) <= best_value + eps {
                // Options are in loss order: the rest of this group cannot do better.
                next[d] = options[g].len();
                break;
            }
            let c = p.global(g, k);
            let (rs, vs) = p.uses(c);
            for (&j, &x) in rs.iter().zip(vs) {
                used[j as usize] += x;
            }
            // Exact: uses are integers (see `Problem`).
            let fits = (0..rows).all(|j| used[j] + rest[d + 1][j] <= p.limits[j]);
            if fits {
                choice[d] = k;
                loss_at[d + 1] = loss_at[d] + loss;
                value_at[d + 1] = value_at[d] + p.value(c);
                next[d + 1] = 0;
                d += 1;
                advanced = true;
                break;
            }
            for (&j, &x) in rs.iter().zip(vs) {
                used[j as usize] -= x;
            }
        }
        if nodes >= max_nodes || (nodes.is_multiple_of(4096) && Instant::now() >= deadline) {
            complete = false;
            break;
        }
        if advanced {
            continue;
        }
        // This depth is exhausted: go up.
        if d == 0 {
            break;
        }
        d -= 1;
        undo(p, &mut used, order[d], choice[d]);
    }
    Searched {
        plan: best_plan,
        value: best_value,
        complete,
        found,
        nodes,
    }
}

/// How much better than the best plan a branch must be able to get to be explored: a plan the
/// search calls optimal is within this of the optimum.
pub fn tolerance(bound: f64) -> f64 {
    1e-10 * bound.abs().max(1.0)
}

fn undo(p: &Problem, used: &mut [i64], g: usize, k: u16) {
    let (rs, vs) = p.uses(p.global(g, k));
    for (&j, &x) in rs.iter().zip(vs) {
        used[j as usize] -= x;
    }
}

#[cfg(test)]
#[allow(clippy::float_cmp)]
mod tests {
    use super::super::problem::Offer;
    use super::*;
    use std::time::Duration;

    #[test]
    fn proves_the_reference_budget_case() {
        // ../shared/REFERENCES.md, budget-constrained selection: budget 2000; P1 (1000, 536),
        // P2 (1600, 612), P3 (900, 400) → best P1 + P3 = 936. Start from the largest-NPV-first
        // plan (P2 alone, 612); prices 0.4 give L = 0.4·2000 + max(0, 136) + max(0, −28) +
        // max(0, 40) = 976 ≥ 936 (worked by hand).
        let mut p = Problem::new(vec![2000]);
        for (c, v) in [(1000, 536.0), (1600, 612.0), (900, 400.0)] {
            p.push_group(&[
                Offer::default(),
                Offer {
                    value: v,
                    uses: vec![(0, c)],
                },
            ])
            .unwrap();
        }
        let s = search(
            &p,
            &[0.4],
            976.0,
            Some(&[0, 1, 0]),
            Instant::now() + Duration::from_secs(5),
            u64::MAX,
        );
        assert!(s.complete);
        assert_eq!(s.plan, vec![1, 0, 1]);
        assert_eq!(s.value, 936.0);
    }

    #[test]
    fn without_an_incumbent_it_finds_a_plan_or_proves_there_is_none() {
        // Limits met exactly by one plan only: group 0 must take 7, group 1 must take 3.
        let mut p = Problem::new(vec![10]);
        for uses in [[7, 8], [3, 5]] {
            p.push_group(&[
                Offer {
                    value: 1.0,
                    uses: vec![(0, uses[0])],
                },
                Offer {
                    value: 2.0,
                    uses: vec![(0, uses[1])],
                },
            ])
            .unwrap();
        }
        let deadline = Instant::now() + Duration::from_secs(5);
        let s = search(&p, &[0.0], 4.0, None, deadline, u64::MAX);
        assert!(s.complete && s.found);
        assert_eq!(s.plan, vec![0, 0]);
        p.limits[0] = 9;
        let s = search(&p, &[0.0], 4.0, None, deadline, u64::MAX);
        assert!(s.complete && !s.found);
    }
}
