//! Sensitivity tests and switching values for each section's chosen strategy and for the network
//! plan (held fixed).
//!
//! The usual tests (common practice in project appraisal): capital costs and road-user unit
//! values each 20 % lower and higher, traffic growth one point lower and higher, and the discount
//! rate at two other rates (by default two points either side). Switching values: for each input
//! and each direction, the value at which the NPV reaches zero, and the value at which the
//! section's best strategy (the highest NPV at the scenario's values, the base counting as zero)
//! gives way to another. They are found by stepping outward from the scenario's value on a grid
//! and refining the first change by bisection (to 10⁻⁹ of the input's scale); a change between two
//! grid points that undoes itself before the next is not seen. None is reported when no change
//! happens within the input's search range: factors 0.01 to 11, growth ±10 points, rates 0 to
//! 100 %.

use crate::analysis::held::HeldPlan;
use crate::enumerate::Strategy;
use crate::enumerate::{Enumerator, StrategyRef};
use crate::evaluate::{Parts, Scales, Split};
use crate::input::Run;
use crate::model::network::Section;
use crate::progress::Progress;
use crate::simulate::{SectionSim, Trace};
use rayon::prelude::*;

/// The inputs tested, as [`crate::analysis::vary`] names them, with how they are shown.
pub const INPUTS: [(&str, &str); 4] = [
    ("factor.capital_cost", "capital_cost"),
    ("factor.unit_values", "user_values"),
    ("shift.growth", "growth"),
    ("discount_rate", "discount_rate"),
];

/// The sizes of the usual tests.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tests {
    /// Relative change of capital costs (0.2 = ±20 %).
    pub cost: f64,
    /// Relative change of the road-user unit values.
    pub values: f64,
    /// Points of traffic growth (0.01 = ±1 point).
    pub growth: f64,
    /// The two other discount rates.
    pub rates: [f64; 2],
}

impl Tests {
    /// ±20 %, ±20 %, ±1 point, and the rate two points either side (not below zero).
    pub fn usual(rate: f64) -> Tests {
        Tests {
            cost: 0.2,
            values: 0.2,
            growth: 0.01,
            rates: [(rate - 0.02).max(0.0), rate + 0.02],
        }
    }

    /// The tested values of input `i` ([`INPUTS`] order): (low, high).
    fn values(&self, i: usize) -> (f64, f64) {
        match i {
            0 => (1.0 - self.cost, 1.0 + self.cost),
            1 => (1.0 - self.values, 1.0 + self.values),
            2 => (-self.growth, self.growth),
            _ => (self.rates[0], self.rates[1]),
        }
    }
}

/// Where input `i` is searched: its range, and the grid's offsets from the scenario's value.
fn search(i: usize) -> (f64, f64, Vec<f64>) {
    match i {
        0 | 1 => (
            0.01,
            11.0,
            vec![
                0.02, 0.05, 0.1, 0.15, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 0.95, 0.99, 1.5,
                2.0, 3.0, 5.0, 7.0, 10.0,
            ],
        ),
        2 => (
            -0.1,
            0.1,
            vec![
                0.0025, 0.005, 0.01, 0.015, 0.02, 0.03, 0.04, 0.05, 0.07, 0.1,
            ],
        ),
        _ => (
            0.0,
            1.0,
            vec![
                0.005, 0.01, 0.02, 0.03, 0.05, 0.07, 0.1, 0.15, 0.2, 0.3, 0.5, 0.7, 1.0,
            ],
        ),
    }
}

/// One row of the results.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    /// `None` for the network plan.
    pub section: Option<usize>,
    /// The strategy the row is about (the chosen one; for `best-changes`, the best one), by
    /// key; `None` for the network plan.
    pub strategy: Option<StrategyRef>,
    /// Index into [`INPUTS`]; `None` for the scenario row.
    pub input: Option<usize>,
    /// `scenario`, `low`, `high`, `npv-zero` or `best-changes`.
    pub test: &'static str,
    /// `down` or `up` for switching values, empty otherwise.
    pub direction: &'static str,
    /// The input's value (`None`: no switching value within the search range).
    pub value: Option<f64>,
    /// The value less the scenario's.
    pub change: Option<f64>,
    pub npv: Option<f64>,
    /// For `best-changes`: the strategy that becomes best (`None`: no change found, or
    /// another test).
    pub other: Option<StrategyRef>,
}

/// Every strategy's NPV against the base for one section with traffic growth shifted by
/// `shift` points (`only`: just that strategy's; the others are left at 0).
fn npvs(
    run: &Run,
    shift: f64,
    sec: &Section,
    strategies: &[Strategy],
    only: Option<usize>,
) -> Vec<f64> {
    let mut p = Probe::new(run, shift, sec, strategies);
    match only {
        Some(k) => {
            p.simulate(&[k]);
        }
        None => {
            let all: Vec<usize> = (1..strategies.len()).collect();
            p.simulate(&all);
        }
    }
    p.npv.iter().map(|x| x.unwrap_or(0.0)).collect()
}

/// What a probe reuses from one probe to the next on the same thread: the four traces of a
/// side-by-side run and two flow buffers, so that a probe allocates (almost) nothing.
#[derive(Default)]
struct Scratch {
    traces: [Trace; crate::simulate::SIDE_BY_SIDE],
    base: crate::simulate::Flows,
    own: crate::simulate::Flows,
}

thread_local! {
    static SCRATCH: std::cell::RefCell<Scratch> = std::cell::RefCell::default();
}

/// One section with traffic growth shifted, its strategies simulated only as far as asked: the
/// NPV of some of them, or whether any strategy would be chosen over a given one — stopping at
/// the first group of four that holds one. The base is played in the first group, beside the
/// first strategies asked for. Every NPV is the number one simulation of that strategy gives
/// (the same runs, replayed in another order or lane, give the same bits), so a search driven
/// by a probe takes the same path as one that simulates every strategy at every step; most
/// steps of a search for the value at which the best strategy changes end in the first group.
struct Probe<'a> {
    sim: SectionSim,
    strategies: &'a [Strategy],
    scratch: Scratch,
    d: crate::economics::Discounting,
    y0: crate::model::Year,
    /// Each strategy's NPV against the base, once simulated (the base's is 0 once it is).
    npv: Vec<Option<f64>>,
}

impl<'a> Probe<'a> {
    /// Nothing is simulated until asked; growth is shifted as
    /// [`crate::analysis::vary::Varied::section`] shifts it.
    fn new(run: &Run, shift: f64, sec: &Section, strategies: &'a [Strategy]) -> Probe<'a> {
        let mut s2 = sec.clone();
        s2.growth_rate += shift;
        Probe {
            sim: SectionSim::new(run, &s2),
            strategies,
            scratch: SCRATCH.with(|s| std::mem::take(&mut *s.borrow_mut())),
            d: run.scenario.discounting,
            y0: run.scenario.base_year,
            npv: vec![None; strategies.len()],
        }
    }

    /// The NPVs of `which` not yet known (and the base first, if it is not), played side by
    /// side.
    fn simulate(&mut self, which: &[usize]) {
        let Probe {
            sim,
            strategies,
            scratch,
            d,
            y0,
            npv,
        } = self;
        let base = npv[0].is_none().then_some(0);
        let todo = base
            .into_iter()
            .chain(
                which
                    .iter()
                    .copied()
                    .filter(|&k| k != 0 && npv[k].is_none()),
            )
            .collect::<Vec<_>>();
        let Scratch { traces, base, own } = scratch;
        // The base is the first lane of the first group: its flows are taken before any other
        // strategy's NPV is (`run_each_of` hands the runs back in lane order).
        sim.run_each_of(strategies, todo, traces, |k, t| {
            if k == 0 {
                t.flows_into(d, base);
                npv[0] = Some(0.0);
            } else {
                t.flows_into(d, own);
                npv[k] = Some(crate::evaluate::npv_against(d, *y0, own, base));
            }
        });
    }

    /// Strategy `k`'s NPV against the base.
    fn npv(&mut self, k: usize) -> f64 {
        if self.npv[k].is_none() {
            self.simulate(&[k]);
        }
        self.npv[k].unwrap_or(f64::NAN)
    }

    /// Whether the highest NPV (the first of equals, as [`argmax`] takes it) is another
    /// strategy's than `best`'s. `order` holds every other strategy, likeliest first; they are
    /// played a group of [`crate::simulate::SIDE_BY_SIDE`] at a time (the first group with the
    /// base, `best` and the strategies of `also`, whose NPVs the caller reads next) until one
    /// would be chosen over `best`. The answer does not depend on the order: only on whether
    /// any strategy of `order` wins.
    fn beaten(&mut self, best: usize, order: &[usize], also: &[usize]) -> bool {
        // The base takes a lane of the first group if it is not known yet.
        let slots = crate::simulate::SIDE_BY_SIDE - usize::from(self.npv[0].is_none());
        let mut first: Vec<usize> = Vec::with_capacity(crate::simulate::SIDE_BY_SIDE);
        for k in std::iter::once(best)
            .chain(also.iter().copied())
            .chain(order.iter().copied())
        {
            if first.len() == slots {
                break;
            }
            if k != 0 && self.npv[k].is_none() && !first.contains(&k) {
                first.push(k);
            }
        }
        self.simulate(&first);
        let nb = self.npv(best);
        if nb.is_nan() {
            // No comparison holds against NaN: decide as `argmax` of every NPV would.
            let all: Vec<usize> = (0..self.strategies.len()).collect();
            self.simulate(&all);
            let n: Vec<f64> = self.npv.iter().map(|x| x.unwrap_or(f64::NAN)).collect();
            return argmax(&n) != best;
        }
        let wins = |k: usize, x: Option<f64>| x.is_some_and(|x| x > nb || (k < best && x >= nb));
        let mut next = 0;
        loop {
            if order.iter().any(|&k| wins(k, self.npv[k])) {
                return true;
            }
            let mut group: Vec<usize> = Vec::with_capacity(crate::simulate::SIDE_BY_SIDE);
            while group.len() < crate::simulate::SIDE_BY_SIDE && next < order.len() {
                if self.npv[order[next]].is_none() {
                    group.push(order[next]);
                }
                next += 1;
            }
            if group.is_empty() {
                return false;
            }
            self.simulate(&group);
        }
    }
}

impl Drop for Probe<'_> {
    fn drop(&mut self) {
        let scratch = std::mem::take(&mut self.scratch);
        SCRATCH.with(|s| *s.borrow_mut() = scratch);
    }
}

/// Whether input `i` ([`INPUTS`] order) only scales money or discounts it (everything but
/// growth): its NPVs come from a [`Linear`] with no new simulation.
fn is_linear(i: usize) -> bool {
    INPUTS[i].0 != "shift.growth"
}

/// A section's strategies simulated once at the scenario's values, their money split by what
/// the cost and unit-value factors scale ([`crate::evaluate`]).
struct Linear {
    /// The strategies split, by index.
    which: Vec<usize>,
    splits: Vec<Split>,
    parts: Vec<Parts>,
    /// Their NPVs at the scenario's values, on whole flows (the same numbers as [`npvs`] of the
    /// scenario as written).
    exact: Vec<f64>,
}

impl Linear {
    /// `strategies[k]` against the base, for each k of `which`.
    fn new(run: &Run, sec: &Section, strategies: &[Strategy], which: &[usize]) -> Linear {
        let sim = SectionSim::new(run, sec);
        let d = &run.scenario.discounting;
        let y0 = run.scenario.base_year;
        let mut l = Linear {
            which: which.to_vec(),
            splits: Vec::with_capacity(which.len()),
            parts: Vec::with_capacity(which.len()),
            exact: Vec::with_capacity(which.len()),
        };
        crate::evaluate::each_split(run, &sim, strategies, which, |_, _, split, npv| {
            l.parts.push(split.pv(d, y0));
            l.splits.push(split);
            l.exact.push(npv);
        });
        l
    }

    /// The NPVs (in `which` order) with input `i` at `x` (`i` linear); the base's is 0.
    fn npvs(&self, run: &Run, i: usize, x: f64) -> Vec<f64> {
        let y0 = run.scenario.base_year;
        let at = |k: usize, v: f64| if self.which[k] == 0 { 0.0 } else { v };
        match INPUTS[i].0 {
            "factor.capital_cost" => self
                .parts
                .iter()
                .enumerate()
                .map(|(k, p)| at(k, p.npv(&Scales::capital(x))))
                .collect(),
            "factor.unit_values" => self
                .parts
                .iter()
                .enumerate()
                .map(|(k, p)| at(k, p.npv(&Scales::users(x))))
                .collect(),
            _ => {
                // The discount rate: the same split money, discounted at `x` (a rate the
                // scenario could not take keeps the scenario's, as `vary::apply` does).
                let d0 = &run.scenario.discounting;
                let d = d0.with_rate(x).unwrap_or(*d0);
                self.splits
                    .iter()
                    .enumerate()
                    .map(|(k, s)| at(k, s.pv(&d, y0).npv(&Scales::ONE)))
                    .collect()
            }
        }
    }
}

fn argmax(x: &[f64]) -> usize {
    let mut b = 0;
    for (i, v) in x.iter().enumerate() {
        if *v > x[b] {
            b = i;
        }
    }
    b
}

/// Bisection between `a` (where `pred` is false) and `b` (true): the boundary, to `tol`.
fn bisect(mut a: f64, mut b: f64, tol: f64, mut pred: impl FnMut(f64) -> bool) -> f64 {
    for _ in 0..200 {
        if (b - a).abs() <= tol {
            break;
        }
        let m = 0.5 * (a + b);
        if pred(m) {
            b = m;
        } else {
            a = m;
        }
    }
    b
}

/// The variations every section shares, built once: each input at its two tested values.
struct Shared {
    central: [f64; 4],
    /// Per input ([`INPUTS`] order): (test, value).
    tested: Vec<[(&'static str, f64); 2]>,
}

impl Shared {
    fn new(run: &Run, tests: &Tests) -> Shared {
        Shared {
            central: [1.0, 1.0, 0.0, run.scenario.discounting.rate()],
            tested: (0..INPUTS.len())
                .map(|i| {
                    let (lo, hi) = tests.values(i);
                    [("low", lo), ("high", hi)]
                })
                .collect(),
        }
    }
}

/// Everything for one section.
fn section_rows(run: &Run, e: &Enumerator, held: &HeldPlan, g: usize, shared: &Shared) -> Vec<Row> {
    let sec = &run.network.sections[g];
    let strategies = &e.strategies(sec);
    let chosen = crate::analysis::held::position(strategies, held.chosen[g]);
    // Every strategy once, its money split: the scenario's NPVs, and the cost, unit-value and
    // rate tests, need no other simulation; growth simulates again at each value.
    let all: Vec<usize> = (0..strategies.len()).collect();
    let lin = Linear::new(run, sec, strategies, &all);
    let at0 = lin.exact.clone();
    let best0 = argmax(&at0);
    // Every other strategy, the best at the scenario's values first: the likeliest to take over.
    let mut order: Vec<usize> = (0..strategies.len()).filter(|&k| k != best0).collect();
    order.sort_by(|&a, &b| at0[b].total_cmp(&at0[a]).then(a.cmp(&b)));
    // Whether the best strategy is another than `best0` with input `i` at `x`.
    let changes_at = |i: usize, x: f64| -> bool {
        if is_linear(i) {
            argmax(&lin.npvs(run, i, x)) != best0
        } else {
            Probe::new(run, x, sec, strategies).beaten(best0, &order, &[])
        }
    };
    let eval = |i: usize, x: f64, only: Option<usize>| -> Vec<f64> {
        if is_linear(i) {
            lin.npvs(run, i, x)
        } else {
            npvs(run, x, sec, strategies, only)
        }
    };
    let mut rows = vec![Row {
        section: Some(g),
        strategy: Some(strategies[chosen].key),
        input: None,
        test: "scenario",
        direction: "",
        value: None,
        change: None,
        npv: Some(at0[chosen]),
        other: None,
    }];
    for (i, &c) in shared.central.iter().enumerate() {
        for &(test, x) in &shared.tested[i] {
            let n = eval(i, x, Some(chosen))[chosen];
            rows.push(Row {
                section: Some(g),
                strategy: Some(strategies[chosen].key),
                input: Some(i),
                test,
                direction: "",
                value: Some(x),
                change: Some(x - c),
                npv: Some(n),
                other: None,
            });
        }
        let (min, max, steps) = search(i);
        let tol = 1e-9 * (max - min);
        for (direction, sign) in [("down", -1.0), ("up", 1.0)] {
            let grid: Vec<f64> = steps
                .iter()
                .map(|s| c + sign * s)
                .filter(|x| *x >= min && *x <= max)
                .collect();
            // NPV zero of the chosen strategy (the base has no NPV to lose).
            let mut zero: Option<(f64, f64)> = None; // (last x on the same side, first x past)
            let mut change: Option<(f64, f64)> = None;
            let mut prev = c;
            let sign0 = at0[chosen] > 0.0;
            for &x in &grid {
                let (n_chosen, changed) = if is_linear(i) {
                    let n = lin.npvs(run, i, x);
                    (n[chosen], change.is_none() && argmax(&n) != best0)
                } else {
                    // Only what is still looked for is simulated: the chosen strategy's NPV
                    // while its zero is not found, beside the first group of the search for a
                    // change.
                    let mut p = Probe::new(run, x, sec, strategies);
                    let wants_zero = zero.is_none() && chosen != 0;
                    let also = if wants_zero { vec![chosen] } else { Vec::new() };
                    let changed = change.is_none() && p.beaten(best0, &order, &also);
                    (if wants_zero { p.npv(chosen) } else { 0.0 }, changed)
                };
                if zero.is_none() && chosen != 0 && (n_chosen > 0.0) != sign0 {
                    zero = Some((prev, x));
                }
                if changed {
                    change = Some((prev, x));
                }
                if (zero.is_some() || chosen == 0) && change.is_some() {
                    break;
                }
                prev = x;
            }
            if chosen != 0 {
                let row = match zero {
                    Some((a, b)) => {
                        let x = bisect(a, b, tol, |m| {
                            let n = eval(i, m, Some(chosen));
                            (n[chosen] > 0.0) != sign0
                        });
                        let n = eval(i, x, Some(chosen));
                        (Some(x), Some(n[chosen]))
                    }
                    None => (None, None),
                };
                rows.push(Row {
                    section: Some(g),
                    strategy: Some(strategies[chosen].key),
                    input: Some(i),
                    test: "npv-zero",
                    direction,
                    value: row.0,
                    change: row.0.map(|x| x - c),
                    npv: row.1,
                    other: None,
                });
            }
            let (value, npv, other) = match change {
                Some((a, b)) => {
                    let x = bisect(a, b, tol, |m| changes_at(i, m));
                    let n = eval(i, x, None);
                    (Some(x), Some(n[best0]), Some(strategies[argmax(&n)].key))
                }
                None => (None, None, None),
            };
            rows.push(Row {
                section: Some(g),
                strategy: Some(strategies[best0].key),
                input: Some(i),
                test: "best-changes",
                direction,
                value,
                change: value.map(|x| x - c),
                npv,
                other,
            });
        }
    }
    rows
}

/// Each section's base and chosen strategy, rebuilt from the held key (`None` for a section
/// left at its base).
type Pairs = [Option<[Strategy; 2]>];

/// The plan's NPV (chosen strategies, network order) with growth shifted by `shift` points.
fn plan_npv(run: &Run, pairs: &Pairs, shift: f64) -> f64 {
    let per: Vec<f64> = run
        .network
        .sections
        .par_iter()
        .zip(pairs)
        .map(|(sec, pair)| match pair {
            Some(pair) => npvs(run, shift, sec, pair, Some(1))[1],
            None => 0.0,
        })
        .collect();
    per.iter().sum()
}

/// The plan's NPV with input `i` at `x`: from each section's chosen strategy split once
/// (`chosen`) for the linear inputs, simulated again for growth.
fn plan_npv_at(run: &Run, pairs: &Pairs, chosen: &[Option<Linear>], i: usize, x: f64) -> f64 {
    if !is_linear(i) {
        return plan_npv(run, pairs, x);
    }
    let per: Vec<f64> = chosen
        .par_iter()
        .map(|l| match l {
            Some(l) => l.npvs(run, i, x)[0],
            None => 0.0,
        })
        .collect();
    per.iter().sum()
}

/// Every row: the network plan's first, then each section's.
pub fn analyse(run: &Run, held: &HeldPlan, tests: &Tests, progress: &Progress) -> Vec<Row> {
    let shared = Shared::new(run, tests);
    let e = Enumerator::for_run(run);
    let pairs: Vec<Option<[Strategy; 2]>> = held
        .chosen
        .par_iter()
        .map(|&key| {
            let s = e.strategy(key).filter(|s| !s.is_base())?;
            Some([Strategy::base(), s])
        })
        .collect();
    // Each section's chosen strategy, its money split (none for a section left at its base).
    let chosen: Vec<Option<Linear>> = run
        .network
        .sections
        .par_iter()
        .zip(&pairs)
        .map(|(sec, pair)| pair.as_ref().map(|pair| Linear::new(run, sec, pair, &[1])))
        .collect();
    // The plan's NPV at the scenario's values, summed in network order.
    let n0: f64 = chosen
        .iter()
        .map(|l| l.as_ref().map_or(0.0, |l| l.exact[0]))
        .sum();
    let mut rows = vec![Row {
        section: None,
        strategy: None,
        input: None,
        test: "scenario",
        direction: "",
        value: None,
        change: None,
        npv: Some(n0),
        other: None,
    }];
    for (i, &c) in shared.central.iter().enumerate() {
        for &(test, x) in &shared.tested[i] {
            rows.push(Row {
                section: None,
                strategy: None,
                input: Some(i),
                test,
                direction: "",
                value: Some(x),
                change: Some(x - c),
                npv: Some(plan_npv_at(run, &pairs, &chosen, i, x)),
                other: None,
            });
        }
        let (min, max, steps) = search(i);
        let tol = 1e-9 * (max - min);
        for (direction, sign) in [("down", -1.0), ("up", 1.0)] {
            let mut found = None;
            let mut prev = c;
            for x in steps
                .iter()
                .map(|s| c + sign * s)
                .filter(|x| *x >= min && *x <= max)
            {
                if (plan_npv_at(run, &pairs, &chosen, i, x) > 0.0) != (n0 > 0.0) {
                    found = Some((prev, x));
                    break;
                }
                prev = x;
            }
            let value = found.map(|(a, b)| {
                bisect(a, b, tol, |m| {
                    (plan_npv_at(run, &pairs, &chosen, i, m) > 0.0) != (n0 > 0.0)
                })
            });
            rows.push(Row {
                section: None,
                strategy: None,
                input: Some(i),
                test: "npv-zero",
                direction,
                value,
                change: value.map(|x| x - c),
                npv: value.map(|x| plan_npv_at(run, &pairs, &chosen, i, x)),
                other: None,
            });
        }
    }
    let per: Vec<Vec<Row>> = (0..run.network.sections.len())
        .into_par_iter()
        .map(|g| {
            let r = section_rows(run, &e, held, g, &shared);
            progress.inc(1);
            r
        })
        .collect();
    rows.extend(per.into_iter().flatten());
    rows
}

/// Strategy names by key, each made once (a file's rows name a few hundred strategies
/// hundreds of thousands of times).
pub struct Names<'a> {
    e: Enumerator<'a>,
    by_key: std::collections::HashMap<StrategyRef, String>,
}

impl<'a> Names<'a> {
    pub fn new(run: &'a Run) -> Names<'a> {
        Names {
            e: Enumerator::for_run(run),
            by_key: Default::default(),
        }
    }

    /// The name of the strategy `key` names.
    pub fn of(&mut self, key: StrategyRef) -> &str {
        let e = &self.e;
        self.by_key.entry(key).or_insert_with(|| e.name(key))
    }
}

/// `sensitivity.csv`'s row for `r`.
pub fn record(run: &Run, names: &mut Names, r: &Row) -> crate::schema::analysis::Sensitivity {
    use crate::schema::value::{Cents, Fixed};
    let mut name = |k: Option<StrategyRef>| match (r.section, k) {
        (Some(_), Some(k)) => names.of(k).to_owned(),
        _ => String::new(),
    };
    crate::schema::analysis::Sensitivity {
        scope: if r.section.is_some() {
            "section"
        } else {
            "network"
        }
        .to_owned(),
        section_id: r
            .section
            .map(|g| run.network.sections[g].id.as_str())
            .unwrap_or("")
            .to_owned(),
        strategy: name(r.strategy),
        input: r.input.map(|i| INPUTS[i].1).unwrap_or("").to_owned(),
        test: r.test.to_owned(),
        direction: r.direction.to_owned(),
        value: r.value.and_then(Fixed::of_f64),
        change: r.change.and_then(Fixed::of_f64),
        npv: r.npv.and_then(Cents::of_f64),
        other_strategy: name(r.other),
    }
}

/// `sensitivity.csv`: the network plan's rows first, then each section's, each made and
/// written in turn (no table of every row is held beside the text); a section's rows end with
/// the columns carried from the network, the network's rows with those cells empty.
pub fn text(run: &Run, rows: &[Row]) -> String {
    use crate::schema::carried::{carried_cells_of, head_carrying};
    use crate::schema::Record as _;
    let net = &run.network;
    let mut names = Names::new(run);
    let mut s = head_carrying(crate::schema::analysis::Sensitivity::FILE, net);
    for r in rows {
        record(run, &mut names, r).write_then(&mut s, |out| carried_cells_of(net, r.section, out));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::vary::{apply, Varied};

    fn value_of(run: &Run, i: usize, x: f64) -> Varied {
        apply(run, &[(INPUTS[i].0, x)])
    }

    /// The demo with its first `n` sections, and each section's best strategy with no limits as
    /// the plan held fixed.
    fn small_demo(n: usize) -> (Run, HeldPlan) {
        let (run, d) = crate::input::load(
            &crate::demo::SOURCE,
            std::path::Path::new(crate::demo::SCENARIO),
        );
        let mut run = run.unwrap_or_else(|| panic!("{d}"));
        run.network.sections.truncate(n);
        run.scenario.plan.commitments.clear();
        let e = Enumerator::for_run(&run);
        let chosen = run
            .network
            .sections
            .iter()
            .map(|sec| {
                let st = e.strategies(sec);
                st[argmax(&npvs(&run, 0.0, sec, &st, None))].key
            })
            .collect();
        (
            run,
            HeldPlan {
                chosen,
                plan_run: None,
            },
        )
    }

    /// Each strategy's NPV as `appraise` computes it (its own code path: the incremental
    /// analysis), under the input set to `x`.
    fn appraised(run: &Run, g: usize, i: usize, x: f64) -> Vec<(String, f64)> {
        let v = value_of(run, i, x);
        let e = Enumerator::for_run(&v.run);
        let sec = v.section(&run.network.sections[g]);
        crate::appraise::section(&v.run, &e, &sec, false, crate::appraise::IrrScope::Every)
            .strategies
            .into_iter()
            .map(|s| (s.strategy, s.indicators.npv))
            .collect()
    }

    /// Switching values re-checked by appraising again at the reported value: the NPV is about
    /// zero there and of the other sign just past it; the best strategy is still the scenario's
    /// just before a reported change, and another just past it.
    #[test]
    fn switching_values_hold_when_appraised_again() {
        let (run, held) = small_demo(8);
        let rows = analyse(&run, &held, &Tests::usual(0.06), &Progress::none());
        let central = [1.0, 1.0, 0.0, 0.06];
        let (mut zeros, mut changes) = (0, 0);
        for r in rows
            .iter()
            .filter(|r| r.section.is_some() && r.value.is_some())
        {
            let (g, i, x) = (r.section.unwrap(), r.input.unwrap(), r.value.unwrap());
            let name = record(&run, &mut Names::new(&run), r).strategy;
            let (min, max, _) = search(i);
            let step = 1e-6 * (max - min);
            let past = if r.direction == "up" {
                x + step
            } else {
                x - step
            };
            let before = if r.direction == "up" {
                x - step
            } else {
                x + step
            };
            let npv_of = |vals: &[(String, f64)], name: &str| {
                vals.iter().find(|(n, _)| n == name).map(|p| p.1).unwrap()
            };
            let best_of = |vals: &[(String, f64)]| {
                let mut b = 0;
                for (k, v) in vals.iter().enumerate() {
                    if v.1 > vals[b].1 {
                        b = k;
                    }
                }
                vals[b].0.clone()
            };
            match r.test {
                "npv-zero" => {
                    let at0 = npv_of(&appraised(&run, g, i, central[i]), &name);
                    let here = npv_of(&appraised(&run, g, i, x), &name);
                    let beyond = npv_of(&appraised(&run, g, i, past), &name);
                    assert!(
                        here.abs() <= 1e-5 * at0.abs().max(1.0),
                        "{} {}: NPV {here} at the switching value {x} (scenario {at0})",
                        name,
                        INPUTS[i].1
                    );
                    assert!(
                        (beyond > 0.0) != (at0 > 0.0),
                        "{} {}: NPV {beyond} just past {x} keeps the scenario's sign ({at0})",
                        name,
                        INPUTS[i].1
                    );
                    zeros += 1;
                }
                "best-changes" => {
                    let b_before = best_of(&appraised(&run, g, i, before));
                    let b_past = best_of(&appraised(&run, g, i, past));
                    assert_eq!(b_before, name, "{} just before {x}", INPUTS[i].1);
                    assert_ne!(b_past, name, "{} just past {x}", INPUTS[i].1);
                    changes += 1;
                }
                _ => {}
            }
        }
        assert!(zeros >= 4, "some NPV switching values were found ({zeros})");
        assert!(
            changes >= 8,
            "some best-strategy switching values were found ({changes})"
        );
    }

    #[test]
    fn usual_tests_move_npv_the_expected_way() {
        let (run, held) = small_demo(6);
        let rows = analyse(&run, &held, &Tests::usual(0.06), &Progress::none());
        let net = |i: usize, t: &str| {
            rows.iter()
                .find(|r| r.section.is_none() && r.input == Some(i) && r.test == t)
                .and_then(|r| r.npv)
                .unwrap()
        };
        // Common practice: dearer works and a higher rate lower a positive NPV; dearer road-user
        // time and faster growth raise it.
        assert!(net(0, "low") > net(0, "high"));
        assert!(net(1, "low") < net(1, "high"));
        assert!(net(2, "low") < net(2, "high"));
        assert!(net(3, "low") > net(3, "high"));
    }

    /// A probe's NPVs are the bits of each strategy run alone against the base run alone, in
    /// whatever order and lanes it plays them, and whether the best strategy is beaten is the
    /// answer `argmax` of every NPV gives — at shifts of growth either side, for every strategy
    /// taken as the one to beat and with strategies asked for beside the first group.
    #[test]
    fn a_probe_answers_as_every_strategy_run_alone() {
        let (run, held) = small_demo(12);
        let every = held.every(&run);
        let d = run.scenario.discounting;
        let y0 = run.scenario.base_year;
        let mut checked = (0, 0);
        for (g, sec) in run.network.sections.iter().enumerate() {
            let strategies = &every.strategies[g];
            for shift in [-0.03, -0.004, 0.0, 0.0125, 0.05] {
                let mut s2 = sec.clone();
                s2.growth_rate += shift;
                let sim = SectionSim::new(&run, &s2);
                let mut t = Trace::default();
                sim.run(&strategies[0], &mut t);
                let bf = t.flows(&d);
                let alone: Vec<f64> = strategies
                    .iter()
                    .map(|st| {
                        sim.run(st, &mut t);
                        crate::evaluate::npv_against(&d, y0, &t.flows(&d), &bf)
                    })
                    .collect();
                for best in 0..strategies.len() {
                    let order: Vec<usize> =
                        (0..strategies.len()).rev().filter(|&k| k != best).collect();
                    let also = [strategies.len() / 2];
                    let mut p = Probe::new(&run, shift, sec, strategies);
                    let beaten = p.beaten(best, &order, &also);
                    assert_eq!(beaten, argmax(&alone) != best, "section {g} shift {shift}");
                    checked.0 += 1;
                    for (k, (x, a)) in p.npv.iter().zip(&alone).enumerate() {
                        if let Some(x) = x {
                            assert_eq!(x.to_bits(), a.to_bits(), "{g} {shift} {k}");
                            checked.1 += 1;
                        }
                    }
                }
                let all = npvs(&run, shift, sec, strategies, None);
                let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
                assert_eq!(bits(&all), bits(&alone));
            }
        }
        assert!(checked.0 > 100 && checked.1 > 1000, "{checked:?}");
    }
}
