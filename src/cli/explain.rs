//! `pavestrat explain SECTION`: why a section got its strategy in a plan, read back from the
//! plan's output directory ([`pavestrat::analysis::explain`]).

use super::Context;
use pavestrat::error::Result;
use pavestrat::io::print_stdout;
use std::path::PathBuf;

/// Arguments of `explain`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The section_id to explain.
    #[arg(value_name = "SECTION")]
    pub section: String,

    /// The directory `pavestrat plan --out DIR` wrote.
    #[arg(long, value_name = "DIR", default_value = ".")]
    pub from: PathBuf,
}

/// Run `explain`.
pub fn run(args: Args, _ctx: Context) -> Result<()> {
    let e = pavestrat::analysis::explain::read(&args.from, &args.section)?;
    print_stdout(&pavestrat::output::terminal::explain(&e))
}
