//! The files of `plan --out DIR`, made from the typed plan through the schema
//! ([`crate::schema::plan`]) and written into one all-or-nothing set.
//!
//! Large files (the section plan, the candidates, the widening table) are made and written
//! chunk by chunk, their rows in parallel. What a report draws is kept as typed rows when asked
//! ([`Keep::report`]), so `plan --report` draws the report from the rows the files were written
//! from — not from the files' text.

use crate::appraise::timing_rules;
use crate::enumerate::Enumerator;
use crate::error::Result;
use crate::input::scenario::VehicleClass;
use crate::input::Run;
use crate::io::StreamSet;
use crate::model::catalogue::Category;

use crate::model::YearOffset;
use crate::output::report::Inputs;
use crate::plan::{ConditionSeries, Plan, RowKind, CASES};
use crate::schema::carried::{carried_cells, head_carrying};
use crate::schema::plan::{
    candidate_head, row_column, write_candidate, BudgetUse, Condition, Limit, SectionPlan,
    TargetUse, Widening, Work, CANDIDATES, SUMMARY,
};
use crate::schema::summary::{self, Summary};
use crate::schema::value::{Cents, Dec, Fixed, Price, Real};
use crate::schema::{self as schema, Record};
use rayon::prelude::*;

/// Facts about a run besides the plan.
#[derive(Debug, Clone, Copy)]
pub struct Facts {
    pub seconds: f64,
    pub candidate_seconds: f64,
    pub selection_seconds: f64,
    pub budget_scale: f64,
    pub requested_gap: f64,
    pub time_limit: f64,
    /// widening_plan.csv holds every widening year, not only the picked ones.
    pub every_widening_year: bool,
}

/// What [`write()`] writes and keeps besides the files every plan writes.
#[derive(Debug, Clone, Copy, Default)]
pub struct Keep {
    /// Keep what a report draws (the work programme, the widening table) as typed rows.
    pub report: bool,
    /// Write candidates.csv.
    pub candidates: bool,
    /// Write every widening year, not only the picked ones.
    pub every_widening_year: bool,
}

/// Sections made into rows at a time (their rows in parallel), then written.
const CHUNK: usize = 4096;

/// Write every file of the plan into `set`: the work programme, section plan, budget and target
/// use, summary, condition, widening table and limits (and candidates.csv when asked). Returns
/// what a report draws from them (the work programme and widening table only when
/// [`Keep::report`]).
pub fn write(
    run: &Run,
    p: &Plan,
    facts: &Facts,
    set: &mut StreamSet,
    keep: Keep,
) -> Result<Inputs> {
    let e = Enumerator::for_run(run);
    let secs = &run.network.sections;

    let net = &run.network;
    let head = |spec: schema::FileSpec| head_carrying(spec, net);
    // Work programme: the works the exact re-check simulated, by year.
    set.write_to(Work::FILE.name, head(Work::FILE).as_bytes())?;
    let mut programme = Vec::new();
    let mut text = String::new();
    let mut work_features = Vec::new();
    for (w, row) in p.works.iter().zip(work_programme(run, p)) {
        row.write_then(&mut text, |out| carried_cells(net, &secs[w.section], out));
        if net.geometry_column {
            work_features.push(super::geojson::work_feature(net, &secs[w.section], &row));
        }
        if keep.report {
            programme.push(row);
        }
        if text.len() > 1 << 20 {
            set.write_to(Work::FILE.name, text.as_bytes())?;
            text.clear();
        }
    }
    set.write_to(Work::FILE.name, text.as_bytes())?;
    set.write_to(
        super::programme::NAME,
        super::programme::text(run, &p.works).as_bytes(),
    )?;
    if net.geometry_column {
        let text = super::geojson::collection(run.scenario.files.coordinates, work_features);
        set.write_to(super::geojson::WORK_PROGRAMME, text.as_bytes())?;
    }

    // Section plan and candidates, chunk by chunk (names rebuilt from the strategies' keys).
    set.write_to(SectionPlan::FILE.name, head(SectionPlan::FILE).as_bytes())?;
    let mut section_features = Vec::new();
    let c = &p.candidates;
    if keep.candidates {
        let head = candidate_head(
            c.rows
                .iter()
                .map(|r| (matches!(r.kind, RowKind::Budget(_)), r.name.as_str())),
        );
        set.write_to(CANDIDATES, head.as_bytes())?;
    }
    let first = first_works(p, secs.len());
    for from in (0..secs.len()).step_by(CHUNK) {
        let range = from..(from + CHUNK).min(secs.len());
        let texts: Vec<(String, String, String)> = range
            .into_par_iter()
            .map(|g| {
                let mut sp = String::new();
                let row = section_plan(run, &e, p, g, first[g]);
                row.write_then(&mut sp, |out| carried_cells(net, &secs[g], out));
                let mut cs = String::new();
                if keep.candidates {
                    candidates_of(run, &e, p, g, &mut cs);
                }
                let feature = if net.geometry_column {
                    super::geojson::section_feature(net, &secs[g], &row)
                } else {
                    String::new()
                };
                (sp, cs, feature)
            })
            .collect();
        let (mut a, mut b) = (String::new(), String::new());
        for (x, y, f) in texts {
            a.push_str(&x);
            b.push_str(&y);
            if net.geometry_column {
                section_features.push(f);
            }
        }
        set.write_to(SectionPlan::FILE.name, a.as_bytes())?;
        if keep.candidates {
            set.write_to(CANDIDATES, b.as_bytes())?;
        }
    }

    if net.geometry_column {
        let text = super::geojson::collection(
            run.scenario.files.coordinates,
            std::mem::take(&mut section_features),
        );
        set.write_to(super::geojson::SECTION_PLAN, text.as_bytes())?;
    }

    let budget = budget_use(run, p);
    set.write_to(BudgetUse::FILE.name, schema::text(&budget).as_bytes())?;
    let targets = target_use(run, p);
    set.write_to(TargetUse::FILE.name, schema::text(&targets).as_bytes())?;
    let summary = summary(run, p, facts, set.run_id());
    set.write_to(SUMMARY, summary.text().as_bytes())?;
    let condition = condition(&p.condition);
    set.write_to(Condition::FILE.name, schema::text(&condition).as_bytes())?;

    // The widening table, chunk by chunk (kept whole only for the report).
    set.write_to(Widening::FILE.name, head(Widening::FILE).as_bytes())?;
    let mut widening = Vec::new();
    for from in (0..secs.len()).step_by(CHUNK) {
        let rows = widening_rows(
            run,
            &e,
            p,
            from..(from + CHUNK).min(secs.len()),
            keep.every_widening_year,
        );
        let mut text = String::new();
        for (g, r) in &rows {
            r.write_then(&mut text, |out| carried_cells(net, &secs[*g], out));
        }
        set.write_to(Widening::FILE.name, text.as_bytes())?;
        if keep.report {
            widening.extend(rows.into_iter().map(|(_, r)| r));
        }
    }
    set.write_to(Limit::FILE.name, schema::text(&limits(p)).as_bytes())?;
    Ok(Inputs {
        summary,
        condition,
        budget,
        programme,
        targets: Some(targets),
        widening: keep.report.then_some(widening),
        frontier: None,
        sensitivity: None,
        risk: None,
        risk_draws: None,
        map: if keep.report { map_data(run) } else { None },
    })
}

/// The network's lines for the report's maps, as `section_plan.geojson` holds them (`None`
/// without a geometry column).
pub fn map_data(run: &Run) -> Option<crate::output::report::map::MapData> {
    use crate::output::report::map::{MapData, MapLine};
    let net = &run.network;
    net.geometry_column.then(|| MapData {
        lonlat: run.scenario.files.coordinates == crate::model::network::Coordinates::LonLat,
        sections: net
            .sections
            .iter()
            .filter_map(|s| {
                Some(MapLine {
                    section_id: s.id.as_str().to_owned(),
                    lines: s.geometry.clone()?,
                })
            })
            .collect(),
    })
}

/// The work programme's rows: every treatment of the plan, by year.
pub fn work_programme<'a>(run: &'a Run, p: &'a Plan) -> impl Iterator<Item = Work> + 'a {
    let secs = &run.network.sections;
    let y0 = run.scenario.base_year;
    p.works.iter().map(move |w| {
        let t = &run.catalogue.treatments[w.treatment];
        let sec = &secs[w.section];
        Work {
            year: y0 + w.year,
            section_id: sec.id.as_str().to_owned(),
            treatment: t.id.clone(),
            cost: Cents::of(w.cost),
            region: sec.region.as_deref().unwrap_or_default().to_owned(),
            category: t.category.name().to_owned(),
        }
    })
}

/// Each of the `n` sections' first works under the plan: the year of its earliest, or `None`.
pub fn first_works(p: &Plan, n: usize) -> Vec<Option<YearOffset>> {
    let mut first: Vec<Option<YearOffset>> = vec![None; n];
    for w in &p.works {
        let f = &mut first[w.section];
        *f = Some(f.map_or(w.year, |y| y.min(w.year)));
    }
    first
}

/// Section `g`'s row of the section plan (`first` its first works, from [`first_works`]).
pub fn section_plan(
    run: &Run,
    e: &Enumerator<'_>,
    p: &Plan,
    g: usize,
    first: Option<YearOffset>,
) -> SectionPlan {
    let c = &p.candidates;
    let sec = &run.network.sections[g];
    let k = c.chosen(&p.outcome.plan, g);
    let u = &c.unconstrained[g];
    SectionPlan {
        section_id: sec.id.as_str().to_owned(),
        region: sec.region.as_deref().unwrap_or_default().to_owned(),
        strategy: e.name(c.strategy[k]),
        npv: Cents::of(c.npv[k]),
        pv_agency_cost: Cents::of(c.pv_agency[k]),
        unconstrained_strategy: e.name(u.strategy),
        unconstrained_npv: Cents::of(u.npv),
        same: c.strategy[k] == u.strategy,
        first_works_year: first.map(|y| run.scenario.base_year + y),
    }
}

/// Section `g`'s rows of candidates.csv, appended to `out`: every candidate left after dominated
/// ones are removed, with the selection's own integers (cents as money, millionths as a target's
/// measure).
fn candidates_of(run: &Run, e: &Enumerator<'_>, p: &Plan, g: usize, out: &mut String) {
    let c = &p.candidates;
    let sec = &run.network.sections[g];
    let budget: Vec<bool> = c
        .rows
        .iter()
        .map(|r| matches!(r.kind, RowKind::Budget(_)))
        .collect();
    let mut dense = vec![0i64; c.rows.len()];
    for cand in c.problem.candidates(g) {
        dense.iter_mut().for_each(|x| *x = 0);
        let (rs, vs) = c.problem.uses(cand);
        for (&j, &x) in rs.iter().zip(vs) {
            dense[j as usize] = x;
        }
        write_candidate(
            out,
            sec.id.as_str(),
            &e.name(c.strategy[cand]),
            Cents::of(c.npv[cand]),
            Cents::of(c.pv_agency[cand]),
            &dense,
            &budget,
        );
    }
}

/// One row per budget line: its limit, the plan's exact spending in it and its price.
pub fn budget_use(run: &Run, p: &Plan) -> Vec<BudgetUse> {
    let s = &run.scenario;
    let c = &p.candidates;
    let states = p.line_states(run);
    c.rows
        .iter()
        .enumerate()
        .filter_map(|(j, row)| {
            let RowKind::Budget(b) = row.kind else {
                return None;
            };
            let line = &s.budget_lines[b];
            let limit = row.money.unwrap_or_default();
            let used = p.spent[b];
            Some(BudgetUse {
                line: row.name.clone(),
                year: line.year,
                limit: Dec(limit.0.round_dp(2)),
                used: Dec(used.0.round_dp(2)),
                price: Price(p.outcome.prices[j]),
                state: states[j].name().to_owned(),
                category: line.category.name().to_owned(),
                region: line.region.as_deref().unwrap_or_default().to_owned(),
                slack: Dec((limit.0 - used.0).round_dp(2)),
                group: line.group.clone(),
            })
        })
        .collect()
}

/// One row per condition-target line: what the plan achieves against it.
pub fn target_use(run: &Run, p: &Plan) -> Vec<TargetUse> {
    let s = &run.scenario;
    let c = &p.candidates;
    let states = p.line_states(run);
    let mut out = Vec::new();
    for (j, row) in c.rows.iter().enumerate() {
        let RowKind::Target(k) = row.kind else {
            continue;
        };
        let t = &s.plan.targets[k];
        out.push(TargetUse {
            line: row.name.clone(),
            year: t.year,
            measure: t.measure.name().to_owned(),
            at_most: Real(t.at_most),
            achieved: Fixed::of(p.achieved[out.len()]),
            price: Price(p.outcome.prices[j]),
            state: states[j].name().to_owned(),
            region: t.region.as_deref().unwrap_or_default().to_owned(),
            length_km: Fixed::of(crate::plan::target_length(run, t)),
        });
    }
    out
}

/// The condition series as rows: each case ([`CASES`]) and year.
pub fn condition(cs: &ConditionSeries) -> Vec<Condition> {
    let mut out = Vec::new();
    for (case, name) in CASES.iter().enumerate() {
        for (y, iri) in cs.mean_iri[case].iter().enumerate() {
            let [g, f, p] = cs.shares[case][y];
            out.push(Condition {
                year: cs.first_year + YearOffset::at(y),
                case: (*name).to_owned(),
                mean_iri: Fixed::of(*iri),
                good_share: Fixed::of(g),
                fair_share: Fixed::of(f),
                poor_share: Fixed::of(p),
            });
        }
    }
    out
}

/// The widening table's rows of the sections `range`, each with its section's index: every
/// widening year when `every`, else only the years the plan or a timing rule picks.
pub fn widening_rows(
    run: &Run,
    e: &Enumerator<'_>,
    p: &Plan,
    range: std::ops::Range<usize>,
    every: bool,
) -> Vec<(usize, Widening)> {
    let c = &p.candidates;
    let cat = &run.catalogue;
    let y0 = run.scenario.base_year;
    let per: Vec<Vec<(usize, Widening)>> = range
        .into_par_iter()
        .map(|g| {
            let best = c.widening_of(g);
            if best.is_empty() {
                return Vec::new();
            }
            let sec = &run.network.sections[g];
            let (by_fyrr, by_npv) = timing_rules(best, &run.scenario.discounting);
            let planned = e
                .strategy(c.strategy[c.chosen(&p.outcome.plan, g)])
                .and_then(|chosen| chosen.widening_year(cat))
                .map(|x| y0 + x);
            best.iter()
                .filter_map(|wy| {
                    let picks = [by_fyrr, by_npv, planned].map(|y| y == Some(wy.year));
                    (every || picks.contains(&true)).then(|| {
                        let row = Widening {
                            section_id: sec.id.as_str().to_owned(),
                            year: wy.year,
                            strategy: e.name(wy.strategy),
                            npv: Cents::of(wy.npv),
                            fyrr: wy.fyrr.and_then(Fixed::of_f64),
                            by_fyrr: picks[0],
                            by_npv: picks[1],
                            planned: picks[2],
                        };
                        (g, row)
                    })
                })
                .collect()
        })
        .collect();
    per.into_iter().flatten().collect()
}

/// `limits.csv`'s rows: each row of the selection as `select --limits` reads it, with the limit
/// the selection held exactly.
pub fn limits(p: &Plan) -> Vec<Limit> {
    p.candidates
        .rows
        .iter()
        .map(|row| {
            let (budget, places) = match row.kind {
                RowKind::Budget(_) => (true, 2),
                RowKind::Target(_) => (false, 6),
            };
            Limit {
                row: row_column(budget, &row.name),
                limit: Dec(rust_decimal::Decimal::new(row.limit_units, places)),
            }
        })
        .collect()
}

/// `summary.json`: the certificate, the run's facts and the scenario's key assumptions.
pub fn summary(run: &Run, p: &Plan, f: &Facts, run_id: &str) -> Summary {
    let o = &p.outcome;
    let c = &p.candidates;
    let t = p.totals();
    let d = &run.scenario.discounting;
    let pv_capital: f64 = p
        .works
        .iter()
        .filter(|w| run.catalogue.treatments[w.treatment].category != Category::Routine)
        .map(|w| w.cost * d.factor(run.scenario.base_year + w.year))
        .sum();
    let (npv_per_capital, bcr_capital) = crate::appraise::capital_ratios(t.plan.npv, pv_capital);
    Summary {
        assumptions: assumptions(run),
        bcr_capital,
        binding: c
            .rows
            .iter()
            .zip(&o.prices)
            .zip(p.line_states(run))
            .filter(|(_, state)| *state == crate::plan::LineState::Binding)
            .map(|((r, x), _)| summary::Binding {
                line: r.name.clone(),
                price: *x,
            })
            .collect(),
        binding_within: run.scenario.plan.binding_within(),
        bound: c.objective_of(o.bound),
        budget_scale: f.budget_scale,
        candidate_seconds: f.candidate_seconds,
        candidates: c.problem.candidate_count() as u64,
        caution: crate::CAUTION.to_owned(),
        contested_sections: o.contested as u64,
        gap: o.gap,
        headline_ratio: "npv_per_capital".to_owned(),
        method: o.method.name().to_owned(),
        money: run.scenario.money_label.clone(),
        npv: summary::Cases {
            base: t.base.npv,
            plan: t.plan.npv,
            unconstrained: t.unconstrained.npv,
        },
        npv_per_capital,
        objective: c.objective_of(o.value),
        objective_kind: c.objective.name().to_owned(),
        price_updates: o.iterations as u64,
        pv_agency_cost: summary::Cases {
            base: t.base.pv_agency,
            plan: t.plan.pv_agency,
            unconstrained: t.unconstrained.pv_agency,
        },
        pv_capital: summary::PlanOnly { plan: pv_capital },
        requested_gap: f.requested_gap,
        run_id: run_id.to_owned(),
        seconds: f.seconds,
        sections: c.sections() as u64,
        selection_seconds: f.selection_seconds,
        status: o.status.name().to_owned(),
        strategies_enumerated: c.enumerated.iter().map(|&x| u64::from(x)).sum(),
        time_limit_reached: o.status == crate::select::network::Status::TimeLimit,
        unverified_coefficients: crate::input::provenance::unverified(&run.scenario.models)
            .iter()
            .map(|u| summary::Unverified {
                key: u.key.to_string(),
                standing: u.standing.name().to_owned(),
                value: u.value.to_string(),
            })
            .collect(),
        widening_years: if f.every_widening_year {
            "every"
        } else {
            "picked"
        }
        .to_owned(),
    }
}

/// The scenario's key assumptions, for summary.json and the report.
pub fn assumptions(run: &Run) -> summary::Assumptions {
    let s = &run.scenario;
    let per_class =
        |v: &crate::input::scenario::PerClass<crate::model::money::Money>| summary::PerClass {
            bus: v.get(VehicleClass::Bus).to_f64(),
            car: v.get(VehicleClass::Car).to_f64(),
            heavy_truck: v.get(VehicleClass::HeavyTruck).to_f64(),
            light_truck: v.get(VehicleClass::LightTruck).to_f64(),
        };
    let cond = &s.models.condition;
    summary::Assumptions {
        analysis_years: s.analysis_years,
        base_year: s.base_year,
        condition_classes_iri: summary::Classes {
            good_below: cond.good_below,
            poor_above: cond.poor_above,
        },
        default_family: cond.default_family.clone(),
        discount_rate: s.discounting.rate(),
        discounting: s.discounting.timing().name().to_owned(),
        families: cond
            .families
            .iter()
            .map(|f| summary::Family {
                model: f.model.name().to_owned(),
                name: f.name.clone(),
            })
            .collect(),
        length_km: run.network.sections.iter().map(|x| x.length_km).sum(),
        money: s.money_label.clone(),
        sections: run.network.sections.len() as u64,
        templates: run.templates.len() as u64,
        title: s.title.clone(),
        treatments: run.catalogue.treatments.len() as u64,
        unit_values: summary::UnitValues {
            crash: s.unit_values.crash.to_f64(),
            operating_per_vehicle_km: per_class(&s.unit_values.operating),
            time_per_vehicle_hour: per_class(&s.unit_values.time),
        },
    }
}
