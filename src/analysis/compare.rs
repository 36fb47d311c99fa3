//! Two written plans side by side (`compare`): last year's programme against this year's, or a
//! plan against the same network under a budget cut.
//!
//! Sections are matched by `section_id`, budget lines by name and years by year. For each
//! section the comparison says how plan B's choice differs from plan A's ([`Change`]); for each
//! budget line, its use and price in both; for each year, the works and their cost (from the
//! work programmes, so years no line limits count too) and the network's condition. Amounts
//! are taken as the files hold them (money to the cent, use in exact decimals), so a
//! difference here is the difference of the two files' cells.

use crate::error::{Error, Result};
use crate::model::money::price_figure;
use crate::model::Year;
use crate::schema::compare::{LineChange, SectionChange, YearChange};
use crate::schema::plan::{BudgetUse, Condition, SectionPlan, Work, SUMMARY};
use crate::schema::summary::Summary;
use crate::schema::value::{Cents, Dec, Fixed};
use crate::schema::{self, Record as _};
use std::collections::{BTreeMap, HashMap};
use std::path::{Path, PathBuf};

/// How plan B's choice for a section differs from plan A's.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Change {
    /// The same strategy.
    None,
    /// The same treatments at other years (or other condition triggers).
    Timing,
    /// Other treatments (including works in one plan and none in the other).
    Treatment,
    /// The section is in plan A only.
    OnlyA,
    /// The section is in plan B only.
    OnlyB,
}

impl Change {
    /// Every change, in the order they are listed.
    pub const ALL: [Change; 5] = [
        Change::None,
        Change::Timing,
        Change::Treatment,
        Change::OnlyA,
        Change::OnlyB,
    ];

    /// Its word in `comparison.csv`.
    pub fn word(self) -> &'static str {
        match self {
            Change::None => "none",
            Change::Timing => "timing",
            Change::Treatment => "treatment",
            Change::OnlyA => "only-a",
            Change::OnlyB => "only-b",
        }
    }

    /// The change a word of `comparison.csv` names.
    pub fn parse(word: &str) -> Option<Change> {
        Change::ALL.into_iter().find(|c| c.word() == word)
    }

    /// How strategy `b` differs from strategy `a`.
    pub fn between(a: &str, b: &str) -> Change {
        if a == b {
            Change::None
        } else if shape(a) == shape(b) {
            Change::Timing
        } else {
            Change::Treatment
        }
    }
}

/// A strategy's treatments without their timing: each part's figures after `@` removed
/// (`strengthen@2027+widen@2032` → `strengthen@+widen@`, `inlay@iri4.5` → `inlay@iri`).
fn shape(strategy: &str) -> String {
    let mut out = String::with_capacity(strategy.len());
    for (i, part) in strategy.split('+').enumerate() {
        if i > 0 {
            out.push('+');
        }
        match part.split_once('@') {
            Some((treatment, when)) => {
                out.push_str(treatment);
                out.push('@');
                out.extend(when.chars().filter(|c| !c.is_ascii_digit() && *c != '.'));
            }
            None => out.push_str(part),
        }
    }
    out
}

/// One plan's files as the comparison reads them.
#[derive(Debug, Clone)]
pub struct Side {
    pub dir: PathBuf,
    pub summary: Summary,
    /// The run id of the `plan` that wrote the files (from the directory's manifest).
    pub run: Option<String>,
    /// A scenario planned afresh by this comparison (`dir` is the scenario file), not a
    /// written plan.
    pub afresh: bool,
    sections: Vec<SectionPlan>,
    /// The columns `section_plan.csv` carries from the network (location, `x_`), by name, and
    /// each section's cells in them.
    carried_names: Vec<String>,
    carried: Vec<Vec<String>>,
    budget: Vec<BudgetUse>,
    condition: Vec<Condition>,
    works: Vec<Work>,
}

/// The files of one plan a comparison needs.
const NEEDED: [&str; 5] = [
    SUMMARY,
    SectionPlan::FILE.name,
    BudgetUse::FILE.name,
    Condition::FILE.name,
    Work::FILE.name,
];

impl Side {
    /// Read the plan `plan --out DIR` wrote into `dir` (`which`: `A` or `B`, for messages).
    pub fn read(dir: &Path, which: &str) -> Result<Side> {
        let summary_path = dir.join(SUMMARY);
        if !summary_path.is_file() {
            return Err(Error::Usage(format!(
                "plan {which}: {} holds no {SUMMARY}; expected the directory `pavestrat plan --out DIR` wrote",
                dir.display()
            )));
        }
        let manifest = crate::io::verify(dir)?;
        if let Some(m) = &manifest {
            crate::io::check_plan_set(dir, m, &NEEDED)?;
        }
        let label = summary_path.display().to_string();
        let text = std::fs::read_to_string(&summary_path)
            .map_err(|e| Error::Usage(format!("cannot read {label}: {e}")))?;
        let summary = Summary::parse(&label, &text)?;
        let table = SectionPlan::FILE.read(dir)?;
        let lines: Vec<(usize, SectionPlan)> = schema::lines_of(&table)?;
        unique(
            &table.label,
            "section_id",
            lines.iter().map(|(l, r)| (*l, r.section_id.as_str())),
        )?;
        let own = SectionPlan::FILE.columns;
        let extra: Vec<usize> = (0..table.head.len())
            .filter(|&i| !own.contains(&table.head[i].as_str()))
            .collect();
        let carried_names = extra.iter().map(|&i| table.head[i].clone()).collect();
        let carried = table
            .rows
            .iter()
            .map(|(_, rec)| {
                extra
                    .iter()
                    .map(|&i| rec.get(i).unwrap_or("").to_owned())
                    .collect()
            })
            .collect();
        let budget_table = BudgetUse::FILE.read(dir)?;
        let budget: Vec<(usize, BudgetUse)> = schema::lines_of(&budget_table)?;
        unique(
            &budget_table.label,
            "line",
            budget.iter().map(|(l, r)| (*l, r.line.as_str())),
        )?;
        Ok(Side {
            dir: dir.to_owned(),
            summary,
            run: manifest
                .as_ref()
                .and_then(|m| m.plan_run().map(str::to_owned)),
            afresh: false,
            sections: lines.into_iter().map(|(_, r)| r).collect(),
            carried_names,
            carried,
            budget: budget.into_iter().map(|(_, r)| r).collect(),
            condition: schema::read(dir)?,
            works: schema::read(dir)?,
        })
    }
}

/// A plan made in this run from the scenario `file`: its rows, as its files would hold them.
/// The carried columns are `carried_names`, and each section's cells in them, in the sections'
/// order.
#[allow(clippy::too_many_arguments)]
pub fn planned_afresh(
    file: &Path,
    summary: Summary,
    sections: Vec<SectionPlan>,
    carried_names: Vec<String>,
    carried: Vec<Vec<String>>,
    budget: Vec<BudgetUse>,
    condition: Vec<Condition>,
    works: Vec<Work>,
) -> Side {
    Side {
        dir: file.to_owned(),
        summary,
        run: None,
        afresh: true,
        sections,
        carried_names,
        carried,
        budget,
        condition,
        works,
    }
}

/// An error naming the first key of `keys` (each with its line) that comes twice.
fn unique<'k>(
    label: &str,
    field: &str,
    keys: impl Iterator<Item = (usize, &'k str)>,
) -> Result<()> {
    let mut seen: HashMap<&str, usize> = HashMap::new();
    for (line, key) in keys {
        if let Some(first) = seen.insert(key, line) {
            let mut d = crate::diag::Diagnostics::new();
            d.error(
                crate::diag::Place::line(label.to_owned(), line).with_field(field),
                format!("`{key}` again (first on line {first})"),
                format!("each {field} once, as `pavestrat plan` writes the file"),
            );
            return Err(Error::Input(d));
        }
    }
    Ok(())
}

/// Two plans side by side.
#[derive(Debug, Clone)]
pub struct Comparison {
    pub a: Side,
    pub b: Side,
    /// Every section of either plan: A's in A's order, then those only in B.
    pub sections: Vec<SectionChange>,
    /// The columns carried from the networks (B's, then any only A has), and each section
    /// row's cells in them.
    pub carried_names: Vec<String>,
    pub carried: Vec<Vec<String>>,
    /// Every budget line of either plan: A's in A's order, then those only in B.
    pub lines: Vec<LineChange>,
    /// Every year of either plan's condition or works, in order.
    pub years: Vec<YearChange>,
    /// The assumptions the two plans were made under that differ, each as a sentence.
    pub differences: Vec<String>,
}

/// Money by budget group: its name and the two plans' use over all its lines' years (`None`
/// where a plan has no line of the group).
pub type GroupUse = (String, Option<Dec>, Option<Dec>);

impl Comparison {
    /// How many sections' choices differ from A to B by `change`.
    pub fn count(&self, change: Change) -> usize {
        self.sections
            .iter()
            .filter(|s| s.change == change.word())
            .count()
    }

    /// The sections whose choice differs (or that are in one plan only), in A's order then B's.
    pub fn changed(&self) -> Vec<&SectionChange> {
        self.sections
            .iter()
            .filter(|s| s.change != Change::None.word())
            .collect()
    }

    /// Each budget group's use in the two plans, in the order the groups first appear.
    pub fn groups(&self) -> Vec<GroupUse> {
        let mut out: Vec<GroupUse> = Vec::new();
        for l in &self.lines {
            let at = match out.iter().position(|g| g.0 == l.group) {
                Some(i) => i,
                None => {
                    out.push((l.group.clone(), None, None));
                    out.len() - 1
                }
            };
            let add = |sum: &mut Option<Dec>, x: Option<Dec>| {
                if let Some(x) = x {
                    *sum = Some(Dec(sum.map_or(x.0, |s| s.0 + x.0)));
                }
            };
            add(&mut out[at].1, l.used_a);
            add(&mut out[at].2, l.used_b);
        }
        out
    }

    /// The two plans' works over all years: how many, and their cost in cents, exactly.
    pub fn works(&self) -> [(u64, Cents); 2] {
        let mut out = [(0, Fixed(0)); 2];
        for y in &self.years {
            out[0].0 += y.works_a;
            out[0].1 .0 += y.cost_a.0;
            out[1].0 += y.works_b;
            out[1].1 .0 += y.cost_b.0;
        }
        out
    }

    /// The lines whose price moved or whose state changed.
    pub fn moved_lines(&self) -> impl Iterator<Item = &LineChange> {
        self.lines
            .iter()
            .filter(|l| l.price_moved || l.state_a != l.state_b)
    }

    /// The mean over the years both plans cover of the network's mean IRI, for A and B.
    pub fn period_iri(&self) -> Option<(f64, f64)> {
        let both: Vec<(f64, f64)> = self
            .years
            .iter()
            .filter_map(|y| Some((y.mean_iri_a?.to_f64(), y.mean_iri_b?.to_f64())))
            .collect();
        if both.is_empty() {
            return None;
        }
        let n = both.len() as f64;
        Some((
            both.iter().map(|p| p.0).sum::<f64>() / n,
            both.iter().map(|p| p.1).sum::<f64>() / n,
        ))
    }
}

/// The difference of two amounts in cents, when both are there.
fn cents_change(a: Option<Cents>, b: Option<Cents>) -> Option<Cents> {
    Some(Fixed(b?.0 - a?.0))
}

/// Hold plan `b` against plan `a`.
pub fn compare(a: Side, b: Side) -> Comparison {
    let (sections, carried_names, carried) = section_rows(&a, &b);
    let lines = line_rows(&a, &b);
    let years = year_rows(&a, &b);
    let differences = differences(&a.summary, &b.summary);
    Comparison {
        a,
        b,
        sections,
        carried_names,
        carried,
        lines,
        years,
        differences,
    }
}

fn section_rows(a: &Side, b: &Side) -> (Vec<SectionChange>, Vec<String>, Vec<Vec<String>>) {
    let mut names = b.carried_names.clone();
    for n in &a.carried_names {
        if !names.contains(n) {
            names.push(n.clone());
        }
    }
    let cells_of = |side: &Side, i: usize| -> Vec<(usize, String)> {
        side.carried_names
            .iter()
            .zip(&side.carried[i])
            .filter_map(|(n, v)| Some((names.iter().position(|m| m == n)?, v.clone())))
            .collect()
    };
    let in_b: HashMap<&str, usize> = b
        .sections
        .iter()
        .enumerate()
        .map(|(i, s)| (s.section_id.as_str(), i))
        .collect();
    let in_a: HashMap<&str, usize> = a
        .sections
        .iter()
        .enumerate()
        .map(|(i, s)| (s.section_id.as_str(), i))
        .collect();
    let mut rows = Vec::new();
    let mut carried = Vec::new();
    let pairs = (0..a.sections.len())
        .map(|i| {
            (
                Some(i),
                in_b.get(a.sections[i].section_id.as_str()).copied(),
            )
        })
        .chain(
            (0..b.sections.len())
                .filter(|&j| !in_a.contains_key(b.sections[j].section_id.as_str()))
                .map(|j| (None, Some(j))),
        );
    for (ia, ib) in pairs {
        let ra = ia.map(|i| &a.sections[i]);
        let rb = ib.map(|j| &b.sections[j]);
        let change = match (ra, rb) {
            (Some(x), Some(y)) => Change::between(&x.strategy, &y.strategy),
            (Some(_), None) => Change::OnlyA,
            _ => Change::OnlyB,
        };
        let Some(any) = rb.or(ra) else { continue };
        let npv_a = ra.map(|r| r.npv);
        let npv_b = rb.map(|r| r.npv);
        let pva_a = ra.map(|r| r.pv_agency_cost);
        let pva_b = rb.map(|r| r.pv_agency_cost);
        let year_a = ra.and_then(|r| r.first_works_year);
        let year_b = rb.and_then(|r| r.first_works_year);
        rows.push(SectionChange {
            section_id: any.section_id.clone(),
            region: any.region.clone(),
            change: change.word().to_owned(),
            strategy_a: ra.map(|r| r.strategy.clone()).unwrap_or_default(),
            strategy_b: rb.map(|r| r.strategy.clone()).unwrap_or_default(),
            first_works_year_a: year_a,
            first_works_year_b: year_b,
            year_shift: match (year_a, year_b) {
                (Some(x), Some(y)) => Some(y.0 - x.0),
                _ => None,
            },
            npv_a,
            npv_b,
            npv_change: cents_change(npv_a, npv_b),
            pv_agency_cost_a: pva_a,
            pv_agency_cost_b: pva_b,
            pv_agency_cost_change: cents_change(pva_a, pva_b),
        });
        // B's cells where B has the section and the column, else A's.
        let mut cells = vec![String::new(); names.len()];
        let from_a = ia.map(|i| cells_of(a, i)).unwrap_or_default();
        let from_b = ib.map(|j| cells_of(b, j)).unwrap_or_default();
        for (k, v) in from_a.into_iter().chain(from_b) {
            cells[k] = v;
        }
        carried.push(cells);
    }
    (rows, names, carried)
}

fn dec_change(a: Option<Dec>, b: Option<Dec>) -> Option<Dec> {
    Some(Dec(b?.0 - a?.0))
}

fn line_rows(a: &Side, b: &Side) -> Vec<LineChange> {
    let in_b: HashMap<&str, &BudgetUse> = b.budget.iter().map(|r| (r.line.as_str(), r)).collect();
    let in_a: HashMap<&str, &BudgetUse> = a.budget.iter().map(|r| (r.line.as_str(), r)).collect();
    let pairs = a
        .budget
        .iter()
        .map(|r| (Some(r), in_b.get(r.line.as_str()).copied()))
        .chain(
            b.budget
                .iter()
                .filter(|r| !in_a.contains_key(r.line.as_str()))
                .map(|r| (None, Some(r))),
        );
    pairs
        .filter_map(|(ra, rb)| {
            let any = rb.or(ra)?;
            let (used_a, used_b) = (ra.map(|r| r.used), rb.map(|r| r.used));
            let (price_a, price_b) = (ra.map(|r| r.price), rb.map(|r| r.price));
            Some(LineChange {
                line: any.line.clone(),
                year: any.year,
                group: any.group.clone(),
                category: any.category.clone(),
                region: any.region.clone(),
                limit_a: ra.map(|r| r.limit),
                limit_b: rb.map(|r| r.limit),
                used_a,
                used_b,
                used_change: dec_change(used_a, used_b),
                state_a: ra.map(|r| r.state.clone()).unwrap_or_default(),
                state_b: rb.map(|r| r.state.clone()).unwrap_or_default(),
                price_a,
                price_b,
                price_moved: match (price_a, price_b) {
                    (Some(x), Some(y)) => price_figure(x.0) != price_figure(y.0),
                    _ => false,
                },
            })
        })
        .collect()
}

fn year_rows(a: &Side, b: &Side) -> Vec<YearChange> {
    #[derive(Default)]
    struct Y {
        works: [u64; 2],
        cost: [i128; 2],
        cond: [Option<(Fixed<6>, Fixed<6>, Fixed<6>)>; 2],
    }
    let mut years: BTreeMap<Year, Y> = BTreeMap::new();
    for (k, side) in [a, b].into_iter().enumerate() {
        for w in &side.works {
            let y = years.entry(w.year).or_default();
            y.works[k] += 1;
            y.cost[k] += w.cost.0;
        }
        for c in side.condition.iter().filter(|c| c.case == "plan") {
            years.entry(c.year).or_default().cond[k] =
                Some((c.mean_iri, c.good_share, c.poor_share));
        }
    }
    years
        .into_iter()
        .map(|(year, y)| {
            let iri = |k: usize| y.cond[k].map(|c| c.0);
            YearChange {
                year,
                works_a: y.works[0],
                works_b: y.works[1],
                cost_a: Fixed(y.cost[0]),
                cost_b: Fixed(y.cost[1]),
                cost_change: Fixed(y.cost[1] - y.cost[0]),
                mean_iri_a: iri(0),
                mean_iri_b: iri(1),
                mean_iri_change: match (iri(0), iri(1)) {
                    (Some(p), Some(q)) => Some(Fixed(q.0 - p.0)),
                    _ => None,
                },
                good_share_a: y.cond[0].map(|c| c.1),
                good_share_b: y.cond[1].map(|c| c.1),
                poor_share_a: y.cond[0].map(|c| c.2),
                poor_share_b: y.cond[1].map(|c| c.2),
            }
        })
        .collect()
}

/// The assumptions that differ between the plans, each as a sentence (the budget scale, the
/// objective and the scenario's key assumptions).
fn differences(a: &Summary, b: &Summary) -> Vec<String> {
    let (x, y) = (&a.assumptions, &b.assumptions);
    let mut out = Vec::new();
    let mut differ = |what: &str, p: String, q: String| {
        if p != q {
            out.push(format!("{what}: {p} in A, {q} in B"));
        }
    };
    differ("money", a.money.clone(), b.money.clone());
    differ(
        "objective",
        a.objective_kind.clone(),
        b.objective_kind.clone(),
    );
    differ(
        "every budget line scaled by",
        a.budget_scale.to_string(),
        b.budget_scale.to_string(),
    );
    // A rate in percent to six decimals, trailing zeros dropped (0.06 → `6 %`, not the float's
    // 6.000000000000001).
    let percent = |r: f64| format!("{} %", (r * 1e8).round() / 1e6);
    differ(
        "discount rate",
        percent(x.discount_rate),
        percent(y.discount_rate),
    );
    differ(
        "base year",
        x.base_year.0.to_string(),
        y.base_year.0.to_string(),
    );
    differ(
        "analysis period",
        format!("{} years", x.analysis_years),
        format!("{} years", y.analysis_years),
    );
    differ("discounting", x.discounting.clone(), y.discounting.clone());
    differ("sections", a.sections.to_string(), b.sections.to_string());
    differ(
        "network length",
        format!("{:.1} km", x.length_km),
        format!("{:.1} km", y.length_km),
    );
    differ(
        "condition classes (IRI good below / poor above)",
        format!(
            "{} / {}",
            x.condition_classes_iri.good_below, x.condition_classes_iri.poor_above
        ),
        format!(
            "{} / {}",
            y.condition_classes_iri.good_below, y.condition_classes_iri.poor_above
        ),
    );
    differ("status", a.status.clone(), b.status.clone());
    if x.unit_values != y.unit_values {
        out.push("road-user unit values differ (see each summary.json)".to_owned());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn differing_assumptions_are_said_plainly() {
        let mut a = Summary::default();
        a.assumptions.discount_rate = 0.06;
        a.budget_scale = 1.0;
        let mut b = a.clone();
        assert!(differences(&a, &b).is_empty());
        b.assumptions.discount_rate = 0.07;
        b.budget_scale = 0.8;
        b.assumptions.unit_values.crash = 1.0;
        assert_eq!(
            differences(&a, &b),
            [
                "every budget line scaled by: 1 in A, 0.8 in B",
                "discount rate: 6 % in A, 7 % in B",
                "road-user unit values differ (see each summary.json)",
            ]
        );
    }

    #[test]
    fn a_change_of_years_or_triggers_is_timing_and_of_treatments_is_treatment() {
        assert_eq!(Change::between("base", "base"), Change::None);
        assert_eq!(
            Change::between("strengthen@2027+widen@2032", "strengthen@2028+widen@2037"),
            Change::Timing
        );
        assert_eq!(
            Change::between("inlay@iri4.5", "inlay@iri4"),
            Change::Timing
        );
        assert_eq!(
            Change::between("strengthen@2031", "strengthen-thick@2031"),
            Change::Treatment
        );
        assert_eq!(
            Change::between("base", "strengthen@2031"),
            Change::Treatment
        );
        assert_eq!(
            Change::between("strengthen@2027", "strengthen@2027+widen@2030"),
            Change::Treatment
        );
        for c in Change::ALL {
            assert_eq!(Change::parse(c.word()), Some(c));
        }
    }
}
