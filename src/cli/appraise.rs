//! `pavestrat appraise`: simulate every section under every strategy and appraise each strategy
//! against the section's base strategy (routine maintenance only).
//!
//! Prints one line per section (its preferred strategy by the incremental analysis, with NPV,
//! BCR, IRR and FYRR), then the widening timing of sections that can be widened. With `--out DIR`
//! it writes `appraisal.csv` (one row per section × strategy), `incremental.csv` (each section's
//! chain of comparisons), `widening.csv` (NPV and FYRR by widening year) and, when sections are
//! picked with `--section`, `yearly.csv` (each strategy's condition and costs year by year).

use super::{load_scenario, Context, OutArg};
use pavestrat::appraise::{self, SectionResult};
use pavestrat::diag::did_you_mean;
use pavestrat::error::{Error, Result};
use pavestrat::input::models::ConditionParams;
use pavestrat::input::network::Section;
use pavestrat::input::Run;
use pavestrat::io::{print_stdout, StreamSet};
use pavestrat::model::money::grouped;
use pavestrat::output::format::{irr_text, pct, Amount, Field, Fixed, Rates};
use pavestrat::output::schema::others::appraise::{APPRAISAL, INCREMENTAL, WIDENING, YEARLY};
use pavestrat::simulate::condition::{classify, ConditionClass};
use std::fmt::Write as _;
use std::path::PathBuf;

/// Arguments of `appraise`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is used (and said so).
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,

    /// Appraise only these sections (repeat, or list several); also writes yearly.csv.
    #[arg(long, value_name = "ID", num_args = 1..)]
    pub section: Vec<String>,

    /// Do not look for IRRs (most of the arithmetic of a large appraisal): the irr columns are
    /// left empty with the status `skipped`. Without --out only the preferred strategies' IRRs
    /// are looked for, as only they are printed.
    #[arg(long)]
    pub no_irr: bool,

    #[command(flatten)]
    pub out: OutArg,
}

/// Sections appraised together before their rows are written: bounds memory whatever the
/// network's size, while giving every thread plenty of work.
const CHUNK: usize = 2048;

/// Run `appraise`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    ctx.notes(&diags);
    ctx.defaults_note(&run.scenario.models);
    let picked = pick_sections(&run, &args.section)?;
    let keep = !args.section.is_empty() && args.out.out.is_some();
    let mut files = match &args.out.out {
        Some(dir) => {
            let specs = [APPRAISAL, INCREMENTAL, WIDENING, YEARLY];
            let specs = &specs[..if keep { 4 } else { 3 }];
            let names: Vec<&str> = specs.iter().map(|f| f.name).collect();
            let mut set = StreamSet::create(dir, "appraise", &names)?;
            for (i, spec) in specs.iter().enumerate() {
                set.write(i, spec.head().as_bytes())?;
            }
            Some(set)
        }
        None => None,
    };
    let scope = if args.no_irr {
        appraise::IrrScope::Skipped
    } else if args.out.out.is_some() {
        appraise::IrrScope::Every
    } else {
        appraise::IrrScope::Preferred
    };
    let mut summary = Summary::default();
    let bar = ctx
        .progress
        .bar("appraise", picked.len() as u64, "sections");
    for chunk in picked.chunks(CHUNK) {
        let results = appraise::network(&run, chunk, keep, scope);
        bar.inc(chunk.len() as u64);
        if let Some(set) = &mut files {
            set.write(0, appraisal_rows(&results).as_bytes())?;
            set.write(1, incremental_rows(&results).as_bytes())?;
            set.write(2, widening_rows(&results).as_bytes())?;
            if keep {
                set.write(3, yearly_rows(&run, &results).as_bytes())?;
            }
        }
        summary.add(chunk, &results, &run.scenario.models.condition);
    }
    bar.finish();
    if let Some(set) = files {
        for p in set.commit()? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    // Without --out the summary is the output; with it, the summary is news that --quiet silences.
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&summary.render(&run))?;
    }
    Ok(())
}

fn pick_sections<'r>(
    run: &'r Run,
    ids: &[String],
) -> Result<Vec<&'r pavestrat::input::network::Section>> {
    let all = &run.network.sections;
    if ids.is_empty() {
        return Ok(all.iter().collect());
    }
    let names: Vec<&str> = all.iter().map(|s| s.id.as_str()).collect();
    let mut out = Vec::new();
    for id in ids {
        match all.iter().find(|s| s.id.as_str() == *id) {
            Some(s) => {
                if !out
                    .iter()
                    .any(|o: &&pavestrat::input::network::Section| o.id == s.id)
                {
                    out.push(s);
                }
            }
            None => {
                let hint = did_you_mean(id, &names)
                    .map(|m| format!(" (did you mean `{m}`?)"))
                    .unwrap_or_default();
                return Err(Error::Usage(format!(
                    "--section: no section `{id}` in {}{hint}; expected a section_id of the network",
                    run.network.file
                )));
            }
        }
    }
    Ok(out)
}

/// Rows of `appraisal.csv`.
pub fn appraisal_rows(results: &[SectionResult]) -> String {
    let mut s = String::new();
    for r in results {
        for st in &r.strategies {
            let i = &st.indicators;
            let _ = writeln!(
                s,
                "{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{}",
                Field(&r.section),
                Field(&st.strategy),
                Field(st.template.as_deref().unwrap_or("")),
                Amount(st.pv_agency),
                Amount(st.pv_capital),
                Amount(st.pv_routine),
                Amount(st.pv_residual),
                Amount(st.pv_user),
                Amount(i.npv),
                Fixed(i.bcr, 6),
                Fixed(st.bcr_capital, 6),
                Fixed(st.npv_per_capital, 6),
                Rates(&i.irr),
                i.irr.status(),
                Fixed(i.fyrr, 6),
                Fixed(Some(st.mean_iri), 3),
                Fixed(Some(st.final_iri), 3),
                st.strategy == r.best,
            );
        }
    }
    s
}

fn incremental_rows(results: &[SectionResult]) -> String {
    let mut s = String::new();
    for r in results {
        for (k, st) in r.incremental.steps.iter().enumerate() {
            let _ = writeln!(
                s,
                "{},{},{},{},{},{},{},{},{},{},{}",
                Field(&r.section),
                k + 1,
                Field(&st.challenger),
                Field(st.defender.as_deref().unwrap_or(pavestrat::enumerate::BASE)),
                Amount(st.d_pv_benefits),
                Amount(st.d_pv_costs),
                Amount(st.d_npv),
                Fixed(st.d_bcr, 6),
                Rates(&st.d_irr),
                st.d_irr.status(),
                st.accepted
            );
        }
    }
    s
}

fn widening_rows(results: &[SectionResult]) -> String {
    let mut s = String::new();
    for r in results {
        let Some(w) = &r.widening else { continue };
        for y in &w.years {
            let _ = writeln!(
                s,
                "{},{},{},{},{},{},{}",
                Field(&r.section),
                y.year,
                Field(&y.strategy),
                Amount(y.npv),
                Fixed(y.fyrr, 6),
                w.by_fyrr == Some(y.year),
                w.by_npv == Some(y.year),
            );
        }
    }
    s
}

fn yearly_rows(run: &Run, results: &[SectionResult]) -> String {
    let mut s = String::new();
    let y0 = run.scenario.base_year;
    let cp = &run.scenario.models.condition;
    for r in results {
        for (name, t) in &r.traces {
            for i in 0..t.iri.len() {
                let _ = writeln!(
                    s,
                    "{},{},{},{},{},{},{},{},{},{},{},{},0.00",
                    Field(&r.section),
                    Field(name),
                    y0 + pavestrat::model::YearOffset::at(i),
                    Fixed(Some(t.iri[i]), 3),
                    classify(t.iri[i], cp).name(),
                    Fixed(Some(t.sn[i]), 3),
                    Amount(t.capital[i]),
                    Amount(t.routine[i]),
                    Amount(t.operating[i]),
                    Amount(t.time[i]),
                    Amount(t.crashes[i]),
                    Amount(t.delay[i]),
                );
            }
            // The residual value is credited the year after the period ends.
            let _ = writeln!(
                s,
                "{},{},{},,,,0.00,0.00,0.00,0.00,0.00,0.00,{}",
                Field(&r.section),
                Field(name),
                y0 + pavestrat::model::YearOffset::at(t.iri.len()),
                Amount(t.residual)
            );
        }
    }
    s
}

/// Sections listed one by one in the terminal summary; the rest are counted and in the files.
const SHOWN: usize = 60;

/// What the terminal summary needs, gathered chunk by chunk: totals, and the lines of the first
/// sections.
#[derive(Debug, Default)]
struct Summary {
    sections: usize,
    strategies: usize,
    total_npv: f64,
    lines: String,
    widening_sections: usize,
    widening_lines: String,
    /// Length (km), and length × IRI and length in poor condition in the period's last year,
    /// under the base and under the preferred strategies.
    length: f64,
    iri_km: [f64; 2],
    poor_km: [f64; 2],
    /// Length × mean IRI over the period, base and preferred.
    mean_iri_km: [f64; 2],
}

impl Summary {
    fn add(&mut self, sections: &[&Section], results: &[SectionResult], cp: &ConditionParams) {
        for (sec, r) in sections.iter().zip(results) {
            self.sections += 1;
            self.strategies += r.strategies.len();
            let (Some(b), Some(base)) = (r.get(&r.best), r.get(pavestrat::enumerate::BASE)) else {
                continue;
            };
            self.total_npv += b.indicators.npv;
            self.length += sec.length_km;
            for (k, st) in [base, b].into_iter().enumerate() {
                self.iri_km[k] += sec.length_km * st.final_iri;
                self.mean_iri_km[k] += sec.length_km * st.mean_iri;
                if classify(st.final_iri, cp) == ConditionClass::Poor {
                    self.poor_km[k] += sec.length_km;
                }
            }
            if self.sections <= SHOWN {
                let i = &b.indicators;
                let _ = writeln!(
                    self.lines,
                    "{:<10} {:>5}  {:<34} {:>14} {:>7} {:>9} {:>9}",
                    r.section,
                    r.strategies.len(),
                    r.best,
                    grouped(i.npv, 0),
                    i.bcr.map_or("n/a".into(), |x| format!("{x:.2}")),
                    if b.template.is_none() {
                        "n/a".into()
                    } else {
                        irr_text(&i.irr)
                    },
                    pct(i.fyrr),
                );
            }
            let Some(w) = &r.widening else { continue };
            self.widening_sections += 1;
            if self.widening_sections > SHOWN {
                continue;
            }
            let at = |y: Option<pavestrat::model::Year>| {
                let f = y.and_then(|y| w.years.iter().find(|x| x.year == y));
                match (y, f) {
                    (Some(y), Some(f)) => {
                        format!("{y} (FYRR {}, NPV {})", pct(f.fyrr), grouped(f.npv, 0))
                    }
                    _ => "not within the windows".to_owned(),
                }
            };
            let _ = writeln!(
                self.widening_lines,
                "  {:<10} by FYRR {:<40} highest NPV {}",
                r.section,
                at(w.by_fyrr),
                at(w.by_npv)
            );
        }
    }

    fn render(&self, run: &Run) -> String {
        let sc = &run.scenario;
        let money = if sc.money_label.is_empty() {
            String::new()
        } else {
            format!(" {}", sc.money_label)
        };
        let mut s = format!(
            "Appraisal of {} — {} sections, {} strategies\nbase year {}, {} years to {}, discount rate {:.2} % real ({}); money in{}\n\n",
            if sc.title.is_empty() { &sc.file } else { &sc.title },
            self.sections,
            self.strategies,
            sc.base_year,
            sc.analysis_years,
            sc.last_year(),
            sc.discounting.rate() * 100.0,
            sc.discounting.timing(),
            if money.is_empty() { " the scenario's units".to_owned() } else { money.clone() },
        );
        s.push_str(
            "Each section's preferred strategy, chosen by incremental analysis (the highest NPV against\n\
             the base), out of its `opts` strategies (base included); NPV, BCR, IRR and FYRR against the base.\n\n",
        );
        let _ = writeln!(
            s,
            "{:<10} {:>5}  {:<34} {:>14} {:>7} {:>9} {:>9}",
            "section", "opts", "preferred strategy", "NPV", "BCR", "IRR", "FYRR"
        );
        s.push_str(&self.lines);
        if self.sections > SHOWN {
            let _ = writeln!(
                s,
                "… and {} more sections (see appraisal.csv with --out)",
                self.sections - SHOWN
            );
        }
        let _ = writeln!(
            s,
            "\nNPV of every section's preferred strategy, with no budget limit: {}{money}",
            grouped(self.total_npv, 0)
        );
        if self.length > 0.0 {
            let l = self.length;
            let _ = writeln!(
                s,
                "Condition, length-weighted, base vs preferred strategies: mean IRI over the period {:.2} vs {:.2} m/km;\n\
                 in {} IRI {:.2} vs {:.2} m/km, and {:.0} % vs {:.0} % of the length in poor condition.",
                self.mean_iri_km[0] / l,
                self.mean_iri_km[1] / l,
                sc.last_year(),
                self.iri_km[0] / l,
                self.iri_km[1] / l,
                100.0 * self.poor_km[0] / l,
                100.0 * self.poor_km[1] / l,
            );
        }
        if self.widening_sections > 0 {
            let _ = writeln!(
                s,
                "\nWidening timing (first year FYRR reaches {:.2} %, beside the year of highest NPV)",
                sc.discounting.rate() * 100.0
            );
            s.push_str(&self.widening_lines);
            if self.widening_sections > SHOWN {
                let _ = writeln!(
                    s,
                    "  … and {} more sections (see widening.csv with --out)",
                    self.widening_sections - SHOWN
                );
            }
        }
        s.push('\n');
        s.push_str(pavestrat::CAUTION);
        s.push('\n');
        s
    }
}
