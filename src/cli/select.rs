//! `pavestrat select`: the selection engine on candidates from anywhere — an agency's own
//! treatment candidates from another asset system, a consultant's list, or a plan's own
//! `candidates.csv` with its `limits.csv`.
//!
//! Exactly one candidate is chosen per section so that the total of the value column is largest
//! (or, with `--minimise`, least) and every row's total stays within its limit, exactly. The
//! terminal shows the certificate (value, bound, gap, status); with `--out DIR` it writes:
//! - `selection.csv`: `section_id,strategy,value`, then the carried columns of the chosen
//!   candidate;
//! - `row_use.csv`: `row,limit,used,price` — the price is the value gained per unit of the row
//!   added to its limit (zero where the row does not bind);
//! - `summary.json`: objective, bound, gap, status, method, seconds and the input's size.

use super::plan::{parse_gap, parse_seconds};
use super::{Context, OutArg};
use pavestrat::diag::{Diagnostics, Place};
use pavestrat::error::{Error, Result};
use pavestrat::input::candidates::{self, CandidateFile};
use pavestrat::io::{print_stdout, OutputSet};
use pavestrat::model::money::grouped;
use pavestrat::output::format::Field;
use pavestrat::output::schema::others::select::{ROW_USE, SELECTION};
use pavestrat::select::network::{self, Infeasible, Method, Options, Outcome};
use pavestrat::select::problem::{Offer, Problem, ProblemError};
use rust_decimal::Decimal;
use std::fmt::Write as _;
use std::path::Path;
use std::time::{Duration, Instant};

/// Arguments of `select`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Candidates (CSV): section_id, strategy, the value column, and cost:ROW / use:ROW
    /// columns; other columns are carried through. `-` reads stdin.
    #[arg(value_name = "CANDIDATES")]
    pub candidates: String,

    /// Limits (CSV): `row,limit`, one line per cost:/use: column of the candidates.
    #[arg(long, value_name = "LIMITS")]
    pub limits: String,

    /// The column to make largest [default: npv].
    #[arg(long, value_name = "COLUMN", conflicts_with = "minimise")]
    pub maximise: Option<String>,

    /// Make this column's total least instead (for example pv_agency_cost, as a least-cost
    /// plan does).
    #[arg(long, value_name = "COLUMN")]
    pub minimise: Option<String>,

    /// Solution path: exact, decomposed, or auto (as in `plan`).
    #[arg(long, value_name = "HOW", default_value = "auto", value_parser = ["auto", "exact", "decomposed"])]
    pub method: String,

    /// Stop once the selection is proven within this relative gap of the bound (fraction or %).
    #[arg(long, value_name = "G", default_value = "0.0001", value_parser = parse_gap)]
    pub gap: f64,

    /// Most seconds the selection may take.
    #[arg(long, value_name = "S", default_value_t = 10.0, value_parser = parse_seconds)]
    pub time_limit: f64,

    #[command(flatten)]
    pub out: OutArg,
}

/// The candidates as a selection problem.
struct Built {
    problem: Problem,
    /// Per section: the file's candidate index of each kept position.
    kept: Vec<Vec<usize>>,
    limits: Vec<Decimal>,
    decimals: Vec<u32>,
    /// -1 when minimising.
    sign: f64,
}

/// Run `select`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let started = Instant::now();
    let (column, sign) = match (&args.maximise, &args.minimise) {
        (_, Some(c)) => (c.clone(), -1.0),
        (Some(c), None) => (c.clone(), 1.0),
        (None, None) => ("npv".to_owned(), 1.0),
    };
    let mut d = Diagnostics::new();
    let src = pavestrat::input::Disk;
    let read = pavestrat::input::read_text(&src, Path::new(&args.candidates), None, &mut d);
    let file = read.and_then(|(label, text)| candidates::parse(&label, &text, &column, &mut d));
    let Some(file) = file else {
        return Err(Error::Input(d));
    };
    let read = pavestrat::input::read_text(&src, Path::new(&args.limits), None, &mut d);
    let limits = read.and_then(|(label, text)| {
        candidates::parse_limits(&label, &text, &file, &mut d).map(|l| (label, l))
    });
    let Some((limits_label, limits)) = limits else {
        return Err(Error::Input(d));
    };
    let built = build(&file, &limits_label, limits, sign, &mut d).ok_or(Error::Input(d.clone()))?;
    ctx.notes(&d);
    let method = Method::from_name(&args.method);
    let options = Options {
        method,
        gap: args.gap,
        time_limit: Duration::from_secs_f64(args.time_limit),
    };
    let selecting = Instant::now();
    let o = network::solve(&built.problem, &options).map_err(|e| infeasible(&file, &built, e))?;
    let seconds = selecting.elapsed().as_secs_f64();
    let text = summary_text(&file, &built, &o, &args, seconds);
    if let Some(dir) = &args.out.out {
        let mut set = OutputSet::new();
        set.add(
            SELECTION.name,
            selection_csv(&file, &built, &o).into_bytes(),
        );
        set.add(ROW_USE.name, row_use_csv(&file, &built, &o).into_bytes());
        let json = summary_json(&file, &built, &o, &args, seconds, started);
        set.add(
            pavestrat::output::schema::others::select::SUMMARY,
            json.into_bytes(),
        );
        for p in set.commit(dir, "select")? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&text)?;
    }
    Ok(())
}

/// The problem in exact integer rows; range problems are input errors naming the row.
fn build(
    file: &CandidateFile,
    limits_label: &str,
    limits: Vec<Decimal>,
    sign: f64,
    d: &mut Diagnostics,
) -> Option<Built> {
    let decimals = candidates::row_decimals(file, &limits);
    let mut units = Vec::with_capacity(limits.len());
    for (j, l) in limits.iter().enumerate() {
        match candidates::to_units(*l, decimals[j]) {
            Some(u) => units.push(u),
            None => {
                d.error(
                    Place::file(limits_label).with_field(file.rows[j].clone()),
                    format!("a limit of {l}, beyond the supported range at {} decimal places", decimals[j]),
                    format!(
                        "a limit whose magnitude, in units of the row's finest decimal place, is at most {}",
                        pavestrat::select::problem::MAX_ROW_TOTAL
                    ),
                );
                return None;
            }
        }
    }
    let mut p = Problem::new(units);
    let mut kept = Vec::with_capacity(file.sections.len());
    for s in &file.sections {
        let mut offers = Vec::with_capacity(s.candidates.len());
        for c in &s.candidates {
            let mut uses = Vec::with_capacity(c.uses.len());
            for (j, x) in &c.uses {
                let Some(u) = candidates::to_units(*x, decimals[*j]) else {
                    d.error(
                        Place::line(&file.file, c.line).with_field(file.rows[*j].clone()),
                        format!("{x}, beyond the supported range"),
                        "a smaller amount",
                    );
                    return None;
                };
                uses.push((*j as u16, u));
            }
            offers.push(Offer {
                value: sign * c.value,
                uses,
            });
        }
        match p.push_group(&offers) {
            Ok(k) => kept.push(k),
            Err(e) => {
                let line = s.candidates.first().map_or(0, |c| c.line);
                let (found, expected) = match e {
                    ProblemError::TooLarge(j) => (
                        format!(
                            "`{}`: the candidates' uses together pass the supported range",
                            file.rows[j]
                        ),
                        "smaller amounts, or fewer decimal places".to_owned(),
                    ),
                    ProblemError::TooMany(n) => (
                        format!("section `{}` with {n} candidates", s.id),
                        format!(
                            "at most {} candidates per section",
                            pavestrat::select::problem::MAX_CANDIDATES
                        ),
                    ),
                    other => (
                        other.to_string(),
                        "candidates the selection can hold".to_owned(),
                    ),
                };
                d.error(
                    Place::line(&file.file, line).with_field("section_id"),
                    found,
                    expected,
                );
                return None;
            }
        }
    }
    Some(Built {
        problem: p,
        kept,
        limits,
        decimals,
        sign,
    })
}

/// A row's amount in units, as an exact decimal.
fn amount(units: i64, decimals: u32) -> Decimal {
    Decimal::new(units, decimals)
}

fn infeasible(file: &CandidateFile, b: &Built, e: Infeasible) -> Error {
    let describe = |rows: &[(usize, i64)], verb: &str| -> String {
        rows.iter()
            .map(|&(j, u)| {
                format!(
                    "{}: limit {}, {verb} {}",
                    file.rows[j],
                    b.limits[j],
                    amount(u, b.decimals[j])
                )
            })
            .collect::<Vec<_>>()
            .join("\n  ")
    };
    Error::Infeasible(match e {
        Infeasible::Rows(r) => format!(
            "these rows cannot be met even with every section at its least use:\n  {}",
            describe(&r, "least possible")
        ),
        Infeasible::Together(r) => format!(
            "each row can be met on its own, but a complete search proved that no selection meets them all together; the closest found breaks:\n  {}",
            describe(&r, "closest found")
        ),
        Infeasible::NotFound(r) => format!(
            "no selection that meets every row was found within the time limit (not proven impossible; a longer --time-limit may find one); the closest found breaks:\n  {}",
            describe(&r, "closest found")
        ),
    })
}

/// The chosen candidate of each section.
fn chosen<'a>(
    file: &'a CandidateFile,
    b: &Built,
    o: &Outcome,
) -> impl Iterator<Item = (&'a str, &'a candidates::Candidate)> {
    let picks: Vec<usize> = b
        .kept
        .iter()
        .zip(&o.plan)
        .map(|(k, &i)| k[i as usize])
        .collect();
    file.sections
        .iter()
        .zip(picks)
        .map(|(s, i)| (s.id.as_str(), &s.candidates[i]))
}

fn selection_csv(file: &CandidateFile, b: &Built, o: &Outcome) -> String {
    let mut s = SELECTION.columns.join(",");
    for c in &file.carried {
        let _ = write!(s, ",{}", Field(c));
    }
    s.push('\n');
    for (id, c) in chosen(file, b, o) {
        let _ = write!(
            s,
            "{},{},{}",
            Field(id),
            Field(&c.strategy),
            Field(&c.value_text)
        );
        for x in &c.carried {
            let _ = write!(s, ",{}", Field(x));
        }
        s.push('\n');
    }
    s
}

/// Prices per unit of each row's own measure (the selection's are per unit of its finest
/// decimal place), as the objective counts (a gain in value, or a saving when minimising).
fn price(b: &Built, o: &Outcome, j: usize) -> f64 {
    o.prices[j] * 10f64.powi(b.decimals[j] as i32)
}

fn row_use_csv(file: &CandidateFile, b: &Built, o: &Outcome) -> String {
    let mut s = ROW_USE.head();
    for (j, name) in file.rows.iter().enumerate() {
        let _ = writeln!(
            s,
            "{},{},{},{}",
            Field(name),
            amount(b.problem.limits[j], b.decimals[j]),
            amount(o.used[j], b.decimals[j]),
            price(b, o, j)
        );
    }
    s
}

fn summary_text(file: &CandidateFile, b: &Built, o: &Outcome, args: &Args, seconds: f64) -> String {
    let mut s = String::new();
    let verb = if b.sign < 0.0 { "least" } else { "largest" };
    let _ = writeln!(
        s,
        "Selection from {}: {} sections, {} candidates ({} after dominated ones were removed), {} rows; {verb} total {}",
        file.file,
        file.sections.len(),
        file.sections.iter().map(|x| x.candidates.len()).sum::<usize>(),
        b.problem.candidate_count(),
        file.rows.len(),
        file.value_column
    );
    let binding: Vec<usize> = (0..file.rows.len())
        .filter(|&j| o.prices[j] > 0.0)
        .collect();
    if !binding.is_empty() {
        let _ = writeln!(
            s,
            "\nrows that bind (price = {} per unit added to the limit):",
            if b.sign < 0.0 { "saving" } else { "gain" }
        );
        for &j in binding.iter().take(20) {
            let _ = writeln!(
                s,
                "  {:<32} limit {:>18}  used {:>18}  price {:.6}",
                file.rows[j],
                amount(b.problem.limits[j], b.decimals[j]).to_string(),
                amount(o.used[j], b.decimals[j]).to_string(),
                price(b, o, j)
            );
        }
        if binding.len() > 20 {
            let _ = writeln!(
                s,
                "  … and {} more (row_use.csv lists every row)",
                binding.len() - 20
            );
        }
    }
    let _ = writeln!(
        s,
        "\nCertificate: total {} {}, bound {}, gap {:.4} % — {} ({} path, {:.2} s)",
        file.value_column,
        grouped(b.sign * o.value, 2),
        grouped(b.sign * o.bound, 2),
        o.gap * 100.0,
        o.status.name(),
        o.method.name(),
        seconds
    );
    let _ = writeln!(s, "{}", o.status.meaning(o.gap, args.gap, args.time_limit));
    let _ = writeln!(s, "\n{}", pavestrat::CAUTION);
    s
}

fn summary_json(
    file: &CandidateFile,
    b: &Built,
    o: &Outcome,
    args: &Args,
    seconds: f64,
    started: Instant,
) -> String {
    let v = serde_json::json!({
        "candidates_file": file.file,
        "value_column": file.value_column,
        "sense": if b.sign < 0.0 { "minimise" } else { "maximise" },
        "objective": b.sign * o.value,
        "bound": b.sign * o.bound,
        "gap": o.gap,
        "status": o.status.name(),
        "meaning": o.status.meaning(o.gap, args.gap, args.time_limit),
        "method": o.method.name(),
        "requested_gap": args.gap,
        "time_limit": args.time_limit,
        "seconds": seconds,
        "total_seconds": started.elapsed().as_secs_f64(),
        "sections": file.sections.len(),
        "candidates": file.sections.iter().map(|x| x.candidates.len()).sum::<usize>(),
        "candidates_kept": b.problem.candidate_count(),
        "rows": file.rows.len(),
        "caution": pavestrat::CAUTION,
    });
    let mut s = serde_json::to_string_pretty(&v).unwrap_or_default();
    s.push('\n');
    s
}
