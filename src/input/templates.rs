//! Strategy templates (TOML): each expands into many strategies by ranging the years, or the
//! roughness thresholds, at which its treatments happen.
//!
//! ```toml
//! [template.strengthen-widen]
//! label = "Strengthen, then widen when traffic needs it"
//! only_if = { carriageway = "single", max_lanes = 2 }   # feasibility rules
//! min_gap_years = 3          # least years between works in different years
//! steps = [
//!   # window: years after the base year (inclusive); every: the step of the range
//!   { treatment = "overlay", tag = "strengthen", window = [0, 6] },
//!   # after: years after the previous step (0 = the same year, as combined works)
//!   { treatment = "widen", tag = "widen", after = [3, 15], every = 1 },
//! ]
//!
//! [template.reseal-on-trigger]
//! trigger = { treatment = "reseal", tag = "reseal", iri = [3.0, 3.5, 4.0, 4.5] }
//! ```
//!
//! The strategy named `base` (routine maintenance only) is always present and is not a template.
//! Strategies are named from the tags and years, `strengthen@2029+widen@2034`, or with a trigger
//! `reseal@iri3.5`.

use super::tomldoc::{is_identifier, Doc, Table, Value};
use crate::diag::{Diagnostics, Place};
use crate::model::network::Carriageway;

/// When a step happens.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StepTiming {
    /// In a year `first..=last` years after the base year.
    Window { first: u32, last: u32, every: u32 },
    /// `min..=max` years after the previous step.
    After { min: u32, max: u32, every: u32 },
}

impl StepTiming {
    /// How many choices of year the step has.
    pub fn choices(&self) -> u64 {
        let (a, b, e) = match *self {
            StepTiming::Window { first, last, every } => (first, last, every),
            StepTiming::After { min, max, every } => (min, max, every),
        };
        u64::from((b - a) / e + 1)
    }
}

/// One timed treatment of a template.
#[derive(Debug, Clone, PartialEq)]
pub struct Step {
    pub treatment: String,
    pub tag: String,
    pub timing: StepTiming,
    pub place: Place,
}

/// A treatment applied whenever roughness reaches a threshold, over a range of thresholds.
#[derive(Debug, Clone, PartialEq)]
pub struct Trigger {
    pub treatment: String,
    pub tag: String,
    /// IRI thresholds (m/km), ascending; one strategy each.
    pub iri: Vec<f64>,
    pub place: Place,
}

/// Which sections a template applies to.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Feasibility {
    pub carriageway: Option<Carriageway>,
    pub min_lanes: Option<u8>,
    pub max_lanes: Option<u8>,
    pub min_aadt: Option<f64>,
    pub max_iri: Option<f64>,
    pub min_iri: Option<f64>,
}

/// One template.
#[derive(Debug, Clone, PartialEq)]
pub struct Template {
    pub name: String,
    pub label: String,
    pub file: String,
    pub steps: Vec<Step>,
    pub trigger: Option<Trigger>,
    pub only_if: Feasibility,
    pub min_gap_years: u32,
    pub place: Place,
}

impl Template {
    /// Upper bound on the strategies this template yields per section (before feasibility
    /// rules and the analysis period prune it).
    pub fn max_strategies(&self) -> u64 {
        let steps: u64 = self
            .steps
            .iter()
            .map(|s| s.timing.choices())
            .fold(1u64, u64::saturating_mul);
        let trig = self.trigger.as_ref().map_or(1, |t| t.iri.len() as u64);
        steps.saturating_mul(trig)
    }
}

/// Read templates from one file's text.
pub fn parse(file: &str, text: &str, d: &mut Diagnostics) -> Option<Vec<Template>> {
    let before = d.error_count();
    let doc = Doc::parse(file, text, d);
    if d.error_count() > before {
        return None;
    }
    let mut top = doc.table();
    let mut out = Vec::new();
    if let Some(v) = top.require("template", d, "[template.NAME] tables, one per template") {
        if let Some(mut t) = v.table(d) {
            let entries = t.entries();
            if entries.is_empty() {
                d.error(
                    t.place(),
                    "no templates",
                    "at least one [template.NAME] table",
                );
            }
            for (name, val) in entries {
                if !is_identifier(&name) || name == "base" {
                    d.error(
                        val.place(),
                        format!("the template name `{name}`"),
                        "a name of letters, digits, `_` and `-`, other than `base` (always present)",
                    );
                    continue;
                }
                if let Some(tt) = val.table(d) {
                    if let Some(tpl) = read_template(file, &name, tt, d) {
                        out.push(tpl);
                    }
                }
            }
            t.finish(d);
        }
    }
    top.finish(d);
    (d.error_count() == before).then_some(out)
}

fn read_template(
    file: &str,
    name: &str,
    mut t: Table<'_, '_>,
    d: &mut Diagnostics,
) -> Option<Template> {
    let place = t.place();
    let label = match t.get("label") {
        Some(v) => v.string(d).map(str::to_owned),
        None => Some(name.to_owned()),
    };
    let min_gap = match t.get("min_gap_years") {
        Some(v) => v
            .integer_in(d, 0, 50, "a whole number of years from 0 to 50")
            .map(|x| x as u32),
        None => Some(0),
    };
    let only_if = match t.get("only_if") {
        Some(v) => v.table(d).and_then(|ft| read_feasibility(ft, d)),
        None => Some(Feasibility::default()),
    };
    let steps = match t.get("steps") {
        Some(v) => read_steps(&v, d),
        None => Some(Vec::new()),
    };
    let trigger = match t.get("trigger") {
        Some(v) => v.table(d).and_then(|tt| read_trigger(tt, d)).map(Some),
        None => Some(None),
    };
    t.finish(d);
    let (steps, trigger) = (steps?, trigger?);
    if steps.is_empty() && trigger.is_none() {
        d.error(
            place.clone(),
            format!("the template `{name}` has no works"),
            "steps, a trigger, or both",
        );
        return None;
    }
    let mut tags: Vec<&str> = steps.iter().map(|s| s.tag.as_str()).collect();
    if let Some(tr) = &trigger {
        tags.push(&tr.tag);
    }
    let mut sorted = tags.clone();
    sorted.sort_unstable();
    if let Some(w) = sorted.windows(2).find(|w| w[0] == w[1]) {
        d.error(
            place.clone(),
            format!("the tag `{}` on two works of `{name}`", w[0]),
            "a different tag for each work, so strategy names are unambiguous",
        );
        return None;
    }
    Some(Template {
        name: name.to_owned(),
        label: label?,
        file: file.to_owned(),
        steps,
        trigger,
        only_if: only_if?,
        min_gap_years: min_gap?,
        place,
    })
}

fn read_feasibility(mut t: Table<'_, '_>, d: &mut Diagnostics) -> Option<Feasibility> {
    let carriageway = match t.get("carriageway") {
        Some(v) => v
            .word(d, &["single", "divided"])
            .and_then(Carriageway::parse)
            .map(Some),
        None => Some(None),
    };
    let lanes = |v: Option<Value<'_, '_>>, d: &mut Diagnostics| match v {
        Some(v) => v
            .integer_in(d, 1, 12, "a whole number of lanes from 1 to 12")
            .map(|x| Some(x as u8)),
        None => Some(None),
    };
    let min_lanes = lanes(t.get("min_lanes"), d);
    let max_lanes = lanes(t.get("max_lanes"), d);
    let num = |v: Option<Value<'_, '_>>, d: &mut Diagnostics, hi: f64, what: &str| match v {
        Some(v) => v.number_in(d, 0.0, hi, what).map(Some),
        None => Some(None),
    };
    let min_aadt = num(t.get("min_aadt"), d, 500_000.0, "an AADT from 0 to 500000");
    let min_iri = num(t.get("min_iri"), d, 25.0, "an IRI in m/km from 0 to 25");
    let max_iri = num(t.get("max_iri"), d, 25.0, "an IRI in m/km from 0 to 25");
    t.finish(d);
    Some(Feasibility {
        carriageway: carriageway?,
        min_lanes: min_lanes?,
        max_lanes: max_lanes?,
        min_aadt: min_aadt?,
        min_iri: min_iri?,
        max_iri: max_iri?,
    })
}

fn read_steps(v: &Value<'_, '_>, d: &mut Diagnostics) -> Option<Vec<Step>> {
    let items = v.array(d)?;
    let mut out = Vec::new();
    let mut ok = true;
    for (i, item) in items.iter().enumerate() {
        let Some(mut t) = item.table(d) else {
            ok = false;
            continue;
        };
        let place = item.place();
        let (treatment, tag) = read_work(&mut t, d);
        let window = t.get("window").map(|v| (v.place(), v.int_range(d, 0, 99)));
        let after = t.get("after").map(|v| (v.place(), v.int_range(d, 0, 99)));
        let every = match t.get("every") {
            Some(v) => v.integer_in(d, 1, 50, "a whole number of years from 1 to 50"),
            None => Some(1),
        };
        t.finish(d);
        let timing = match (window, after, every) {
            (Some((_, Some((a, b)))), None, Some(e)) => Some(StepTiming::Window {
                first: a as u32,
                last: b as u32,
                every: e as u32,
            }),
            (None, Some((p, Some((a, b)))), Some(e)) => {
                if i == 0 {
                    d.error(
                        p,
                        "`after` on the first step",
                        "a window = [first, last] of years after the base year",
                    );
                    None
                } else {
                    Some(StepTiming::After {
                        min: a as u32,
                        max: b as u32,
                        every: e as u32,
                    })
                }
            }
            (Some((p, _)), Some(_), _) => {
                d.error(p, "both window and after", "one of them");
                None
            }
            (None, None, _) => {
                d.error(
                    place.clone(),
                    "a step with no timing",
                    "window = [first, last] or after = [min, max]",
                );
                None
            }
            _ => None,
        };
        match (treatment, tag, timing) {
            (Some(treatment), Some(tag), Some(timing)) => out.push(Step {
                tag,
                treatment,
                timing,
                place,
            }),
            _ => ok = false,
        }
    }
    ok.then_some(out)
}

/// The treatment a step or trigger applies and its tag (the treatment's name by default).
fn read_work(t: &mut Table<'_, '_>, d: &mut Diagnostics) -> (Option<String>, Option<String>) {
    let treatment = t
        .require("treatment", d, "the treatment's name in the catalogue")
        .and_then(|v| v.identifier(d).map(str::to_owned));
    let tag = match t.get("tag") {
        Some(v) => v.identifier(d).map(str::to_owned),
        None => treatment.clone(),
    };
    (treatment, tag)
}

fn read_trigger(mut t: Table<'_, '_>, d: &mut Diagnostics) -> Option<Trigger> {
    let place = t.place();
    let (treatment, tag) = read_work(&mut t, d);
    let iri = t
        .require(
            "iri",
            d,
            "a list of IRI thresholds in m/km, e.g. [3.0, 3.5, 4.0]",
        )
        .and_then(|v| {
            let items = v.array(d)?;
            let xs: Vec<Option<f64>> = items
                .iter()
                .map(|i| i.number_in(d, 0.5, 25.0, "an IRI threshold in m/km from 0.5 to 25"))
                .collect();
            let xs: Vec<f64> = xs.into_iter().collect::<Option<_>>()?;
            if xs.is_empty() {
                d.error(v.place(), "an empty list", "at least one threshold");
                return None;
            }
            if xs.windows(2).any(|w| w[0] >= w[1]) {
                d.error(
                    v.place(),
                    "thresholds not in ascending order",
                    "ascending thresholds, each once",
                );
                return None;
            }
            Some(xs)
        });
    t.finish(d);
    Some(Trigger {
        tag: tag?,
        treatment: treatment?,
        iri: iri?,
        place,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = r#"
[template.strengthen-widen]
label = "Strengthen, then widen"
only_if = { carriageway = "single", max_lanes = 2 }
min_gap_years = 3
steps = [
  { treatment = "overlay", tag = "strengthen", window = [0, 6] },
  { treatment = "widen", after = [3, 15], every = 2 },
]

[template.reseal]
trigger = { treatment = "reseal", iri = [3.0, 3.5, 4.0] }
"#;

    #[test]
    fn reads_templates() {
        let mut d = Diagnostics::new();
        let t = parse("t.toml", GOOD, &mut d).expect("parses");
        assert!(d.is_empty(), "{d}");
        let r = t.iter().find(|x| x.name == "reseal").unwrap();
        assert_eq!(r.trigger.as_ref().unwrap().tag, "reseal");
        assert_eq!(r.max_strategies(), 3);
        let sw = t.iter().find(|x| x.name == "strengthen-widen").unwrap();
        assert_eq!(sw.steps[1].tag, "widen");
        assert_eq!(sw.only_if.carriageway, Some(Carriageway::Single));
        // 7 strengthening years × 7 widening offsets (3, 5, …, 15).
        assert_eq!(sw.max_strategies(), 49);
    }

    #[test]
    fn bad_templates_are_explained() {
        let bad = GOOD
            .replace("window = [0, 6]", "after = [0, 6]")
            .replace("iri = [3.0, 3.5, 4.0]", "iri = [3.5, 3.0]")
            .replace(
                "[template.reseal]",
                "[template.base]\nsteps = []\n\n[template.reseal]",
            );
        let mut d = Diagnostics::new();
        assert!(parse("t.toml", &bad, &mut d).is_none());
        let t = d.to_string();
        for want in [
            "`after` on the first step",
            "ascending order",
            "the template name `base`",
        ] {
            assert!(t.contains(want), "missing {want} in\n{t}");
        }
    }
}
