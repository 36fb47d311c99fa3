//! Budget prices: the Lagrangian dual of the selection, minimised by a level bundle method.
//!
//! For prices λ ≥ 0 (one per row), L(λ) = Σ_j λ_j·limit_j + Σ_g max_k (value_gk − Σ_j λ_j·use_gkj)
//! is an upper bound on every plan's value (weak duality), and its minimum equals the LP
//! relaxation's optimum. L is convex and piecewise linear; each evaluation is one pass over the
//! groups and also gives a subgradient, limit − use(argmax plan). The level method (Lemaréchal,
//! Nemirovskii & Nesterov, "New variants of bundle methods", Math. Programming 69, 1995) keeps a
//! cutting-plane model of L, takes its minimum as a lower estimate f_low, and moves to the point
//! of the level set {model ≤ f_low + α·(f_up − f_low)} nearest the best point so far (here in the
//! 1-norm, so that both master problems are LPs).
//!
//! Each cut remembers its argmax plan. At the end, the convex combination of those plans that
//! fits the rows and has the most value (the master's dual) tells which groups are settled and
//! which are contested.
//!
//! Sums over groups are taken per fixed chunk and the chunk sums added in chunk order, so the
//! price path — and the plan — do not depend on the thread count.

use super::problem::Problem;
use good_lp::{constraint, variable, Expression, ProblemVariables, Solution, SolverModel};
use rayon::prelude::*;
use std::time::Instant;

/// Groups per parallel chunk.
const CHUNK: usize = 2048;
/// Level parameter α.
const LEVEL: f64 = 0.3;
/// A cut slack for this many updates in a row is dropped...
const PRUNE_AFTER: u32 = 10;
/// ...and at most this many are kept.
const MAX_CUTS: usize = 60;

/// One evaluation of L.
#[derive(Debug, Clone)]
pub struct Evaluation {
    /// L(λ), unscaled.
    pub bound: f64,
    /// The argmax plan's value and row use.
    pub value: f64,
    pub used: Vec<i64>,
    pub plan: Vec<u16>,
}

/// Evaluate L at `prices` (per unit of each row, unscaled).
pub fn evaluate(p: &Problem, prices: &[f64]) -> Evaluation {
    let groups = p.groups();
    let rows = p.rows();
    let mut plan = vec![0u16; groups];
    let parts: Vec<(f64, f64, Vec<i64>)> = plan
        .par_chunks_mut(CHUNK)
        .enumerate()
        .map(|(ci, out)| {
            let mut reduced_sum = 0.0;
            let mut value_sum = 0.0;
            let mut used = vec![0i64; rows];
            for (i, slot) in out.iter_mut().enumerate() {
                let g = ci * CHUNK + i;
                let range = p.candidates(g);
                let first = range.start;
                let (mut best, mut best_k) = (f64::NEG_INFINITY, first);
                for c in range {
                    let (rs, vs) = p.uses(c);
                    let mut r = p.value(c);
                    for (&j, &u) in rs.iter().zip(vs) {
                        r -= prices[j as usize] * u as f64;
                    }
                    if r > best {
                        best = r;
                        best_k = c;
                    }
                }
                *slot = (best_k - first) as u16;
                reduced_sum += best;
                value_sum += p.value(best_k);
                let (rs, vs) = p.uses(best_k);
                for (&j, &u) in rs.iter().zip(vs) {
                    used[j as usize] += u;
                }
            }
            (reduced_sum, value_sum, used)
        })
        .collect();
    let mut bound: f64 = prices
        .iter()
        .zip(&p.limits)
        .map(|(l, &b)| l * b as f64)
        .sum();
    let mut value = 0.0;
    let mut used = vec![0i64; rows];
    for (r, v, u) in parts {
        bound += r;
        value += v;
        for (a, b) in used.iter_mut().zip(u) {
            *a += b;
        }
    }
    Evaluation {
        bound,
        value,
        used,
        plan,
    }
}

/// What the price search found.
#[derive(Debug, Clone)]
pub struct Prices {
    /// The best (lowest) bound found, and its prices (unscaled).
    pub bound: f64,
    pub prices: Vec<f64>,
    /// A lower estimate of min L (the model's minimum).
    pub floor: f64,
    pub iterations: usize,
    /// Plans remembered by the cuts, with their value and use, and the weight the final master
    /// gives each (weights sum to 1 when the combination fits the rows; empty if none fits).
    pub plans: Vec<(Vec<u16>, f64, Vec<i64>)>,
    pub weights: Vec<f64>,
    /// The argmax plan at the best prices.
    pub at_best: Evaluation,
}

struct Cut {
    /// Intercept and slope in scaled price space: model(λ') = a + g·λ'.
    a: f64,
    g: Vec<f64>,
    idle: u32,
    plan: Vec<u16>,
    value: f64,
    used: Vec<i64>,
}

/// Minimise L until (f_up − f_low)/|f_up| ≤ `tolerance`, `max_iter` evaluations, or `deadline`.
pub fn minimise(p: &Problem, tolerance: f64, max_iter: usize, deadline: Instant) -> Prices {
    let rows = p.rows();
    // Scale each row to its limit (or its largest use when the limit is zero), and values to the
    // spread of the best plan, so that all prices are of order one.
    let mut scale = vec![1.0; rows];
    let mut largest = vec![0.0f64; rows];
    for c in 0..p.candidate_count() {
        let (rs, vs) = p.uses(c);
        for (&j, &u) in rs.iter().zip(vs) {
            largest[j as usize] = largest[j as usize].max(u.unsigned_abs() as f64);
        }
    }
    for j in 0..rows {
        let s = if p.limits[j] != 0 {
            p.limits[j].unsigned_abs() as f64
        } else {
            largest[j].max(1.0)
        };
        scale[j] = s;
    }
    let zero = vec![0.0; rows];
    let first = evaluate(p, &zero);
    let vscale = first.value.abs().max(1.0);
    // Caps on the scaled prices: large enough never to bind at a sensible optimum.
    let cap = 1e4;

    let to_cut = |e: Evaluation, at: &[f64]| -> Cut {
        // In scaled space: λ' = λ·scale/vscale; L/vscale = a + g·λ'.
        let g: Vec<f64> = (0..rows)
            .map(|j| (p.limits[j] - e.used[j]) as f64 / scale[j])
            .collect();
        let f = e.bound / vscale;
        let a = f - g.iter().zip(at).map(|(x, y)| x * y).sum::<f64>();
        Cut {
            a,
            g,
            idle: 0,
            plan: e.plan,
            value: e.value,
            used: e.used,
        }
    };
    let unscale =
        |l: &[f64]| -> Vec<f64> { l.iter().zip(&scale).map(|(x, s)| x * vscale / s).collect() };

    let mut centre = vec![0.0; rows];
    let mut f_up = first.bound / vscale;
    let mut best_eval = first.clone();
    let mut cuts = vec![to_cut(first, &centre)];
    let mut f_low = f64::NEG_INFINITY;
    let mut iterations = 1;
    let debug = crate::debug::enabled();
    let fits = best_eval.used.iter().zip(&p.limits).all(|(u, l)| u <= l);
    if !fits && rows > 0 {
        while iterations < max_iter && Instant::now() < deadline {
            let m = master_min(&cuts, rows, cap);
            if debug {
                crate::err_line!(
                    "it {iterations} f_up {f_up} master {:?} cuts {}",
                    m.as_ref().map(|x| x.0),
                    cuts.len()
                );
            }
            let Some((low, _)) = m else {
                break;
            };
            f_low = f_low.max(low);
            if f_up - f_low <= tolerance * f_up.abs().max(1e-9) {
                break;
            }
            let level = f_low + LEVEL * (f_up - f_low);
            let Some((next, active)) = project(&cuts, &centre, level, cap) else {
                break;
            };
            for (c, a) in cuts.iter_mut().zip(&active) {
                c.idle = if *a { 0 } else { c.idle + 1 };
            }
            let e = evaluate(p, &unscale(&next));
            iterations += 1;
            let f = e.bound / vscale;
            if f < f_up {
                f_up = f;
                centre = next.clone();
                best_eval = e.clone();
            }
            cuts.push(to_cut(e, &next));
            // Drop long-idle cuts, and the idlest beyond the cap.
            if cuts.len() > 1 {
                cuts.retain(|c| c.idle < PRUNE_AFTER);
                while cuts.len() > MAX_CUTS {
                    let (i, _) = cuts
                        .iter()
                        .enumerate()
                        .max_by_key(|(i, c)| (c.idle, usize::MAX - i))
                        .unwrap_or((0, &cuts[0]));
                    cuts.remove(i);
                }
            }
        }
    }
    // Rows whose largest possible use fits their limit cannot bind: their price is zero. Setting
    // it so never raises L (the groups gain at most λ_j·max use ≤ λ_j·limit).
    let mut max_use = vec![0i64; rows];
    for g in 0..p.groups() {
        let mut m = vec![0i64; rows];
        for c in p.candidates(g) {
            let (rs, vs) = p.uses(c);
            for (&j, &u) in rs.iter().zip(vs) {
                m[j as usize] = m[j as usize].max(u);
            }
        }
        for (a, b) in max_use.iter_mut().zip(m) {
            *a += b;
        }
    }
    let mut prices = unscale(&centre);
    let mut changed = false;
    for j in 0..rows {
        if prices[j] != 0.0 && max_use[j] <= p.limits[j] {
            prices[j] = 0.0;
            changed = true;
        }
    }
    if changed {
        let e = evaluate(p, &prices);
        if e.bound <= best_eval.bound {
            best_eval = e;
        } else {
            prices = unscale(&centre);
        }
    }
    let plans: Vec<(Vec<u16>, f64, Vec<i64>)> = cuts
        .into_iter()
        .map(|c| (c.plan, c.value, c.used))
        .collect();
    let weights = combine(&plans, &p.limits);
    Prices {
        bound: best_eval.bound,
        prices,
        floor: if f_low.is_finite() {
            f_low * vscale
        } else {
            f64::NEG_INFINITY
        },
        iterations,
        plans,
        weights,
        at_best: best_eval,
    }
}

/// min t subject to t ≥ a_i + g_i·λ, 0 ≤ λ ≤ cap.
fn master_min(cuts: &[Cut], rows: usize, cap: f64) -> Option<(f64, Vec<f64>)> {
    let mut vars = ProblemVariables::new();
    let t = vars.add(variable());
    let l: Vec<_> = (0..rows)
        .map(|_| vars.add(variable().min(0.0).max(cap)))
        .collect();
    let mut m = vars.minimise(t).using(good_lp::microlp);
    for c in cuts {
        let mut e = Expression::from(c.a);
        for (v, g) in l.iter().zip(&c.g) {
            if *g != 0.0 {
                e.add_mul(*g, *v);
            }
        }
        m = m.with(constraint!(e <= t));
    }
    let s = m.solve().ok()?;
    Some((s.value(t), l.iter().map(|v| s.value(*v)).collect()))
}

/// The point of {λ : a_i + g_i·λ ≤ level, 0 ≤ λ ≤ cap} nearest `centre` in the 1-norm, and which
/// cuts are tight there.
fn project(cuts: &[Cut], centre: &[f64], level: f64, cap: f64) -> Option<(Vec<f64>, Vec<bool>)> {
    let rows = centre.len();
    let mut vars = ProblemVariables::new();
    let l: Vec<_> = (0..rows)
        .map(|_| vars.add(variable().min(0.0).max(cap)))
        .collect();
    let dist: Vec<_> = (0..rows).map(|_| vars.add(variable().min(0.0))).collect();
    let total: Expression = dist.iter().copied().sum();
    let mut m = vars.minimise(total).using(good_lp::microlp);
    for j in 0..rows {
        m = m.with(constraint!(l[j] - dist[j] <= centre[j]));
        m = m.with(constraint!(-l[j] - dist[j] <= -centre[j]));
    }
    for c in cuts {
        let mut e = Expression::from(c.a);
        for (v, g) in l.iter().zip(&c.g) {
            if *g != 0.0 {
                e.add_mul(*g, *v);
            }
        }
        m = m.with(constraint!(e <= level));
    }
    let s = m.solve().ok()?;
    let x: Vec<f64> = l.iter().map(|v| s.value(*v)).collect();
    let active = cuts
        .iter()
        .map(|c| {
            let v = c.a + c.g.iter().zip(&x).map(|(g, y)| g * y).sum::<f64>();
            v >= level - 1e-9 * level.abs().max(1.0)
        })
        .collect();
    Some((x, active))
}

/// The convex combination of `plans` of most value whose row use fits `limits` (the master's
/// dual): weights summing to 1, or empty when no combination fits.
pub fn combine(plans: &[(Vec<u16>, f64, Vec<i64>)], limits: &[i64]) -> Vec<f64> {
    if plans.is_empty() {
        return Vec::new();
    }
    let vscale = plans.iter().map(|p| p.1.abs()).fold(1.0, f64::max);
    let mut vars = ProblemVariables::new();
    let mu: Vec<_> = plans
        .iter()
        .map(|_| vars.add(variable().min(0.0).max(1.0)))
        .collect();
    let mut obj = Expression::from(0.0);
    for (m, p) in mu.iter().zip(plans) {
        obj.add_mul(p.1 / vscale, *m);
    }
    let mut model = vars.maximise(obj).using(good_lp::microlp);
    let one: Expression = mu.iter().copied().sum();
    model = model.with(constraint!(one == 1.0));
    for (j, &limit) in limits.iter().enumerate() {
        let limit = limit as f64;
        let s = if limit != 0.0 { limit.abs() } else { 1.0 };
        let mut e = Expression::from(0.0);
        for (m, p) in mu.iter().zip(plans) {
            if p.2[j] != 0 {
                e.add_mul(p.2[j] as f64 / s, *m);
            }
        }
        model = model.with(constraint!(e <= limit / s));
    }
    match model.solve() {
        Ok(s) => mu.iter().map(|m| s.value(*m).max(0.0)).collect(),
        Err(_) => Vec::new(),
    }
}

#[cfg(test)]
#[allow(clippy::float_cmp)]
mod tests {
    use super::super::problem::Offer;
    use super::*;
    use std::time::Duration;

    fn offer(value: f64, uses: &[(u16, i64)]) -> Offer {
        Offer {
            value,
            uses: uses.to_vec(),
        }
    }

    #[test]
    fn bound_at_zero_prices_is_the_unconstrained_best() {
        let mut p = Problem::new(vec![5]);
        p.push_group(&[offer(0.0, &[]), offer(4.0, &[(0, 3)])])
            .unwrap();
        p.push_group(&[offer(0.0, &[]), offer(3.0, &[(0, 3)])])
            .unwrap();
        let e = evaluate(&p, &[0.0]);
        assert_eq!(e.bound, 7.0);
        assert_eq!(e.plan, vec![1, 1]);
        assert_eq!(e.used, vec![6]);
    }

    #[test]
    fn minimum_equals_the_lp_relaxation() {
        // Two items of use 3 under a limit of 5: the LP takes the better whole and 2/3 of the
        // other, 4 + 2/3·3 = 6 (worked by hand).
        let mut p = Problem::new(vec![5]);
        p.push_group(&[offer(0.0, &[]), offer(4.0, &[(0, 3)])])
            .unwrap();
        p.push_group(&[offer(0.0, &[]), offer(3.0, &[(0, 3)])])
            .unwrap();
        let r = minimise(&p, 1e-9, 500, Instant::now() + Duration::from_secs(30));
        assert!((r.bound - 6.0).abs() < 1e-6, "bound {}", r.bound);
        assert!((r.prices[0] - 1.0).abs() < 1e-6, "price {}", r.prices[0]);
        let w: f64 = r.weights.iter().sum();
        assert!((w - 1.0).abs() < 1e-9);
    }

    #[test]
    fn rows_that_cannot_bind_have_zero_price() {
        let mut p = Problem::new(vec![5, 100]);
        p.push_group(&[offer(0.0, &[]), offer(4.0, &[(0, 3), (1, 1)])])
            .unwrap();
        p.push_group(&[offer(0.0, &[]), offer(3.0, &[(0, 3), (1, 1)])])
            .unwrap();
        let r = minimise(&p, 1e-9, 500, Instant::now() + Duration::from_secs(30));
        assert_eq!(r.prices[1], 0.0);
        assert!(r.prices[0] > 0.0);
    }
}
