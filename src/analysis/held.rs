//! A plan held fixed for `sensitivity` and `risk`: the strategy the plan chose for every
//! section, by its key — read from a plan's `section_plan.csv`, or selected afresh. An analysis
//! that weighs every strategy enumerates a section's strategies when it comes to it
//! ([`HeldPlan::every`] for all sections at once).

use crate::diag::{Diagnostics, Place};
use crate::enumerate::{Enumerator, Strategy, StrategyRef};
use crate::error::{Error, Result};
use crate::input::Run;
use crate::plan::Settings;
use crate::schema::plan::SectionPlan;
use crate::schema::Record as _;
use rayon::prelude::*;
use std::collections::HashMap;
use std::path::Path;

/// The plan's choice for each section (network order), by key (14 bytes a section, not the
/// section's every strategy).
#[derive(Debug, Clone)]
pub struct HeldPlan {
    pub chosen: Vec<StrategyRef>,
    /// The run id of the `plan` whose files it was read from (from the directory's manifest);
    /// `None` when selected afresh or read from a directory without a manifest.
    pub plan_run: Option<String>,
}

/// Every section's strategies as [`Enumerator::strategies`] lists them, and the position of the
/// plan's choice among them: for an analysis that goes over every strategy of every section
/// many times.
#[derive(Debug, Clone)]
pub struct Every {
    pub strategies: Vec<Vec<Strategy>>,
    pub chosen: Vec<usize>,
}

/// The position of `key` among a section's `strategies` (the base's, 0, if it is not there).
pub fn position(strategies: &[Strategy], key: StrategyRef) -> usize {
    strategies.iter().position(|s| s.key == key).unwrap_or(0)
}

impl HeldPlan {
    /// Every section's strategies, enumerated, with the plan's choice among them.
    pub fn every(&self, run: &Run) -> Every {
        let e = Enumerator::for_run(run);
        let strategies: Vec<Vec<Strategy>> = run
            .network
            .sections
            .par_iter()
            .map(|s| e.strategies(s))
            .collect();
        let chosen = strategies
            .iter()
            .zip(&self.chosen)
            .map(|(st, &key)| position(st, key))
            .collect();
        Every { strategies, chosen }
    }

    /// Select a plan with these settings (as `plan` does) and hold it.
    pub fn select(run: &Run, settings: &Settings) -> Result<HeldPlan> {
        let c = crate::plan::candidates(run, settings)?;
        let plan = crate::plan::select(run, c, &settings.select)?;
        let c = &plan.candidates;
        let chosen = (0..c.sections())
            .map(|g| c.strategy[c.chosen(&plan.outcome.plan, g)])
            .collect();
        Ok(HeldPlan {
            chosen,
            plan_run: None,
        })
    }

    /// The plan in `dir/section_plan.csv` (written by `plan --out DIR`) for this run: every
    /// section must be there with one of its strategies.
    pub fn read(run: &Run, dir: &Path) -> Result<HeldPlan> {
        // The directory's files must be one complete set (see `io::set`).
        let manifest = crate::io::verify(dir)?;
        let plan_run = manifest
            .as_ref()
            .and_then(|m| m.plan_run().map(str::to_owned));
        let t = SectionPlan::FILE.read(dir)?;
        let rows: Vec<(usize, SectionPlan)> = crate::schema::lines_of(&t)?;
        let e = Enumerator::for_run(run);
        let index: HashMap<&str, usize> = run
            .network
            .sections
            .iter()
            .enumerate()
            .map(|(g, s)| (s.id.as_str(), g))
            .collect();
        // Each row's strategy among its section's (enumerated in parallel, none held).
        let found: Vec<Option<StrategyRef>> = rows
            .par_iter()
            .map(|(_, r)| {
                let g = *index.get(r.section_id.as_str())?;
                e.strategies(&run.network.sections[g])
                    .into_iter()
                    .find(|s| s.name == r.strategy)
                    .map(|s| s.key)
            })
            .collect();
        let mut chosen: Vec<Option<StrategyRef>> = vec![None; run.network.sections.len()];
        let mut d = Diagnostics::new();
        for ((line, r), found) in rows.iter().zip(found) {
            let (id, name) = (r.section_id.as_str(), r.strategy.as_str());
            let place = Place::line(t.label.clone(), *line);
            let Some(&g) = index.get(id) else {
                d.error(
                    place.with_field("section_id"),
                    format!("the section `{id}`, which the scenario's network does not have"),
                    "the plan of this scenario (run `pavestrat plan` on it)",
                );
                continue;
            };
            match found {
                Some(key) => chosen[g] = Some(key),
                None => {
                    d.error(
                        place.with_field("strategy"),
                        format!("the strategy `{name}`, which section `{id}` does not have"),
                        "one of the section's strategies under this scenario's templates",
                    );
                }
            }
        }
        let missing: Vec<&str> = chosen
            .iter()
            .zip(&run.network.sections)
            .filter(|(c, _)| c.is_none())
            .map(|(_, s)| s.id.as_str())
            .take(5)
            .collect();
        if !missing.is_empty() && !d.has_errors() {
            d.error(
                Place::file(t.label.clone()),
                format!("no row for section(s) {}", missing.join(", ")),
                "one row for every section of the scenario's network",
            );
        }
        if d.has_errors() {
            return Err(Error::Input(d));
        }
        Ok(HeldPlan {
            chosen: chosen
                .into_iter()
                .map(|c| c.unwrap_or(StrategyRef::BASE))
                .collect(),
            plan_run,
        })
    }
}
