//! Analyses of a plan held fixed, after selection: the varied inputs and their ranges
//! ([`vary`]), the distributions of uncertain inputs ([`distribution`]), a plan held fixed
//! ([`held`]), one-at-a-time tests and switching values ([`sensitivity`]), Monte Carlo draws
//! ([`risk`]), budget levels re-selected on one set of candidates ([`frontier`]), and why a
//! section got its strategy in a written plan ([`explain`]); two written plans side by side
//! ([`compare`]).

pub mod compare;
pub mod distribution;
pub mod explain;
pub mod frontier;
pub mod held;
pub mod risk;
pub mod sensitivity;
pub mod sobol;
pub mod vary;
