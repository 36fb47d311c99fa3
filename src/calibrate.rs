//! Calibration of the roughness families to an agency's own survey history.
//!
//! Surveys are `section_id,year,iri` rows (and optionally `works_year`, the year of works done on
//! the section, and the user's own `x_…` columns). Consecutive surveys of a section make an
//! interval; an interval that spans works (`works_year` of its rows, or the network's
//! `last_works_year`) is left out, since its change is not deterioration.
//!
//! Each family is fitted to the rises its sections show, over the family's own yearly rise before
//! the shared bound and holding repairs ([`SectionModel::raw_parts`]), with the roughness along
//! an interval taken on the straight line between its two surveys:
//! - the calibrated family is linear in `rise_per_year`, `ageing` and `rise_per_mesa`
//!   (`sn_ref` and `sn_exponent` held): ordinary least squares, a coefficient that would go
//!   below zero held at zero;
//! - the AASHTO family by one multiplicative factor on its load-related rise (`load_factor`),
//!   least squares with the environmental part held.
//!
//! Each fit reports n, the RMSE and R² of the intervals' rises, and each coefficient's standard
//! error (σ̂²·(XᵀX)⁻¹). A family with fewer intervals than [`MIN_INTERVALS`] per coefficient is
//! not fitted, and says so.

use crate::diag::{Diagnostics, Place};
use crate::input::csvfile::CsvInput;
use crate::input::models::{CalibratedParams, FamilyModel};
use crate::input::Run;
use crate::simulate::condition::{Calibrated, SectionModel};
use crate::simulate::traffic;

/// Intervals needed per fitted coefficient (and at least this many sections in all).
pub const MIN_INTERVALS: usize = 6;

/// One survey row.
#[derive(Debug, Clone, PartialEq)]
pub struct Survey {
    /// Index of the section in the network.
    pub section: usize,
    pub year: i32,
    pub iri: f64,
    pub works_year: Option<i32>,
    pub line: usize,
}

/// Read a survey file. Every problem is reported with its line and column.
pub fn read_surveys(file: &str, text: &str, run: &Run, d: &mut Diagnostics) -> Vec<Survey> {
    let mut out = Vec::new();
    let Some(mut csv) = CsvInput::open(file, text, "a header `section_id,year,iri`", d) else {
        return out;
    };
    csv.text_columns(|c| c == "section_id");
    let col = |name: &str| csv.headers.iter().position(|h| h == name);
    let (cid, cyear, ciri, cworks) = (
        col("section_id"),
        col("year"),
        col("iri"),
        col("works_year"),
    );
    for (i, h) in csv.headers.iter().enumerate() {
        if !matches!(h, "section_id" | "year" | "iri" | "works_year") && !h.starts_with("x_") {
            d.error(
                Place::line(file, 1).with_column(i + 1).with_field(h),
                format!("the column `{h}`"),
                "section_id, year, iri, works_year, or a column of your own starting `x_`",
            );
        }
    }
    let (Some(cid), Some(cyear), Some(ciri)) = (cid, cyear, ciri) else {
        d.error(
            Place::line(file, 1),
            "a header without section_id, year and iri",
            "a header with the columns section_id, year and iri",
        );
        return out;
    };
    let index: std::collections::HashMap<&str, usize> = run
        .network
        .sections
        .iter()
        .enumerate()
        .map(|(i, s)| (s.id.as_str(), i))
        .collect();
    let mut seen = std::collections::HashMap::new();
    while let Some(line) = csv.next_row(d) {
        let r = csv.record().clone();
        let place =
            |c: usize, name: &str| Place::line(file, line).with_column(c + 1).with_field(name);
        let id = &r[cid];
        let section = index.get(id).copied();
        if section.is_none() {
            d.error(
                place(cid, "section_id"),
                format!("the section `{id}`, which is not in {}", run.network.file),
                "a section_id of the network",
            );
        }
        let year = match r[cyear].parse::<i32>() {
            Ok(y) if (1900..=2200).contains(&y) => Some(y),
            _ => {
                d.error(
                    place(cyear, "year"),
                    format!("found `{}`", &r[cyear]),
                    "a year from 1900 to 2200",
                );
                None
            }
        };
        let iri = match r[ciri].parse::<f64>() {
            Ok(x) if x > 0.0 && x <= 25.0 => Some(x),
            _ => {
                d.error(
                    place(ciri, "iri"),
                    format!("found `{}`", &r[ciri]),
                    "roughness (IRI) in m/km, more than 0 and at most 25",
                );
                None
            }
        };
        let works_year = match cworks.map(|c| (c, r[c].trim())) {
            None | Some((_, "")) => Some(None),
            Some((c, t)) => match t.parse::<i32>() {
                Ok(y) if (1900..=2200).contains(&y) => Some(Some(y)),
                _ => {
                    d.error(
                        place(c, "works_year"),
                        format!("found `{t}`"),
                        "a year from 1900 to 2200, or empty",
                    );
                    None
                }
            },
        };
        if let (Some(section), Some(year), Some(iri), Some(works_year)) =
            (section, year, iri, works_year)
        {
            if let Some(first) = seen.insert((section, year), line) {
                d.error(
                    place(cyear, "year"),
                    format!("a second survey of {id} in {year} (the first is on line {first})"),
                    "one survey per section and year",
                );
                continue;
            }
            out.push(Survey {
                section,
                year,
                iri,
                works_year,
                line,
            });
        }
    }
    csv.had_rows("survey rows: section_id,year,iri", d);
    out
}

/// Two consecutive surveys of a section with no works between them, and the model's terms over
/// the years between.
#[derive(Debug, Clone, PartialEq)]
pub struct Interval {
    pub section: usize,
    pub family: String,
    pub from: i32,
    pub to: i32,
    pub iri_from: f64,
    pub iri_to: f64,
    /// Years between the surveys.
    pub years: f64,
    /// Sum over the years of the roughness on the straight line between the surveys.
    pub sum_iri: f64,
    /// Calibrated family: sum of MESA·(sn_ref/SN)^sn_exponent; AASHTO family: sum of the
    /// load-related rise at load factor 1, and of the environmental part.
    pub sum_load: f64,
    pub sum_env: f64,
}

impl Interval {
    /// The observed rise.
    pub fn observed(&self) -> f64 {
        self.iri_to - self.iri_from
    }
}

/// The intervals of the surveys, in section and year order.
pub fn intervals(run: &Run, surveys: &[Survey]) -> Vec<Interval> {
    let mut by: Vec<&Survey> = surveys.iter().collect();
    by.sort_by_key(|s| (s.section, s.year));
    let m = &run.scenario.models;
    let y0 = run.scenario.base_year;
    // Each section's works years: its surveys' `works_year`s and the network's last works.
    let mut works: Vec<Vec<i32>> = run
        .network
        .sections
        .iter()
        .map(|s| s.last_works_year.map(|y| y.0).into_iter().collect())
        .collect();
    for s in surveys {
        works[s.section].extend(s.works_year);
    }
    let mut out = Vec::new();
    for pair in by.windows(2) {
        let (a, b) = (pair[0], pair[1]);
        if a.section != b.section {
            continue;
        }
        let sec = &run.network.sections[a.section];
        let works = &works[a.section];
        // Works in year w take effect from w + 1: a survey in year y sees them when w < y.
        if works.iter().any(|&w| w >= a.year && w < b.year) {
            continue;
        }
        let Some(family) = m.condition.family_of(sec.surface.as_deref()) else {
            continue;
        };
        let mr = sec.subgrade_mr_mpa.unwrap_or(m.condition.subgrade_mr_mpa);
        let unit = match family.model {
            FamilyModel::Aashto93(p) => {
                FamilyModel::Aashto93(crate::input::models::Aashto93Params {
                    load_factor: 1.0,
                    ..p
                })
            }
            other => other,
        };
        let model = SectionModel::new(&unit, mr, &m.condition);
        let e0 = traffic::design_lane_esals(sec, &m.traffic);
        let esals_in = |y: i32| e0 * (1.0 + sec.growth_rate).max(0.01).powi(y - y0.0);
        let age = works
            .iter()
            .filter(|&&w| w < a.year)
            .max()
            .map(|&w| f64::from(a.year - w));
        let at = model.place(
            a.iri,
            sec.structural_number,
            age,
            esals_in(a.year),
            sec.growth_rate,
        );
        let mut c = model.start(a.iri, sec.structural_number, &at);
        let years = f64::from(b.year - a.year);
        let (mut sum_iri, mut sum_load, mut sum_env) = (0.0, 0.0, 0.0);
        for k in 0..(b.year - a.year) {
            let iri = a.iri + (b.iri - a.iri) * f64::from(k) / years;
            let e = esals_in(a.year + k);
            c.iri = iri;
            sum_iri += iri;
            match family.model {
                FamilyModel::Calibrated(p) => {
                    let unit = CalibratedParams {
                        rise_per_mesa: 1.0,
                        ..p
                    };
                    sum_load += Calibrated::load_weight(&unit, sec.structural_number) * e;
                }
                FamilyModel::Aashto93(_) => {
                    let (env, load) = model.raw_parts(&c, e);
                    sum_env += env;
                    sum_load += load;
                }
            }
            c.age += 1.0;
            c.esals += e;
        }
        out.push(Interval {
            section: a.section,
            family: family.name.clone(),
            from: a.year,
            to: b.year,
            iri_from: a.iri,
            iri_to: b.iri,
            years,
            sum_iri,
            sum_load,
            sum_env,
        });
    }
    out
}

/// The rise a family's coefficients predict over an interval (the family's own yearly rise,
/// before the shared bound and holding repairs).
pub fn predicted(i: &Interval, model: &FamilyModel) -> f64 {
    match model {
        FamilyModel::Calibrated(p) => {
            p.rise_per_year * i.years + p.ageing * i.sum_iri + p.rise_per_mesa * i.sum_load
        }
        FamilyModel::Aashto93(p) => i.sum_env + p.load_factor * i.sum_load,
    }
}

/// One fitted coefficient.
#[derive(Debug, Clone, PartialEq)]
pub struct Coefficient {
    pub key: &'static str,
    pub value: f64,
    /// Standard error (`None` when held at a bound).
    pub se: Option<f64>,
}

/// A family's fit.
#[derive(Debug, Clone, PartialEq)]
pub struct Fit {
    pub family: String,
    pub model: FamilyModel,
    pub n: usize,
    pub sections: usize,
    /// Root mean square error of the intervals' rises (m/km), with the fitted and the scenario's
    /// coefficients.
    pub rmse: f64,
    pub rmse_before: f64,
    pub r2: f64,
    pub coefficients: Vec<Coefficient>,
}

/// A family that could not be fitted, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct Refused {
    pub family: String,
    pub n: usize,
    pub needed: usize,
}

/// Least squares of `y` on the columns of `x` (rows × k): coefficients and their covariance
/// divided by σ̂². `None` when XᵀX is singular.
fn least_squares(x: &[Vec<f64>], y: &[f64]) -> Option<(Vec<f64>, Vec<Vec<f64>>)> {
    let k = x.first()?.len();
    let mut a = vec![vec![0.0; k]; k];
    let mut b = vec![0.0; k];
    for (row, yi) in x.iter().zip(y) {
        for i in 0..k {
            b[i] += row[i] * yi;
            for j in 0..k {
                a[i][j] += row[i] * row[j];
            }
        }
    }
    let inv = invert(a)?;
    let beta = (0..k)
        .map(|i| (0..k).map(|j| inv[i][j] * b[j]).sum())
        .collect();
    Some((beta, inv))
}

/// Gauss–Jordan inverse with partial pivoting; `None` when singular.
fn invert(mut a: Vec<Vec<f64>>) -> Option<Vec<Vec<f64>>> {
    let n = a.len();
    let mut inv: Vec<Vec<f64>> = (0..n)
        .map(|i| (0..n).map(|j| f64::from(u8::from(i == j))).collect())
        .collect();
    let scale = a
        .iter()
        .flatten()
        .fold(0.0f64, |m, x| m.max(x.abs()))
        .max(f64::MIN_POSITIVE);
    for c in 0..n {
        let p = (c..n).max_by(|&i, &j| a[i][c].abs().total_cmp(&a[j][c].abs()))?;
        if a[p][c].abs() <= 1e-12 * scale {
            return None;
        }
        a.swap(c, p);
        inv.swap(c, p);
        let d = a[c][c];
        for j in 0..n {
            a[c][j] /= d;
            inv[c][j] /= d;
        }
        for r in 0..n {
            if r != c {
                let f = a[r][c];
                for j in 0..n {
                    a[r][j] -= f * a[c][j];
                    inv[r][j] -= f * inv[c][j];
                }
            }
        }
    }
    Some(inv)
}

fn rmse(rows: &[&Interval], model: &FamilyModel) -> f64 {
    let ss: f64 = rows
        .iter()
        .map(|i| (i.observed() - predicted(i, model)).powi(2))
        .sum();
    (ss / rows.len().max(1) as f64).sqrt()
}

/// Fit every family that has surveys. Families with too few intervals are refused.
pub fn fit(run: &Run, intervals: &[Interval]) -> (Vec<Fit>, Vec<Refused>) {
    let mut fits = Vec::new();
    let mut refused = Vec::new();
    for fam in &run.scenario.models.condition.families {
        let rows: Vec<&Interval> = intervals.iter().filter(|i| i.family == fam.name).collect();
        if rows.is_empty() {
            continue;
        }
        let k = match fam.model {
            FamilyModel::Calibrated(_) => 3,
            FamilyModel::Aashto93(_) => 1,
        };
        let needed = MIN_INTERVALS * k;
        let mut sections: Vec<usize> = rows.iter().map(|i| i.section).collect();
        sections.sort_unstable();
        sections.dedup();
        if rows.len() < needed || sections.len() < MIN_INTERVALS.min(3) {
            refused.push(Refused {
                family: fam.name.clone(),
                n: rows.len(),
                needed,
            });
            continue;
        }
        let y: Vec<f64> = rows.iter().map(|i| i.observed()).collect();
        let fitted = match fam.model {
            FamilyModel::Calibrated(p) => fit_calibrated(&rows, &y, p),
            FamilyModel::Aashto93(p) => fit_aashto(&rows, &y, p),
        };
        let Some((model, coefficients)) = fitted else {
            refused.push(Refused {
                family: fam.name.clone(),
                n: rows.len(),
                needed,
            });
            continue;
        };
        let mean = y.iter().sum::<f64>() / y.len() as f64;
        let ss_tot: f64 = y.iter().map(|v| (v - mean).powi(2)).sum();
        let fit_rmse = rmse(&rows, &model);
        let ss_res = fit_rmse.powi(2) * rows.len() as f64;
        fits.push(Fit {
            family: fam.name.clone(),
            model,
            n: rows.len(),
            sections: sections.len(),
            rmse: fit_rmse,
            rmse_before: rmse(&rows, &fam.model),
            r2: if ss_tot > 0.0 {
                1.0 - ss_res / ss_tot
            } else {
                f64::NAN
            },
            coefficients,
        });
    }
    (fits, refused)
}

fn fit_calibrated(
    rows: &[&Interval],
    y: &[f64],
    p: CalibratedParams,
) -> Option<(FamilyModel, Vec<Coefficient>)> {
    const KEYS: [&str; 3] = ["rise_per_year", "ageing", "rise_per_mesa"];
    const UPPER: [f64; 3] = [1.0, 0.1, 50.0];
    let full: Vec<[f64; 3]> = rows
        .iter()
        .map(|i| [i.years, i.sum_iri, i.sum_load])
        .collect();
    // Least squares over the free coefficients; one that leaves its accepted range is held at
    // the bound it passed and the rest fitted again.
    let mut held: [Option<f64>; 3] = [None; 3];
    for _ in 0..4 {
        let free: Vec<usize> = (0..3).filter(|&j| held[j].is_none()).collect();
        if free.is_empty() {
            break;
        }
        let x: Vec<Vec<f64>> = full
            .iter()
            .map(|r| free.iter().map(|&j| r[j]).collect())
            .collect();
        let yy: Vec<f64> = full
            .iter()
            .zip(y)
            .map(|(r, v)| {
                v - (0..3)
                    .filter_map(|j| held[j].map(|h| h * r[j]))
                    .sum::<f64>()
            })
            .collect();
        let (beta, cov) = least_squares(&x, &yy)?;
        let out = free
            .iter()
            .zip(&beta)
            .find(|(&j, &b)| b < 0.0 || b > UPPER[j]);
        if let Some((&j, &b)) = out {
            held[j] = Some(b.clamp(0.0, UPPER[j]));
            continue;
        }
        let mut value = [0.0; 3];
        for j in 0..3 {
            value[j] = held[j].unwrap_or(0.0);
        }
        for (f, &j) in free.iter().enumerate() {
            value[j] = beta[f];
        }
        let n = rows.len();
        let ss: f64 = full
            .iter()
            .zip(y)
            .map(|(r, v)| (v - (0..3).map(|j| value[j] * r[j]).sum::<f64>()).powi(2))
            .sum();
        let sigma2 = ss / (n.saturating_sub(free.len())).max(1) as f64;
        let coefficients = (0..3)
            .map(|j| Coefficient {
                key: KEYS[j],
                value: value[j],
                se: free
                    .iter()
                    .position(|&f| f == j)
                    .map(|f| (sigma2 * cov[f][f]).max(0.0).sqrt()),
            })
            .collect();
        let model = FamilyModel::Calibrated(CalibratedParams {
            rise_per_year: value[0],
            ageing: value[1],
            rise_per_mesa: value[2],
            ..p
        });
        return Some((model, coefficients));
    }
    None
}

fn fit_aashto(
    rows: &[&Interval],
    y: &[f64],
    p: crate::input::models::Aashto93Params,
) -> Option<(FamilyModel, Vec<Coefficient>)> {
    let sll: f64 = rows.iter().map(|i| i.sum_load * i.sum_load).sum();
    if sll <= 0.0 {
        return None;
    }
    let sly: f64 = rows
        .iter()
        .zip(y)
        .map(|(i, v)| i.sum_load * (v - i.sum_env))
        .sum();
    let f = (sly / sll).clamp(0.0, 10.0);
    let ss: f64 = rows
        .iter()
        .zip(y)
        .map(|(i, v)| (v - i.sum_env - f * i.sum_load).powi(2))
        .sum();
    let sigma2 = ss / (rows.len().saturating_sub(1)).max(1) as f64;
    let model = FamilyModel::Aashto93(crate::input::models::Aashto93Params {
        load_factor: f,
        ..p
    });
    Some((
        model,
        vec![Coefficient {
            key: "load_factor",
            value: f,
            se: Some((sigma2 / sll).sqrt()),
        }],
    ))
}

/// The `[condition.family.NAME]` table of a fitted family, in the scenario's own syntax.
pub fn family_table(fit: &Fit, source: &str) -> String {
    let mut s = format!(
        "# Fitted by pavestrat calibrate from {source}: {} intervals on {} sections, RMSE {:.4} m/km \
         (was {:.4}), R² {:.3}\n[condition.family.{}]\n",
        fit.n, fit.sections, fit.rmse, fit.rmse_before, fit.r2, fit.family
    );
    let se = |key: &str| {
        fit.coefficients
            .iter()
            .find(|c| c.key == key)
            .map(|c| match c.se {
                Some(e) => format!("   # fitted, standard error {e:.3e}"),
                None => "   # fitted, held at the bound of its range".to_owned(),
            })
    };
    let keys: Vec<(&str, f64)> = match fit.model {
        FamilyModel::Aashto93(p) => {
            s.push_str("model = \"aashto93\"\n");
            vec![
                ("p0", p.p0),
                ("terminal_psr", p.terminal_psr),
                ("zr", p.zr),
                ("s0", p.s0),
                ("ageing", p.ageing),
                ("structural_rise", p.structural_rise),
                ("load_factor", p.load_factor),
            ]
        }
        FamilyModel::Calibrated(p) => {
            s.push_str("model = \"calibrated\"\n");
            vec![
                ("rise_per_year", p.rise_per_year),
                ("ageing", p.ageing),
                ("rise_per_mesa", p.rise_per_mesa),
                ("sn_ref", p.sn_ref),
                ("sn_exponent", p.sn_exponent),
            ]
        }
    };
    for (key, v) in keys {
        s.push_str(&format!("{key} = {v}{}\n", se(key).unwrap_or_default()));
    }
    s
}

/// The scenario's text with each fitted family's table replaced (or added at the end), and the
/// `[files]` table's paths written as `files` gives them (so that a copy elsewhere still finds
/// its files).
pub fn scenario_with(text: &str, fits: &[Fit], source: &str, files: Option<&str>) -> String {
    let mut lines: Vec<String> = text.lines().map(str::to_owned).collect();
    let header = |l: &str| {
        let t = l.trim_start();
        t.starts_with('[')
    };
    let mut replace = |name: &str, with: &str| {
        let head = format!("[{name}]");
        if let Some(start) = lines
            .iter()
            .position(|l| l.trim() == head || l.trim().starts_with(&format!("{head} ")))
        {
            let end = (start + 1..lines.len())
                .find(|&i| header(&lines[i]))
                .unwrap_or(lines.len());
            lines.splice(
                start..end,
                with.lines().map(str::to_owned).chain([String::new()]),
            );
            true
        } else {
            false
        }
    };
    if let Some(f) = files {
        replace("files", f);
    }
    let mut appended = String::new();
    for fit in fits {
        let table = family_table(fit, source);
        let body: String = table
            .lines()
            .filter(|l| !l.starts_with('#'))
            .collect::<Vec<_>>()
            .join("\n");
        let comment = table
            .lines()
            .find(|l| l.starts_with('#'))
            .unwrap_or_default();
        if !replace(
            &format!("condition.family.{}", fit.family),
            &format!("{comment}\n{body}"),
        ) {
            appended.push('\n');
            appended.push_str(&table);
        }
    }
    let mut out = lines.join("\n");
    out.push('\n');
    out.push_str(&appended);
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::demo::synth::SplitMix64;
    use std::path::Path;

    fn demo() -> Run {
        let (run, d) = crate::input::load(&crate::demo::SOURCE, Path::new(crate::demo::SCENARIO));
        assert!(!d.has_errors(), "{d}");
        run.unwrap()
    }

    /// Surveys of every section of `run` in `years`, their yearly rise drawn from `truth` (each
    /// section's family set to it) with normal noise of `sd`.
    fn synthetic(
        run: &Run,
        truth: CalibratedParams,
        years: std::ops::Range<i32>,
        sd: f64,
        seed: u64,
    ) -> Vec<Survey> {
        let mut r = SplitMix64::new(seed);
        let mut out = Vec::new();
        let m = &run.scenario.models;
        for (g, sec) in run.network.sections.iter().enumerate() {
            let e0 = traffic::design_lane_esals(sec, &m.traffic);
            let mut iri = 1.5 + 2.0 * r.unit();
            for y in years.clone() {
                out.push(Survey {
                    section: g,
                    year: y,
                    iri,
                    works_year: None,
                    line: 0,
                });
                let e = e0 * (1.0 + sec.growth_rate).powi(y - run.scenario.base_year.0);
                let x = Calibrated::load_weight(
                    &CalibratedParams {
                        rise_per_mesa: 1.0,
                        ..truth
                    },
                    sec.structural_number,
                ) * e;
                let rise = truth.rise_per_year + truth.ageing * iri + truth.rise_per_mesa * x;
                // Box–Muller noise.
                let (u1, u2) = (r.unit().max(1e-12), r.unit());
                let z = (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos();
                iri = (iri + rise + sd * z).max(0.3);
            }
        }
        out
    }

    fn all_calibrated(mut run: Run) -> Run {
        for s in &mut run.network.sections {
            s.surface = Some("surface_treatment".into());
            s.last_works_year = Some(crate::model::Year(1990));
        }
        run
    }

    #[test]
    fn recovers_known_coefficients_within_their_standard_errors() {
        let run = all_calibrated(demo());
        let truth = CalibratedParams {
            rise_per_year: 0.04,
            ageing: 0.015,
            rise_per_mesa: 0.6,
            ..CalibratedParams::default()
        };
        let surveys = synthetic(&run, truth, 2005..2027, 0.03, 7);
        let iv = intervals(&run, &surveys);
        let (fits, refused) = fit(&run, &iv);
        assert!(refused.is_empty(), "{refused:?}");
        let f = fits
            .iter()
            .find(|f| f.family == "surface_treatment")
            .unwrap();
        let want = [truth.rise_per_year, truth.ageing, truth.rise_per_mesa];
        for (c, w) in f.coefficients.iter().zip(want) {
            let se = c.se.unwrap();
            assert!(
                (c.value - w).abs() <= 3.0 * se,
                "{}: {} ± {se}, truth {w}",
                c.key,
                c.value
            );
            assert!(
                se < 0.5 * w,
                "{}: standard error {se} too wide to tell",
                c.key
            );
        }
        assert!(f.rmse < f.rmse_before && f.r2 > 0.0, "{f:?}");
    }

    #[test]
    fn fitted_coefficients_predict_held_out_years_better_than_the_defaults() {
        let run = all_calibrated(demo());
        let truth = CalibratedParams {
            rise_per_year: 0.06,
            ageing: 0.01,
            rise_per_mesa: 1.2,
            ..CalibratedParams::default()
        };
        let surveys = synthetic(&run, truth, 2008..2027, 0.03, 11);
        let (early, late): (Vec<Survey>, Vec<Survey>) =
            surveys.into_iter().partition(|s| s.year <= 2020);
        let (fits, _) = fit(&run, &intervals(&run, &early));
        let fitted = fits[0].model;
        let held_out = intervals(&run, &late);
        let rows: Vec<&Interval> = held_out.iter().collect();
        let default = FamilyModel::Calibrated(CalibratedParams::default());
        assert!(
            rmse(&rows, &fitted) < 0.7 * rmse(&rows, &default),
            "{} vs {}",
            rmse(&rows, &fitted),
            rmse(&rows, &default)
        );
    }

    #[test]
    fn intervals_across_works_are_left_out_and_thin_data_is_refused() {
        let mut run = all_calibrated(demo());
        run.network.sections[0].last_works_year = Some(crate::model::Year(2012));
        let s = |year, iri, works_year| Survey {
            section: 0,
            year,
            iri,
            works_year,
            line: 0,
        };
        let surveys = vec![
            s(2010, 4.0, None),
            s(2011, 4.2, None),
            s(2013, 1.3, None),
            s(2015, 1.5, Some(2015)),
            s(2016, 1.2, None),
        ];
        let iv = intervals(&run, &surveys);
        let spans: Vec<(i32, i32)> = iv.iter().map(|i| (i.from, i.to)).collect();
        // 2011–2013 spans the 2012 works and 2015–2016 the 2015 works.
        assert_eq!(spans, vec![(2010, 2011), (2013, 2015)]);
        let (fits, refused) = fit(&run, &iv);
        assert!(fits.is_empty());
        assert_eq!(refused[0].n, 2);
        assert_eq!(refused[0].needed, 3 * MIN_INTERVALS);
    }

    #[test]
    fn the_aashto_family_gets_a_load_factor() {
        let run = demo();
        // Surveys drawn from the model itself with a load factor of 1.6 (no noise): the fit
        // finds it, since the intervals are single years.
        let mut fam = run
            .scenario
            .models
            .condition
            .family("asphalt")
            .unwrap()
            .model;
        if let FamilyModel::Aashto93(p) = &mut fam {
            p.load_factor = 1.6;
        }
        let mut surveys = Vec::new();
        for (g, sec) in run.network.sections.iter().enumerate() {
            if sec.surface.as_deref() != Some("asphalt") {
                continue;
            }
            let one = intervals(
                &run,
                &[
                    Survey {
                        section: g,
                        year: 2018,
                        iri: sec.iri,
                        works_year: None,
                        line: 0,
                    },
                    Survey {
                        section: g,
                        year: 2019,
                        iri: sec.iri + 0.1,
                        works_year: None,
                        line: 0,
                    },
                ],
            );
            let Some(i) = one.first() else { continue };
            let rise = predicted(i, &fam);
            surveys.push(Survey {
                section: g,
                year: 2018,
                iri: sec.iri,
                works_year: None,
                line: 0,
            });
            surveys.push(Survey {
                section: g,
                year: 2019,
                iri: sec.iri + rise,
                works_year: None,
                line: 0,
            });
        }
        let (fits, _) = fit(&run, &intervals(&run, &surveys));
        let f = fits.iter().find(|f| f.family == "asphalt").unwrap();
        assert!((f.coefficients[0].value - 1.6).abs() < 1e-6, "{f:?}");
    }
}
