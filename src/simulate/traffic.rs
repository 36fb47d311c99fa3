//! Traffic: compound growth, vehicle classes by share, and design-lane ESALs from the heavy
//! classes' axle loads through load-equivalency factors.

use crate::input::models::TrafficParams;
use crate::input::scenario::VehicleClass;
use crate::model::network::Section;

/// Load-equivalency factor of one axle: (load / standard)^exponent.
///
/// Source: the AASHO Road Test (1958–60) "fourth-power law" with exponent 4 and the 80 kN
/// (18-kip) single axle as standard; re-analyses find exponents of 3 to over 6, so the exponent
/// is a scenario value.
pub fn load_equivalency(load_kn: f64, standard_kn: f64, exponent: f64) -> f64 {
    (load_kn / standard_kn).powf(exponent)
}

/// ESALs of one average vehicle: the sum of its axles' load-equivalency factors.
pub fn esal_per_vehicle(axles_kn: &[f64], p: &TrafficParams) -> f64 {
    axles_kn
        .iter()
        .map(|l| load_equivalency(*l, p.standard_axle_kn, p.load_exponent))
        .sum()
}

/// Share of the AADT in each vehicle class for a section with this heavy share: the heavy
/// vehicles split into buses and heavy trucks, the rest into cars and light trucks.
pub fn class_shares(heavy_share: f64, p: &TrafficParams) -> [f64; 4] {
    let light = 1.0 - heavy_share;
    let mut s = [0.0; 4];
    s[VehicleClass::Car as usize] = light * (1.0 - p.light_truck_share_of_light);
    s[VehicleClass::LightTruck as usize] = light * p.light_truck_share_of_light;
    s[VehicleClass::Bus as usize] = heavy_share * p.bus_share_of_heavy;
    s[VehicleClass::HeavyTruck as usize] = heavy_share * (1.0 - p.bus_share_of_heavy);
    s
}

/// Lanes in each direction: half the lanes, rounded up (a single-lane road counts as one).
pub fn lanes_per_direction(lanes: u8) -> u8 {
    lanes.div_ceil(2).max(1)
}

/// The design-lane share of the heavier direction's traffic, from the AASHTO 1993 lane
/// distribution factor by lanes per direction (scenario values).
pub fn design_lane_factor(lanes: u8, p: &TrafficParams) -> f64 {
    lane_share(lanes, p.direction_factor, &p.lane_factor)
}

/// Design-lane ESALs of a section in the base year.
pub fn design_lane_esals(section: &Section, p: &TrafficParams) -> f64 {
    series(section, 1, p).esal_two_way[0] * design_lane_factor(section.lanes, p)
}

/// [`design_lane_factor`] from its two coefficients.
pub fn lane_share(lanes: u8, direction_factor: f64, lane_factor: &[f64; 4]) -> f64 {
    let per_dir = usize::from(lanes_per_direction(lanes)).min(4);
    direction_factor * lane_factor[per_dir - 1]
}

/// A section's traffic, year by year from the base year.
#[derive(Debug, Clone, PartialEq)]
pub struct TrafficSeries {
    /// AADT of each year (both directions).
    pub aadt: Vec<f64>,
    /// Two-way ESALs of each year (all lanes); multiply by [`design_lane_factor`] for the
    /// design lane.
    pub esal_two_way: Vec<f64>,
    /// Share of the AADT in each class.
    pub shares: [f64; 4],
}

/// Traffic of `section` for `years` years: AADT grows at the section's compound rate (common
/// practice); yearly ESALs are 365 × Σ class AADT × ESALs per vehicle.
pub fn series(section: &Section, years: usize, p: &TrafficParams) -> TrafficSeries {
    let shares = class_shares(section.heavy_share, p);
    let esal_per_aadt: f64 = VehicleClass::ALL
        .iter()
        .map(|c| shares[*c as usize] * esal_per_vehicle(&p.axles[*c as usize], p))
        .sum();
    let g = 1.0 + section.growth_rate;
    let mut aadt = Vec::with_capacity(years);
    let mut a = section.aadt;
    for _ in 0..years {
        aadt.push(a);
        a *= g;
    }
    let esal_two_way = aadt.iter().map(|a| 365.0 * a * esal_per_aadt).collect();
    TrafficSeries {
        aadt,
        esal_two_way,
        shares,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    #[test]
    fn fourth_power_reference_values() {
        // AASHO Road Test fourth-power law, values from the shared reference list:
        // 100 kN → 2.441, 120 kN → 5.063, 40 kN → 0.0625 against an 80 kN standard axle.
        assert_abs_diff_eq!(load_equivalency(100.0, 80.0, 4.0), 2.441, epsilon = 5e-4);
        assert_abs_diff_eq!(load_equivalency(120.0, 80.0, 4.0), 5.063, epsilon = 5e-4);
        assert_abs_diff_eq!(load_equivalency(40.0, 80.0, 4.0), 0.0625, epsilon = 1e-12);
        assert_abs_diff_eq!(load_equivalency(80.0, 80.0, 4.0), 1.0, epsilon = 1e-12);
    }

    #[test]
    fn shares_add_up_and_heavy_classes_carry_the_load() {
        let p = TrafficParams::default();
        let s = class_shares(0.2, &p);
        assert_abs_diff_eq!(s.iter().sum::<f64>(), 1.0, epsilon = 1e-12);
        assert_abs_diff_eq!(
            s[VehicleClass::Bus as usize] + s[VehicleClass::HeavyTruck as usize],
            0.2,
            epsilon = 1e-12
        );
        assert!(esal_per_vehicle(&p.axles[VehicleClass::Car as usize], &p).abs() < 1e-12);
        assert!(esal_per_vehicle(&p.axles[VehicleClass::HeavyTruck as usize], &p) > 1.0);
    }

    #[test]
    fn lane_factors_follow_lanes_per_direction() {
        let p = TrafficParams::default();
        assert_eq!(lanes_per_direction(2), 1);
        assert_eq!(lanes_per_direction(4), 2);
        assert_eq!(lanes_per_direction(1), 1);
        assert!(design_lane_factor(4, &p) < design_lane_factor(2, &p));
        assert_abs_diff_eq!(design_lane_factor(2, &p), 0.5, epsilon = 1e-12);
    }
}
