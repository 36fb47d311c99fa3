//! `[[uncertain]]` entries of a scenario: an input (see [`crate::input::varied`]) and the distribution of
//! its value, for `pavestrat risk`.
//!
//! ```toml
//! [[uncertain]]
//! input = "factor.capital_cost"   # or a key path such as "unit_values.time.car"
//! distribution = "pert"           # uniform | triangular | normal | lognormal | pert
//! min = 0.9
//! mode = 1.0
//! max = 1.4
//! ```
//!
//! Parameters: uniform `min, max`; triangular and pert `min, mode, max`; normal `mean, sd` and
//! optional `min, max` (truncation; default the input's accepted range); lognormal `median,
//! sigma` (the standard deviation of the logarithm) and optional `min, max` likewise. Every value
//! a draw can take must lie in the range the input accepts. A parameter may be written as a
//! percentage string (`min = "4%"`, read as 0.04), for an input that is a rate or a share.

use super::scenario::Scenario;
use super::tomldoc::{Table, Value};
use crate::diag::{did_you_mean, Diagnostics, Place};

/// One uncertain input.
#[derive(Debug, Clone, PartialEq)]
pub struct Uncertain {
    /// The input's name (a key path or a whole-run input).
    pub input: String,
    pub distribution: Distribution,
    pub place: Place,
}

/// The distributions' names.
pub const DISTRIBUTIONS: [&str; 5] = ["uniform", "triangular", "normal", "lognormal", "pert"];

/// A parameter: a number, or a percentage for an input that is a rate (`"4%"` is 0.04).
fn value(v: &Value<'_, '_>, d: &mut Diagnostics, expected: &str) -> Option<f64> {
    v.fraction_in(d, -f64::MAX, f64::MAX, expected)
}

fn num(t: &mut Table<'_, '_>, key: &str, d: &mut Diagnostics, expected: &str) -> Option<f64> {
    t.require(key, d, expected)
        .and_then(|v| value(&v, d, expected))
}

fn opt(t: &mut Table<'_, '_>, key: &str, d: &mut Diagnostics) -> Option<Option<f64>> {
    match t.get(key) {
        None => Some(None),
        Some(v) => value(&v, d, "a number").map(Some),
    }
}

/// Read the `[[uncertain]]` array (`v`) against the scenario it belongs to.
pub fn read(v: &Value<'_, '_>, s: &Scenario, d: &mut Diagnostics) -> Vec<Uncertain> {
    let Some(items) = v.array(d) else {
        return Vec::new();
    };
    let names = crate::input::varied::input_names(s);
    let mut out: Vec<Uncertain> = Vec::new();
    for item in items {
        let Some(mut t) = item.table(d) else { continue };
        let place = t.place();
        let input = t
            .require(
                "input",
                d,
                "the name of the uncertain input, e.g. \"factor.capital_cost\"",
            )
            .and_then(|v| {
                let name = v.string(d)?;
                match crate::input::varied::input(s, name) {
                    Some(i) => Some(i),
                    None => {
                        let refs: Vec<&str> = names.iter().map(String::as_str).collect();
                        let e = d.error(
                            v.place(),
                            format!("found `{name}`, which is not an input that can be uncertain"),
                            "a whole-run input (factor.capital_cost, factor.routine_cost, \
                             factor.unit_values, shift.growth, discount_rate) or the key path of a \
                             unit value or model coefficient, e.g. unit_values.time.car",
                        );
                        e.hint = Some(match did_you_mean(name, &refs) {
                            Some(m) => format!("did you mean `{m}`?"),
                            None => "coefficients that a rule ties to another (fuel_share, \
                                     repair_share, repair_at_4/5, classes_iri, iri_max, p0, \
                                     terminal_psr) stay as written"
                                .to_owned(),
                        });
                        None
                    }
                }
            });
        let kind = t
            .require(
                "distribution",
                d,
                "one of uniform, triangular, normal, lognormal, pert",
            )
            .and_then(|v| v.word(d, &DISTRIBUTIONS));
        let range = input
            .as_ref()
            .map(|i| i.range)
            .unwrap_or((f64::MIN, f64::MAX));
        let dist = match kind {
            Some("uniform") => {
                let min = num(&mut t, "min", d, "the smallest value");
                let max = num(&mut t, "max", d, "the largest value");
                match (min, max) {
                    (Some(min), Some(max)) => Some(Distribution::Uniform { min, max }),
                    _ => None,
                }
            }
            Some(k @ ("triangular" | "pert")) => {
                let min = num(&mut t, "min", d, "the smallest value");
                let mode = num(&mut t, "mode", d, "the most likely value");
                let max = num(&mut t, "max", d, "the largest value");
                match (min, mode, max) {
                    (Some(min), Some(mode), Some(max)) => {
                        if !(min <= mode && mode <= max) {
                            d.error(
                                place.clone().with_subfield("mode"),
                                format!("min {min}, mode {mode}, max {max}"),
                                "min ≤ mode ≤ max",
                            );
                            None
                        } else if k == "pert" {
                            Some(Distribution::Pert { min, mode, max })
                        } else {
                            Some(Distribution::Triangular { min, mode, max })
                        }
                    }
                    _ => None,
                }
            }
            Some("normal") => {
                let mean = num(&mut t, "mean", d, "the mean");
                let sd = t
                    .require("sd", d, "the standard deviation, 0 or more")
                    .and_then(|v| v.number_in(d, 0.0, f64::MAX, "a standard deviation, 0 or more"));
                let (min, max) = (opt(&mut t, "min", d), opt(&mut t, "max", d));
                match (mean, sd, min, max) {
                    (Some(mean), Some(sd), Some(min), Some(max)) => Some(Distribution::Normal {
                        mean,
                        sd,
                        min: min.unwrap_or(range.0),
                        max: max.unwrap_or(range.1),
                    }),
                    _ => None,
                }
            }
            Some("lognormal") => {
                let median = t
                    .require("median", d, "the median, above 0")
                    .and_then(|v| v.number_in(d, f64::MIN_POSITIVE, f64::MAX, "a median above 0"));
                let sigma = t
                    .require(
                        "sigma",
                        d,
                        "the standard deviation of the logarithm, 0 or more",
                    )
                    .and_then(|v| v.number_in(d, 0.0, 10.0, "a sigma from 0 to 10"));
                let (min, max) = (opt(&mut t, "min", d), opt(&mut t, "max", d));
                match (median, sigma, min, max) {
                    (Some(median), Some(sigma), Some(min), Some(max)) => {
                        Some(Distribution::Lognormal {
                            median,
                            sigma,
                            min: min.unwrap_or(range.0.max(0.0)),
                            max: max.unwrap_or(range.1),
                        })
                    }
                    _ => None,
                }
            }
            _ => None,
        };
        t.finish(d);
        let (Some(input), Some(dist)) = (input, dist) else {
            continue;
        };
        // The truncation bounds and centre must make sense, and every draw must be a value the
        // input accepts.
        let ok = match dist {
            Distribution::Normal { mean, min, max, .. } => {
                check_centre(&place, "mean", mean, min, max, d)
            }
            Distribution::Lognormal {
                median, min, max, ..
            } => check_centre(&place, "median", median, min, max, d),
            Distribution::Uniform { min, max } if min > max => {
                d.error(
                    place.clone().with_subfield("min"),
                    format!("min {min} above max {max}"),
                    "min ≤ max",
                );
                false
            }
            _ => true,
        };
        if !ok {
            continue;
        }
        let (lo, hi) = dist.support();
        if lo < input.range.0 || hi > input.range.1 {
            d.error(
                place.clone().with_subfield("input"),
                format!(
                    "a {} distribution of `{}` reaching from {lo} to {hi}",
                    dist.name(),
                    input.name
                ),
                format!(
                    "values the input accepts, {} to {}",
                    input.range.0, input.range.1
                ),
            );
            continue;
        }
        if let Some(prev) = out.iter().find(|u| u.input == input.name) {
            d.error(
                place.clone().with_subfield("input"),
                format!(
                    "`{}` declared uncertain twice (first at line {})",
                    input.name,
                    prev.place.line.unwrap_or(0)
                ),
                "one [[uncertain]] entry per input",
            );
            continue;
        }
        out.push(Uncertain {
            input: input.name,
            distribution: dist,
            place,
        });
    }
    out
}

fn check_centre(
    place: &Place,
    key: &str,
    centre: f64,
    min: f64,
    max: f64,
    d: &mut Diagnostics,
) -> bool {
    if min > max || centre < min || centre > max {
        d.error(
            place.clone().with_subfield(key),
            format!("{key} {centre} with min {min} and max {max}"),
            format!("min ≤ {key} ≤ max"),
        );
        return false;
    }
    true
}

/// The distribution of one uncertain input, as read (sampling and moments:
/// `analysis::distribution`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Distribution {
    Uniform {
        min: f64,
        max: f64,
    },
    Triangular {
        min: f64,
        mode: f64,
        max: f64,
    },
    /// Normal with mean and standard deviation, truncated to [min, max] (infinite ends allowed).
    Normal {
        mean: f64,
        sd: f64,
        min: f64,
        max: f64,
    },
    /// Lognormal: the median e^μ and the standard deviation σ of the logarithm, truncated to
    /// [min, max] (min ≥ 0; infinite max allowed).
    Lognormal {
        median: f64,
        sigma: f64,
        min: f64,
        max: f64,
    },
    /// PERT (beta) on [min, max] with the most likely value `mode`.
    Pert {
        min: f64,
        mode: f64,
        max: f64,
    },
}

impl Distribution {
    pub fn name(&self) -> &'static str {
        match self {
            Distribution::Uniform { .. } => "uniform",
            Distribution::Triangular { .. } => "triangular",
            Distribution::Normal { .. } => "normal",
            Distribution::Lognormal { .. } => "lognormal",
            Distribution::Pert { .. } => "pert",
        }
    }

    /// The smallest and largest value a draw can take.
    pub fn support(&self) -> (f64, f64) {
        match *self {
            Distribution::Uniform { min, max }
            | Distribution::Triangular { min, max, .. }
            | Distribution::Pert { min, max, .. } => (min, max),
            Distribution::Normal { mean, sd, min, max } => {
                if sd == 0.0 {
                    (mean, mean)
                } else {
                    (min, max)
                }
            }
            Distribution::Lognormal {
                median,
                sigma,
                min,
                max,
            } => {
                if sigma == 0.0 {
                    (median, median)
                } else {
                    (min.max(0.0), max)
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diag::Diagnostics;
    use proptest::prelude::*;
    use std::path::Path;

    /// The demo scenario with its `[[uncertain]]` entries replaced by `block`.
    fn with_block(block: &str) -> String {
        let text = String::from_utf8_lossy(crate::demo::FILES[0].1).into_owned();
        let a = text.find("[[uncertain]]").unwrap();
        let b = a + text[a..].find("# ------").unwrap();
        format!("{}{block}\n{}", &text[..a], &text[b..])
    }

    fn read(block: &str) -> (Option<Scenario>, Diagnostics) {
        let mut d = Diagnostics::new();
        let s = super::super::scenario::parse("s.toml", &with_block(block), Path::new("."), &mut d);
        (s, d)
    }

    #[test]
    fn every_distribution_is_read_with_its_parameters() {
        let (s, d) = read(
            r#"
[[uncertain]]
input = "speed.drop_per_iri"
distribution = "normal"
mean = 0.03
sd = 0.01

[[uncertain]]
input = "unit_values.crash"
distribution = "lognormal"
median = 90000
sigma = 0.2
max = 200000
"#,
        );
        let s = s.unwrap_or_else(|| panic!("{d}"));
        assert_eq!(s.uncertain.len(), 2);
        // An omitted bound is the input's own accepted range.
        assert_eq!(
            s.uncertain[0].distribution,
            Distribution::Normal {
                mean: 0.03,
                sd: 0.01,
                min: 0.0,
                max: 1.0
            }
        );
        assert_eq!(s.uncertain[1].distribution.support(), (0.0, 200_000.0));
        assert!(
            s.uncertain[1].place.line.is_some(),
            "each entry keeps its line"
        );
        // A rate's parameters as percentages: the same distribution as the fractions.
        let (a, d) = read("[[uncertain]]\ninput = \"speed.drop_per_iri\"\ndistribution = \"triangular\"\nmin = \"2%\"\nmode = \"3%\"\nmax = \"4.5%\"\n");
        let a = a.unwrap_or_else(|| panic!("{d}"));
        let (b, d) = read("[[uncertain]]\ninput = \"speed.drop_per_iri\"\ndistribution = \"triangular\"\nmin = 0.02\nmode = 0.03\nmax = 0.045\n");
        let b = b.unwrap_or_else(|| panic!("{d}"));
        assert_eq!(a.uncertain[0].distribution, b.uncertain[0].distribution);
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(120))]

        /// Whatever parameters the reader accepts, every draw is a value the input accepts.
        #[test]
        fn accepted_distributions_only_draw_accepted_values(
            kind in 0usize..5,
            a in -2.0f64..3.0,
            b in -2.0f64..3.0,
            c in -2.0f64..3.0,
            which in 0usize..3,
        ) {
            let (input, lo, hi) = [
                ("speed.drop_per_iri", 0.0, 1.0),
                ("factor.capital_cost", 0.0, 100.0),
                ("shift.growth", -0.2, 0.2),
            ][which];
            let mut v = [a, b, c];
            v.sort_by(f64::total_cmp);
            let params = match kind {
                0 => format!("distribution = \"uniform\"\nmin = {}\nmax = {}", v[0], v[2]),
                1 => format!("distribution = \"triangular\"\nmin = {}\nmode = {}\nmax = {}", v[0], v[1], v[2]),
                2 => format!("distribution = \"pert\"\nmin = {}\nmode = {}\nmax = {}", v[0], v[1], v[2]),
                3 => format!("distribution = \"normal\"\nmean = {a}\nsd = {}", b.abs()),
                _ => format!("distribution = \"lognormal\"\nmedian = {}\nsigma = {}", a.abs() + 1e-3, c.abs()),
            };
            let (s, d) = read(&format!("[[uncertain]]\ninput = \"{input}\"\n{params}\n"));
            if let Some(s) = s {
                let u = &s.uncertain[0];
                for k in 0..40 {
                    let x = u.distribution.sample(&mut crate::analysis::distribution::stream(5, k));
                    prop_assert!(x.is_finite() && x >= lo && x <= hi, "{x} from {:?}", u.distribution);
                }
            } else {
                // A refusal names the scenario file and a line.
                prop_assert!(d.has_errors());
                prop_assert!(d.iter().all(|x| x.place.file == "s.toml"));
            }
        }
    }
}
