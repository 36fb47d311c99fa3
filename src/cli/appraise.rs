//! `pavestrat appraise`: simulate every section under every strategy and appraise each strategy
//! against the section's base strategy (routine maintenance only).
//!
//! Prints one line per section (its preferred strategy by the incremental analysis, with NPV,
//! BCR, IRR and FYRR), then the widening timing of sections that can be widened. With `--out DIR`
//! it writes `appraisal.csv` (one row per section × strategy), `incremental.csv` (each section's
//! chain of comparisons), `widening.csv` (NPV and FYRR by widening year) and, when sections are
//! picked with `--section`, `yearly.csv` (each strategy's condition and costs year by year).

use super::{load_scenario, Context, OutArg};
use pavestrat::appraise;
use pavestrat::diag::did_you_mean;
use pavestrat::error::{Error, Result};
use pavestrat::input::Run;
use pavestrat::io::{print_stdout, StreamSet};
use pavestrat::model::network::Section;
use pavestrat::output::appraisal::{
    appraisal_rows, incremental_rows, widening_rows, yearly_rows, Summary,
};
use pavestrat::schema::carried::head_carrying;
use pavestrat::schema::others::appraise::{APPRAISAL, INCREMENTAL, WIDENING, YEARLY};
use std::path::PathBuf;

/// Arguments of `appraise`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is used (and said so).
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,

    /// Appraise only these sections (repeat, or list several); also writes yearly.csv.
    #[arg(long, value_name = "ID", num_args = 1..)]
    pub section: Vec<String>,

    /// Do not look for IRRs (most of the arithmetic of a large appraisal): the irr columns are
    /// left empty with the status `skipped`. Without --out only the preferred strategies' IRRs
    /// are looked for, as only they are printed.
    #[arg(long)]
    pub no_irr: bool,

    #[command(flatten)]
    pub out: OutArg,
}

/// Sections appraised together before their rows are written: bounds memory whatever the
/// network's size, while giving every thread plenty of work.
const CHUNK: usize = 2048;

/// Run `appraise`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    ctx.notes(&diags);
    ctx.defaults_note(&run.scenario.models);
    let picked = pick_sections(&run, &args.section)?;
    let keep = !args.section.is_empty() && args.out.out.is_some();
    let mut files = match &args.out.out {
        Some(dir) => {
            let specs = [APPRAISAL, INCREMENTAL, WIDENING, YEARLY];
            let specs = &specs[..if keep { 4 } else { 3 }];
            let names: Vec<&str> = specs.iter().map(|f| f.name).collect();
            let mut set = StreamSet::create(dir, "appraise", &names)?;
            for (i, spec) in specs.iter().enumerate() {
                set.write(i, head_carrying(*spec, &run.network).as_bytes())?;
            }
            Some(set)
        }
        None => None,
    };
    let scope = if args.no_irr {
        appraise::IrrScope::Skipped
    } else if args.out.out.is_some() {
        appraise::IrrScope::Every
    } else {
        appraise::IrrScope::Preferred
    };
    let mut summary = Summary::default();
    let bar = ctx
        .progress
        .bar("appraise", picked.len() as u64, "sections");
    for chunk in picked.chunks(CHUNK) {
        let results = appraise::network(&run, chunk, keep, scope);
        bar.inc(chunk.len() as u64);
        if let Some(set) = &mut files {
            let net = &run.network;
            set.write(0, appraisal_rows(net, chunk, &results).as_bytes())?;
            set.write(1, incremental_rows(net, chunk, &results).as_bytes())?;
            set.write(2, widening_rows(net, chunk, &results).as_bytes())?;
            if keep {
                set.write(3, yearly_rows(&run, chunk, &results).as_bytes())?;
            }
        }
        summary.add(chunk, &results, &run.scenario.models.condition);
    }
    bar.finish();
    if let Some(set) = files {
        for p in set.commit()? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    // Without --out the summary is the output; with it, the summary is news that --quiet silences.
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&summary.render(&run))?;
    }
    Ok(())
}

fn pick_sections<'r>(run: &'r Run, ids: &[String]) -> Result<Vec<&'r Section>> {
    let all = &run.network.sections;
    if ids.is_empty() {
        return Ok(all.iter().collect());
    }
    let names: Vec<&str> = all.iter().map(|s| s.id.as_str()).collect();
    let mut out = Vec::new();
    for id in ids {
        match all.iter().find(|s| s.id.as_str() == *id) {
            Some(s) => {
                if !out.iter().any(|o: &&Section| o.id == s.id) {
                    out.push(s);
                }
            }
            None => {
                let hint = did_you_mean(id, &names)
                    .map(|m| format!(" (did you mean `{m}`?)"))
                    .unwrap_or_default();
                return Err(Error::Usage(format!(
                    "--section: no section `{id}` in {}{hint}; expected a section_id of the network",
                    run.network.file
                )));
            }
        }
    }
    Ok(out)
}
