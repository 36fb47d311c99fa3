//! The files no command reads back: `appraise`'s, `select`'s, `cashflow`'s and `calibrate`'s
//! outputs, and what `init` writes. Their names and columns live here with every other file's;
//! each command writes its rows itself, in these columns' order.

use super::FileSpec;

/// `appraise`'s files.
pub mod appraise {
    use super::FileSpec;

    const MAKER: &str = "pavestrat appraise";

    /// One row per section × strategy.
    pub const APPRAISAL: FileSpec = FileSpec {
        name: "appraisal.csv",
        maker: MAKER,
        columns: &[
            "section_id",
            "strategy",
            "template",
            "pv_agency_cost",
            "pv_capital",
            "pv_routine",
            "pv_residual",
            "pv_user_cost",
            "npv",
            "bcr",
            "bcr_capital",
            "npv_per_capital",
            "irr",
            "irr_status",
            "fyrr",
            "mean_iri",
            "final_iri",
            "preferred",
        ],
    };

    /// One row per comparison of the incremental analysis.
    pub const INCREMENTAL: FileSpec = FileSpec {
        name: "incremental.csv",
        maker: MAKER,
        columns: &[
            "section_id",
            "step",
            "challenger",
            "defender",
            "d_pv_benefits",
            "d_pv_costs",
            "d_npv",
            "d_bcr",
            "d_irr",
            "d_irr_status",
            "accepted",
        ],
    };

    /// One row per section × widening year.
    pub const WIDENING: FileSpec = FileSpec {
        name: "widening.csv",
        maker: MAKER,
        columns: &[
            "section_id",
            "widen_year",
            "strategy",
            "npv",
            "fyrr",
            "best_by_fyrr",
            "best_by_npv",
        ],
    };

    /// One row per section × strategy × year (with `--yearly`).
    pub const YEARLY: FileSpec = FileSpec {
        name: "yearly.csv",
        maker: MAKER,
        columns: &[
            "section_id",
            "strategy",
            "year",
            "iri",
            "condition",
            "structural_number",
            "capital",
            "routine",
            "operating",
            "time",
            "crashes",
            "work_zone_delay",
            "residual",
        ],
    };
}

/// `select`'s files.
pub mod select {
    use super::FileSpec;

    const MAKER: &str = "pavestrat select";

    /// The chosen candidate of each section (then the candidates file's carried columns).
    pub const SELECTION: FileSpec = FileSpec {
        name: "selection.csv",
        maker: MAKER,
        columns: &["section_id", "strategy", "value"],
    };

    /// Each row's limit, use and price.
    pub const ROW_USE: FileSpec = FileSpec {
        name: "row_use.csv",
        maker: MAKER,
        columns: &["row", "limit", "used", "price"],
    };

    /// The certificate.
    pub const SUMMARY: &str = "summary.json";
}

/// `cashflow`'s files.
pub mod cashflow {
    use super::FileSpec;

    const MAKER: &str = "pavestrat cashflow";

    /// The indicators of each alternative.
    pub const CASHFLOW: FileSpec = FileSpec {
        name: "cashflow.csv",
        maker: MAKER,
        columns: &[
            "alternative",
            "npv",
            "pv_benefits",
            "pv_costs",
            "bcr",
            "irr",
            "irr_status",
            "mirr",
            "fyrr",
        ],
    };

    /// The incremental analysis of mutually exclusive alternatives.
    pub const INCREMENTAL: FileSpec = FileSpec {
        name: "incremental.csv",
        maker: MAKER,
        columns: &[
            "step",
            "challenger",
            "defender",
            "d_pv_benefits",
            "d_pv_costs",
            "d_npv",
            "d_bcr",
            "d_irr",
            "d_irr_status",
            "accepted",
        ],
    };

    /// Everything as JSON.
    pub const JSON: &str = "cashflow.json";
}

/// `calibrate`'s files.
pub mod calibrate {
    use super::FileSpec;

    /// One row per survey interval of a fitted family.
    pub const INTERVALS: FileSpec = FileSpec {
        name: "calibration.csv",
        maker: "pavestrat calibrate",
        columns: &[
            "section_id",
            "family",
            "year_from",
            "year_to",
            "iri_from",
            "iri_to",
            "observed_rise",
            "predicted_scenario",
            "predicted_fitted",
        ],
    };

    /// The fitted coefficients, to paste into a scenario.
    pub const TOML: &str = "calibration.toml";

    /// Observed against predicted rises, as a page.
    pub const PAGE: &str = "calibration.html";
}

/// What `init` writes: a scenario to edit.
pub const INIT_FILES: [&str; 4] = [
    "scenario.toml",
    "network.csv",
    "treatments.toml",
    "templates.toml",
];

/// Every CSV above, for the test that their columns are distinct and named.
pub const ALL: [FileSpec; 9] = [
    appraise::APPRAISAL,
    appraise::INCREMENTAL,
    appraise::WIDENING,
    appraise::YEARLY,
    select::SELECTION,
    select::ROW_USE,
    cashflow::CASHFLOW,
    cashflow::INCREMENTAL,
    calibrate::INTERVALS,
];
