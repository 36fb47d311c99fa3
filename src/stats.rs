//! Small statistical functions the models need: the standard normal distribution.

/// Complementary error function, fractional error below 1.2 × 10⁻⁷ everywhere.
///
/// Source: the Chebyshev-fitted approximation in Press et al., *Numerical Recipes* (2nd ed.,
/// 1992), §6.2 (`erfcc`).
pub fn erfc(x: f64) -> f64 {
    let z = x.abs();
    let t = 1.0 / (1.0 + 0.5 * z);
    let poly = -1.265_512_23
        + t * (1.000_023_68
            + t * (0.374_091_96
                + t * (0.096_784_18
                    + t * (-0.186_288_06
                        + t * (0.278_868_07
                            + t * (-1.135_203_98
                                + t * (1.488_515_87 + t * (-0.822_152_23 + t * 0.170_872_77))))))));
    let r = t * (-z * z + poly).exp();
    if x >= 0.0 {
        r
    } else {
        2.0 - r
    }
}

/// The standard normal distribution function Φ(x).
pub fn normal_cdf(x: f64) -> f64 {
    0.5 * erfc(-x / std::f64::consts::SQRT_2)
}

/// The standard normal quantile Φ⁻¹(p) for 0 < p < 1, by bisection on [`normal_cdf`] (accurate
/// to about 10⁻⁶, the limit of the distribution function's own accuracy).
pub fn normal_quantile(p: f64) -> f64 {
    let (mut lo, mut hi) = (-40.0_f64, 40.0_f64);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if normal_cdf(mid) < p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    #[test]
    fn normal_reference_values() {
        // Standard normal tables (any statistics text): Φ(0) = 0.5, Φ(1) = 0.841345,
        // Φ(1.96) = 0.975002; quantiles 0.95 → 1.644854, 0.99 → 2.326348, 0.90 → 1.281552.
        assert_abs_diff_eq!(normal_cdf(0.0), 0.5, epsilon = 1e-7);
        assert_abs_diff_eq!(normal_cdf(1.0), 0.841_345, epsilon = 1e-6);
        assert_abs_diff_eq!(normal_cdf(1.96), 0.975_002, epsilon = 1e-6);
        assert_abs_diff_eq!(normal_cdf(-1.96), 0.024_998, epsilon = 1e-6);
        assert_abs_diff_eq!(normal_quantile(0.95), 1.644_854, epsilon = 1e-5);
        assert_abs_diff_eq!(normal_quantile(0.99), 2.326_348, epsilon = 1e-5);
        assert_abs_diff_eq!(normal_quantile(0.90), 1.281_552, epsilon = 1e-5);
        assert_abs_diff_eq!(normal_quantile(0.5), 0.0, epsilon = 1e-6);
    }
}
