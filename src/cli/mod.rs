//! The command line: global options, one module per subcommand, and the mapping of errors to
//! exit codes.
//!
//! Conventions every command keeps: `--out DIR` writes its files into DIR (created if missing;
//! all or nothing, see [`pavestrat::io::OutputSet`]); `--quiet` leaves only errors on stderr (data a
//! command was asked to print on stdout still prints); `-` reads standard input.

pub mod appraise;
pub mod bars;
pub mod calibrate;
pub mod cashflow;
pub mod check;
pub mod compare;
pub mod explain;
pub mod frontier;
pub mod init;
pub mod plan;
pub mod report;
pub mod risk;
pub mod select;
pub mod sensitivity;

use clap::{Parser, Subcommand};
use pavestrat::error::{Error, Result, EXIT_BAD_INPUT, EXIT_INTERNAL, EXIT_OK};
use std::ffi::OsString;
use std::path::{Path, PathBuf};

const AFTER_HELP: &str = "\
Exit codes: 0 success; 1 internal fault; 2 bad input (every problem is listed with its file, \
line and field); 3 no feasible plan.

Planning-level estimates only. Pavement designs, safety decisions and cost data must follow \
local standards and be reviewed and signed by a licensed engineer.";

/// pavestrat — what pavement work each road section should get, and when.
///
/// Simulates each section's condition, traffic and costs under every timing strategy, appraises
/// each against the base case (routine maintenance only), and chooses the best strategy per
/// section within yearly budgets.
#[derive(Debug, Parser)]
#[command(name = "pavestrat", version, after_help = AFTER_HELP, max_term_width = 100)]
pub struct Cli {
    /// Print errors only (no notes, summaries or progress).
    #[arg(long, short, global = true)]
    pub quiet: bool,

    /// Print more: the model coefficients still at a calibration default or a value from memory.
    #[arg(long, short, global = true)]
    pub verbose: bool,

    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Validate a scenario and every file it names; list every problem.
    #[command(after_help = AFTER_HELP)]
    Check(check::Args),
    /// Simulate every section under every strategy and appraise each against the base.
    #[command(after_help = AFTER_HELP)]
    Appraise(appraise::Args),
    /// Choose every section's strategy within the budget lines: the work programme, with
    /// budget prices and an optimality certificate.
    #[command(after_help = AFTER_HELP)]
    Plan(plan::Args),
    /// The best objective at several budget levels from one simulation: what another unit of
    /// money buys.
    #[command(after_help = AFTER_HELP)]
    Frontier(frontier::Args),
    /// The decision-maker's HTML report (charts, work programme, assumptions), drawn from
    /// `plan --out DIR`.
    #[command(after_help = AFTER_HELP)]
    Report(report::Args),
    /// Sensitivity tests and switching values of the plan and each section's strategy.
    #[command(after_help = AFTER_HELP)]
    Sensitivity(sensitivity::Args),
    /// Monte Carlo over the scenario's uncertain inputs: NPV distributions, chance of being
    /// best, spending against budgets; reproducible, and splittable into slices.
    #[command(after_help = AFTER_HELP)]
    Risk(risk::Args),
    /// Two plans side by side (written, or scenarios planned afresh): which sections chose
    /// differently, money by year and budget group, condition, and the budget lines whose
    /// prices moved.
    #[command(after_help = AFTER_HELP)]
    Compare(compare::Args),
    /// Why a section got its strategy in a plan (read from `plan --out DIR`).
    #[command(after_help = AFTER_HELP)]
    Explain(explain::Args),
    /// Fit the roughness families to the agency's own condition surveys.
    #[command(after_help = AFTER_HELP)]
    Calibrate(calibrate::Args),
    /// Write the demo scenario's files (or a synthetic network) into a directory to edit.
    #[command(after_help = AFTER_HELP)]
    Init(init::Args),
    /// Appraise a plain cash-flow stream, or compare alternatives incrementally.
    #[command(after_help = AFTER_HELP)]
    Cashflow(cashflow::Args),
    /// Choose one candidate per section within row limits, from candidates made anywhere (an
    /// asset system's list, or the candidates.csv and limits.csv of `plan --candidates`).
    #[command(after_help = AFTER_HELP)]
    Select(select::Args),
}

/// What every command receives besides its own arguments.
#[derive(Debug, Clone, Copy)]
pub struct Context {
    pub quiet: bool,
    pub verbose: bool,
    /// Progress bars: drawn only on a terminal, never when quiet.
    pub progress: crate::cli::bars::Display,
}

impl Context {
    /// Print the findings of an accepted input (its notes) on stderr unless quiet.
    pub fn notes(&self, d: &pavestrat::diag::Diagnostics) {
        if !self.quiet {
            let (items, hidden) = d.shown(pavestrat::diag::PRINTED, false);
            for item in items {
                pavestrat::err_line!("{item}");
            }
            if hidden > 0 {
                pavestrat::err_line!("… and {hidden} more notes, not shown");
            }
        }
    }

    /// The note on model coefficients still at a default (and with `--verbose`, the list),
    /// on stderr unless quiet.
    pub fn defaults_note(&self, m: &pavestrat::input::models::Models) {
        if self.quiet {
            return;
        }
        if let Some(n) = pavestrat::input::provenance::note(m) {
            pavestrat::err_line!("{n}");
            if self.verbose {
                pavestrat::err_text!("{}", pavestrat::input::provenance::listing(m));
            }
        }
    }

    /// Print a line on stderr unless quiet.
    pub fn say(&self, text: &str) {
        if !self.quiet {
            pavestrat::err_line!("{text}");
        }
    }
}

/// Run the tool with these arguments (the first is the program name) and return the exit code.
/// Errors are printed to stderr here, once.
pub fn main(args: impl IntoIterator<Item = OsString>) -> u8 {
    let cli = match Cli::try_parse_from(args) {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() {
                EXIT_BAD_INPUT
            } else {
                EXIT_OK
            };
            let _ = e.print();
            return code;
        }
    };
    let ctx = Context {
        quiet: cli.quiet,
        verbose: cli.verbose,
        progress: crate::cli::bars::Display::for_terminal(cli.quiet),
    };
    // The selection's inner stages on stderr, for developers (DEVELOPERS.md, Testing).
    pavestrat::debug::enable(std::env::var_os("PAVESTRAT_DEBUG_SELECT").is_some());
    // The library's notes while it works (a directory's lock awaited) go to stderr unless quiet.
    pavestrat::notice::set_sink(if cli.quiet {
        None
    } else {
        Some(|text| pavestrat::err_line!("{text}"))
    });
    // A signal while files are being written removes (or finishes) the staged set first.
    pavestrat::io::set::install_signal_cleanup();
    let result = std::panic::catch_unwind(|| run(cli.command, ctx));
    match result {
        Ok(Ok(())) => EXIT_OK,
        Ok(Err(e)) => {
            print_error(&e, ctx);
            e.exit_code()
        }
        Err(_) => {
            pavestrat::err_line!(
                "internal fault: pavestrat stopped unexpectedly (see the message above); \
                 please report it with the input that caused it"
            );
            EXIT_INTERNAL
        }
    }
}

fn print_error(e: &Error, ctx: Context) {
    match e {
        Error::Input(d) => {
            let (items, hidden) = d.shown(pavestrat::diag::PRINTED, ctx.quiet);
            for item in items {
                pavestrat::err_line!("{item}");
            }
            if hidden > 0 {
                pavestrat::err_line!(
                    "… and {hidden} more, not shown (the first {} by file and line are listed)",
                    pavestrat::diag::PRINTED
                );
            }
            pavestrat::err_line!("{}", d.problem_line());
        }
        other => pavestrat::err_line!("error: {other}"),
    }
}

fn run(command: Command, ctx: Context) -> Result<()> {
    match command {
        Command::Check(a) => check::run(a, ctx),
        Command::Appraise(a) => appraise::run(a, ctx),
        Command::Init(a) => init::run(a, ctx),
        Command::Calibrate(a) => calibrate::run(a, ctx),
        Command::Plan(a) => plan::run(a, ctx),
        Command::Explain(a) => explain::run(a, ctx),
        Command::Compare(a) => compare::run(a, ctx),
        Command::Frontier(a) => frontier::run(a, ctx),
        Command::Report(a) => report::run(a, ctx),
        Command::Sensitivity(a) => sensitivity::run(a, ctx),
        Command::Risk(a) => risk::run(a, ctx),
        Command::Cashflow(a) => cashflow::run(a, ctx),
        Command::Select(a) => select::run(a, ctx),
    }
}

/// Load the scenario named on the command line, or the built-in demo when none is (saying so).
pub fn load_scenario(
    scenario: Option<&Path>,
    ctx: Context,
) -> (Option<pavestrat::input::Run>, pavestrat::diag::Diagnostics) {
    match scenario {
        Some(p) => pavestrat::input::load(&pavestrat::input::Disk, p),
        None => {
            ctx.say("note: no --scenario given; using the built-in demo (Vellmark district, invented data)");
            pavestrat::input::load(
                &pavestrat::demo::SOURCE,
                Path::new(pavestrat::demo::SCENARIO),
            )
        }
    }
}

/// Parse a rate given as a fraction (`0.06`) or a percentage (`6%`).
pub fn parse_rate(s: &str) -> std::result::Result<f64, String> {
    let t = s.trim();
    let (num, percent) = match t.strip_suffix('%') {
        Some(n) => (n.trim(), true),
        None => (t, false),
    };
    let scale = if percent { 100.0 } else { 1.0 };
    let x: f64 = num
        .parse()
        .map_err(|_| format!("`{s}` is not a rate; write a fraction such as 0.06, or 6%"))?;
    let r = x / scale;
    if !r.is_finite() || r <= -1.0 {
        return Err(format!(
            "`{s}` is not a usable rate; expected more than -100 %"
        ));
    }
    if !percent && r > 1.0 {
        return Err(format!(
            "`{s}` would be a rate of {:.0} %; write a fraction such as 0.06, or 6%",
            r * 100.0
        ));
    }
    Ok(r)
}

/// The `--out` directory argument shared by commands.
#[derive(Debug, Clone, clap::Args)]
pub struct OutArg {
    /// Write output files into this directory (created if missing; nothing is written on error).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rates_as_fractions_or_percentages() {
        assert_eq!(parse_rate("0.06"), Ok(0.06));
        assert!((parse_rate("6%").unwrap() - 0.06).abs() < 1e-15);
        assert!((parse_rate(" 7.5 % ").unwrap() - 0.075).abs() < 1e-15);
        assert!(parse_rate("6").unwrap_err().contains("600 %"));
        assert!(parse_rate("abc").is_err());
        assert!(parse_rate("-100%").is_err());
        assert!(parse_rate("NaN").is_err());
    }

    #[test]
    fn cli_definition_is_consistent() {
        use clap::CommandFactory;
        Cli::command().debug_assert();
    }
}
