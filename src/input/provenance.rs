//! Which model coefficients of a run still stand at a value no local evidence backs: a
//! calibration default (no published value fits every place) or a published value quoted from
//! memory. `check`, `appraise` and `plan` count them in one note (listed with `--verbose`), and
//! `plan`'s summary and report list them, so that nobody mistakes a default for a local fact.
//!
//! A coefficient counts while its value equals the default: a scenario that writes the default
//! out (as the demo does) has not replaced it.

use super::models::{
    Aashto93Params, CalibratedParams, CapacityParams, ConditionParams, FamilyModel, Models,
    SpeedParams, TrafficParams, UserCostParams,
};

/// Why a default is not local evidence.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Standing {
    /// No published value fits every place: replace with local values.
    CalibrationDefault,
    /// A published value, quoted from memory.
    FromMemory,
}

impl Standing {
    pub fn name(self) -> &'static str {
        match self {
            Standing::CalibrationDefault => "calibration default",
            Standing::FromMemory => "from memory",
        }
    }
}

/// One coefficient still at its default.
#[derive(Debug, Clone, PartialEq)]
pub struct Unverified {
    /// Its key path in the scenario, e.g. `condition.family.asphalt.ageing`.
    pub key: String,
    /// Its value as the run uses it.
    pub value: String,
    pub standing: Standing,
}

fn same(a: &[f64], b: &[f64]) -> bool {
    a.len() == b.len()
        && a.iter()
            .zip(b)
            .all(|(x, y)| (x - y).abs() <= 1e-12 * y.abs().max(1.0))
}

fn show(v: &[f64]) -> String {
    if v.len() == 1 {
        format!("{}", v[0])
    } else {
        let parts: Vec<String> = v.iter().map(|x| format!("{x}")).collect();
        format!("[{}]", parts.join(", "))
    }
}

use Standing::{CalibrationDefault as Cal, FromMemory as Mem};

type Get<T> = fn(&T) -> Vec<f64>;

const TRAFFIC: [(&str, Standing, Get<TrafficParams>); 6] = [
    ("bus_share_of_heavy", Cal, |p| vec![p.bus_share_of_heavy]),
    ("light_truck_share_of_light", Cal, |p| {
        vec![p.light_truck_share_of_light]
    }),
    ("axles_kn", Cal, |p| {
        p.axles.iter().flatten().copied().collect()
    }),
    ("lane_factor", Mem, |p| p.lane_factor.to_vec()),
    ("pce", Mem, |p| p.pce.0.to_vec()),
    ("flow_bands", Cal, |p| {
        p.flow_bands
            .iter()
            .flat_map(|b| [b.hours, b.share])
            .collect()
    }),
];
const CAPACITY: [(&str, Standing, Get<CapacityParams>); 3] = [
    ("multilane_pc_h_per_lane", Mem, |p| {
        vec![p.multilane_pc_h_per_lane]
    }),
    ("undivided_factor", Cal, |p| vec![p.undivided_factor]),
    ("max_vc", Cal, |p| vec![p.max_vc]),
];
const SPEED: [(&str, Standing, Get<SpeedParams>); 5] = [
    ("free_kmh", Cal, |p| {
        vec![p.free_single_kmh, p.free_divided_kmh]
    }),
    ("roughness_onset_iri", Cal, |p| vec![p.roughness_onset_iri]),
    ("drop_per_iri", Cal, |p| vec![p.drop_per_iri]),
    ("min_factor", Cal, |p| vec![p.min_factor]),
    ("work_zone_kmh", Cal, |p| vec![p.work_zone_kmh]),
];
const CONDITION: [(&str, Standing, Get<ConditionParams>); 5] = [
    ("iri_floor", Cal, |p| vec![p.iri_floor]),
    ("iri_max", Cal, |p| vec![p.iri_max]),
    ("max_rise", Cal, |p| vec![p.max_rise]),
    ("carry_depth_mm", Cal, |p| vec![p.carry_depth_mm]),
    ("subgrade_mr_mpa", Cal, |p| vec![p.subgrade_mr_mpa]),
];
const AASHTO: [(&str, Standing, Get<Aashto93Params>); 2] = [
    ("ageing", Mem, |p| vec![p.ageing]),
    ("structural_rise", Mem, |p| vec![p.structural_rise]),
];
const CALIBRATED: [(&str, Standing, Get<CalibratedParams>); 5] = [
    ("rise_per_year", Cal, |p| vec![p.rise_per_year]),
    ("ageing", Cal, |p| vec![p.ageing]),
    ("rise_per_mesa", Cal, |p| vec![p.rise_per_mesa]),
    ("sn_ref", Cal, |p| vec![p.sn_ref]),
    ("sn_exponent", Cal, |p| vec![p.sn_exponent]),
];
const USERS: [(&str, Standing, Get<UserCostParams>); 4] = [
    ("smooth_iri", Cal, |p| vec![p.smooth_iri]),
    ("fuel_share", Cal, |p| p.fuel_share.0.to_vec()),
    ("repair_share", Cal, |p| p.repair_share.0.to_vec()),
    ("crash_rate", Cal, |p| {
        vec![p.crash_rate_single, p.crash_rate_divided]
    }),
];

fn table<T>(
    out: &mut Vec<Unverified>,
    prefix: &str,
    now: &T,
    def: &T,
    keys: &[(&str, Standing, Get<T>)],
) {
    for (key, standing, get) in keys {
        let v = get(now);
        if same(&v, &get(def)) {
            out.push(Unverified {
                key: format!("{prefix}.{key}"),
                value: show(&v),
                standing: *standing,
            });
        }
    }
}

/// Every model coefficient of `m` still at a calibration default or a value from memory, in
/// the order the README's table lists them.
pub fn unverified(m: &Models) -> Vec<Unverified> {
    let d = Models::default();
    let mut out = Vec::new();
    table(&mut out, "traffic", &m.traffic, &d.traffic, &TRAFFIC);
    table(&mut out, "capacity", &m.capacity, &d.capacity, &CAPACITY);
    table(&mut out, "speed", &m.speed, &d.speed, &SPEED);
    table(
        &mut out,
        "condition",
        &m.condition,
        &d.condition,
        &CONDITION,
    );
    for f in &m.condition.families {
        let prefix = format!("condition.family.{}", f.name);
        match &f.model {
            FamilyModel::Aashto93(p) => {
                table(&mut out, &prefix, p, &Aashto93Params::default(), &AASHTO)
            }
            FamilyModel::Calibrated(p) => table(
                &mut out,
                &prefix,
                p,
                &CalibratedParams::default(),
                &CALIBRATED,
            ),
        }
    }
    table(&mut out, "user_costs", &m.user_costs, &d.user_costs, &USERS);
    out
}

/// The one-line note `check`, `appraise` and `plan` print (`None` when nothing is left).
pub fn note(m: &Models) -> Option<String> {
    let n = unverified(m).len();
    (n > 0).then(|| {
        format!(
            "note: {n} model coefficient{} still at a calibration default or a value from memory \
             (list them with --verbose); replace them with local values, or fit the roughness \
             families to your surveys with `pavestrat calibrate`",
            if n == 1 { " is" } else { "s are" }
        )
    })
}

/// The list `--verbose` prints, one coefficient a line.
pub fn listing(m: &Models) -> String {
    let mut s = String::new();
    for u in unverified(m) {
        s.push_str(&format!(
            "  {} = {} ({})\n",
            u.key,
            u.value,
            u.standing.name()
        ));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_are_listed_and_a_replaced_value_is_not() {
        let mut m = Models::default();
        let all = unverified(&m);
        assert!(all
            .iter()
            .any(|u| u.key == "condition.family.asphalt.ageing"
                && u.standing == Standing::FromMemory));
        assert!(all.iter().any(|u| u.key == "speed.drop_per_iri"));
        // Published values (the fourth-power rule, BPR, NCHRP 720) are not listed.
        assert!(!all
            .iter()
            .any(|u| u.key.contains("load_exponent") || u.key.contains("bpr")));
        m.speed.drop_per_iri = 0.04;
        let fewer = unverified(&m);
        assert_eq!(fewer.len(), all.len() - 1);
        assert!(!fewer.iter().any(|u| u.key == "speed.drop_per_iri"));
        assert!(note(&m)
            .unwrap()
            .contains(&format!("{} model coefficients", fewer.len())));
    }
}
