//! The files of `pavestrat compare A B --out DIR`: two plans held side by side. A column ending
//! `_a` holds plan A's value, `_b` plan B's, and `_change` B's less A's; a cell is empty where
//! a plan has no such section, line or year.

use super::record;
use super::value::{Cents, Dec, Fixed, Price};
use crate::model::Year;

/// Who writes these files, for messages.
pub const MAKER: &str = "pavestrat compare";

/// The comparison page's name.
pub const PAGE: &str = "comparison.html";

record! {
    /// `comparison.csv`: every section of either plan — what each plan chose for it, when its
    /// first works fall, and its NPV and PV agency cost; `change` says how B's choice differs
    /// from A's ([`crate::analysis::compare::Change`]). The location and `x_` columns the plans
    /// carry follow.
    SectionChange in "comparison.csv" by "pavestrat compare" {
        section_id: String = "section_id",
        region: String = "region",
        change: String = "change",
        strategy_a: String = "strategy_a",
        strategy_b: String = "strategy_b",
        first_works_year_a: Option<Year> = "first_works_year_a",
        first_works_year_b: Option<Year> = "first_works_year_b",
        year_shift: Option<i32> = "year_shift",
        npv_a: Option<Cents> = "npv_a",
        npv_b: Option<Cents> = "npv_b",
        npv_change: Option<Cents> = "npv_change",
        pv_agency_cost_a: Option<Cents> = "pv_agency_cost_a",
        pv_agency_cost_b: Option<Cents> = "pv_agency_cost_b",
        pv_agency_cost_change: Option<Cents> = "pv_agency_cost_change",
    }
}

record! {
    /// `comparison_lines.csv`: every budget line of either plan, by name — its limit, the
    /// plan's use of it in exact decimals, its state and its budget price in each plan;
    /// `price_moved` when the two prices differ as the tool shows them.
    LineChange in "comparison_lines.csv" by "pavestrat compare" {
        line: String = "line",
        year: Year = "year",
        group: String = "group",
        category: String = "category",
        region: String = "region",
        limit_a: Option<Dec> = "limit_a",
        limit_b: Option<Dec> = "limit_b",
        used_a: Option<Dec> = "used_a",
        used_b: Option<Dec> = "used_b",
        used_change: Option<Dec> = "used_change",
        state_a: String = "state_a",
        state_b: String = "state_b",
        price_a: Option<Price> = "price_a",
        price_b: Option<Price> = "price_b",
        price_moved: bool = "price_moved",
    }
}

record! {
    /// `comparison_years.csv`: each year of either plan — its works and their cost (from
    /// `work_programme.csv`, whether or not a budget line limits the year) and the network's
    /// length-weighted condition under each plan.
    YearChange in "comparison_years.csv" by "pavestrat compare" {
        year: Year = "year",
        works_a: u64 = "works_a",
        works_b: u64 = "works_b",
        cost_a: Cents = "cost_a",
        cost_b: Cents = "cost_b",
        cost_change: Cents = "cost_change",
        mean_iri_a: Option<Fixed<6>> = "mean_iri_a",
        mean_iri_b: Option<Fixed<6>> = "mean_iri_b",
        mean_iri_change: Option<Fixed<6>> = "mean_iri_change",
        good_share_a: Option<Fixed<6>> = "good_share_a",
        good_share_b: Option<Fixed<6>> = "good_share_b",
        poor_share_a: Option<Fixed<6>> = "poor_share_a",
        poor_share_b: Option<Fixed<6>> = "poor_share_b",
    }
}
