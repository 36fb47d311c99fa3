//! `pavestrat explain SECTION`: why a section got its strategy in a plan, read back from the
//! plan's output directory.
//!
//! Every candidate of the section is valued at the plan's budget prices: its objective value
//! (NPV, or −PV agency cost for a least-cost plan) less the priced use of every line, Σ price ×
//! use. The chosen strategy is normally the one with the highest priced value; the margin to the
//! runner-up says how firm the choice is. Where the chosen one is not the highest, the section
//! is one of the few the budgets split (the whole-plan search placed it), and the report says so.

use super::Context;
use pavestrat::diag::did_you_mean;
use pavestrat::error::{Error, Result};
use pavestrat::io::print_stdout;
use pavestrat::model::money::grouped;
use pavestrat::schema::plan::{
    read_candidates, row_column, BudgetUse, SectionPlan, TargetUse, CANDIDATES, SUMMARY,
};
use pavestrat::schema::summary::Summary;
use pavestrat::schema::{self, Record as _};
use std::collections::HashMap;
use std::fmt::Write as _;
use std::path::PathBuf;

/// Arguments of `explain`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// The section_id to explain.
    #[arg(value_name = "SECTION")]
    pub section: String,

    /// The directory `pavestrat plan --out DIR` wrote.
    #[arg(long, value_name = "DIR", default_value = ".")]
    pub from: PathBuf,
}

struct Candidate {
    strategy: String,
    value: f64,
    npv: f64,
    priced: f64,
}

/// Run `explain`.
pub fn run(args: Args, _ctx: Context) -> Result<()> {
    let dir = &args.from;
    if let Some(m) = pavestrat::io::verify(dir)? {
        pavestrat::io::check_plan_set(
            dir,
            &m,
            &[
                SUMMARY,
                SectionPlan::FILE.name,
                CANDIDATES,
                BudgetUse::FILE.name,
            ],
        )?;
    }
    if dir.join(SUMMARY).is_file() && !dir.join(CANDIDATES).is_file() {
        return Err(Error::Usage(format!(
            "{} holds a plan but no candidates.csv; expected a plan written with every candidate: `explain` values each candidate of the section at the plan's prices, and `plan` writes them only when asked (run `pavestrat plan --scenario FILE --out {} --candidates`)",
            dir.display(),
            dir.display()
        )));
    }
    let summary_path = dir.join(SUMMARY);
    let summary: Summary = std::fs::read_to_string(&summary_path)
        .ok()
        .and_then(|t| serde_json::from_str(&t).ok())
        .ok_or_else(|| {
            Error::Usage(format!(
                "cannot read {}; expected the output directory of `pavestrat plan --out DIR` (give it with --from DIR)",
                summary_path.display()
            ))
        })?;
    let least_cost = summary.objective_kind == "least-cost";
    let money = summary.money;

    // Each selection row's price, by its column in candidates.csv.
    let mut prices: HashMap<String, f64> = HashMap::new();
    for r in schema::read::<BudgetUse>(dir)? {
        prices.insert(row_column(true, &r.line), r.price.0);
    }
    for r in schema::read::<TargetUse>(dir)? {
        prices.insert(row_column(false, &r.line), r.price.0);
    }
    let id = args.section.as_str();
    let plan: Vec<SectionPlan> = schema::read(dir)?;
    let Some(row) = plan.iter().find(|r| r.section_id == id) else {
        let names: Vec<&str> = plan.iter().map(|r| r.section_id.as_str()).collect();
        let hint = did_you_mean(id, &names)
            .map(|m| format!(" (did you mean `{m}`?)"))
            .unwrap_or_default();
        return Err(Error::Usage(format!(
            "no section `{id}` in {}{hint}; expected a section_id of the plan",
            dir.join(SectionPlan::FILE.name).display()
        )));
    };
    let chosen = row.strategy.clone();
    let unconstrained = row.unconstrained_strategy.clone();

    let mut opts: Vec<Candidate> = Vec::new();
    for c in read_candidates(dir, |s| s == id)? {
        let (npv, pva) = (c.npv.to_f64(), c.pv_agency_cost.to_f64());
        let mut priced = 0.0;
        for (column, used) in &c.uses {
            match prices.get(column) {
                Some(&price) if price != 0.0 => priced += price * used,
                _ => {}
            }
        }
        opts.push(Candidate {
            strategy: c.strategy,
            value: if least_cost { -pva } else { npv },
            npv,
            priced,
        });
    }
    opts.sort_by(|a, b| {
        (b.value - b.priced)
            .total_cmp(&(a.value - a.priced))
            .then(a.strategy.cmp(&b.strategy))
    });
    print_stdout(&render(
        id,
        &chosen,
        &unconstrained,
        &opts,
        least_cost,
        &money,
    ))
}

fn render(
    id: &str,
    chosen: &str,
    unconstrained: &str,
    opts: &[Candidate],
    least_cost: bool,
    money: &str,
) -> String {
    let mut s = format!(
        "Section {id}: the plan gives it `{chosen}`{}.\n\n",
        if chosen == unconstrained {
            " — also its best with no budget limits".to_owned()
        } else {
            format!("; with no budget limits it would get `{unconstrained}`")
        }
    );
    let value_name = if least_cost { "−PV agency" } else { "NPV" };
    let _ = writeln!(
        s,
        "Each candidate at the plan's budget prices (money in {money}); priced value = {value_name} − Σ price × use:"
    );
    let _ = writeln!(
        s,
        "  {:<36} {:>16} {:>16} {:>16}",
        "strategy", value_name, "priced use", "priced value"
    );
    for o in opts {
        let mark = if o.strategy == chosen { "*" } else { " " };
        let _ = writeln!(
            s,
            "{mark} {:<36} {:>16} {:>16} {:>16}",
            o.strategy,
            grouped(o.value, 0),
            grouped(o.priced, 0),
            grouped(o.value - o.priced, 0)
        );
    }
    let pos = opts.iter().position(|o| o.strategy == chosen);
    match pos {
        Some(0) if opts.len() > 1 => {
            let m = (opts[0].value - opts[0].priced) - (opts[1].value - opts[1].priced);
            let _ = writeln!(
                s,
                "\n`{chosen}` has the highest priced value, {} {money} ahead of the runner-up `{}`.",
                grouped(m, 0),
                opts[1].strategy
            );
            if m.abs() < 1e-6 * opts[0].value.abs().max(1.0) {
                s.push_str("The two tie at these prices: the budgets split between them.\n");
            }
        }
        Some(0) => s.push_str("\nIt is the only candidate left (the others are dominated or excluded by commitments).\n"),
        Some(k) => {
            let m = (opts[0].value - opts[0].priced) - (opts[k].value - opts[k].priced);
            let _ = writeln!(
                s,
                "\n`{}` has a higher priced value by {} {money}, but the budgets cannot give every section its \
                 best at these prices: this section is one the whole-plan search settled, trading with others \
                 for whole projects.",
                opts[0].strategy,
                grouped(m, 0)
            );
        }
        None => s.push_str("\nThe chosen strategy is missing from candidates.csv: the directory's files do not belong to one run.\n"),
    }
    if let Some(o) = opts.iter().find(|o| o.strategy == chosen) {
        let _ = writeln!(
            s,
            "Its NPV against the base: {} {money}.",
            grouped(o.npv, 0)
        );
    }
    let _ = writeln!(s, "\n{}", pavestrat::CAUTION);
    s
}
