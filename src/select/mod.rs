//! Selection: choose one option per group (one strategy per section, or do/don't for an
//! independent project) so that total value is largest and no budget row is exceeded.
//!
//! This module holds the exact formulation, a 0/1 programme solved through good_lp, generic over
//! the solver so that the pure-Rust backend (default) and HiGHS (`highs` feature) share one model
//! builder:
//!
//! ```text
//! maximise Σ value[g,k]·x[g,k]  subject to  Σ_k x[g,k] = 1 for every group g,
//! Σ cost[g,k,j]·x[g,k] ≤ limit[j] for every row j,  x ∈ {0,1}.
//! ```
//!
//! The caller puts a zero option in any group that may be left without works.

pub mod branch;
pub mod dual;
pub mod network;
pub mod problem;

use good_lp::{
    constraint, variable, Expression, ResolutionError, Solution, SolutionStatus, Solver,
    SolverModel, Variable,
};

/// One option of a group: its value and its use of each budget row.
#[derive(Debug, Clone, PartialEq)]
pub struct Choice {
    pub value: f64,
    pub costs: Vec<f64>,
}

/// The chosen option of every group and the plan's value.
#[derive(Debug, Clone, PartialEq)]
pub struct Selection {
    /// Index of the chosen option in each group.
    pub chosen: Vec<usize>,
    pub value: f64,
    /// `true` when the solver proved the plan optimal.
    pub proven_optimal: bool,
}

/// Why no plan came back.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SelectError {
    #[error("no plan meets every budget row")]
    Infeasible,
    #[error("group {group} has no options")]
    EmptyGroup { group: usize },
    #[error("option {option} of group {group} has {found} costs; expected one per budget row ({expected})")]
    RowCount {
        group: usize,
        option: usize,
        found: usize,
        expected: usize,
    },
    #[error("the solver failed: {0}")]
    Solver(String),
}

/// Name of the solver [`solve_default`] uses in this build.
pub fn default_solver_name() -> &'static str {
    if cfg!(feature = "highs") {
        "HiGHS"
    } else {
        "microlp (pure Rust)"
    }
}

/// Solve exactly with this build's solver: HiGHS with the `highs` feature, else microlp.
pub fn solve_default(groups: &[Vec<Choice>], limits: &[f64]) -> Result<Selection, SelectError> {
    #[cfg(feature = "highs")]
    {
        solve_exact(good_lp::highs, groups, limits)
    }
    #[cfg(not(feature = "highs"))]
    {
        solve_exact(good_lp::microlp, groups, limits)
    }
}

/// Solve the selection exactly with `solver` (for example `good_lp::microlp`).
pub fn solve_exact<S: Solver>(
    solver: S,
    groups: &[Vec<Choice>],
    limits: &[f64],
) -> Result<Selection, SelectError>
where
    <S::Model as SolverModel>::Error: Into<ResolutionError>,
{
    for (g, opts) in groups.iter().enumerate() {
        if opts.is_empty() {
            return Err(SelectError::EmptyGroup { group: g });
        }
        for (k, o) in opts.iter().enumerate() {
            if o.costs.len() != limits.len() {
                return Err(SelectError::RowCount {
                    group: g,
                    option: k,
                    found: o.costs.len(),
                    expected: limits.len(),
                });
            }
        }
    }
    let mut vars = good_lp::ProblemVariables::new();
    let x: Vec<Vec<Variable>> = groups
        .iter()
        .map(|opts| opts.iter().map(|_| vars.add(variable().binary())).collect())
        .collect();
    let mut objective = Expression::from(0.0);
    for (opts, xs) in groups.iter().zip(&x) {
        for (o, v) in opts.iter().zip(xs) {
            objective.add_mul(o.value, *v);
        }
    }
    let mut model = vars.maximise(objective).using(solver);
    for xs in &x {
        let one: Expression = xs.iter().copied().sum();
        model = model.with(constraint!(one == 1.0));
    }
    for (j, limit) in limits.iter().enumerate() {
        let mut row = Expression::from(0.0);
        for (opts, xs) in groups.iter().zip(&x) {
            for (o, v) in opts.iter().zip(xs) {
                if o.costs[j] != 0.0 {
                    row.add_mul(o.costs[j], *v);
                }
            }
        }
        model = model.with(constraint!(row <= *limit));
    }
    let solution = model.solve().map_err(|e| match e.into() {
        ResolutionError::Infeasible => SelectError::Infeasible,
        other => SelectError::Solver(other.to_string()),
    })?;
    let proven_optimal = matches!(solution.status(), SolutionStatus::Optimal);
    let chosen: Vec<usize> = x
        .iter()
        .map(|xs| {
            xs.iter()
                .enumerate()
                .max_by(|a, b| solution.value(*a.1).total_cmp(&solution.value(*b.1)))
                .map_or(0, |(k, _)| k)
        })
        .collect();
    let value = groups.iter().zip(&chosen).map(|(o, &k)| o[k].value).sum();
    Ok(Selection {
        chosen,
        value,
        proven_optimal,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn opt(value: f64, costs: &[f64]) -> Choice {
        Choice {
            value,
            costs: costs.to_vec(),
        }
    }

    #[test]
    fn picks_one_option_per_group_within_two_rows() {
        // Brute force over 3 × 3 combinations confirms the optimum (2, 1, 0) = 9 + 4 + 0 = 13.
        let groups = vec![
            vec![
                opt(0.0, &[0.0, 0.0]),
                opt(5.0, &[3.0, 0.0]),
                opt(9.0, &[6.0, 2.0]),
            ],
            vec![
                opt(0.0, &[0.0, 0.0]),
                opt(4.0, &[1.0, 1.0]),
                opt(7.0, &[4.0, 1.0]),
            ],
            vec![
                opt(0.0, &[0.0, 0.0]),
                opt(3.0, &[2.0, 2.0]),
                opt(6.0, &[5.0, 0.0]),
            ],
        ];
        let limits = [7.0, 3.0];
        let mut best = f64::MIN;
        for a in 0..3 {
            for b in 0..3 {
                for c in 0..3 {
                    let pick = [&groups[0][a], &groups[1][b], &groups[2][c]];
                    let fits =
                        (0..2).all(|j| pick.iter().map(|o| o.costs[j]).sum::<f64>() <= limits[j]);
                    if fits {
                        best = best.max(pick.iter().map(|o| o.value).sum());
                    }
                }
            }
        }
        let s = solve_exact(good_lp::microlp, &groups, &limits).unwrap();
        assert!(
            (s.value - best).abs() < 1e-9,
            "{} vs brute force {best}",
            s.value
        );
        assert_eq!(s.chosen, vec![2, 1, 0]);
    }

    #[test]
    fn infeasible_rows_are_reported() {
        let groups = vec![vec![opt(1.0, &[2.0])]];
        assert_eq!(
            solve_exact(good_lp::microlp, &groups, &[1.0]),
            Err(SelectError::Infeasible)
        );
        assert_eq!(solve_default(&groups, &[1.0]), Err(SelectError::Infeasible));
    }

    #[test]
    fn malformed_input_is_an_error_not_a_panic() {
        assert_eq!(
            solve_exact(good_lp::microlp, &[vec![]], &[1.0]),
            Err(SelectError::EmptyGroup { group: 0 })
        );
        assert!(matches!(
            solve_exact(good_lp::microlp, &[vec![opt(1.0, &[])]], &[1.0]),
            Err(SelectError::RowCount { .. })
        ));
    }
}
