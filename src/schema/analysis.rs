//! The files of the analyses of a plan held fixed: `frontier.csv`, `sensitivity.csv`,
//! `risk.csv` and `risk_draws.csv` (and `risk`'s raw slice, which only `risk --merge` reads).

use super::value::{Cents, Fixed, Real, Sci6};
use super::{record, Record};

/// `frontier.csv`'s name.
pub const FRONTIER: &str = "frontier.csv";
/// `sensitivity.csv`'s name.
pub const SENSITIVITY: &str = "sensitivity.csv";

record! {
    /// `frontier.csv`: one budget level — the total budget over the scaled lines, and the
    /// best plan's objective, bound, gap and status (empty but for `infeasible` when no plan
    /// fits, with its `reason`: the kind of impossibility and the lines it names); `unlimited`
    /// marks the level at which no line binds.
    FrontierLevel in "frontier.csv" by "pavestrat frontier" {
        level: Real = "level",
        total_budget: Cents = "total_budget",
        objective: Option<Cents> = "objective",
        bound: Option<Cents> = "bound",
        gap: Option<Sci6> = "gap",
        status: String = "status",
        unlimited: bool = "unlimited",
        reason: String = "reason",
    }
}

record! {
    /// `sensitivity.csv`: one test or switching value, for the network plan (`scope`
    /// `network`) or one section's strategy; the input's value and its change from the
    /// scenario to six decimals.
    Sensitivity in "sensitivity.csv" by "pavestrat sensitivity" {
        scope: String = "scope",
        section_id: String = "section_id",
        strategy: String = "strategy",
        input: String = "input",
        test: String = "test",
        direction: String = "direction",
        value: Option<Fixed<6>> = "value",
        change: Option<Fixed<6>> = "change",
        npv: Option<Cents> = "npv",
        other_strategy: String = "other_strategy",
    }
}

record! {
    /// `risk.csv`: the distribution over the draws of a strategy's NPV (`kind` `strategy`), the
    /// plan's NPV (`plan`) or a budget line's spending (`budget`), with the standard errors of
    /// its estimates.
    Risk in "risk.csv" by "pavestrat risk" {
        kind: String = "kind",
        section_id: String = "section_id",
        strategy: String = "strategy",
        line: String = "line",
        limit: Option<Cents> = "limit",
        mean: Option<Cents> = "mean",
        sd: Option<Cents> = "sd",
        p10: Option<Cents> = "p10",
        p50: Option<Cents> = "p50",
        p90: Option<Cents> = "p90",
        prob_positive: Option<Fixed<6>> = "prob_positive",
        prob_best: Option<Fixed<6>> = "prob_best",
        prob_over: Option<Fixed<6>> = "prob_over",
        draws: u64 = "draws",
        in_plan: Option<bool> = "in_plan",
        se_mean: Option<Cents> = "se_mean",
        se_p10: Option<Cents> = "se_p10",
        se_p50: Option<Cents> = "se_p50",
        se_p90: Option<Cents> = "se_p90",
    }
}

record! {
    /// `risk_draws.csv`: one draw, the plan's NPV in it, then (not read back here) one
    /// `spend:<line>` column per budget line with the plan's spending in it
    /// ([`RiskDraw::head`], [`RiskDraw::write_with`]).
    RiskDraw in "risk_draws.csv" by "pavestrat risk" {
        draw: u64 = "draw",
        plan_npv: Option<Cents> = "plan_npv",
    }
}

impl RiskDraw {
    /// The header, with a `spend:<line>` column per budget line.
    pub fn head<'a>(lines: impl IntoIterator<Item = &'a str>) -> String {
        let mut s = RiskDraw::FILE.columns.join(",");
        for line in lines {
            s.push(',');
            super::value::write_text(&spend_column(line), &mut s);
        }
        s.push('\n');
        s
    }

    /// The row with the plan's spending in each budget line after it.
    pub fn write_with(&self, spend: impl IntoIterator<Item = Option<Cents>>, out: &mut String) {
        use super::Value;
        self.draw.write(out);
        out.push(',');
        self.plan_npv.write(out);
        for x in spend {
            out.push(',');
            x.write(out);
        }
        out.push('\n');
    }
}

/// The raw slice `risk --merge` reads.
pub const RISK_SLICE: &str = "risk_slice.bin";
/// Every file `risk --out` writes.
pub const RISK_FILES: [&str; 3] = [Risk::FILE.name, RiskDraw::FILE.name, RISK_SLICE];

/// The column of a budget line's spending in `risk_draws.csv`.
pub fn spend_column(line: &str) -> String {
    format!("spend:{line}")
}
