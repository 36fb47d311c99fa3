//! Enumeration: the strategies each section can take, expanded from the strategy templates.
//!
//! A template's steps range over their windows (years after the base year) or their offsets
//! after the previous step; a roughness trigger ranges over its thresholds. Expansion keeps only
//! what can be built on the section: the template's `only_if` rules, the analysis period,
//! `min_gap_years` between works in different years (counted from the section's last works too),
//! and the rules of the trade that hold whatever a template says (common practice): a divided
//! road is not widened again, and a road has at most 12 lanes. Strategies are named from their
//! tags and calendar years, `strengthen@2029+widen@2034`, or `reseal@iri3.5` with a trigger;
//! the strategy of routine maintenance only is always first and is named `base`.

use crate::input::templates::{StepTiming, Template};
use crate::model::catalogue::{Action, Catalogue};
use crate::model::network::{Carriageway, Section};
use crate::model::{Year, YearOffset};
use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};

/// FNV-1a: a fast hash for the short names of one section's strategies (the set is local and
/// its order never shows, so no defence against chosen collisions is needed).
#[derive(Debug, Clone, Copy)]
struct Fnv(u64);

impl Default for Fnv {
    fn default() -> Fnv {
        Fnv(0xcbf2_9ce4_8422_2325)
    }
}

impl Hasher for Fnv {
    fn write(&mut self, bytes: &[u8]) {
        for b in bytes {
            self.0 = (self.0 ^ u64::from(*b)).wrapping_mul(0x0100_0000_01b3);
        }
    }

    fn finish(&self) -> u64 {
        self.0
    }
}

/// The name of the routine-maintenance-only strategy in every output.
pub const BASE: &str = "base";

/// Works of a strategy in one year: a treatment of the catalogue (by index).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Works {
    /// When, after the base year.
    pub year: YearOffset,
    /// Index into [`Catalogue::treatments`].
    pub treatment: usize,
}

/// A treatment applied whenever roughness reaches a threshold.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TriggerRule {
    pub treatment: usize,
    /// IRI (m/km) at the start of a year at or above which the treatment is done that year.
    pub iri: f64,
    /// Least years since the last works.
    pub min_gap_years: u32,
}

/// A strategy of one section in 14 bytes: its template, the year of each step and the trigger
/// threshold. Enough to rebuild the strategy ([`Enumerator::strategy`]) or name it
/// ([`Enumerator::name`]) without enumerating the section again, so later stages keep these
/// instead of strategies. [`StrategyRef::BASE`] is the base.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub struct StrategyRef {
    /// Template index + 1; 0 for the base.
    template: u16,
    /// Threshold index + 1 in the template's trigger; 0 without a trigger.
    threshold: u16,
    /// Steps used in `years`.
    steps: u8,
    /// Each step's year after the base year (the period is at most 100 years).
    years: [u8; crate::input::MAX_STEPS],
}

impl StrategyRef {
    /// The base strategy.
    pub const BASE: StrategyRef = StrategyRef {
        template: 0,
        threshold: 0,
        steps: 0,
        years: [0; crate::input::MAX_STEPS],
    };

    pub fn is_base(self) -> bool {
        self.template == 0
    }
}

/// One strategy for one section.
#[derive(Debug, Clone, PartialEq)]
pub struct Strategy {
    pub name: String,
    /// The strategy in a few bytes, for later stages to hold.
    pub key: StrategyRef,
    /// Index of the template it came from; `None` for the base.
    pub template: Option<usize>,
    /// Timed works in year order.
    pub works: Vec<Works>,
    pub trigger: Option<TriggerRule>,
}

impl Strategy {
    /// The base strategy: routine maintenance only.
    pub fn base() -> Strategy {
        Strategy {
            name: BASE.to_owned(),
            key: StrategyRef::BASE,
            template: None,
            works: Vec::new(),
            trigger: None,
        }
    }

    pub fn is_base(&self) -> bool {
        self.template.is_none()
    }

    /// The year of its first widening works, if any.
    pub fn widening_year(&self, cat: &Catalogue) -> Option<YearOffset> {
        self.works
            .iter()
            .find(|w| cat.treatments[w.treatment].action == Action::Widen)
            .map(|w| w.year)
    }

    /// The same strategy without its widening works (and named so): what the widening is
    /// weighed against when its first-year return is worked out.
    pub fn without_widening(&self, cat: &Catalogue) -> Strategy {
        Strategy {
            name: format!("{} without widening", self.name),
            key: self.key,
            template: self.template,
            works: self
                .works
                .iter()
                .copied()
                .filter(|w| cat.treatments[w.treatment].action != Action::Widen)
                .collect(),
            trigger: self.trigger,
        }
    }
}

/// A template with its treatments resolved to catalogue indices.
#[derive(Debug, Clone)]
struct Compiled<'a> {
    index: usize,
    template: &'a Template,
    steps: Vec<(usize, &'a str, StepTiming)>,
    trigger: Option<(usize, &'a str, &'a [f64])>,
}

/// Expands templates into strategies, section by section.
#[derive(Debug, Clone)]
pub struct Enumerator<'a> {
    compiled: Vec<Compiled<'a>>,
    /// Template index → position in `compiled` (templates naming an unknown treatment have
    /// none).
    by_template: Vec<Option<usize>>,
    catalogue: &'a Catalogue,
    base_year: Year,
    period: u32,
}

impl<'a> Enumerator<'a> {
    /// Resolve the templates against the catalogue. Treatment names were checked when the
    /// run was loaded; a template naming an unknown treatment is skipped.
    pub fn new(
        templates: &'a [Template],
        catalogue: &'a Catalogue,
        base_year: Year,
        period: u32,
    ) -> Enumerator<'a> {
        let idx = |name: &str| catalogue.treatments.iter().position(|t| t.id == name);
        let compiled = templates
            .iter()
            .enumerate()
            .filter_map(|(index, t)| {
                let steps = t
                    .steps
                    .iter()
                    .map(|s| Some((idx(&s.treatment)?, s.tag.as_str(), s.timing)))
                    .collect::<Option<Vec<_>>>()?;
                let trigger = match &t.trigger {
                    Some(tr) => Some((idx(&tr.treatment)?, tr.tag.as_str(), tr.iri.as_slice())),
                    None => None,
                };
                Some(Compiled {
                    index,
                    template: t,
                    steps,
                    trigger,
                })
            })
            .collect::<Vec<Compiled<'a>>>();
        let mut by_template = vec![None; templates.len()];
        for (i, c) in compiled.iter().enumerate() {
            by_template[c.index] = Some(i);
        }
        Enumerator {
            compiled,
            by_template,
            catalogue,
            base_year,
            period,
        }
    }

    /// The enumerator of a loaded run: its templates, catalogue and analysis period.
    pub fn for_run(run: &'a crate::input::Run) -> Enumerator<'a> {
        let s = &run.scenario;
        Enumerator::new(
            &run.templates,
            &run.catalogue,
            s.base_year,
            s.analysis_years,
        )
    }

    /// Every strategy of `section`, the base first, then templates in order; names unique.
    pub fn strategies(&self, section: &Section) -> Vec<Strategy> {
        self.strategies_named(section, true)
    }

    /// [`Enumerator::strategies`] without their names (each left empty; [`Enumerator::name`]
    /// gives it from the key): the same strategies in the same order, for a caller that names
    /// none of them, without a text per strategy.
    pub fn unnamed_strategies(&self, section: &Section) -> Vec<Strategy> {
        self.strategies_named(section, false)
    }

    fn strategies_named(&self, section: &Section, named: bool) -> Vec<Strategy> {
        let mut out = vec![Strategy::base()];
        // Each name's hash and the first strategy with it: a name is taken when a strategy
        // with that hash has that name (hashes that collide are told apart by a scan).
        let mut names: HashMap<u64, usize, BuildHasherDefault<Fnv>> = HashMap::default();
        names.insert(name_hash(BASE), 0);
        let mut name = String::new();
        for c in &self.compiled {
            if !feasible(c.template, section) {
                continue;
            }
            let mut timed: Vec<Vec<Works>> = Vec::new();
            self.expand(c, section, 0, &mut Vec::new(), &mut timed);
            let thresholds: Vec<Option<f64>> = match c.trigger {
                Some((_, _, iri)) => iri.iter().copied().map(Some).collect(),
                None => vec![None],
            };
            for works in &timed {
                for (t, thr) in thresholds.iter().enumerate() {
                    self.name_into(c, works, *thr, &mut name);
                    let h = name_hash(&name);
                    // An unnamed strategy's name is rebuilt from its key (a hash seen before:
                    // a repeated strategy, or rarely another name with the same hash).
                    let same = |s: &Strategy| {
                        if named {
                            s.name == name
                        } else {
                            self.name(s.key) == name
                        }
                    };
                    match names.get(&h) {
                        Some(&i) if same(&out[i]) => continue,
                        Some(_) if out.iter().any(same) => continue,
                        Some(_) => {}
                        None => {
                            names.insert(h, out.len());
                        }
                    }
                    let key = Self::key_of(c, works, thr.map(|_| t));
                    let kept = if named { name.clone() } else { String::new() };
                    out.push(self.build(c, key, works.clone(), kept));
                }
            }
        }
        out
    }

    /// The key of a template's strategy with these works and trigger threshold.
    fn key_of(c: &Compiled<'_>, works: &[Works], threshold: Option<usize>) -> StrategyRef {
        let mut years = [0u8; crate::input::MAX_STEPS];
        for (slot, w) in years.iter_mut().zip(works) {
            // Years are below the period, at most 100 (checked when the scenario is read).
            *slot = w.year.0.min(u32::from(u8::MAX)) as u8;
        }
        StrategyRef {
            // `load` refuses more templates than a u16 holds, and more thresholds too.
            template: (c.index + 1).min(usize::from(u16::MAX)) as u16,
            threshold: threshold.map_or(0, |t| (t + 1).min(usize::from(u16::MAX)) as u16),
            steps: works.len().min(crate::input::MAX_STEPS) as u8,
            years,
        }
    }

    fn build(
        &self,
        c: &Compiled<'_>,
        key: StrategyRef,
        works: Vec<Works>,
        name: String,
    ) -> Strategy {
        let threshold = match (c.trigger, key.threshold) {
            (Some((_, _, iri)), t) if t > 0 => iri.get(usize::from(t) - 1).copied(),
            _ => None,
        };
        Strategy {
            name,
            key,
            template: Some(c.index),
            works,
            trigger: threshold.map(|iri| TriggerRule {
                treatment: c.trigger.map_or(0, |t| t.0),
                iri,
                min_gap_years: c.template.min_gap_years,
            }),
        }
    }

    /// The strategy `key` names, rebuilt without enumerating: the same works, trigger and name
    /// as the one [`Enumerator::strategies`] gave. `None` for a key of no template here.
    pub fn strategy(&self, key: StrategyRef) -> Option<Strategy> {
        if key.is_base() {
            return Some(Strategy::base());
        }
        let c = &self.compiled[(*self.by_template.get(usize::from(key.template) - 1)?)?];
        let works: Vec<Works> = key.years[..usize::from(key.steps).min(c.steps.len())]
            .iter()
            .zip(&c.steps)
            .map(|(&y, &(treatment, _, _))| Works {
                year: YearOffset(u32::from(y)),
                treatment,
            })
            .collect();
        let threshold = match (c.trigger, key.threshold) {
            (Some((_, _, iri)), t) if t > 0 => Some(*iri.get(usize::from(t) - 1)?),
            _ => None,
        };
        let mut name = String::new();
        self.name_into(c, &works, threshold, &mut name);
        Some(self.build(c, key, works, name))
    }

    /// The name of the strategy `key` names (empty for a key of no template here).
    pub fn name(&self, key: StrategyRef) -> String {
        self.strategy(key).map(|s| s.name).unwrap_or_default()
    }

    fn expand(
        &self,
        c: &Compiled<'_>,
        section: &Section,
        k: usize,
        so_far: &mut Vec<Works>,
        out: &mut Vec<Vec<Works>>,
    ) {
        if k == c.steps.len() {
            if self.buildable(so_far, section) {
                out.push(so_far.clone());
            }
            return;
        }
        let (treatment, _, timing) = c.steps[k];
        let (lo, hi, every) = match timing {
            StepTiming::Window { first, last, every } => (first, last, every),
            StepTiming::After { min, max, every } => {
                let prev = so_far.last().map_or(0, |w| w.year.0);
                (prev + min, prev + max, every)
            }
        };
        let gap = c.template.min_gap_years;
        let mut y = lo;
        while y <= hi && y < self.period {
            let gap_ok = match so_far.last() {
                // Steps are in time order: a window before the previous step's year is skipped.
                Some(prev) => {
                    let p = prev.year.0;
                    y == p || (y > p && y - p >= gap)
                }
                None => section
                    .last_works_year
                    .is_none_or(|lw| (self.base_year + YearOffset(y)) - lw >= i64::from(gap)),
            };
            if gap_ok {
                so_far.push(Works {
                    year: YearOffset(y),
                    treatment,
                });
                self.expand(c, section, k + 1, so_far, out);
                so_far.pop();
            }
            y += every.max(1);
        }
    }

    /// Whether the works can be built in turn on this section (widening rules).
    fn buildable(&self, works: &[Works], section: &Section) -> bool {
        let mut lanes = section.lanes;
        let mut cw = section.carriageway;
        for w in works {
            let t = &self.catalogue.treatments[w.treatment];
            if t.action == Action::Widen {
                if cw == Carriageway::Divided || u32::from(lanes) + u32::from(t.lanes_added) > 12 {
                    return false;
                }
                lanes += t.lanes_added;
                if let Some(after) = t.carriageway_after {
                    cw = after;
                }
            }
        }
        true
    }

    /// The strategy's name into `out` (cleared first): each step as `tag@year`, then the
    /// trigger as `tag@iriX`, joined by `+`.
    fn name_into(
        &self,
        c: &Compiled<'_>,
        works: &[Works],
        threshold: Option<f64>,
        out: &mut String,
    ) {
        use std::fmt::Write;
        out.clear();
        for (w, (_, tag, _)) in works.iter().zip(&c.steps) {
            if !out.is_empty() {
                out.push('+');
            }
            out.push_str(tag);
            out.push('@');
            push_year(out, i64::from((self.base_year + w.year).0));
        }
        if let (Some(thr), Some((_, tag, _))) = (threshold, c.trigger) {
            if !out.is_empty() {
                out.push('+');
            }
            let _ = write!(out, "{tag}@iri{thr}");
        }
    }
}

/// The hash [`Enumerator::strategies`] tells names apart by.
fn name_hash(name: &str) -> u64 {
    let mut h = Fnv::default();
    h.write(name.as_bytes());
    h.finish()
}

/// `y` in decimal, as `{}` writes it, without the formatting machinery (the enumeration's
/// hottest text).
fn push_year(out: &mut String, y: i64) {
    if y < 0 {
        out.push('-');
    }
    let mut digits = [0u8; 20];
    let mut n = y.unsigned_abs();
    let mut i = digits.len();
    loop {
        i -= 1;
        digits[i] = b'0' + (n % 10) as u8;
        n /= 10;
        if n == 0 {
            break;
        }
    }
    for &d in &digits[i..] {
        out.push(char::from(d));
    }
}

/// Whether a template's `only_if` rules admit the section (as it is in the base year).
pub fn feasible(t: &Template, s: &Section) -> bool {
    let f = &t.only_if;
    f.carriageway.is_none_or(|c| c == s.carriageway)
        && f.min_lanes.is_none_or(|n| s.lanes >= n)
        && f.max_lanes.is_none_or(|n| s.lanes <= n)
        && f.min_aadt.is_none_or(|a| s.aadt >= a)
        && f.min_iri.is_none_or(|x| s.iri >= x)
        && f.max_iri.is_none_or(|x| s.iri <= x)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The unnamed enumeration is the named one with the names left out: the same strategies,
    /// keys, works and triggers in the same order, on the demo's sections and 300 synthetic
    /// ones (repeats told apart by their names rebuilt from the keys).
    #[test]
    fn unnamed_strategies_are_the_named_ones() {
        let (run, d) = crate::input::load(
            &crate::demo::SOURCE,
            std::path::Path::new(crate::demo::SCENARIO),
        );
        let run = run.unwrap_or_else(|| panic!("{d}"));
        let text = crate::demo::synth::network_csv(300, 31);
        let mut d = crate::diag::Diagnostics::new();
        let synth = crate::input::network::parse("synth.csv", &text, &mut d).unwrap();
        let e = Enumerator::for_run(&run);
        let mut n = 0;
        for sec in run.network.sections.iter().chain(&synth.sections) {
            let named = e.strategies(sec);
            let unnamed = e.unnamed_strategies(sec);
            assert_eq!(named.len(), unnamed.len(), "{}", sec.id);
            for (a, b) in named.iter().zip(&unnamed) {
                assert_eq!(
                    (a.key, &a.works, a.trigger, a.template),
                    (b.key, &b.works, b.trigger, b.template)
                );
                assert_eq!(e.name(b.key), a.name);
                n += 1;
            }
        }
        assert!(n > 10_000, "{n}");
    }
    use crate::diag::Diagnostics;
    use std::collections::HashSet;
    use std::path::Path;

    #[test]
    fn years_are_written_as_format_writes_them() {
        for y in [
            -10_000i64,
            -1,
            0,
            7,
            10,
            99,
            2027,
            12_345,
            i64::from(i32::MAX),
            i64::MIN + 1,
        ] {
            let mut s = String::from("x@");
            push_year(&mut s, y);
            assert_eq!(s, format!("x@{y}"));
        }
    }

    fn demo() -> crate::input::Run {
        let (run, d) = crate::input::load(&crate::demo::SOURCE, Path::new(crate::demo::SCENARIO));
        assert!(!d.has_errors(), "{d}");
        run.unwrap()
    }

    /// The strategy names the templates in `text` give the demo's first section (with no last
    /// works year), base year 2027, 30 years.
    fn names_for(text: &str) -> Vec<String> {
        let mut d = Diagnostics::new();
        let templates = crate::input::templates::parse("t.toml", text, &mut d).unwrap();
        let run = demo();
        let e = Enumerator::new(&templates, &run.catalogue, Year(2027), 30);
        let mut sec = run.network.sections[0].clone();
        sec.last_works_year = None;
        e.strategies(&sec).into_iter().map(|s| s.name).collect()
    }

    #[test]
    fn expands_windows_offsets_gaps_and_triggers() {
        let names = names_for(
            r#"
[template.sw]
only_if = { carriageway = "single" }
min_gap_years = 3
steps = [
  { treatment = "overlay", tag = "strengthen", window = [0, 2] },
  { treatment = "widen", tag = "widen", after = [0, 4], every = 2 },
]
[template.rs]
trigger = { treatment = "reseal", iri = [3.0, 4.0] }
"#,
        );
        // Templates come in name order (`rs` before `sw`): the two thresholds; then offsets 0
        // (same year), 2 (under the 3-year gap: dropped) and 4, for each of 3 years.
        assert_eq!(
            names,
            [
                "base",
                "reseal@iri3",
                "reseal@iri4",
                "strengthen@2027+widen@2027",
                "strengthen@2027+widen@2031",
                "strengthen@2028+widen@2028",
                "strengthen@2028+widen@2032",
                "strengthen@2029+widen@2029",
                "strengthen@2029+widen@2033",
            ]
        );
        // A divided road gets no widening, by the template's rule or the trade's.
        let run = demo();
        let e = Enumerator::for_run(&run);
        let divided = run
            .network
            .sections
            .iter()
            .find(|s| s.carriageway == Carriageway::Divided)
            .unwrap();
        assert!(e
            .strategies(divided)
            .iter()
            .all(|s| s.widening_year(&run.catalogue).is_none()));
    }

    #[test]
    fn steps_out_of_time_order_give_nothing() {
        let names = names_for(
            r#"
[template.backwards]
steps = [
  { treatment = "overlay", window = [5, 6] },
  { treatment = "reseal", window = [0, 5] },
]
"#,
        );
        assert_eq!(names, ["base", "overlay@2032+reseal@2032"]);
    }

    #[test]
    fn the_last_works_year_counts_for_the_gap() {
        let run = demo();
        let e = Enumerator::for_run(&run);
        let mut sec = run.network.sections[0].clone();
        sec.last_works_year = Some(Year(2026));
        let tpl = run
            .templates
            .iter()
            .position(|t| t.name == "strengthen-widen")
            .unwrap();
        let gap = run.templates[tpl].min_gap_years;
        assert!(gap >= 2);
        for s in e
            .strategies(&sec)
            .iter()
            .filter(|s| s.template == Some(tpl))
        {
            assert!(
                2027 + s.works[0].year.0 as i32 - 2026 >= gap as i32,
                "{}",
                s.name
            );
        }
    }

    #[test]
    fn demo_sections_get_base_first_and_unique_names() {
        let run = demo();
        let e = Enumerator::for_run(&run);
        for s in &run.network.sections {
            let st = e.strategies(s);
            assert_eq!(st[0].name, BASE);
            assert!(st.len() > 10, "{}: {}", s.id, st.len());
            let mut names: Vec<&str> = st.iter().map(|x| x.name.as_str()).collect();
            names.sort_unstable();
            names.dedup();
            assert_eq!(names.len(), st.len());
            for x in &st {
                assert!(x
                    .works
                    .iter()
                    .all(|w| w.year.0 < run.scenario.analysis_years));
            }
        }
    }

    #[test]
    fn every_key_rebuilds_its_strategy() {
        // The demo and a synthetic network with other lanes, carriageways and last works.
        let run = demo();
        let e = Enumerator::for_run(&run);
        let text = crate::demo::synth::network_csv(200, 11);
        let mut d = Diagnostics::new();
        let synth = crate::input::network::parse("synth.csv", &text, &mut d).unwrap();
        assert!(!d.has_errors(), "{d}");
        let mut seen = 0;
        for s in run.network.sections.iter().chain(&synth.sections) {
            let all = e.strategies(s);
            let keys: HashSet<StrategyRef> = all.iter().map(|x| x.key).collect();
            assert_eq!(keys.len(), all.len(), "{}: keys are unique", s.id);
            for st in &all {
                assert_eq!(e.strategy(st.key).as_ref(), Some(st), "{}", st.name);
                assert_eq!(e.name(st.key), st.name);
                seen += 1;
            }
        }
        assert!(seen > 5_000, "{seen}");
        assert!(e.strategy(StrategyRef::BASE).is_some_and(|b| b.is_base()));
    }
}
