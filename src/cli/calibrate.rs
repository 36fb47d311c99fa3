//! `pavestrat calibrate --scenario FILE --surveys FILE [--out DIR] [--write-scenario FILE]`:
//! fit the roughness families to an agency's condition surveys (see [`pavestrat::calibrate`]).
//!
//! Writes `calibration.toml` (the fitted `[condition.family.NAME]` tables, ready to paste),
//! `calibration.csv` (each interval: observed rise, and the rise the scenario's and the fitted
//! coefficients predict) and `calibration.html` (observed against predicted), all or nothing;
//! with `--write-scenario`, a copy of the scenario with the fitted tables in place and its file
//! paths made absolute, so that it still finds its files wherever it is written.

use super::Context;
use pavestrat::calibrate::{self, Fit, Interval};
use pavestrat::diag::{Diagnostics, Place};
use pavestrat::error::{Error, Result};
use pavestrat::io::OutputSet;
use pavestrat::output::format::Field;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// Arguments of `calibrate`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML) whose network the surveys describe.
    #[arg(long, value_name = "FILE")]
    pub scenario: PathBuf,

    /// Condition surveys (CSV): section_id,year,iri, optionally works_year and x_… columns.
    #[arg(long, value_name = "FILE")]
    pub surveys: PathBuf,

    /// Write calibration.toml, calibration.csv and calibration.html into this directory.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,

    /// Also write a copy of the scenario with the fitted tables in place.
    #[arg(long, value_name = "FILE")]
    pub write_scenario: Option<PathBuf>,
}

/// Run `calibrate`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let (run, diags) = pavestrat::input::load(&pavestrat::input::Disk, &args.scenario);
    let Some(run) = run else {
        return Err(Error::Input(diags));
    };
    ctx.notes(&diags);
    let mut d = Diagnostics::new();
    let Some((label, text)) =
        pavestrat::input::read_text(&pavestrat::input::Disk, &args.surveys, None, &mut d)
    else {
        return Err(Error::Input(d));
    };
    let surveys = calibrate::read_surveys(&label, &text, &run, &mut d);
    if d.has_errors() {
        return Err(Error::Input(d));
    }
    ctx.notes(&d);
    let intervals = calibrate::intervals(&run, &surveys);
    let (fits, refused) = calibrate::fit(&run, &intervals);
    let mut summary = format!(
        "Calibration of {} from {label}: {} surveys, {} intervals without works between them\n",
        run.scenario.file,
        surveys.len(),
        intervals.len()
    );
    for f in &fits {
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
    for r in &refused {
        let _ = writeln!(
            summary,
            "  {}: not fitted — {} usable intervals, at least {} needed (more sections or more survey years)",
            r.family, r.n, r.needed
        );
    }
    if fits.is_empty() {
        let mut d = Diagnostics::new();
        d.error(
            Place::file(&label),
            format!(
                "{} intervals without works between them, too few to fit any family",
                intervals.len()
            ),
            format!(
                "at least {} intervals of one family per coefficient it fits (3 for calibrated, 1 for aashto93)",
                calibrate::MIN_INTERVALS
            ),
        );
        ctx.say(summary.trim_end());
        return Err(Error::Input(d));
    }
    let toml: String = fits
        .iter()
        .map(|f| calibrate::family_table(f, &label))
        .collect::<Vec<_>>()
        .join("\n");
    if let Some(dir) = &args.out {
        let mut set = OutputSet::new();
        set.add(
            pavestrat::output::schema::others::calibrate::TOML,
            toml.clone().into_bytes(),
        );
        set.add(
            pavestrat::output::schema::others::calibrate::INTERVALS.name,
            csv(&run, &intervals, &fits).into_bytes(),
        );
        set.add(
            "calibration.html",
            page(&run, &intervals, &fits, &label).into_bytes(),
        );
        for p in set.commit(dir, "calibrate")? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    } else {
        pavestrat::io::print_stdout(&toml)?;
    }
    if let Some(path) = &args.write_scenario {
        let original = std::fs::read_to_string(&args.scenario).map_err(|e| {
            Error::Usage(format!(
                "cannot read {} again: {e}",
                args.scenario.display()
            ))
        })?;
        let f = &run.scenario.files;
        let abs = |p: &Path| -> String {
            let p = std::fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf());
            toml_string(&p.display().to_string())
        };
        let strategies: Vec<String> = f.strategies.iter().map(|s| abs(&s.path)).collect();
        let files = format!(
            "[files]\nnetwork = {}\ntreatments = {}\nstrategies = [{}]",
            abs(&f.network.path),
            abs(&f.treatments.path),
            strategies.join(", ")
        );
        let text = calibrate::scenario_with(&original, &fits, &label, Some(&files));
        pavestrat::io::write_atomically(path, text.as_bytes())?;
        ctx.say(&format!("wrote {}", path.display()));
    }
    ctx.say(summary.trim_end());
    Ok(())
}

fn toml_string(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

fn model_of<'f>(fits: &'f [Fit], family: &str) -> Option<&'f Fit> {
    fits.iter().find(|f| f.family == family)
}

fn scenario_model(
    run: &pavestrat::input::Run,
    family: &str,
) -> Option<pavestrat::input::models::FamilyModel> {
    run.scenario
        .models
        .condition
        .family(family)
        .map(|f| f.model)
}

/// `calibration.csv`: one row per interval of a fitted family.
fn csv(run: &pavestrat::input::Run, intervals: &[Interval], fits: &[Fit]) -> String {
    let mut s = pavestrat::output::schema::others::calibrate::INTERVALS.head();
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
fn page(run: &pavestrat::input::Run, intervals: &[Interval], fits: &[Fit], source: &str) -> String {
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
        esc(pavestrat::CAUTION)
    );
    s
}
