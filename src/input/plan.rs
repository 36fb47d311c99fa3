//! The scenario's rules for network selection (`pavestrat plan`): what to optimise, works already
//! committed, and network condition targets.
//!
//! ```toml
//! [plan]
//! objective = "npv"          # largest total NPV (default), or "least-cost": least PV agency
//!                            # cost that meets the targets
//! binding_within = "5%"      # a line is binding when the plan leaves at most this share of
//!                            # its limit (default 5 %)
//! years_without_lines = "unlimited"  # after a scope's lines end: no limit (default),
//!                            # "last-limit" (its last line holds on), or "error"
//!
//! [[commit]]                 # works already decided; the selection must keep them
//! section = "OR-03"
//! strategy = "strengthen@2028"   # hold the section to this strategy ("base": no works) ...
//!
//! [[commit]]
//! section = "CP-02"
//! treatment = "overlay"      # ... or: whatever strategy it gets does this treatment
//! year = 2029                #     in this year
//!
//! [[target]]                 # one row per year from first_year to last_year
//! name = "smooth"
//! measure = "mean-iri"       # length-weighted mean IRI (m/km), or "poor-share": share of
//!                            # length in poor condition (0–1)
//! at_most = 3.2
//! first_year = 2030
//! last_year = 2036
//! region = "north"           # optional: only sections of this region count
//! ```

use super::tomldoc::{Table, Value};
use crate::diag::{Diagnostics, Place};
use crate::model::{Region, SectionId, Year};

/// What the selection optimises.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Objective {
    /// Largest total NPV against the base (default).
    #[default]
    Npv,
    /// Least PV of agency cost (works, routine, less residual value), within the targets.
    LeastCost,
}

impl Objective {
    pub fn name(self) -> &'static str {
        match self {
            Objective::Npv => "npv",
            Objective::LeastCost => "least-cost",
        }
    }

    /// `npv` or `least-cost`, in any case.
    pub fn parse(s: &str) -> Option<Objective> {
        [Objective::Npv, Objective::LeastCost]
            .into_iter()
            .find(|o| o.name().eq_ignore_ascii_case(s))
    }
}

/// What a commitment holds a section to.
#[derive(Debug, Clone, PartialEq)]
pub enum Held {
    /// This strategy, by name.
    Strategy(String),
    /// Any strategy that applies this treatment (catalogue name) in this calendar year.
    Treatment { treatment: String, year: Year },
}

/// Works already decided on one section.
#[derive(Debug, Clone, PartialEq)]
pub struct Commitment {
    pub section: SectionId,
    pub held: Held,
    pub place: Place,
}

/// Which network condition a target limits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Measure {
    /// Length-weighted mean IRI, m/km.
    MeanIri,
    /// Share of length in poor condition (the scenario's condition classes), 0–1.
    PoorShare,
}

impl Measure {
    pub fn name(self) -> &'static str {
        match self {
            Measure::MeanIri => "mean-iri",
            Measure::PoorShare => "poor-share",
        }
    }
}

/// A condition target in one year: `measure ≤ at_most`.
#[derive(Debug, Clone, PartialEq)]
pub struct TargetLine {
    /// `{group}-{year}`, as budget lines are named.
    pub name: String,
    pub group: String,
    pub year: Year,
    pub measure: Measure,
    pub at_most: f64,
    pub region: Option<Region>,
    pub place: Place,
}

/// The `[plan]`, `[[commit]]` and `[[target]]` tables.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PlanRules {
    pub objective: Objective,
    /// `binding_within`: the share of a line's limit within which a line the plan uses is
    /// binding (see [`crate::plan::LineState`]); `None` for the default.
    pub binding_within: Option<f64>,
    /// `years_without_lines`: what holds in a year of the analysis that no budget line of a
    /// scope limits.
    pub years_without_lines: YearsWithoutLines,
    pub commitments: Vec<Commitment>,
    pub targets: Vec<TargetLine>,
}

/// What holds in the years of the analysis period after a scope's budget lines end (a scope:
/// a category and a region, or the whole network).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum YearsWithoutLines {
    /// Spending there is not limited (said by `check` and `plan`).
    #[default]
    Unlimited,
    /// The scope's last line holds on, year by year, to the end of the period: its group's
    /// lines are extended with its last limit.
    LastLimit,
    /// A year of the analysis period without a line limiting capital works is an error.
    Error,
}

impl YearsWithoutLines {
    pub const WORDS: [&'static str; 3] = ["unlimited", "last-limit", "error"];

    pub fn parse(s: &str) -> Option<YearsWithoutLines> {
        let all = [
            YearsWithoutLines::Unlimited,
            YearsWithoutLines::LastLimit,
            YearsWithoutLines::Error,
        ];
        Self::WORDS
            .iter()
            .position(|w| w.eq_ignore_ascii_case(s))
            .map(|k| all[k])
    }
}

/// A line is binding when the plan leaves at most this share of its limit, unless the scenario
/// says otherwise (common practice: a budget 95 % spent is spoken of as fully used).
pub const DEFAULT_BINDING_WITHIN: f64 = 0.05;

impl PlanRules {
    /// The share of a line's limit within which a line is binding.
    pub fn binding_within(&self) -> f64 {
        self.binding_within.unwrap_or(DEFAULT_BINDING_WITHIN)
    }
}

/// Read the plan rules from the scenario's top table. `period` is the analysis period when known.
pub fn read(top: &mut Table<'_, '_>, period: Option<(i64, i64)>, d: &mut Diagnostics) -> PlanRules {
    let mut rules = PlanRules::default();
    if let Some(v) = top.get("plan") {
        if let Some(mut t) = v.table(d) {
            if let Some(o) = t.get("objective") {
                if let Some(o) = o.word(d, &["npv", "least-cost"]).and_then(Objective::parse) {
                    rules.objective = o;
                }
            }
            if let Some(w) = t.get("years_without_lines") {
                if let Some(w) = w
                    .word(d, &YearsWithoutLines::WORDS)
                    .and_then(YearsWithoutLines::parse)
                {
                    rules.years_without_lines = w;
                }
            }
            if let Some(w) = t.get("binding_within") {
                rules.binding_within = w.fraction_in(
                    d,
                    0.0,
                    0.5,
                    "a share of a line's limit from 0 to 0.5 (50 %)",
                );
            }
            t.finish(d);
        }
    }
    let (first, last) = period.unwrap_or((1950, 2200));
    if let Some(v) = top.get("commit") {
        rules.commitments = read_commitments(&v, first, last, d);
    }
    if let Some(v) = top.get("target") {
        rules.targets = read_targets(&v, first, last, d);
    }
    rules
}

fn read_commitments(
    v: &Value<'_, '_>,
    first: i64,
    last: i64,
    d: &mut Diagnostics,
) -> Vec<Commitment> {
    let Some(items) = v.array(d) else {
        return Vec::new();
    };
    let mut out: Vec<Commitment> = Vec::new();
    for item in items {
        let Some(mut t) = item.table(d) else { continue };
        let place = t.place();
        let section = t
            .require("section", d, "the section_id of the committed section")
            .and_then(|v| v.string(d).map(str::to_owned));
        let strategy = t
            .get("strategy")
            .and_then(|v| v.string(d).map(str::to_owned));
        let treatment = t
            .get("treatment")
            .and_then(|v| v.string(d).map(str::to_owned));
        // Whether `year` was written at all, apart from whether it is a valid year (an invalid
        // one is reported once, as such).
        let year_value = t.get("year");
        let had_year = year_value.is_some();
        let year = year_value.and_then(|v| {
            v.integer_in(
                d,
                first,
                last,
                &format!("a year of the analysis period, {first} to {last}"),
            )
        });
        t.finish(d);
        let held = match (strategy, treatment, year) {
            (Some(s), None, None) => Some(Held::Strategy(s)),
            (None, Some(tr), Some(y)) => Some(Held::Treatment {
                treatment: tr,
                year: Year(y as i32),
            }),
            (None, Some(_), None) if !had_year => {
                d.error(
                    place.clone().with_subfield("year"),
                    "a treatment with no year",
                    "`year = YYYY` beside `treatment`",
                );
                None
            }
            (None, None, _) => {
                d.error(
                    place.clone(),
                    "a commitment with neither `strategy` nor `treatment`",
                    "`strategy = \"NAME\"`, or `treatment = \"NAME\"` with `year = YYYY`",
                );
                None
            }
            (Some(_), _, _) => {
                d.error(
                    place.clone(),
                    "both `strategy` and `treatment`/`year`",
                    "either a strategy, or a treatment with its year",
                );
                None
            }
            _ => None,
        };
        let (Some(section), Some(held)) = (section, held) else {
            continue;
        };
        let whole = |h: &Held| matches!(h, Held::Strategy(_));
        if let Some(prev) = out
            .iter()
            .find(|c| c.section.as_str() == section && (whole(&c.held) || whole(&held)))
        {
            d.error(
                place.clone().with_subfield("section"),
                format!(
                    "the section `{section}` held to a strategy and committed again (first at line {})",
                    prev.place.line.unwrap_or(0)
                ),
                "one strategy commitment per section, or any number of treatment commitments",
            );
            continue;
        }
        if let Held::Treatment { treatment, year } = &held {
            // A section gets one treatment a year, so two commitments in one year cannot both
            // be kept.
            let earlier = out.iter().find_map(|c| match &c.held {
                Held::Treatment {
                    treatment: other,
                    year: y,
                } if c.section.as_str() == section && y == year => Some((c, other)),
                _ => None,
            });
            if let Some((prev, other)) = earlier {
                d.error(
                    place.clone().with_subfield("year"),
                    format!(
                        "a second treatment commitment for section `{section}` in {year} (`{treatment}`; `{other}` at line {})",
                        prev.place.line.unwrap_or(0)
                    ),
                    "at most one treatment commitment per section and year (a section gets one treatment a year)",
                );
                continue;
            }
        }
        out.push(Commitment {
            section: SectionId(section),
            held,
            place,
        });
    }
    out
}

fn read_targets(v: &Value<'_, '_>, first: i64, last: i64, d: &mut Diagnostics) -> Vec<TargetLine> {
    let Some(items) = v.array(d) else {
        return Vec::new();
    };
    let in_period = format!("a year of the analysis period, {first} to {last}");
    let mut out: Vec<TargetLine> = Vec::new();
    for item in items {
        let Some(mut t) = item.table(d) else { continue };
        let place = t.place();
        let name = t
            .require("name", d, "a name for the target, e.g. \"smooth\"")
            .and_then(|v| v.identifier(d).map(str::to_owned));
        let measure = t
            .require("measure", d, "\"mean-iri\" or \"poor-share\"")
            .and_then(|v| {
                v.word(d, &["mean-iri", "poor-share"]).map(|w| match w {
                    "mean-iri" => Measure::MeanIri,
                    _ => Measure::PoorShare,
                })
            });
        let at_most = t
            .require("at_most", d, "the largest value allowed")
            .and_then(|v| match measure {
                Some(Measure::PoorShare) => {
                    v.fraction_in(d, 0.0, 1.0, "a share of length from 0 to 1")
                }
                _ => v.number_in(d, 0.0, 30.0, "an IRI in m/km from 0 to 30"),
            });
        let y0 = t
            .require("first_year", d, "the first year the target applies to")
            .and_then(|v| v.integer_in(d, first, last, &in_period));
        let y1 = t
            .require("last_year", d, "the last year the target applies to")
            .and_then(|v| v.integer_in(d, first, last, &in_period));
        let region = super::scenario::optional_region(&mut t, d);
        t.finish(d);
        let (Some(name), Some(measure), Some(at_most), Some(y0), Some(y1), Some(region)) =
            (name, measure, at_most, y0, y1, region)
        else {
            continue;
        };
        if !super::scenario::years_in_order(&place, y0, y1, d) {
            continue;
        }
        if out.iter().any(|l| l.group == name) {
            d.error(
                place.clone().with_subfield("name"),
                format!("the target name `{name}` twice"),
                "a name used by one [[target]] entry only",
            );
            continue;
        }
        for y in y0..=y1 {
            out.push(TargetLine {
                name: format!("{name}-{y}"),
                group: name.clone(),
                year: Year(y as i32),
                measure,
                at_most,
                region: region.clone(),
                place: place.clone(),
            });
        }
    }
    out
}
