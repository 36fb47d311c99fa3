//! Inputs that sensitivity tests and Monte Carlo draws change, and a run with them changed.
//!
//! An input is named by a key path, the same as where it is written in the scenario (values in
//! the key's own units), or by one of four whole-run inputs:
//! - `factor.capital_cost`: a factor on every capital treatment's cost (1 = as written);
//! - `factor.routine_cost`: a factor on routine maintenance costs (holding repairs included);
//! - `factor.unit_values`: a factor on every road-user unit value (time, operating, crash);
//! - `shift.growth`: points added to every section's traffic growth rate (0.01 = one point);
//! - `discount_rate`: the discount rate itself.
//!
//! Key paths: every number of `[unit_values]` (`unit_values.time.car`, `unit_values.crash`), and
//! the model coefficients of `[traffic]`, `[capacity]`, `[speed]`, `[condition]` (with
//! `condition.family.NAME.KEY`) and `[user_costs]` that no rule ties to another coefficient
//! (`user_costs.fuel_share` and `repair_share` must add up to at most 1, `repair_at_5` may not
//! fall below `repair_at_4`, the condition classes and `iri_max` bound each other, and a family's
//! `p0` and `terminal_psr` bound each other: those stay as written). Each input has the range the scenario
//! reader accepts, and a distribution must keep to it.
//!
//! Simulation reads only the scenario and the catalogue of a run, so a varied run carries copies
//! of those two (and no network); growth is applied per section ([`Varied::section`]).

use crate::economics::Discounting;
use crate::input::varied::{slot, Slot};
use crate::input::Run;
use crate::model::money::Money;
use crate::model::network::Section;
use rust_decimal::Decimal;

pub use crate::input::varied::{input, input_names, Input, RUN_INPUTS};

/// The parts of a run that simulation reads, with inputs changed.
#[derive(Debug, Clone)]
pub struct Varied {
    /// A run with the changed scenario and catalogue and no sections.
    pub run: Run,
    /// Points added to every section's growth rate.
    pub growth_shift: f64,
}

impl Varied {
    /// A section as simulated under this variation (its growth shifted).
    pub fn section(&self, sec: &Section) -> Section {
        let mut s = sec.clone();
        s.growth_rate += self.growth_shift;
        s
    }

    /// The discounting of the varied run.
    pub fn discounting(&self) -> &Discounting {
        &self.run.scenario.discounting
    }
}

fn scaled(m: Money, f: f64) -> Money {
    #[allow(clippy::float_cmp)] // a factor of exactly 1 keeps the exact amount
    if f == 1.0 {
        return m;
    }
    match Decimal::try_from(f) {
        Ok(d) => Money(m.0 * d),
        Err(_) => Money(Decimal::try_from(m.to_f64() * f).unwrap_or(m.0)),
    }
}

fn money_of(x: f64) -> Money {
    Money(Decimal::try_from(x).unwrap_or(Decimal::ZERO))
}

/// A copy of `run`'s scenario and catalogue (no network) with `values` set: each a resolved
/// input name and its value. Names were checked when the scenario was read; an unknown one is
/// skipped.
pub fn apply(run: &Run, values: &[(&str, f64)]) -> Varied {
    let mut v = Varied {
        run: Run {
            scenario: run.scenario.clone(),
            network: crate::model::network::Network {
                file: run.network.file.clone(),
                ..Default::default()
            },
            catalogue: run.catalogue.clone(),
            templates: run.templates.clone(),
        },
        growth_shift: 0.0,
    };
    for &(name, x) in values {
        let r = &mut v.run;
        match name {
            "factor.capital_cost" => {
                for t in &mut r.catalogue.treatments {
                    if t.category != crate::model::catalogue::Category::Routine {
                        t.cost = scaled(t.cost, x);
                    }
                }
            }
            "factor.routine_cost" => {
                let rt = &mut r.catalogue.routine;
                rt.per_lane_km = scaled(rt.per_lane_km, x);
                rt.per_lane_km_per_iri = scaled(rt.per_lane_km_per_iri, x);
                rt.holding_per_lane_km = scaled(rt.holding_per_lane_km, x);
                for t in &mut r.catalogue.treatments {
                    if t.category == crate::model::catalogue::Category::Routine {
                        t.cost = scaled(t.cost, x);
                    }
                }
            }
            "factor.unit_values" => {
                let uv = &mut r.scenario.unit_values;
                for m in uv.time.0.iter_mut().chain(uv.operating.0.iter_mut()) {
                    *m = scaled(*m, x);
                }
                uv.crash = scaled(uv.crash, x);
            }
            "shift.growth" => v.growth_shift += x,
            "discount_rate" => {
                if let Ok(d) = r.scenario.discounting.with_rate(x) {
                    r.scenario.discounting = d;
                }
            }
            path => match slot(&mut r.scenario, path) {
                Some((Slot::Number(s), _)) => *s = x,
                // The value as written keeps its exact amount.
                Some((Slot::Money(m), _)) if (m.to_f64() - x).abs() > 0.0 => *m = money_of(x),
                Some((Slot::Money(_), _)) => {}
                None => {}
            },
        }
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo() -> Run {
        let (run, d) = crate::input::load(
            &crate::demo::SOURCE,
            std::path::Path::new(crate::demo::SCENARIO),
        );
        run.unwrap_or_else(|| panic!("{d}"))
    }

    #[test]
    fn every_listed_name_resolves_with_its_scenario_value_inside_its_range() {
        let run = demo();
        for name in input_names(&run.scenario) {
            let i = input(&run.scenario, &name).unwrap_or_else(|| panic!("{name}"));
            assert!(
                i.range.0 <= i.central && i.central <= i.range.1,
                "{name}: {} outside {:?}",
                i.central,
                i.range
            );
        }
        assert!(input(&run.scenario, "user_costs.fuel_share.car").is_none());
        assert!(input(&run.scenario, "unit_values.time.tram").is_none());
    }

    #[test]
    fn applied_values_reach_the_run_and_central_values_change_nothing() {
        let run = demo();
        let same = apply(
            &run,
            &[
                ("factor.capital_cost", 1.0),
                ("unit_values.time.car", 7.8),
                ("condition.family.asphalt.ageing", 0.023),
            ],
        );
        assert_eq!(same.run.scenario, run.scenario);
        assert_eq!(same.run.catalogue, run.catalogue);
        let v = apply(
            &run,
            &[
                ("factor.capital_cost", 1.2),
                ("unit_values.crash", 120_000.0),
                ("speed.drop_per_iri", 0.05),
                ("shift.growth", 0.01),
                ("discount_rate", 0.08),
            ],
        );
        let overlay = |r: &Run| r.catalogue.get("overlay").unwrap().cost.to_f64();
        assert!((overlay(&v.run) - 1.2 * overlay(&run)).abs() < 1e-9);
        assert!((v.run.scenario.unit_values.crash.to_f64() - 120_000.0).abs() < 1e-9);
        assert!((v.run.scenario.models.speed.drop_per_iri - 0.05).abs() < 1e-15);
        assert!((v.discounting().rate() - 0.08).abs() < 1e-15);
        let sec = &run.network.sections[0];
        assert!((v.section(sec).growth_rate - sec.growth_rate - 0.01).abs() < 1e-15);
    }

    #[test]
    fn the_routine_factor_scales_every_routine_cost_holding_repairs_included() {
        let run = demo();
        let v = apply(&run, &[("factor.routine_cost", 1.5)]);
        let (a, b) = (&run.catalogue.routine, &v.run.catalogue.routine);
        for (x, y) in [
            (a.per_lane_km, b.per_lane_km),
            (a.per_lane_km_per_iri, b.per_lane_km_per_iri),
            (a.holding_per_lane_km, b.holding_per_lane_km),
        ] {
            assert!((y.to_f64() - 1.5 * x.to_f64()).abs() < 1e-9, "{x} → {y}");
        }
    }
}
