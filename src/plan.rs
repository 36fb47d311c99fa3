//! Network planning: every section's strategies become candidates (value, and use of each budget
//! line and condition target), the selection chooses one per section, and the chosen plan is
//! re-checked against every budget line in exact decimal arithmetic.
//!
//! Only what selection needs is computed here — NPV (or PV agency cost), the yearly money each
//! budget line counts and the condition each target counts — not the IRRs and incremental
//! analysis of `appraise`, so that a million sections fit in time and memory.
//!
//! Rows: the budget lines first, in scenario order, then the target lines. A budget line counts
//! a section's agency spending of its category in its year when the section is in its region (or
//! the line has none); each section-year amount is rounded to the cent, the unit of the work
//! programme. The residual value is credited after the period and counts against no line.
//!
//! Every row counts in exact integers: budget lines in cents, condition targets in millionths
//! of a km (poor share) or of a km·m/km (mean IRI), each section's amount rounded once to that
//! unit. A line's limit becomes the largest whole number of units within it (cents are whole,
//! so for money this is the limit exactly), so the selection solves the problem the user
//! stated, with no margin, and its bound and statuses are statements about that problem.

use crate::appraise::WideningOption;
use crate::diag::{Diagnostics, Place};
use crate::economics::Discounting;
use crate::enumerate::{Enumerator, Strategy, StrategyRef};
use crate::input::plan::{Held, Measure, Objective};
use crate::input::Run;
use crate::model::catalogue::Category;
use crate::model::money::Money;
use crate::model::network::Section;
use crate::model::{Year, YearOffset};
use crate::progress::Progress;
use crate::select::network::{self, Infeasible, Options, Outcome};
use crate::select::problem::{Offers, Problem, ProblemError};
use crate::simulate::condition::{classify, ConditionClass};
use crate::simulate::{SectionSim, Trace};
use rayon::prelude::*;
use rust_decimal::Decimal;
use std::collections::HashMap;

/// Sections per parallel chunk while building candidates.
const CHUNK: usize = 512;
/// Sections per block of candidate building (see [`candidates`]).
const BLOCK: usize = 65_536;

/// What a row limits.
#[derive(Debug, Clone, PartialEq)]
pub enum RowKind {
    /// Index into the scenario's budget lines.
    Budget(usize),
    /// Index into the scenario's target lines.
    Target(usize),
}

/// Whether the plan uses a line up to its limit. Told from the plan's use, never from a price:
/// a line is binding when what it leaves (a budget's money left, a target's room under its
/// ceiling) is at most a share of its limit ([`crate::input::plan::PlanRules::binding_within`],
/// 5 % by default), and slack otherwise. The bound's price of a line is reported beside its
/// state; a slack line with a price has it from the bound's relaxation, which the plan's whole
/// choices need not follow.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LineState {
    Binding,
    Slack,
}

impl LineState {
    /// The state of a line of limit `limit` the plan uses `used` of (a budget's money, a
    /// target's measure), binding when `limit − used ≤ within × |limit|`.
    pub fn of(limit: f64, used: f64, within: f64) -> LineState {
        if limit - used <= within * limit.abs() {
            LineState::Binding
        } else {
            LineState::Slack
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            LineState::Binding => "binding",
            LineState::Slack => "slack",
        }
    }
}

/// Row units per money unit: budget lines count cents.
pub const MONEY_UNITS: f64 = 100.0;
/// Decimal places of [`MONEY_UNITS`].
const MONEY_PLACES: u32 = 2;
/// Row units per km (poor share) or per km·m/km (mean IRI): target rows count millionths, fine
/// enough that rounding each section's amount moves a network's mean IRI by less than 10⁻⁶ m/km.
pub const TARGET_UNITS: f64 = 1e6;
/// Decimal places of [`TARGET_UNITS`].
const TARGET_PLACES: u32 = 6;

/// One row of the selection.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    pub name: String,
    pub kind: RowKind,
    /// The limit as the scenario gives it (after `--budget-scale`): money for budget lines;
    /// for targets, the measure's limit (m/km or share).
    pub limit: f64,
    /// The limit in the row's own measure (targets: length-weighted, km·m/km or km).
    pub row_limit: f64,
    /// Exact limit of a budget line.
    pub money: Option<Money>,
    /// The limit in whole row units (see [`MONEY_UNITS`], [`TARGET_UNITS`]): what the
    /// selection holds exactly.
    pub limit_units: i64,
}

impl Row {
    /// Row units per unit of the row's measure.
    pub fn units(&self) -> f64 {
        match self.kind {
            RowKind::Budget(_) => MONEY_UNITS,
            RowKind::Target(_) => TARGET_UNITS,
        }
    }

    /// An amount in row units, in the row's measure (money, km·m/km or km).
    pub fn measure(&self, units: i64) -> f64 {
        units as f64 / self.units()
    }
}

/// `x` (in a row's measure) in whole row units of 10^−`places`, rounded by the tool's one rule
/// ([`crate::model::money::units_half_even`]). A value that is not finite or is beyond the supported
/// range becomes `i64::MAX` (or `MIN`), which the selection refuses with the row's name rather
/// than wrapping.
fn to_units(x: f64, places: u32) -> i64 {
    match crate::model::money::units_half_even(x, places) {
        Some(u) => u.clamp(i128::from(i64::MIN), i128::from(i64::MAX)) as i64,
        None if x < 0.0 => i64::MIN,
        None => i64::MAX,
    }
}

/// Every section's candidates, ready for selection.
#[derive(Debug, Clone)]
pub struct Candidates {
    pub rows: Vec<Row>,
    pub problem: Problem,
    pub objective: Objective,
    /// Per candidate: the strategy, its NPV against the base and its PV agency cost.
    pub strategy: Vec<StrategyRef>,
    pub npv: Vec<f64>,
    pub pv_agency: Vec<f64>,
    /// Per section (network order): the strategies enumerated, and the best one with no limits
    /// (commitments still held).
    pub enumerated: Vec<u32>,
    pub unconstrained: Vec<Unconstrained>,
    /// Per section: the base's PV agency cost.
    pub base_pv_agency: Vec<f64>,
    /// Each section's widening options (the best strategy of each widening year, commitments
    /// aside): section g's are `widening[widening_start[g]..widening_start[g + 1]]`.
    pub widening: Vec<WideningOption>,
    pub widening_start: Vec<u32>,
}

/// A section's best strategy with no budget or target limits (its commitments still held).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Unconstrained {
    pub strategy: StrategyRef,
    /// Its NPV against the base.
    pub npv: f64,
    pub pv_agency: f64,
}

/// Settings of a planning run.
#[derive(Debug, Clone, Copy)]
pub struct Settings {
    pub objective: Objective,
    pub budget_scale: f64,
    pub select: Options,
}

/// A checked plan.
#[derive(Debug, Clone)]
pub struct Plan {
    pub candidates: Candidates,
    pub outcome: Outcome,
    /// Per budget line (scenario order): the exact amount the plan spends.
    pub spent: Vec<Money>,
    /// Per target line: the plan's measure (mean IRI or poor share).
    pub achieved: Vec<f64>,
    /// Every treatment of the plan, by year then network order.
    pub works: Vec<PlannedWork>,
    /// The network's condition year by year under the plan, the base and the unconstrained
    /// choice, from the same simulation as the re-check.
    pub condition: ConditionSeries,
}

/// NPV against the base and PV agency cost of one way to treat the whole network.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Total {
    pub npv: f64,
    pub pv_agency: f64,
}

/// The plan's totals beside every section at its best with no limits and the base (whose NPV
/// against itself is 0), summed in network order.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Totals {
    pub plan: Total,
    pub unconstrained: Total,
    pub base: Total,
}

impl Plan {
    /// Each row's state under the plan ([`LineState`]), in the order of the candidates' rows:
    /// a budget line's from its money to the cent, a target's from its measure.
    pub fn line_states(&self, run: &Run) -> Vec<LineState> {
        let within = run.scenario.plan.binding_within();
        let mut target = 0;
        self.candidates
            .rows
            .iter()
            .map(|row| match row.kind {
                RowKind::Budget(b) => {
                    let cents = |m: Money| Money(m.0.round_dp(MONEY_PLACES)).to_f64();
                    LineState::of(
                        cents(row.money.unwrap_or_default()),
                        cents(self.spent[b]),
                        within,
                    )
                }
                RowKind::Target(k) => {
                    target += 1;
                    LineState::of(
                        run.scenario.plan.targets[k].at_most,
                        self.achieved[target - 1],
                        within,
                    )
                }
            })
            .collect()
    }

    /// The plan's totals beside the unconstrained choice and the base.
    pub fn totals(&self) -> Totals {
        let c = &self.candidates;
        let mut t = Totals::default();
        for g in 0..c.sections() {
            let k = c.chosen(&self.outcome.plan, g);
            t.plan.npv += c.npv[k];
            t.plan.pv_agency += c.pv_agency[k];
            t.unconstrained.npv += c.unconstrained[g].npv;
            t.unconstrained.pv_agency += c.unconstrained[g].pv_agency;
            t.base.pv_agency += c.base_pv_agency[g];
        }
        t
    }
}

/// One treatment of the plan.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlannedWork {
    /// When, after the base year.
    pub year: YearOffset,
    /// Section index in network order.
    pub section: usize,
    /// Treatment index in the catalogue.
    pub treatment: usize,
    pub cost: f64,
}

/// What the exact re-check found: spending per budget line, each target's measure, the works,
/// and (when asked) the network's condition under the plan, the base and the unconstrained
/// choice.
#[derive(Debug, Clone)]
pub struct Checked {
    pub spent: Vec<Money>,
    pub achieved: Vec<f64>,
    pub works: Vec<PlannedWork>,
    pub condition: Option<ConditionSeries>,
}

impl Candidates {
    /// Section `g`'s widening options (each widening year's best strategy), by year.
    pub fn widening_of(&self, g: usize) -> &[WideningOption] {
        let (a, b) = (self.widening_start[g], self.widening_start[g + 1]);
        &self.widening[a as usize..b as usize]
    }

    pub fn sections(&self) -> usize {
        self.problem.groups()
    }

    /// The global candidate index of the plan's choice for section `g`.
    pub fn chosen(&self, plan: &[u16], g: usize) -> usize {
        self.problem.global(g, plan[g])
    }

    /// A plan's objective as reported: total NPV, or total PV agency cost.
    pub fn objective_of(&self, value: f64) -> f64 {
        match self.objective {
            Objective::Npv => value,
            Objective::LeastCost => -value,
        }
    }
}

/// A section's use of each row by one strategy's trace, as sparse (row, use in row units).
pub fn uses(run: &Run, rows: &[Row], sec: &Section, t: &Trace, out: &mut Vec<(u16, i64)>) {
    SectionRows::new(run, rows, sec).uses(t, out);
}

/// The rows that can count one section (its region's and every region's), with what each reads
/// from a trace: worked out once per section, then read for each of its strategies.
#[derive(Debug, Clone)]
pub struct SectionRows<'a> {
    reads: Vec<(u16, Read)>,
    length_km: f64,
    classes: &'a crate::input::models::ConditionParams,
}

/// What a row reads from a trace, at a year index.
#[derive(Debug, Clone, Copy)]
enum Read {
    Money(Category, usize),
    MeanIri(usize),
    PoorShare(usize),
}

impl<'a> SectionRows<'a> {
    pub fn new(run: &'a Run, rows: &[Row], sec: &Section) -> SectionRows<'a> {
        let s = &run.scenario;
        let y0 = s.base_year;
        let mut reads = Vec::new();
        for (j, row) in rows.iter().enumerate() {
            let (region, read) = match row.kind {
                RowKind::Budget(b) => {
                    let line = &s.budget_lines[b];
                    let i = (line.year - y0) as usize;
                    (&line.region, Read::Money(line.category, i))
                }
                RowKind::Target(k) => {
                    let line = &s.plan.targets[k];
                    let i = (line.year - y0) as usize;
                    let read = match line.measure {
                        Measure::MeanIri => Read::MeanIri(i),
                        Measure::PoorShare => Read::PoorShare(i),
                    };
                    (&line.region, read)
                }
            };
            if region.is_some() && *region != sec.region {
                continue;
            }
            reads.push((j as u16, read));
        }
        SectionRows {
            reads,
            length_km: sec.length_km,
            classes: &s.models.condition,
        }
    }

    /// The use of each budget row by yearly capital and routine spending scaled by `capital`
    /// and `routine`, as sparse (row, use in row units); target rows are left out.
    pub fn money_uses(
        &self,
        spending: (&[f64], &[f64]),
        capital: f64,
        routine: f64,
        out: &mut Vec<(u16, i64)>,
    ) {
        out.clear();
        for &(j, read) in &self.reads {
            let Read::Money(category, i) = read else {
                continue;
            };
            let (c, r) = (capital * spending.0[i], routine * spending.1[i]);
            let x = match category {
                Category::Capital => c,
                Category::Routine => r,
                Category::All => c + r,
            };
            let u = to_units(x, MONEY_PLACES);
            if u != 0 {
                out.push((j, u));
            }
        }
    }

    /// The trace's use of each row, as sparse (row, use in row units).
    pub fn uses(&self, t: &Trace, out: &mut Vec<(u16, i64)>) {
        out.clear();
        for &(j, read) in &self.reads {
            let u = match read {
                Read::Money(category, i) => {
                    let x = match category {
                        Category::Capital => t.capital[i],
                        Category::Routine => t.routine[i],
                        Category::All => t.capital[i] + t.routine[i],
                    };
                    // Most years of most lines see no works: nothing to round.
                    if x == 0.0 {
                        continue;
                    }
                    to_units(x, MONEY_PLACES)
                }
                Read::MeanIri(i) => to_units(self.length_km * t.iri[i], TARGET_PLACES),
                Read::PoorShare(i) => {
                    if classify(t.iri[i], self.classes) == ConditionClass::Poor {
                        to_units(self.length_km, TARGET_PLACES)
                    } else {
                        0
                    }
                }
            };
            if u != 0 {
                out.push((j, u));
            }
        }
    }
}

/// Length (km) of the sections a target counts: its region's, or the whole network's.
pub fn target_length(run: &Run, t: &crate::input::plan::TargetLine) -> f64 {
    run.network
        .sections
        .iter()
        .filter(|sec| t.region.is_none() || sec.region == t.region)
        .map(|sec| sec.length_km)
        .sum()
}

/// The rows of a run: its budget lines (scaled) and target lines. A scaled limit that passes
/// the largest supported amount is an input error naming its line.
pub fn rows(run: &Run, budget_scale: f64) -> Result<Vec<Row>, crate::error::Error> {
    let s = &run.scenario;
    let mut rows = Vec::new();
    let mut d = Diagnostics::new();
    let Ok(scale) = Decimal::try_from(budget_scale) else {
        return Err(crate::error::Error::Usage(format!(
            "a budget scale of {budget_scale}, which is not a usable factor; expected a number from 0 to 1000000"
        )));
    };
    let most = Decimal::from(crate::select::problem::MAX_ROW_TOTAL) / Decimal::ONE_HUNDRED;
    for (b, line) in s.budget_lines.iter().enumerate() {
        // Spending is whole cents, so the largest whole number of cents within the limit is
        // the same limit.
        let m = line
            .limit
            .0
            .checked_mul(scale)
            .map(|x| {
                x.round_dp_with_strategy(2, rust_decimal::RoundingStrategy::ToNegativeInfinity)
            })
            .filter(|x| x.abs() <= most);
        let Some(m) = m else {
            d.error(
                line.place.clone().with_subfield("limit"),
                format!(
                    "`{}` limit {} × budget scale {budget_scale}, beyond the largest supported amount",
                    line.name, line.limit.0
                ),
                format!(
                    "a limit of at most {} money units (after the budget scale)",
                    crate::model::money::grouped(crate::select::problem::MAX_ROW_TOTAL as f64 / 100.0, 0)
                ),
            );
            continue;
        };
        let m = Money(m);
        let cents = (m.0 * Decimal::ONE_HUNDRED).trunc();
        rows.push(Row {
            name: line.name.clone(),
            kind: RowKind::Budget(b),
            limit: m.to_f64(),
            row_limit: m.to_f64(),
            money: Some(m),
            limit_units: i64::try_from(cents).unwrap_or(i64::MAX),
        });
    }
    for (k, t) in s.plan.targets.iter().enumerate() {
        let length = target_length(run, t);
        let row_limit = t.at_most * length;
        // The largest whole number of units within the limit (a hair of float noise in the
        // product is not allowed to cut a unit off a limit that is whole).
        let raw = row_limit * TARGET_UNITS;
        let units = (raw + 1e-9 * raw.abs()).floor();
        rows.push(Row {
            name: t.name.clone(),
            kind: RowKind::Target(k),
            limit: t.at_most,
            row_limit,
            money: None,
            limit_units: if units.is_finite() {
                units as i64
            } else {
                i64::MAX
            },
        });
    }
    if d.has_errors() {
        return Err(crate::error::Error::Input(d));
    }
    Ok(rows)
}

#[derive(Default)]
struct SectionCands {
    offers: Offers,
    /// Every strategy's own flows where some strategy widens (reused buffers).
    owns: crate::simulate::FlowStore,
    strategy: Vec<StrategyRef>,
    npv: Vec<f64>,
    pv_agency: Vec<f64>,
    enumerated: u32,
    unconstrained: Unconstrained,
    base_pv_agency: f64,
    /// Each widening year's best strategy, whatever the commitments (for the widening table).
    widening: Vec<WideningOption>,
    /// Commitments no strategy keeps: (place, what was found, what was expected), added to.
    problems: Vec<(Place, String, String)>,
    /// The traces the strategies are played into, reused from section to section.
    traces: [Trace; crate::simulate::SIDE_BY_SIDE],
    /// The base's flows.
    base_flows: crate::simulate::Flows,
}

/// The candidates of one parallel chunk of sections, in network order, before they join the
/// whole.
struct Chunk {
    problem: Problem,
    strategy: Vec<StrategyRef>,
    npv: Vec<f64>,
    pv_agency: Vec<f64>,
    enumerated: Vec<u32>,
    unconstrained: Vec<Unconstrained>,
    base_pv_agency: Vec<f64>,
    widening: Vec<WideningOption>,
    /// Widening options of each section of the chunk.
    widening_count: Vec<u32>,
    problems: Vec<(Place, String, String)>,
    /// The first section whose candidates the selection could not take.
    fault: Option<(String, ProblemError)>,
}

impl Chunk {
    fn new(limits: &[i64]) -> Chunk {
        Chunk {
            problem: Problem::new(limits.to_vec()),
            strategy: Vec::new(),
            npv: Vec::new(),
            pv_agency: Vec::new(),
            enumerated: Vec::new(),
            unconstrained: Vec::new(),
            base_pv_agency: Vec::new(),
            widening: Vec::new(),
            widening_count: Vec::new(),
            problems: Vec::new(),
            fault: None,
        }
    }
}

/// The commitments of each section, by section id.
fn commitments(run: &Run) -> HashMap<&str, Vec<&crate::input::plan::Commitment>> {
    let mut m: HashMap<&str, Vec<_>> = HashMap::new();
    for c in &run.scenario.plan.commitments {
        m.entry(c.section.as_str()).or_default().push(c);
    }
    m
}

/// Simulate one section's strategies into candidates.
fn section_candidates(
    run: &Run,
    e: &Enumerator<'_>,
    rows: &[Row],
    objective: Objective,
    sec: &Section,
    held: Option<&Vec<&crate::input::plan::Commitment>>,
    out: &mut SectionCands,
) {
    let s = &run.scenario;
    let d: &Discounting = &s.discounting;
    let y0 = s.base_year;
    let sim = SectionSim::new(run, sec);
    // Names are wanted only to keep commitments to a named strategy, and to name some in a
    // message about them.
    let strategies: Vec<Strategy> = if held.is_some() {
        e.strategies(sec)
    } else {
        e.unnamed_strategies(sec)
    };
    // The buffers are the previous section's, emptied.
    out.offers.clear();
    out.strategy.clear();
    out.npv.clear();
    out.pv_agency.clear();
    out.widening.clear();
    out.enumerated = strategies.len() as u32;
    out.unconstrained = Unconstrained::default();
    let mut widening: Vec<(usize, Year, f64)> = Vec::new();
    // Every strategy's own flows, for the widening's return against the same works without it
    // (kept only where some strategy widens).
    let widens = strategies
        .iter()
        .any(|st| st.widening_year(&run.catalogue).is_some());
    out.owns.clear();
    let mut best: Option<(f64, StrategyRef, f64, f64)> = None;
    let mut u = Vec::new();
    let mut own = crate::simulate::Flows::default();
    let reads = SectionRows::new(run, rows, sec);
    let base_flows = &mut out.base_flows;
    let base_pv_agency = &mut out.base_pv_agency;
    // The base is the first strategy, played (and so known) before any other is valued; each
    // strategy replays only the years after its works part from an earlier one's.
    sim.run_each(&strategies, &mut out.traces, |i, t| {
        let st = &strategies[i];
        if i == 0 {
            t.flows_into(d, base_flows);
            *base_pv_agency = d.pv(y0, &base_flows.agency);
        }
        t.flows_into(d, &mut own);
        let npv = crate::evaluate::npv_against(d, y0, &own, base_flows);
        if let Some(w) = st.widening_year(&run.catalogue) {
            widening.push((i, y0 + w, npv));
        }
        let pv_agency = d.pv(y0, &own.agency);
        if widens {
            out.owns.push(&own);
        }
        if let Some(cs) = held {
            let ok = cs.iter().all(|c| match &c.held {
                Held::Strategy(name) => *name == st.name,
                Held::Treatment { treatment, year } => t.works.iter().any(|w| {
                    y0 + w.year == *year && run.catalogue.treatments[w.treatment].id == *treatment
                }),
            });
            if !ok {
                return;
            }
        }
        let value = match objective {
            Objective::Npv => npv,
            Objective::LeastCost => -pv_agency,
        };
        if best.is_none_or(|b| value > b.0) {
            best = Some((value, st.key, npv, pv_agency));
        }
        reads.uses(t, &mut u);
        out.offers.push(value, &u);
        out.strategy.push(st.key);
        out.npv.push(npv);
        out.pv_agency.push(pv_agency);
    });
    let mut widening = crate::appraise::best_by_widening_year(widening);
    crate::appraise::widening_returns(run, &sim, &strategies, &out.owns, &mut widening, d);
    out.widening
        .extend(widening.into_iter().map(|w| WideningOption {
            year: w.year,
            strategy: strategies[w.strategy].key,
            npv: w.npv,
            fyrr: w.fyrr,
        }));
    match best {
        Some((_, i, npv, pva)) => {
            out.unconstrained = Unconstrained {
                strategy: i,
                npv,
                pv_agency: pva,
            }
        }
        None => {
            // No strategy keeps every commitment of this section.
            let cs = held.map(Vec::as_slice).unwrap_or(&[]);
            for c in cs {
                let (field, what) = match &c.held {
                    Held::Strategy(n) => ("strategy", format!("the strategy `{n}`")),
                    Held::Treatment { treatment, year } => (
                        "treatment",
                        format!("the treatment `{treatment}` in {year}"),
                    ),
                };
                let names: Vec<&str> = strategies.iter().take(6).map(|s| s.name.as_str()).collect();
                out.problems.push((
                    c.place.clone().with_subfield(field),
                    format!(
                        "{what}, which no strategy of section `{}` gives{}",
                        sec.id,
                        if cs.len() > 1 { " together with its other commitments" } else { "" }
                    ),
                    format!(
                        "one of its {} strategies (e.g. {}), or a treatment and year one of them applies",
                        strategies.len(),
                        names.join(", ")
                    ),
                ));
            }
        }
    }
}

/// What building a run's candidates will cost: (strategies, seconds, peak bytes), from the
/// strategies of up to 1,000 evenly spaced sections scaled to the network, and the measured rates
/// of [`crate::resources`].
pub fn estimate(run: &Run) -> (f64, f64, f64) {
    let secs = &run.network.sections;
    if secs.is_empty() {
        return (0.0, 0.0, 0.0);
    }
    let e = Enumerator::for_run(run);
    let step = secs.len().div_ceil(1000).max(1);
    let sample: Vec<&Section> = secs.iter().step_by(step).collect();
    let per: f64 = sample
        .iter()
        .map(|s| e.strategies(s).len() as f64)
        .sum::<f64>()
        / sample.len() as f64;
    let strategies = per * secs.len() as f64;
    let (seconds, bytes) = crate::resources::plan_cost(strategies, run.scenario.analysis_years);
    (strategies, seconds, bytes)
}

/// Budget lines whose total over the network could pass what a line can count (about
/// 2.3·10¹⁶): an input error at the line, found without simulating, from an upper bound — every
/// treatment of the catalogue in the same year on the section widened by the most lanes any
/// treatment adds, and routine upkeep and holding repairs at the roughness cap. `check` and
/// `plan` both run it, so they refuse the same inputs; the selection's own range check stays
/// behind it.
pub fn spending_bound_problems(run: &Run, d: &mut Diagnostics) {
    let cat = &run.catalogue;
    let added = cat
        .treatments
        .iter()
        .map(|t| t.lanes_added)
        .max()
        .unwrap_or(0);
    let upkeep = crate::simulate::costs::Upkeep::new(&cat.routine);
    let iri_max = run.scenario.models.condition.iri_max;
    let most = crate::select::problem::MAX_ROW_TOTAL as f64 / MONEY_UNITS;
    // Per section: (capital, routine) upper bounds for one year.
    let per: Vec<(f64, f64)> = run
        .network
        .sections
        .iter()
        .map(|sec| {
            let lanes = sec.lanes.saturating_add(added);
            let capital: f64 = cat
                .treatments
                .iter()
                .map(|t| {
                    t.cost.to_f64().abs()
                        * crate::simulate::costs::quantity(
                            t.cost_per,
                            sec.length_km,
                            lanes,
                            sec.lane_width_m
                                .unwrap_or(crate::simulate::DEFAULT_LANE_WIDTH_M),
                        )
                })
                .sum();
            let routine = upkeep
                .year(iri_max, sec.length_km * f64::from(lanes))
                .0
                .abs();
            (capital, routine)
        })
        .collect();
    for line in &run.scenario.budget_lines {
        let total: f64 = run
            .network
            .sections
            .iter()
            .zip(&per)
            .filter(|(sec, _)| line.region.is_none() || line.region == sec.region)
            .map(|(_, &(c, r))| match line.category {
                Category::Capital => c,
                Category::Routine => r,
                Category::All => c + r,
            })
            .sum();
        if total.is_nan() || total > most {
            d.error(
                line.place.clone(),
                format!(
                    "`{}`: the sections could put up to {} on this line, beyond the largest supported total",
                    line.name,
                    crate::model::money::grouped(total, 0)
                ),
                format!(
                    "costs whose totals over the network stay below {} — check the treatment costs and the routine costs for a misplaced decimal point",
                    crate::model::money::grouped(most, 0)
                ),
            );
        }
    }
}

/// The commitments that no strategy of their section can keep — what [`candidates`] would
/// refuse — found by simulating only the committed sections (so `check` reports them too).
pub fn commitment_problems(run: &Run, d: &mut Diagnostics) {
    let held = commitments(run);
    if held.is_empty() {
        return;
    }
    let e = Enumerator::for_run(run);
    let mut c = SectionCands::default();
    for sec in &run.network.sections {
        if let Some(h) = held.get(sec.id.as_str()) {
            section_candidates(run, &e, &[], Objective::Npv, sec, Some(h), &mut c);
        }
    }
    for (place, found, expected) in c.problems {
        d.error(place, found, expected);
    }
}

/// Simulate every section and build the selection problem. Bad commitments are input errors.
pub fn candidates(run: &Run, settings: &Settings) -> Result<Candidates, crate::error::Error> {
    candidates_with(run, settings, &Progress::none())
}

/// [`candidates`], counting sections done on `progress`.
pub fn candidates_with(
    run: &Run,
    settings: &Settings,
    progress: &Progress,
) -> Result<Candidates, crate::error::Error> {
    let mut d = Diagnostics::new();
    spending_bound_problems(run, &mut d);
    if d.has_errors() {
        return Err(crate::error::Error::Input(d));
    }
    let e = Enumerator::for_run(run);
    let rows = rows(run, settings.budget_scale)?;
    let limits: Vec<i64> = rows.iter().map(|r| r.limit_units).collect();
    let held = commitments(run);
    let secs = &run.network.sections;
    let mut out = Candidates {
        rows,
        problem: Problem::new(limits.clone()),
        objective: settings.objective,
        strategy: Vec::new(),
        npv: Vec::new(),
        pv_agency: Vec::new(),
        enumerated: Vec::with_capacity(secs.len()),
        unconstrained: Vec::with_capacity(secs.len()),
        base_pv_agency: Vec::with_capacity(secs.len()),
        widening: Vec::new(),
        widening_start: vec![0],
    };
    let rows = out.rows.clone();
    let mut d = Diagnostics::new();
    // Blocks of sections one after the other, each in parallel chunks, so that only one block's
    // partial results exist beside the growing whole.
    for block in secs.chunks(BLOCK) {
        let chunks: Vec<Chunk> = block
            .par_chunks(CHUNK)
            .map(|chunk| {
                let mut k = Chunk::new(&limits);
                let mut c = SectionCands::default();
                for sec in chunk {
                    section_candidates(
                        run,
                        &e,
                        &rows,
                        settings.objective,
                        sec,
                        held.get(sec.id.as_str()),
                        &mut c,
                    );
                    k.problems.append(&mut c.problems);
                    progress.inc(1);
                    k.enumerated.push(c.enumerated);
                    k.unconstrained.push(c.unconstrained);
                    k.base_pv_agency.push(c.base_pv_agency);
                    k.widening.extend(&c.widening);
                    k.widening_count.push(c.widening.len() as u32);
                    if c.offers.is_empty() {
                        continue;
                    }
                    match k.problem.push_group(&c.offers) {
                        Ok(kept) => {
                            for i in kept {
                                k.strategy.push(c.strategy[i]);
                                k.npv.push(c.npv[i]);
                                k.pv_agency.push(c.pv_agency[i]);
                            }
                        }
                        Err(err) => {
                            k.fault.get_or_insert((sec.id.as_str().to_owned(), err));
                        }
                    }
                }
                k
            })
            .collect();
        for k in chunks {
            if let Some((section, err)) = k.fault {
                return Err(too_large(run, &rows, &section, err));
            }
            for (place, found, expected) in k.problems {
                d.error(place, found, expected);
            }
            if let Err(err) = out.problem.append(k.problem) {
                return Err(too_large(run, &rows, "(all sections together)", err));
            }
            out.strategy.extend(k.strategy);
            out.npv.extend(k.npv);
            out.pv_agency.extend(k.pv_agency);
            out.enumerated.extend(k.enumerated);
            out.unconstrained.extend(k.unconstrained);
            out.base_pv_agency.extend(k.base_pv_agency);
            out.widening.extend(k.widening);
            for n in k.widening_count {
                let last = *out.widening_start.last().expect("starts at 0");
                out.widening_start.push(last + n);
            }
        }
    }
    if d.has_errors() {
        return Err(crate::error::Error::Input(d));
    }
    Ok(out)
}

/// A group the selection could not take: a row whose amounts pass the supported range is the
/// input's fault (huge costs or limits) and names the line; anything else is internal.
fn too_large(run: &Run, rows: &[Row], section: &str, err: ProblemError) -> crate::error::Error {
    let ProblemError::TooLarge(j) = err else {
        return crate::error::Error::Internal(format!("section {section}: {err}"));
    };
    let row = &rows[j];
    let place = match row.kind {
        RowKind::Budget(b) => run.scenario.budget_lines[b].place.clone(),
        RowKind::Target(k) => run.scenario.plan.targets[k].place.clone(),
    };
    let most = crate::select::problem::MAX_ROW_TOTAL as f64 / row.units();
    let mut d = Diagnostics::new();
    d.error(
        place,
        format!(
            "`{}`: the amounts the sections could put on this line (section {section} and those before it) pass the largest supported total",
            row.name
        ),
        format!(
            "costs and limits whose totals over the network stay below {} — check the treatment costs and unit values for a misplaced decimal point",
            crate::model::money::grouped(most, 0)
        ),
    );
    crate::error::Error::Input(d)
}

/// Build the candidates, select, and re-check the plan exactly.
pub fn plan(run: &Run, settings: &Settings) -> Result<Plan, crate::error::Error> {
    let candidates = candidates(run, settings)?;
    select(run, candidates, &settings.select)
}

/// Select on built candidates and re-check the plan exactly.
pub fn select(
    run: &Run,
    candidates: Candidates,
    options: &Options,
) -> Result<Plan, crate::error::Error> {
    let (outcome, checked) = solve_checked(run, &candidates, options, Series::Condition)?;
    Ok(Plan {
        candidates,
        outcome,
        spent: checked.spent,
        achieved: checked.achieved,
        works: checked.works,
        condition: checked
            .condition
            .unwrap_or_else(|| ConditionSeries::empty(run)),
    })
}

/// Whether a re-check also sums the network's condition (which simulates the base and the
/// unconstrained choice of every section beside the plan's).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Series {
    Condition,
    None,
}

/// Select on built candidates (their current limits) and re-check the plan exactly.
pub fn solve_checked(
    run: &Run,
    candidates: &Candidates,
    options: &Options,
    series: Series,
) -> Result<(Outcome, Checked), crate::error::Error> {
    let mut outcome = match network::solve(&candidates.problem, options) {
        Ok(o) => o,
        Err(inf) => return Err(infeasible(run, candidates, inf)),
    };
    // The selection prices a row unit (a cent, a millionth); reports price a unit of the row's
    // own measure (money, km, km·m/km).
    for (p, row) in outcome.prices.iter_mut().zip(&candidates.rows) {
        *p *= row.units();
    }
    let checked = recheck(run, candidates, &outcome.plan, series)?;
    Ok((outcome, checked))
}

impl Candidates {
    /// Set every budget line's limit to the scenario's limit × `level` where `scaled(row)` says
    /// so, and to the scenario's own limit elsewhere (targets are never scaled). The selection
    /// keeps the same margin below each money limit as [`candidates`] does.
    pub fn set_budget_level(
        &mut self,
        run: &Run,
        level: f64,
        scaled: &dyn Fn(&Row) -> bool,
    ) -> Result<(), crate::error::Error> {
        let full = rows(run, 1.0)?;
        let at_level = rows(run, level)?;
        for (j, row) in self.rows.iter_mut().enumerate() {
            if let RowKind::Budget(_) = row.kind {
                *row = if scaled(&full[j]) {
                    at_level[j].clone()
                } else {
                    full[j].clone()
                };
                self.problem.limits[j] = row.limit_units;
            }
        }
        Ok(())
    }

    /// The most each row could be used: every section at its candidate using the row most.
    pub fn largest_use(&self) -> Vec<i64> {
        let mut most = vec![0i64; self.rows.len()];
        let mut here = vec![0i64; self.rows.len()];
        for g in 0..self.sections() {
            here.iter_mut().for_each(|x| *x = 0);
            for cand in self.problem.candidates(g) {
                let (rs, vs) = self.problem.uses(cand);
                for (&j, &x) in rs.iter().zip(vs) {
                    let h = &mut here[j as usize];
                    *h = (*h).max(x);
                }
            }
            for (m, h) in most.iter_mut().zip(&here) {
                *m += h;
            }
        }
        most
    }

    /// The smallest budget level (factor on the scenario's lines picked by `scaled`) at which no
    /// picked line can bind: each line's limit covers the most every section could put on it
    /// (rounded up to six decimals). `None` when some picked line has a zero limit but could be
    /// used.
    pub fn unlimited_level(&self, scaled: &dyn Fn(&Row) -> bool) -> Option<f64> {
        let most = self.largest_use();
        let mut level: f64 = 0.0;
        for (row, m) in self.rows.iter().zip(most) {
            if !matches!(row.kind, RowKind::Budget(_)) || !scaled(row) || m <= 0 {
                continue;
            }
            let base = row.money.map(Money::to_f64).unwrap_or(row.row_limit);
            if base <= 0.0 {
                return None;
            }
            // A part in 10⁹ of headroom, so that the scaled limit rounded down to the cent
            // still covers the most the line could count.
            let m = row.measure(m);
            level = level.max(m * (1.0 + 1e-9) / base + 0.01 / base);
        }
        // Rounded up to six decimals, as frontier.csv writes a level: higher still binds no
        // line, and the level solved is the level written.
        Some((level * 1e6).ceil() / 1e6)
    }
}

/// Condition of the network over the analysis period under three cases.
#[derive(Debug, Clone, PartialEq)]
pub struct ConditionSeries {
    /// Calendar year of index 0.
    pub first_year: Year,
    /// Per case ([`CASES`] order): length-weighted mean IRI of each year.
    pub mean_iri: [Vec<f64>; 3],
    /// Per case: share of length good, fair and poor in each year.
    pub shares: [Vec<[f64; 3]>; 3],
}

/// The cases of [`ConditionSeries`]: the plan, the base (routine maintenance only), and every
/// section's best strategy with no budget limits.
pub const CASES: [&str; 3] = ["plan", "base", "unconstrained"];

impl ConditionSeries {
    /// No years (a plan re-checked without its series).
    pub fn empty(run: &Run) -> ConditionSeries {
        ConditionSeries {
            first_year: run.scenario.base_year,
            mean_iri: Default::default(),
            shares: Default::default(),
        }
    }
}

/// The condition sums of some sections: per case, length × IRI and length per class each year,
/// and their length.
struct ConditionSums {
    iri: [Vec<f64>; 3],
    classes: [Vec<[f64; 3]>; 3],
    length: f64,
}

impl ConditionSums {
    fn new(n: usize) -> ConditionSums {
        ConditionSums {
            iri: [vec![0.0; n], vec![0.0; n], vec![0.0; n]],
            classes: [vec![[0.0; 3]; n], vec![[0.0; 3]; n], vec![[0.0; 3]; n]],
            length: 0.0,
        }
    }

    /// Section `sec`'s roughness under case `case`, year by year.
    fn add(&mut self, run: &Run, sec: &Section, case: usize, iri: &[f64]) {
        for (y, &x) in iri.iter().enumerate() {
            self.iri[case][y] += sec.length_km * x;
            let class = match classify(x, &run.scenario.models.condition) {
                ConditionClass::Good => 0,
                ConditionClass::Fair => 1,
                ConditionClass::Poor => 2,
            };
            self.classes[case][y][class] += sec.length_km;
        }
    }

    /// Another chunk's sums, added after these.
    fn absorb(&mut self, o: &ConditionSums) {
        for case in 0..3 {
            for (a, b) in self.iri[case].iter_mut().zip(&o.iri[case]) {
                *a += b;
            }
            for (a, b) in self.classes[case].iter_mut().zip(&o.classes[case]) {
                for k in 0..3 {
                    a[k] += b[k];
                }
            }
        }
        self.length += o.length;
    }

    /// The length-weighted series.
    fn series(mut self, run: &Run) -> ConditionSeries {
        let length = self.length.max(f64::MIN_POSITIVE);
        for case in 0..3 {
            self.iri[case].iter_mut().for_each(|x| *x /= length);
            for c in &mut self.classes[case] {
                for k in c {
                    *k /= length;
                }
            }
        }
        ConditionSeries {
            first_year: run.scenario.base_year,
            mean_iri: self.iri,
            shares: self.classes,
        }
    }
}

fn infeasible(run: &Run, c: &Candidates, inf: Infeasible) -> crate::error::Error {
    let money = &run.scenario.money_label;
    let describe = |j: usize, amount: i64, verb: &str| -> String {
        let row = &c.rows[j];
        match row.kind {
            RowKind::Budget(_) => format!(
                "{}: limit {} {money}, {verb} {} {money}",
                row.name,
                crate::model::money::grouped(row.measure(row.limit_units), 2),
                crate::model::money::grouped(row.measure(amount), 2)
            ),
            RowKind::Target(k) => {
                let t = &run.scenario.plan.targets[k];
                let length = target_length(run, t);
                let per = if length > 0.0 {
                    row.measure(amount) / length
                } else {
                    0.0
                };
                format!(
                    "{}: {} at most {}, {verb} {:.6}",
                    row.name,
                    t.measure.name(),
                    t.at_most,
                    per
                )
            }
        }
    };
    use crate::error::{NoPlan, NoPlanKind};
    let (kind, rows, verb, head) = match &inf {
        Infeasible::Rows(rows) => (
            NoPlanKind::LeastSpending,
            rows,
            "least possible",
            "these lines cannot be met even with the least spending (and best condition) every \
             section's commitments allow:",
        ),
        Infeasible::Together(rows) => (
            NoPlanKind::ProvenTogether,
            rows,
            "closest plan found",
            "each line can be met on its own, but a complete search proved that no plan meets \
             them all together; the closest plan found breaks:",
        ),
        Infeasible::NotFound(rows) => (
            NoPlanKind::NotFound,
            rows,
            "closest plan found",
            "no plan meeting every line together was found within the time limit, though none \
             was proven impossible (give it more time with --time-limit, or loosen these \
             lines); the closest plan found breaks:",
        ),
    };
    let described: Vec<String> = rows.iter().map(|&(j, x)| describe(j, x, verb)).collect();
    crate::error::Error::Infeasible(NoPlan {
        kind: Some(kind),
        lines: rows.iter().map(|&(j, _)| c.rows[j].name.clone()).collect(),
        text: format!("{head}\n  {}", described.join("\n  ")),
    })
}

/// Re-simulate the chosen strategies and sum every budget line's spending in exact decimal
/// arithmetic (each section-year amount to the cent); fail if any line is exceeded. Also returns
/// each target's achieved measure and the plan's works, from the same simulation.
pub fn recheck(
    run: &Run,
    c: &Candidates,
    plan: &[u16],
    series: Series,
) -> Result<Checked, crate::error::Error> {
    let s = &run.scenario;
    let e = Enumerator::for_run(run);
    let secs = &run.network.sections;
    let nb = s.budget_lines.len();
    let nt = s.plan.targets.len();
    let n = s.analysis_years as usize;
    type Part = (Vec<Decimal>, Vec<f64>, Vec<PlannedWork>, ConditionSums);
    let parts: Vec<Part> = secs
        .par_chunks(CHUNK)
        .enumerate()
        .map(|(ci, chunk)| {
            let mut spent = vec![Decimal::ZERO; nb];
            let mut target = vec![0.0; nt];
            let mut works = Vec::new();
            let mut sums = ConditionSums::new(if series == Series::Condition { n } else { 0 });
            let mut traces: [Trace; crate::simulate::SIDE_BY_SIDE] = Default::default();
            let mut u = Vec::new();
            for (i, sec) in chunk.iter().enumerate() {
                let g = ci * CHUNK + i;
                let st = e
                    .strategy(c.strategy[c.chosen(plan, g)])
                    .unwrap_or_else(Strategy::base);
                let sim = SectionSim::new(run, sec);
                // The plan's strategy, then (for the series) the base and the unconstrained
                // choice, side by side.
                let mut played = vec![st];
                if series == Series::Condition {
                    played.push(Strategy::base());
                    played.push(
                        e.strategy(c.unconstrained[g].strategy)
                            .unwrap_or_else(Strategy::base),
                    );
                }
                sim.run_each(&played, &mut traces, |k, t| {
                    if series == Series::Condition {
                        sums.add(run, sec, k, &t.iri);
                    }
                    if k > 0 {
                        return;
                    }
                    works.extend(t.works.iter().map(|w| PlannedWork {
                        year: w.year,
                        section: g,
                        treatment: w.treatment,
                        cost: w.cost,
                    }));
                    uses(run, &c.rows, sec, t, &mut u);
                    for &(j, x) in &u {
                        match c.rows[j as usize].kind {
                            // Cents to decimal money: exact.
                            RowKind::Budget(b) => {
                                spent[b] = spent[b].saturating_add(Decimal::new(x, 2))
                            }
                            RowKind::Target(k) => target[k] += c.rows[j as usize].measure(x),
                        }
                    }
                });
                if series == Series::Condition {
                    sums.length += sec.length_km;
                }
            }
            (spent, target, works, sums)
        })
        .collect();
    let mut spent = vec![Decimal::ZERO; nb];
    let mut target = vec![0.0; nt];
    let mut works = Vec::new();
    let mut sums = ConditionSums::new(if series == Series::Condition { n } else { 0 });
    for (sp, tg, wk, cs) in parts {
        works.extend(wk);
        sums.absorb(&cs);
        for (a, b) in spent.iter_mut().zip(sp) {
            *a = a.saturating_add(b);
        }
        for (a, b) in target.iter_mut().zip(tg) {
            *a += b;
        }
    }
    let mut over = Vec::new();
    for row in &c.rows {
        if let (RowKind::Budget(b), Some(limit)) = (&row.kind, row.money) {
            if spent[*b] > limit.0 {
                over.push(format!(
                    "{} spends {} over {}",
                    row.name, spent[*b], limit.0
                ));
            }
        }
    }
    if !over.is_empty() {
        return Err(crate::error::Error::Internal(format!(
            "the chosen plan failed the exact re-check of its budget lines ({}); nothing was written",
            over.join("; ")
        )));
    }
    let mut achieved = Vec::with_capacity(nt);
    for row in &c.rows {
        if let RowKind::Target(k) = row.kind {
            let length = target_length(run, &s.plan.targets[k]);
            achieved.push(if length > 0.0 {
                target[k] / length
            } else {
                0.0
            });
        }
    }
    // Chunks come in network order, so a stable sort by year keeps network order within a year.
    works.sort_by_key(|w| w.year);
    Ok(Checked {
        spent: spent.into_iter().map(Money).collect(),
        achieved,
        works,
        condition: (series == Series::Condition).then(|| sums.series(run)),
    })
}
