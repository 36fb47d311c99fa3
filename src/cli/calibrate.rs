//! `pavestrat calibrate --scenario FILE --surveys FILE [--out DIR] [--write-scenario FILE]`:
//! fit the roughness families to an agency's condition surveys (see [`pavestrat::calibrate`]).
//!
//! Writes `calibration.toml` (the fitted `[condition.family.NAME]` tables, ready to paste),
//! `calibration.csv` (each interval: observed rise, and the rise the scenario's and the fitted
//! coefficients predict) and `calibration.html` (observed against predicted), all or nothing;
//! with `--write-scenario`, a copy of the scenario with the fitted tables in place and its file
//! paths made absolute, so that it still finds its files wherever it is written.

use super::Context;
use pavestrat::calibrate;
use pavestrat::diag::{Diagnostics, Place};
use pavestrat::error::{Error, Result};
use pavestrat::io::OutputSet;
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
    let summary = pavestrat::output::calibration::summary(
        &run, &label, &surveys, &intervals, &fits, &refused,
    );
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
            pavestrat::schema::others::calibrate::TOML,
            toml.clone().into_bytes(),
        );
        set.add(
            pavestrat::schema::others::calibrate::INTERVALS.name,
            pavestrat::output::calibration::csv(&run, &intervals, &fits).into_bytes(),
        );
        set.add(
            pavestrat::schema::others::calibrate::PAGE,
            pavestrat::output::calibration::page(&run, &intervals, &fits, &label).into_bytes(),
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
        let mut sheet = match &f.network_sheet {
            Some((name, _)) => format!("\nnetwork_sheet = {}", toml_string(name)),
            None => String::new(),
        };
        if f.coordinates != pavestrat::model::network::Coordinates::LonLat {
            sheet.push_str(&format!(
                "\nnetwork_coordinates = \"{}\"",
                f.coordinates.name()
            ));
        }
        let files = format!(
            "[files]\nnetwork = {}{sheet}\ntreatments = {}\nstrategies = [{}]",
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
