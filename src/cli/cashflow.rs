//! `pavestrat cashflow`: appraise a plain stream of yearly benefits and costs — to check a
//! consultant's spreadsheet, or to compare a few alternatives by hand.
//!
//! Input: CSV with columns `year, benefit, cost` (amounts as decimal text), or several mutually
//! exclusive alternatives with an `alternative` column, in which case the incremental analysis
//! follows. With `--independent` the alternatives are independent projects instead, and
//! `--budget` picks the set of greatest NPV whose PV of costs fits the budget, beside what
//! ranking by NPV or by NPV per unit of cost would pick.
//!
//! Discounting follows [`pavestrat::economics`]: base-year flows are not discounted (numpy-financial's
//! `npv`), so a spreadsheet's `NPV()` corresponds to `--base-year` one year before the first flow.

use super::{parse_rate, Context, OutArg};
use pavestrat::diag::Diagnostics;
use pavestrat::economics::alternatives::{appraise_flows, Settings};
use pavestrat::error::{Error, Result};
use pavestrat::input::cashflow::parse;
use pavestrat::io::{print_stdout, OutputSet};
use pavestrat::model::money::Money;
use pavestrat::output::cashflow::{alternatives_csv, incremental_csv, table, to_json};
use pavestrat::schema::others::cashflow;
use std::path::Path;

/// Output format on stdout.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    Table,
    Csv,
    Json,
}

/// Arguments of `cashflow`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// CSV file with columns year,benefit,cost (and optionally alternative); `-` reads stdin.
    #[arg(value_name = "FILE")]
    pub file: String,

    /// Real discount rate: a fraction (0.06) or a percentage (6%).
    #[arg(long, value_name = "R", value_parser = parse_rate, allow_hyphen_values = true)]
    pub rate: f64,

    /// Year to discount to [default: the first year in the file].
    #[arg(long, value_name = "Y")]
    pub base_year: Option<i32>,

    /// Take each year's flows at mid-year instead of at its end.
    #[arg(long)]
    pub mid_year: bool,

    /// Output format on stdout.
    #[arg(long, value_enum, default_value = "table")]
    pub format: Format,

    /// Treat the alternatives as independent projects (any combination may be built).
    #[arg(long)]
    pub independent: bool,

    /// With --independent: the money available, counted against each project's PV of costs.
    #[arg(long, value_name = "AMOUNT", requires = "independent")]
    pub budget: Option<String>,

    #[command(flatten)]
    pub out: OutArg,
}

/// Run `cashflow`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let mut diags = Diagnostics::new();
    let read = pavestrat::input::read_text(
        &pavestrat::input::Disk,
        Path::new(&args.file),
        None,
        &mut diags,
    );
    let Some((label, text)) = read else {
        return Err(Error::Input(diags));
    };
    let flows = parse(&label, &text, &mut diags);
    let flows = match flows {
        Some(f) if !diags.has_errors() => f,
        _ => return Err(Error::Input(diags)),
    };
    let budget = match &args.budget {
        Some(b) => Some(
            Money::parse(b)
                .map_err(|e| {
                    Error::Usage(format!(
                        "--budget: found {e}; expected an amount such as 2000000"
                    ))
                })?
                .to_f64(),
        ),
        None => None,
    };
    ctx.notes(&diags);
    let settings = Settings {
        rate: args.rate,
        base_year: args.base_year.map(pavestrat::model::Year),
        mid_year: args.mid_year,
        independent: args.independent,
        budget,
    };
    let streams = flows.iter().map(|f| (f.name.clone(), f.stream())).collect();
    let result = appraise_flows(&label, streams, &settings)?;

    let json = serde_json::to_string_pretty(&to_json(&result)).unwrap_or_default() + "\n";
    let csv = alternatives_csv(&result);
    let stdout = match args.format {
        Format::Table => table(&result),
        Format::Csv => csv.clone(),
        Format::Json => json.clone(),
    };
    if let Some(dir) = &args.out.out {
        let mut set = OutputSet::new();
        set.add(cashflow::CASHFLOW.name, csv.into_bytes());
        if result.incremental.is_some() {
            set.add(
                cashflow::INCREMENTAL.name,
                incremental_csv(&result).into_bytes(),
            );
        }
        set.add(cashflow::JSON, json.into_bytes());
        let written = set.commit(dir, "cashflow")?;
        for p in written {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    // With --out the files are the output and stdout is a summary, silenced by --quiet.
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&stdout)?;
    }
    Ok(())
}
