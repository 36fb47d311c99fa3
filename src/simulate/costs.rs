//! Agency and road-user cost relations: treatment quantities, routine maintenance, vehicle
//! operating cost against roughness, and the residual value of works at the end of the period.

use crate::input::models::UserCostParams;
use crate::input::scenario::VehicleClass;
use crate::model::catalogue::CostBasis;

/// Quantity a treatment's unit cost is multiplied by: km of section, lane-km, or m² of
/// carriageway (length × lanes × lane width). The simulation passes a widening's added lanes,
/// and for every other action the lanes it works on (the lanes before the works).
pub fn quantity(basis: CostBasis, length_km: f64, lanes_worked: u8, lane_width_m: f64) -> f64 {
    let lanes = f64::from(lanes_worked);
    match basis {
        CostBasis::Km => length_km,
        CostBasis::LaneKm => length_km * lanes,
        CostBasis::SquareMetre => length_km * 1000.0 * lanes * lane_width_m,
    }
}

/// Routine maintenance for one year: (per lane-km + per lane-km per m/km × IRI) × lane-km.
/// Common practice: patching and crack sealing grow with roughness; the coefficients are the
/// catalogue's (calibration defaults).
pub fn routine_cost(per_lane_km: f64, per_lane_km_per_iri: f64, iri: f64, lane_km: f64) -> f64 {
    (per_lane_km + per_lane_km_per_iri * iri) * lane_km
}

/// Routine maintenance and the holding repairs that keep a rough road passable, as the yearly
/// loop needs them (the catalogue's `[routine]`, money as f64): every strategy gets them,
/// the base included.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Upkeep {
    per_lane_km: f64,
    per_lane_km_per_iri: f64,
    holding_from_iri: f64,
    holding_per_lane_km: f64,
    holding_slows: f64,
}

impl Upkeep {
    pub fn new(r: &crate::model::catalogue::Routine) -> Upkeep {
        Upkeep {
            per_lane_km: r.per_lane_km.to_f64(),
            per_lane_km_per_iri: r.per_lane_km_per_iri.to_f64(),
            holding_from_iri: r.holding_from_iri,
            holding_per_lane_km: r.holding_per_lane_km.to_f64(),
            holding_slows: r.holding_slows,
        }
    }

    /// How far holding repairs are in force at roughness `iri`: 0 below `holding_from_iri`,
    /// 1 from one m/km above it, a smooth step between (no jump in cost or effect).
    pub fn holding(&self, iri: f64) -> f64 {
        let x = (iri - self.holding_from_iri).clamp(0.0, 1.0);
        x * x * (3.0 - 2.0 * x)
    }

    /// The share holding repairs take off a year's rise in roughness at `iri`, as
    /// [`Upkeep::year`] gives it.
    #[inline]
    pub fn slows(&self, iri: f64) -> f64 {
        self.holding(iri) * self.holding_slows
    }

    /// A year at roughness `iri` on `lane_km`: the cost of routine maintenance and holding
    /// repairs, and the share the holding repairs take off the year's rise in roughness.
    #[inline]
    pub fn year(&self, iri: f64, lane_km: f64) -> (f64, f64) {
        let h = self.holding(iri);
        let cost = routine_cost(self.per_lane_km, self.per_lane_km_per_iri, iri, lane_km)
            + h * self.holding_per_lane_km * lane_km;
        (cost, h * self.holding_slows)
    }
}

/// Rise in repair and maintenance cost at roughness `iri`, as a share: none up to IRI 3, then
/// linear to `at_4` at IRI 4 and to `at_5` at IRI 5, and held at `at_5` past 5.
///
/// Source: Chatti & Zaabar, NCHRP Report 720 (2012) (no effect to IRI 3; +10 % at 4; +40 %
/// cars / +50 % trucks at 5 m/km). Straight lines between those points are our reading; past
/// IRI 5 the report's range ends, and holding the rise there is a conservative choice of ours.
pub fn repair_rise(iri: f64, at_4: f64, at_5: f64) -> f64 {
    if iri <= 3.0 {
        0.0
    } else if iri <= 4.0 {
        at_4 * (iri - 3.0)
    } else {
        at_4 + (at_5 - at_4) * (iri - 4.0).min(1.0)
    }
}

/// Operating cost of one vehicle of class `c` per km at roughness `iri`, relative to its cost on
/// a smooth road: 1 + fuel share × fuel rise per m/km × (IRI − smooth IRI)⁺ + repair share ×
/// repair rise (NCHRP Report 720 relations; the shares are calibration defaults).
pub fn operating_factor(c: VehicleClass, iri: f64, p: &UserCostParams) -> f64 {
    let fuel = p.fuel_per_iri.get(c) * (iri - p.smooth_iri).max(0.0);
    let repair = repair_rise(iri, p.repair_at_4.get(c), p.repair_at_5.get(c));
    1.0 + p.fuel_share.get(c) * fuel + p.repair_share.get(c) * repair
}

/// A section's operating cost per vehicle-km as a function of roughness, with the class mix and
/// unit values folded in: the same relation as Σ share × unit cost × [`operating_factor`],
/// rearranged into four coefficients so that the yearly loop does no per-class work.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OperatingCurve {
    smooth_iri: f64,
    base: f64,
    fuel: f64,
    repair_3_4: f64,
    repair_4_5: f64,
}

impl OperatingCurve {
    /// `weight[c]` is class c's share of traffic × its smooth-road operating cost per km.
    pub fn new(weight: [f64; 4], p: &UserCostParams) -> OperatingCurve {
        let mut k = OperatingCurve {
            smooth_iri: p.smooth_iri,
            base: 0.0,
            fuel: 0.0,
            repair_3_4: 0.0,
            repair_4_5: 0.0,
        };
        for c in VehicleClass::ALL {
            let w = weight[c as usize];
            let (a4, a5) = (p.repair_at_4.get(c), p.repair_at_5.get(c));
            k.base += w;
            k.fuel += w * p.fuel_share.get(c) * p.fuel_per_iri.get(c);
            k.repair_3_4 += w * p.repair_share.get(c) * a4;
            k.repair_4_5 += w * p.repair_share.get(c) * (a5 - a4);
        }
        k
    }

    /// Operating cost per vehicle-km at roughness `iri`.
    #[inline]
    pub fn per_vkm(&self, iri: f64) -> f64 {
        self.base
            + self.fuel * (iri - self.smooth_iri).max(0.0)
            + self.repair_3_4 * (iri - 3.0).clamp(0.0, 1.0)
            + self.repair_4_5 * (iri - 4.0).clamp(0.0, 1.0)
    }
}

/// Residual value of works at the end of the analysis period: cost × remaining life ÷ life.
///
/// Source: FHWA-SA-98-079, *Life-Cycle Cost Analysis in Pavement Design* (Walls & Smith, 1998):
/// the last activity's cost prorated by its remaining service life, credited at the end of the
/// period. Service counts from the year the works take effect, the year after the works year
/// (`works_year` is a year index from the base year, 0; the period's years are 0 to
/// `period_years` − 1): works in index 31 of a 35-year period serve indexes 32–34, 3 of a
/// 12-year life, and leave 9 — the report's example of a rehabilitation placed at year 32.
pub fn residual_value(cost: f64, works_year: u32, life_years: u32, period_years: u32) -> f64 {
    if life_years == 0 {
        return 0.0;
    }
    let end_of_service = works_year + 1 + life_years;
    let remaining = end_of_service.saturating_sub(period_years);
    cost * f64::from(remaining.min(life_years)) / f64::from(life_years)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::economics::{Discounting, Timing};
    use crate::model::Year;
    use approx::assert_abs_diff_eq;

    #[test]
    fn the_folded_curve_is_the_per_class_relation() {
        let p = UserCostParams::default();
        let weight = [0.6 * 0.19, 0.03 * 0.92, 0.15 * 0.34, 0.22 * 0.88];
        let k = OperatingCurve::new(weight, &p);
        for i in 0..160 {
            let iri = f64::from(i) * 0.1;
            let direct: f64 = VehicleClass::ALL
                .iter()
                .map(|c| weight[*c as usize] * operating_factor(*c, iri, &p))
                .sum();
            assert_abs_diff_eq!(k.per_vkm(iri), direct, epsilon = 1e-12);
        }
    }

    #[test]
    fn quantities_by_basis() {
        assert_abs_diff_eq!(quantity(CostBasis::Km, 2.5, 2, 3.5), 2.5, epsilon = 1e-12);
        assert_abs_diff_eq!(
            quantity(CostBasis::LaneKm, 2.5, 2, 3.5),
            5.0,
            epsilon = 1e-12
        );
        assert_abs_diff_eq!(
            quantity(CostBasis::SquareMetre, 2.5, 2, 3.5),
            17_500.0,
            epsilon = 1e-9
        );
    }

    #[test]
    fn remaining_service_life_example() {
        // FHWA-SA-98-079 (Walls & Smith 1998), method from memory, arithmetic in the shared
        // reference list: 1000 placed at year 32 of a 35-year period (works in year index 31,
        // in service from index 32), 12-year life → 750, PV at 4 % = 190.06.
        let rv = residual_value(1000.0, 31, 12, 35);
        assert_abs_diff_eq!(rv, 750.0, epsilon = 1e-9);
        let d = Discounting::new(0.04, Year(2000), Timing::EndOfYear).unwrap();
        // Credited at the end of the period: year 0 + 35.
        assert_abs_diff_eq!(rv * d.factor(Year(2035)), 190.06, epsilon = 0.005);
        // Works that end within the period leave nothing; works in the last year leave all.
        assert_abs_diff_eq!(residual_value(1000.0, 10, 12, 35), 0.0, epsilon = 1e-12);
        assert_abs_diff_eq!(residual_value(1000.0, 34, 12, 35), 1000.0, epsilon = 1e-12);
        // A mid-year rule credits it at the same point, the period's end.
        let m = Discounting::new(0.04, Year(2000), Timing::MidYear).unwrap();
        assert_abs_diff_eq!(rv * m.end_factor(35), 190.06, epsilon = 0.005);
        assert_abs_diff_eq!(
            rv * m.end_shift() * m.factor(Year(2035)),
            rv * m.end_factor(35),
            epsilon = 1e-9
        );
    }

    #[test]
    fn nchrp_720_roughness_effects() {
        // Chatti & Zaabar, NCHRP Report 720 (2012): repair +0 % to IRI 3, +10 % at 4, +40 %
        // (cars) / +50 % (trucks) at 5; fuel +2 % per m/km for cars.
        assert_abs_diff_eq!(repair_rise(2.5, 0.1, 0.4), 0.0, epsilon = 1e-12);
        assert_abs_diff_eq!(repair_rise(3.0, 0.1, 0.4), 0.0, epsilon = 1e-12);
        assert_abs_diff_eq!(repair_rise(4.0, 0.1, 0.4), 0.10, epsilon = 1e-12);
        assert_abs_diff_eq!(repair_rise(5.0, 0.1, 0.4), 0.40, epsilon = 1e-12);
        assert_abs_diff_eq!(repair_rise(5.0, 0.1, 0.5), 0.50, epsilon = 1e-12);
        assert_abs_diff_eq!(repair_rise(4.5, 0.1, 0.4), 0.25, epsilon = 1e-12);
        assert_abs_diff_eq!(repair_rise(8.0, 0.1, 0.4), 0.40, epsilon = 1e-12);
        let p = UserCostParams::default();
        let only_fuel = UserCostParams {
            fuel_share: crate::input::scenario::PerClass([1.0; 4]),
            repair_share: crate::input::scenario::PerClass([0.0; 4]),
            ..p.clone()
        };
        // Each m/km above the smooth road (IRI 1) adds 2 % fuel for a car.
        assert_abs_diff_eq!(
            operating_factor(VehicleClass::Car, 2.0, &only_fuel),
            1.02,
            epsilon = 1e-12
        );
        assert_abs_diff_eq!(
            operating_factor(VehicleClass::Car, 3.0, &only_fuel),
            1.04,
            epsilon = 1e-12
        );
        // Operating cost never falls as roughness rises.
        let mut last = 0.0;
        for k in 0..200 {
            let f = operating_factor(VehicleClass::HeavyTruck, f64::from(k) * 0.1, &p);
            assert!(f >= last);
            last = f;
        }
    }
}
