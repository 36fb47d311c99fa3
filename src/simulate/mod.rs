//! Simulation: every section under every strategy, year by year — traffic, capacity and speed,
//! pavement condition, treatments, agency costs, road-user costs and residual value.
//!
//! [`SectionSim`] holds everything about one section that no strategy changes (traffic by year,
//! the hourly flow profile, unit costs per vehicle-km), worked out once; [`SectionSim::run`] then
//! plays one strategy into a reusable [`Trace`]. The year's order of events (common practice for
//! yearly life-cycle models):
//! 1. works due this year are decided: timed works, or the strategy's roughness trigger when the
//!    IRI at the start of the year has reached its threshold and the least gap since the last
//!    works has passed;
//! 2. the year's agency costs (works at the lanes before the works, routine maintenance at the
//!    year's roughness) and road-user costs (operating cost, travel time, crashes, and work-zone
//!    delay in construction years) are counted at the condition the road had all year;
//! 3. the pavement ages under the year's design-lane ESALs;
//! 4. the works take effect for the next year: structural number, roughness, lanes,
//!    carriageway and crash rate.
//!
//! Two runs of the same section follow exactly the same arithmetic until their works differ, so a
//! strategy's flows minus the base's are exactly zero before its first works.

pub mod capacity;
pub mod condition;
pub mod costs;
pub mod traffic;

#[cfg(test)]
mod behaviour;

use crate::economics::Discounting;
use crate::enumerate::Strategy;
use crate::input::models::{CapacityParams, SpeedParams};
use crate::input::scenario::{PerClass, VehicleClass};
use crate::input::Run;
use crate::model::catalogue::{Action, CostBasis, IriEffect, StructuralEffect};
use crate::model::money::Money;
use crate::model::network::{Carriageway, Section};
use crate::model::YearOffset;
use condition::{AgeFactors, Condition, SectionModel};

/// Lane width (m) taken where the network gives none: a common rural lane (common practice,
/// 3.5 m). Used only for treatments costed per m².
pub const DEFAULT_LANE_WIDTH_M: f64 = 3.5;

/// What one strategy did to one section, year by year (index 0 = the base year).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Trace {
    /// Treatments of the capital category.
    pub capital: Vec<f64>,
    /// Routine maintenance, plus treatments of the routine category.
    pub routine: Vec<f64>,
    /// Vehicle operating cost.
    pub operating: Vec<f64>,
    /// Travel time.
    pub time: Vec<f64>,
    /// Crashes.
    pub crashes: Vec<f64>,
    /// Extra travel time through work zones.
    pub delay: Vec<f64>,
    /// IRI during the year (m/km).
    pub iri: Vec<f64>,
    /// Structural number during the year.
    pub sn: Vec<f64>,
    /// Works done, in year order.
    pub works: Vec<Done>,
    /// Residual value of the last works, credited the year after the period ends.
    pub residual: f64,
    /// The state at the start of each year, so that the next strategy run into this trace
    /// replays only the years after the two strategies' works first differ.
    resume: Resume,
}

/// One treatment a run did: when, which (its index in the catalogue) and what it cost.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Done {
    pub year: YearOffset,
    pub treatment: usize,
    pub cost: f64,
}

/// The state of a run at the start of each year, and the section simulation it belongs to.
#[derive(Debug, Clone, Default)]
struct Resume {
    /// [`SectionSim::id`] of the run the states are from; 0 when none.
    owner: u64,
    states: Vec<YearState>,
}

/// Bookkeeping of how the trace was made, not part of what it says: two traces with equal years
/// are equal whichever runs they were resumed from.
impl PartialEq for Resume {
    fn eq(&self, _: &Resume) -> bool {
        true
    }
}

/// Everything a run carries from one year into the next.
#[derive(Debug, Clone, Copy, PartialEq)]
struct YearState {
    cond: Condition,
    lanes: u8,
    cw: Carriageway,
    crash_factor: f64,
    per_cap: f64,
    /// Which of [`SectionSim::congestion`]'s series holds this capacity's years (`NO_SERIES`:
    /// none, worked out year by year).
    series: u8,
    lane_factor: f64,
    last_works: Option<i64>,
}

/// Where a run stands: the year it started from, the state at the start of the next year, and
/// the next of its timed works.
#[derive(Debug, Clone, Copy)]
struct Cursor {
    from: usize,
    state: YearState,
    next: usize,
}

/// How many strategies [`SectionSim::run_each`] plays at once.
pub const SIDE_BY_SIDE: usize = 4;

/// What a year's ageing needs from the year before it: the works due (treatment indices, how
/// many), the design-lane ESALs and the share holding repairs take off the rise.
#[derive(Debug, Clone, Copy)]
struct Due {
    done: [usize; crate::input::MAX_STEPS],
    count: usize,
    esals: f64,
    slow: f64,
}

impl Due {
    /// No works, no traffic: what a year's works and ageing inputs are written over.
    const NONE: Due = Due {
        done: [0; crate::input::MAX_STEPS],
        count: 0,
        esals: 0.0,
        slow: 0.0,
    };
}

/// [`YearState::series`] of a capacity no series was taken for.
const NO_SERIES: u8 = u8::MAX;

/// A per-class unit value weighted by the traffic's class shares.
fn mix(shares: &[f64; 4], values: &PerClass<Money>) -> f64 {
    VehicleClass::ALL
        .iter()
        .map(|c| shares[*c as usize] * values.get(*c).to_f64())
        .sum()
}

/// A source of unique [`SectionSim`] ids (0 is never given).
static NEXT_SIM_ID: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(1);

impl Trace {
    fn reset(&mut self, n: usize) {
        for v in [
            &mut self.capital,
            &mut self.routine,
            &mut self.operating,
            &mut self.time,
            &mut self.crashes,
            &mut self.delay,
            &mut self.iri,
            &mut self.sn,
        ] {
            v.clear();
            v.resize(n, 0.0);
        }
        self.works.clear();
        self.residual = 0.0;
    }

    /// The trace's money as two flows: agency cost of each year and, last, the year after the
    /// period with the residual value as a negative cost; road-user cost of each year, and zero
    /// the year after the period.
    ///
    /// The residual is credited at the period's end, year `n` on the discounting axis, under
    /// either timing: with mid-year discounting the year-after slot is discounted half a year
    /// less, so the residual is entered there already discounted by that half year at `d`'s
    /// rate ([`Discounting::end_shift`]).
    pub fn flows(&self, d: &Discounting) -> Flows {
        let mut f = Flows::default();
        self.flows_into(d, &mut f);
        f
    }

    /// [`Trace::flows`] into `out`'s buffers.
    pub fn flows_into(&self, d: &Discounting, out: &mut Flows) {
        out.agency.clear();
        out.agency
            .extend(self.capital.iter().zip(&self.routine).map(|(a, b)| a + b));
        out.agency.push(-self.residual * d.end_shift());
        out.users.clear();
        out.users.extend(
            (0..self.capital.len())
                .map(|i| self.operating[i] + self.time[i] + self.crashes[i] + self.delay[i]),
        );
        out.users.push(0.0);
    }
}

/// A strategy's yearly agency and road-user costs, from the base year to the year after the
/// period (see [`Trace::flows`]).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Flows {
    pub agency: Vec<f64>,
    pub users: Vec<f64>,
}

/// The flows of many strategies of one section in two flat buffers (no allocation per
/// strategy): what the widening's return needs of every strategy until the options are known.
#[derive(Debug, Clone, Default)]
pub struct FlowStore {
    len: usize,
    agency: Vec<f64>,
    users: Vec<f64>,
}

impl FlowStore {
    /// Forget every flow, keeping the buffers.
    pub fn clear(&mut self) {
        self.len = 0;
        self.agency.clear();
        self.users.clear();
    }

    /// Keep `f` (every flow kept has the same length) as the next strategy's.
    pub fn push(&mut self, f: &Flows) {
        debug_assert!(self.len == 0 || self.agency.len() / self.len == f.agency.len());
        self.agency.extend_from_slice(&f.agency);
        self.users.extend_from_slice(&f.users);
        self.len += 1;
    }

    /// The flows kept `i`th.
    pub fn get(&self, i: usize) -> Flows {
        let n = self.agency.len() / self.len.max(1);
        let m = self.users.len() / self.len.max(1);
        Flows {
            agency: self.agency[i * n..(i + 1) * n].to_vec(),
            users: self.users[i * m..(i + 1) * m].to_vec(),
        }
    }
}

/// A treatment as the simulation needs it: money as f64, effects resolved.
#[derive(Debug, Clone)]
struct Effect {
    unit_cost: f64,
    cost_per: CostBasis,
    capital: bool,
    action: Action,
    iri: IriEffect,
    structure: StructuralEffect,
    lanes_added: u8,
    carriageway_after: Option<Carriageway>,
    crash_factor: f64,
    /// Share of the roughness above the as-built value the works leave.
    carry: f64,
    /// Parts valued at the end of the period: (share of cost, life in years).
    parts: Vec<(f64, u32)>,
    work_zone_days: u32,
}

/// One section, ready to run strategies on.
#[derive(Debug, Clone)]
pub struct SectionSim {
    /// Unique among the simulations of this process: a trace's resume states are used only by
    /// the simulation that wrote them (a clone shares the id, and the same arithmetic).
    id: u64,
    years: usize,
    length_km: f64,
    lanes: u8,
    carriageway: Carriageway,
    lane_width_m: f64,
    last_works: Option<i64>,
    model: SectionModel,
    start: Condition,
    aadt: Vec<f64>,
    /// Vehicle-km of each year.
    vkm: Vec<f64>,
    esal_two_way: Vec<f64>,
    /// Each flow band's share of the year's traffic, and its base-year flow in pc/h.
    bands: Vec<(f64, f64)>,
    /// Travel-time cost per vehicle-km at free speed on a smooth road.
    time_per_vkm: f64,
    /// Operating cost per vehicle-km against roughness.
    operating: costs::OperatingCurve,
    crash_per_vkm: f64,
    /// Work-zone delay cost per vehicle-km of one day of works.
    delay_per_vkm: f64,
    upkeep: costs::Upkeep,
    iri_floor: f64,
    treatments: Vec<Effect>,
    capacity: CapacityParams,
    speed: SpeedParams,
    direction_factor: f64,
    lane_factor: [f64; 4],
    /// Each vehicle class's share of the traffic.
    shares: [f64; 4],
    /// Paterson's age factor of every whole surface age a run can reach.
    age_factors: AgeFactors,
    /// The volume-delay factor of each year (the flow bands' weighted BPR factor) at the
    /// capacities a run is likely to have — as built, and after each widening of the catalogue
    /// — each with its per-capacity reciprocal's bits. They depend on the year and the capacity
    /// alone, so every strategy shares them; a run reads them with the bits it would compute.
    congestion: Vec<(u64, Vec<f64>)>,
}

impl SectionSim {
    /// Work out everything about `section` that no strategy changes.
    pub fn new(run: &Run, section: &Section) -> SectionSim {
        let s = &run.scenario;
        let m = &s.models;
        let years = s.analysis_years as usize;
        let t = traffic::series(section, years, &m.traffic);
        // `load` checked every surface against the families; the default family exists.
        let family = m
            .condition
            .family_of(section.surface.as_deref())
            .or_else(|| m.condition.families.first())
            .map(|f| f.model)
            .unwrap_or(crate::input::models::FamilyModel::Aashto93(
                Default::default(),
            ));
        let mr = section
            .subgrade_mr_mpa
            .unwrap_or(m.condition.subgrade_mr_mpa);
        let model = SectionModel::new(&family, mr, &m.condition);
        let iri0 = section.iri.min(m.condition.iri_max);
        let age = section
            .last_works_year
            .map(|y| ((s.base_year - y) as f64).max(0.0));
        let placement = model.place(
            iri0,
            section.structural_number,
            age,
            t.esal_two_way.first().copied().unwrap_or(0.0)
                * traffic::design_lane_factor(section.lanes, &m.traffic),
            section.growth_rate,
        );
        let start = model.start(iri0, section.structural_number, &placement);
        let pce_mix: f64 = VehicleClass::ALL
            .iter()
            .map(|c| t.shares[*c as usize] * m.traffic.pce.get(*c))
            .sum();
        let bands = m
            .traffic
            .flow_bands
            .iter()
            .map(|b| (b.share, section.aadt * 365.0 * b.share / b.hours * pce_mix))
            .collect();
        let uv = &s.unit_values;
        let vot = mix(&t.shares, &uv.time);
        let v0 = capacity::free_speed_kmh(section.speed_kmh, section.carriageway, &m.speed);
        let mut voc_weight = [0.0; 4];
        for c in VehicleClass::ALL {
            voc_weight[c as usize] = t.shares[c as usize] * uv.operating.get(c).to_f64();
        }
        let base_rate = match section.carriageway {
            Carriageway::Single => m.user_costs.crash_rate_single,
            Carriageway::Divided => m.user_costs.crash_rate_divided,
        };
        let extra_h_per_km = (1.0 / m.speed.work_zone_kmh - 1.0 / v0).max(0.0);
        let length = section.length_km;
        let treatments = run
            .catalogue
            .treatments
            .iter()
            .map(|tr| Effect {
                unit_cost: tr.cost.to_f64(),
                cost_per: tr.cost_per,
                capital: tr.category != crate::model::catalogue::Category::Routine,
                action: tr.action,
                iri: tr.iri,
                structure: tr.structure,
                lanes_added: tr.lanes_added,
                carriageway_after: tr.carriageway_after,
                crash_factor: tr.crash_factor,
                carry: tr.carry(m.condition.carry_depth_mm),
                parts: tr.parts(),
                work_zone_days: tr.work_zone_days,
            })
            .collect();
        let age_factors =
            AgeFactors::new(&model, (start.age.max(0.0) as usize).min(400) + years + 1);
        let mut sim = SectionSim {
            id: NEXT_SIM_ID.fetch_add(1, std::sync::atomic::Ordering::Relaxed),
            years,
            length_km: length,
            lanes: section.lanes,
            carriageway: section.carriageway,
            lane_width_m: section.lane_width_m.unwrap_or(DEFAULT_LANE_WIDTH_M),
            last_works: section.last_works_year.map(|y| y - s.base_year),
            model,
            start,
            vkm: t.aadt.iter().map(|a| a * 365.0 * length).collect(),
            aadt: t.aadt,
            esal_two_way: t.esal_two_way,
            bands,
            time_per_vkm: vot / v0,
            operating: costs::OperatingCurve::new(voc_weight, &m.user_costs),
            crash_per_vkm: base_rate * 1e-6 * uv.crash.to_f64(),
            delay_per_vkm: extra_h_per_km * vot,
            upkeep: costs::Upkeep::new(&run.catalogue.routine),
            iri_floor: m.condition.iri_floor,
            treatments,
            capacity: m.capacity,
            speed: m.speed,
            direction_factor: m.traffic.direction_factor,
            lane_factor: m.traffic.lane_factor,
            shares: t.shares,
            age_factors,
            congestion: Vec::new(),
        };
        sim.congestion = sim.congestion_series();
        sim
    }

    /// The capacities a run is likely to meet (as built, and after each widening treatment of
    /// the catalogue), each with its volume-delay factor year by year ([`SectionSim::congestion`]).
    fn congestion_series(&self) -> Vec<(u64, Vec<f64>)> {
        let mut caps = vec![self.initial_state().per_cap];
        for w in &self.treatments {
            if w.action == Action::Widen {
                let lanes = self.lanes.saturating_add(w.lanes_added).min(12);
                let cw = w.carriageway_after.unwrap_or(self.carriageway);
                caps.push(1.0 / capacity::capacity_pc_h(lanes, cw, &self.capacity));
            }
        }
        let mut out: Vec<(u64, Vec<f64>)> = Vec::new();
        for per_cap in caps {
            if out.len() < usize::from(NO_SERIES) && !out.iter().any(|c| c.0 == per_cap.to_bits()) {
                let series = (0..self.years)
                    .map(|y| self.congestion_at(y, per_cap))
                    .collect();
                out.push((per_cap.to_bits(), series));
            }
        }
        out
    }

    /// The flow bands' weighted volume-delay factor in year `y` at `per_cap`, the reciprocal of
    /// the road's capacity.
    #[inline]
    fn congestion_at(&self, y: usize, per_cap: f64) -> f64 {
        let aadt0 = self.aadt[0].max(f64::MIN_POSITIVE);
        let growth = self.aadt[y] / aadt0 * per_cap;
        let mut congestion = 0.0;
        for &(share, pc_h) in &self.bands {
            congestion += share * capacity::bpr_factor(pc_h * growth, &self.capacity);
        }
        congestion
    }

    /// The series of [`SectionSim::congestion`] taken at `per_cap`, or [`NO_SERIES`].
    fn series_of(&self, per_cap: f64) -> u8 {
        self.congestion
            .iter()
            .position(|c| c.0 == per_cap.to_bits())
            .map_or(NO_SERIES, |i| i as u8)
    }

    /// Years simulated (the analysis period).
    pub fn years(&self) -> usize {
        self.years
    }

    /// Play `strategy` into `out` (its buffers are reused). When `out` holds an earlier run of
    /// this section, only the years from the first year the two strategies' works differ are
    /// played again: until then both follow the same arithmetic, so the result is the same to
    /// the bit as a run from the base year.
    pub fn run(&self, strategy: &Strategy, out: &mut Trace) {
        let n = self.years;
        let from = self.replay_from(strategy, out);
        let Some(mut c) = self.begin(strategy, out, from) else {
            return;
        };
        for y in c.from..n {
            self.year(strategy, out, y, &mut c);
        }
        self.finish(out, c.from);
    }

    /// Play four strategies at once, strategy k into trace k from year `from[k]` on
    /// ([`SectionSim::replay_from`]), each as [`SectionSim::run`] would (the same bits): the
    /// works of each run one by one, the pavement's ageing of all four in one vector pass
    /// ([`SectionModel::age_four`]).
    /// Lanes that are not `live` (fewer than four strategies to play) sit out, as does a lane
    /// whose trace already is its strategy's run.
    fn run_quad_from(
        &self,
        st: [&Strategy; 4],
        tr: [&mut Trace; 4],
        from: [usize; 4],
        live: [bool; 4],
    ) {
        let n = self.years;
        let [t0, t1, t2, t3] = tr;
        // A lane with nothing to play starts after the last year.
        let idle = || Cursor {
            from: n,
            state: self.initial_state(),
            next: 0,
        };
        let lane = |k: usize, t: &mut Trace| -> Cursor {
            if live[k] {
                self.begin(st[k], t, from[k]).unwrap_or_else(idle)
            } else {
                idle()
            }
        };
        let (mut c0, mut c1, mut c2, mut c3) = (lane(0, t0), lane(1, t1), lane(2, t2), lane(3, t3));
        // All four in step from the earliest start; a run whose replay starts later sits out
        // its early years (its lane ages a copy of another's pavement, and the result is
        // dropped).
        let first = c0.from.min(c1.from).min(c2.from).min(c3.from);
        let mut spare = [self.start; 4];
        let mut dues = [Due::NONE; 4];
        for y in first..n {
            let on = [y >= c0.from, y >= c1.from, y >= c2.from, y >= c3.from];
            if on[0] {
                self.works_due(st[0], t0, y, &mut c0, &mut dues[0]);
            }
            if on[1] {
                self.works_due(st[1], t1, y, &mut c1, &mut dues[1]);
            }
            if on[2] {
                self.works_due(st[2], t2, y, &mut c2, &mut dues[2]);
            }
            if on[3] {
                self.works_due(st[3], t3, y, &mut c3, &mut dues[3]);
            }
            if on != [true; 4] {
                // A lane sitting out ages a copy of a lane that plays (there is one from
                // `first` on).
                let Some(lead) = on.iter().position(|&x| x) else {
                    continue;
                };
                let cond = [&c0, &c1, &c2, &c3][lead].state.cond;
                for k in 0..4 {
                    if !on[k] {
                        spare[k] = cond;
                        dues[k] = dues[lead];
                    }
                }
            }
            let [s0, s1, s2, s3] = &mut spare;
            self.model.age_four(
                [
                    if on[0] { &mut c0.state.cond } else { s0 },
                    if on[1] { &mut c1.state.cond } else { s1 },
                    if on[2] { &mut c2.state.cond } else { s2 },
                    if on[3] { &mut c3.state.cond } else { s3 },
                ],
                [dues[0].esals, dues[1].esals, dues[2].esals, dues[3].esals],
                [dues[0].slow, dues[1].slow, dues[2].slow, dues[3].slow],
                &self.age_factors,
            );
            if on[0] {
                self.works_take_effect(y, &mut c0, &dues[0]);
            }
            if on[1] {
                self.works_take_effect(y, &mut c1, &dues[1]);
            }
            if on[2] {
                self.works_take_effect(y, &mut c2, &dues[2]);
            }
            if on[3] {
                self.works_take_effect(y, &mut c3, &dues[3]);
            }
        }
        for (c, t) in [(&c0, t0), (&c1, t1), (&c2, t2), (&c3, t3)] {
            if c.from < n {
                self.finish(t, c.from);
            }
        }
    }

    /// Play every strategy of `strategies` in order, calling `each(i, trace)` with strategy
    /// i's run: four at a time, side by side, each into the trace it shares the most years
    /// with (which it replays from); a last group of fewer than four leaves lanes idle. The
    /// traces are `traces`' (reused across sections).
    pub fn run_each(
        &self,
        strategies: &[Strategy],
        traces: &mut [Trace; SIDE_BY_SIDE],
        each: impl FnMut(usize, &Trace),
    ) {
        self.run_each_of(strategies, 0..strategies.len(), traces, each);
    }

    /// [`SectionSim::run_each`] for the strategies `which` names (positions in `strategies`),
    /// in that order.
    pub fn run_each_of(
        &self,
        strategies: &[Strategy],
        which: impl IntoIterator<Item = usize>,
        traces: &mut [Trace; SIDE_BY_SIDE],
        mut each: impl FnMut(usize, &Trace),
    ) {
        let mut which = which.into_iter();
        loop {
            let mut group = [0usize; SIDE_BY_SIDE];
            let mut len = 0;
            while len < SIDE_BY_SIDE {
                match which.next() {
                    Some(i) => {
                        group[len] = i;
                        len += 1;
                    }
                    None => break,
                }
            }
            if len == 0 {
                return;
            }
            // Strategy → trace, the pairs that share the most years first.
            let mut shared = [[0usize; SIDE_BY_SIDE]; SIDE_BY_SIDE];
            for (a, &i) in group[..len].iter().enumerate() {
                for (b, t) in traces.iter().enumerate() {
                    shared[a][b] = self.replay_from(&strategies[i], t);
                }
            }
            let mut trace_of = [usize::MAX; SIDE_BY_SIDE];
            let mut taken = [false; SIDE_BY_SIDE];
            for _ in 0..len {
                let mut best: Option<(usize, usize)> = None;
                for a in 0..len {
                    for b in 0..SIDE_BY_SIDE {
                        if trace_of[a] == usize::MAX
                            && !taken[b]
                            && best.is_none_or(|(x, y)| shared[a][b] > shared[x][y])
                        {
                            best = Some((a, b));
                        }
                    }
                }
                if let Some((a, b)) = best {
                    trace_of[a] = b;
                    taken[b] = true;
                }
            }
            // Lanes past `len` sit out on the traces no strategy took.
            for slot in trace_of.iter_mut().skip(len) {
                if let Some(b) = taken.iter().position(|&x| !x) {
                    *slot = b;
                    taken[b] = true;
                }
            }
            // The traces in the order of the lanes they serve.
            let mut slots: [Option<&mut Trace>; SIDE_BY_SIDE] = Default::default();
            for (b, t) in traces.iter_mut().enumerate() {
                if let Some(a) = trace_of.iter().position(|&x| x == b) {
                    slots[a] = Some(t);
                }
            }
            let [Some(s0), Some(s1), Some(s2), Some(s3)] = slots else {
                return;
            };
            self.run_quad_from(
                std::array::from_fn(|a| &strategies[group[a.min(len - 1)]]),
                [s0, s1, s2, s3],
                std::array::from_fn(|a| shared[a][trace_of[a]]),
                std::array::from_fn(|a| a < len),
            );
            for (a, &i) in group[..len].iter().enumerate() {
                each(i, &traces[trace_of[a]]);
            }
        }
    }

    /// The costs of years `from` on that the state at the start of each year gives (routine
    /// upkeep at its roughness, travel time, operating cost, crashes) and the residual value:
    /// the part of a year that no later year waits for, counted once the chain of states is
    /// known.
    #[inline]
    fn finish(&self, out: &mut Trace, from: usize) {
        for y in from..self.years {
            let st = &out.resume.states[y];
            let iri = st.cond.iri;
            let lane_km = self.length_km * f64::from(st.lanes);
            let (upkeep, _) = self.upkeep.year(iri, lane_km);
            out.routine[y] += upkeep;
            let congestion = match self.congestion.get(usize::from(st.series)) {
                Some((_, by_year)) => by_year[y],
                None => self.congestion_at(y, st.per_cap),
            };
            let vkm = self.vkm[y];
            let speed = capacity::roughness_speed_factor(iri, &self.speed);
            out.time[y] = vkm * self.time_per_vkm * congestion / speed;
            out.operating[y] = vkm * self.operating.per_vkm(iri);
            out.crashes[y] = vkm * self.crash_per_vkm * st.crash_factor;
            out.iri[y] = iri;
            out.sn[y] = st.cond.sn;
        }
        out.residual = self.residual(&out.works);
    }

    /// Make `out` ready to play `strategy`: the year to start from and the state there, or
    /// `None` when `out` already is this strategy's run.
    #[inline]
    fn begin(&self, strategy: &Strategy, out: &mut Trace, from: usize) -> Option<Cursor> {
        let n = self.years;
        if from == n {
            // The same works every year: the trace already is this strategy's.
            return None;
        }
        let s = if from == 0 {
            out.reset(n);
            out.resume.owner = self.id;
            out.resume.states.clear();
            out.resume.states.resize(n, self.initial_state());
            self.initial_state()
        } else {
            for v in [
                &mut out.capital,
                &mut out.routine,
                &mut out.operating,
                &mut out.time,
                &mut out.crashes,
                &mut out.delay,
                &mut out.iri,
                &mut out.sn,
            ] {
                v[from..].fill(0.0);
            }
            let keep = out.works.partition_point(|w| w.year.index() < from);
            out.works.truncate(keep);
            out.resume.states[from]
        };
        Some(Cursor {
            from,
            state: s,
            next: strategy.works.partition_point(|w| w.year.index() < from),
        })
    }

    /// Year `y` of `strategy`'s run into `out`, from the state `c` holds (which it advances).
    #[inline(always)]
    fn year(&self, strategy: &Strategy, out: &mut Trace, y: usize, c: &mut Cursor) {
        let mut due = Due::NONE;
        self.works_due(strategy, out, y, c, &mut due);
        self.model
            .age_with(&mut c.state.cond, due.esals, due.slow, &self.age_factors);
        self.works_take_effect(y, c, &due);
    }

    /// Year `y` up to the pavement's ageing: the state kept for replays, the works due (timed,
    /// or the trigger's), their costs and the work-zone delay; and what the ageing needs.
    #[inline(always)]
    fn works_due(
        &self,
        strategy: &Strategy,
        out: &mut Trace,
        y: usize,
        c: &mut Cursor,
        due: &mut Due,
    ) {
        out.resume.states[y] = c.state;
        let s = &c.state;
        due.count = 0;
        due.esals = self.esal_two_way[y] * s.lane_factor;
        // 1. Works due this year.
        let first = c.next;
        while c.next < strategy.works.len() && strategy.works[c.next].year.index() == y {
            c.next += 1;
        }
        for w in &strategy.works[first..c.next] {
            if due.count < due.done.len() {
                due.done[due.count] = w.treatment;
                due.count += 1;
            }
        }
        if due.count == 0 {
            if let Some(tr) = &strategy.trigger {
                let gap_ok = s
                    .last_works
                    .is_none_or(|l| y as i64 - l >= i64::from(tr.min_gap_years));
                if s.cond.iri >= tr.iri && gap_ok {
                    due.done[0] = tr.treatment;
                    due.count = 1;
                }
            }
        }
        // 2. The year's costs.
        let mut zone_days = 0u32;
        for &ti in &due.done[..due.count] {
            let w = &self.treatments[ti];
            let lanes_worked = if w.action == Action::Widen {
                w.lanes_added
            } else {
                s.lanes
            };
            let q = costs::quantity(w.cost_per, self.length_km, lanes_worked, self.lane_width_m);
            let cost = w.unit_cost * q;
            if w.capital {
                out.capital[y] += cost;
            } else {
                out.routine[y] += cost;
            }
            zone_days += w.work_zone_days;
            out.works.push(Done {
                year: YearOffset::at(y),
                treatment: ti,
                cost,
            });
        }
        out.delay[y] =
            f64::from(zone_days.min(365)) * self.aadt[y] * self.length_km * self.delay_per_vkm;
        // The rest of the year's costs are the state's alone: `finish` counts them.
        // 3. The ageing under the year's traffic is slowed by any holding repairs.
        due.slow = self.upkeep.slows(s.cond.iri);
    }

    /// 4. The year's works take effect on the aged pavement, and the state moves on.
    #[inline(always)]
    fn works_take_effect(&self, y: usize, c: &mut Cursor, due: &Due) {
        if due.count == 0 {
            return;
        }
        let s = &mut c.state;
        s.last_works = Some(y as i64);
        for &ti in &due.done[..due.count] {
            let w = &self.treatments[ti];
            match w.structure {
                StructuralEffect::None => {}
                StructuralEffect::SetTo(sn) => self.model.rebuild(&mut s.cond, sn),
                layer @ StructuralEffect::Layer { .. } => {
                    self.model
                        .strengthen(&mut s.cond, layer.added_sn().unwrap_or(0.0));
                }
            }
            match w.iri {
                IriEffect::ResetTo(x) => self.model.resurface(&mut s.cond, x, w.carry),
                IriEffect::Reduce(r) => {
                    let to = (s.cond.iri - r).max(self.iri_floor);
                    self.model.lower(&mut s.cond, to);
                }
            }
            if w.action == Action::Widen {
                s.lanes = s.lanes.saturating_add(w.lanes_added).min(12);
                if let Some(after) = w.carriageway_after {
                    s.cw = after;
                }
                s.per_cap = 1.0 / capacity::capacity_pc_h(s.lanes, s.cw, &self.capacity);
                s.series = self.series_of(s.per_cap);
                s.lane_factor =
                    traffic::lane_share(s.lanes, self.direction_factor, &self.lane_factor);
            }
            s.crash_factor *= w.crash_factor;
        }
    }

    /// The state at the start of the base year.
    fn initial_state(&self) -> YearState {
        let per_cap = 1.0 / capacity::capacity_pc_h(self.lanes, self.carriageway, &self.capacity);
        YearState {
            cond: self.start,
            lanes: self.lanes,
            cw: self.carriageway,
            crash_factor: 1.0,
            per_cap,
            series: self.series_of(per_cap),
            lane_factor: traffic::lane_share(self.lanes, self.direction_factor, &self.lane_factor),
            last_works: self.last_works,
        }
    }

    /// The first year in which `strategy` would do other works than the run held in `out` did
    /// (0 when `out` holds no run of this section; the period's length when it would do the
    /// same every year). Until that year the two runs are the same, state and money.
    fn replay_from(&self, strategy: &Strategy, out: &Trace) -> usize {
        let n = self.years;
        if out.resume.owner != self.id || out.resume.states.len() != n || out.iri.len() != n {
            return 0;
        }
        let (mut mine, mut theirs) = (0usize, 0usize);
        for y in 0..n {
            let first = mine;
            while mine < strategy.works.len() && strategy.works[mine].year.index() == y {
                mine += 1;
            }
            let their_first = theirs;
            while theirs < out.works.len() && out.works[theirs].year.index() == y {
                theirs += 1;
            }
            let done = &out.works[their_first..theirs];
            let same = if mine > first {
                // Timed works, as many as a year takes (see `run`).
                let timed = &strategy.works[first..mine];
                let taken = timed.len().min(crate::input::MAX_STEPS);
                taken == done.len()
                    && timed
                        .iter()
                        .zip(done)
                        .all(|(w, d)| w.treatment == d.treatment)
            } else if let Some(tr) = &strategy.trigger {
                let st = &out.resume.states[y];
                let gap_ok = st
                    .last_works
                    .is_none_or(|l| y as i64 - l >= i64::from(tr.min_gap_years));
                if st.cond.iri >= tr.iri && gap_ok {
                    done.len() == 1 && done[0].treatment == tr.treatment
                } else {
                    done.is_empty()
                }
            } else {
                done.is_empty()
            };
            if !same {
                return y;
            }
        }
        n
    }

    /// Residual value of the last pavement works and of the last widening (each group's last
    /// year of works), FHWA-SA-98-079's remaining-service-life method, each part of a
    /// treatment (its share of the cost, its own life) valued on its own.
    fn residual(&self, works: &[Done]) -> f64 {
        let mut total = 0.0;
        self.residual_parts(works, |_, v| total += v);
        total
    }

    /// The residual value of a run ([`SectionSim::run`] credits it: its last works, by group)
    /// in two parts: of capital-category treatments and of routine-category ones (what the cost
    /// factors scale apart).
    pub fn residual_split(&self, works: &[Done]) -> (f64, f64) {
        let (mut capital, mut routine) = (0.0, 0.0);
        self.residual_parts(works, |is_capital, v| {
            if is_capital {
                capital += v;
            } else {
                routine += v;
            }
        });
        (capital, routine)
    }

    /// Each part of the residual value, in a fixed order: `part(whether its treatment is of the
    /// capital category, its value)`.
    fn residual_parts(&self, works: &[Done], mut part: impl FnMut(bool, f64)) {
        for widen in [false, true] {
            let group = |w: &&Done| (self.treatments[w.treatment].action == Action::Widen) == widen;
            let Some(last) = works.iter().filter(group).map(|w| w.year).max() else {
                continue;
            };
            for w in works.iter().filter(group).filter(|w| w.year == last) {
                let tr = &self.treatments[w.treatment];
                for &(share, life) in &tr.parts {
                    part(
                        tr.capital,
                        costs::residual_value(w.cost * share, w.year.0, life, self.years as u32),
                    );
                }
            }
        }
    }

    /// The traffic's mix weighted by each class's unit value of time (per vehicle-hour), as
    /// the scenario `run` gives the unit values: what the travel-time and work-zone costs scale
    /// with.
    pub fn value_of_time(&self, run: &Run) -> f64 {
        mix(&self.shares, &run.scenario.unit_values.time)
    }

    /// [`SectionSim::value_of_time`] for vehicle operating costs (per vehicle-km on a smooth
    /// road).
    pub fn value_of_operating(&self, run: &Run) -> f64 {
        mix(&self.shares, &run.scenario.unit_values.operating)
    }
}
