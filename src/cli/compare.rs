//! `pavestrat compare A B`: two plans side by side — last year's programme against this year's,
//! or a plan against the same network under a budget cut ([`pavestrat::analysis::compare`]).
//!
//! Prints the plans' totals, the sections that chose differently (the largest NPV changes
//! first), money by budget group and year, and the budget lines whose price or state moved.
//! With `--out DIR` it writes:
//! - `comparison.csv`: every section of either plan, what each chose, when its first works
//!   fall, its NPV and PV agency cost in both, and how B's choice differs (`change`: none,
//!   timing, treatment, only-a, only-b), then the location and `x_` columns the plans carry;
//! - `comparison_lines.csv`: every budget line's limit, use, state and price in both plans;
//! - `comparison_years.csv`: each year's works, their cost and the network's condition in both;
//! - `comparison.html`: all of it on one page, with charts.

use super::{Context, OutArg};
use pavestrat::analysis::compare::{compare, Side};
use pavestrat::error::Result;
use pavestrat::io::{print_stdout, OutputSet};
use pavestrat::output::comparison;
use pavestrat::schema::compare::{LineChange, SectionChange, YearChange, PAGE};
use pavestrat::schema::Record as _;
use std::path::PathBuf;

/// Arguments of `compare`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Plan A, the one held against: a directory `pavestrat plan --out DIR` wrote (last
    /// year's programme, say).
    #[arg(value_name = "A")]
    pub a: PathBuf,

    /// Plan B, held against A: another such directory (this year's, or the same scenario run
    /// with `--budget-scale 0.8`).
    #[arg(value_name = "B")]
    pub b: PathBuf,

    /// List every section that chose differently on screen, not only the largest NPV changes.
    #[arg(long)]
    pub all: bool,

    #[command(flatten)]
    pub out: OutArg,
}

/// Run `compare`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let a = Side::read(&args.a, "A")?;
    let b = Side::read(&args.b, "B")?;
    let c = compare(a, b);
    if let Some(dir) = &args.out.out {
        let mut set = OutputSet::new();
        set.add(
            SectionChange::FILE.name,
            comparison::sections_text(&c).into_bytes(),
        );
        set.add(
            LineChange::FILE.name,
            comparison::lines_text(&c).into_bytes(),
        );
        set.add(
            YearChange::FILE.name,
            comparison::years_text(&c).into_bytes(),
        );
        set.add(
            PAGE,
            pavestrat::output::report::compare::page(&c).into_bytes(),
        );
        for p in set.commit(dir, "compare")? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&comparison::terminal(&c, args.all))?;
    }
    Ok(())
}
