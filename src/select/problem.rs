//! The network selection problem in a compact form: for every group (section) its candidates'
//! values and their sparse use of each row (budget line or condition target), stored in flat
//! arrays so that a million sections with tens of candidates each fit in memory and can be
//! scanned quickly.

use std::ops::Range;

/// Most candidates one group may keep after dominated ones are removed (plans store a
/// candidate's position in its group as `u16`).
pub const MAX_CANDIDATES: usize = u16::MAX as usize;

/// Groups of candidates, one to be chosen per group, and row limits.
#[derive(Debug, Clone, Default)]
pub struct Problem {
    /// Limit of each row: Σ use ≤ limit.
    pub limits: Vec<f64>,
    /// Group g's candidates are `start[g]..start[g + 1]`.
    start: Vec<usize>,
    value: Vec<f64>,
    /// Candidate c's row uses are `cstart[c]..cstart[c + 1]` in `crow`/`cval`.
    cstart: Vec<usize>,
    crow: Vec<u16>,
    cval: Vec<f64>,
}

/// Why a group cannot be added.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ProblemError {
    #[error("a group with no candidates")]
    Empty,
    #[error("a group with {0} candidates after dominated ones were removed; at most {MAX_CANDIDATES} are supported")]
    TooMany(usize),
    #[error("row {0} does not exist")]
    Row(usize),
    #[error("a value or use that is not a finite number")]
    NotFinite,
}

/// One candidate as offered to [`Problem::push_group`]: its value and its (row, use) pairs.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Offer {
    pub value: f64,
    pub uses: Vec<(u16, f64)>,
}

impl Problem {
    pub fn new(limits: Vec<f64>) -> Problem {
        Problem {
            limits,
            start: vec![0],
            value: Vec::new(),
            cstart: vec![0],
            crow: Vec::new(),
            cval: Vec::new(),
        }
    }

    pub fn rows(&self) -> usize {
        self.limits.len()
    }

    pub fn groups(&self) -> usize {
        self.start.len() - 1
    }

    pub fn candidate_count(&self) -> usize {
        self.value.len()
    }

    /// Number of stored (row, use) entries.
    pub fn entries(&self) -> usize {
        self.cval.len()
    }

    /// The candidates (global indices) of group `g`.
    pub fn candidates(&self, g: usize) -> Range<usize> {
        self.start[g]..self.start[g + 1]
    }

    pub fn value(&self, c: usize) -> f64 {
        self.value[c]
    }

    /// Candidate `c`'s rows and uses.
    pub fn uses(&self, c: usize) -> (&[u16], &[f64]) {
        let r = self.cstart[c]..self.cstart[c + 1];
        (&self.crow[r.clone()], &self.cval[r])
    }

    /// Candidate `c`'s use of the rows valued at `prices`: Σ_j price_j · use_j.
    pub fn priced_use(&self, c: usize, prices: &[f64]) -> f64 {
        let (rows, vals) = self.uses(c);
        rows.iter()
            .zip(vals)
            .map(|(&j, &u)| prices[j as usize] * u)
            .sum()
    }

    /// Candidate `c`'s value less its priced use (its reduced value at `prices`).
    pub fn reduced(&self, c: usize, prices: &[f64]) -> f64 {
        self.value(c) - self.priced_use(c, prices)
    }

    /// Candidate `c`'s use of row `j`.
    pub fn use_of(&self, c: usize, j: usize) -> f64 {
        let (rows, vals) = self.uses(c);
        rows.iter()
            .position(|&r| r as usize == j)
            .map_or(0.0, |i| vals[i])
    }

    /// Add a group. Candidates that another candidate of the group dominates (at least as much
    /// value, no more use of any row, and better in one of them — or an exact duplicate of an
    /// earlier one) are dropped: no optimal plan needs them. Returns the positions, in `offers`,
    /// of the candidates kept, in their original order.
    pub fn push_group(&mut self, offers: &[Offer]) -> Result<Vec<usize>, ProblemError> {
        if offers.is_empty() {
            return Err(ProblemError::Empty);
        }
        let rows = self.rows();
        // The group's own rows, densely, so that dominance is a comparison of short vectors.
        let mut touched: Vec<u16> = Vec::new();
        for o in offers {
            if !o.value.is_finite() {
                return Err(ProblemError::NotFinite);
            }
            for &(r, u) in &o.uses {
                if r as usize >= rows {
                    return Err(ProblemError::Row(r as usize));
                }
                if !u.is_finite() {
                    return Err(ProblemError::NotFinite);
                }
                if !touched.contains(&r) {
                    touched.push(r);
                }
            }
        }
        touched.sort_unstable();
        let w = touched.len();
        let mut dense = vec![0.0; offers.len() * w];
        for (i, o) in offers.iter().enumerate() {
            for &(r, u) in &o.uses {
                let k = touched.binary_search(&r).unwrap_or(0);
                dense[i * w + k] += u;
            }
        }
        // Highest value first (ties: original order), then each is kept unless an earlier kept
        // one dominates it.
        let mut order: Vec<usize> = (0..offers.len()).collect();
        order.sort_by(|&a, &b| offers[b].value.total_cmp(&offers[a].value).then(a.cmp(&b)));
        let mut kept: Vec<usize> = Vec::new();
        for &i in &order {
            let row_i = &dense[i * w..(i + 1) * w];
            let dominated = kept.iter().any(|&k| {
                let row_k = &dense[k * w..(k + 1) * w];
                offers[k].value >= offers[i].value && row_k.iter().zip(row_i).all(|(a, b)| a <= b)
            });
            if !dominated {
                kept.push(i);
            }
        }
        if kept.len() > MAX_CANDIDATES {
            return Err(ProblemError::TooMany(kept.len()));
        }
        kept.sort_unstable();
        for &i in &kept {
            self.value.push(offers[i].value);
            for (k, &r) in touched.iter().enumerate() {
                let u = dense[i * w + k];
                if u != 0.0 {
                    self.crow.push(r);
                    self.cval.push(u);
                }
            }
            self.cstart.push(self.cval.len());
        }
        self.start.push(self.value.len());
        Ok(kept)
    }

    /// Rows used by a plan (one candidate position per group), summed in group order.
    pub fn plan_use(&self, plan: &[u16]) -> Vec<f64> {
        let mut used = vec![0.0; self.rows()];
        for (g, &k) in plan.iter().enumerate() {
            let c = self.start[g] + k as usize;
            let (rows, vals) = self.uses(c);
            for (&r, &v) in rows.iter().zip(vals) {
                used[r as usize] += v;
            }
        }
        used
    }

    /// Total value of a plan, summed in group order.
    pub fn plan_value(&self, plan: &[u16]) -> f64 {
        plan.iter()
            .enumerate()
            .map(|(g, &k)| self.value[self.start[g] + k as usize])
            .sum()
    }

    /// The global index of position `k` in group `g`.
    pub fn global(&self, g: usize, k: u16) -> usize {
        self.start[g] + k as usize
    }

    /// Add `other`'s groups after this problem's (same rows).
    pub fn append(&mut self, other: Problem) {
        let (nv, ne) = (self.value.len(), self.cval.len());
        self.start.extend(other.start[1..].iter().map(|s| s + nv));
        self.cstart.extend(other.cstart[1..].iter().map(|s| s + ne));
        self.value.extend(other.value);
        self.crow.extend(other.crow);
        self.cval.extend(other.cval);
    }

    /// A problem made of some groups only, with other limits (for solving a contested part
    /// exactly).
    pub fn subset(&self, groups: &[usize], limits: Vec<f64>) -> Problem {
        let mut p = Problem::new(limits);
        for &g in groups {
            for c in self.candidates(g) {
                p.value.push(self.value[c]);
                let (rows, vals) = self.uses(c);
                p.crow.extend_from_slice(rows);
                p.cval.extend_from_slice(vals);
                p.cstart.push(p.cval.len());
            }
            p.start.push(p.value.len());
        }
        p
    }
}

#[cfg(test)]
#[allow(clippy::float_cmp)]
mod tests {
    use super::*;

    fn offer(value: f64, uses: &[(u16, f64)]) -> Offer {
        Offer {
            value,
            uses: uses.to_vec(),
        }
    }

    #[test]
    fn dominated_candidates_are_dropped_and_the_rest_kept_in_order() {
        let mut p = Problem::new(vec![10.0, 10.0]);
        let kept = p
            .push_group(&[
                offer(0.0, &[]),
                offer(5.0, &[(0, 3.0)]),
                offer(4.0, &[(0, 3.0)]), // less value, same use: dominated
                offer(6.0, &[(0, 2.0), (1, 1.0)]), // more value but uses row 1: kept
                offer(5.0, &[(0, 3.0)]), // duplicate of the second: dropped
                offer(-1.0, &[(1, 0.5)]), // the first does better for nothing
            ])
            .unwrap();
        assert_eq!(kept, vec![0, 1, 3]);
        assert_eq!(p.candidate_count(), 3);
        assert_eq!(p.use_of(2, 0), 2.0);
        assert_eq!(p.use_of(2, 1), 1.0);
        assert_eq!(p.use_of(0, 1), 0.0);
        assert_eq!(p.plan_use(&[2]), vec![2.0, 1.0]);
        assert_eq!(p.plan_value(&[1]), 5.0);
    }

    #[test]
    fn bad_groups_are_errors() {
        let mut p = Problem::new(vec![1.0]);
        assert_eq!(p.push_group(&[]), Err(ProblemError::Empty));
        assert_eq!(
            p.push_group(&[offer(1.0, &[(3, 1.0)])]),
            Err(ProblemError::Row(3))
        );
        assert_eq!(
            p.push_group(&[offer(f64::NAN, &[])]),
            Err(ProblemError::NotFinite)
        );
        assert_eq!(p.groups(), 0);
    }
}
