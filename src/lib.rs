//! pavestrat: decide what pavement work each road section gets and when, by simulating each
//! section's condition, traffic and costs over a life cycle, appraising every timing strategy
//! against the base case, and choosing the best strategy per section within yearly budgets.
//!
//! The library follows the data one way: [`input`] reads and validates every file into one
//! resolved [`input::Run`]; [`enumerate`] expands the strategy templates per section;
//! [`simulate`] plays each strategy year by year; [`appraise`] weighs each against the base with
//! the arithmetic of [`economics`]; [`select`] chooses under budgets. The command line (one
//! module per subcommand, its arguments, terminal output and progress bars) is the binary's own:
//! the library takes no arguments and draws nothing.
//!
//! All results are planning-level estimates: see [`CAUTION`].

#![deny(clippy::float_cmp)]

/// Write to standard error without ever panicking: a closed pipe (`2>&1 | head`) drops the text
/// and the run goes on to its usual exit code. Use it instead of `eprintln!`/`eprint!`.
#[macro_export]
macro_rules! err_line {
    ($($t:tt)*) => {{
        use ::std::io::Write as _;
        let _ = ::std::writeln!(::std::io::stderr(), $($t)*);
    }};
}

/// [`err_line!`] without the line end.
#[macro_export]
macro_rules! err_text {
    ($($t:tt)*) => {{
        use ::std::io::Write as _;
        let _ = ::std::write!(::std::io::stderr(), $($t)*);
    }};
}

pub mod analysis;
pub mod appraise;
pub mod calibrate;
pub mod debug;
pub mod demo;
pub mod diag;
pub mod economics;
pub mod enumerate;
pub mod error;
pub mod evaluate;
pub mod input;
pub mod io;
pub mod model;
pub mod notice;
pub mod output;
pub mod plan;
pub mod progress;
pub mod resources;
pub mod schema;
pub mod select;
pub mod simulate;
pub mod stats;
pub mod text;

/// The caution printed by `--help`, by every report and in the README.
pub const CAUTION: &str = "Planning-level estimates only. Pavement designs, safety decisions and \
cost data must follow local standards and be reviewed and signed by a licensed engineer.";
