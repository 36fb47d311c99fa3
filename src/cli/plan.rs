//! `pavestrat plan`: choose every section's strategy so that the network's total NPV (or least
//! PV agency cost, within condition targets) is best within the scenario's budget lines.
//!
//! Prints the plan's value against the unconstrained choice and the base, spending against every
//! line with its budget price, and the certificate (value, bound, gap, status). With `--out DIR`
//! it writes:
//! - `work_programme.csv`: `year,section_id,treatment,cost,region,category` — every treatment
//!   of the plan, by year;
//! - `programme.csv`: each section's works money by year with the treatment beside it, and
//!   totals by budget group, region, category and treatment, with quantities and unit rates;
//! - `section_plan.csv`: each section's strategy, NPV and PV agency cost, and what it would get
//!   with no limits;
//! - `budget_use.csv`: `line,year,limit,used,price,category,region,slack` — one row per budget
//!   line; `price` is the budget price, value per unit of money in that line;
//! - `target_use.csv`: one row per condition-target line, with the length it counts (the row
//!   is Σ use ≤ at_most × length_km);
//! - `condition.csv`: `year,case,mean_iri,good_share,fair_share,poor_share` — the network's
//!   length-weighted condition each year under the plan, the base and the unconstrained choice;
//! - `widening_plan.csv`: for sections that can be widened, the best strategy widening in the
//!   years that the plan and the two timing rules (first year of an FYRR at the discount rate,
//!   best NPV) pick — in every possible year with `--every-widening-year` or `--report` (whose
//!   charts draw them) — with its NPV and the widening's FYRR, and which of the three picks it;
//! - `summary.json`: the certificate, the run's facts and the scenario's key assumptions;
//! - `limits.csv`: `row,limit` for every `cost:`/`use:` column of `candidates.csv`, so that
//!   `pavestrat select candidates.csv --limits limits.csv` re-solves the same selection (with
//!   `--minimise pv_agency_cost` for a least-cost plan).
//!
//! `--candidates` adds `candidates.csv`: every candidate left after dominated ones are removed —
//! `section_id,strategy,npv,pv_agency_cost`, then `cost:<line>` per budget line and `use:<line>`
//! per target line (length-weighted), enough to re-solve the selection elsewhere and what
//! `explain` reads. It is the largest file by far (about 3 KB a section), so it is written only
//! when asked. `--report` adds `frontier.csv` (see `pavestrat frontier`) and `report.html` (see
//! `pavestrat report`); `--xlsx FILE` writes a workbook beside them.

use super::{load_scenario, parse_rate, Context, OutArg};
use pavestrat::error::{Error, Result};
use pavestrat::input::plan::Objective;
use pavestrat::input::Run;
use pavestrat::io::{print_stdout, StreamSet};
use pavestrat::output::files::{Facts, Keep};
use pavestrat::plan::Settings;
use pavestrat::schema;
use pavestrat::schema::analysis::FRONTIER;
use pavestrat::schema::plan::{CANDIDATES, FILES};
use pavestrat::select::network::{Method, Options};
use std::path::PathBuf;
use std::time::{Duration, Instant};

/// The report's file name in the plan's directory.
const REPORT: &str = "report.html";

/// Arguments of `plan`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is used (and said so).
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,

    /// Multiply every budget line's limit by this factor (e.g. 0.8 for a 20 % cut).
    #[arg(long, value_name = "X", default_value_t = 1.0, value_parser = parse_scale)]
    pub budget_scale: f64,

    /// What to optimise; overrides the scenario's `[plan]` objective.
    #[arg(long, value_name = "WHAT", value_parser = ["npv", "least-cost"])]
    pub objective: Option<String>,

    /// Solution path: exact (a branch and bound that proves the plan optimal, or narrows the gap
    /// until the time limit), decomposed (budget prices, then the contested sections exactly),
    /// or auto (exact up to 10,000 candidates, decomposed above).
    #[arg(long, value_name = "HOW", default_value = "auto", value_parser = ["auto", "exact", "decomposed"])]
    pub method: String,

    /// Stop once the plan is proven within this relative gap of the bound (fraction or %). The
    /// exact path first spends up to a second seeking a complete proof.
    #[arg(long, value_name = "GAP", default_value_t = DEFAULT_GAP, value_parser = parse_gap)]
    pub gap: f64,

    /// Most seconds the selection may take (the simulation before it is not counted).
    #[arg(long, value_name = "SECONDS", default_value_t = DEFAULT_TIME_LIMIT, value_parser = parse_seconds)]
    pub time_limit: f64,

    /// Also write report.html (and the budget frontier it shows, frontier.csv) into --out DIR.
    #[arg(long, requires = "out")]
    pub report: bool,

    /// Write every possible widening year of each section into widening_plan.csv, not only the
    /// years the plan and the two timing rules pick (about 670 bytes a section that can be
    /// widened; `--report` implies it, its charts draw them).
    #[arg(long, requires = "out")]
    pub every_widening_year: bool,

    /// Also write candidates.csv into --out DIR: every candidate of every section with its use
    /// of every line (what `explain` and `select` read; about 3 KB a section).
    #[arg(long, requires = "out")]
    pub candidates: bool,

    /// List every works of the programme on screen, not only each year's totals and largest
    /// works (the files of --out hold them all in any case).
    #[arg(long)]
    pub full: bool,

    /// Also write the work programme, section plan, budget use and appraisal into one
    /// spreadsheet workbook (.xlsx) at FILE.
    #[arg(long, value_name = "FILE")]
    pub xlsx: Option<PathBuf>,

    #[command(flatten)]
    pub out: OutArg,
}

/// The relative gap a plan is proven within unless `--gap` says otherwise.
pub(super) const DEFAULT_GAP: f64 = 0.0001;
/// The selection's seconds unless `--time-limit` says otherwise.
pub(super) const DEFAULT_TIME_LIMIT: f64 = 10.0;

/// Seconds each frontier level may take when `--report` computes the frontier.
const REPORT_FRONTIER_SECONDS: f64 = 2.0;

pub(super) fn parse_scale(s: &str) -> std::result::Result<f64, String> {
    match s.trim().parse::<f64>() {
        Ok(x) if (0.0..=1e6).contains(&x) => Ok(x),
        _ => Err(format!(
            "`{s}` is not a budget factor; expected a number from 0 to 1000000, e.g. 0.8"
        )),
    }
}

pub(super) fn parse_gap(s: &str) -> std::result::Result<f64, String> {
    let g = parse_rate(s)?;
    if !(0.0..1.0).contains(&g) {
        return Err(format!(
            "`{s}` is not a usable gap; expected a fraction from 0 to below 1, e.g. 0.0001 or 0.01%"
        ));
    }
    Ok(g)
}

pub(super) fn parse_seconds(s: &str) -> std::result::Result<f64, String> {
    match s.trim().parse::<f64>() {
        Ok(x) if x.is_finite() && x > 0.0 && x <= 1e6 => Ok(x),
        _ => Err(format!(
            "`{s}` is not a time limit; expected seconds above 0, e.g. 60"
        )),
    }
}

/// Run `plan`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let started = Instant::now();
    let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    ctx.notes(&diags);
    ctx.defaults_note(&run.scenario.models);
    let objective = match args.objective.as_deref() {
        Some(o) => Objective::parse(o).unwrap_or_default(),
        None => run.scenario.plan.objective,
    };
    let method = Method::from_name(&args.method);
    let settings = Settings {
        objective,
        budget_scale: args.budget_scale,
        select: Options {
            method,
            gap: args.gap,
            time_limit: Duration::from_secs_f64(args.time_limit),
        },
    };
    if args.xlsx.is_some() {
        pavestrat::output::xlsx::available()?;
    }
    let made = simulate_and_select(&run, &settings, ctx, "", started)?;
    let plan = made.plan;
    let facts = Facts {
        seconds: started.elapsed().as_secs_f64(),
        candidate_seconds: made.candidate_seconds,
        selection_seconds: made.selection_seconds,
        budget_scale: args.budget_scale,
        requested_gap: args.gap,
        time_limit: args.time_limit,
        every_widening_year: args.every_widening_year || args.report,
    };
    if let Some(dir) = &args.out.out {
        let mut names: Vec<&str> = FILES.to_vec();
        if args.candidates {
            names.push(CANDIDATES);
        }
        if run.network.geometry_column {
            use pavestrat::output::geojson;
            names.extend([geojson::WORK_PROGRAMME, geojson::SECTION_PLAN]);
        }
        if args.report {
            names.extend([FRONTIER, REPORT]);
        }
        let mut set = StreamSet::create(dir, "plan", &names)?;
        let keep = Keep {
            report: args.report,
            candidates: args.candidates,
            every_widening_year: facts.every_widening_year,
        };
        let mut inputs = pavestrat::output::files::write(&run, &plan, &facts, &mut set, keep)?;
        if args.report {
            let mut c = plan.candidates.clone();
            let levels = pavestrat::analysis::frontier::DEFAULT_LEVELS;
            let bar = ctx
                .progress
                .bar("frontier", levels.len() as u64 + 1, "levels");
            let options = Options {
                time_limit: Duration::from_secs_f64(args.time_limit.min(REPORT_FRONTIER_SECONDS)),
                ..settings.select
            };
            let points = pavestrat::analysis::frontier::frontier(
                &run,
                &mut c,
                &levels,
                &pavestrat::analysis::frontier::Lines::All,
                &options,
                &bar,
            )?;
            bar.finish();
            let levels = pavestrat::analysis::frontier::rows(&points);
            set.write_to(FRONTIER, schema::text(&levels).as_bytes())?;
            inputs.frontier = Some(levels);
            let html = pavestrat::output::report::render(&inputs)?;
            set.write_to(REPORT, html.as_bytes())?;
        }
        // The workbook is part of the same all-or-nothing set: staged beside its target and
        // moved into place with the directory's files.
        if let Some(file) = &args.xlsx {
            set.extra(file, &workbook(&run, &plan)?)?;
        }
        for p in set.commit()? {
            ctx.say(&format!("wrote {}", p.display()));
        }
        if let Some(file) = &args.xlsx {
            ctx.say(&format!("wrote {}", file.display()));
        }
    } else if let Some(file) = &args.xlsx {
        pavestrat::io::write_atomically(file, &workbook(&run, &plan)?)?;
        ctx.say(&format!("wrote {}", file.display()));
    }
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&pavestrat::output::terminal::plan(
            &run, &plan, &facts, args.full,
        ))?;
    }
    Ok(())
}

/// A plan made by [`simulate_and_select`], with the seconds its stages took.
pub(super) struct Made {
    pub plan: pavestrat::plan::Plan,
    /// From `started` to the end of the simulation.
    pub candidate_seconds: f64,
    pub selection_seconds: f64,
}

/// Simulate every section of `run` and select its plan under `settings`, as `plan` does: refused
/// up front when the network would need more memory than the machine can give (said when it
/// will take long), with progress bars `simulate{which}` and `select{which}`. `started` is when
/// the run began (its loading counts towards the simulation's seconds).
pub(super) fn simulate_and_select(
    run: &Run,
    settings: &Settings,
    ctx: Context,
    which: &str,
    started: Instant,
) -> Result<Made> {
    let (strategies, secs, bytes) = pavestrat::plan::estimate(run);
    let allowed = pavestrat::resources::memory_allowance(f64::INFINITY);
    if bytes > allowed {
        let n = run.network.sections.len() as f64;
        return Err(Error::Usage(format!(
            "this network ({} sections, about {:.0} strategies) would need about {} to plan, more than this machine can give ({}); expected at most about {:.0} sections here: split the network (by region, say) and plan the parts with their share of each budget",
            run.network.sections.len(),
            strategies,
            pavestrat::resources::bytes(bytes),
            pavestrat::resources::bytes(allowed),
            (n * allowed / bytes).floor()
        )));
    }
    if secs > pavestrat::resources::ANNOUNCE_SECONDS || bytes > pavestrat::resources::ANNOUNCE_BYTES
    {
        ctx.say(&format!(
            "note: about {strategies:.0} strategies to simulate: about {} and {} (estimated from the measured simulation speed), then the selection",
            pavestrat::resources::duration(secs),
            pavestrat::resources::bytes(bytes)
        ));
    }
    let bar = ctx.progress.bar(
        &format!("simulate{which}"),
        run.network.sections.len() as u64,
        "sections",
    );
    let candidates = pavestrat::plan::candidates_with(run, settings, &bar)?;
    bar.finish();
    let built = started.elapsed();
    let selecting = Instant::now();
    let clock = ctx.progress.clock(
        &format!("select{which}"),
        settings.select.time_limit.as_secs_f64(),
    );
    let plan = crate::cli::bars::ticking(&clock, || {
        pavestrat::plan::select(run, candidates, &settings.select)
    })?;
    Ok(Made {
        plan,
        candidate_seconds: built.as_secs_f64(),
        selection_seconds: selecting.elapsed().as_secs_f64(),
    })
}

/// The workbook of `--xlsx`: the plan and every section's appraisal.
fn workbook(run: &Run, plan: &pavestrat::plan::Plan) -> Result<Vec<u8>> {
    let appraisal = {
        let secs: Vec<_> = run.network.sections.iter().collect();
        // The sheet shows each strategy's own IRR, not the incremental steps'.
        pavestrat::appraise::network(run, &secs, false, pavestrat::appraise::IrrScope::Own)
    };
    pavestrat::output::xlsx::plan_bytes(run, plan, &appraisal)
}
