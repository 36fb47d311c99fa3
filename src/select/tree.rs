//! Best-bound branch and bound that proves small and medium selections optimal, pure Rust.
//!
//! Made for the structure of the selection: one choice per group and a few dozen coupling rows
//! (a multiple-choice multidimensional knapsack). Each node of the tree is the problem with some
//! candidates removed. Its bound is the Lagrangian L(λ) = Σ_j λ_j·limit_j + Σ_g max over the
//! group's remaining candidates of (value − λ·use), valid for every λ ≥ 0; λ starts from the
//! parent's prices and is re-optimised by a few projected subgradient steps with Polyak's step
//! length towards the best plan known (B. T. Polyak, "Minimization of unsmooth functionals",
//! USSR Comput. Math. and Math. Physics 9, 1969). Because the group constraints have the
//! integrality property, the best λ of a node gives its LP relaxation's bound (Geoffrion,
//! "Lagrangean relaxation for integer programming", Math. Programming Study 2, 1974); a few steps
//! give a bound at most that tight, and every one of them is valid.
//!
//! At every node, as in the exact methods for the multiple-choice multidimensional knapsack
//! (reduced-cost fixing and bound-based pruning, e.g. Ghasemi & Razzazi, "Development of core to
//! solve the multidimensional multiple-choice knapsack problem", Computers & Industrial
//! Engineering 60, 2011):
//! - **feasibility fixing**: a candidate whose use of a row, with every other group at its least
//!   use, passes the limit is removed (exact, integer uses);
//! - **reduced-cost fixing**: a candidate whose reduced-value loss against its group's best at λ
//!   takes L(λ) below the best plan known is removed — no better plan uses it;
//! - the argmax plan of each evaluation is a plan when it fits, and then a new incumbent if better;
//! - at the node's best prices the argmax plan is also rounded into a plan: repaired, group by
//!   group, at the least priced value lost per unit of excess removed, then upgraded while the
//!   rows allow, then (when it beats the best plan) improved by pair exchanges. This is the
//!   repair-and-improve pattern of the MMKP heuristics of Khan, Li, Manning & Akbar ("Solving
//!   the knapsack problem for adaptive multimedia systems", Studia Informatica Universalis 2,
//!   2002; cited from memory), applied at every node so that dense instances, where few argmax
//!   plans fit, still get good plans early.
//!
//! Branching is on a group: the child that fixes it to the candidate the subgradient steps
//! chose most often is taken at once (a dive, for plans), the child that removes that candidate
//! waits in a queue ordered by bound (best-bound search). The bound of the whole problem is
//! always the largest bound among the waiting nodes (or the best plan's value), so a search
//! stopped by its deadline still reports a valid, often tighter, bound.

use super::branch::tolerance;
use super::moves::{fits, repair, swap_search, upgrade};
use super::problem::Problem;
use std::cell::Cell;
use std::collections::BinaryHeap;
use std::rc::Rc;
use std::time::{Duration, Instant};

/// Subgradient steps at a node.
const STEPS: usize = 30;
/// Longest pair-exchange search on a new best plan.
const SWAP_TIME: Duration = Duration::from_millis(20);
/// Most waiting nodes kept (each holds a price vector and a link into the shared decisions).
const MAX_OPEN: usize = 2_000_000;
/// Most removal entries kept in the decisions of all waiting nodes together (4 bytes each).
const MAX_REMOVALS: usize = 100_000_000;

/// What the search ended with.
#[derive(Debug, Clone)]
pub struct Proof {
    /// The best plan found (the incumbent passed in, or better); empty when none was found.
    pub plan: Vec<u16>,
    pub value: f64,
    /// An upper bound on every plan's value (never below `value` when a plan was found).
    pub bound: f64,
    /// Every node was explored or pruned: `plan` is optimal to within [`tolerance`] (or, with no
    /// plan, none fits).
    pub complete: bool,
    pub nodes: u64,
}

/// Candidates removed on the way from the root to a node; shared between siblings.
struct Chain {
    removed: Vec<u32>,
    parent: Option<Rc<Chain>>,
    /// Removal entries alive in all chains together (for the memory cap).
    live: Rc<Cell<usize>>,
}

impl Chain {
    fn new(removed: Vec<u32>, parent: Option<Rc<Chain>>, live: &Rc<Cell<usize>>) -> Rc<Chain> {
        live.set(live.get() + removed.len());
        Rc::new(Chain {
            removed,
            parent,
            live: live.clone(),
        })
    }
}

impl Drop for Chain {
    fn drop(&mut self) {
        self.live.set(self.live.get() - self.removed.len());
        // Unlink iteratively: a long dive must not recurse once per level when it is freed.
        let mut next = self.parent.take();
        while let Some(rc) = next {
            match Rc::try_unwrap(rc) {
                Ok(mut c) => next = c.parent.take(),
                Err(_) => break,
            }
        }
    }
}

/// A node waiting in the queue.
struct Open {
    bound: f64,
    depth: u32,
    /// Scaled prices to start from.
    mu: Vec<f64>,
    chain: Option<Rc<Chain>>,
}

impl PartialEq for Open {
    fn eq(&self, o: &Open) -> bool {
        self.cmp(o) == std::cmp::Ordering::Equal
    }
}
impl Eq for Open {}
impl PartialOrd for Open {
    fn partial_cmp(&self, o: &Open) -> Option<std::cmp::Ordering> {
        Some(self.cmp(o))
    }
}
impl Ord for Open {
    fn cmp(&self, o: &Open) -> std::cmp::Ordering {
        self.bound
            .total_cmp(&o.bound)
            .then(self.depth.cmp(&o.depth))
    }
}

/// The search's working state.
struct Search<'a> {
    p: &'a Problem,
    rows: usize,
    /// Row scales: prices are kept as μ_j = λ_j·scale_j, subgradients as (limit − use)/scale.
    scale: Vec<f64>,
    /// Group of each candidate.
    group_of: Vec<u32>,
    best_plan: Vec<u16>,
    best_value: f64,
    found: bool,
    nodes: u64,
    // Scratch, reused at every node.
    alive: Vec<bool>,
    count: Vec<u32>,
    top: Vec<f64>,
    arg: Vec<u32>,
    best_arg: Vec<u32>,
    best_top: Vec<f64>,
    votes: Vec<u32>,
    last: Vec<u32>,
}

/// The outcome of one node.
enum Node {
    /// No plan in this node can beat the incumbent (or none fits).
    Pruned,
    /// Branch: the bound, the prices, the candidates removed here, and the branching group's
    /// candidate to fix (or remove in the other child).
    Branch {
        bound: f64,
        mu: Vec<f64>,
        removed: Vec<u32>,
        pick: u32,
    },
}

impl<'a> Search<'a> {
    fn lambda(&self, mu: &[f64]) -> Vec<f64> {
        mu.iter().zip(&self.scale).map(|(m, s)| m / s).collect()
    }

    /// Candidate `c`'s use of every row (0 where it has no entry) into `out`.
    fn dense_use(&self, c: usize, out: &mut [i64]) {
        out.fill(0);
        let (rs, vs) = self.p.uses(c);
        for (&j, &u) in rs.iter().zip(vs) {
            out[j as usize] = u;
        }
    }

    /// Group `g` is down to candidate `c`: record it and add it to the fixed groups' value and
    /// use.
    fn fix(&mut self, g: usize, c: usize, value: &mut f64, used: &mut [i64]) {
        self.arg[g] = c as u32;
        *value += self.p.value(c);
        let (rs, vs) = self.p.uses(c);
        for (&j, &u) in rs.iter().zip(vs) {
            used[j as usize] += u;
        }
    }

    fn eps(&self, bound: f64) -> f64 {
        tolerance(bound)
    }

    /// Mark the candidates of the node (root mask less the chain) in `self.alive`.
    fn apply(&mut self, root: &[bool], chain: &Option<Rc<Chain>>) {
        self.alive.copy_from_slice(root);
        let mut link = chain.as_ref();
        while let Some(c) = link {
            for &x in &c.removed {
                self.alive[x as usize] = false;
            }
            link = c.parent.as_ref();
        }
    }

    /// A plan from the node's best prices: each free group's best candidate there (the fixed
    /// groups' own), repaired until it fits and upgraded while the rows allow; the best plan
    /// known if it is worth more. Repairs may leave the node (any plan that fits is a plan).
    fn round(&mut self, free: &[usize], lambda: &[f64]) {
        let p = self.p;
        for &g in free {
            self.arg[g] = self.best_arg[g];
        }
        let mut plan: Vec<u16> = (0..p.groups())
            .map(|g| (self.arg[g] as usize - p.candidates(g).start) as u16)
            .collect();
        let mut used = p.plan_use(&plan);
        if !fits(&used, &p.limits) && !repair(p, &mut plan, &mut used, Some(lambda)) {
            return;
        }
        upgrade(p, &mut plan, &mut used, lambda);
        let mut v = p.plan_value(&plan);
        if !self.found || v > self.best_value {
            // A new best plan: pair exchanges may raise it further.
            swap_search(
                p,
                &mut plan,
                &mut used,
                Instant::now() + SWAP_TIME,
                f64::INFINITY,
            );
            v = p.plan_value(&plan);
            self.found = true;
            self.best_value = v;
            self.best_plan = plan;
        }
    }

    /// Process one node starting from scaled prices `mu`.
    #[allow(clippy::needless_range_loop)]
    fn node(&mut self, mut mu: Vec<f64>, parent_bound: f64) -> Node {
        self.nodes += 1;
        let p = self.p;
        let rows = self.rows;
        let mut removed: Vec<u32> = Vec::new();
        let groups = p.groups();
        // Groups down to one candidate are fixed: their value and use are constants here.
        let mut free: Vec<usize> = Vec::new();
        let mut fixed_value = 0.0;
        let mut fixed_use = vec![0i64; rows];
        for g in 0..groups {
            let r = p.candidates(g);
            let mut n = 0u32;
            let mut one = 0usize;
            for c in r {
                if self.alive[c] {
                    n += 1;
                    one = c;
                }
            }
            self.count[g] = n;
            match n {
                0 => return Node::Pruned,
                1 => self.fix(g, one, &mut fixed_value, &mut fixed_use),
                _ => free.push(g),
            }
        }
        // Feasibility fixing until nothing changes (a few rounds at most): `gl` holds each free
        // group's least use of each row (0 for a row a candidate does not use).
        let mut gl = vec![0i64; free.len() * rows];
        let mut dense = vec![0i64; rows];
        for _ in 0..4 {
            let mut least = fixed_use.clone();
            for (i, &g) in free.iter().enumerate() {
                let m = &mut gl[i * rows..(i + 1) * rows];
                m.fill(i64::MAX);
                for c in p.candidates(g) {
                    if !self.alive[c] {
                        continue;
                    }
                    self.dense_use(c, &mut dense);
                    for (x, &u) in m.iter_mut().zip(&dense) {
                        *x = (*x).min(u);
                    }
                }
                for (l, &x) in least.iter_mut().zip(m.iter()) {
                    *l += x;
                }
            }
            if (0..rows).any(|j| least[j] > p.limits[j]) {
                return Node::Pruned;
            }
            let mut changed = false;
            let mut room = vec![0i64; rows];
            for (i, &g) in free.iter().enumerate() {
                // Room for the group's use of each row with every other group at its least.
                for j in 0..rows {
                    room[j] = p.limits[j] - (least[j] - gl[i * rows + j]);
                }
                for c in p.candidates(g) {
                    if !self.alive[c] {
                        continue;
                    }
                    self.dense_use(c, &mut dense);
                    if dense.iter().zip(&room).any(|(u, r)| u > r) {
                        self.alive[c] = false;
                        self.count[g] -= 1;
                        removed.push(c as u32);
                        changed = true;
                    }
                }
            }
            if !changed {
                break;
            }
            // Groups that fell to one candidate become fixed.
            let mut still = Vec::with_capacity(free.len());
            for &g in &free {
                match self.count[g] {
                    0 => return Node::Pruned,
                    1 => {
                        let c = p.candidates(g).find(|&c| self.alive[c]).expect("one alive");
                        self.fix(g, c, &mut fixed_value, &mut fixed_use);
                    }
                    _ => still.push(g),
                }
            }
            free = still;
            gl.truncate(free.len() * rows);
        }
        for &g in &free {
            self.votes[g] = 0;
            self.last[g] = u32::MAX;
        }
        let limits_f: Vec<f64> = p.limits.iter().map(|&l| l as f64).collect();
        let mut best_l = f64::INFINITY;
        let mut best_mu = mu.clone();
        let mut theta = 1.0f64;
        let mut since = 0usize;
        let steps = if free.is_empty() { 1 } else { STEPS };
        for _step in 0..steps {
            let lambda = self.lambda(&mu);
            // L(λ) over the node.
            let mut total = 0.0;
            let mut value = fixed_value;
            let mut used = fixed_use.clone();
            total += fixed_value
                - lambda
                    .iter()
                    .zip(&fixed_use)
                    .map(|(x, &u)| x * u as f64)
                    .sum::<f64>();
            for &g in &free {
                let (mut t, mut a) = (f64::NEG_INFINITY, 0usize);
                for c in p.candidates(g) {
                    if self.alive[c] {
                        let r = p.reduced(c, &lambda);
                        if r > t {
                            t = r;
                            a = c;
                        }
                    }
                }
                self.top[g] = t;
                self.arg[g] = a as u32;
                total += t;
                value += p.value(a);
                let (rs, vs) = p.uses(a);
                for (&j, &u) in rs.iter().zip(vs) {
                    used[j as usize] += u;
                }
                if self.last[g] == a as u32 {
                    self.votes[g] += 1;
                }
                self.last[g] = a as u32;
            }
            let l: f64 = total
                + lambda
                    .iter()
                    .zip(&limits_f)
                    .map(|(x, b)| x * b)
                    .sum::<f64>();
            let fits = (0..rows).all(|j| used[j] <= p.limits[j]);
            if fits && (!self.found || value > self.best_value) {
                self.found = true;
                self.best_value = value;
                for g in 0..p.groups() {
                    self.best_plan[g] = (self.arg[g] as usize - p.candidates(g).start) as u16;
                }
            }
            if l < best_l {
                best_l = l;
                best_mu.copy_from_slice(&mu);
                for &g in &free {
                    self.best_arg[g] = self.arg[g];
                    self.best_top[g] = self.top[g];
                }
                since = 0;
            } else {
                since += 1;
                if since >= 3 {
                    theta *= 0.5;
                    since = 0;
                }
            }
            if self.found && best_l <= self.best_value + self.eps(best_l) {
                return Node::Pruned;
            }
            if free.is_empty() {
                break;
            }
            // Projected Polyak step in scaled prices, towards the best plan known (or 1 % below
            // the bound when there is none yet).
            let target = if self.found {
                self.best_value
            } else {
                l - 0.01 * l.abs().max(1.0)
            };
            let sub: Vec<f64> = (0..rows)
                .map(|j| (p.limits[j] - used[j]) as f64 / self.scale[j])
                .collect();
            let norm: f64 = (0..rows)
                .filter(|&j| !(mu[j] <= 0.0 && sub[j] > 0.0))
                .map(|j| sub[j] * sub[j])
                .sum();
            if norm <= 0.0 {
                // The argmax plan fits and no priced row has slack to give: L is at its minimum.
                break;
            }
            let t = theta * (l - target).max(0.0) / norm;
            if t <= 0.0 {
                break;
            }
            for j in 0..rows {
                mu[j] = (mu[j] - t * sub[j]).max(0.0);
            }
        }
        let bound = best_l.min(parent_bound);
        if free.is_empty() {
            return Node::Pruned;
        }
        let lambda = self.lambda(&best_mu);
        self.round(&free, &lambda);
        // Reduced-cost fixing at the best prices.
        let mut pick_group = usize::MAX;
        let mut pick_key = (u32::MAX, f64::INFINITY);
        for &g in &free {
            let top = self.best_top[g];
            let mut second = f64::INFINITY;
            for c in p.candidates(g) {
                if !self.alive[c] || c as u32 == self.best_arg[g] {
                    continue;
                }
                let loss = top - p.reduced(c, &lambda);
                if self.found && best_l - loss <= self.best_value + self.eps(best_l) {
                    self.alive[c] = false;
                    self.count[g] -= 1;
                    removed.push(c as u32);
                } else {
                    second = second.min(loss);
                }
            }
            if self.count[g] > 1 {
                // Branch where the steps disagreed most, then on the nearest tie.
                let key = (self.votes[g], second);
                if key.0 < pick_key.0 || (key.0 == pick_key.0 && key.1 < pick_key.1) {
                    pick_key = key;
                    pick_group = g;
                }
            }
        }
        if pick_group == usize::MAX {
            // Every group is down to one candidate: that plan, if it fits, was seen above or is
            // checked here.
            let plan: Vec<u16> = (0..p.groups())
                .map(|g| {
                    let c = p.candidates(g).find(|&c| self.alive[c]).expect("one alive");
                    (c - p.candidates(g).start) as u16
                })
                .collect();
            let used = p.plan_use(&plan);
            if (0..rows).all(|j| used[j] <= p.limits[j]) {
                let v = p.plan_value(&plan);
                if !self.found || v > self.best_value {
                    self.found = true;
                    self.best_value = v;
                    self.best_plan = plan;
                }
            }
            return Node::Pruned;
        }
        Node::Branch {
            bound,
            mu: best_mu,
            removed,
            pick: self.best_arg[pick_group],
        }
    }
}

/// When [`prove`] stops.
#[derive(Debug, Clone, Copy)]
pub struct Stop {
    /// Stop here whatever the state.
    pub deadline: Instant,
    /// Stop once the bound of the waiting nodes is within this relative gap of the best plan...
    pub gap: f64,
    /// ...but not before this instant: until then the search works towards a complete proof.
    pub gap_from: Instant,
}

/// Search for the best plan, starting from `incumbent` (a plan that fits, if known) and the
/// prices `prices` (per unit of each row, e.g. the budget prices) whose Lagrangian value is
/// `bound`, until the tree is exhausted or `stop` says.
#[allow(clippy::needless_range_loop)]
pub fn prove(
    p: &Problem,
    prices: &[f64],
    bound: f64,
    incumbent: Option<&[u16]>,
    stop: Stop,
) -> Proof {
    let deadline = stop.deadline;
    let rows = p.rows();
    let groups = p.groups();
    let n = p.candidate_count();
    let mut scale: Vec<f64> = p
        .limits
        .iter()
        .map(|&l| (l.unsigned_abs() as f64).max(1.0))
        .collect();
    for c in 0..n {
        let (rs, vs) = p.uses(c);
        for (&j, &u) in rs.iter().zip(vs) {
            let s = &mut scale[j as usize];
            *s = s.max(u.unsigned_abs() as f64 / 10.0);
        }
    }
    let mut group_of = vec![0u32; n];
    for g in 0..groups {
        for c in p.candidates(g) {
            group_of[c] = g as u32;
        }
    }
    let mut s = Search {
        p,
        rows,
        group_of,
        best_plan: incumbent.map_or_else(|| vec![0; groups], <[u16]>::to_vec),
        best_value: incumbent.map_or(f64::NEG_INFINITY, |i| p.plan_value(i)),
        found: incumbent.is_some(),
        nodes: 0,
        alive: vec![true; n],
        count: vec![0; groups],
        top: vec![0.0; groups],
        arg: vec![0; groups],
        best_arg: vec![0; groups],
        best_top: vec![0.0; groups],
        votes: vec![0; groups],
        last: vec![u32::MAX; groups],
        scale,
    };
    let root_mask = vec![true; n];
    let mu0: Vec<f64> = prices
        .iter()
        .zip(&s.scale)
        .map(|(l, sc)| (l * sc).max(0.0))
        .collect();
    let mut heap: BinaryHeap<Open> = BinaryHeap::new();
    heap.push(Open {
        bound,
        depth: 0,
        mu: mu0,
        chain: None,
    });
    let live = Rc::new(Cell::new(0usize));
    let mut complete = true;
    // The node being dived into, if any (its bound, depth, prices and chain).
    let mut dive: Option<Open> = None;
    loop {
        let current = match dive.take() {
            Some(d) => d,
            None => match heap.pop() {
                Some(o) => o,
                None => break,
            },
        };
        if s.found && current.bound <= s.best_value + tolerance(current.bound) {
            continue;
        }
        let open_bound = heap
            .peek()
            .map_or(current.bound, |o| o.bound.max(current.bound));
        if s.found
            && open_bound - s.best_value <= stop.gap * open_bound.abs().max(1.0)
            && Instant::now() >= stop.gap_from
        {
            heap.push(current);
            complete = false;
            break;
        }
        if Instant::now() >= deadline || heap.len() >= MAX_OPEN || live.get() >= MAX_REMOVALS {
            heap.push(current);
            complete = false;
            break;
        }
        s.apply(&root_mask, &current.chain);
        match s.node(current.mu, current.bound) {
            Node::Pruned => {}
            Node::Branch {
                bound,
                mu,
                removed,
                pick,
            } => {
                let here = Chain::new(removed, current.chain.clone(), &live);
                let g = s.group_of[pick as usize] as usize;
                let others: Vec<u32> = p
                    .candidates(g)
                    .filter(|&c| c != pick as usize && s.alive[c])
                    .map(|c| c as u32)
                    .collect();
                // Fix the group to `pick` (dive), or take `pick` away (queue).
                heap.push(Open {
                    bound,
                    depth: current.depth + 1,
                    mu: mu.clone(),
                    chain: Some(Chain::new(vec![pick], Some(here.clone()), &live)),
                });
                dive = Some(Open {
                    bound,
                    depth: current.depth + 1,
                    mu,
                    chain: Some(Chain::new(others, Some(here), &live)),
                });
            }
        }
    }
    let waiting = heap
        .iter()
        .map(|o| o.bound)
        .fold(f64::NEG_INFINITY, f64::max);
    let bound = if complete {
        if s.found {
            s.best_value + tolerance(s.best_value)
        } else {
            f64::NEG_INFINITY
        }
    } else {
        waiting.max(if s.found {
            s.best_value
        } else {
            f64::NEG_INFINITY
        })
    };
    Proof {
        plan: if s.found { s.best_plan } else { Vec::new() },
        value: s.best_value,
        bound,
        complete,
        nodes: s.nodes,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use std::time::Duration;

    type Groups = Vec<Vec<(f64, Vec<i64>)>>;

    fn problem(groups: &Groups, limits: &[i64]) -> Problem {
        Problem::from_dense(groups, limits)
    }

    /// The optimum by trying every plan of the (dominance-reduced) problem.
    fn brute(p: &Problem) -> Option<f64> {
        let mut best: Option<f64> = None;
        let mut plan = vec![0u16; p.groups()];
        loop {
            let u = p.plan_use(&plan);
            if u.iter().zip(&p.limits).all(|(u, l)| u <= l) {
                let v = p.plan_value(&plan);
                best = Some(best.map_or(v, |b: f64| b.max(v)));
            }
            let mut g = 0;
            loop {
                if g == p.groups() {
                    return best;
                }
                plan[g] += 1;
                if (plan[g] as usize) < p.candidates(g).len() {
                    break;
                }
                plan[g] = 0;
                g += 1;
            }
        }
    }

    fn stop(after: Duration) -> Stop {
        let now = Instant::now();
        Stop {
            deadline: now + after,
            gap: 0.0,
            gap_from: now,
        }
    }

    /// Up to 9 groups of up to 4 candidates on 1 to 4 rows, some uses negative (a target row a
    /// treatment improves), limits anywhere from impossible to slack.
    fn arb_case() -> impl Strategy<Value = (Groups, Vec<i64>, Vec<f64>)> {
        (1usize..=4).prop_flat_map(|rows| {
            let cand = (
                -30.0f64..100.0,
                proptest::collection::vec(prop_oneof![Just(0i64), 0i64..5_000, -800i64..0], rows),
            );
            (
                proptest::collection::vec(proptest::collection::vec(cand, 1..5), 1..10),
                proptest::collection::vec(-1_000i64..14_000, rows),
                proptest::collection::vec(prop_oneof![Just(0.0f64), 0.0..0.05], rows),
            )
        })
    }

    proptest! {
        #![proptest_config(ProptestConfig {
            cases: std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(64),
            ..ProptestConfig::default()
        })]

        /// Against brute force, from any prices and no incumbent: a complete search returns the
        /// optimum (or no plan exactly when none fits), its plan fits, and its bound is never
        /// below the optimum.
        #[test]
        fn complete_searches_are_optimal_and_bounds_hold((groups, limits, prices) in arb_case()) {
            let p = problem(&groups, &limits);
            let best = brute(&p);
            let l0 = super::super::dual::evaluate(&p, &prices).bound;
            let t = prove(&p, &prices, l0, None, stop(Duration::from_secs(20)));
            prop_assert!(t.complete);
            match best {
                None => prop_assert!(t.plan.is_empty()),
                Some(b) => {
                    prop_assert!(!t.plan.is_empty(), "no plan, optimum {}", b);
                    let u = p.plan_use(&t.plan);
                    prop_assert!(u.iter().zip(&p.limits).all(|(u, l)| u <= l));
                    prop_assert!((t.value - b).abs() <= 1e-9 * b.abs().max(1.0), "{} vs {}", t.value, b);
                    prop_assert!((p.plan_value(&t.plan) - t.value).abs() <= 1e-9 * b.abs().max(1.0));
                    prop_assert!(t.bound >= b);
                }
            }
        }

        /// A search stopped at once, or stopped by the requested gap, still reports a bound no
        /// lower than the optimum and a plan no better than it.
        #[test]
        fn stopped_searches_keep_a_valid_bound((groups, limits, prices) in arb_case(), gap in 0.0..0.2f64) {
            let p = problem(&groups, &limits);
            let Some(b) = brute(&p) else { return Ok(()) };
            let l0 = super::super::dual::evaluate(&p, &prices).bound;
            let t = prove(&p, &prices, l0, None, stop(Duration::ZERO));
            prop_assert!(t.bound >= b - 1e-9 * b.abs().max(1.0), "bound {} below {}", t.bound, b);
            let now = Instant::now();
            let g = Stop { deadline: now + Duration::from_secs(20), gap, gap_from: now };
            let t = prove(&p, &prices, l0, None, g);
            prop_assert!(t.bound >= b - 1e-9 * b.abs().max(1.0), "bound {} below {}", t.bound, b);
            if !t.plan.is_empty() {
                prop_assert!(t.value <= b + 1e-9 * b.abs().max(1.0));
                prop_assert!(t.value >= b - gap * t.bound.abs().max(1.0) - 1e-9 * b.abs().max(1.0));
            }
        }
    }

    #[test]
    fn reference_budget_case_is_proven_from_a_ranking_plan() {
        // ../shared/REFERENCES.md, budget-constrained selection: budget 2000; P1 (1000, 536),
        // P2 (1600, 612), P3 (900, 400) → best P1 + P3 = 936. Start from the largest-NPV-first
        // plan (P2 alone) at prices 0.4 (L = 976, worked by hand).
        let groups: Groups = vec![
            vec![(0.0, vec![0]), (536.0, vec![1000])],
            vec![(0.0, vec![0]), (612.0, vec![1600])],
            vec![(0.0, vec![0]), (400.0, vec![900])],
        ];
        let p = problem(&groups, &[2000]);
        let t = prove(
            &p,
            &[0.4],
            976.0,
            Some(&[0, 1, 0]),
            stop(Duration::from_secs(5)),
        );
        assert!(t.complete);
        assert_eq!(t.plan, vec![1, 0, 1]);
        assert!((t.value - 936.0).abs() < 1e-9);
    }
}
