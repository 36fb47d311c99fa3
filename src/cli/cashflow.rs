//! `pavestrat cashflow`: appraise a plain stream of yearly benefits and costs — to check a
//! consultant's spreadsheet, or to compare a few alternatives by hand.
//!
//! Input: CSV with columns `year, benefit, cost` (amounts as decimal text), or several mutually
//! exclusive alternatives with an `alternative` column, in which case the incremental analysis
//! follows. With `--independent` the alternatives are independent projects instead, and
//! `--budget` picks the set of greatest NPV whose PV of costs fits the budget, beside what
//! ranking by NPV or by NPV per unit of cost would pick.
//!
//! Discounting follows [`pavestrat::economics`]: base-year flows are not discounted (numpy-financial's
//! `npv`), so a spreadsheet's `NPV()` corresponds to `--base-year` one year before the first flow.

use super::{parse_rate, Context, OutArg};
use pavestrat::diag::Diagnostics;
use pavestrat::economics::budget::{best_set, greedy, Portfolio, Project, Ranking};
use pavestrat::economics::incremental::{analyse, Analysis};
use pavestrat::economics::{appraise, Discounting, Indicators, Irr, Timing};
use pavestrat::error::{Error, Result};
use pavestrat::input::cashflow::{parse, Flows, SINGLE};
use pavestrat::io::{print_stdout, OutputSet};
use pavestrat::model::money::{grouped, Money};
use pavestrat::output::format::{csv_field, irr_text, num, opt, pct, rates};
use pavestrat::output::schema::others::cashflow;
use pavestrat::select::SelectError;
use serde_json::{json, Value};
use std::path::Path;

/// Output format on stdout.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    Table,
    Csv,
    Json,
}

/// Arguments of `cashflow`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// CSV file with columns year,benefit,cost (and optionally alternative); `-` reads stdin.
    #[arg(value_name = "FILE")]
    pub file: String,

    /// Real discount rate: a fraction (0.06) or a percentage (6%).
    #[arg(long, value_name = "R", value_parser = parse_rate, allow_hyphen_values = true)]
    pub rate: f64,

    /// Year to discount to [default: the first year in the file].
    #[arg(long, value_name = "Y")]
    pub base_year: Option<i32>,

    /// Take each year's flows at mid-year instead of at its end.
    #[arg(long)]
    pub mid_year: bool,

    /// Output format on stdout.
    #[arg(long, value_enum, default_value = "table")]
    pub format: Format,

    /// Treat the alternatives as independent projects (any combination may be built).
    #[arg(long)]
    pub independent: bool,

    /// With --independent: the money available, counted against each project's PV of costs.
    #[arg(long, value_name = "AMOUNT", requires = "independent")]
    pub budget: Option<String>,

    #[command(flatten)]
    pub out: OutArg,
}

/// Everything computed for one run of the command.
struct Appraisal {
    file: String,
    discounting: Discounting,
    alternatives: Vec<(String, Indicators)>,
    incremental: Option<Analysis>,
    budget: Option<BudgetResult>,
}

struct BudgetResult {
    budget: f64,
    projects: Vec<Project>,
    best: Portfolio,
    by_npv: Portfolio,
    by_ratio: Portfolio,
}

/// Run `cashflow`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let mut diags = Diagnostics::new();
    let read = pavestrat::input::read_text(
        &pavestrat::input::Disk,
        Path::new(&args.file),
        None,
        &mut diags,
    );
    let Some((label, text)) = read else {
        return Err(Error::Input(diags));
    };
    let flows = parse(&label, &text, &mut diags);
    let flows = match flows {
        Some(f) if !diags.has_errors() => f,
        _ => return Err(Error::Input(diags)),
    };
    let budget = match &args.budget {
        Some(b) => Some(
            Money::parse(b)
                .map_err(|e| {
                    Error::Usage(format!(
                        "--budget: found {e}; expected an amount such as 2000000"
                    ))
                })?
                .to_f64(),
        ),
        None => None,
    };
    ctx.notes(&diags);
    let result = compute(&label, &flows, &args, budget)?;

    let json = serde_json::to_string_pretty(&to_json(&result)).unwrap_or_default() + "\n";
    let csv = alternatives_csv(&result);
    let stdout = match args.format {
        Format::Table => table(&result),
        Format::Csv => csv.clone(),
        Format::Json => json.clone(),
    };
    if let Some(dir) = &args.out.out {
        let mut set = OutputSet::new();
        set.add(cashflow::CASHFLOW.name, csv.into_bytes());
        if result.incremental.is_some() {
            set.add(
                cashflow::INCREMENTAL.name,
                incremental_csv(&result).into_bytes(),
            );
        }
        set.add(cashflow::JSON, json.into_bytes());
        let written = set.commit(dir, "cashflow")?;
        for p in written {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    // With --out the files are the output and stdout is a summary, silenced by --quiet.
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&stdout)?;
    }
    Ok(())
}

fn compute(label: &str, flows: &[Flows], args: &Args, budget: Option<f64>) -> Result<Appraisal> {
    let first_year = flows
        .iter()
        .filter_map(|f| f.years.keys().next().copied())
        .min()
        .unwrap_or(0);
    let base_year = args.base_year.unwrap_or(first_year);
    if (i64::from(base_year) - i64::from(first_year)).abs()
        > i64::from(pavestrat::input::cashflow::MAX_SPAN)
    {
        return Err(Error::Usage(format!(
            "--base-year {base_year} is more than {} years from the stream's first year {first_year}",
            pavestrat::input::cashflow::MAX_SPAN
        )));
    }
    let timing = if args.mid_year {
        Timing::MidYear
    } else {
        Timing::EndOfYear
    };
    let discounting = Discounting::new(args.rate, pavestrat::model::Year(base_year), timing)
        .map_err(|e| Error::Usage(format!("--rate: {e}")))?;
    let streams: Vec<(String, pavestrat::economics::Stream)> =
        flows.iter().map(|f| (f.name.clone(), f.stream())).collect();
    let incremental =
        (flows.len() > 1 && !args.independent).then(|| analyse(&streams, &discounting));
    // The analysis already appraised every alternative; keep the file's order for the tables.
    let alternatives: Vec<(String, Indicators)> = match &incremental {
        Some(a) => streams
            .iter()
            .filter_map(|(n, _)| a.alternatives.iter().find(|r| &r.name == n))
            .map(|r| (r.name.clone(), r.indicators.clone()))
            .collect(),
        None => streams
            .iter()
            .map(|(n, s)| (n.clone(), appraise(s, &discounting)))
            .collect(),
    };
    let budget = match budget {
        Some(b) => {
            let projects: Vec<Project> = alternatives
                .iter()
                .map(|(n, i)| Project {
                    name: n.clone(),
                    cost: i.pv_costs,
                    npv: i.npv,
                })
                .collect();
            let located = |e: SelectError| match e {
                SelectError::Range(m) => Error::Usage(format!("--budget with these projects: {m}")),
                other => Error::Internal(format!("selection: {other}")),
            };
            let best = best_set(&projects, b).map_err(located)?;
            Some(BudgetResult {
                budget: b,
                by_npv: greedy(&projects, b, Ranking::Npv).map_err(located)?,
                by_ratio: greedy(&projects, b, Ranking::NpvPerCost).map_err(located)?,
                best,
                projects,
            })
        }
        None => None,
    };
    Ok(Appraisal {
        file: label.to_owned(),
        discounting,
        alternatives,
        incremental,
        budget,
    })
}

fn table(a: &Appraisal) -> String {
    let d = &a.discounting;
    let mut s = format!(
        "Cash-flow appraisal of {}\nrate {:.2} % real, base year {}, {} discounting\n\n",
        a.file,
        d.rate() * 100.0,
        d.base_year(),
        d.timing()
    );
    if a.alternatives.len() == 1 && a.alternatives[0].0 == SINGLE {
        let i = &a.alternatives[0].1;
        let rows = [
            ("PV of benefits", grouped(i.pv_benefits, 2)),
            ("PV of costs", grouped(i.pv_costs, 2)),
            ("NPV", grouped(i.npv, 2)),
            (
                "BCR",
                i.bcr.map_or("n/a (no costs)".into(), |b| format!("{b:.4}")),
            ),
            ("IRR", irr_text(&i.irr)),
            ("MIRR", pct(i.mirr)),
            ("FYRR", pct(i.fyrr)),
        ];
        for (k, v) in rows {
            s.push_str(&format!("  {k:<16}{v:>20}\n"));
        }
        if let Irr::Multiple(_) = i.irr {
            s.push_str("\n  The net flow changes sign more than once: several rates make NPV zero, so the IRR\n  is ambiguous. Judge the stream by its NPV.\n");
        }
    } else {
        let w = a
            .alternatives
            .iter()
            .map(|x| x.0.chars().count())
            .max()
            .unwrap_or(10)
            .max(11);
        s.push_str(&format!(
            "  {:<w$} {:>16} {:>16} {:>16} {:>8} {:>10} {:>9} {:>9}\n",
            "alternative", "PV benefits", "PV costs", "NPV", "BCR", "IRR", "MIRR", "FYRR"
        ));
        for (n, i) in &a.alternatives {
            s.push_str(&format!(
                "  {:<w$} {:>16} {:>16} {:>16} {:>8} {:>10} {:>9} {:>9}\n",
                n,
                grouped(i.pv_benefits, 0),
                grouped(i.pv_costs, 0),
                grouped(i.npv, 0),
                i.bcr.map_or("n/a".into(), |b| format!("{b:.3}")),
                match &i.irr {
                    Irr::Multiple(_) => "ambiguous".to_owned(),
                    other => irr_text(other),
                },
                pct(i.mirr),
                pct(i.fyrr)
            ));
        }
        if let Some(inc) = &a.incremental {
            s.push_str("\nIncremental analysis (ascending PV of cost; each challenger against the last one accepted):\n");
            let steps: Vec<(String, &pavestrat::economics::incremental::Step)> = inc
                .steps
                .iter()
                .map(|st| {
                    (
                        format!(
                            "{} vs {}",
                            st.challenger,
                            st.defender.as_deref().unwrap_or("doing nothing")
                        ),
                        st,
                    )
                })
                .collect();
            let w = steps
                .iter()
                .map(|x| x.0.chars().count())
                .max()
                .unwrap_or(10)
                .max(10);
            s.push_str(&format!(
                "  {:<w$} {:>16} {:>16} {:>8} {:>18}  decision\n",
                "comparison", "extra PV cost", "extra NPV", "BCR", "IRR"
            ));
            for (name, st) in steps {
                s.push_str(&format!(
                    "  {:<w$} {:>16} {:>16} {:>8} {:>18}  {}\n",
                    name,
                    grouped(st.d_pv_costs, 0),
                    grouped(st.d_npv, 0),
                    st.d_bcr.map_or("n/a".into(), |b| format!("{b:.3}")),
                    irr_text(&st.d_irr),
                    if st.accepted { "accepted" } else { "rejected" }
                ));
            }
            match &inc.winner {
                Some(w) => {
                    let npv = a
                        .alternatives
                        .iter()
                        .find(|x| &x.0 == w)
                        .map_or(f64::NAN, |x| x.1.npv);
                    s.push_str(&format!("\nPreferred: {w} (NPV {})\n", grouped(npv, 0)));
                }
                None => {
                    s.push_str("\nPreferred: doing nothing (no alternative has a positive NPV)\n")
                }
            }
        }
    }
    if let Some(b) = &a.budget {
        let names = |p: &Portfolio| {
            if p.chosen.is_empty() {
                "nothing".to_owned()
            } else {
                p.chosen
                    .iter()
                    .map(|&i| b.projects[i].name.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            }
        };
        s.push_str(&format!(
            "\nIndependent projects within a budget of {} (counted against PV of costs):\n",
            grouped(b.budget, 2)
        ));
        for (title, p) in [
            ("best set", &b.best),
            ("largest NPV first", &b.by_npv),
            ("largest NPV per cost first", &b.by_ratio),
        ] {
            s.push_str(&format!(
                "  {title:<28} NPV {:>16}  cost {:>16}  {}\n",
                grouped(p.npv, 2),
                grouped(p.cost, 2),
                names(p)
            ));
        }
    }
    s.push('\n');
    s.push_str(pavestrat::CAUTION);
    s.push('\n');
    s
}

fn alternatives_csv(a: &Appraisal) -> String {
    let mut s = cashflow::CASHFLOW.head();
    for (n, i) in &a.alternatives {
        s.push_str(&format!(
            "{},{},{},{},{},{},{},{},{}\n",
            csv_field(n),
            num(i.npv),
            num(i.pv_benefits),
            num(i.pv_costs),
            opt(i.bcr),
            rates(&i.irr),
            i.irr.status(),
            opt(i.mirr),
            opt(i.fyrr)
        ));
    }
    s
}

fn incremental_csv(a: &Appraisal) -> String {
    let mut s = cashflow::INCREMENTAL.head();
    if let Some(inc) = &a.incremental {
        for (k, st) in inc.steps.iter().enumerate() {
            s.push_str(&format!(
                "{},{},{},{},{},{},{},{},{},{}\n",
                k + 1,
                csv_field(&st.challenger),
                csv_field(st.defender.as_deref().unwrap_or("")),
                num(st.d_pv_benefits),
                num(st.d_pv_costs),
                num(st.d_npv),
                opt(st.d_bcr),
                rates(&st.d_irr),
                st.d_irr.status(),
                st.accepted
            ));
        }
    }
    s
}

fn jnum(x: f64) -> Value {
    serde_json::Number::from_f64(x).map_or(Value::Null, Value::Number)
}

fn jopt(x: Option<f64>) -> Value {
    x.map_or(Value::Null, jnum)
}

fn indicators_json(i: &Indicators) -> serde_json::Map<String, Value> {
    let mut m = serde_json::Map::new();
    m.insert("npv".into(), jnum(i.npv));
    m.insert("pv_benefits".into(), jnum(i.pv_benefits));
    m.insert("pv_costs".into(), jnum(i.pv_costs));
    m.insert("bcr".into(), jopt(i.bcr));
    m.insert(
        "irr".into(),
        Value::Array(i.irr.rates().into_iter().map(jnum).collect()),
    );
    m.insert("irr_status".into(), json!(i.irr.status()));
    m.insert("mirr".into(), jopt(i.mirr));
    m.insert("fyrr".into(), jopt(i.fyrr));
    m
}

fn to_json(a: &Appraisal) -> Value {
    let d = &a.discounting;
    let mut top = serde_json::Map::new();
    top.insert("rate".into(), jnum(d.rate()));
    top.insert("base_year".into(), json!(d.base_year()));
    top.insert("discounting".into(), json!(d.timing().name()));
    if a.alternatives.len() == 1 && a.alternatives[0].0 == SINGLE {
        top.extend(indicators_json(&a.alternatives[0].1));
    } else {
        let alts: Vec<Value> = a
            .alternatives
            .iter()
            .map(|(n, i)| {
                let mut m = serde_json::Map::new();
                m.insert("name".into(), json!(n));
                m.extend(indicators_json(i));
                Value::Object(m)
            })
            .collect();
        top.insert("alternatives".into(), Value::Array(alts));
    }
    if let Some(inc) = &a.incremental {
        let steps: Vec<Value> = inc
            .steps
            .iter()
            .map(|st| {
                json!({
                    "challenger": st.challenger,
                    "defender": st.defender,
                    "d_pv_benefits": jnum(st.d_pv_benefits),
                    "d_pv_costs": jnum(st.d_pv_costs),
                    "d_npv": jnum(st.d_npv),
                    "d_bcr": jopt(st.d_bcr),
                    "d_irr": Value::Array(st.d_irr.rates().into_iter().map(jnum).collect()),
                    "d_irr_status": st.d_irr.status(),
                    "accepted": st.accepted,
                })
            })
            .collect();
        top.insert(
            "incremental".into(),
            json!({ "steps": steps, "winner": inc.winner }),
        );
    }
    if let Some(b) = &a.budget {
        let set = |p: &Portfolio| {
            json!({
                "projects": p.chosen.iter().map(|&i| b.projects[i].name.clone()).collect::<Vec<_>>(),
                "npv": jnum(p.npv),
                "cost": jnum(p.cost),
            })
        };
        top.insert(
            "budget".into(),
            json!({
                "limit": jnum(b.budget),
                "best": set(&b.best),
                "largest_npv_first": set(&b.by_npv),
                "largest_npv_per_cost_first": set(&b.by_ratio),
            }),
        );
    }
    top.insert("caution".into(), json!(pavestrat::CAUTION));
    Value::Object(top)
}
