//! One name per idea: the heading of every column the tool shows, in the workbook's sheets and
//! the report's tables, from the name the CSV files give the column. A year's columns of the
//! programme read `2027 cost`, `2027 treatment`; a name not listed (the user's `x_` columns) is
//! kept as it is.

/// Each CSV column name and its heading.
pub const TITLES: &[(&str, &str)] = &[
    ("year", "Year"),
    ("section_id", "Section"),
    ("treatment", "Treatment"),
    ("cost", "Cost"),
    ("region", "Region"),
    ("category", "Category"),
    ("strategy", "Strategy"),
    ("npv", "NPV"),
    ("pv_agency_cost", "PV agency cost"),
    ("pv_user_cost", "PV road-user cost"),
    ("unconstrained_strategy", "Best strategy with no limits"),
    ("unconstrained_npv", "NPV with no limits"),
    ("same", "Same as with no limits"),
    ("first_works_year", "First works"),
    ("line", "Budget line"),
    ("limit", "Limit"),
    ("used", "Used"),
    ("used_share", "Used (% of limit)"),
    ("price", "Budget price"),
    ("state", "State"),
    ("slack", "Slack"),
    ("template", "Template"),
    ("bcr", "BCR"),
    ("bcr_capital", "BCR on capital"),
    ("npv_per_capital", "NPV per unit of capital"),
    ("irr", "IRR"),
    ("irr_status", "IRR status"),
    ("fyrr", "FYRR"),
    ("mean_iri", "Mean IRI (m/km)"),
    ("preferred", "Preferred"),
    ("kind", "Row"),
    ("name", "Total of"),
    ("works", "Works"),
    ("km", "Km"),
    ("lane_km", "Lane-km"),
    ("area_m2", "Area (m²)"),
    ("cost_per_lane_km", "Cost per lane-km"),
    ("cost_per_m2", "Cost per m²"),
    ("road", "Road"),
    ("from_km", "From km"),
    ("to_km", "To km"),
    ("item", "Item"),
    ("value", "Value"),
    // target_use.csv
    ("target", "Target"),
    ("measure", "Measure"),
    ("at_most", "At most"),
    ("achieved", "Achieved"),
    ("target_price", "Target price"),
    // frontier.csv
    ("level", "Budget level"),
    ("total_budget", "Total budget"),
    ("objective", "Objective"),
    ("bound", "Bound"),
    ("gap", "Gap"),
    ("status", "Status"),
    // sensitivity.csv and risk.csv
    ("input", "Input"),
    ("direction", "Direction"),
    ("p10", "P10"),
    ("p50", "P50"),
    ("p90", "P90"),
    ("prob_over", "Draws over the limit"),
    ("prob_positive", "Draws with NPV above zero"),
    ("prob_best", "Draws where best"),
    ("in_plan", "In the plan"),
    ("group", "Budget group"),
    // compare's files (with the columns above, ending `_a`, `_b` or `_change`)
    ("change", "Change"),
    ("year_shift", "Years moved"),
    ("price_moved", "Price moved"),
    ("good_share", "Good share"),
    ("poor_share", "Poor share"),
];

/// The heading of a column named `key` in the CSV files.
pub fn title(key: &str) -> String {
    if let Some(y) = key.strip_prefix("cost_") {
        if y.parse::<i32>().is_ok() {
            return format!("{y} cost");
        }
    }
    if let Some(y) = key.strip_prefix("treatment_") {
        if y.parse::<i32>().is_ok() {
            return format!("{y} treatment");
        }
    }
    let known = |k: &str| TITLES.iter().find(|(n, _)| *n == k).map(|(_, t)| *t);
    if let Some(t) = known(key) {
        return t.to_owned();
    }
    // One plan's value, or the second's less the first's, of a column above (`compare`).
    for (end, label) in [
        ("_a", " (A)"),
        ("_b", " (B)"),
        ("_change", " change (B − A)"),
    ] {
        if let Some(t) = key.strip_suffix(end).and_then(known) {
            return format!("{t}{label}");
        }
    }
    key.to_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_title_per_name_and_one_name_per_title() {
        for (i, (k, t)) in TITLES.iter().enumerate() {
            for (k2, t2) in &TITLES[i + 1..] {
                assert_ne!(k, k2, "{k} twice");
                assert_ne!(t, t2, "`{t}` for both {k} and {k2}");
            }
        }
        assert_eq!(title("cost_2031"), "2031 cost");
        assert_eq!(title("cost_per_m2"), "Cost per m²");
        assert_eq!(title("x_crew"), "x_crew");
        assert_eq!(title("npv_change"), "NPV change (B − A)");
        assert_eq!(title("strategy_a"), "Strategy (A)");
        assert_eq!(title("x_a"), "x_a");
    }
}
