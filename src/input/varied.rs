//! The one registry of the inputs that sensitivity tests and Monte Carlo draws may vary: their
//! names (key paths of the scenario, or whole-run factors and shifts), the range each accepts,
//! and where each is written in a scenario. `[[uncertain]]` entries are checked against it here;
//! `analysis::vary` applies values to a copy of a run.
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
//! of those two (and no network); growth is applied per section (`analysis::vary::Varied::section`).

use crate::input::models::FamilyModel;
use crate::input::scenario::{Scenario, VehicleClass};
use crate::model::money::Money;

/// Whole-run inputs (not key paths of the scenario).
pub const RUN_INPUTS: [(&str, f64, f64); 5] = [
    ("factor.capital_cost", 0.0, 100.0),
    ("factor.routine_cost", 0.0, 100.0),
    ("factor.unit_values", 0.0, 100.0),
    ("shift.growth", -0.2, 0.2),
    ("discount_rate", 0.0, 1.0),
];

/// A place a value is written to.
pub(crate) enum Slot<'a> {
    Number(&'a mut f64),
    Money(&'a mut Money),
}

/// Families' parameter keys, by model.
const AASHTO_KEYS: [(&str, f64, f64); 5] = [
    ("zr", -5.0, 5.0),
    ("s0", 0.0, 1.0),
    ("ageing", 0.0, 0.1),
    ("structural_rise", 0.0, 2000.0),
    ("load_factor", 0.0, 10.0),
];
const CALIBRATED_KEYS: [(&str, f64, f64); 5] = [
    ("rise_per_year", 0.0, 1.0),
    ("ageing", 0.0, 0.1),
    ("rise_per_mesa", 0.0, 50.0),
    ("sn_ref", 0.5, 15.0),
    ("sn_exponent", 0.0, 6.0),
];

fn class(name: &str) -> Option<VehicleClass> {
    VehicleClass::ALL.into_iter().find(|c| c.key() == name)
}

/// The slot and accepted range of a scenario key path (ranges as the scenario reader's).
pub(crate) fn slot<'a>(s: &'a mut Scenario, path: &str) -> Option<(Slot<'a>, (f64, f64))> {
    let parts: Vec<&str> = path.split('.').collect();
    let m = &mut s.models;
    use Slot::{Money as M, Number as N};
    Some(match parts.as_slice() {
        ["unit_values", "time", c] => {
            (M(&mut s.unit_values.time.0[class(c)? as usize]), (0.0, 1e9))
        }
        ["unit_values", "operating", c] => (
            M(&mut s.unit_values.operating.0[class(c)? as usize]),
            (0.0, 1e9),
        ),
        ["unit_values", "crash"] => (M(&mut s.unit_values.crash), (0.0, 1e12)),
        ["traffic", "bus_share_of_heavy"] => (N(&mut m.traffic.bus_share_of_heavy), (0.0, 1.0)),
        ["traffic", "light_truck_share_of_light"] => {
            (N(&mut m.traffic.light_truck_share_of_light), (0.0, 1.0))
        }
        ["traffic", "standard_axle_kn"] => (N(&mut m.traffic.standard_axle_kn), (1.0, 1000.0)),
        ["traffic", "load_exponent"] => (N(&mut m.traffic.load_exponent), (1.0, 10.0)),
        ["traffic", "direction_factor"] => (N(&mut m.traffic.direction_factor), (0.5, 1.0)),
        ["traffic", "pce", c] => (N(&mut m.traffic.pce.0[class(c)? as usize]), (0.1, 10.0)),
        ["capacity", "two_lane_pc_h"] => (N(&mut m.capacity.two_lane_pc_h), (100.0, 10_000.0)),
        ["capacity", "multilane_pc_h_per_lane"] => {
            (N(&mut m.capacity.multilane_pc_h_per_lane), (100.0, 5_000.0))
        }
        ["capacity", "undivided_factor"] => (N(&mut m.capacity.undivided_factor), (0.1, 1.0)),
        ["capacity", "bpr_alpha"] => (N(&mut m.capacity.bpr_alpha), (0.0, 10.0)),
        ["capacity", "bpr_beta"] => (N(&mut m.capacity.bpr_beta), (0.0, 20.0)),
        ["capacity", "max_vc"] => (N(&mut m.capacity.max_vc), (0.1, 10.0)),
        ["speed", "free_kmh", "single"] => (N(&mut m.speed.free_single_kmh), (5.0, 200.0)),
        ["speed", "free_kmh", "divided"] => (N(&mut m.speed.free_divided_kmh), (5.0, 200.0)),
        ["speed", "roughness_onset_iri"] => (N(&mut m.speed.roughness_onset_iri), (0.0, 25.0)),
        ["speed", "drop_per_iri"] => (N(&mut m.speed.drop_per_iri), (0.0, 1.0)),
        ["speed", "min_factor"] => (N(&mut m.speed.min_factor), (0.05, 1.0)),
        ["speed", "work_zone_kmh"] => (N(&mut m.speed.work_zone_kmh), (1.0, 200.0)),
        ["condition", "iri_floor"] => (N(&mut m.condition.iri_floor), (0.1, 2.0)),
        ["condition", "max_rise"] => (N(&mut m.condition.max_rise), (0.05, 1.0)),
        ["condition", "carry_depth_mm"] => (N(&mut m.condition.carry_depth_mm), (5.0, 500.0)),
        ["condition", "subgrade_mr_mpa"] => (N(&mut m.condition.subgrade_mr_mpa), (5.0, 1000.0)),
        ["condition", "family", name, key] => {
            let f = m.condition.families.iter_mut().find(|f| f.name == *name)?;
            match &mut f.model {
                FamilyModel::Aashto93(a) => {
                    let range = AASHTO_KEYS.iter().find(|k| k.0 == *key)?;
                    let x = match *key {
                        "zr" => &mut a.zr,
                        "s0" => &mut a.s0,
                        "structural_rise" => &mut a.structural_rise,
                        "load_factor" => &mut a.load_factor,
                        _ => &mut a.ageing,
                    };
                    (N(x), (range.1, range.2))
                }
                FamilyModel::Calibrated(c) => {
                    let range = CALIBRATED_KEYS.iter().find(|k| k.0 == *key)?;
                    let x = match *key {
                        "rise_per_year" => &mut c.rise_per_year,
                        "ageing" => &mut c.ageing,
                        "rise_per_mesa" => &mut c.rise_per_mesa,
                        "sn_ref" => &mut c.sn_ref,
                        _ => &mut c.sn_exponent,
                    };
                    (N(x), (range.1, range.2))
                }
            }
        }
        ["user_costs", "smooth_iri"] => (N(&mut m.user_costs.smooth_iri), (0.0, 10.0)),
        ["user_costs", "fuel_per_iri", c] => (
            N(&mut m.user_costs.fuel_per_iri.0[class(c)? as usize]),
            (0.0, 1.0),
        ),
        ["user_costs", "crash_rate", "single"] => {
            (N(&mut m.user_costs.crash_rate_single), (0.0, 100.0))
        }
        ["user_costs", "crash_rate", "divided"] => {
            (N(&mut m.user_costs.crash_rate_divided), (0.0, 100.0))
        }
        _ => return None,
    })
}

/// Every input name a scenario accepts (for messages), its families' keys included.
pub fn input_names(s: &Scenario) -> Vec<String> {
    let mut v: Vec<String> = RUN_INPUTS.iter().map(|r| r.0.to_owned()).collect();
    for c in VehicleClass::ALL {
        v.push(format!("unit_values.time.{}", c.key()));
        v.push(format!("unit_values.operating.{}", c.key()));
    }
    v.push("unit_values.crash".into());
    for k in [
        "traffic.bus_share_of_heavy",
        "traffic.light_truck_share_of_light",
        "traffic.standard_axle_kn",
        "traffic.load_exponent",
        "traffic.direction_factor",
        "capacity.two_lane_pc_h",
        "capacity.multilane_pc_h_per_lane",
        "capacity.undivided_factor",
        "capacity.bpr_alpha",
        "capacity.bpr_beta",
        "capacity.max_vc",
        "speed.free_kmh.single",
        "speed.free_kmh.divided",
        "speed.roughness_onset_iri",
        "speed.drop_per_iri",
        "speed.min_factor",
        "speed.work_zone_kmh",
        "condition.iri_floor",
        "condition.subgrade_mr_mpa",
        "user_costs.smooth_iri",
        "user_costs.crash_rate.single",
        "user_costs.crash_rate.divided",
    ] {
        v.push(k.into());
    }
    for c in VehicleClass::ALL {
        v.push(format!("traffic.pce.{}", c.key()));
        v.push(format!("user_costs.fuel_per_iri.{}", c.key()));
    }
    for f in &s.models.condition.families {
        let keys: Vec<&str> = match f.model {
            FamilyModel::Aashto93(_) => AASHTO_KEYS.iter().map(|k| k.0).collect(),
            FamilyModel::Calibrated(_) => CALIBRATED_KEYS.iter().map(|k| k.0).collect(),
        };
        for k in keys {
            v.push(format!("condition.family.{}.{k}", f.name));
        }
    }
    v
}

/// An input that can be varied, resolved against a scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct Input {
    /// Its name (a key path or a whole-run input).
    pub name: String,
    /// The values it accepts.
    pub range: (f64, f64),
    /// Its value in the scenario as written (factors 1, shifts 0).
    pub central: f64,
}

/// Resolve an input name against a scenario; `None` if it is not an input that can vary.
pub fn input(s: &Scenario, name: &str) -> Option<Input> {
    if let Some(&(n, lo, hi)) = RUN_INPUTS.iter().find(|r| r.0 == name) {
        let central = match n {
            "shift.growth" => 0.0,
            "discount_rate" => s.discounting.rate(),
            _ => 1.0,
        };
        return Some(Input {
            name: n.to_owned(),
            range: (lo, hi),
            central,
        });
    }
    let mut copy = s.clone();
    let (slot, range) = slot(&mut copy, name)?;
    let central = match slot {
        Slot::Number(x) => *x,
        Slot::Money(m) => m.to_f64(),
    };
    Some(Input {
        name: name.to_owned(),
        range,
        central,
    })
}
