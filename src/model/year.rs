//! Years: a calendar [`Year`] (2031) and a [`YearOffset`] (years after a run's base year, 0
//! being the base year), never bare integers that could mean either.
//!
//! Files and reports speak calendar years; simulation indexes its yearly arrays by offset. The
//! two meet only through a base year: `base + offset` is a calendar year, and
//! `year.offset_from(base)` an offset (none before the base year).

use serde::{Deserialize, Serialize};
use std::fmt;
use std::ops::{Add, Sub};

/// A calendar year.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default, Serialize, Deserialize,
)]
#[serde(transparent)]
pub struct Year(pub i32);

/// Years after a run's base year: 0 is the base year itself, and the index of a year in every
/// yearly series of a simulation.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default, Serialize, Deserialize,
)]
#[serde(transparent)]
pub struct YearOffset(pub u32);

impl Year {
    /// The offset of this year from `base`, or `None` when it comes before it.
    pub fn offset_from(self, base: Year) -> Option<YearOffset> {
        u32::try_from(i64::from(self.0) - i64::from(base.0))
            .ok()
            .map(YearOffset)
    }

    /// Whole years from `earlier` to this year (negative when `earlier` is later).
    pub fn since(self, earlier: Year) -> i64 {
        i64::from(self.0) - i64::from(earlier.0)
    }
}

impl YearOffset {
    /// The offset as an index into yearly series.
    pub fn index(self) -> usize {
        self.0 as usize
    }

    /// The offset of yearly series index `i`.
    pub fn at(i: usize) -> YearOffset {
        YearOffset(u32::try_from(i).unwrap_or(u32::MAX))
    }
}

impl Add<YearOffset> for Year {
    type Output = Year;
    /// The calendar year `offset` years after this one (saturating at the ends of the range).
    fn add(self, offset: YearOffset) -> Year {
        Year(i32::try_from(i64::from(self.0) + i64::from(offset.0)).unwrap_or(i32::MAX))
    }
}

impl Sub<Year> for Year {
    type Output = i64;
    /// Whole years between two calendar years.
    fn sub(self, earlier: Year) -> i64 {
        self.since(earlier)
    }
}

impl fmt::Display for Year {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0)
    }
}

impl fmt::Display for YearOffset {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn calendar_years_and_offsets_meet_through_a_base_year() {
        let base = Year(2027);
        assert_eq!(base + YearOffset(0), base);
        assert_eq!(base + YearOffset(4), Year(2031));
        assert_eq!(Year(2031).offset_from(base), Some(YearOffset(4)));
        assert_eq!(Year(2026).offset_from(base), None);
        assert_eq!(Year(2031) - base, 4);
        assert_eq!(Year(2020).since(base), -7);
        assert_eq!(YearOffset::at(29).index(), 29);
        assert_eq!(Year(i32::MAX) + YearOffset(5), Year(i32::MAX));
        assert_eq!(Year(2031).to_string(), "2031");
        assert_eq!(serde_json::to_string(&Year(2031)).unwrap(), "2031");
    }
}
