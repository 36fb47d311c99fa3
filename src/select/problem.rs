//! The network selection problem in a compact form: for every group (section) its candidates'
//! values and their sparse use of each row (budget line or condition target), stored in flat
//! arrays so that a million sections with tens of candidates each fit in memory and can be
//! scanned quickly.
//!
//! Row uses and limits are exact integers (money in cents, condition targets in a fixed-point
//! unit chosen by the caller), so a plan's use of a row is an exact sum and "fits" means exactly
//! what the user's limit says: no tolerance and no safety margin changes the problem. Prices and
//! values stay `f64`: they steer the search and bound it, but never decide feasibility.

use std::ops::Range;

/// Most candidates one group may keep after dominated ones are removed (plans store a
/// candidate's position in its group as `u16`).
pub const MAX_CANDIDATES: usize = u16::MAX as usize;

/// Largest total use any plan can put on one row, and the largest limit (in the row's units):
/// with every group's largest use summed below this, no sum, difference or exchange of uses in
/// the search can overflow an `i64`. For money rows in cents it is about 2.3·10¹⁶ money units.
pub const MAX_ROW_TOTAL: i64 = i64::MAX / 4;

/// Groups of candidates, one to be chosen per group, and row limits.
#[derive(Debug, Clone, Default)]
pub struct Problem {
    /// Limit of each row: Σ use ≤ limit, exactly.
    pub limits: Vec<i64>,
    /// Per row: Σ over the groups so far of their largest |use| (bounded by [`MAX_ROW_TOTAL`]).
    reach: Vec<i128>,
    /// Group g's candidates are `start[g]..start[g + 1]`.
    start: Vec<usize>,
    value: Vec<f64>,
    /// Candidate c's row uses are `cstart[c]..cstart[c + 1]` in `crow`/`cval`.
    cstart: Vec<usize>,
    crow: Vec<u16>,
    cval: Vec<i64>,
    /// Buffers [`Problem::push_group`] reuses from group to group (no part of the problem).
    scratch: Scratch,
}

/// [`Problem::push_group`]'s working buffers.
#[derive(Debug, Clone, Default)]
struct Scratch {
    /// Per row: its position among the group's rows, or `u16::MAX` where the group uses none.
    slot: Vec<u16>,
    touched: Vec<u16>,
    dense: Vec<i64>,
    reach: Vec<i128>,
    order: Vec<usize>,
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
    #[error("a value that is not a finite number")]
    NotFinite,
    #[error("row {0}: the uses of all groups together, or its limit, pass the largest supported total ({MAX_ROW_TOTAL} units)")]
    TooLarge(usize),
}

/// One candidate as offered to [`Problem::push_group`]: its value and its (row, use) pairs.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Offer {
    pub value: f64,
    pub uses: Vec<(u16, i64)>,
}

/// A group's candidates as [`Problem::push_group`] reads them: each one's value and its (row,
/// use) pairs.
pub trait OfferList {
    fn count(&self) -> usize;
    fn value(&self, i: usize) -> f64;
    fn uses(&self, i: usize) -> &[(u16, i64)];
}

/// Offers as a list of [`Offer`]s: a slice, an array or a vector.
impl<T: AsRef<[Offer]> + ?Sized> OfferList for T {
    fn count(&self) -> usize {
        self.as_ref().len()
    }
    fn value(&self, i: usize) -> f64 {
        self.as_ref()[i].value
    }
    fn uses(&self, i: usize) -> &[(u16, i64)] {
        &self.as_ref()[i].uses
    }
}

/// Offers kept in three flat buffers, refilled group after group without allocating.
#[derive(Debug, Clone, Default)]
pub struct Offers {
    value: Vec<f64>,
    start: Vec<usize>,
    uses: Vec<(u16, i64)>,
}

impl Offers {
    /// Empty, keeping the buffers.
    pub fn clear(&mut self) {
        self.value.clear();
        self.start.clear();
        self.uses.clear();
    }

    pub fn push(&mut self, value: f64, uses: &[(u16, i64)]) {
        self.value.push(value);
        self.start.push(self.uses.len());
        self.uses.extend_from_slice(uses);
    }

    pub fn is_empty(&self) -> bool {
        self.value.is_empty()
    }
}

impl OfferList for Offers {
    fn count(&self) -> usize {
        self.value.len()
    }
    fn value(&self, i: usize) -> f64 {
        self.value[i]
    }
    fn uses(&self, i: usize) -> &[(u16, i64)] {
        let end = self.start.get(i + 1).copied().unwrap_or(self.uses.len());
        &self.uses[self.start[i]..end]
    }
}

impl Problem {
    /// A problem with these row limits and no groups yet. A limit whose magnitude passes
    /// [`MAX_ROW_TOTAL`] is refused when the first group is pushed (see [`Problem::check_limits`]).
    pub fn new(limits: Vec<i64>) -> Problem {
        Problem {
            reach: vec![0; limits.len()],
            limits,
            start: vec![0],
            value: Vec::new(),
            cstart: vec![0],
            crow: Vec::new(),
            cval: Vec::new(),
            scratch: Scratch::default(),
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

    /// The first row whose limit is out of the supported range, if any.
    pub fn check_limits(&self) -> Result<(), ProblemError> {
        match self
            .limits
            .iter()
            .position(|l| l.unsigned_abs() > MAX_ROW_TOTAL as u64)
        {
            Some(j) => Err(ProblemError::TooLarge(j)),
            None => Ok(()),
        }
    }

    /// The limits as floats (for prices and scaling; never for feasibility).
    pub fn limits_f64(&self) -> Vec<f64> {
        self.limits.iter().map(|&l| l as f64).collect()
    }

    /// Candidate `c`'s rows and uses.
    pub fn uses(&self, c: usize) -> (&[u16], &[i64]) {
        let r = self.cstart[c]..self.cstart[c + 1];
        (&self.crow[r.clone()], &self.cval[r])
    }

    /// Candidate `c`'s use of the rows valued at `prices`: Σ_j price_j · use_j.
    pub fn priced_use(&self, c: usize, prices: &[f64]) -> f64 {
        let (rows, vals) = self.uses(c);
        rows.iter()
            .zip(vals)
            .map(|(&j, &u)| prices[j as usize] * u as f64)
            .sum()
    }

    /// Candidate `c`'s value less its priced use (its reduced value at `prices`).
    pub fn reduced(&self, c: usize, prices: &[f64]) -> f64 {
        self.value(c) - self.priced_use(c, prices)
    }

    /// Candidate `c`'s use of row `j`.
    pub fn use_of(&self, c: usize, j: usize) -> i64 {
        let (rows, vals) = self.uses(c);
        rows.iter()
            .position(|&r| r as usize == j)
            .map_or(0, |i| vals[i])
    }

    /// Add a group. Candidates that another candidate of the group dominates (at least as much
    /// value, no more use of any row, and better in one of them — or an exact duplicate of an
    /// earlier one) are dropped: no optimal plan needs them. Returns the positions, in `offers`,
    /// of the candidates kept, in their original order.
    pub fn push_group<L: OfferList + ?Sized>(
        &mut self,
        offers: &L,
    ) -> Result<Vec<usize>, ProblemError> {
        let n = offers.count();
        if n == 0 {
            return Err(ProblemError::Empty);
        }
        let rows = self.rows();
        self.check_limits()?;
        let mut sc = std::mem::take(&mut self.scratch);
        let kept = self.push_group_with(offers, n, rows, &mut sc);
        self.scratch = sc;
        kept
    }

    /// [`Problem::push_group`] with its buffers.
    fn push_group_with<L: OfferList + ?Sized>(
        &mut self,
        offers: &L,
        n: usize,
        rows: usize,
        sc: &mut Scratch,
    ) -> Result<Vec<usize>, ProblemError> {
        // The group's own rows, densely, so that dominance is a comparison of short vectors.
        sc.slot.clear();
        sc.slot.resize(rows, u16::MAX);
        let touched = &mut sc.touched;
        touched.clear();
        for i in 0..n {
            if !offers.value(i).is_finite() {
                return Err(ProblemError::NotFinite);
            }
            for &(r, u) in offers.uses(i) {
                if r as usize >= rows {
                    return Err(ProblemError::Row(r as usize));
                }
                if u.unsigned_abs() > MAX_ROW_TOTAL as u64 {
                    return Err(ProblemError::TooLarge(r as usize));
                }
                if sc.slot[r as usize] == u16::MAX {
                    sc.slot[r as usize] = 0;
                    touched.push(r);
                }
            }
        }
        touched.sort_unstable();
        for (k, &r) in touched.iter().enumerate() {
            sc.slot[r as usize] = k as u16;
        }
        let touched = &*touched;
        let w = touched.len();
        let dense = &mut sc.dense;
        dense.clear();
        dense.resize(n * w, 0);
        for i in 0..n {
            for &(r, u) in offers.uses(i) {
                let k = usize::from(sc.slot[r as usize]);
                let d = &mut dense[i * w + k];
                *d = d
                    .checked_add(u)
                    .filter(|x| x.unsigned_abs() <= MAX_ROW_TOTAL as u64)
                    .ok_or(ProblemError::TooLarge(r as usize))?;
            }
        }
        // The group's largest use of each of its rows, added to the row's reach: refused before
        // anything is stored if a row would pass the supported total.
        let reach = &mut sc.reach;
        reach.clear();
        for (k, &r) in touched.iter().enumerate() {
            let most = (0..n)
                .map(|i| dense[i * w + k].unsigned_abs())
                .max()
                .unwrap_or(0);
            let total = self.reach[r as usize] + most as i128;
            if total > MAX_ROW_TOTAL as i128 {
                return Err(ProblemError::TooLarge(r as usize));
            }
            reach.push(total);
        }
        for (k, &r) in touched.iter().enumerate() {
            self.reach[r as usize] = reach[k];
        }
        // Highest value first (ties: original order), then each is kept unless an earlier kept
        // one dominates it.
        let order = &mut sc.order;
        order.clear();
        order.extend(0..n);
        order.sort_by(|&a, &b| offers.value(b).total_cmp(&offers.value(a)).then(a.cmp(&b)));
        let mut kept: Vec<usize> = Vec::new();
        for &i in order.iter() {
            let row_i = &dense[i * w..(i + 1) * w];
            let dominated = kept.iter().any(|&k| {
                let row_k = &dense[k * w..(k + 1) * w];
                offers.value(k) >= offers.value(i) && row_k.iter().zip(row_i).all(|(a, b)| a <= b)
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
            self.value.push(offers.value(i));
            for (k, &r) in touched.iter().enumerate() {
                let u = dense[i * w + k];
                if u != 0 {
                    self.crow.push(r);
                    self.cval.push(u);
                }
            }
            self.cstart.push(self.cval.len());
        }
        self.start.push(self.value.len());
        Ok(kept)
    }

    /// Rows used by a plan (one candidate position per group): exact sums, which cannot
    /// overflow (see [`MAX_ROW_TOTAL`]).
    pub fn plan_use(&self, plan: &[u16]) -> Vec<i64> {
        let mut used = vec![0i64; self.rows()];
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

    /// Add `other`'s groups after this problem's (same rows). Fails, leaving this problem as
    /// it was, when a row's total reach would pass [`MAX_ROW_TOTAL`].
    pub fn append(&mut self, other: Problem) -> Result<(), ProblemError> {
        for (j, (a, b)) in self.reach.iter().zip(&other.reach).enumerate() {
            if a + b > MAX_ROW_TOTAL as i128 {
                return Err(ProblemError::TooLarge(j));
            }
        }
        for (a, b) in self.reach.iter_mut().zip(&other.reach) {
            *a += b;
        }
        let (nv, ne) = (self.value.len(), self.cval.len());
        self.start.extend(other.start[1..].iter().map(|s| s + nv));
        self.cstart.extend(other.cstart[1..].iter().map(|s| s + ne));
        self.value.extend(other.value);
        self.crow.extend(other.crow);
        self.cval.extend(other.cval);
        Ok(())
    }

    /// A problem made of some groups only, with other limits (for solving a contested part
    /// exactly).
    pub fn subset(&self, groups: &[usize], limits: Vec<i64>) -> Problem {
        let mut p = Problem::new(limits);
        // A part of the groups reaches no further than the whole.
        p.reach.clone_from(&self.reach);
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
impl Problem {
    /// A problem from dense groups, for tests: each candidate's value and its use of every row
    /// (zero uses left out), pushed group by group.
    pub(crate) fn from_dense(groups: &[Vec<(f64, Vec<i64>)>], limits: &[i64]) -> Problem {
        let mut p = Problem::new(limits.to_vec());
        for g in groups {
            let offers: Vec<Offer> = g
                .iter()
                .map(|(v, u)| Offer {
                    value: *v,
                    uses: u
                        .iter()
                        .enumerate()
                        .filter(|(_, &x)| x != 0)
                        .map(|(j, &x)| (j as u16, x))
                        .collect(),
                })
                .collect();
            p.push_group(&offers).unwrap();
        }
        p
    }
}

#[cfg(test)]
#[allow(clippy::float_cmp)]
mod tests {
    use super::*;

    fn offer(value: f64, uses: &[(u16, i64)]) -> Offer {
        Offer {
            value,
            uses: uses.to_vec(),
        }
    }

    #[test]
    fn dominated_candidates_are_dropped_and_the_rest_kept_in_order() {
        let mut p = Problem::new(vec![100, 100]);
        let kept = p
            .push_group(&[
                offer(0.0, &[]),
                offer(5.0, &[(0, 30)]),
                offer(4.0, &[(0, 30)]), // less value, same use: dominated
                offer(6.0, &[(0, 20), (1, 10)]), // more value but uses row 1: kept
                offer(5.0, &[(0, 30)]), // duplicate of the second: dropped
                offer(-1.0, &[(1, 5)]), // the first does better for nothing
            ])
            .unwrap();
        assert_eq!(kept, vec![0, 1, 3]);
        assert_eq!(p.candidate_count(), 3);
        assert_eq!(p.use_of(2, 0), 20);
        assert_eq!(p.use_of(2, 1), 10);
        assert_eq!(p.use_of(0, 1), 0);
        assert_eq!(p.plan_use(&[2]), vec![20, 10]);
        assert_eq!(p.plan_value(&[1]), 5.0);
    }

    #[test]
    fn bad_groups_are_errors() {
        let mut p = Problem::new(vec![1]);
        assert_eq!(p.push_group(&[]), Err(ProblemError::Empty));
        assert_eq!(
            p.push_group(&[offer(1.0, &[(3, 1)])]),
            Err(ProblemError::Row(3))
        );
        assert_eq!(
            p.push_group(&[offer(f64::NAN, &[])]),
            Err(ProblemError::NotFinite)
        );
        assert_eq!(p.groups(), 0);
    }

    #[test]
    fn totals_that_could_overflow_are_refused_before_anything_is_stored() {
        let mut p = Problem::new(vec![1]);
        let half = MAX_ROW_TOTAL / 2 + 1;
        p.push_group(&[offer(1.0, &[(0, half)])]).unwrap();
        assert_eq!(
            p.push_group(&[offer(1.0, &[(0, half)])]),
            Err(ProblemError::TooLarge(0))
        );
        assert_eq!(p.groups(), 1);
        assert_eq!(
            p.push_group(&[offer(1.0, &[(0, i64::MAX), (0, i64::MAX)])]),
            Err(ProblemError::TooLarge(0))
        );
        let mut q = Problem::new(vec![i64::MAX]);
        assert_eq!(
            q.push_group(&[offer(1.0, &[])]),
            Err(ProblemError::TooLarge(0))
        );
    }
}
