//! The errors a run can end with, and the exit code each one means.
//!
//! Exit codes (documented in the README and `--help`): 0 success; 1 internal fault (a bug, or the
//! machine refused to write an output); 2 bad input (every finding listed, with its place);
//! 3 no feasible plan (reserved for selection).

use crate::diag::Diagnostics;
use std::path::PathBuf;

/// Exit code of a successful run.
pub const EXIT_OK: u8 = 0;
/// Exit code of an internal fault.
pub const EXIT_INTERNAL: u8 = 1;
/// Exit code of a run stopped by bad input.
pub const EXIT_BAD_INPUT: u8 = 2;
/// Exit code of a selection with no feasible plan.
pub const EXIT_INFEASIBLE: u8 = 3;

/// Why a run stopped.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// The inputs have problems; every finding is listed (notes included, for context).
    #[error("{}", render_input(.0))]
    Input(Diagnostics),
    /// A command-line value that cannot be used.
    #[error("{0}")]
    Usage(String),
    /// An output could not be written.
    #[error("cannot write {}: {source}", path.display())]
    Write {
        path: PathBuf,
        source: std::io::Error,
    },
    /// No plan meets the budget lines, targets and commitments.
    #[error("no feasible plan: {0}")]
    Infeasible(NoPlan),
    /// A fault of the tool itself.
    #[error("internal fault: {0}")]
    Internal(String),
}

/// Why no plan meets the lines: the kind of impossibility and the lines it names (when the
/// selection knows them), with the whole message.
#[derive(Debug, Clone, PartialEq)]
pub struct NoPlan {
    pub kind: Option<NoPlanKind>,
    /// The lines named, in the message's order.
    pub lines: Vec<String>,
    pub text: String,
}

/// The kinds of impossibility, from the surest.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoPlanKind {
    /// A line no plan can meet even with every section at its least spending.
    LeastSpending,
    /// Lines each met alone that a complete search proved cannot be met together.
    ProvenTogether,
    /// Lines no plan found within the time limit meets, not proven impossible.
    NotFound,
}

impl NoPlan {
    /// A message with no kind or lines known.
    pub fn text(text: impl Into<String>) -> NoPlan {
        NoPlan {
            kind: None,
            lines: Vec::new(),
            text: text.into(),
        }
    }

    /// The same, with `before` ahead of the message (which side of a comparison, say).
    pub fn prefixed(self, before: &str) -> NoPlan {
        NoPlan {
            text: format!("{before}{}", self.text),
            ..self
        }
    }
}

impl std::fmt::Display for NoPlan {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.text)
    }
}

fn render_input(d: &Diagnostics) -> String {
    format!("{d}{}", d.problem_line())
}

impl Error {
    /// The process exit code for this error.
    pub fn exit_code(&self) -> u8 {
        match self {
            Error::Input(_) | Error::Usage(_) => EXIT_BAD_INPUT,
            Error::Infeasible(_) => EXIT_INFEASIBLE,
            Error::Write { .. } | Error::Internal(_) => EXIT_INTERNAL,
        }
    }
}

/// Result of a library call that can stop a run.
pub type Result<T, E = Error> = std::result::Result<T, E>;
