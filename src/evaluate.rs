//! The evaluation of one strategy against its section's base, split by what the inputs that
//! only scale money scale.
//!
//! A strategy's NPV against the base is PV(road-user savings) − PV(extra agency cost). Capital
//! costs, routine costs and the road-user unit values never change what the road does (no
//! decision of the simulation depends on a price), so each part of that money scales with its
//! own input: capital-category works and their residual value with the capital cost factor;
//! routine maintenance, holding repairs and routine-category works with the routine cost
//! factor; travel time and work-zone delay with the traffic's mix-weighted value of time; crashes
//! with the crash cost; vehicle operating cost with the mix-weighted operating unit costs. A
//! [`Split`] keeps those parts year by year, so that sensitivity tests and Monte Carlo draws of
//! these inputs, and of the discount rate, need no new simulation: [`Split::pv`] discounts them
//! at any rate, and [`Parts::npv`] weighs them by any [`Scales`]. Inputs that change the
//! physics (traffic growth, model coefficients) still simulate again.
//!
//! [`npv_against`] is the same evaluation on whole flows, as planning uses it.

use crate::economics::Discounting;
use crate::enumerate::Strategy;
use crate::input::Run;
use crate::model::Year;
use crate::simulate::{Flows, SectionSim, Trace};

/// NPV of a strategy's own flows `with` against the base's `against`: PV of the road-user
/// savings less PV of the extra agency cost; the same arithmetic, in the same order, as
/// [`crate::appraise::increment`] followed by two PVs, without building the incremental stream.
pub fn npv_against(d: &Discounting, first_year: Year, with: &Flows, against: &Flows) -> f64 {
    let savings = against.users.iter().zip(&with.users).map(|(b, a)| b - a);
    let extra = with.agency.iter().zip(&against.agency).map(|(a, b)| a - b);
    d.pv_of(first_year, savings) - d.pv_of(first_year, extra)
}

/// Each strategy `strategies[k]` of one section for `k` in `which`, simulated once on `sim` (the
/// base first, then each replaying from where its works part from the previous one's):
/// `visit(k, its trace, its money split against the base, its NPV against the base on whole
/// flows at `run`'s discounting)`. The base's split is zero and its NPV 0.
pub fn each_split(
    run: &Run,
    sim: &SectionSim,
    strategies: &[Strategy],
    which: &[usize],
    mut visit: impl FnMut(usize, &Trace, Split, f64),
) {
    let d = &run.scenario.discounting;
    let y0 = run.scenario.base_year;
    let mut base = Trace::default();
    sim.run(&strategies[0], &mut base);
    let base_flows = base.flows(d);
    let mut traces: [Trace; crate::simulate::SIDE_BY_SIDE] = std::array::from_fn(|_| base.clone());
    let mut own = Flows::default();
    sim.run_each_of(strategies, which.iter().copied(), &mut traces, |k, t| {
        if k == 0 {
            visit(0, &base, Split::of(sim, &base, &base), 0.0);
            return;
        }
        t.flows_into(d, &mut own);
        let npv = npv_against(d, y0, &own, &base_flows);
        visit(k, t, Split::of(sim, t, &base), npv);
    });
}

/// A strategy's money less the base's, year by year from the base year, by what scales it.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Split {
    pub capital: Vec<f64>,
    pub routine: Vec<f64>,
    /// Residual values credited at the period's end (the strategy's less the base's).
    pub residual_capital: f64,
    pub residual_routine: f64,
    /// Travel time and work-zone delay.
    pub time: Vec<f64>,
    pub crashes: Vec<f64>,
    pub operating: Vec<f64>,
}

impl Split {
    /// `with`'s money less `base`'s (both runs of `sim`).
    pub fn of(sim: &SectionSim, with: &Trace, base: &Trace) -> Split {
        let diff =
            |a: &[f64], b: &[f64]| -> Vec<f64> { a.iter().zip(b).map(|(x, y)| x - y).collect() };
        let (wc, wr) = sim.residual_split(&with.works);
        let (bc, br) = sim.residual_split(&base.works);
        let time =
            |t: &Trace| -> Vec<f64> { t.time.iter().zip(&t.delay).map(|(a, b)| a + b).collect() };
        Split {
            capital: diff(&with.capital, &base.capital),
            routine: diff(&with.routine, &base.routine),
            residual_capital: wc - bc,
            residual_routine: wr - br,
            time: diff(&time(with), &time(base)),
            crashes: diff(&with.crashes, &base.crashes),
            operating: diff(&with.operating, &base.operating),
        }
    }

    /// The parts' present values at `d`, from `first_year`. The residual is credited at the
    /// period's end as in [`Trace::flows`].
    pub fn pv(&self, d: &Discounting, first_year: Year) -> Parts {
        let n = self.capital.len();
        let end = d.factor(first_year) * (1.0 / (1.0 + d.rate())).powi(n as i32) * d.end_shift();
        Parts {
            capital: d.pv(first_year, &self.capital) - self.residual_capital * end,
            routine: d.pv(first_year, &self.routine) - self.residual_routine * end,
            time: d.pv(first_year, &self.time),
            crashes: d.pv(first_year, &self.crashes),
            operating: d.pv(first_year, &self.operating),
        }
    }
}

/// Present values of a strategy's money less the base's, by what scales each.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Parts {
    pub capital: f64,
    pub routine: f64,
    pub time: f64,
    pub crashes: f64,
    pub operating: f64,
}

impl Parts {
    /// NPV against the base with each part scaled: savings to road users less extra agency
    /// cost.
    pub fn npv(&self, s: &Scales) -> f64 {
        -(s.time * self.time + s.crashes * self.crashes + s.operating * self.operating)
            - (s.capital * self.capital + s.routine * self.routine)
    }
}

/// How much each part of the money is scaled, against the scenario as written (all 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Scales {
    pub capital: f64,
    pub routine: f64,
    pub time: f64,
    pub crashes: f64,
    pub operating: f64,
}

impl Scales {
    /// The scenario as written.
    pub const ONE: Scales = Scales {
        capital: 1.0,
        routine: 1.0,
        time: 1.0,
        crashes: 1.0,
        operating: 1.0,
    };

    /// Every road-user unit value scaled by `f`.
    pub fn users(f: f64) -> Scales {
        Scales {
            time: f,
            crashes: f,
            operating: f,
            ..Scales::ONE
        }
    }

    /// Capital costs scaled by `f`.
    pub fn capital(f: f64) -> Scales {
        Scales {
            capital: f,
            ..Scales::ONE
        }
    }

    /// The scales of a varied run against `run` for one section (`sim`, a simulation of it
    /// under `run`): the cost factors as given, the unit values' ratios weighted by the
    /// section's traffic mix. `None` where a ratio has no meaning (a unit value that is zero as
    /// written but not in the varied run): the money's part cannot be scaled from zero.
    pub fn of(
        sim: &SectionSim,
        run: &Run,
        varied: &Run,
        capital: f64,
        routine: f64,
    ) -> Option<Scales> {
        let ratio = |a: f64, b: f64| -> Option<f64> {
            if a != 0.0 {
                Some(b / a)
            } else if b == 0.0 {
                Some(1.0)
            } else {
                None
            }
        };
        let crash = |r: &Run| r.scenario.unit_values.crash.to_f64();
        Some(Scales {
            capital,
            routine,
            time: ratio(sim.value_of_time(run), sim.value_of_time(varied))?,
            crashes: ratio(crash(run), crash(varied))?,
            operating: ratio(sim.value_of_operating(run), sim.value_of_operating(varied))?,
        })
    }
}

/// Whether varying the scenario input `name` only scales money the way [`Scales::of`] reads
/// it: the cost and unit-value factors, the time unit values of each class and the crash unit
/// value. (Each class's operating unit cost weighs that class's roughness response, so it is
/// not one scale of the operating cost; it, and every physical input, simulates again.)
pub fn scales_money_only(name: &str) -> bool {
    matches!(
        name,
        "factor.capital_cost" | "factor.routine_cost" | "factor.unit_values" | "unit_values.crash"
    ) || name.starts_with("unit_values.time.")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::enumerate::Enumerator;
    use crate::simulate::Trace;
    use std::path::Path;

    fn demo() -> Run {
        let (run, d) = crate::input::load(&crate::demo::SOURCE, Path::new(crate::demo::SCENARIO));
        assert!(!d.has_errors(), "{d}");
        run.unwrap()
    }

    /// The split, weighed at the scenario's scales, is the NPV the whole flows give; weighed at
    /// other scales and rates, the NPV a simulation of the varied run gives (to rounding).
    #[test]
    fn split_parts_give_the_varied_runs_npv() {
        let run = demo();
        let e = Enumerator::for_run(&run);
        let y0 = run.scenario.base_year;
        let cases: [&[(&str, f64)]; 6] = [
            &[],
            &[("factor.capital_cost", 1.37)],
            &[("factor.routine_cost", 0.61), ("factor.unit_values", 1.8)],
            &[
                ("unit_values.time.car", 11.5),
                ("unit_values.crash", 40_000.0),
            ],
            &[
                ("unit_values.time.heavy_truck", 0.0),
                ("factor.capital_cost", 0.2),
            ],
            &[("discount_rate", 0.11), ("factor.unit_values", 0.7)],
        ];
        let mut checked = 0;
        for values in cases {
            let v = crate::analysis::vary::apply(&run, values);
            let factor = |name: &str| {
                values
                    .iter()
                    .filter(|(n, _)| *n == name)
                    .map(|(_, x)| *x)
                    .product::<f64>()
            };
            let d = v.discounting();
            for sec in run.network.sections.iter().step_by(4) {
                let sim = SectionSim::new(&run, sec);
                let sim_v = SectionSim::new(&v.run, sec);
                let scales = Scales::of(
                    &sim,
                    &run,
                    &v.run,
                    factor("factor.capital_cost"),
                    factor("factor.routine_cost"),
                )
                .unwrap();
                let all = e.strategies(sec);
                let (mut base, mut base_v) = (Trace::default(), Trace::default());
                sim.run(&all[0], &mut base);
                sim_v.run(&all[0], &mut base_v);
                for st in all.iter().step_by(3) {
                    let (mut t, mut tv) = (Trace::default(), Trace::default());
                    sim.run(st, &mut t);
                    sim_v.run(st, &mut tv);
                    let want = npv_against(d, y0, &tv.flows(d), &base_v.flows(d));
                    let got = Split::of(&sim, &t, &base).pv(d, y0).npv(&scales);
                    let scale = 1.0 + want.abs();
                    assert!(
                        (got - want).abs() <= 1e-9 * scale,
                        "{} {} {values:?}: {got} against {want}",
                        sec.id,
                        st.name
                    );
                    checked += 1;
                }
            }
        }
        assert!(checked > 300, "{checked}");
    }

    #[test]
    fn only_money_inputs_are_linear() {
        for name in [
            "factor.capital_cost",
            "factor.routine_cost",
            "factor.unit_values",
            "unit_values.crash",
            "unit_values.time.car",
        ] {
            assert!(scales_money_only(name), "{name}");
        }
        for name in [
            "shift.growth",
            "discount_rate",
            "unit_values.operating.car",
            "condition.family.asphalt.ageing",
            "traffic.load_exponent",
        ] {
            assert!(!scales_money_only(name), "{name}");
        }
    }
}
