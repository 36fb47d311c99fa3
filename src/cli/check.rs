//! `pavestrat check`: validate a scenario and every file it names, and list every problem.
//!
//! Nothing is simulated. Problems go to stderr, each with file, line, field, what was found and
//! what was expected; exit 2 when there is any error. A clean run prints a short summary of what
//! was read, so a user can see the tool read their files as they meant.

use super::{load_scenario, Context};
use pavestrat::error::{Error, Result};
use std::path::PathBuf;

/// Arguments of `check`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is checked.
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,
}

/// Run `check`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    // What `plan` would refuse beyond the readers: commitments no strategy can keep (only the
    // committed sections are simulated), and lines whose totals could pass the supported range.
    let mut diags = diags;
    pavestrat::plan::commitment_problems(&run, &mut diags);
    pavestrat::plan::spending_bound_problems(&run, &mut diags);
    if diags.has_errors() {
        return Err(Error::Input(diags));
    }
    ctx.notes(&diags);
    ctx.defaults_note(&run.scenario.models);
    let out = pavestrat::output::terminal::check(&run, diags.note_count());
    if !ctx.quiet {
        pavestrat::io::print_stdout(&out)?;
    }
    Ok(())
}
