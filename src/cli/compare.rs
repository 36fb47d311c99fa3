//! `pavestrat compare A B`: two plans side by side — last year's programme against this year's,
//! or a plan against the same network under a budget cut ([`pavestrat::analysis::compare`]).
//!
//! A and B are each a directory `plan --out DIR` wrote, or a scenario file, planned afresh here
//! as `plan` would (the selection's defaults, `--budget-scale-a`/`-b` on its lines). Prints the
//! plans' totals, the sections that chose differently (the largest NPV changes first), money by
//! budget group and year, and the budget lines whose price or state moved. With `--out DIR` it
//! writes:
//! - `comparison.csv`: every section of either plan, what each chose, when its first works
//!   fall, its NPV and PV agency cost in both, and how B's choice differs (`change`: none,
//!   timing, treatment, only-a, only-b), then the location and `x_` columns the plans carry;
//! - `comparison_lines.csv`: every budget line's limit, use, state and price in both plans;
//! - `comparison_years.csv`: each year's works, their cost and the network's condition in both;
//! - `comparison.html`: all of it on one page, with charts.

use super::plan::{parse_scale, parse_seconds};
use super::{load_scenario, Context, OutArg};
use pavestrat::analysis::compare::{compare, Side};
use pavestrat::error::{Error, Result};
use pavestrat::io::{print_stdout, OutputSet};
use pavestrat::output::comparison;
use pavestrat::plan::Settings;
use pavestrat::schema::compare::{LineChange, SectionChange, YearChange, PAGE};
use pavestrat::schema::Record as _;
use pavestrat::select::network::{Method, Options};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// Arguments of `compare`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Plan A, the one held against: a directory `pavestrat plan --out DIR` wrote (last
    /// year's programme, say), or a scenario file to plan afresh.
    #[arg(value_name = "A")]
    pub a: PathBuf,

    /// Plan B, held against A: another such directory (this year's, or the same scenario run
    /// with `--budget-scale 0.8`), or a scenario file to plan afresh.
    #[arg(value_name = "B")]
    pub b: PathBuf,

    /// When A is a scenario file: multiply its budget lines' limits by this factor.
    #[arg(long, value_name = "X", value_parser = parse_scale)]
    pub budget_scale_a: Option<f64>,

    /// When B is a scenario file: multiply its budget lines' limits by this factor (e.g. 0.8
    /// to see what a 20 % cut changes).
    #[arg(long, value_name = "X", value_parser = parse_scale)]
    pub budget_scale_b: Option<f64>,

    /// Most seconds each selection of a scenario planned afresh may take.
    #[arg(long, value_name = "SECONDS", default_value_t = super::plan::DEFAULT_TIME_LIMIT, value_parser = parse_seconds)]
    pub time_limit: f64,

    /// List every section that chose differently on screen, not only the largest NPV changes.
    #[arg(long)]
    pub all: bool,

    #[command(flatten)]
    pub out: OutArg,
}

/// Run `compare`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let a = side(&args.a, "A", args.budget_scale_a, args.time_limit, ctx)?;
    let b = side(&args.b, "B", args.budget_scale_b, args.time_limit, ctx)?;
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

/// One side: a written plan's directory read back, or a scenario file planned afresh.
fn side(
    path: &Path,
    which: &str,
    scale: Option<f64>,
    time_limit: f64,
    ctx: Context,
) -> Result<Side> {
    if path.is_dir() {
        if scale.is_some() {
            return Err(Error::Usage(format!(
                "--budget-scale-{} applies to a scenario planned afresh, and plan {which} ({}) is a plan already written; expected a scenario file for {which}, or no --budget-scale-{}",
                which.to_lowercase(),
                path.display(),
                which.to_lowercase()
            )));
        }
        return Side::read(path, which);
    }
    if !path.is_file() {
        return Err(Error::Usage(format!(
            "plan {which}: {} does not exist; expected a directory `pavestrat plan --out DIR` wrote, or a scenario file to plan",
            path.display()
        )));
    }
    let started = Instant::now();
    let (run, diags) = load_scenario(Some(path), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    ctx.notes(&diags);
    let budget_scale = scale.unwrap_or(1.0);
    let settings = Settings {
        objective: run.scenario.plan.objective,
        budget_scale,
        select: Options {
            method: Method::from_name("auto"),
            gap: super::plan::DEFAULT_GAP,
            time_limit: Duration::from_secs_f64(time_limit),
        },
    };
    // A failure says which side it is of.
    let made =
        super::plan::simulate_and_select(&run, &settings, ctx, &format!(" {which}"), started)
            .map_err(|e| match e {
                Error::Infeasible(m) => Error::Infeasible(m.prefixed(&format!(
                    "plan {which} ({} planned afresh): ",
                    path.display()
                ))),
                Error::Usage(m) => Error::Usage(format!(
                    "plan {which} ({} planned afresh): {m}",
                    path.display()
                )),
                other => other,
            })?;
    let facts = pavestrat::output::files::Facts {
        seconds: started.elapsed().as_secs_f64(),
        candidate_seconds: made.candidate_seconds,
        selection_seconds: made.selection_seconds,
        budget_scale,
        requested_gap: settings.select.gap,
        time_limit,
        every_widening_year: false,
    };
    let plan = made.plan;
    Ok(comparison::side_of(&run, &plan, &facts, path))
}
