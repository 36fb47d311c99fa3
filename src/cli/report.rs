//! `pavestrat report`: the decision-maker's HTML report, drawn from a plan's output directory
//! (see [`crate::report`]). `plan --report` writes the same report as part of its run.

use super::Context;
use crate::error::Result;
use crate::report::{render, Files};
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
    let html = render(&Files::Dir(&args.from))?;
    let out = args.out.unwrap_or_else(|| args.from.join("report.html"));
    crate::io::write_atomically(&out, html.as_bytes())?;
    ctx.say(&format!("wrote {}", out.display()));
    Ok(())
}
