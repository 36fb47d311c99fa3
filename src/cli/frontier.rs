//! `pavestrat frontier`: the best objective at several budget levels, from one simulation (see
//! [`pavestrat::analysis::frontier`]). Prints the frontier; with `--out DIR` writes `frontier.csv` there (into
//! a plan's directory, `pavestrat report` then shows it).

use super::plan::{parse_gap, parse_seconds};
use super::{load_scenario, Context, OutArg};
use pavestrat::analysis::frontier::{Lines, DEFAULT_LEVELS};
use pavestrat::diag::did_you_mean;
use pavestrat::error::{Error, Result};
use pavestrat::input::plan::Objective;
use pavestrat::io::{print_stdout, StreamSet};
use pavestrat::plan::Settings;
use pavestrat::select::network::{Method, Options};
use std::path::PathBuf;
use std::time::Duration;

/// Arguments of `frontier`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is used (and said so).
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,

    /// Budget levels: factors on the scenario's limits, comma-separated. The level at which no
    /// scaled line can bind is always added.
    #[arg(long, value_name = "X,Y,…", value_delimiter = ',', value_parser = parse_level)]
    pub levels: Vec<f64>,

    /// Scale only this budget group's lines (or this one line); the others keep their limits.
    #[arg(long, value_name = "NAME")]
    pub line: Option<String>,

    /// What to optimise; overrides the scenario's `[plan]` objective.
    #[arg(long, value_name = "WHAT", value_parser = ["npv", "least-cost"])]
    pub objective: Option<String>,

    /// Stop each level once its plan is proven within this relative gap (fraction or %).
    #[arg(long, value_name = "GAP", default_value = "0.0001", value_parser = parse_gap)]
    pub gap: f64,

    /// Most seconds the selection may take at each level.
    #[arg(long, value_name = "SECONDS", default_value_t = 2.0, value_parser = parse_seconds)]
    pub time_limit: f64,

    #[command(flatten)]
    pub out: OutArg,
}

fn parse_level(s: &str) -> std::result::Result<f64, String> {
    match s.trim().parse::<f64>() {
        Ok(x) if x.is_finite() && (0.0..=1e6).contains(&x) => Ok(x),
        _ => Err(format!(
            "`{s}` is not a budget level; expected a factor from 0 to 1000000, e.g. 0.5,1,1.5"
        )),
    }
}

/// Run `frontier`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    ctx.notes(&diags);
    let lines = match &args.line {
        None => Lines::All,
        Some(name) => {
            let lines = &run.scenario.budget_lines;
            if !lines.iter().any(|l| l.group == *name || l.name == *name) {
                let names = run.scenario.budget_groups();
                let hint = did_you_mean(name, &names)
                    .map(|m| format!(" (did you mean `{m}`?)"))
                    .unwrap_or_default();
                return Err(Error::Usage(format!(
                    "--line: no budget group or line `{name}` in the scenario{hint}; expected one of: {}",
                    names.join(", ")
                )));
            }
            Lines::Only(name.clone())
        }
    };
    let levels: Vec<f64> = if args.levels.is_empty() {
        DEFAULT_LEVELS.to_vec()
    } else {
        args.levels.clone()
    };
    let objective = match args.objective.as_deref() {
        Some(o) => Objective::parse(o).unwrap_or_default(),
        None => run.scenario.plan.objective,
    };
    let options = Options {
        method: Method::Auto,
        gap: args.gap,
        time_limit: Duration::from_secs_f64(args.time_limit),
    };
    let settings = Settings {
        objective,
        budget_scale: 1.0,
        select: options,
    };
    let bar = ctx
        .progress
        .bar("simulate", run.network.sections.len() as u64, "sections");
    let mut c = pavestrat::plan::candidates_with(&run, &settings, &bar)?;
    bar.finish();
    let bar = ctx
        .progress
        .bar("frontier", levels.len() as u64 + 1, "levels");
    let points =
        pavestrat::analysis::frontier::frontier(&run, &mut c, &levels, &lines, &options, &bar)?;
    bar.finish();
    if let Some(dir) = &args.out.out {
        let mut set = StreamSet::create(dir, "frontier", &[pavestrat::schema::analysis::FRONTIER])?;
        let rows = pavestrat::analysis::frontier::rows(&points);
        set.write(0, pavestrat::schema::text(&rows).as_bytes())?;
        for p in set.commit()? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    if args.out.out.is_none() || !ctx.quiet {
        let s = pavestrat::output::terminal::frontier(
            &points,
            &lines,
            &run.scenario.money_label,
            objective,
        );
        print_stdout(&s)?;
    }
    Ok(())
}
