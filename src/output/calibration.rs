//! What `calibrate` writes and prints: the summary of the fit, `calibration.csv` (columns in
//! [`crate::schema::others::calibrate`]), and the page of observed against predicted
//! rises.

use crate::calibrate::{self, Fit, Interval};
use crate::input::Run;
use crate::output::format::Field;
use std::fmt::Write as _;

/// The terminal summary: the surveys and intervals read, each fitted family's coefficients with
/// their standard errors and fit, and the families too few intervals left unfitted.
pub fn summary(
    run: &Run,
    label: &str,
    surveys: &[crate::calibrate::Survey],
    intervals: &[Interval],
    fits: &[Fit],
    refused: &[crate::calibrate::Refused],
) -> String {
    let mut summary = format!(
        "Calibration of {} from {label}: {} surveys, {} intervals without works between them\n",
        run.scenario.file,
        surveys.len(),
        intervals.len()
    );
    for f in fits {
        let _ = writeln!(
            summary,
            "  {}: {} intervals on {} sections; RMSE {:.4} m/km (scenario's coefficients {:.4}), R² {:.3}",
            f.family, f.n, f.sections, f.rmse, f.rmse_before, f.r2
        );
        for c in &f.coefficients {
            let _ = writeln!(
                summary,
                "    {:<16} {:>12.6} {}",
                c.key,
                c.value,
                c.se.map_or("(held at the bound of its range)".to_owned(), |e| format!(
                    "± {e:.6} (standard error)"
                ))
            );
        }
    }
    for r in refused {
        let _ = writeln!(
            summary,
            "  {}: not fitted — {} usable intervals, at least {} needed (more sections or more survey years)",
            r.family, r.n, r.needed
        );
    }
    summary
}

fn model_of<'f>(fits: &'f [Fit], family: &str) -> Option<&'f Fit> {
    fits.iter().find(|f| f.family == family)
}

fn scenario_model(run: &Run, family: &str) -> Option<crate::input::models::FamilyModel> {
    run.scenario
        .models
        .condition
        .family(family)
        .map(|f| f.model)
}

/// `calibration.csv`: one row per interval of a fitted family.
pub fn csv(run: &Run, intervals: &[Interval], fits: &[Fit]) -> String {
    let mut s = crate::schema::others::calibrate::INTERVALS.head();
    for i in intervals {
        let (Some(fit), Some(before)) = (model_of(fits, &i.family), scenario_model(run, &i.family))
        else {
            continue;
        };
        let _ = writeln!(
            s,
            "{},{},{},{},{:.3},{:.3},{:.4},{:.4},{:.4}",
            Field(run.network.sections[i.section].id.as_str()),
            Field(&i.family),
            i.from,
            i.to,
            i.iri_from,
            i.iri_to,
            i.observed(),
            calibrate::predicted(i, &before),
            calibrate::predicted(i, &fit.model)
        );
    }
    s
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// `calibration.html`: per family, observed against predicted rise (one point per interval,
/// the line of perfect prediction dashed), with the scenario's and the fitted coefficients.
pub fn page(run: &Run, intervals: &[Interval], fits: &[Fit], source: &str) -> String {
    let mut s = format!(
        "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\"><title>Calibration — {}</title>\
<style>body{{font-family:sans-serif;margin:2em;max-width:60em}}svg{{background:#fff}}td,th{{padding:2px 8px;text-align:right}}</style></head><body>\
<h1>Roughness calibration</h1><p>Surveys: {}. Each point is one interval between two surveys of a section with no works between them: \
the rise observed (across) against the rise predicted (up), by the scenario's coefficients (grey) and by the fitted ones (blue). \
Points on the dashed line are predicted exactly.</p>",
        esc(&run.scenario.title),
        esc(source)
    );
    for f in fits {
        let Some(before) = scenario_model(run, &f.family) else {
            continue;
        };
        let rows: Vec<&Interval> = intervals.iter().filter(|i| i.family == f.family).collect();
        let pts: Vec<(f64, f64, f64)> = rows
            .iter()
            .map(|i| {
                (
                    i.observed(),
                    calibrate::predicted(i, &before),
                    calibrate::predicted(i, &f.model),
                )
            })
            .collect();
        let hi = pts
            .iter()
            .flat_map(|p| [p.0, p.1, p.2])
            .fold(0.1f64, f64::max)
            * 1.05;
        let lo = pts
            .iter()
            .flat_map(|p| [p.0, p.1, p.2])
            .fold(0.0f64, f64::min);
        let (w, h, m) = (420.0, 420.0, 50.0);
        let x = |v: f64| m + (v - lo) / (hi - lo) * (w - 2.0 * m);
        let y = |v: f64| h - m - (v - lo) / (hi - lo) * (h - 2.0 * m);
        let _ = write!(
            s,
            "<h2>{}</h2><p>{} intervals on {} sections; RMSE {:.4} m/km with the fitted coefficients, {:.4} with the scenario's; R² {:.3}.</p>\
<svg width=\"{w}\" height=\"{h}\" role=\"img\" aria-label=\"observed against predicted rise, {}\">\
<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"#555\" stroke-dasharray=\"4 3\"/>\
<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" font-size=\"12\">observed rise (m/km)</text>\
<text x=\"14\" y=\"{}\" text-anchor=\"middle\" font-size=\"12\" transform=\"rotate(-90 14 {})\">predicted rise (m/km)</text>",
            esc(&f.family), f.n, f.sections, f.rmse, f.rmse_before, f.r2, esc(&f.family),
            x(lo), y(lo), x(hi), y(hi), w / 2.0, h - 12.0, h / 2.0, h / 2.0
        );
        for (v, label) in [(lo, lo), (hi, hi)] {
            let _ = write!(
                s,
                "<text x=\"{}\" y=\"{}\" font-size=\"10\" text-anchor=\"middle\">{label:.2}</text>",
                x(v),
                h - m + 14.0
            );
        }
        for p in &pts {
            let _ = write!(s, "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"2.5\" fill=\"#999999\" data-x=\"{}\" data-y=\"{}\"/>", x(p.0), y(p.1), p.0, p.1);
            let _ = write!(s, "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"2.5\" fill=\"#0072B2\" data-x=\"{}\" data-y=\"{}\"/>", x(p.0), y(p.2), p.0, p.2);
        }
        s.push_str("</svg><table><thead><tr><th>coefficient</th><th>fitted</th><th>standard error</th></tr></thead><tbody>");
        for c in &f.coefficients {
            let _ = write!(
                s,
                "<tr><td>{}</td><td>{:.6}</td><td>{}</td></tr>",
                c.key,
                c.value,
                c.se.map_or("held at a bound".to_owned(), |e| format!("{e:.6}"))
            );
        }
        s.push_str("</tbody></table>");
    }
    let _ = writeln!(
        s,
        "<p><small>{}</small></p></body></html>",
        esc(crate::CAUTION)
    );
    s
}
