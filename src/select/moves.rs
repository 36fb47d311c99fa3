//! Moves between plans: repair a plan that passes a row, upgrade groups while the rows allow,
//! and exchange pairs of groups. Shared by the decomposed path and the tree search's plans.

use super::problem::Problem;
use std::time::Instant;

/// Whether a plan's exact row use meets every limit: no tolerance, the uses are integers.
pub(super) fn fits(used: &[i64], limits: &[i64]) -> bool {
    used.iter().zip(limits).all(|(u, l)| u <= l)
}

/// Move groups to other candidates until every row fits, giving up as little value as possible
/// per unit of excess removed. Returns whether the plan fits.
#[allow(clippy::needless_range_loop)]
pub(super) fn repair(
    p: &Problem,
    plan: &mut [u16],
    used: &mut [i64],
    prices: Option<&[f64]>,
) -> bool {
    let reduced = |c: usize| prices.map_or(p.value(c), |l| p.reduced(c, l));
    let rows = p.rows();
    let scale: Vec<f64> = p
        .limits
        .iter()
        .map(|l| (l.unsigned_abs() as f64).max(1.0))
        .collect();
    let excess = |used: &[i64]| -> f64 {
        (0..rows)
            .map(|j| (used[j] - p.limits[j]).max(0) as f64 / scale[j])
            .sum()
    };
    for _round in 0..50 {
        if fits(used, &p.limits) {
            return true;
        }
        let over: Vec<bool> = (0..rows).map(|j| used[j] > p.limits[j]).collect();
        // Every move of a group that uses an over-limit row, scored by the excess it removes
        // (alone) per value given up.
        let mut moves: Vec<(f64, usize, u16)> = Vec::new();
        let e0 = excess(used);
        let mut trial = used.to_vec();
        for g in 0..p.groups() {
            let cur = p.global(g, plan[g]);
            let (rs, _) = p.uses(cur);
            if !rs.iter().any(|&j| over[j as usize]) {
                continue;
            }
            for c in p.candidates(g) {
                if c == cur {
                    continue;
                }
                trial.copy_from_slice(used);
                apply(p, &mut trial, cur, c);
                let removed = e0 - excess(&trial);
                if removed <= 0.0 {
                    continue;
                }
                let loss =
                    (reduced(cur) - reduced(c)).max(0.0) + 1e-12 * (p.value(cur).abs() + 1.0);
                moves.push((removed / loss, g, (c - p.candidates(g).start) as u16));
            }
        }
        if moves.is_empty() {
            return false;
        }
        moves.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));
        let mut moved = false;
        let mut done_groups: Vec<usize> = Vec::new();
        for (_, g, k) in moves {
            if fits(used, &p.limits) {
                break;
            }
            if done_groups.contains(&g) {
                continue;
            }
            let cur = p.global(g, plan[g]);
            let c = p.global(g, k);
            trial.copy_from_slice(used);
            apply(p, &mut trial, cur, c);
            if excess(&trial) < excess(used) {
                used.copy_from_slice(&trial);
                plan[g] = k;
                moved = true;
                done_groups.push(g);
            }
        }
        if !moved {
            return false;
        }
    }
    fits(used, &p.limits)
}

/// Replace candidate `from` by `to` in a row-use vector.
pub(super) fn apply(p: &Problem, used: &mut [i64], from: usize, to: usize) {
    let (rs, vs) = p.uses(from);
    for (&j, &u) in rs.iter().zip(vs) {
        used[j as usize] -= u;
    }
    let (rs, vs) = p.uses(to);
    for (&j, &u) in rs.iter().zip(vs) {
        used[j as usize] += u;
    }
}

/// Whether replacing `from` by `to` keeps every row within its limit.
pub(super) fn move_fits(
    p: &Problem,
    used: &[i64],
    from: usize,
    to: usize,
    delta: &mut [i64],
) -> bool {
    let (rs, vs) = p.uses(to);
    for (&j, &u) in rs.iter().zip(vs) {
        delta[j as usize] += u;
    }
    let (rs, vs) = p.uses(from);
    for (&j, &u) in rs.iter().zip(vs) {
        delta[j as usize] -= u;
    }
    let mut ok = true;
    for rs in [p.uses(to).0, p.uses(from).0] {
        for &j in rs {
            let j = j as usize;
            if delta[j] > 0 && used[j] + delta[j] > p.limits[j] {
                ok = false;
            }
        }
    }
    for rs in [p.uses(to).0, p.uses(from).0] {
        for &j in rs {
            delta[j as usize] = 0;
        }
    }
    ok
}

/// Upgrade groups to candidates of more value while the rows allow, best value per priced use
/// first, until a pass changes nothing.
#[allow(clippy::needless_range_loop)]
pub(super) fn upgrade(p: &Problem, plan: &mut [u16], used: &mut [i64], prices: &[f64]) {
    let rows = p.rows();
    let mut delta = vec![0i64; rows];
    for _pass in 0..20 {
        let mut moves: Vec<(f64, usize, u16)> = Vec::new();
        for g in 0..p.groups() {
            let cur = p.global(g, plan[g]);
            let v0 = p.value(cur);
            let mut best: Option<(f64, u16)> = None;
            for c in p.candidates(g) {
                let gain = p.value(c) - v0;
                if gain <= 0.0 || !move_fits(p, used, cur, c, &mut delta) {
                    continue;
                }
                let cost = p.priced_use(c, prices) - p.priced_use(cur, prices);
                let score = gain / cost.max(1e-12 * gain);
                if best.is_none_or(|b| score > b.0) {
                    best = Some((score, (c - p.candidates(g).start) as u16));
                }
            }
            if let Some((s, k)) = best {
                moves.push((s, g, k));
            }
        }
        if moves.is_empty() {
            return;
        }
        moves.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        let mut changed = false;
        for (_, g, k) in moves {
            let cur = p.global(g, plan[g]);
            let c = p.global(g, k);
            if p.value(c) > p.value(cur) && move_fits(p, used, cur, c, &mut delta) {
                apply(p, used, cur, c);
                plan[g] = k;
                changed = true;
            }
        }
        if !changed {
            return;
        }
    }
}

/// Pair exchanges: move two groups at once (typically one gives up money that lets the other
/// take a better candidate) when the pair raises the plan's value and every row still fits.
/// Takes the best exchange found in each sweep until none improves or the deadline passes.
pub(super) fn swap_search(
    p: &Problem,
    plan: &mut [u16],
    used: &mut [i64],
    deadline: Instant,
    enough: f64,
) {
    let rows = p.rows();
    let n = p.candidate_count();
    // Each candidate's group.
    let mut group = vec![0usize; n];
    for g in 0..p.groups() {
        for c in p.candidates(g) {
            group[c] = g;
        }
    }
    let mut delta = vec![0i64; rows];
    for _sweep in 0..1000 {
        if p.plan_value(plan) >= enough {
            return;
        }
        // Moves away from the current plan, with their value gain, best first.
        let mut moves: Vec<(f64, usize)> = (0..n)
            .filter(|&c| c != p.global(group[c], plan[group[c]]))
            .map(|c| (p.value(c) - p.value(p.global(group[c], plan[group[c]])), c))
            .collect();
        moves.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)));
        let mut best: Option<(f64, usize, usize)> = None;
        'outer: for (i, &(g1, c1)) in moves.iter().enumerate() {
            if Instant::now() >= deadline {
                break;
            }
            if g1 <= best.map_or(0.0, |b| b.0) / 2.0 && g1 <= 0.0 {
                break;
            }
            let cur1 = p.global(group[c1], plan[group[c1]]);
            for &(g2, c2) in &moves[i + 1..] {
                let gain = g1 + g2;
                if gain <= best.map_or(1e-9 * p.value(cur1).abs().max(1.0), |b| b.0) {
                    continue 'outer;
                }
                if group[c2] == group[c1] {
                    continue;
                }
                let cur2 = p.global(group[c2], plan[group[c2]]);
                for (c, sign) in [(c1, 1), (cur1, -1), (c2, 1), (cur2, -1)] {
                    let (rs, vs) = p.uses(c);
                    for (&j, &u) in rs.iter().zip(vs) {
                        delta[j as usize] += sign * u;
                    }
                }
                let ok = (0..rows).all(|j| delta[j] <= 0 || used[j] + delta[j] <= p.limits[j]);
                delta.iter_mut().for_each(|d| *d = 0);
                if ok {
                    best = Some((gain, c1, c2));
                }
            }
        }
        let Some((_, c1, c2)) = best else { return };
        for c in [c1, c2] {
            let g = group[c];
            let cur = p.global(g, plan[g]);
            apply(p, used, cur, c);
            plan[g] = (c - p.candidates(g).start) as u16;
        }
    }
}
