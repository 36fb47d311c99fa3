//! Model coefficients from the scenario file: traffic, capacity and speed, pavement condition and
//! road-user costs. Every table and key is optional; a missing key takes the default documented
//! here beside its source, so a scenario states only what it changes.
//!
//! ```toml
//! [traffic]
//! bus_share_of_heavy = 0.15         # of the heavy vehicles in a section's heavy_share
//! light_truck_share_of_light = 0.18 # of the other vehicles
//! standard_axle_kn = 80             # load-equivalency: (load / standard)^exponent per axle
//! load_exponent = 4                 # fourth-power rule (AASHO Road Test)
//! axles_kn = { bus = [60, 100], heavy_truck = [60, 100, 80, 80] }   # axle loads of an average vehicle
//! direction_factor = 0.5            # share of two-way heavy traffic in the heavier direction
//! lane_factor = [1.0, 0.9, 0.7, 0.6] # share in the design lane, 1, 2, 3, 4+ lanes per direction
//! pce = { car = 1.0, bus = 1.5, light_truck = 1.0, heavy_truck = 1.5 }
//! flow_bands = [                    # the year's hours by flow level; hours sum to 8760, shares to 1
//!   { name = "peak", hours = 200, share = 0.06 },
//!   ...
//! ]
//!
//! [capacity]
//! two_lane_pc_h = 3200              # a two-lane single carriageway, both directions
//! multilane_pc_h_per_lane = 2200
//! undivided_factor = 0.95           # multilane single carriageway
//! bpr_alpha = 0.15
//! bpr_beta = 4
//! max_vc = 1.5                      # travel time stops rising past this volume/capacity
//!
//! [speed]
//! free_kmh = { single = 90, divided = 100 }   # when the network has no speed_kmh
//! roughness_onset_iri = 3.0         # free speed falls above this IRI …
//! drop_per_iri = 0.03               # … by this share per m/km …
//! min_factor = 0.5                  # … down to this share of the free speed
//! work_zone_kmh = 40
//!
//! [condition]
//! default_family = "asphalt"        # for sections with no surface
//! classes_iri = [1.4994, 2.6831]    # good below the first, poor above the second (m/km)
//! iri_floor = 0.8                   # no treatment makes a road smoother than this
//! iri_max = 16.0
//! max_rise = 0.8                    # the most IRI rises in a year (a smooth bound)
//! carry_depth_mm = 40               # works of this thickness leave e⁻¹ of the roughness above as-built
//! subgrade_mr_mpa = 50              # when the network has no subgrade_mr_mpa
//! [condition.family.asphalt]
//! model = "aashto93"                # p0, terminal_psr, zr (or reliability), s0, ageing,
//!                                   # structural_rise, load_factor
//! [condition.family.surface_treatment]
//! model = "calibrated"              # rise_per_year, ageing, rise_per_mesa, sn_ref, sn_exponent
//!
//! [user_costs]
//! smooth_iri = 1.0                  # operating cost unit values hold at this roughness
//! fuel_per_iri = { car = 0.02, ... }  # NCHRP 720: fuel use rise per m/km
//! fuel_share = { car = 0.35, ... }    # fuel's share of operating cost
//! repair_share = { car = 0.2, ... }   # repair and maintenance's share of operating cost
//! repair_at_4 = { ... }  repair_at_5 = { ... }   # NCHRP 720 repair rise at IRI 4 and 5
//! crash_rate = { single = 0.35, divided = 0.20 } # injury crashes per million vehicle-km
//! ```

use super::scenario::{PerClass, VehicleClass};
use super::tomldoc::{is_identifier, Table, Value};
use crate::diag::Diagnostics;

/// Inches per mile in one m/km of IRI (US 23 CFR 490: 1 m/km = 63.36 in/mi).
pub const IN_PER_MI_PER_M_PER_KM: f64 = 63.36;

/// A part of the year's hours with one level of flow.
#[derive(Debug, Clone, PartialEq)]
pub struct FlowBand {
    pub name: String,
    /// Hours a year in this band.
    pub hours: f64,
    /// Share of the year's traffic that travels in these hours.
    pub share: f64,
}

/// Traffic composition, loading and hourly distribution.
#[derive(Debug, Clone, PartialEq)]
pub struct TrafficParams {
    pub bus_share_of_heavy: f64,
    pub light_truck_share_of_light: f64,
    pub standard_axle_kn: f64,
    pub load_exponent: f64,
    /// Axle loads (kN) of an average vehicle of each class, by class index; cars and light
    /// trucks are usually left empty (their load equivalency is negligible).
    pub axles: [Vec<f64>; 4],
    pub direction_factor: f64,
    /// Design-lane factor for 1, 2, 3 and 4 or more lanes per direction.
    pub lane_factor: [f64; 4],
    pub pce: PerClass<f64>,
    pub flow_bands: Vec<FlowBand>,
}

/// Capacity and the volume-delay relation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CapacityParams {
    pub two_lane_pc_h: f64,
    pub multilane_pc_h_per_lane: f64,
    pub undivided_factor: f64,
    pub bpr_alpha: f64,
    pub bpr_beta: f64,
    pub max_vc: f64,
}

/// Free speed and its fall with roughness; work-zone speed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SpeedParams {
    pub free_single_kmh: f64,
    pub free_divided_kmh: f64,
    pub roughness_onset_iri: f64,
    pub drop_per_iri: f64,
    pub min_factor: f64,
    pub work_zone_kmh: f64,
}

/// The AASHTO 1993 flexible serviceability model with an ageing term.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Aashto93Params {
    /// Initial serviceability of a new surface.
    pub p0: f64,
    /// Terminal serviceability: the AASHTO relation is used for losses down to this (p0 − pt,
    /// 2.7 on the Road Test), never beyond.
    pub terminal_psr: f64,
    /// Standard normal deviate (0 = mean performance, for prediction).
    pub zr: f64,
    /// Overall standard deviation.
    pub s0: f64,
    /// Yearly environmental rise in IRI, as a share of IRI (Paterson's m).
    pub ageing: f64,
    /// Paterson's structural coefficient: m/km per million ESALs at SNC 0 (263).
    pub structural_rise: f64,
    /// A factor on the load-related rise, fitted by `calibrate` (1 = the published relations).
    pub load_factor: f64,
}

/// A user-calibrated progression: a yearly rise in IRI of
/// `rise_per_year + ageing·IRI + rise_per_mesa·MESA·(sn_ref/SN)^sn_exponent`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CalibratedParams {
    pub rise_per_year: f64,
    pub ageing: f64,
    pub rise_per_mesa: f64,
    pub sn_ref: f64,
    pub sn_exponent: f64,
}

/// How one pavement family's roughness progresses.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FamilyModel {
    Aashto93(Aashto93Params),
    Calibrated(CalibratedParams),
}

impl FamilyModel {
    pub fn name(&self) -> &'static str {
        match self {
            FamilyModel::Aashto93(_) => "aashto93",
            FamilyModel::Calibrated(_) => "calibrated",
        }
    }
}

/// A pavement family (matched against the network's `surface` column).
#[derive(Debug, Clone, PartialEq)]
pub struct Family {
    pub name: String,
    pub model: FamilyModel,
}

/// Condition models and classes.
#[derive(Debug, Clone, PartialEq)]
pub struct ConditionParams {
    pub default_family: String,
    /// IRI (m/km) below which a road is good, and above which it is poor.
    pub good_below: f64,
    pub poor_above: f64,
    pub iri_floor: f64,
    pub iri_max: f64,
    /// The most roughness can rise in one year (m/km): the smooth bound on every family's rise.
    pub max_rise: f64,
    /// Depth (mm) of new layer that leaves e⁻¹ of the roughness above a treatment's as-built
    /// value: the share carried through is e^(−thickness/carry_depth_mm).
    pub carry_depth_mm: f64,
    pub subgrade_mr_mpa: f64,
    pub families: Vec<Family>,
}

impl ConditionParams {
    pub fn family(&self, name: &str) -> Option<&Family> {
        self.families.iter().find(|f| f.name == name)
    }

    /// The family of a section with this `surface` (the default family when it has none).
    pub fn family_of(&self, surface: Option<&str>) -> Option<&Family> {
        self.family(surface.unwrap_or(&self.default_family))
    }
}

/// How road-user costs respond to roughness, and crash rates.
#[derive(Debug, Clone, PartialEq)]
pub struct UserCostParams {
    pub smooth_iri: f64,
    pub fuel_per_iri: PerClass<f64>,
    pub fuel_share: PerClass<f64>,
    pub repair_share: PerClass<f64>,
    pub repair_at_4: PerClass<f64>,
    pub repair_at_5: PerClass<f64>,
    /// Injury crashes per million vehicle-km, single carriageway.
    pub crash_rate_single: f64,
    /// Injury crashes per million vehicle-km, divided carriageway.
    pub crash_rate_divided: f64,
}

/// Every model coefficient of a run.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Models {
    pub traffic: TrafficParams,
    pub capacity: CapacityParams,
    pub speed: SpeedParams,
    pub condition: ConditionParams,
    pub user_costs: UserCostParams,
}

impl Default for TrafficParams {
    fn default() -> Self {
        TrafficParams {
            // Calibration defaults: replace with local classified counts.
            bus_share_of_heavy: 0.15,
            light_truck_share_of_light: 0.18,
            // AASHO Road Test: the 80 kN (18-kip) single axle is the standard, and damage rises
            // with roughly the fourth power of load (re-analyses find 3 to over 6).
            standard_axle_kn: 80.0,
            load_exponent: 4.0,
            // Calibration defaults: the mean axle loads of a bus (two axles) and of a heavy truck
            // (four axles) over loaded and empty trips, about 1.4 and 1.3 ESALs a vehicle —
            // replace with local axle-load survey results.
            axles: [
                Vec::new(),
                vec![50.0, 85.0],
                Vec::new(),
                vec![45.0, 75.0, 55.0, 55.0],
            ],
            // Common practice: half the two-way heavy traffic in each direction.
            direction_factor: 0.5,
            // AASHTO 1993 Guide, lane distribution factor by lanes in each direction
            // (ranges 100 %, 80–100 %, 60–80 %, 50–75 %; values within them, from memory).
            lane_factor: [1.0, 0.9, 0.7, 0.6],
            // Passenger-car equivalents of heavy vehicles on level terrain, Highway Capacity
            // Manual (1.5; from memory).
            pce: PerClass([1.0, 1.5, 1.0, 1.5]),
            // Calibration default: a rural flow profile whose peak hour carries about 11 % of
            // the AADT — replace with local continuous counts.
            flow_bands: vec![
                band("peak", 200.0, 0.06),
                band("busy", 1800.0, 0.30),
                band("day", 3400.0, 0.44),
                band("night", 3360.0, 0.20),
            ],
        }
    }
}

fn band(name: &str, hours: f64, share: f64) -> FlowBand {
    FlowBand {
        name: name.to_owned(),
        hours,
        share,
    }
}

impl Default for CapacityParams {
    fn default() -> Self {
        CapacityParams {
            // Highway Capacity Manual 2000/2010: a two-lane highway carries 3200 pc/h in both
            // directions together.
            two_lane_pc_h: 3200.0,
            // Highway Capacity Manual 2000: 2200 pc/h/ln on a multilane highway at 60 mi/h free
            // speed (from memory).
            multilane_pc_h_per_lane: 2200.0,
            // Calibration default: an undivided multilane road loses some capacity to turning
            // and opposing traffic.
            undivided_factor: 0.95,
            // Bureau of Public Roads, Traffic Assignment Manual (1964).
            bpr_alpha: 0.15,
            bpr_beta: 4.0,
            // Calibration default: demand far past capacity diverts or shifts in time; the
            // volume-delay curve is not meant to price it.
            max_vc: 1.5,
        }
    }
}

impl Default for SpeedParams {
    fn default() -> Self {
        // Calibration defaults: replace with local speed surveys.
        SpeedParams {
            free_single_kmh: 90.0,
            free_divided_kmh: 100.0,
            roughness_onset_iri: 3.0,
            drop_per_iri: 0.03,
            min_factor: 0.5,
            work_zone_kmh: 40.0,
        }
    }
}

impl Default for Aashto93Params {
    fn default() -> Self {
        Aashto93Params {
            // AASHTO 1993 Guide: initial serviceability 4.2 for flexible pavements (AASHO Road
            // Test average).
            p0: 4.2,
            // AASHTO 1993 Guide: terminal serviceability 1.5 (the Road Test's failure, a loss of
            // 2.7 from 4.2): the range the design equation was fitted on.
            terminal_psr: 1.5,
            // Prediction at mean performance: reliability 50 % (ZR = 0); S0 0.45 is within the
            // Guide's 0.40–0.50 for flexible pavements.
            zr: 0.0,
            s0: 0.45,
            // Environmental rise in roughness proportional to roughness, the form of Paterson
            // (1987), coefficient 0.023 for a temperate non-freezing climate (from memory):
            // calibration default, replace with local values.
            ageing: 0.023,
            // Paterson (1987), integrated roughness progression: 263·(1+SNC)^−5 m/km per
            // million ESALs (from memory).
            structural_rise: 263.0,
            // The published relations as they are: `calibrate` fits a local factor.
            load_factor: 1.0,
        }
    }
}

impl Default for CalibratedParams {
    fn default() -> Self {
        // Calibration defaults of the magnitude Paterson (1987) gives, replace with the agency's
        // own fitted curves (`pavestrat calibrate`): no constant rise; the environmental
        // coefficient 0.023; 0.25 m/km per million ESALs at SN 3, about Paterson's
        // 263·(1+SNC)^−5 at SNC 3.3; and the exponent 4, the slope of (1+SNC)^−5 against SN
        // near SN 3–4.
        CalibratedParams {
            rise_per_year: 0.0,
            ageing: 0.023,
            rise_per_mesa: 0.25,
            sn_ref: 3.0,
            sn_exponent: 4.0,
        }
    }
}

impl Default for ConditionParams {
    fn default() -> Self {
        ConditionParams {
            default_family: "asphalt".into(),
            // US 23 CFR 490.313: good below 95 in/mi, poor above 170 in/mi.
            good_below: 95.0 / IN_PER_MI_PER_M_PER_KM,
            poor_above: 170.0 / IN_PER_MI_PER_M_PER_KM,
            // Calibration defaults.
            iri_floor: 0.8,
            iri_max: 16.0,
            // Calibration default below the common-practice mark of a structural failure (a rise
            // above 1 m/km in one year).
            max_rise: 0.8,
            // Calibration default: 50 mm of asphalt leaves about 29 % of the roughness above the
            // as-built value, 100 mm about 8 % (common practice: thicker works remove more).
            carry_depth_mm: 40.0,
            subgrade_mr_mpa: 50.0,
            families: vec![
                Family {
                    name: "asphalt".into(),
                    model: FamilyModel::Aashto93(Aashto93Params::default()),
                },
                Family {
                    name: "surface_treatment".into(),
                    model: FamilyModel::Calibrated(CalibratedParams::default()),
                },
            ],
        }
    }
}

impl Default for UserCostParams {
    fn default() -> Self {
        UserCostParams {
            smooth_iri: 1.0,
            // Chatti & Zaabar, NCHRP Report 720 (2012): fuel +2 % per m/km for passenger cars
            // (light trucks taken alike), +1 % to +2 % for heavy trucks (1.5 % taken, also
            // for buses).
            fuel_per_iri: PerClass([0.02, 0.015, 0.02, 0.015]),
            // Calibration defaults: shares of operating cost — replace with local cost models.
            fuel_share: PerClass([0.35, 0.40, 0.40, 0.45]),
            repair_share: PerClass([0.20, 0.25, 0.20, 0.25]),
            // NCHRP Report 720: repair and maintenance unchanged to IRI 3, +10 % at 4, +40 %
            // (cars) / +50 % (trucks) at 5 m/km.
            repair_at_4: PerClass([0.10, 0.10, 0.10, 0.10]),
            repair_at_5: PerClass([0.40, 0.50, 0.40, 0.50]),
            // Calibration defaults: replace with local crash records.
            crash_rate_single: 0.35,
            crash_rate_divided: 0.20,
        }
    }
}

/// The standard normal deviate of a design reliability, ZR = −Φ⁻¹(R) (AASHTO 1993, Table 4.1:
/// 95 % → −1.645).
pub fn zr_for_reliability(r: f64) -> f64 {
    -crate::stats::normal_quantile(r)
}

/// Set `*slot` from an optional number key within `lo..=hi`.
fn num(t: &mut Table<'_, '_>, key: &str, d: &mut Diagnostics, lo: f64, hi: f64, slot: &mut f64) {
    if let Some((_, Some(x))) = t.number_at(key, d, lo, hi, &format!("a number from {lo} to {hi}"))
    {
        *slot = x;
    }
}

/// Set `slot` from an optional share in `lo..=hi`: a number, or a percentage (`"35%"`).
fn share(t: &mut Table<'_, '_>, key: &str, d: &mut Diagnostics, lo: f64, hi: f64, slot: &mut f64) {
    let expected = format!("a share from {lo} to {hi}");
    if let Some(x) = t.get(key).and_then(|v| v.fraction_in(d, lo, hi, &expected)) {
        *slot = x;
    }
}

/// How a value is read: a number, or a share that may be a percentage.
type Read = fn(&mut Table<'_, '_>, &str, &mut Diagnostics, f64, f64, &mut f64);

/// Set classes of `slot` from an optional table by vehicle class (all four or some), each
/// value read by `read` ([`num`], or [`share`] for shares).
fn per_class(
    t: &mut Table<'_, '_>,
    key: &str,
    d: &mut Diagnostics,
    (lo, hi): (f64, f64),
    read: Read,
    slot: &mut PerClass<f64>,
) {
    let Some(mut ct) = t.get(key).and_then(|v| v.table(d)) else {
        return;
    };
    for c in VehicleClass::ALL {
        read(&mut ct, c.key(), d, lo, hi, &mut slot.0[c as usize]);
    }
    ct.finish(d);
}

fn carriageway_pair(
    t: &mut Table<'_, '_>,
    key: &str,
    d: &mut Diagnostics,
    lo: f64,
    hi: f64,
    single: &mut f64,
    divided: &mut f64,
) {
    let Some(mut ct) = t.get(key).and_then(|v| v.table(d)) else {
        return;
    };
    num(&mut ct, "single", d, lo, hi, single);
    num(&mut ct, "divided", d, lo, hi, divided);
    ct.finish(d);
}

fn sub<'a, 'i>(top: &mut Table<'a, 'i>, key: &str, d: &mut Diagnostics) -> Option<Table<'a, 'i>> {
    top.get(key).and_then(|v| v.table(d))
}

/// Read the model tables of a scenario's top level (`traffic`, `capacity`, `speed`,
/// `condition`, `user_costs`), starting from the defaults. The flag says whether the
/// `condition` table was free of errors (its pavement families can then be trusted even if
/// other tables were wrong).
pub fn read(top: &mut Table<'_, '_>, d: &mut Diagnostics) -> (Models, bool) {
    let mut m = Models::default();
    if let Some(t) = sub(top, "traffic", d) {
        read_traffic(t, d, &mut m.traffic);
    }
    if let Some(mut t) = sub(top, "capacity", d) {
        let c = &mut m.capacity;
        num(
            &mut t,
            "two_lane_pc_h",
            d,
            100.0,
            10_000.0,
            &mut c.two_lane_pc_h,
        );
        num(
            &mut t,
            "multilane_pc_h_per_lane",
            d,
            100.0,
            5_000.0,
            &mut c.multilane_pc_h_per_lane,
        );
        num(
            &mut t,
            "undivided_factor",
            d,
            0.1,
            1.0,
            &mut c.undivided_factor,
        );
        num(&mut t, "bpr_alpha", d, 0.0, 10.0, &mut c.bpr_alpha);
        num(&mut t, "bpr_beta", d, 0.0, 20.0, &mut c.bpr_beta);
        num(&mut t, "max_vc", d, 0.1, 10.0, &mut c.max_vc);
        t.finish(d);
    }
    if let Some(mut t) = sub(top, "speed", d) {
        let s = &mut m.speed;
        carriageway_pair(
            &mut t,
            "free_kmh",
            d,
            5.0,
            200.0,
            &mut s.free_single_kmh,
            &mut s.free_divided_kmh,
        );
        num(
            &mut t,
            "roughness_onset_iri",
            d,
            0.0,
            25.0,
            &mut s.roughness_onset_iri,
        );
        num(&mut t, "drop_per_iri", d, 0.0, 1.0, &mut s.drop_per_iri);
        num(&mut t, "min_factor", d, 0.05, 1.0, &mut s.min_factor);
        num(&mut t, "work_zone_kmh", d, 1.0, 200.0, &mut s.work_zone_kmh);
        t.finish(d);
    }
    let before = d.error_count();
    if let Some(t) = sub(top, "condition", d) {
        read_condition(t, d, &mut m.condition);
    }
    let condition_ok = d.error_count() == before;
    if let Some(mut t) = sub(top, "user_costs", d) {
        let u = &mut m.user_costs;
        num(&mut t, "smooth_iri", d, 0.0, 10.0, &mut u.smooth_iri);
        let (unit, ten) = ((0.0, 1.0), (0.0, 10.0));
        per_class(&mut t, "fuel_per_iri", d, unit, num, &mut u.fuel_per_iri);
        per_class(&mut t, "fuel_share", d, unit, share, &mut u.fuel_share);
        per_class(&mut t, "repair_share", d, unit, share, &mut u.repair_share);
        per_class(&mut t, "repair_at_4", d, ten, num, &mut u.repair_at_4);
        per_class(&mut t, "repair_at_5", d, ten, num, &mut u.repair_at_5);
        carriageway_pair(
            &mut t,
            "crash_rate",
            d,
            0.0,
            100.0,
            &mut u.crash_rate_single,
            &mut u.crash_rate_divided,
        );
        let place = t.place();
        t.finish(d);
        for c in VehicleClass::ALL {
            let (f, r) = (u.fuel_share.get(c), u.repair_share.get(c));
            if f + r > 1.0 + 1e-9 {
                d.error(
                    place.clone().with_subfield("fuel_share"),
                    format!(
                        "fuel_share {f} and repair_share {r} of {} add up to more than 1",
                        c.key()
                    ),
                    "shares of operating cost that add up to 1 or less",
                );
            }
            if u.repair_at_5.get(c) < u.repair_at_4.get(c) {
                d.error(
                    place.clone().with_subfield("repair_at_5"),
                    format!("repair_at_5 below repair_at_4 for {}", c.key()),
                    "a repair rise at IRI 5 no smaller than at IRI 4",
                );
            }
        }
    }
    (m, condition_ok)
}

fn read_traffic(mut t: Table<'_, '_>, d: &mut Diagnostics, p: &mut TrafficParams) {
    share(
        &mut t,
        "bus_share_of_heavy",
        d,
        0.0,
        1.0,
        &mut p.bus_share_of_heavy,
    );
    share(
        &mut t,
        "light_truck_share_of_light",
        d,
        0.0,
        1.0,
        &mut p.light_truck_share_of_light,
    );
    num(
        &mut t,
        "standard_axle_kn",
        d,
        1.0,
        1000.0,
        &mut p.standard_axle_kn,
    );
    num(&mut t, "load_exponent", d, 1.0, 10.0, &mut p.load_exponent);
    num(
        &mut t,
        "direction_factor",
        d,
        0.5,
        1.0,
        &mut p.direction_factor,
    );
    if let Some(mut at) = t.get("axles_kn").and_then(|v| v.table(d)) {
        for c in VehicleClass::ALL {
            if let Some(v) = at.get(c.key()) {
                if let Some(items) = v.array(d) {
                    let loads: Option<Vec<f64>> = items
                        .iter()
                        .map(|i| i.number_in(d, 0.0, 1000.0, "an axle load in kN from 0 to 1000"))
                        .collect();
                    if let Some(l) = loads {
                        p.axles[c as usize] = l;
                    }
                }
            }
        }
        at.finish(d);
    }
    if let Some(v) = t.get("lane_factor") {
        if let Some(items) = v.array(d) {
            if items.len() != 4 {
                d.error(
                    v.place(),
                    format!("found {} values", items.len()),
                    "four design-lane factors: 1, 2, 3 and 4 or more lanes per direction",
                );
            } else {
                let xs: Option<Vec<f64>> = items
                    .iter()
                    .map(|i| i.fraction_in(d, 0.05, 1.0, "a share from 0.05 to 1"))
                    .collect();
                if let Some(xs) = xs {
                    p.lane_factor.copy_from_slice(&xs);
                }
            }
        }
    }
    per_class(&mut t, "pce", d, (0.1, 10.0), num, &mut p.pce);
    if let Some(v) = t.get("flow_bands") {
        if let Some(b) = read_bands(&v, d) {
            p.flow_bands = b;
        }
    }
    t.finish(d);
}

fn read_bands(v: &Value<'_, '_>, d: &mut Diagnostics) -> Option<Vec<FlowBand>> {
    let out = v.tables(d, |t, d| {
        let name = t
            .require("name", d, "a name for the band, e.g. \"peak\"")
            .and_then(|v| v.identifier(d).map(str::to_owned));
        let hours = t
            .require("hours", d, "hours a year in the band")
            .and_then(|v| v.number_in(d, 1.0, 8760.0, "hours from 1 to 8760"));
        let share = t
            .require("share", d, "the share of the year's traffic in the band")
            .and_then(|v| v.fraction_in(d, 0.0, 1.0, "a share from 0 to 1"));
        Some(FlowBand {
            name: name?,
            hours: hours?,
            share: share?,
        })
    })?;
    if out.is_empty() {
        d.error(v.place(), "an empty list", "at least one flow band");
        return None;
    }
    let hours: f64 = out.iter().map(|b| b.hours).sum();
    let share: f64 = out.iter().map(|b| b.share).sum();
    if (hours - 8760.0).abs() > 0.5 {
        d.error(
            v.place(),
            format!("bands that cover {hours} hours"),
            "bands whose hours add up to the 8760 hours of a year",
        );
        return None;
    }
    if (share - 1.0).abs() > 1e-6 {
        d.error(
            v.place(),
            format!("shares that add up to {share}"),
            "shares of the year's traffic that add up to 1",
        );
        return None;
    }
    Some(out)
}

fn read_condition(mut t: Table<'_, '_>, d: &mut Diagnostics, p: &mut ConditionParams) {
    let place = t.place();
    let default_family = t
        .get("default_family")
        .map(|v| (v.place(), v.identifier(d).map(str::to_owned)));
    if let Some(v) = t.get("classes_iri") {
        if let Some(items) = v.array(d) {
            let xs: Option<Vec<f64>> = items
                .iter()
                .map(|i| i.number_in(d, 0.1, 25.0, "an IRI in m/km from 0.1 to 25"))
                .collect();
            match xs.as_deref() {
                Some([a, b]) if a < b => {
                    p.good_below = *a;
                    p.poor_above = *b;
                }
                Some(_) => {
                    d.error(
                        v.place(),
                        format!("found {} values", items.len()),
                        "two ascending IRI limits [good_below, poor_above] in m/km",
                    );
                }
                None => {}
            }
        }
    }
    num(&mut t, "iri_floor", d, 0.1, 10.0, &mut p.iri_floor);
    num(&mut t, "iri_max", d, 2.0, 30.0, &mut p.iri_max);
    num(&mut t, "max_rise", d, 0.05, 1.0, &mut p.max_rise);
    num(
        &mut t,
        "carry_depth_mm",
        d,
        5.0,
        500.0,
        &mut p.carry_depth_mm,
    );
    num(
        &mut t,
        "subgrade_mr_mpa",
        d,
        5.0,
        1000.0,
        &mut p.subgrade_mr_mpa,
    );
    if let Some(mut ft) = t.get("family").and_then(|v| v.table(d)) {
        let mut families = Vec::new();
        for (name, val) in ft.entries() {
            if !is_identifier(&name) {
                d.error(
                    val.place(),
                    format!("the family name `{name}`"),
                    "a name of letters, digits, `_` and `-`",
                );
                continue;
            }
            if let Some(fam) = val.table(d).and_then(|x| read_family(x, d)) {
                families.push(Family { name, model: fam });
            }
        }
        ft.finish(d);
        if families.is_empty() {
            d.error(
                place.clone().with_subfield("family"),
                "no pavement families",
                "at least one [condition.family.NAME] table",
            );
        } else {
            p.families = families;
        }
    }
    t.finish(d);
    if let Some((fplace, Some(name))) = default_family {
        p.default_family = name;
        if p.family(&p.default_family).is_none() {
            let names: Vec<&str> = p.families.iter().map(|f| f.name.as_str()).collect();
            d.error(
                fplace,
                format!("the family `{}`, which is not defined", p.default_family),
                format!("one of {}", names.join(", ")),
            );
        }
    } else if p.family(&p.default_family).is_none() {
        d.error(
            place.clone().with_subfield("default_family"),
            format!(
                "no default_family, and no family named `{}`",
                p.default_family
            ),
            "default_family naming one of the [condition.family.NAME] tables",
        );
    }
    if p.iri_floor >= p.iri_max {
        d.error(
            place.with_subfield("iri_floor"),
            format!(
                "iri_floor {} at or above iri_max {}",
                p.iri_floor, p.iri_max
            ),
            "iri_floor below iri_max",
        );
    }
}

fn read_family(mut t: Table<'_, '_>, d: &mut Diagnostics) -> Option<FamilyModel> {
    let model = t
        .require("model", d, "the progression model: aashto93 or calibrated")
        .and_then(|v| v.word(d, &["aashto93", "calibrated"]).map(str::to_owned));
    let out = match model.as_deref() {
        Some("aashto93") => {
            let mut a = Aashto93Params::default();
            let t_has_zr = t.get("zr").is_some();
            num(&mut t, "p0", d, 1.0, 5.0, &mut a.p0);
            num(&mut t, "terminal_psr", d, 0.5, 3.5, &mut a.terminal_psr);
            num(&mut t, "zr", d, -5.0, 5.0, &mut a.zr);
            // Reliability as designers state it, instead of its deviate: ZR = −Φ⁻¹(R).
            if let Some((place, r)) = t.get("reliability").map(|v| {
                let r = v.fraction_in(
                    d,
                    0.5,
                    0.9999,
                    "a reliability from 0.5 to 0.9999 (0.95 or \"95%\" for 95 %)",
                );
                (v.place(), r)
            }) {
                if t_has_zr {
                    d.error(
                        place,
                        "both zr and reliability",
                        "one of them (zr = −Φ⁻¹(reliability))",
                    );
                } else if let Some(r) = r {
                    a.zr = zr_for_reliability(r);
                }
            }
            num(&mut t, "s0", d, 0.0, 1.0, &mut a.s0);
            num(&mut t, "ageing", d, 0.0, 0.1, &mut a.ageing);
            num(
                &mut t,
                "structural_rise",
                d,
                0.0,
                2000.0,
                &mut a.structural_rise,
            );
            num(&mut t, "load_factor", d, 0.0, 10.0, &mut a.load_factor);
            let loss = a.p0 - a.terminal_psr;
            if !(0.5..=2.7 + 1e-9).contains(&loss) {
                d.error(
                    t.place(),
                    format!(
                        "p0 {} and terminal_psr {}: a loss of {loss:.2}",
                        a.p0, a.terminal_psr
                    ),
                    "a loss p0 − terminal_psr from 0.5 to 2.7, the range of the AASHTO Road Test",
                );
                None
            } else {
                Some(FamilyModel::Aashto93(a))
            }
        }
        Some(_) => {
            let mut c = CalibratedParams::default();
            num(&mut t, "rise_per_year", d, 0.0, 1.0, &mut c.rise_per_year);
            num(&mut t, "ageing", d, 0.0, 0.1, &mut c.ageing);
            num(&mut t, "rise_per_mesa", d, 0.0, 50.0, &mut c.rise_per_mesa);
            num(&mut t, "sn_ref", d, 0.5, 15.0, &mut c.sn_ref);
            num(&mut t, "sn_exponent", d, 0.0, 6.0, &mut c.sn_exponent);
            Some(FamilyModel::Calibrated(c))
        }
        None => None,
    };
    t.finish(d);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::tomldoc::Doc;

    fn read_text(text: &str) -> (Models, Diagnostics) {
        let mut d = Diagnostics::new();
        let doc = Doc::parse("s.toml", text, &mut d);
        let mut top = doc.table();
        let (m, _) = read(&mut top, &mut d);
        (m, d)
    }

    #[test]
    fn reliability_to_deviate() {
        // AASHTO 1993 Table 4.1: 95 % → −1.645 (confirmed); 90 % → −1.282, 99 % → −2.327 (from
        // memory); the table's values lie within ±0.002 of the exact normal quantiles.
        for (r, zr) in [(0.95, -1.645), (0.90, -1.282), (0.99, -2.327), (0.5, 0.0)] {
            assert!(
                (zr_for_reliability(r) - zr).abs() <= 0.002,
                "{r}: {}",
                zr_for_reliability(r)
            );
        }
        let (m, d) = read_text("[condition.family.a]\nmodel = \"aashto93\"\nreliability = 0.95\n[condition]\ndefault_family = \"a\"\n");
        assert!(!d.has_errors(), "{d}");
        let FamilyModel::Aashto93(p) = m.condition.families[0].model else {
            panic!()
        };
        assert!((p.zr + 1.645).abs() < 0.001);
        let (_, d) = read_text("[condition]\ndefault_family = \"a\"\n[condition.family.a]\nmodel = \"aashto93\"\nzr = -1\nreliability = 0.9\n");
        assert!(d.to_string().contains("both zr and reliability"), "{d}");
        // As a percentage: the very ZR of 0.95. Shares too: "40%" is 0.4 to the bit.
        let (m, d) = read_text("[condition.family.a]\nmodel = \"aashto93\"\nreliability = \"95%\"\n[condition]\ndefault_family = \"a\"\n[user_costs]\nfuel_share = { car = \"40%\" }\n[traffic]\nbus_share_of_heavy = \"12.5%\"\n");
        assert!(!d.has_errors(), "{d}");
        let FamilyModel::Aashto93(q) = m.condition.families[0].model else {
            panic!()
        };
        assert_eq!(q.zr.to_bits(), p.zr.to_bits());
        assert_eq!(m.user_costs.fuel_share.0[0].to_bits(), 0.4f64.to_bits());
        assert_eq!(m.traffic.bus_share_of_heavy.to_bits(), 0.125f64.to_bits());
        // A percentage is not accepted where the value is not a share.
        let (_, d) = read_text("[capacity]\npce = { car = \"100%\" }\n");
        assert!(d.has_errors(), "{d}");
    }

    #[test]
    fn an_empty_file_gives_the_defaults() {
        let (m, d) = read_text("");
        assert!(d.is_empty(), "{d}");
        assert_eq!(m, Models::default());
    }

    #[test]
    fn the_demo_writes_out_the_defaults() {
        // The demo scenario spells every model key out; its values must be the defaults the
        // README documents, but for its condition classes: the demo district's own (2.5 and 4.5
        // m/km), not the national-highway defaults.
        let text = String::from_utf8(
            crate::demo::FILES
                .iter()
                .find(|f| f.0 == "scenario.toml")
                .unwrap()
                .1
                .to_vec(),
        )
        .unwrap();
        let mut d = Diagnostics::new();
        let doc = Doc::parse("s.toml", &text, &mut d);
        let mut top = doc.table();
        for k in [
            "scenario",
            "files",
            "unit_values",
            "budget",
            "plan",
            "commit",
            "target",
            "uncertain",
        ] {
            top.get(k);
        }
        let (mut m, _) = read(&mut top, &mut d);
        top.finish(&mut d);
        assert!(!d.has_errors(), "{d}");
        let def = Models::default();
        assert!((m.condition.good_below - 2.5).abs() < 1e-12);
        assert!((m.condition.poor_above - 4.5).abs() < 1e-12);
        m.condition.good_below = def.condition.good_below;
        m.condition.poor_above = def.condition.poor_above;
        assert_eq!(m, def);
    }

    #[test]
    fn every_bad_value_is_named() {
        let (_, d) = read_text(
            r#"
[traffic]
load_exponent = 40
flow_bands = [ { name = "a", hours = 8000, share = 0.5 }, { name = "b", hours = 760, share = 0.4 } ]
lane_factor = [1.0, 0.9]
[speed]
free_kmh = { single = 90, dual = 100 }
[condition]
default_family = "concrete"
[condition.family.asphalt]
model = "aashto93"
p0 = 0.3
[user_costs]
fuel_share = { car = 0.9 }
repair_share = { car = 0.3 }
"#,
        );
        let t = d.to_string();
        for want in [
            "traffic.load_exponent",
            "shares that add up to 0.9",
            "found 2 values",
            "unknown key `speed.free_kmh.dual`",
            "the family `concrete`, which is not defined",
            "condition.family.asphalt.p0",
            "add up to more than 1",
        ] {
            assert!(t.contains(want), "missing {want} in\n{t}");
        }
        assert!(d.errors().iter().all(|e| e.place.line.is_some()), "{t}");
    }
}
