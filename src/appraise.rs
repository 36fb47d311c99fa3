//! Appraisal: every strategy of a section against the section's base strategy — PV of agency
//! and road-user costs, NPV, BCR, IRR, FYRR — the incremental analysis over the section's
//! alternatives, and for widening, the NPV and first-year return by widening year.
//!
//! A strategy's **benefit** in a year is the road-user cost it saves against the base; its
//! **cost** is the agency cost it adds (works, routine maintenance, less the residual value
//! credited the year after the period). Both may be negative: a strategy that lowers routine
//! maintenance has a negative cost increment in those years. The base strategy's flows against
//! itself are zero, so its NPV is exactly 0.
//!
//! Widening timing (common practice): the first-year rate of return of widening in year W is the
//! first full year's benefit of the widening (user and agency savings against the same strategy
//! without the widening) over its cost; widening is well timed in the first year its FYRR
//! reaches the discount rate. The year of highest NPV is reported beside it; the two agree when
//! benefits grow steadily.

use crate::economics::incremental::{analyse_with, Analysis};
use crate::economics::{appraise, appraise_with, fyrr, Discounting, Indicators, Stream};
use crate::enumerate::{Enumerator, Strategy, StrategyRef};
use crate::input::Run;
use crate::model::network::Section;
use crate::model::Year;
use crate::simulate::{FlowStore, Flows, SectionSim, Trace};
use rayon::prelude::*;
use std::collections::HashMap;

/// One strategy's results on one section.
#[derive(Debug, Clone, PartialEq)]
pub struct StrategyResult {
    pub strategy: String,
    /// The template it came from (`None` for the base).
    pub template: Option<String>,
    pub pv_capital: f64,
    pub pv_routine: f64,
    pub pv_residual: f64,
    /// PV of capital + routine − residual.
    pub pv_agency: f64,
    pub pv_user: f64,
    /// Against the base strategy.
    pub indicators: Indicators,
    /// The ratios that rank strategies when money binds, against the base's capital cost:
    /// NPV per unit of PV capital added, and (PV of every benefit and saving but capital) per
    /// unit of PV capital added, = 1 + NPV/PV capital. `None` when the strategy adds no capital.
    pub npv_per_capital: Option<f64>,
    pub bcr_capital: Option<f64>,
    /// Length-independent condition: mean IRI over the period and IRI in its last year.
    pub mean_iri: f64,
    pub final_iri: f64,
    /// Calendar year of its widening works, if any.
    pub widening_year: Option<Year>,
}

/// The best strategy that widens in one year.
#[derive(Debug, Clone, PartialEq)]
pub struct WideningYear {
    pub year: Year,
    pub strategy: String,
    pub npv: f64,
    /// The widening's own first-year rate of return.
    pub fyrr: Option<f64>,
}

/// NPV and FYRR by widening year, and the two timing rules' answers.
#[derive(Debug, Clone, PartialEq)]
pub struct WideningTiming {
    pub years: Vec<WideningYear>,
    /// The first year whose FYRR reaches the discount rate.
    pub by_fyrr: Option<Year>,
    /// The year of highest NPV.
    pub by_npv: Option<Year>,
}

/// Everything appraised for one section.
#[derive(Debug, Clone)]
pub struct SectionResult {
    pub section: String,
    /// The base first, then every other strategy in enumeration order.
    pub strategies: Vec<StrategyResult>,
    pub incremental: Analysis,
    /// The preferred strategy (`base` when no alternative adds value).
    pub best: String,
    pub widening: Option<WideningTiming>,
    /// Yearly traces, kept only when asked for.
    pub traces: Vec<(String, Trace)>,
}

impl SectionResult {
    pub fn get(&self, strategy: &str) -> Option<&StrategyResult> {
        self.strategies.iter().find(|s| s.strategy == strategy)
    }
}

/// The flows of a strategy against another (benefits: user cost saved; costs: agency cost added).
pub fn increment(with: &Flows, against: &Flows, first_year: Year) -> Stream {
    Stream {
        first_year,
        benefits: against
            .users
            .iter()
            .zip(&with.users)
            .map(|(b, a)| b - a)
            .collect(),
        costs: with
            .agency
            .iter()
            .zip(&against.agency)
            .map(|(a, b)| a - b)
            .collect(),
    }
}

/// NPV per unit of PV capital added, and the capital-only benefit-cost ratio
/// (NPV + capital)/capital, for a strategy adding `capital` (PV) against the base. Common
/// practice in road appraisal: NPV per unit of (present) capital cost ranks projects when money
/// is the binding constraint. `None` for both when no capital is added.
pub fn capital_ratios(npv: f64, capital: f64) -> (Option<f64>, Option<f64>) {
    if capital > 1e-9 {
        (Some(npv / capital), Some((npv + capital) / capital))
    } else {
        (None, None)
    }
}

/// Which strategies' IRRs an appraisal looks for: the root search is most of its arithmetic.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum IrrScope {
    /// Every strategy's and every incremental step's.
    Every,
    /// Every strategy's own (against the base), not the incremental steps' (what the workbook
    /// shows).
    Own,
    /// The preferred strategy's only (what a summary shows).
    Preferred,
    /// None (`--no-irr`).
    Skipped,
}

/// Appraise every strategy of one section.
pub fn section(
    run: &Run,
    e: &Enumerator<'_>,
    sec: &Section,
    keep_traces: bool,
    irr: IrrScope,
) -> SectionResult {
    let s = &run.scenario;
    let d = &s.discounting;
    let y0 = s.base_year;
    let n = s.analysis_years;
    let sim = SectionSim::new(run, sec);
    let strategies = e.strategies(sec);
    let mut base = Trace::default();
    sim.run(&strategies[0], &mut base);
    let base_flows = base.flows(d);
    // Each strategy replays only the years after its works part from an earlier one's.
    let mut runs: [Trace; crate::simulate::SIDE_BY_SIDE] = std::array::from_fn(|_| base.clone());
    let mut alternatives: Vec<(String, Stream)> = Vec::with_capacity(strategies.len());
    let mut partial: Vec<StrategyResult> = Vec::with_capacity(strategies.len());
    let mut traces = Vec::new();
    // Every strategy's own flows, for the widening's return against the same works without it.
    let mut owns = FlowStore::default();
    sim.run_each(&strategies, &mut runs, |i, t| {
        let st = &strategies[i];
        let pv_capital = d.pv(y0, &t.capital);
        let pv_routine = d.pv(y0, &t.routine);
        let pv_residual = t.residual * d.end_factor(n);
        let own = t.flows(d);
        let flows = increment(&own, &base_flows, y0);
        partial.push(StrategyResult {
            strategy: st.name.clone(),
            template: st.template.map(|i| run.templates[i].name.clone()),
            pv_capital,
            pv_routine,
            pv_residual,
            pv_agency: pv_capital + pv_routine - pv_residual,
            pv_user: d.pv(y0, &own.users),
            // The base against itself (flows exactly zero); the others' indicators come from the
            // incremental analysis below, which appraises every alternative once.
            indicators: if st.is_base() {
                appraise_with(&flows, d, irr != IrrScope::Skipped)
            } else {
                appraise(&Stream::default(), d)
            },
            npv_per_capital: None,
            bcr_capital: None,
            mean_iri: t.iri.iter().sum::<f64>() / t.iri.len().max(1) as f64,
            final_iri: t.iri.last().copied().unwrap_or(sec.iri),
            widening_year: st.widening_year(&run.catalogue).map(|w| y0 + w),
        });
        if !st.is_base() {
            alternatives.push((st.name.clone(), flows));
        }
        if keep_traces {
            traces.push((st.name.clone(), t.clone()));
        }
        owns.push(&own);
    });
    let incremental = analyse_with(
        &alternatives,
        d,
        matches!(irr, IrrScope::Every | IrrScope::Own),
        irr == IrrScope::Every,
    );
    let position: HashMap<&str, usize> = partial
        .iter()
        .enumerate()
        .map(|(i, r)| (r.strategy.as_str(), i))
        .collect();
    let mut own: Vec<Option<Indicators>> = vec![None; partial.len()];
    for alt in &incremental.alternatives {
        if let Some(&i) = position.get(alt.name.as_str()) {
            own[i] = Some(alt.indicators.clone());
        }
    }
    let base_capital = partial.first().map_or(0.0, |b| b.pv_capital);
    for (r, ind) in partial.iter_mut().zip(own) {
        if let Some(ind) = ind {
            r.indicators = ind;
        }
        let (npc, bc) = capital_ratios(r.indicators.npv, r.pv_capital - base_capital);
        r.npv_per_capital = npc;
        r.bcr_capital = bc;
    }
    let best = incremental
        .winner
        .clone()
        .unwrap_or_else(|| crate::enumerate::BASE.to_owned());
    if irr == IrrScope::Preferred {
        if let (Some(r), Some((_, stream))) = (
            partial.iter_mut().find(|r| r.strategy == best),
            alternatives.iter().find(|a| a.0 == best),
        ) {
            r.indicators.irr = crate::economics::irr(&stream.net());
        }
    }
    let options: Vec<(Option<Year>, f64)> = partial
        .iter()
        .map(|r| (r.widening_year, r.indicators.npv))
        .collect();
    let widening = widening_timing(run, &sim, &strategies, &owns, &options, d);
    SectionResult {
        section: sec.id.as_str().to_owned(),
        strategies: partial,
        incremental,
        best,
        widening,
        traces,
    }
}

/// The best widening strategy of one calendar widening year (`K`: how the strategy is named).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WideningOption<K = StrategyRef> {
    pub year: Year,
    /// The strategy.
    pub strategy: K,
    /// Its NPV against the base.
    pub npv: f64,
    /// The widening's own first-year rate of return: the strategy against the same strategy
    /// without its widening ([`widening_returns`]).
    pub fyrr: Option<f64>,
}

/// Each widening year's best strategy, by year, from `(strategy, calendar widening year, NPV
/// against the base)` of every widening strategy in enumeration order; of equal NPVs the first
/// is kept. Their FYRRs are left for [`widening_returns`].
pub fn best_by_widening_year<K: Copy>(
    options: impl IntoIterator<Item = (K, Year, f64)>,
) -> Vec<WideningOption<K>> {
    let mut best: Vec<WideningOption<K>> = Vec::new();
    for (strategy, year, npv) in options {
        let option = WideningOption {
            year,
            strategy,
            npv,
            fyrr: None,
        };
        match best.iter_mut().find(|b| b.year == year) {
            Some(slot) => {
                if npv > slot.npv {
                    *slot = option;
                }
            }
            None => best.push(option),
        }
    }
    best.sort_by_key(|b| b.year);
    best
}

/// The first-year rate of return of each option's widening: the strategy's own flows (`own[i]`
/// of `strategies[i]`) against those of the same strategy without its widening. That strategy
/// is usually one of the section's own (strengthening alone, say), whose flows are at hand;
/// otherwise it is simulated (from its widening year on, see [`SectionSim::run`]).
pub fn widening_returns(
    run: &Run,
    sim: &SectionSim,
    strategies: &[Strategy],
    own: &FlowStore,
    options: &mut [WideningOption<usize>],
    d: &Discounting,
) {
    let y0 = run.scenario.base_year;
    let mut t = Trace::default();
    for o in options {
        let st = &strategies[o.strategy];
        let without = st.without_widening(&run.catalogue);
        let known = strategies
            .iter()
            .position(|x| x.works == without.works && x.trigger == without.trigger);
        let flows = match known {
            Some(j) => increment(&own.get(o.strategy), &own.get(j), y0),
            None => {
                sim.run(&without, &mut t);
                increment(&own.get(o.strategy), &t.flows(d), y0)
            }
        };
        o.fyrr = fyrr(&flows.net());
    }
}

/// The two timing rules over a section's widening options (by year): the first year whose FYRR
/// reaches the discount rate, and the year of highest NPV (the earlier of equals).
pub fn timing_rules<K>(
    options: &[WideningOption<K>],
    d: &Discounting,
) -> (Option<Year>, Option<Year>) {
    let by_fyrr = options
        .iter()
        .find(|w| w.fyrr.is_some_and(|f| f >= d.rate()))
        .map(|w| w.year);
    let by_npv = options
        .iter()
        .max_by(|a, b| a.npv.total_cmp(&b.npv).then(b.year.cmp(&a.year)))
        .map(|w| w.year);
    (by_fyrr, by_npv)
}

/// The widening timing of a section from its strategies and their own flows: NPV and FYRR of
/// each widening year's best strategy, and the two rules' answers. `None` when no strategy
/// widens.
fn widening_timing(
    run: &Run,
    sim: &SectionSim,
    strategies: &[Strategy],
    own: &FlowStore,
    npv: &[(Option<Year>, f64)],
    d: &Discounting,
) -> Option<WideningTiming> {
    let mut best = best_by_widening_year(
        npv.iter()
            .enumerate()
            .filter_map(|(i, &(y, npv))| y.map(|y| (i, y, npv))),
    );
    if best.is_empty() {
        return None;
    }
    widening_returns(run, sim, strategies, own, &mut best, d);
    let (by_fyrr, by_npv) = timing_rules(&best, d);
    Some(WideningTiming {
        years: best
            .iter()
            .map(|b| WideningYear {
                year: b.year,
                strategy: strategies[b.strategy].name.clone(),
                npv: b.npv,
                fyrr: b.fyrr,
            })
            .collect(),
        by_fyrr,
        by_npv,
    })
}

/// Appraise `sections` of the run in parallel (one task per section); results in input order.
pub fn network(
    run: &Run,
    sections: &[&Section],
    keep_traces: bool,
    irr: IrrScope,
) -> Vec<SectionResult> {
    let e = Enumerator::for_run(run);
    sections
        .par_iter()
        .map(|sec| section(run, &e, sec, keep_traces, irr))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_widening_year_keeps_its_best_strategy_and_the_first_of_equals() {
        let best = best_by_widening_year([
            (1, Year(2030), 5.0),
            (2, Year(2028), 1.0),
            (3, Year(2030), 7.0),
            (4, Year(2030), 7.0),
            (5, Year(2028), -2.0),
        ]);
        let o = |year, strategy, npv| WideningOption {
            year,
            strategy,
            npv,
            fyrr: None,
        };
        assert_eq!(best, vec![o(Year(2028), 2, 1.0), o(Year(2030), 3, 7.0)]);
        assert!(best_by_widening_year::<u32>([]).is_empty());
    }
}
