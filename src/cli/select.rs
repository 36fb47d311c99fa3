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
use pavestrat::diag::Diagnostics;
use pavestrat::error::{Error, Result};
use pavestrat::input::candidates;
use pavestrat::io::{print_stdout, OutputSet};
use pavestrat::output::selection::{row_use_csv, selection_csv, summary_json, summary_text, Asked};
use pavestrat::schema::others::select::{ROW_USE, SELECTION};
use pavestrat::select::network::{self, Method, Options};
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
    let built = pavestrat::input::candidates::build(&file, &limits_label, limits, sign, &mut d)
        .ok_or(Error::Input(d.clone()))?;
    ctx.notes(&d);
    let method = Method::from_name(&args.method);
    let options = Options {
        method,
        gap: args.gap,
        time_limit: Duration::from_secs_f64(args.time_limit),
    };
    let selecting = Instant::now();
    let o = network::solve(&built.problem, &options)
        .map_err(|e| pavestrat::input::candidates::infeasible(&file, &built, e))?;
    let seconds = selecting.elapsed().as_secs_f64();
    let asked = Asked {
        gap: args.gap,
        time_limit: args.time_limit,
    };
    let text = summary_text(&file, &built, &o, &asked, seconds);
    if let Some(dir) = &args.out.out {
        let mut set = OutputSet::new();
        set.add(
            SELECTION.name,
            selection_csv(&file, &built, &o).into_bytes(),
        );
        set.add(ROW_USE.name, row_use_csv(&file, &built, &o).into_bytes());
        let json = summary_json(
            &file,
            &built,
            &o,
            &asked,
            seconds,
            started.elapsed().as_secs_f64(),
        );
        set.add(
            pavestrat::schema::others::select::SUMMARY,
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
