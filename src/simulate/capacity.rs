//! Capacity, the volume-delay relation and free speed: how long a vehicle-km takes.

use crate::input::models::{CapacityParams, SpeedParams};
use crate::model::network::Carriageway;

/// Capacity of a road in passenger cars per hour, both directions together.
///
/// Two lanes or fewer on a single carriageway: the two-lane highway capacity for both directions
/// (Highway Capacity Manual 2000/2010: 3200 pc/h), prorated for a one-lane road. More lanes:
/// the multilane capacity per lane (HCM 2000: 2200 pc/h/ln at 60 mi/h), reduced by the undivided
/// factor on a single carriageway (calibration default).
pub fn capacity_pc_h(lanes: u8, carriageway: Carriageway, p: &CapacityParams) -> f64 {
    let lanes_f = f64::from(lanes.max(1));
    match carriageway {
        Carriageway::Single if lanes <= 2 => p.two_lane_pc_h * lanes_f / 2.0,
        Carriageway::Single => p.multilane_pc_h_per_lane * lanes_f * p.undivided_factor,
        Carriageway::Divided => p.multilane_pc_h_per_lane * lanes_f,
    }
}

/// Travel time relative to free-flow time at volume/capacity `vc`: 1 + α·(v/c)^β.
///
/// Source: Bureau of Public Roads, Traffic Assignment Manual (1964), α = 0.15, β = 4. `vc` is
/// capped at `max_vc` (calibration default): the curve is not meant to price demand far past
/// capacity, which in practice diverts or moves to other hours.
pub fn bpr_factor(vc: f64, p: &CapacityParams) -> f64 {
    let x = vc.clamp(0.0, p.max_vc);
    // The usual β = 4 avoids a powf in the hot loop.
    #[allow(clippy::float_cmp)]
    // an exact default value selects the fast path; any other β is exact too
    let pow = if p.bpr_beta == 4.0 {
        let x2 = x * x;
        x2 * x2
    } else {
        x.powf(p.bpr_beta)
    };
    1.0 + p.bpr_alpha * pow
}

/// Free speed without roughness (km/h): the section's own, or the scenario's by carriageway.
pub fn free_speed_kmh(own: Option<f64>, carriageway: Carriageway, p: &SpeedParams) -> f64 {
    own.unwrap_or(match carriageway {
        Carriageway::Single => p.free_single_kmh,
        Carriageway::Divided => p.free_divided_kmh,
    })
}

/// Share of the free speed kept at roughness `iri`: 1 up to the onset, then falling linearly by
/// `drop_per_iri` per m/km, never below `min_factor`. Calibration default form and values:
/// replace with local speed–roughness surveys.
pub fn roughness_speed_factor(iri: f64, p: &SpeedParams) -> f64 {
    (1.0 - p.drop_per_iri * (iri - p.roughness_onset_iri).max(0.0)).max(p.min_factor)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    #[test]
    fn bpr_reference_values() {
        // Bureau of Public Roads (1964), values from the shared reference list:
        // v/c 0 → 1, 0.5 → 1.009375, 0.8 → 1.06144, 1.0 → 1.15, 1.2 → 1.31104.
        let p = CapacityParams::default();
        for (vc, want) in [
            (0.0, 1.0),
            (0.5, 1.009375),
            (0.8, 1.06144),
            (1.0, 1.15),
            (1.2, 1.31104),
        ] {
            assert_abs_diff_eq!(bpr_factor(vc, &p), want, epsilon = 1e-5);
        }
        // The general exponent path agrees with the fast one.
        let q = CapacityParams {
            bpr_beta: 4.000001,
            ..p
        };
        assert_abs_diff_eq!(bpr_factor(0.8, &q), 1.06144, epsilon = 1e-5);
        // Capped past max_vc.
        assert_abs_diff_eq!(
            bpr_factor(3.0, &p),
            bpr_factor(p.max_vc, &p),
            epsilon = 1e-12
        );
    }

    #[test]
    fn capacities_by_lanes_and_carriageway() {
        // Highway Capacity Manual: 3200 pc/h both directions on a two-lane highway; 2200 pc/h/ln
        // multilane (from memory).
        let p = CapacityParams::default();
        assert_abs_diff_eq!(
            capacity_pc_h(2, Carriageway::Single, &p),
            3200.0,
            epsilon = 1e-9
        );
        assert_abs_diff_eq!(
            capacity_pc_h(4, Carriageway::Divided, &p),
            8800.0,
            epsilon = 1e-9
        );
        assert!(
            capacity_pc_h(4, Carriageway::Single, &p) < capacity_pc_h(4, Carriageway::Divided, &p)
        );
    }

    #[test]
    fn free_speed_falls_with_roughness_only_past_the_onset() {
        let p = SpeedParams::default();
        assert_abs_diff_eq!(roughness_speed_factor(1.0, &p), 1.0, epsilon = 1e-12);
        assert!(roughness_speed_factor(6.0, &p) < roughness_speed_factor(4.0, &p));
        assert_abs_diff_eq!(
            roughness_speed_factor(100.0, &p),
            p.min_factor,
            epsilon = 1e-12
        );
    }
}
