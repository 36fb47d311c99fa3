//! The economics core: discounting, present values and the appraisal indicators every later stage
//! reports (NPV, BCR, IRR, MIRR, FYRR), and the incremental analysis of mutually exclusive
//! alternatives.
//!
//! Conventions, fixed here once for the whole tool:
//! - Time is counted in whole years from the **base year** `y0`. Under the **end-of-year**
//!   convention (the default) a flow in year `y` is discounted by (1+r)^(y−y0): base-year flows are
//!   not discounted, like numpy-financial's `npv` and unlike a spreadsheet's `NPV()`, which
//!   discounts its first value one period. A year before the base year is compounded forward.
//! - Under the **mid-year** convention each year's flows fall half-way through the year, half a
//!   year earlier than under end-of-year: the factor is (1+r)^−(y−y0−½).
//! - Money arrives as exact decimals ([`crate::model::money::Money`]) and is turned into `f64` before
//!   discounting; sums run in a fixed order so that a result never depends on thread count.
//! - BCR = PV(benefits) / PV(costs), undefined when PV(costs) ≤ 0.
//! - FYRR = the first full year's net benefit ÷ the capital cost, both undiscounted (common
//!   practice; definition from memory).

pub mod alternatives;
pub mod budget;
pub mod incremental;
pub mod irr;
#[cfg(test)]
mod properties;

pub use irr::{irr, Irr};

use crate::model::Year;
use std::fmt;

/// When within a year its flows are taken to occur.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Timing {
    /// All of a year's flows at its end (the usual appraisal convention).
    #[default]
    EndOfYear,
    /// A year's flows spread through it, taken at its middle.
    MidYear,
}

impl Timing {
    /// The name used in files and on the command line.
    pub fn name(self) -> &'static str {
        match self {
            Timing::EndOfYear => "end-of-year",
            Timing::MidYear => "mid-year",
        }
    }

    /// Parse `end-of-year` or `mid-year`, in any case.
    pub fn parse(s: &str) -> Option<Timing> {
        [Timing::EndOfYear, Timing::MidYear]
            .into_iter()
            .find(|t| t.name().eq_ignore_ascii_case(s))
    }
}

impl fmt::Display for Timing {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A real discount rate, base year and timing convention: everything needed to bring a flow in
/// any year to present value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Discounting {
    rate: f64,
    base_year: Year,
    timing: Timing,
    /// [`Discounting::factor`] of the base year, taken once: most streams start there.
    at_base: f64,
}

/// Why a discount rate cannot be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum RateError {
    #[error("the rate {0} is not a finite number")]
    NotFinite(f64),
    #[error("the rate {0} is at or below -100 %")]
    TooLow(f64),
}

impl Discounting {
    /// A discounting rule; the rate is a fraction (0.06 for 6 %) above −1.
    pub fn new(rate: f64, base_year: Year, timing: Timing) -> Result<Discounting, RateError> {
        if !rate.is_finite() {
            return Err(RateError::NotFinite(rate));
        }
        if rate <= -1.0 {
            return Err(RateError::TooLow(rate));
        }
        let mut d = Discounting {
            rate,
            base_year,
            timing,
            at_base: 1.0,
        };
        d.at_base = d.factor(base_year);
        Ok(d)
    }

    pub fn rate(&self) -> f64 {
        self.rate
    }

    pub fn base_year(&self) -> Year {
        self.base_year
    }

    pub fn timing(&self) -> Timing {
        self.timing
    }

    /// The same rule at another rate.
    pub fn with_rate(&self, rate: f64) -> Result<Discounting, RateError> {
        Discounting::new(rate, self.base_year, self.timing)
    }

    /// The discount factor of a flow in `year`: (1+r)^−(year − base_year [− ½ mid-year]).
    pub fn factor(&self, year: Year) -> f64 {
        let t = (year - self.base_year) as f64;
        let t = match self.timing {
            Timing::EndOfYear => t,
            Timing::MidYear => t - 0.5,
        };
        (1.0 + self.rate).powf(-t)
    }

    /// The factor that moves an amount at the end of the period (time n) into the year-after
    /// slot of a yearly stream: 1 at end-of-year timing (that slot is time n), (1+r)^−½ at
    /// mid-year timing (that slot is discounted as time n − ½).
    pub fn end_shift(&self) -> f64 {
        match self.timing {
            Timing::EndOfYear => 1.0,
            Timing::MidYear => (1.0 + self.rate).powf(-0.5),
        }
    }

    /// The discount factor of an amount at the end of the period `years` after the base year
    /// (a point in time, not a year's flows: the same under either timing).
    pub fn end_factor(&self, years: u32) -> f64 {
        (1.0 + self.rate).powf(-f64::from(years))
    }

    /// Present value of `values`, one a year starting in `first_year`, summed in year order.
    pub fn pv(&self, first_year: Year, values: &[f64]) -> f64 {
        self.pv_of(first_year, values.iter().copied())
    }

    /// [`Discounting::pv`] of values computed as they are summed (no stream is built): the
    /// same arithmetic in the same order.
    pub fn pv_of(&self, first_year: Year, values: impl IntoIterator<Item = f64>) -> f64 {
        // Factors by repeated division keep the sum cheap; one powf for the first year.
        let step = 1.0 / (1.0 + self.rate);
        let mut f = if first_year == self.base_year {
            self.at_base
        } else {
            self.factor(first_year)
        };
        let mut sum = 0.0;
        for v in values {
            sum += v * f;
            f *= step;
        }
        sum
    }
}

/// (P/F, i, n): present worth of one unit n years ahead.
pub fn present_worth_factor(i: f64, n: u32) -> f64 {
    (1.0 + i).powf(-f64::from(n))
}

/// (P/A, i, n): present worth of one unit a year for n years (end-of-year), = (1 − (1+i)^−n)/i.
pub fn series_present_worth_factor(i: f64, n: u32) -> f64 {
    if i.abs() < 1e-12 {
        return f64::from(n);
    }
    (1.0 - (1.0 + i).powf(-f64::from(n))) / i
}

/// (A/P, i, n): the capital recovery factor, the inverse of (P/A, i, n).
pub fn capital_recovery_factor(i: f64, n: u32) -> f64 {
    1.0 / series_present_worth_factor(i, n)
}

/// Yearly benefit and cost flows, one entry a year from `first_year` (years without a flow hold 0).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Stream {
    pub first_year: Year,
    pub benefits: Vec<f64>,
    pub costs: Vec<f64>,
}

impl Stream {
    /// A stream from (year, benefit, cost) rows in any order; rows of the same year add up.
    pub fn from_rows(rows: &[(Year, f64, f64)]) -> Stream {
        let Some(first) = rows.iter().map(|r| r.0).min() else {
            return Stream::default();
        };
        let last = rows.iter().map(|r| r.0).max().unwrap_or(first);
        let n = usize::try_from(last - first + 1).unwrap_or(0);
        let mut s = Stream {
            first_year: first,
            benefits: vec![0.0; n],
            costs: vec![0.0; n],
        };
        for &(y, b, c) in rows {
            let i = (y - first) as usize;
            s.benefits[i] += b;
            s.costs[i] += c;
        }
        s
    }

    /// Number of years covered.
    pub fn len(&self) -> usize {
        self.benefits.len()
    }

    pub fn is_empty(&self) -> bool {
        self.benefits.is_empty()
    }

    /// The last year covered.
    pub fn last_year(&self) -> Year {
        Year(self.first_year.0 + self.len() as i32 - 1)
    }

    /// Net flow (benefit − cost) of each year.
    pub fn net(&self) -> Vec<f64> {
        self.benefits
            .iter()
            .zip(&self.costs)
            .map(|(b, c)| b - c)
            .collect()
    }

    /// The same stream stretched to cover `first..=last` (zeros added); years outside are kept.
    pub fn padded(&self, first: Year, last: Year) -> Stream {
        let lo = first.min(self.first_year);
        let hi = if self.is_empty() {
            last
        } else {
            last.max(self.last_year())
        };
        let n = (hi - lo + 1).max(0) as usize;
        let mut s = Stream {
            first_year: lo,
            benefits: vec![0.0; n],
            costs: vec![0.0; n],
        };
        let off = (self.first_year - lo) as usize;
        for i in 0..self.len() {
            s.benefits[off + i] = self.benefits[i];
            s.costs[off + i] = self.costs[i];
        }
        s
    }

    /// `self − other`, year by year, over the union of their years: the increment of one
    /// alternative over another.
    pub fn minus(&self, other: &Stream) -> Stream {
        if self.is_empty() {
            return other.negated();
        }
        if other.is_empty() {
            return self.clone();
        }
        let lo = self.first_year.min(other.first_year);
        let hi = self.last_year().max(other.last_year());
        let a = self.padded(lo, hi);
        let b = other.padded(lo, hi);
        Stream {
            first_year: lo,
            benefits: a
                .benefits
                .iter()
                .zip(&b.benefits)
                .map(|(x, y)| x - y)
                .collect(),
            costs: a.costs.iter().zip(&b.costs).map(|(x, y)| x - y).collect(),
        }
    }

    fn negated(&self) -> Stream {
        Stream {
            first_year: self.first_year,
            benefits: self.benefits.iter().map(|v| -v).collect(),
            costs: self.costs.iter().map(|v| -v).collect(),
        }
    }
}

/// The appraisal indicators of one stream.
#[derive(Debug, Clone, PartialEq)]
pub struct Indicators {
    pub pv_benefits: f64,
    pub pv_costs: f64,
    pub npv: f64,
    /// PV(benefits)/PV(costs); `None` when PV(costs) ≤ 0.
    pub bcr: Option<f64>,
    pub irr: Irr,
    /// MIRR with finance and reinvestment at the discount rate; `None` without both a positive
    /// and a negative net flow.
    pub mirr: Option<f64>,
    /// First-year rate of return; `None` without an initial capital outlay followed by a year.
    pub fyrr: Option<f64>,
}

/// Appraise a stream under a discounting rule.
pub fn appraise(stream: &Stream, d: &Discounting) -> Indicators {
    appraise_with(stream, d, true)
}

/// [`appraise`], with the IRR looked for only when `with_irr` (else [`Irr::Skipped`]): the
/// root search is most of an appraisal's arithmetic.
pub fn appraise_with(stream: &Stream, d: &Discounting, with_irr: bool) -> Indicators {
    let pv_benefits = d.pv(stream.first_year, &stream.benefits);
    let pv_costs = d.pv(stream.first_year, &stream.costs);
    let net = stream.net();
    Indicators {
        pv_benefits,
        pv_costs,
        npv: pv_benefits - pv_costs,
        bcr: bcr(pv_benefits, pv_costs),
        irr: if with_irr { irr(&net) } else { Irr::Skipped },
        mirr: mirr(&net, d.rate(), d.rate()),
        fyrr: fyrr(&net),
    }
}

/// PV(benefits)/PV(costs), or `None` when PV(costs) is not positive.
pub fn bcr(pv_benefits: f64, pv_costs: f64) -> Option<f64> {
    (pv_costs > 0.0).then(|| pv_benefits / pv_costs)
}

/// Modified internal rate of return of yearly net flows: positive flows compounded to the last
/// year at `reinvest_rate`, negative flows discounted to the first at `finance_rate`, and the rate
/// that links the two over the stream's length. Same definition as numpy-financial's `mirr`.
pub fn mirr(net: &[f64], finance_rate: f64, reinvest_rate: f64) -> Option<f64> {
    let n = net.len();
    if n < 2 || !net.iter().any(|v| *v > 0.0) || !net.iter().any(|v| *v < 0.0) {
        return None;
    }
    let (mut fv_pos, mut pv_neg) = (0.0, 0.0);
    for (t, v) in net.iter().enumerate() {
        if *v > 0.0 {
            fv_pos += v * (1.0 + reinvest_rate).powi((n - 1 - t) as i32);
        } else if *v < 0.0 {
            pv_neg += -v / (1.0 + finance_rate).powi(t as i32);
        }
    }
    Some((fv_pos / pv_neg).powf(1.0 / (n - 1) as f64) - 1.0)
}

/// First-year rate of return of yearly net flows: the leading years of negative net flow are the
/// capital outlay (leading zero years skipped); the year after them is the first full year of
/// benefits, and FYRR = its net benefit ÷ the outlay, undiscounted. `None` when there is no such
/// outlay or no year after it.
pub fn fyrr(net: &[f64]) -> Option<f64> {
    let start = net.iter().position(|v| *v != 0.0)?;
    let capital_years = net[start..].iter().take_while(|v| **v < 0.0).count();
    if capital_years == 0 {
        return None;
    }
    let capital: f64 = -net[start..start + capital_years].iter().sum::<f64>();
    let first_full = *net.get(start + capital_years)?;
    Some(first_full / capital)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    // Source: engineering-economy factor tables (e.g. NCEES FE Reference Handbook; Newnan,
    // Engineering Economic Analysis); values to 5 decimals as tabulated.
    #[test]
    fn factor_table_values() {
        let pf = [(0.10, 10, 0.38554), (0.06, 4, 0.79209), (0.04, 35, 0.25342)];
        for (i, n, want) in pf {
            assert_abs_diff_eq!(present_worth_factor(i, n), want, epsilon = 5e-6);
        }
        let pa = [
            (0.10, 10, 6.14457),
            (0.06, 4, 3.46511),
            (0.04, 35, 18.66461),
        ];
        for (i, n, want) in pa {
            assert_abs_diff_eq!(series_present_worth_factor(i, n), want, epsilon = 5e-6);
        }
        let ap = [(0.10, 10, 0.16275), (0.06, 4, 0.28859), (0.04, 35, 0.05358)];
        for (i, n, want) in ap {
            assert_abs_diff_eq!(capital_recovery_factor(i, n), want, epsilon = 5e-6);
        }
    }

    // Source: common practice, A/(1+r)^(y−y0); 5.0 at 6 % four years on → 3.9605 (computed).
    #[test]
    fn present_value_to_a_base_year() {
        let d = Discounting::new(0.06, Year(2026), Timing::EndOfYear).unwrap();
        assert_abs_diff_eq!(5.0 * d.factor(Year(2030)), 3.9605, epsilon = 5e-5);
        // A year before the base year is compounded forward.
        assert_abs_diff_eq!(d.factor(Year(2025)), 1.06, epsilon = 1e-15);
        // Mid-year: half a year earlier.
        let m = Discounting::new(0.06, Year(2026), Timing::MidYear).unwrap();
        assert_abs_diff_eq!(m.factor(Year(2027)), 1.06f64.powf(-0.5), epsilon = 1e-15);
    }

    // Source: numpy-financial 1.0.0 documentation, npv(0.281, [-100,39,59,55,20]) = -0.0084786
    // and npv(0.08, [-40000,5000,8000,12000,30000]) = 3065.22267 (first value undiscounted).
    #[test]
    fn npv_matches_numpy_financial_convention() {
        let d = Discounting::new(0.281, Year(0), Timing::EndOfYear).unwrap();
        assert_abs_diff_eq!(
            d.pv(Year(0), &[-100.0, 39.0, 59.0, 55.0, 20.0]),
            -0.0084786,
            epsilon = 5e-8
        );
        let d = Discounting::new(0.08, Year(0), Timing::EndOfYear).unwrap();
        assert_abs_diff_eq!(
            d.pv(Year(0), &[-40000.0, 5000.0, 8000.0, 12000.0, 30000.0]),
            3065.22267,
            epsilon = 5e-6
        );
    }

    // Source: spreadsheet NPV() documentation, NPV(10%, -10000, 3000, 4200, 6800) = 1188.44: the
    // spreadsheet discounts its first value one period, i.e. a base year one before the first flow.
    #[test]
    fn spreadsheet_npv_is_a_base_year_shift() {
        let d = Discounting::new(0.10, Year(2025), Timing::EndOfYear).unwrap();
        assert_abs_diff_eq!(
            d.pv(Year(2026), &[-10000.0, 3000.0, 4200.0, 6800.0]),
            1188.44,
            epsilon = 5e-3
        );
    }

    // Source: shared reference values, alternative A (cost 1000, 250 a year for 10 years at 10 %):
    // NPV 536.14, BCR 1.5361, IRR 21.41 % (computed with numpy-financial).
    #[test]
    fn appraisal_of_a_simple_project() {
        let mut rows = vec![(Year(0), 0.0, 1000.0)];
        rows.extend((1..=10).map(|y| (Year(y), 250.0, 0.0)));
        let s = Stream::from_rows(&rows);
        let d = Discounting::new(0.10, Year(0), Timing::EndOfYear).unwrap();
        let a = appraise(&s, &d);
        assert_abs_diff_eq!(a.npv, 536.14, epsilon = 5e-3);
        assert_abs_diff_eq!(a.bcr.unwrap(), 1.5361, epsilon = 5e-5);
        assert_abs_diff_eq!(a.irr.unique().unwrap(), 0.2141, epsilon = 5e-5);
        assert_abs_diff_eq!(a.fyrr.unwrap(), 0.25, epsilon = 1e-15);
        // MIRR at 10 %: (250 × (F/A,10%,10) / 1000)^(1/10) − 1 = (3984.36/1000)^0.1 − 1.
        let fa = (1.1f64.powi(10) - 1.0) / 0.1;
        assert_abs_diff_eq!(
            a.mirr.unwrap(),
            (250.0 * fa / 1000.0).powf(0.1) - 1.0,
            epsilon = 1e-12
        );
    }

    #[test]
    fn bcr_undefined_without_costs() {
        assert_eq!(bcr(10.0, 0.0), None);
        assert_eq!(bcr(10.0, -1.0), None);
        assert_eq!(bcr(3.0, 2.0), Some(1.5));
    }

    // FYRR definition: common practice, from memory (first full year's net benefit ÷ capital
    // cost, undiscounted); the cases check the edges of that definition, not published values.
    #[test]
    fn fyrr_edge_cases() {
        assert_eq!(fyrr(&[0.0, -50.0, -50.0, 12.0, 30.0]), Some(0.12));
        assert_eq!(fyrr(&[10.0, 20.0]), None);
        assert_eq!(fyrr(&[-10.0]), None);
        assert_eq!(fyrr(&[]), None);
    }

    #[test]
    fn mirr_needs_both_signs() {
        assert_eq!(mirr(&[1.0, 2.0], 0.1, 0.1), None);
        assert_eq!(mirr(&[-1.0], 0.1, 0.1), None);
    }

    #[test]
    fn rates_are_checked() {
        assert!(Discounting::new(f64::NAN, Year(0), Timing::EndOfYear).is_err());
        assert!(Discounting::new(-1.0, Year(0), Timing::EndOfYear).is_err());
    }

    #[test]
    fn stream_arithmetic() {
        let a = Stream::from_rows(&[
            (Year(2030), 5.0, 1.0),
            (Year(2028), 0.0, 3.0),
            (Year(2030), 1.0, 0.0),
        ]);
        assert_eq!(a.first_year, Year(2028));
        assert_eq!(a.benefits, vec![0.0, 0.0, 6.0]);
        assert_eq!(a.net(), vec![-3.0, 0.0, 5.0]);
        let b = Stream::from_rows(&[(Year(2027), 1.0, 0.0)]);
        let d = a.minus(&b);
        assert_eq!(d.first_year, Year(2027));
        assert_eq!(d.net(), vec![-1.0, -3.0, 0.0, 5.0]);
    }
}
