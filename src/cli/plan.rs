//! `pavestrat plan`: choose every section's strategy so that the network's total NPV (or least
//! PV agency cost, within condition targets) is best within the scenario's budget lines.
//!
//! Prints the plan's value against the unconstrained choice and the base, spending against every
//! line with its budget price, and the certificate (value, bound, gap, status). With `--out DIR`
//! it writes:
//! - `work_programme.csv`: `year,section_id,treatment,cost,region,category` — every treatment
//!   of the plan, by year;
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
use pavestrat::enumerate::Enumerator;
use pavestrat::error::{Error, Result};
use pavestrat::input::plan::Objective;
use pavestrat::input::scenario::Category;
use pavestrat::input::Run;
use pavestrat::io::{print_stdout, StreamSet};
use pavestrat::money::grouped;
use pavestrat::output::format::{Amount, Field};
use pavestrat::plan::{Candidates, Plan, PlannedWork, RowKind, Settings};
use pavestrat::select::network::{Method, Options};
use rayon::prelude::*;
use std::fmt::Write as _;
use std::path::PathBuf;
use std::time::{Duration, Instant};

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
    #[arg(long, value_name = "GAP", default_value = "0.0001", value_parser = parse_gap)]
    pub gap: f64,

    /// Most seconds the selection may take (the simulation before it is not counted).
    #[arg(long, value_name = "SECONDS", default_value_t = 10.0, value_parser = parse_seconds)]
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

    /// Also write the work programme, section plan, budget use and appraisal into one
    /// spreadsheet workbook (.xlsx) at FILE.
    #[arg(long, value_name = "FILE")]
    pub xlsx: Option<PathBuf>,

    #[command(flatten)]
    pub out: OutArg,
}

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

/// The output files every `plan --out` writes.
pub const FILES: [&str; 8] = [
    "work_programme.csv",
    "section_plan.csv",
    "budget_use.csv",
    "target_use.csv",
    "summary.json",
    "condition.csv",
    "widening_plan.csv",
    "limits.csv",
];

/// Every candidate with its uses, written with `--candidates`.
pub const CANDIDATES: &str = "candidates.csv";

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
    let (strategies, secs, bytes) = pavestrat::plan::estimate(&run);
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
    let bar = ctx
        .progress
        .bar("simulate", run.network.sections.len() as u64, "sections");
    let candidates = pavestrat::plan::candidates_with(&run, &settings, &bar)?;
    bar.finish();
    let built = started.elapsed();
    let selecting = Instant::now();
    let clock = ctx.progress.clock("select", args.time_limit);
    let plan = crate::cli::bars::ticking(&clock, || {
        pavestrat::plan::select(&run, candidates, &settings.select)
    })?;
    let selection_seconds = selecting.elapsed().as_secs_f64();
    let facts = Facts {
        seconds: started.elapsed().as_secs_f64(),
        candidate_seconds: built.as_secs_f64(),
        selection_seconds,
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
        if args.report {
            names.extend(["frontier.csv", "report.html"]);
        }
        let mut set = StreamSet::create(dir, "plan", &names)?;
        let written = Written {
            programme: args.report,
            candidates: args.candidates,
            every_widening_year: facts.every_widening_year,
        };
        let mut small = write_files(&run, &plan, &facts, &mut set, written)?;
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
            let text = pavestrat::analysis::frontier::csv(&points);
            set.write_to("frontier.csv", text.as_bytes())?;
            small.insert("frontier.csv".into(), text);
            let html = pavestrat::output::report::render(
                &pavestrat::output::report::Files::Memory(&small),
            )?;
            set.write_to("report.html", html.as_bytes())?;
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
        print_stdout(&render(&run, &plan, &facts))?;
    }
    Ok(())
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

/// Facts about a run besides the plan.
#[derive(Debug, Clone, Copy)]
pub struct Facts {
    pub seconds: f64,
    pub candidate_seconds: f64,
    pub selection_seconds: f64,
    pub budget_scale: f64,
    pub requested_gap: f64,
    pub time_limit: f64,
    /// widening_plan.csv holds every widening year, not only the picked ones.
    pub every_widening_year: bool,
}

/// NPV against the base and PV agency cost of one way to treat the whole network.
#[derive(Debug, Clone, Copy, Default)]
pub struct Total {
    pub npv: f64,
    pub pv_agency: f64,
}

/// Totals of a plan for reporting: the plan, every section at its best with no limits, and the
/// base (whose NPV against itself is 0).
pub struct Totals {
    pub plan: Total,
    pub unconstrained: Total,
    pub base: Total,
}

pub fn totals(c: &Candidates, plan: &[u16]) -> Totals {
    let mut t = Totals {
        plan: Total::default(),
        unconstrained: Total::default(),
        base: Total::default(),
    };
    for g in 0..c.sections() {
        let k = c.chosen(plan, g);
        t.plan.npv += c.npv[k];
        t.plan.pv_agency += c.pv_agency[k];
        t.unconstrained.npv += c.unconstrained[g].npv;
        t.unconstrained.pv_agency += c.unconstrained[g].pv_agency;
        t.base.pv_agency += c.base_pv_agency[g];
    }
    t
}

/// The files a report is drawn from, by name (the work programme only when kept).
pub type Small = std::collections::BTreeMap<String, String>;

/// What [`write_files`] writes besides [`FILES`].
#[derive(Debug, Clone, Copy)]
struct Written {
    /// Keep the work programme's text for the report.
    programme: bool,
    /// Write candidates.csv.
    candidates: bool,
    /// Write every widening year, not only the picked ones.
    every_widening_year: bool,
}

fn write_files(
    run: &Run,
    p: &Plan,
    facts: &Facts,
    set: &mut StreamSet,
    written: Written,
) -> Result<Small> {
    let keep_programme = written.programme;
    let mut small = Small::new();
    let mut programme = String::new();
    let c = &p.candidates;
    let s = &run.scenario;
    let secs = &run.network.sections;
    let e = Enumerator::for_run(run);
    let plan = &p.outcome.plan;
    // Work programme: the works the exact re-check simulated, by year.
    let mut text = String::from("year,section_id,treatment,cost,region,category\n");
    for &PlannedWork {
        year: y,
        section: g,
        treatment: k,
        cost,
    } in &p.works
    {
        let t = &run.catalogue.treatments[k];
        let _ = writeln!(
            text,
            "{},{},{},{},{},{}",
            s.base_year + y as i32,
            Field(secs[g].id.as_str()),
            Field(&t.id),
            Amount(cost),
            Field(secs[g].region.as_deref().unwrap_or("")),
            t.category.name()
        );
        if text.len() > 1 << 20 {
            set.write_to("work_programme.csv", text.as_bytes())?;
            if keep_programme {
                programme.push_str(&text);
            }
            text.clear();
        }
    }
    set.write_to("work_programme.csv", text.as_bytes())?;
    // The whole programme is kept only for the report (it can be large).
    if keep_programme {
        programme.push_str(&text);
        small.insert("work_programme.csv".into(), programme);
    }

    // Section plan and candidates, chunk by chunk (names rebuilt from the strategies' keys).
    set.write_to(
        "section_plan.csv",
        b"section_id,region,strategy,npv,pv_agency_cost,unconstrained_strategy,unconstrained_npv,same\n",
    )?;
    let mut head = String::from("section_id,strategy,npv,pv_agency_cost");
    for row in &c.rows {
        match row.kind {
            RowKind::Budget(_) => {
                let _ = write!(head, ",{}", Field(&format!("cost:{}", row.name)));
            }
            RowKind::Target(_) => {
                let _ = write!(head, ",{}", Field(&format!("use:{}", row.name)));
            }
        }
    }
    head.push('\n');
    if written.candidates {
        set.write_to(CANDIDATES, head.as_bytes())?;
    }
    const CHUNK: usize = 4096;
    for (ci, chunk) in secs.chunks(CHUNK).enumerate() {
        let texts: Vec<(String, String)> = chunk
            .par_iter()
            .enumerate()
            .map(|(i, sec)| {
                let g = ci * CHUNK + i;
                let k = c.chosen(plan, g);
                let (u, unpv) = (c.unconstrained[g].strategy, c.unconstrained[g].npv);
                let chosen_name = &e.name(c.strategy[k]);
                let un_name = &e.name(u);
                let sp = format!(
                    "{},{},{},{},{},{},{},{}\n",
                    Field(sec.id.as_str()),
                    Field(sec.region.as_deref().unwrap_or("")),
                    Field(chosen_name),
                    Amount(c.npv[k]),
                    Amount(c.pv_agency[k]),
                    Field(un_name),
                    Amount(unpv),
                    c.strategy[k] == u
                );
                let mut cs = String::new();
                if !written.candidates {
                    return (sp, cs);
                }
                let mut dense = vec![0i64; c.rows.len()];
                for cand in c.problem.candidates(g) {
                    dense.iter_mut().for_each(|x| *x = 0);
                    let (rs, vs) = c.problem.uses(cand);
                    for (&j, &x) in rs.iter().zip(vs) {
                        dense[j as usize] = x;
                    }
                    let _ = write!(
                        cs,
                        "{},{},{},{}",
                        Field(sec.id.as_str()),
                        Field(&e.name(c.strategy[cand])),
                        Amount(c.npv[cand]),
                        Amount(c.pv_agency[cand])
                    );
                    for (j, x) in dense.iter().enumerate() {
                        // The selection's own integers, written exactly: cents as money,
                        // millionths as the target's measure.
                        match (c.rows[j].kind.clone(), *x == 0) {
                            (_, true) => cs.push_str(",0"),
                            (RowKind::Budget(_), false) => {
                                let _ = write!(cs, ",{}", rust_decimal::Decimal::new(*x, 2));
                            }
                            (RowKind::Target(_), false) => {
                                let _ = write!(cs, ",{}", rust_decimal::Decimal::new(*x, 6));
                            }
                        }
                    }
                    cs.push('\n');
                }
                (sp, cs)
            })
            .collect();
        let (mut a, mut b) = (String::new(), String::new());
        for (x, y) in texts {
            a.push_str(&x);
            b.push_str(&y);
        }
        set.write_to("section_plan.csv", a.as_bytes())?;
        if written.candidates {
            set.write_to(CANDIDATES, b.as_bytes())?;
        }
    }

    // Budget and target use.
    let o = &p.outcome;
    let mut bu = String::from("line,year,limit,used,price,category,region,slack,group\n");
    let mut tu = String::from("line,year,measure,at_most,achieved,price,region,length_km\n");
    for (j, row) in c.rows.iter().enumerate() {
        match row.kind {
            RowKind::Budget(b) => {
                let line = &s.budget_lines[b];
                let limit = row.money.unwrap_or_default();
                let used = p.spent[b];
                let _ = writeln!(
                    bu,
                    "{},{},{},{},{},{},{},{},{}",
                    Field(&row.name),
                    line.year,
                    limit.0.round_dp(2),
                    used.0.round_dp(2),
                    price_text(o.prices[j]),
                    line.category.name(),
                    Field(line.region.as_deref().unwrap_or("")),
                    (limit.0 - used.0).round_dp(2),
                    Field(&line.group)
                );
            }
            RowKind::Target(k) => {
                let t = &s.plan.targets[k];
                let ti = c.rows[..j]
                    .iter()
                    .filter(|r| matches!(r.kind, RowKind::Target(_)))
                    .count();
                let length = pavestrat::plan::target_length(run, t);
                let _ = writeln!(
                    tu,
                    "{},{},{},{},{:.6},{},{},{}",
                    Field(&row.name),
                    t.year,
                    t.measure.name(),
                    t.at_most,
                    p.achieved[ti],
                    price_text(o.prices[j]),
                    Field(t.region.as_deref().unwrap_or("")),
                    length
                );
            }
        }
    }
    set.write_to("budget_use.csv", bu.as_bytes())?;
    set.write_to("target_use.csv", tu.as_bytes())?;
    let summary = summary_json(run, p, facts, set.run_id());
    set.write_to("summary.json", summary.as_bytes())?;
    let condition = condition_csv(&pavestrat::plan::condition_series(run, c, plan));
    set.write_to("condition.csv", condition.as_bytes())?;
    // The widening table, chunk by chunk (it is kept whole only for the report).
    let mut widening = String::from(WIDENING_HEAD);
    set.write_to("widening_plan.csv", WIDENING_HEAD.as_bytes())?;
    for from in (0..secs.len()).step_by(CHUNK) {
        let text = widening_rows(
            run,
            &e,
            p,
            from..(from + CHUNK).min(secs.len()),
            written.every_widening_year,
        );
        set.write_to("widening_plan.csv", text.as_bytes())?;
        if keep_programme {
            widening.push_str(&text);
        }
    }
    set.write_to("limits.csv", limits_csv(c).as_bytes())?;
    small.insert("budget_use.csv".into(), bu);
    small.insert("target_use.csv".into(), tu);
    small.insert("summary.json".into(), summary);
    small.insert("condition.csv".into(), condition);
    if keep_programme {
        small.insert("widening_plan.csv".into(), widening);
    }
    Ok(small)
}

/// `limits.csv`: each row of the selection as `select --limits` reads it, with the limit the
/// selection held exactly (cents as money, millionths as the target's length-weighted measure).
fn limits_csv(c: &Candidates) -> String {
    let mut s = String::from("row,limit\n");
    for row in &c.rows {
        let (prefix, places) = match row.kind {
            RowKind::Budget(_) => ("cost", 2),
            RowKind::Target(_) => ("use", 6),
        };
        let _ = writeln!(
            s,
            "{},{}",
            Field(&format!("{prefix}:{}", row.name)),
            rust_decimal::Decimal::new(row.limit_units, places)
        );
    }
    s
}

/// `condition.csv` from the three cases' series.
pub fn condition_csv(cs: &pavestrat::plan::ConditionSeries) -> String {
    let mut s = String::from("year,case,mean_iri,good_share,fair_share,poor_share\n");
    for (case, name) in pavestrat::plan::CASES.iter().enumerate() {
        for (y, iri) in cs.mean_iri[case].iter().enumerate() {
            let [g, f, p] = cs.shares[case][y];
            let _ = writeln!(
                s,
                "{},{name},{iri:.6},{g:.6},{f:.6},{p:.6}",
                cs.first_year + y as i32
            );
        }
    }
    s
}

/// `widening_plan.csv`: one row per section that can be widened and widening year (every
/// year, or those the plan or a timing rule picks).
const WIDENING_HEAD: &str = "section_id,year,strategy,npv,fyrr,by_fyrr,by_npv,planned\n";

/// The rows of `widening_plan.csv` (after [`WIDENING_HEAD`]) of the sections `range`: every
/// widening year when `every`, else only the years the plan or a timing rule picks.
fn widening_rows(
    run: &Run,
    e: &Enumerator<'_>,
    p: &Plan,
    range: std::ops::Range<usize>,
    every: bool,
) -> String {
    let c = &p.candidates;
    let cat = &run.catalogue;
    let y0 = run.scenario.base_year;
    let first = range.start;
    let rows: Vec<String> = run.network.sections[range]
        .par_iter()
        .enumerate()
        .map(|(i, sec)| {
            let g = first + i;
            let best = c.widening_of(g);
            if best.is_empty() {
                return String::new();
            }
            let (by_fyrr, by_npv) =
                pavestrat::appraise::timing_rules(best, &run.scenario.discounting);
            let planned = e
                .strategy(c.strategy[c.chosen(&p.outcome.plan, g)])
                .and_then(|chosen| chosen.widening_year(cat))
                .map(|x| y0 + x as i32);
            let mut s = String::new();
            for wy in best {
                let picks = [by_fyrr, by_npv, planned].map(|y| y == Some(wy.year));
                if !every && !picks.contains(&true) {
                    continue;
                }
                let _ = writeln!(
                    s,
                    "{},{},{},{},{},{},{},{}",
                    Field(sec.id.as_str()),
                    wy.year,
                    Field(&e.name(wy.strategy)),
                    Amount(wy.npv),
                    pavestrat::output::format::Fixed(wy.fyrr, 6),
                    picks[0],
                    picks[1],
                    picks[2]
                );
            }
            s
        })
        .collect();
    rows.concat()
}

/// A budget price for CSV: full precision, `0` when zero.
fn price_text(x: f64) -> String {
    if x == 0.0 {
        "0".to_owned()
    } else {
        format!("{x}")
    }
}

/// `summary.json`.
pub fn summary_json(run: &Run, p: &Plan, f: &Facts, run_id: &str) -> String {
    let o = &p.outcome;
    let c = &p.candidates;
    let t = totals(c, &o.plan);
    let binding: Vec<serde_json::Value> = c
        .rows
        .iter()
        .zip(&o.prices)
        .filter(|(_, x)| **x > 0.0)
        .map(|(r, x)| serde_json::json!({ "line": r.name, "price": x }))
        .collect();
    let d = &run.scenario.discounting;
    let pv_capital: f64 = p
        .works
        .iter()
        .filter(|w| run.catalogue.treatments[w.treatment].category != Category::Routine)
        .map(|w| w.cost * d.factor(run.scenario.base_year + w.year as i32))
        .sum();
    let (npv_per_capital, bcr_capital) =
        pavestrat::appraise::capital_ratios(t.plan.npv, pv_capital);
    let v = serde_json::json!({
        "run_id": run_id,
        "objective": c.objective_of(o.value),
        "bound": c.objective_of(o.bound),
        "gap": o.gap,
        "status": o.status.name(),
        "method": o.method.name(),
        "sections": c.sections(),
        "candidates": c.problem.candidate_count(),
        "seconds": f.seconds,
        "objective_kind": c.objective.name(),
        "requested_gap": f.requested_gap,
        "time_limit_reached": o.status == pavestrat::select::network::Status::TimeLimit,
        "selection_seconds": f.selection_seconds,
        "candidate_seconds": f.candidate_seconds,
        "strategies_enumerated": c.enumerated.iter().map(|&x| x as u64).sum::<u64>(),
        "price_updates": o.iterations,
        "contested_sections": o.contested,
        "budget_scale": f.budget_scale,
        "widening_years": if f.every_widening_year { "every" } else { "picked" },
        "npv": { "plan": t.plan.npv, "unconstrained": t.unconstrained.npv, "base": t.base.npv },
        "pv_agency_cost": { "plan": t.plan.pv_agency, "unconstrained": t.unconstrained.pv_agency, "base": t.base.pv_agency },
        "pv_capital": { "plan": pv_capital },
        "npv_per_capital": npv_per_capital,
        "bcr_capital": bcr_capital,
        "headline_ratio": "npv_per_capital",
        "binding": binding,
        "money": run.scenario.money_label,
        "assumptions": assumptions(run),
        "unverified_coefficients": pavestrat::input::provenance::unverified(&run.scenario.models)
            .iter()
            .map(|u| serde_json::json!({ "key": u.key, "value": u.value, "standing": u.standing.name() }))
            .collect::<Vec<_>>(),
        "caution": pavestrat::CAUTION,
    });
    let mut s = serde_json::to_string_pretty(&v).unwrap_or_default();
    s.push('\n');
    s
}

/// The scenario's key assumptions, for summary.json and the report.
pub fn assumptions(run: &Run) -> serde_json::Value {
    use pavestrat::input::scenario::VehicleClass;
    let s = &run.scenario;
    let per_class = |v: &pavestrat::input::scenario::PerClass<pavestrat::money::Money>| {
        let mut m = serde_json::Map::new();
        for c in VehicleClass::ALL {
            m.insert(c.key().to_owned(), serde_json::json!(v.get(c).to_f64()));
        }
        serde_json::Value::Object(m)
    };
    let cond = &s.models.condition;
    serde_json::json!({
        "title": s.title,
        "base_year": s.base_year,
        "analysis_years": s.analysis_years,
        "discount_rate": s.discounting.rate(),
        "discounting": s.discounting.timing().name(),
        "money": s.money_label,
        "unit_values": {
            "time_per_vehicle_hour": per_class(&s.unit_values.time),
            "operating_per_vehicle_km": per_class(&s.unit_values.operating),
            "crash": s.unit_values.crash.to_f64(),
        },
        "condition_classes_iri": { "good_below": cond.good_below, "poor_above": cond.poor_above },
        "families": cond.families.iter().map(|f| serde_json::json!({
            "name": f.name, "model": f.model.name()
        })).collect::<Vec<_>>(),
        "default_family": cond.default_family,
        "sections": run.network.sections.len(),
        "length_km": run.network.sections.iter().map(|x| x.length_km).sum::<f64>(),
        "treatments": run.catalogue.treatments.len(),
        "templates": run.templates.len(),
    })
}

/// The terminal summary.
pub fn render(run: &Run, p: &Plan, f: &Facts) -> String {
    let sc = &run.scenario;
    let c = &p.candidates;
    let o = &p.outcome;
    let money = &sc.money_label;
    let t = totals(c, &o.plan);
    let mut s =
        format!(
        "Work programme for {} — {} sections, {} candidates after dominated ones were removed\n",
        if sc.title.is_empty() { &sc.file } else { &sc.title },
        c.sections(),
        c.problem.candidate_count()
    );
    if (f.budget_scale - 1.0).abs() > 1e-12 {
        let _ = writeln!(s, "every budget line scaled by {}", f.budget_scale);
    }
    let _ = writeln!(
        s,
        "objective: {}\n",
        match c.objective {
            Objective::Npv => "largest total NPV against the base",
            Objective::LeastCost => "least PV agency cost within the condition targets",
        }
    );
    let _ = writeln!(s, "{:<28} {:>18} {:>20}", "", "NPV", "PV agency cost");
    for (label, x) in [
        ("this plan", t.plan),
        ("no budget limits", t.unconstrained),
        ("base (routine only)", t.base),
    ] {
        let _ = writeln!(
            s,
            "{:<28} {:>18} {:>20}",
            label,
            grouped(x.npv, 0),
            grouped(x.pv_agency, 0)
        );
    }
    if t.unconstrained.npv.abs() > 0.0 {
        let _ = writeln!(
            s,
            "the plan keeps {:.1} % of the NPV the network could earn with no budget limits",
            100.0 * t.plan.npv / t.unconstrained.npv
        );
    }
    let _ = writeln!(s, "\nBudget lines (money in {money}; price = gain in the objective per unit of money added to the line):");
    let _ = writeln!(
        s,
        "{:<26} {:>16} {:>16} {:>7} {:>10}",
        "line", "limit", "used", "use", "price"
    );
    for (j, row) in c.rows.iter().enumerate() {
        match row.kind {
            RowKind::Budget(b) => {
                let limit = row.money.unwrap_or_default().to_f64();
                let used = p.spent[b].to_f64();
                let _ = writeln!(
                    s,
                    "{:<26} {:>16} {:>16} {:>6.1}% {:>10}",
                    row.name,
                    grouped(limit, 0),
                    grouped(used, 0),
                    if limit > 0.0 {
                        100.0 * used / limit
                    } else {
                        0.0
                    },
                    if o.prices[j] > 0.0 {
                        format!("{:.4}", o.prices[j])
                    } else {
                        "slack".to_owned()
                    }
                );
            }
            RowKind::Target(_) => {}
        }
    }
    if !sc.plan.targets.is_empty() {
        let _ = writeln!(s, "\nCondition targets:");
        let mut ti = 0;
        for (j, row) in c.rows.iter().enumerate() {
            if let RowKind::Target(k) = row.kind {
                let tl = &sc.plan.targets[k];
                let _ = writeln!(
                    s,
                    "{:<26} {:<11} at most {:<8} achieved {:<10.4} price {}",
                    row.name,
                    tl.measure.name(),
                    tl.at_most,
                    p.achieved[ti],
                    if o.prices[j] > 0.0 {
                        format!("{:.4}", o.prices[j])
                    } else {
                        "slack".to_owned()
                    }
                );
                ti += 1;
            }
        }
    }
    let binding = o.prices.iter().filter(|x| **x > 0.0).count();
    let _ = writeln!(
        s,
        "\n{binding} of {} lines bind (price above zero).",
        c.rows.len()
    );
    let _ = writeln!(
        s,
        "Certificate: plan {} {money}, bound {} {money}, gap {:.4} % — {} ({} path, {} price updates, {} contested sections, {:.2} s selection, {:.2} s simulation)",
        grouped(c.objective_of(o.value), 0),
        grouped(c.objective_of(o.bound), 0),
        o.gap * 100.0,
        o.status.name(),
        o.method.name(),
        o.iterations,
        o.contested,
        f.selection_seconds,
        f.candidate_seconds
    );
    let _ = writeln!(
        s,
        "{}",
        o.status.meaning(o.gap, f.requested_gap, f.time_limit)
    );
    let _ = writeln!(s, "\n{}", pavestrat::CAUTION);
    s
}
