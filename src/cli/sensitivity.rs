//! `pavestrat sensitivity`: how wrong the inputs can be before the decision changes — the usual
//! tests and switching values for the network plan and each section's chosen strategy (see
//! [`pavestrat::analysis::sensitivity`]). Prints the network plan's results; `--out DIR` writes
//! `sensitivity.csv` (into a plan's directory, `pavestrat report` then draws the tornado chart).

use super::plan::parse_seconds;
use super::{load_scenario, parse_rate, Context, OutArg};
use pavestrat::analysis::held::HeldPlan;
use pavestrat::analysis::sensitivity::{analyse, text as sensitivity_text, Tests};
use pavestrat::error::{Error, Result};
use pavestrat::io::{print_stdout, StreamSet};
use pavestrat::plan::Settings;
use pavestrat::select::network::{Method, Options};
use std::path::PathBuf;
use std::time::Duration;

/// Arguments of `sensitivity`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is used (and said so).
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,

    /// Hold the plan written by `pavestrat plan --out DIR` (its section_plan.csv); without it the
    /// plan is selected afresh, as `plan` would.
    #[arg(long, value_name = "DIR")]
    pub from: Option<PathBuf>,

    /// Capital costs tested this much lower and higher (fraction or %).
    #[arg(long, value_name = "X", default_value = "0.2", value_parser = parse_change)]
    pub cost_change: f64,

    /// Road-user unit values tested this much lower and higher (fraction or %).
    #[arg(long, value_name = "X", default_value = "0.2", value_parser = parse_change)]
    pub value_change: f64,

    /// Traffic growth tested this many points lower and higher (0.01 = one point).
    #[arg(long, value_name = "X", default_value = "0.01", value_parser = parse_change)]
    pub growth_change: f64,

    /// The two other discount rates (default: two points either side of the scenario's).
    #[arg(long, value_name = "R1,R2", value_parser = parse_rates, allow_hyphen_values = true)]
    pub rates: Option<[f64; 2]>,

    /// Most seconds the plan's selection may take (when there is no --from).
    #[arg(long, value_name = "SECONDS", default_value_t = 10.0, value_parser = parse_seconds)]
    pub time_limit: f64,

    #[command(flatten)]
    pub out: OutArg,
}

/// Two discount rates, `R1,R2` (each a fraction or a percentage).
fn parse_rates(s: &str) -> std::result::Result<[f64; 2], String> {
    match s.split(',').collect::<Vec<_>>()[..] {
        [a, b] => Ok([parse_rate(a.trim())?, parse_rate(b.trim())?]),
        _ => Err(format!(
            "`{s}` is not two rates; expected two rates separated by a comma, e.g. 3%,10% or \
             0.03,0.10"
        )),
    }
}

fn parse_change(s: &str) -> std::result::Result<f64, String> {
    let x = parse_rate(s)?;
    if !(0.0..1.0).contains(&x) {
        return Err(format!(
            "`{s}` is not a usable change; expected a fraction from 0 to below 1, e.g. 0.2"
        ));
    }
    Ok(x)
}

/// The plan held fixed: read from `--from`, or selected afresh.
pub(super) fn held(
    run: &pavestrat::input::Run,
    from: Option<&std::path::Path>,
    time_limit: f64,
    ctx: Context,
) -> Result<HeldPlan> {
    match from {
        Some(dir) => HeldPlan::read(run, dir),
        None => {
            ctx.say("note: no --from given; selecting the plan as `pavestrat plan` would");
            let settings = Settings {
                objective: run.scenario.plan.objective,
                budget_scale: 1.0,
                select: Options {
                    method: Method::Auto,
                    gap: 1e-4,
                    time_limit: Duration::from_secs_f64(time_limit),
                },
            };
            HeldPlan::select(run, &settings)
        }
    }
}

/// Run `sensitivity`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    ctx.notes(&diags);
    let held = held(&run, args.from.as_deref(), args.time_limit, ctx)?;
    let mut tests = Tests::usual(run.scenario.discounting.rate());
    tests.cost = args.cost_change;
    tests.values = args.value_change;
    tests.growth = args.growth_change;
    if let Some([a, b]) = args.rates {
        tests.rates = [a.min(b), a.max(b)];
    }
    let bar = ctx
        .progress
        .bar("sensitivity", run.network.sections.len() as u64, "sections");
    let rows = analyse(&run, &held, &tests, &bar);
    bar.finish();
    if let Some(dir) = &args.out.out {
        let mut set = StreamSet::create(
            dir,
            "sensitivity",
            &[pavestrat::schema::analysis::SENSITIVITY],
        )?;
        set.made_for(held.plan_run.clone());
        set.write(0, sensitivity_text(&run, &rows).as_bytes())?;
        for p in set.commit()? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&pavestrat::output::terminal::sensitivity(&run, &rows))?;
    }
    Ok(())
}
