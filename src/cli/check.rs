//! `pavestrat check`: validate a scenario and every file it names, and list every problem.
//!
//! Nothing is simulated. Problems go to stderr, each with file, line, field, what was found and
//! what was expected; exit 2 when there is any error. A clean run prints a short summary of what
//! was read, so a user can see the tool read their files as they meant.

use super::{load_scenario, Context};
use pavestrat::error::{Error, Result};
use pavestrat::model::money::{grouped, Money};
use std::path::PathBuf;

/// Arguments of `check`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is checked.
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,
}

/// Run `check`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    // What `plan` would refuse beyond the readers: commitments no strategy can keep (only the
    // committed sections are simulated), and lines whose totals could pass the supported range.
    let mut diags = diags;
    pavestrat::plan::commitment_problems(&run, &mut diags);
    pavestrat::plan::spending_bound_problems(&run, &mut diags);
    if diags.has_errors() {
        return Err(Error::Input(diags));
    }
    ctx.notes(&diags);
    ctx.defaults_note(&run.scenario.models);
    let s = &run.scenario;
    let net = &run.network;
    let regions = net.regions();
    let lane_km: f64 = net
        .sections
        .iter()
        .map(|x| x.length_km * f64::from(x.lanes))
        .sum();
    let per_section: u64 = 1 + run
        .templates
        .iter()
        .map(|t| t.max_strategies())
        .fold(0u64, u64::saturating_add);
    let total: Money = s.budget_lines.iter().map(|b| b.limit).sum();
    let mut groups: Vec<&str> = s.budget_lines.iter().map(|b| b.group.as_str()).collect();
    groups.dedup();
    let money = if s.money_label.is_empty() {
        String::new()
    } else {
        format!(" {}", s.money_label)
    };
    let mut out = String::new();
    out.push_str(&format!(
        "{}: no errors, {} note{}\n",
        s.file,
        diags.note_count(),
        if diags.note_count() == 1 { "" } else { "s" }
    ));
    out.push_str(&format!(
        "  scenario    {}; base year {}, {} years to {}; discount rate {:.2} % ({})\n",
        if s.title.is_empty() {
            "(untitled)"
        } else {
            &s.title
        },
        s.base_year,
        s.analysis_years,
        s.last_year(),
        s.discounting.rate() * 100.0,
        s.discounting.timing()
    ));
    out.push_str(&format!(
        "  network     {} sections, {} km, {} lane-km{}\n",
        net.sections.len(),
        grouped(net.length_km(), 1),
        grouped(lane_km, 1),
        if regions.is_empty() {
            String::new()
        } else {
            format!(", regions {}", regions.join(", "))
        }
    ));
    out.push_str(&format!(
        "  treatments  {} in {}, plus routine maintenance\n",
        run.catalogue.treatments.len(),
        run.catalogue.file
    ));
    let e = pavestrat::enumerate::Enumerator::for_run(&run);
    let strategies: usize = net.sections.iter().map(|x| e.strategies(x).len()).sum();
    out.push_str(&format!(
        "  templates   {}, at most {} strategies per section before feasibility rules (base included); {} strategies in all after them\n",
        run.templates.len(),
        per_section,
        strategies
    ));
    let steps = strategies as f64 * f64::from(s.analysis_years);
    let (seconds, bytes) = pavestrat::resources::plan_cost(strategies as f64, s.analysis_years);
    out.push_str(&format!(
        "  work        `plan` simulates {steps:.0} section-years of strategies: about {} on {} threads and {} at its peak (estimates from measured rates)\n",
        pavestrat::resources::duration(seconds),
        rayon::current_num_threads(),
        pavestrat::resources::bytes(bytes)
    ));
    if s.budget_lines.is_empty() {
        out.push_str("  budgets     none (selection will be unconstrained)\n");
    } else {
        let first = s
            .budget_lines
            .iter()
            .map(|b| b.year)
            .min()
            .unwrap_or(s.base_year);
        let last = s
            .budget_lines
            .iter()
            .map(|b| b.year)
            .max()
            .unwrap_or(s.base_year);
        out.push_str(&format!(
            "  budgets     {} lines in {} group{} ({}), {first}–{last}, {}{money} in all\n",
            s.budget_lines.len(),
            groups.len(),
            if groups.len() == 1 { "" } else { "s" },
            groups.join(", "),
            grouped(total.to_f64(), 0),
        ));
    }
    if !ctx.quiet {
        pavestrat::io::print_stdout(&out)?;
    }
    Ok(())
}
