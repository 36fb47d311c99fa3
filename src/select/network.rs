//! Network selection: one candidate per group, most total value, every row within its limit —
//! by two paths behind one entry point, [`solve`].
//!
//! - **decomposed**: budget prices from the Lagrangian dual ([`super::dual`]); the groups the
//!   final combination of price plans settles are fixed, the rest (contested) are chosen by a
//!   repair to feasibility, an upgrade pass at the prices, and an exact MIP on the contested
//!   groups over the money the fixed ones leave.
//! - **exact**: the decomposed path's plan, then a best-bound branch and bound with Lagrangian
//!   node bounds ([`super::tree`]) that proves it optimal or improves it and its bound until the
//!   time limit.
//!
//! Either way the dual gives an upper bound on every plan's value, so each run reports the
//! plan's value, a bound and the gap between them — a certificate that needs no trust in the
//! path that found the plan.

use super::branch;
use super::dual::{self, Prices};
use super::moves::{fits, repair, swap_search, upgrade};
use super::problem::Problem;
use super::tree;
use good_lp::{
    constraint, variable, Expression, ProblemVariables, ResolutionError, Solution, SolutionStatus,
    Solver, SolverModel, Variable, WithInitialSolution, WithMipGap, WithTimeLimit,
};
use std::sync::mpsc;
use std::time::{Duration, Instant};

/// Which path to take.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Method {
    /// Exact for small problems, decomposed otherwise.
    #[default]
    Auto,
    Exact,
    Decomposed,
}

impl Method {
    /// The method a command-line name gives (`exact`, `decomposed`; anything else is `auto`,
    /// which the commands' value parsers leave as the only other name).
    pub fn from_name(name: &str) -> Method {
        match name {
            "exact" => Method::Exact,
            "decomposed" => Method::Decomposed,
            _ => Method::Auto,
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            Method::Auto => "auto",
            Method::Exact => "exact",
            Method::Decomposed => "decomposed",
        }
    }
}

/// How a run ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    /// The plan is proven optimal (gap within rounding).
    Optimal,
    /// The gap is within the requested gap.
    WithinGap,
    /// The time limit stopped the search with the gap above the requested one.
    TimeLimit,
    /// Every path finished but the gap stays above the requested one (the bound cannot be
    /// tightened by these methods: a real integrality gap or an unsolved contested part).
    GapOpen,
}

impl Status {
    pub fn name(self) -> &'static str {
        match self {
            Status::Optimal => "optimal",
            Status::WithinGap => "within-gap",
            Status::TimeLimit => "time-limit",
            Status::GapOpen => "gap-open",
        }
    }
}

impl Status {
    /// What the status means for the user, in words, and what to do for more: `gap` is the
    /// run's gap, `requested` the gap asked for, `seconds` the time limit it had.
    pub fn meaning(self, gap: f64, requested: f64, seconds: f64) -> String {
        let pct = |x: f64| {
            if x >= 1e-4 {
                format!("{:.2} %", x * 100.0)
            } else {
                format!("{:.4} %", x * 100.0)
            }
        };
        match self {
            Status::Optimal => "No plan that keeps every limit is better: this one is proven best.".into(),
            Status::WithinGap => format!(
                "This plan is proven within {} of the best possible, as asked (--gap {}); a smaller --gap asks for more.",
                pct(gap),
                pct(requested)
            ),
            Status::TimeLimit => format!(
                "This plan is proven within {} of the best possible; the time limit ({seconds} s) stopped the search, and more time may close the gap (for example --time-limit {}).",
                pct(gap),
                (seconds * 6.0).ceil()
            ),
            Status::GapOpen => format!(
                "This plan is proven within {} of the best possible; this path cannot close the gap further (--method exact with a longer --time-limit may).",
                pct(gap)
            ),
        }
    }
}

/// Settings of a run.
#[derive(Debug, Clone, Copy)]
pub struct Options {
    pub method: Method,
    /// Requested relative gap.
    pub gap: f64,
    pub time_limit: Duration,
}

impl Default for Options {
    fn default() -> Options {
        Options {
            method: Method::Auto,
            gap: 1e-4,
            time_limit: Duration::from_secs(10),
        }
    }
}

/// The result of a run.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// Position of the chosen candidate in each group.
    pub plan: Vec<u16>,
    pub value: f64,
    /// The plan's exact use of each row.
    pub used: Vec<i64>,
    /// Upper bound on the value of any plan.
    pub bound: f64,
    pub gap: f64,
    pub status: Status,
    /// The path that ran (`exact` or `decomposed`).
    pub method: Method,
    /// Budget prices: value per unit of each row (zero where the row cannot bind).
    pub prices: Vec<f64>,
    /// Price updates of the dual.
    pub iterations: usize,
    /// Groups left contested by the price plans.
    pub contested: usize,
}

/// Why there is no plan.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum Infeasible {
    /// These rows cannot be met even if every group takes its smallest use of them: (row, least
    /// possible use).
    #[error("rows that no plan can meet")]
    Rows(Vec<(usize, i64)>),
    /// Each row alone can be met, but a complete search proved that no plan meets them all
    /// together; these rows were broken by the closest plan found (row, its use).
    #[error("no plan meets every row together")]
    Together(Vec<(usize, i64)>),
    /// No plan that meets every row was found within the time limit, and none was proven
    /// impossible either; these rows were broken by the closest plan found (row, its use).
    #[error("no plan found within the time limit that meets every row (not proven impossible)")]
    NotFound(Vec<(usize, i64)>),
}

/// Problems at most this many candidates go to the exact path (the tree search of
/// [`super::tree`]) when the method is `auto`; larger ones to the decomposed path, whose
/// neighbourhood search improves plans faster there (measured in benches/README.md).
pub const EXACT_AUTO_CANDIDATES: usize = 10_000;
/// How long the exact path works towards a complete proof before it accepts the requested gap.
const PROOF_TIME: Duration = Duration::from_secs(1);
/// Most groups handed to the exact solver as the contested part.
const CONTESTED_CAP: usize = if cfg!(feature = "highs") { 1000 } else { 60 };
/// Node budget of the branch and bound at fixed prices (a fraction of a second): it proves
/// optimality where the prices leave few near ties, and otherwise hands over to the MIP.
const BRANCH_NODES: u64 = 5_000_000;
/// Most binaries in one window of the neighbourhood search (microlp stops improving on larger
/// ones within seconds; HiGHS copes with more).
const WINDOW_BINARIES: usize = if cfg!(feature = "highs") { 20_000 } else { 150 };
/// Problems at most this many candidates get the pair-exchange search.
const SWAP_CANDIDATES: usize = 60_000;
/// Most time one window of the neighbourhood search may take.
const WINDOW_TIME: Duration = Duration::from_secs(2);
/// Time the exact search gets to find a plan that fits (or prove there is none) when the
/// decomposed path's repair found none, even past the time limit.
const RESCUE_TIME: Duration = Duration::from_secs(2);
/// A group is settled when the price plans give one candidate at least this weight.
const SETTLED: f64 = 0.9;

/// The relative gap between a plan's value and a bound.
pub fn relative_gap(value: f64, bound: f64) -> f64 {
    let diff = (bound - value).max(0.0);
    if diff == 0.0 {
        return 0.0;
    }
    diff / bound.abs().max(value.abs()).max(1e-9)
}

/// Choose one candidate per group.
#[allow(clippy::needless_range_loop)]
pub fn solve(p: &Problem, o: &Options) -> Result<Outcome, Infeasible> {
    let start = Instant::now();
    let deadline = start + o.time_limit;
    let rows = p.rows();
    // Rows no plan can meet, even at each group's least use.
    let mut least = vec![0i64; rows];
    for g in 0..p.groups() {
        let mut m = vec![i64::MAX; rows];
        let mut seen = vec![false; rows];
        let n = p.candidates(g).len();
        let mut counts = vec![0usize; rows];
        for c in p.candidates(g) {
            let (rs, vs) = p.uses(c);
            for (&j, &u) in rs.iter().zip(vs) {
                let j = j as usize;
                m[j] = m[j].min(u);
                seen[j] = true;
                counts[j] += 1;
            }
        }
        for j in 0..rows {
            if seen[j] {
                // A candidate that does not use the row uses 0 of it.
                let lo = if counts[j] < n { m[j].min(0) } else { m[j] };
                least[j] += lo;
            }
        }
    }
    let broken: Vec<(usize, i64)> = (0..rows)
        .filter(|&j| least[j] > p.limits[j])
        .map(|j| (j, least[j]))
        .collect();
    if !broken.is_empty() {
        return Err(Infeasible::Rows(broken));
    }

    let dual_tol = (o.gap / 10.0).clamp(1e-7, 1e-5);
    let debug = crate::debug::enabled();
    let prices = dual::minimise(p, dual_tol, 3000, deadline);
    if debug {
        crate::err_line!("prices: {:.2} s", start.elapsed().as_secs_f64());
    }
    let bound = prices.bound;
    // A plan worth this much is within the requested gap.
    let enough = bound - o.gap * bound.abs();
    let (mut plan, mut open) = recover(p, &prices);
    let contested = open.len();
    // Settle the contested part again on the room the settled groups leave: its own prices and
    // combination, a few times, while it shrinks.
    for _round in 0..6 {
        if open.len() <= CONTESTED_CAP || Instant::now() >= deadline {
            break;
        }
        let mut limits = p.limits.clone();
        let mut inside = vec![false; p.groups()];
        for &g in &open {
            inside[g] = true;
        }
        for g in 0..p.groups() {
            if !inside[g] {
                let (rs, vs) = p.uses(p.global(g, plan[g]));
                for (&j, &x) in rs.iter().zip(vs) {
                    limits[j as usize] -= x;
                }
            }
        }
        let sub = p.subset(&open, limits);
        let sp = dual::minimise(&sub, dual_tol, 3000, deadline);
        let (sub_plan, sub_open) = recover(&sub, &sp);
        for (i, &g) in open.iter().enumerate() {
            plan[g] = sub_plan[i];
        }
        let next: Vec<usize> = sub_open.iter().map(|&i| open[i]).collect();
        if debug {
            crate::err_line!(
                "round: {} contested -> {} at {:.2} s",
                open.len(),
                next.len(),
                start.elapsed().as_secs_f64()
            );
        }
        if next.len() * 10 > open.len() * 9 {
            break;
        }
        open = next;
    }
    let mut used = p.plan_use(&plan);
    if !fits(&used, &p.limits) {
        repair(p, &mut plan, &mut used, None);
    }
    if fits(&used, &p.limits) {
        upgrade(p, &mut plan, &mut used, &prices.prices);
    }
    // A second start: every group at its best for the final prices, repaired at the least
    // priced loss, then upgraded; the better of the two plans goes on.
    {
        let mut other = prices.at_best.plan.clone();
        let mut u = p.plan_use(&other);
        if !fits(&u, &p.limits) {
            repair(p, &mut other, &mut u, Some(&prices.prices));
        }
        if fits(&u, &p.limits) {
            upgrade(p, &mut other, &mut u, &prices.prices);
            if debug {
                crate::err_line!(
                    "second start: {} at {:.2} s",
                    p.plan_value(&other),
                    start.elapsed().as_secs_f64()
                );
            }
            if !fits(&used, &p.limits) || p.plan_value(&other) > p.plan_value(&plan) {
                plan = other;
                used = u;
            }
        }
    }
    if fits(&used, &p.limits) {
        if debug {
            let (loss, slack) = gap_parts(p, &plan, &used, &prices.prices);
            crate::err_line!(
                "upgrade: {} at {:.2} s; gap parts: reduced-value loss {loss:.0}, priced slack {slack:.0}",
                p.plan_value(&plan),
                start.elapsed().as_secs_f64()
            );
        }
        if p.candidate_count() <= EXACT_AUTO_CANDIDATES {
            swap_search(p, &mut plan, &mut used, deadline, enough);
        }
    }
    if debug {
        crate::err_line!(
            "dual: bound {bound} after {} updates, {:.2} s; recovered plan {} fits {} contested {contested}",
            prices.iterations,
            start.elapsed().as_secs_f64(),
            p.plan_value(&plan),
            fits(&used, &p.limits)
        );
    }
    let mut method = Method::Decomposed;
    // Set when a MIP solver proved its plan optimal to within `o.gap`: its value then bounds
    // every plan's from above, up to that gap.
    let mut mip_bound: Option<f64> = None;
    let small = p.candidate_count() <= EXACT_AUTO_CANDIDATES;
    let want_exact = match o.method {
        Method::Exact => true,
        Method::Auto => small,
        Method::Decomposed => false,
    };
    let value_now = |plan: &[u16]| p.plan_value(plan);
    let gap_now = |plan: &[u16], used: &[i64]| {
        if fits(used, &p.limits) {
            relative_gap(value_now(plan), bound)
        } else {
            f64::INFINITY
        }
    };
    let mut proven_exactly = false;
    // Set when a complete search (or the MIP solver) showed that no plan meets every row.
    let mut proven_none = false;
    // The closest plan the decomposed path found, for the message when nothing fits.
    let closest = used.clone();
    if !fits(&used, &p.limits) {
        // The repair did not reach a plan that fits: hand over to the exact search, which
        // either finds one or proves there is none (given a little time beyond the limit, so
        // that a feasible problem is not called infeasible because the prices took the time).
        method = Method::Exact;
        let until = deadline.max(Instant::now() + RESCUE_TIME);
        let s = branch::search(p, &prices.prices, bound, None, until, BRANCH_NODES);
        if debug {
            crate::err_line!(
                "rescue search: {} nodes, complete {}, found {}",
                s.nodes,
                s.complete,
                s.found
            );
        }
        if s.found {
            used = p.plan_use(&s.plan);
            plan = s.plan;
            proven_exactly = s.complete;
        } else if s.complete {
            proven_none = true;
        } else {
            let left = until.saturating_duration_since(Instant::now());
            match exact(p.clone(), None, left, o.gap) {
                Exact::Found(x, optimal) => {
                    let u = p.plan_use(&x);
                    if fits(&u, &p.limits) {
                        if optimal {
                            mip_bound = Some(p.plan_value(&x));
                        }
                        plan = x;
                        used = u;
                    }
                }
                Exact::Infeasible => proven_none = true,
                Exact::Nothing => {}
            }
        }
    }
    // Set when the tree search stopped short of a complete proof: its bound (the best among its
    // waiting nodes) holds for every plan.
    let mut tree_bound: Option<f64> = None;
    if want_exact && fits(&used, &p.limits) && !proven_exactly {
        method = Method::Exact;
        if gap_now(&plan, &used) > 1e-9 {
            // A proof is sought first, for up to PROOF_TIME, even when the plan is already
            // within the requested gap; after that the search stops at the requested gap.
            let stop = tree::Stop {
                deadline,
                gap: o.gap,
                gap_from: (start + PROOF_TIME).min(deadline),
            };
            let t = tree::prove(p, &prices.prices, bound, Some(&plan), stop);
            if debug {
                crate::err_line!(
                    "tree: {} nodes, complete {}, value {} bound {} at {:.2} s",
                    t.nodes,
                    t.complete,
                    t.value,
                    t.bound,
                    start.elapsed().as_secs_f64()
                );
            }
            if t.value > p.plan_value(&plan) {
                used = p.plan_use(&t.plan);
                plan = t.plan;
            }
            if t.complete {
                proven_exactly = true;
            } else {
                tree_bound = Some(t.bound);
            }
        }
    } else if !want_exact
        && fits(&used, &p.limits)
        && gap_now(&plan, &used) > o.gap
        && Instant::now() < deadline
    {
        improve_contested(p, &mut plan, &mut used, &prices, deadline, o.gap);
        if p.candidate_count() <= SWAP_CANDIDATES && gap_now(&plan, &used) > o.gap {
            swap_search(p, &mut plan, &mut used, deadline, enough);
        }
        if debug {
            crate::err_line!(
                "windows: {} at {:.2} s",
                p.plan_value(&plan),
                start.elapsed().as_secs_f64()
            );
        }
    }
    if !fits(&used, &p.limits) {
        let broken = (0..rows)
            .filter(|&j| closest[j] > p.limits[j])
            .map(|j| (j, closest[j]))
            .collect();
        return Err(if proven_none {
            Infeasible::Together(broken)
        } else {
            Infeasible::NotFound(broken)
        });
    }
    let value = p.plan_value(&plan);
    // The search's proof holds to within its pruning tolerance; a solver's to within the gap it
    // was asked for.
    let mut bound = bound.max(value);
    if proven_exactly {
        bound = bound.min(value + branch::tolerance(bound));
    }
    if let Some(m) = mip_bound {
        bound = bound.min(m + o.gap * m.abs()).max(value);
    }
    if let Some(t) = tree_bound {
        bound = bound.min(t).max(value);
    }
    let gap = relative_gap(value, bound);
    let timed_out = Instant::now() >= deadline;
    let status = if gap <= 1e-9 {
        Status::Optimal
    } else if gap <= o.gap {
        Status::WithinGap
    } else if timed_out {
        Status::TimeLimit
    } else {
        Status::GapOpen
    };
    Ok(Outcome {
        plan,
        value,
        used,
        bound,
        gap,
        status,
        method,
        prices: prices.prices,
        iterations: prices.iterations,
        contested,
    })
}

/// The two parts of L(λ) − value(plan): each group's reduced-value loss against its best at
/// the prices, and the priced slack of the rows.
fn gap_parts(p: &Problem, plan: &[u16], used: &[i64], lambda: &[f64]) -> (f64, f64) {
    let reduced = |c: usize| p.reduced(c, lambda);
    let mut loss = 0.0;
    for (g, &k) in plan.iter().enumerate() {
        let best = p
            .candidates(g)
            .map(reduced)
            .fold(f64::NEG_INFINITY, f64::max);
        loss += best - reduced(p.global(g, k));
    }
    let slack = lambda
        .iter()
        .zip(&p.limits)
        .zip(used)
        .map(|((l, b), u)| l * (b - u) as f64)
        .sum();
    (loss, slack)
}

/// The plan the price plans' combination points to: each group's heaviest candidate. Returns
/// it and the groups with no candidate of weight ≥ [`SETTLED`] (contested).
#[allow(clippy::needless_range_loop)]
fn recover(p: &Problem, prices: &Prices) -> (Vec<u16>, Vec<usize>) {
    if prices.weights.is_empty() {
        return (prices.at_best.plan.clone(), Vec::new());
    }
    let mut plan = vec![0u16; p.groups()];
    let mut contested = Vec::new();
    let mut w: Vec<(u16, f64)> = Vec::new();
    for (g, slot) in plan.iter_mut().enumerate() {
        w.clear();
        for (pl, mu) in prices.plans.iter().zip(&prices.weights) {
            if *mu <= 0.0 {
                continue;
            }
            let k = pl.0[g];
            match w.iter_mut().find(|(kk, _)| *kk == k) {
                Some(e) => e.1 += mu,
                None => w.push((k, *mu)),
            }
        }
        let (k, m) = w
            .iter()
            .copied()
            .max_by(|a, b| a.1.total_cmp(&b.1).then(b.0.cmp(&a.0)))
            .unwrap_or((prices.at_best.plan[g], 1.0));
        *slot = k;
        if m < SETTLED {
            contested.push(g);
        }
    }
    (plan, contested)
}

/// Neighbourhood search: solve windows of groups exactly over the rows' room the other groups
/// leave, keeping each result that is worth more. The windows come from a ranking with the
/// contested groups (split by the price plans) first, then by how close each group's best two
/// candidates are at the final prices; the first window is the most contested part. Stops when
/// the plan is within `gap` of `bound`, at the deadline, or after a full sweep with no gain.
#[allow(clippy::needless_range_loop)]
fn improve_contested(
    p: &Problem,
    plan: &mut [u16],
    used: &mut [i64],
    prices: &Prices,
    deadline: Instant,
    gap: f64,
) {
    let lambda = &prices.prices;
    let mut weight_split = vec![false; p.groups()];
    if !prices.weights.is_empty() {
        for g in 0..p.groups() {
            let mut first: Option<u16> = None;
            for (pl, mu) in prices.plans.iter().zip(&prices.weights) {
                if *mu <= 1e-12 {
                    continue;
                }
                match first {
                    None => first = Some(pl.0[g]),
                    Some(k) if k != pl.0[g] => weight_split[g] = true,
                    _ => {}
                }
            }
        }
    }
    let mut ranked: Vec<(bool, f64, usize)> = (0..p.groups())
        .filter(|&g| p.candidates(g).len() > 1)
        .map(|g| {
            let mut r: Vec<f64> = p.candidates(g).map(|c| p.reduced(c, lambda)).collect();
            r.sort_by(|a, b| b.total_cmp(a));
            let margin = (r[0] - r[1]) / (r[0].abs().max(1.0));
            (!weight_split[g], margin, g)
        })
        .collect();
    ranked.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.total_cmp(&b.1)).then(a.2.cmp(&b.2)));
    if ranked.is_empty() {
        return;
    }
    let order: Vec<usize> = ranked.iter().map(|r| r.2).collect();
    let size = CONTESTED_CAP.min(order.len());
    let mut offset = 0;
    let mut since_gain = 0;
    let mut inside = vec![false; p.groups()];
    while Instant::now() < deadline && since_gain < order.len() + size {
        if relative_gap(p.plan_value(plan), prices.bound) <= gap {
            return;
        }
        // A window: groups in ranked order while their candidates fit the solver's comfortable
        // size.
        let mut chosen: Vec<usize> = Vec::new();
        let mut binaries = 0;
        for i in 0..size {
            let g = order[(offset + i) % order.len()];
            binaries += p.candidates(g).len();
            if !chosen.is_empty() && binaries > WINDOW_BINARIES {
                break;
            }
            chosen.push(g);
        }
        let taken = chosen.len();
        chosen.sort_unstable();
        chosen.dedup();
        let step = (taken / 2).max(1);
        offset = (offset + step) % order.len();
        since_gain += step;
        for &g in &chosen {
            inside[g] = true;
        }
        let mut limits = p.limits.clone();
        for g in 0..p.groups() {
            if inside[g] {
                continue;
            }
            let (rs, vs) = p.uses(p.global(g, plan[g]));
            for (&j, &x) in rs.iter().zip(vs) {
                limits[j as usize] -= x;
            }
        }
        for &g in &chosen {
            inside[g] = false;
        }
        let sub = p.subset(&chosen, limits);
        let warm: Vec<u16> = chosen.iter().map(|&g| plan[g]).collect();
        let left = deadline.saturating_duration_since(Instant::now());
        let Exact::Found(x, _) = exact(sub, Some(warm), left.min(WINDOW_TIME), gap / 10.0) else {
            continue;
        };
        let mut candidate = plan.to_vec();
        for (&g, &k) in chosen.iter().zip(&x) {
            candidate[g] = k;
        }
        let u = p.plan_use(&candidate);
        if fits(&u, &p.limits) && p.plan_value(&candidate) > p.plan_value(plan) {
            plan.copy_from_slice(&candidate);
            used.copy_from_slice(&u);
            since_gain = 0;
        }
        if taken >= order.len() {
            // One window holds every group: nothing else to try.
            return;
        }
    }
}

/// What the MIP solver came back with.
#[derive(Debug, Clone, PartialEq)]
pub enum Exact {
    /// A plan, and whether the solver proved it optimal (to within the gap it was given). The
    /// solver works to a feasibility tolerance: check the plan against the exact limits.
    Found(Vec<u16>, bool),
    /// The solver proved that no plan meets the rows (even with its tolerance, so none does
    /// exactly either).
    Infeasible,
    /// No plan in the time, or the solver failed.
    Nothing,
}

/// The whole problem `p` as a 0/1 programme, solved with this build's solver within `time`.
/// The solve runs on its own thread and is abandoned (its result ignored) if it overruns the
/// time by more than a second: solvers do not always stop on time.
pub fn exact(p: Problem, warm: Option<Vec<u16>>, time: Duration, gap: f64) -> Exact {
    if time.is_zero() {
        return Exact::Nothing;
    }
    let (tx, rx) = mpsc::channel();
    let secs = time.as_secs_f64();
    let spawned = std::thread::Builder::new()
        .name("exact-selection".into())
        .spawn(move || {
            #[cfg(feature = "highs")]
            let r = exact_with(good_lp::highs, &p, warm.as_deref(), secs, gap);
            #[cfg(not(feature = "highs"))]
            let r = exact_with(good_lp::microlp, &p, warm.as_deref(), secs, gap);
            let _ = tx.send(r);
        })
        .ok();
    if spawned.is_none() {
        return Exact::Nothing;
    }
    rx.recv_timeout(time + Duration::from_secs(1))
        .unwrap_or(Exact::Nothing)
}

fn exact_with<S: Solver>(solver: S, p: &Problem, warm: Option<&[u16]>, secs: f64, gap: f64) -> Exact
where
    S::Model: WithTimeLimit + WithInitialSolution + WithMipGap,
    <S::Model as SolverModel>::Error: Into<ResolutionError>,
{
    let mut vars = ProblemVariables::new();
    let x: Vec<Vec<Variable>> = (0..p.groups())
        .map(|g| {
            p.candidates(g)
                .map(|_| vars.add(variable().binary()))
                .collect()
        })
        .collect();
    let vscale = (0..p.candidate_count())
        .map(|c| p.value(c).abs())
        .fold(1.0, f64::max);
    let mut objective = Expression::from(0.0);
    for (g, xs) in x.iter().enumerate() {
        for (c, v) in p.candidates(g).zip(xs) {
            objective.add_mul(p.value(c) / vscale, *v);
        }
    }
    let mut rows: Vec<Expression> = (0..p.rows()).map(|_| Expression::from(0.0)).collect();
    let scale: Vec<f64> = p
        .limits
        .iter()
        .map(|l| (l.unsigned_abs() as f64).max(1.0))
        .collect();
    for (g, xs) in x.iter().enumerate() {
        for (c, v) in p.candidates(g).zip(xs) {
            let (rs, vs) = p.uses(c);
            for (&j, &u) in rs.iter().zip(vs) {
                rows[j as usize].add_mul(u as f64 / scale[j as usize], *v);
            }
        }
    }
    let mut model = vars.maximise(objective).using(solver);
    for xs in &x {
        let one: Expression = xs.iter().copied().sum();
        model = model.with(constraint!(one == 1.0));
    }
    for (j, row) in rows.into_iter().enumerate() {
        model = model.with(constraint!(row <= p.limits[j] as f64 / scale[j]));
    }
    if let Some(w) = warm {
        let start: Vec<(Variable, f64)> = x
            .iter()
            .zip(w)
            .flat_map(|(xs, &k)| {
                xs.iter()
                    .enumerate()
                    .map(move |(i, v)| (*v, if i == k as usize { 1.0 } else { 0.0 }))
            })
            .collect();
        model = model.with_initial_solution(start);
    }
    model = model.with_time_limit(secs.max(0.01));
    if let Ok(m) = model.with_mip_gap((gap as f32).max(0.0)) {
        model = m;
    } else {
        return Exact::Nothing;
    }
    let s = match model.solve().map_err(Into::into) {
        Ok(s) => s,
        Err(ResolutionError::Infeasible) => return Exact::Infeasible,
        Err(_) => return Exact::Nothing,
    };
    // Proven optimal, or proven within the gap it was given.
    let optimal = matches!(
        s.status(),
        SolutionStatus::Optimal | SolutionStatus::GapLimit
    );
    let plan: Vec<u16> = x
        .iter()
        .map(|xs| {
            xs.iter()
                .enumerate()
                .max_by(|a, b| s.value(*a.1).total_cmp(&s.value(*b.1)))
                .map_or(0, |(k, _)| k as u16)
        })
        .collect();
    Exact::Found(plan, optimal)
}

#[cfg(test)]
#[allow(clippy::float_cmp)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    type Groups = [Vec<(f64, Vec<i64>)>];

    fn problem(groups: &Groups, limits: &[i64]) -> Problem {
        Problem::from_dense(groups, limits)
    }

    /// Every combination's value and use, in odometer order.
    fn every_plan(groups: &Groups, rows: usize) -> Vec<(f64, Vec<i64>)> {
        let mut out = Vec::new();
        let mut idx = vec![0usize; groups.len()];
        loop {
            let mut used = vec![0i64; rows];
            let mut v = 0.0;
            for (g, &k) in groups.iter().zip(&idx) {
                v += g[k].0;
                for (u, c) in used.iter_mut().zip(&g[k].1) {
                    *u += c;
                }
            }
            out.push((v, used));
            let mut i = 0;
            loop {
                if i == groups.len() {
                    return out;
                }
                idx[i] += 1;
                if idx[i] < groups[i].len() {
                    break;
                }
                idx[i] = 0;
                i += 1;
            }
        }
    }

    /// Best value by trying every combination (exact integer feasibility); `None` when none
    /// fits.
    fn brute(groups: &Groups, limits: &[i64]) -> Option<f64> {
        every_plan(groups, limits.len())
            .into_iter()
            .filter(|(_, u)| u.iter().zip(limits).all(|(u, l)| u <= l))
            .map(|(v, _)| v)
            .reduce(f64::max)
    }

    fn opts(method: Method) -> Options {
        Options {
            method,
            gap: 0.0,
            time_limit: Duration::from_secs(5),
        }
    }

    #[test]
    fn budget_reference_case() {
        // ../shared/REFERENCES.md, budget-constrained selection: budget 2000, P1 (1000, 536),
        // P2 (1600, 612), P3 (900, 400): the best set is P1 + P3 = 936, where taking the largest
        // NPV first gives 612.
        let groups = vec![
            vec![(0.0, vec![0]), (536.0, vec![1000])],
            vec![(0.0, vec![0]), (612.0, vec![1600])],
            vec![(0.0, vec![0]), (400.0, vec![900])],
        ];
        for m in [Method::Exact, Method::Decomposed] {
            let o = solve(&problem(&groups, &[2000]), &opts(m)).unwrap();
            assert!((o.value - 936.0).abs() < 1e-9, "{m:?}: {}", o.value);
            assert_eq!(o.plan, vec![1, 0, 1]);
            assert!(o.bound >= 936.0 - 1e-9);
        }
    }

    #[test]
    fn a_candidate_that_costs_exactly_the_limit_is_chosen() {
        // One cent (here one unit) below the limit is not the limit: a section whose works cost
        // exactly the line's limit fits, and a plan without them is not optimal.
        let groups = vec![
            vec![(0.0, vec![0]), (1_153_974.95, vec![12_200_000])],
            vec![(0.0, vec![0]), (10.0, vec![12_200_001])],
            vec![(0.0, vec![0])],
        ];
        for limit in [12_200_000, 12_200_001] {
            for m in [Method::Exact, Method::Decomposed, Method::Auto] {
                let o = solve(&problem(&groups, &[limit]), &opts(m)).unwrap();
                assert_eq!(o.plan, vec![1, 0, 0], "{m:?} at {limit}");
                // The decomposed path proves no more than its dual's tolerance.
                if m != Method::Decomposed {
                    assert_eq!(o.status, Status::Optimal, "{m:?} at {limit}");
                }
                assert!(o.gap < 1e-6, "{m:?} at {limit}: gap {}", o.gap);
                assert!(o.bound >= 1_153_974.95);
                assert_eq!(o.used, vec![12_200_000]);
            }
        }
    }

    #[test]
    fn a_zero_limit_that_zero_use_meets_is_feasible() {
        let groups = vec![
            vec![(0.0, vec![0, 0]), (5.0, vec![3, 0])],
            vec![(0.0, vec![0, 0]), (2.0, vec![0, 4])],
        ];
        for m in [Method::Exact, Method::Decomposed] {
            let o = solve(&problem(&groups, &[0, 4]), &opts(m)).unwrap();
            assert_eq!(o.plan, vec![0, 1], "{m:?}");
            assert_eq!(o.status, Status::Optimal);
        }
    }

    #[test]
    fn unlimited_budgets_give_every_group_its_best() {
        let groups = vec![
            vec![(0.0, vec![0, 0]), (5.0, vec![3, 1]), (7.0, vec![9, 2])],
            vec![(0.0, vec![0, 0]), (2.0, vec![1, 0])],
        ];
        let o = solve(
            &problem(&groups, &[1_000_000_000, 1_000_000_000]),
            &opts(Method::Decomposed),
        )
        .unwrap();
        assert_eq!(o.plan, vec![2, 1]);
        assert_eq!(o.status, Status::Optimal);
        assert_eq!(o.prices, vec![0.0, 0.0]);
    }

    #[test]
    fn rows_nobody_can_meet_are_named() {
        let groups = vec![vec![(0.0, vec![5]), (1.0, vec![6])]];
        match solve(&problem(&groups, &[4]), &opts(Method::Auto)) {
            Err(Infeasible::Rows(r)) => assert_eq!(r, vec![(0, 5)]),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn rows_that_cannot_be_met_together_are_proven_so() {
        // Each group must spend on one of two rows; each row alone can be met (least use 0),
        // but both groups together put 2 on rows that allow 1 in all.
        let groups = vec![
            vec![(0.0, vec![1, 0]), (0.0, vec![0, 1])],
            vec![(0.0, vec![1, 0]), (0.0, vec![0, 1])],
        ];
        for m in [Method::Exact, Method::Decomposed] {
            match solve(&problem(&groups, &[1, 0]), &opts(m)) {
                Err(Infeasible::Together(_)) => {}
                other => panic!("{m:?}: {other:?}"),
            }
        }
    }

    type Case = (Vec<Vec<(f64, Vec<i64>)>>, Vec<i64>);

    fn arb_case() -> impl Strategy<Value = Case> {
        (1usize..=3).prop_flat_map(|rows| {
            let cand = (
                -20.0f64..100.0,
                proptest::collection::vec(prop_oneof![Just(0i64), 0i64..5_000], rows),
            );
            let group = proptest::collection::vec(cand, 1..4).prop_map(move |mut g| {
                // Every group may do nothing, as a section's base.
                g.insert(0, (0.0, vec![0; rows]));
                g
            });
            (
                proptest::collection::vec(group, 1..6),
                proptest::collection::vec(0i64..12_000, rows),
            )
        })
    }

    /// Groups with no zero option (commitments, or a required treatment), and limits set
    /// exactly to one plan's use — or to zero where that plan uses nothing.
    fn arb_tight_case() -> impl Strategy<Value = (Case, prop::sample::Index)> {
        (1usize..=3).prop_flat_map(|rows| {
            let cand = (
                -20.0f64..100.0,
                proptest::collection::vec(prop_oneof![Just(0i64), 0i64..5_000], rows),
            );
            let group = proptest::collection::vec(cand, 1..4);
            (
                proptest::collection::vec(group, 1..6),
                Just(vec![0i64; rows]),
                any::<prop::sample::Index>(),
            )
                .prop_map(|(g, l, i)| ((g, l), i))
        })
    }

    /// What a run claims, checked against brute force.
    fn check_claims(groups: &Groups, limits: &[i64], m: Method) -> Result<(), TestCaseError> {
        let best = brute(groups, limits);
        let p = problem(groups, limits);
        let o = match solve(&p, &opts(m)) {
            Ok(o) => o,
            Err(e) => {
                prop_assert!(
                    best.is_none(),
                    "{m:?} said {e:?} but the optimum is {best:?}"
                );
                // Infeasibility claims: `Rows` only when some row's least use passes its limit.
                return Ok(());
            }
        };
        let best = best.expect("a plan was returned, so one fits");
        let used = p.plan_use(&o.plan);
        prop_assert_eq!(&used, &o.used);
        for (u, l) in used.iter().zip(limits) {
            prop_assert!(u <= l, "{:?} uses {} of {}", m, u, l);
        }
        prop_assert!(
            o.value <= best + 1e-9,
            "{m:?} {} above optimum {best}",
            o.value
        );
        let tol = 1e-9 * best.abs().max(1.0);
        prop_assert!(
            o.bound >= best - tol,
            "{m:?} bound {} below the optimum {best}",
            o.bound
        );
        prop_assert!(
            o.value >= best - o.gap * o.bound.abs() - tol,
            "{m:?} {} not within gap {} of {best}",
            o.value,
            o.gap
        );
        match o.status {
            Status::Optimal => prop_assert!(
                (o.value - best).abs() <= tol,
                "{m:?} optimal {} vs {best}",
                o.value
            ),
            Status::WithinGap => prop_assert!(o.value >= best - 1e-4 * best.abs() - tol),
            _ => {}
        }
        Ok(())
    }

    proptest! {
        // 64 cases by default; PROPTEST_CASES sets more (CI runs a longer pass).
        #![proptest_config(ProptestConfig {
            cases: std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(64),
            ..ProptestConfig::default()
        })]

        /// Both paths against brute force: the plan fits every row, is worth no more than the
        /// optimum, lies within its reported gap of it, the bound is never below it, and the
        /// status is true.
        #[test]
        fn both_paths_agree_with_brute_force((groups, limits) in arb_case()) {
            prop_assert!(brute(&groups, &limits).is_some(), "the do-nothing plan fits");
            for m in [Method::Exact, Method::Decomposed] {
                check_claims(&groups, &limits, m)?;
                let o = solve(&problem(&groups, &limits), &opts(m)).unwrap();
                // A row whose limit is above every possible use has a zero price.
                for (j, l) in limits.iter().enumerate() {
                    let most: i64 = groups.iter().map(|g| g.iter().map(|c| c.1[j]).max().unwrap_or(0)).sum();
                    if most <= *l {
                        prop_assert_eq!(o.prices[j], 0.0);
                    }
                }
            }
        }

        /// Limits set exactly to some plan's spending (zero where it spends nothing), with no
        /// do-nothing option: never called infeasible, bound never below the optimum, statuses
        /// true — on every path.
        #[test]
        fn limits_at_a_plans_exact_use_are_feasible(((groups, _), pick) in arb_tight_case()) {
            let plans = every_plan(&groups, groups[0][0].1.len());
            let limits = plans[pick.index(plans.len())].1.clone();
            for m in [Method::Exact, Method::Decomposed, Method::Auto] {
                prop_assert!(solve(&problem(&groups, &limits), &opts(m)).is_ok(), "{m:?} infeasible at {limits:?}");
                check_claims(&groups, &limits, m)?;
            }
        }

        /// Raising a budget never lowers the optimum (exact path, proven optimal).
        #[test]
        fn more_money_never_hurts((groups, limits) in arb_case(), extra in 0i64..6_000) {
            let a = solve(&problem(&groups, &limits), &opts(Method::Exact)).unwrap();
            let more: Vec<i64> = limits.iter().map(|l| l + extra).collect();
            let b = solve(&problem(&groups, &more), &opts(Method::Exact)).unwrap();
            if a.status == Status::Optimal && b.status == Status::Optimal {
                prop_assert!(b.value >= a.value - 1e-9, "{} < {}", b.value, a.value);
            }
        }
    }
}
