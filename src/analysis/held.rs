//! A plan held fixed for `sensitivity` and `risk`: every section's strategies (enumerated once)
//! and the one the plan chose — read from a plan's `section_plan.csv`, or selected afresh.

use crate::diag::{Diagnostics, Place};
use crate::enumerate::{Enumerator, Strategy};
use crate::error::{Error, Result};
use crate::input::Run;
use crate::plan::Settings;
use crate::schema::plan::SectionPlan;
use crate::schema::Record as _;
use rayon::prelude::*;
use std::collections::HashMap;
use std::path::Path;

/// Each section's strategies (network order) and the plan's choice among them.
#[derive(Debug, Clone)]
pub struct HeldPlan {
    pub strategies: Vec<Vec<Strategy>>,
    pub chosen: Vec<usize>,
    /// The run id of the `plan` whose files it was read from (from the directory's manifest);
    /// `None` when selected afresh or read from a directory without a manifest.
    pub plan_run: Option<String>,
}

impl HeldPlan {
    /// Every section's strategies, enumerated once.
    fn enumerate(run: &Run) -> Vec<Vec<Strategy>> {
        let e = Enumerator::for_run(run);
        run.network
            .sections
            .par_iter()
            .map(|s| e.strategies(s))
            .collect()
    }

    /// Select a plan with these settings (as `plan` does) and hold it.
    pub fn select(run: &Run, settings: &Settings) -> Result<HeldPlan> {
        let c = crate::plan::candidates(run, settings)?;
        let plan = crate::plan::select(run, c, &settings.select)?;
        let c = &plan.candidates;
        let strategies = Self::enumerate(run);
        let chosen = (0..c.sections())
            .map(|g| {
                let key = c.strategy[c.chosen(&plan.outcome.plan, g)];
                strategies[g].iter().position(|s| s.key == key).unwrap_or(0)
            })
            .collect();
        Ok(HeldPlan {
            strategies,
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
        let strategies = Self::enumerate(run);
        let index: HashMap<&str, usize> = run
            .network
            .sections
            .iter()
            .enumerate()
            .map(|(g, s)| (s.id.as_str(), g))
            .collect();
        let mut chosen: Vec<Option<usize>> = vec![None; strategies.len()];
        let mut d = Diagnostics::new();
        for (line, r) in &rows {
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
            match strategies[g].iter().position(|s| s.name == name) {
                Some(k) => chosen[g] = Some(k),
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
            strategies,
            chosen: chosen.into_iter().map(|c| c.unwrap_or(0)).collect(),
            plan_run,
        })
    }
}
