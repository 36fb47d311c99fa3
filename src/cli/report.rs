//! `pavestrat report`: the decision-maker's HTML report, drawn from a plan's output directory
//! (see [`pavestrat::output::report`]). `plan --report` writes the same report as part of its run.

use super::Context;
use pavestrat::error::Result;
use pavestrat::output::report::{render, Inputs};
use std::path::PathBuf;

/// Arguments of `report`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The directory `pavestrat plan --out DIR` wrote (frontier.csv, sensitivity.csv and
    /// risk.csv there are shown too).
    #[arg(long, value_name = "DIR", default_value = ".")]
    pub from: PathBuf,

    /// Where to write the report (default: report.html in the --from directory).
    #[arg(long, value_name = "FILE.html")]
    pub out: Option<PathBuf>,
}

/// Run `report`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    // One plan's files, and analyses made for that plan, or a refusal that says which file
    // and what to re-run.
    let manifest = pavestrat::io::verify(&args.from)?;
    if let Some(m) = &manifest {
        pavestrat::io::check_plan_set(&args.from, m, &pavestrat::output::report::FILES_READ)?;
    }
    let html = render(&Inputs::read(&args.from)?)?;
    match args.out {
        Some(out) => {
            pavestrat::io::write_atomically(&out, html.as_bytes())?;
            ctx.say(&format!("wrote {}", out.display()));
        }
        None => {
            // Into the plan's directory, as part of its manifest.
            let mut set = pavestrat::io::OutputSet::new();
            set.add("report.html", html.into_bytes());
            set.made_for(
                manifest
                    .as_ref()
                    .and_then(|m| m.plan_run().map(str::to_owned)),
            );
            for p in set.commit(&args.from, "report")? {
                ctx.say(&format!("wrote {}", p.display()));
            }
        }
    }
    Ok(())
}
