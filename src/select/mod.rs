//! Selection: choose one option per group (one strategy per section, or do/don't for an
//! independent project) so that total value is largest and no budget row is exceeded:
//!
//! ```text
//! maximise Σ value[g,k]·x[g,k]  subject to  Σ_k x[g,k] = 1 for every group g,
//! Σ use[g,k,j]·x[g,k] ≤ limit[j] for every row j,  x ∈ {0,1}.
//! ```
//!
//! [`problem`] holds it compactly with integer uses, [`network::solve`] solves it (the exact
//! 0/1 programme through good_lp is built in one place, [`network::exact`]). The caller puts a
//! zero option in any group that may be left without works.

pub mod branch;
pub mod dual;
mod moves;
pub mod network;
pub mod problem;
pub mod tree;

/// Why no plan came back.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SelectError {
    #[error("no plan meets every budget row")]
    Infeasible,
    /// An amount, or a row's total, beyond what the integer rows hold.
    #[error("{0}")]
    Range(String),
    #[error("the solver failed: {0}")]
    Solver(String),
}
