//! What `appraise` writes and prints: the rows of `appraisal.csv`, `incremental.csv`,
//! `widening.csv` and `yearly.csv` (columns in [`crate::schema::others::appraise`]) from
//! each section's typed results, and the terminal summary, gathered chunk by chunk.

use crate::appraise::SectionResult;
use crate::input::models::ConditionParams;
use crate::input::Run;
use crate::model::money::grouped;
use crate::model::network::{Network, Section};
use crate::output::format::{irr_text, pct, Amount, Field, Fixed, Rates};
use crate::schema::carried::carried_cells;
use crate::simulate::condition::{classify, ConditionClass};
use std::fmt::Write as _;

/// Rows of `appraisal.csv`: `results` are those of `secs`, in order; each row ends with the
/// columns carried from the network ([`carried_cells`]).
pub fn appraisal_rows(net: &Network, secs: &[&Section], results: &[SectionResult]) -> String {
    let mut s = String::new();
    for (sec, r) in secs.iter().zip(results) {
        for st in &r.strategies {
            let i = &st.indicators;
            let _ = write!(
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
            end_row(net, sec, &mut s);
        }
    }
    s
}

/// The end of a section's row: the columns carried from the network, and the line break.
fn end_row(net: &Network, sec: &Section, s: &mut String) {
    carried_cells(net, sec, s);
    s.push('\n');
}

/// Rows of `incremental.csv` (as [`appraisal_rows`]).
pub fn incremental_rows(net: &Network, secs: &[&Section], results: &[SectionResult]) -> String {
    let mut s = String::new();
    for (sec, r) in secs.iter().zip(results) {
        for (k, st) in r.incremental.steps.iter().enumerate() {
            let _ = write!(
                s,
                "{},{},{},{},{},{},{},{},{},{},{}",
                Field(&r.section),
                k + 1,
                Field(&st.challenger),
                Field(st.defender.as_deref().unwrap_or(crate::enumerate::BASE)),
                Amount(st.d_pv_benefits),
                Amount(st.d_pv_costs),
                Amount(st.d_npv),
                Fixed(st.d_bcr, 6),
                Rates(&st.d_irr),
                st.d_irr.status(),
                st.accepted
            );
            end_row(net, sec, &mut s);
        }
    }
    s
}

/// Rows of `widening.csv` (as [`appraisal_rows`]).
pub fn widening_rows(net: &Network, secs: &[&Section], results: &[SectionResult]) -> String {
    let mut s = String::new();
    for (sec, r) in secs.iter().zip(results) {
        let Some(w) = &r.widening else { continue };
        for y in &w.years {
            let _ = write!(
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
            end_row(net, sec, &mut s);
        }
    }
    s
}

/// Rows of `yearly.csv` (as [`appraisal_rows`]).
pub fn yearly_rows(run: &Run, secs: &[&Section], results: &[SectionResult]) -> String {
    let mut s = String::new();
    let net = &run.network;
    let y0 = run.scenario.base_year;
    let cp = &run.scenario.models.condition;
    for (sec, r) in secs.iter().zip(results) {
        for (name, t) in &r.traces {
            for i in 0..t.iri.len() {
                let _ = write!(
                    s,
                    "{},{},{},{},{},{},{},{},{},{},{},{},0.00",
                    Field(&r.section),
                    Field(name),
                    y0 + crate::model::YearOffset::at(i),
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
                end_row(net, sec, &mut s);
            }
            // The residual value is credited the year after the period ends.
            let _ = write!(
                s,
                "{},{},{},,,,0.00,0.00,0.00,0.00,0.00,0.00,{}",
                Field(&r.section),
                Field(name),
                y0 + crate::model::YearOffset::at(t.iri.len()),
                Amount(t.residual)
            );
            end_row(net, sec, &mut s);
        }
    }
    s
}

/// Sections listed one by one in the terminal summary; the rest are counted and in the files.
const SHOWN: usize = 60;

/// The terminal summary of `appraise`, gathered chunk by chunk: totals, and the lines of the first
/// sections.
#[derive(Debug, Default)]
pub struct Summary {
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
    pub fn add(&mut self, sections: &[&Section], results: &[SectionResult], cp: &ConditionParams) {
        for (sec, r) in sections.iter().zip(results) {
            self.sections += 1;
            self.strategies += r.strategies.len();
            let (Some(b), Some(base)) = (r.get(&r.best), r.get(crate::enumerate::BASE)) else {
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
            let at = |y: Option<crate::model::Year>| {
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

    pub fn render(&self, run: &Run) -> String {
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
        s.push_str(crate::CAUTION);
        s.push('\n');
        s
    }
}
