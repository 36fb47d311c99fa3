//! Inputs: read every file of a run once, validate it, and resolve it into one typed [`Run`].
//!
//! The scenario names the other files; each is read through a [`Source`] (the disk, or the demo
//! built into the binary), decoded ([`crate::text`]), parsed from its text by its own module, and
//! then checked against the others (templates against the catalogue, budget regions against the
//! network, windows against the analysis period). Every problem of every file lands in one
//! [`Diagnostics`] list; later stages receive only a `Run` that passed.

pub mod candidates;
pub mod cashflow;
pub mod csvfile;
pub mod features;
pub mod models;
pub mod network;
pub mod plan;
pub mod provenance;
pub mod scenario;
pub mod sheet;
pub mod table;
pub mod templates;
pub mod tomldoc;
pub mod treatments;
pub mod uncertain;
pub mod varied;

/// A percentage written as text (`6%`, `-1.5 %`, `+0.25%`) as the fraction it stands for, to the
/// bit: the decimal point is moved two places in the text before the number is read, so `2.2%`
/// is the same `f64` as `0.022`. `None` for anything else (no `%`, no digits, an exponent).
pub fn percent(text: &str) -> Option<f64> {
    let body = text.trim().strip_suffix('%')?.trim_end();
    let (sign, digits) = match body.as_bytes().first()? {
        b'-' => ("-", &body[1..]),
        b'+' => ("", &body[1..]),
        _ => ("", body),
    };
    let (int, frac) = digits.split_once('.').unwrap_or((digits, ""));
    let is_digits = |s: &str| s.bytes().all(|b| b.is_ascii_digit());
    if (int.is_empty() && frac.is_empty()) || !is_digits(int) || !is_digits(frac) {
        return None;
    }
    // int.frac % = 0.(int padded to two places)frac
    let padded = format!("{int:0>2}");
    let (whole, hundredths) = padded.split_at(padded.len() - 2);
    let whole = if whole.is_empty() { "0" } else { whole };
    format!("{sign}{whole}.{hundredths}{frac}").parse().ok()
}

use crate::diag::{did_you_mean, Diagnostics, Place};
use crate::model::catalogue::Catalogue;
use crate::model::network::Network;
use crate::text::decode;
use scenario::{FileRef, Scenario};
use std::path::{Path, PathBuf};
use templates::Template;

/// Where input files come from.
pub trait Source {
    /// The bytes of a file.
    fn read(&self, path: &Path) -> std::io::Result<Vec<u8>>;
    /// How the file is named in messages.
    fn label(&self, path: &Path) -> String;
}

/// Files on disk (or standard input for `-`).
pub struct Disk;

impl Source for Disk {
    fn read(&self, path: &Path) -> std::io::Result<Vec<u8>> {
        crate::io::read_input(&path.to_string_lossy())
    }

    fn label(&self, path: &Path) -> String {
        crate::io::input_label(&path.to_string_lossy())
    }
}

/// Files compiled into the binary, by name.
pub struct Embedded {
    pub name: &'static str,
    pub files: &'static [(&'static str, &'static [u8])],
}

impl Source for Embedded {
    fn read(&self, path: &Path) -> std::io::Result<Vec<u8>> {
        let key = path.to_string_lossy();
        self.files
            .iter()
            .find(|(n, _)| *n == key)
            .map(|(_, b)| b.to_vec())
            .ok_or_else(|| {
                std::io::Error::new(std::io::ErrorKind::NotFound, "not in the built-in files")
            })
    }

    fn label(&self, path: &Path) -> String {
        format!("<{}>/{}", self.name, path.display())
    }
}

/// Everything a run needs, validated.
#[derive(Debug, Clone)]
pub struct Run {
    pub scenario: Scenario,
    pub network: Network,
    pub catalogue: Catalogue,
    pub templates: Vec<Template>,
}

/// Read and decode a file, recording a failure at `named_at` (where another file names it) or
/// at the file itself.
pub fn read_text(
    source: &dyn Source,
    path: &Path,
    named_at: Option<&Place>,
    d: &mut Diagnostics,
) -> Option<(String, String)> {
    let (label, bytes) = read_bytes(source, path, named_at, d)?;
    let text = decode(&label, bytes, d);
    Some((label, text))
}

/// Read a file's bytes and its label, recording a failure as [`read_text`] does.
fn read_bytes(
    source: &dyn Source,
    path: &Path,
    named_at: Option<&Place>,
    d: &mut Diagnostics,
) -> Option<(String, Vec<u8>)> {
    let label = source.label(path);
    match source.read(path) {
        Ok(bytes) => Some((label, bytes)),
        Err(e) => {
            let (place, found) = match named_at {
                Some(p) => (p.clone(), format!("cannot read `{label}`: {e}")),
                None => (
                    Place::file(label.clone()),
                    format!("cannot read the file: {e}"),
                ),
            };
            d.error(place, found, "an existing, readable file");
            None
        }
    }
}

/// Read the network: a workbook or GeoJSON (told by its first bytes, whatever its name) or
/// CSV text.
fn read_network(
    source: &dyn Source,
    files: &scenario::ScenarioFiles,
    d: &mut Diagnostics,
) -> Option<Network> {
    let f = &files.network;
    let (label, bytes) = read_bytes(source, &f.path, Some(&f.place), d)?;
    let sheet = files
        .network_sheet
        .as_ref()
        .map(|(name, place)| (name.as_str(), place));
    if sheet::is_workbook(&bytes) {
        return network::parse_workbook(&label, &bytes, sheet, d);
    }
    if let Some((_, place)) = sheet {
        d.error(
            place.clone(),
            format!("a sheet named, but `{label}` is not a workbook"),
            "network_sheet only with an .xlsx, .xls or .ods network",
        );
    }
    if features::is_json(&bytes) {
        return network::parse_features(&label, &bytes, d);
    }
    let text = decode(&label, bytes, d);
    network::parse(&label, &text, d)
}

/// The directory relative paths in a scenario resolve against.
fn scenario_dir(path: &Path) -> PathBuf {
    if path == Path::new("-") {
        return PathBuf::new();
    }
    path.parent().map(Path::to_path_buf).unwrap_or_default()
}

/// Load and validate a whole run. Returns the run when there were no errors, and every finding
/// (notes included) either way.
pub fn load(source: &dyn Source, scenario_path: &Path) -> (Option<Run>, Diagnostics) {
    let mut d = Diagnostics::new();
    let run = load_into(source, scenario_path, &mut d);
    (run.filter(|_| !d.has_errors()), d)
}

fn load_into(source: &dyn Source, scenario_path: &Path, d: &mut Diagnostics) -> Option<Run> {
    let (label, text) = read_text(source, scenario_path, None, d)?;
    let partial = scenario::parse_partial(&label, &text, &scenario_dir(scenario_path), d);
    // Even when the scenario has errors, the files it names are read and checked too.
    let files = partial.files?;
    let scenario = partial.scenario;
    let families = partial.families;

    let read = |f: &FileRef, d: &mut Diagnostics| read_text(source, &f.path, Some(&f.place), d);

    let mut network = read_network(source, &files, d);
    let (catalogue, treatment_names) = match read(&files.treatments, d) {
        Some((l, t)) => treatments::parse(&l, &t, d),
        None => (None, Vec::new()),
    };
    let mut templates: Vec<Template> = Vec::new();
    let mut templates_ok = true;
    for f in &files.strategies {
        match read(f, d).and_then(|(l, t)| templates::parse(&l, &t, d)) {
            Some(ts) => {
                for t in ts {
                    if let Some(prev) = templates.iter().find(|p| p.name == t.name) {
                        d.error(
                            t.place.clone(),
                            format!(
                                "the template name `{}` again (first in {})",
                                t.name, prev.place
                            ),
                            "each template name once across all strategy files",
                        );
                        templates_ok = false;
                    } else {
                        templates.push(t);
                    }
                }
            }
            None => templates_ok = false,
        }
    }

    if !treatment_names.is_empty() {
        let label = source.label(&files.treatments.path);
        check_template_treatments(&templates, &label, &treatment_names, catalogue.as_ref(), d);
    }
    check_template_sizes(&templates, d);
    if let (Some(net), Some(families)) = (&mut network, &families) {
        check_surfaces(net, families, d);
    }
    if let Some(net) = &network {
        check_coordinates(net, &files, d);
    }
    let scenario = scenario?;
    check_template_years(&templates, &scenario, d);
    if let Some(net) = &network {
        check_network_against_scenario(net, &scenario, d);
    }
    let (network, catalogue) = (network?, catalogue?);
    for c in &scenario.plan.commitments {
        if let plan::Held::Treatment { treatment, .. } = &c.held {
            if catalogue.get(treatment).is_none() {
                let names: Vec<&str> = treatment_names.iter().map(String::as_str).collect();
                let e = d.error(
                    c.place.clone().with_subfield("treatment"),
                    format!("unknown treatment `{treatment}`"),
                    format!("a treatment of the catalogue: {}", names.join(", ")),
                );
                if let Some(m) = did_you_mean(treatment, &names) {
                    e.hint = Some(format!("did you mean `{m}`?"));
                }
            }
        }
    }
    if d.has_errors() {
        return None;
    }
    if !templates_ok {
        return None;
    }
    Some(Run {
        scenario,
        network,
        catalogue,
        templates,
    })
}

fn check_template_treatments(
    templates: &[Template],
    file: &str,
    names: &[String],
    cat: Option<&Catalogue>,
    d: &mut Diagnostics,
) {
    let ids: Vec<&str> = names.iter().map(String::as_str).collect();
    let known = |name: &str, place: &Place, d: &mut Diagnostics| {
        if ids.contains(&name) {
            return true;
        }
        let e = d.error(
            place.clone(),
            format!("unknown treatment `{name}`"),
            format!("a treatment of {file}: {}", ids.join(", ")),
        );
        if let Some(m) = did_you_mean(name, &ids) {
            e.hint = Some(format!("did you mean `{m}`?"));
        }
        false
    };
    // A tag names one treatment across all templates, so that a strategy's name says what it does.
    let mut tags: Vec<(&str, &str, &Place)> = Vec::new();
    let works = templates.iter().flat_map(|t| {
        t.steps
            .iter()
            .map(|s| (s.tag.as_str(), s.treatment.as_str(), &s.place))
            .chain(
                t.trigger
                    .iter()
                    .map(|r| (r.tag.as_str(), r.treatment.as_str(), &r.place)),
            )
    });
    for (tag, treatment, place) in works {
        match tags.iter().find(|(t, _, _)| *t == tag) {
            Some((_, other, first)) if *other != treatment => {
                d.error(
                    place.clone(),
                    format!("the tag `{tag}` on the treatment `{treatment}`; it names `{other}` at {first}"),
                    "one treatment per tag across all templates, so that strategy names are unambiguous",
                );
            }
            Some(_) => {}
            None => tags.push((tag, treatment, place)),
        }
    }
    for t in templates {
        for s in &t.steps {
            known(&s.treatment, &s.place, d);
        }
        if let Some(tr) = &t.trigger {
            if known(&tr.treatment, &tr.place, d) {
                if let Some(tt) = cat.and_then(|c| c.get(&tr.treatment)) {
                    if tt.action == crate::model::catalogue::Action::Widen {
                        d.error(
                            tr.place.clone(),
                            format!("a roughness trigger on the widening `{}`", tr.treatment),
                            "a surfacing or strengthening treatment (widen in timed steps)",
                        );
                    }
                }
            }
        }
    }
}

fn check_template_years(templates: &[Template], s: &Scenario, d: &mut Diagnostics) {
    let n = s.analysis_years;
    for t in templates {
        for st in &t.steps {
            if let templates::StepTiming::Window { first, last, .. } = st.timing {
                if first >= n {
                    d.error(
                        st.place.clone(),
                        format!("a window starting {first} years after the base year"),
                        format!(
                            "a start within the {n}-year analysis period (0 to {})",
                            n - 1
                        ),
                    );
                } else if last >= n {
                    d.note(
                        st.place.clone(),
                        format!(
                            "the window runs to {last} years after the base year; years past the \
                             {n}-year analysis period are not used"
                        ),
                    );
                }
            }
        }
    }
}

/// Most steps a template may have (the works of one year are held in a fixed-size buffer).
pub const MAX_STEPS: usize = 8;
/// Most strategies one template may yield for one section.
pub const MAX_STRATEGIES_PER_TEMPLATE: u64 = 10_000;

fn check_template_sizes(templates: &[Template], d: &mut Diagnostics) {
    // Strategies are referred to by a template number that fits in 16 bits.
    if templates.len() >= usize::from(u16::MAX) {
        if let Some(t) = templates.last() {
            d.error(
                t.place.clone(),
                format!("{} strategy templates", templates.len()),
                format!("at most {} templates in one run", u16::MAX - 1),
            );
        }
    }
    for t in templates {
        if t.steps.len() > MAX_STEPS {
            d.error(
                t.place.clone(),
                format!("{} steps in `{}`", t.steps.len(), t.name),
                format!("at most {MAX_STEPS} steps in one template"),
            );
        }
        let n = t.max_strategies();
        if n > MAX_STRATEGIES_PER_TEMPLATE {
            d.error(
                t.place.clone(),
                format!("`{}` expands into up to {n} strategies per section", t.name),
                format!("at most {MAX_STRATEGIES_PER_TEMPLATE} per template"),
            )
            .hint =
                Some("narrow the windows, or step through them with `every = 2` or more".into());
        }
    }
}

/// With longitude and latitude, every point of a geometry must be on the globe: longitude from
/// −180 to 180, latitude from −90 to 90 (a projected system's metres are far outside).
fn check_coordinates(net: &Network, files: &scenario::ScenarioFiles, d: &mut Diagnostics) {
    if files.coordinates != crate::model::network::Coordinates::LonLat {
        return;
    }
    let mut bad = 0usize;
    for sec in &net.sections {
        let Some(g) = &sec.geometry else { continue };
        let off = g
            .iter()
            .flatten()
            .find(|[x, y]| !(-180.0..=180.0).contains(x) || !(-90.0..=90.0).contains(y));
        if let Some([x, y]) = off {
            bad += 1;
            if bad <= 20 {
                let e = d.error(
                    net.place(sec, "geometry"),
                    format!("the point ({x} {y}), which is not a longitude and latitude"),
                    "longitude from -180 to 180 and latitude from -90 to 90, in that order",
                );
                if bad == 1 {
                    e.hint = Some(
                        "for a projected system's metres, say network_coordinates = \
                         \"projected\" in the scenario's [files]"
                            .into(),
                    );
                }
            }
        }
    }
    if bad > 20 {
        d.error(
            Place::file(net.file.clone()).with_field("geometry"),
            format!("{} more sections with points off the globe", bad - 20),
            "longitude and latitude, or network_coordinates = \"projected\"",
        );
    }
}

/// Every section's surface must name a pavement family of the scenario, in any case (the
/// surface is then spelt as the family is).
fn check_surfaces(net: &mut Network, families: &[String], d: &mut Diagnostics) {
    let families: Vec<&str> = families.iter().map(String::as_str).collect();
    for k in 0..net.sections.len() {
        let Some(surface) = net.sections[k].surface.as_deref() else {
            continue;
        };
        let family = families
            .iter()
            .find(|f| f.eq_ignore_ascii_case(surface))
            .copied();
        if let Some(f) = family {
            if f != surface {
                net.sections[k].surface = Some(f.to_owned());
            }
            continue;
        }
        let surface = surface.to_owned();
        let e = d.error(
            net.place(&net.sections[k], "surface"),
            format!("the surface `{surface}`, which has no pavement family"),
            format!(
                "one of the scenario's [condition.family.NAME] tables: {}",
                families.join(", ")
            ),
        );
        if let Some(m) = did_you_mean(&surface, &families) {
            e.hint = Some(format!("did you mean `{m}`?"));
        }
    }
}

fn check_network_against_scenario(net: &Network, s: &Scenario, d: &mut Diagnostics) {
    let regions = net.regions();
    let mut reported: Vec<&str> = Vec::new();
    let regional = s
        .budget_lines
        .iter()
        .map(|b| (&b.region, b.group.as_str(), &b.place))
        .chain(
            s.plan
                .targets
                .iter()
                .map(|t| (&t.region, t.group.as_str(), &t.place)),
        );
    for (region, group, place) in regional {
        if let Some(r) = region {
            if !regions.contains(&r.as_str()) && !reported.contains(&group) {
                reported.push(group);
                let e = d.error(
                    place.clone().with_subfield("region"),
                    format!("the region `{r}`, which no section of {} has", net.file),
                    if regions.is_empty() {
                        "a region column in the network file".to_owned()
                    } else {
                        format!("one of the network's regions: {}", regions.join(", "))
                    },
                );
                if let Some(m) = did_you_mean(r, &regions) {
                    e.hint = Some(format!("did you mean `{m}`?"));
                }
            }
        }
    }
    let ids: std::collections::HashSet<&str> = net.sections.iter().map(|s| s.id.as_str()).collect();
    for c in &s.plan.commitments {
        if !ids.contains(c.section.as_str()) {
            d.error(
                c.place.clone().with_subfield("section"),
                format!(
                    "the section `{}`, which {} does not have",
                    c.section, net.file
                ),
                "a section_id of the network file",
            );
        }
    }
    for sec in &net.sections {
        if let Some(y) = sec.last_works_year {
            if y > s.base_year {
                d.error(
                    net.place(sec, "last_works_year"),
                    format!("found {y}, after the base year {}", s.base_year),
                    "a year no later than the base year",
                );
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentages_are_the_fractions_they_stand_for_to_the_bit() {
        let cases = [
            ("6%", "0.06"),
            ("2.2%", "0.022"),
            (" 16 % ", "0.16"),
            ("-1.5%", "-0.015"),
            ("+0.25%", "0.0025"),
            ("100%", "1"),
            ("125.5%", "1.255"),
            (".5%", "0.005"),
            ("0%", "0"),
        ];
        for (text, fraction) in cases {
            let want: f64 = fraction.parse().unwrap();
            assert_eq!(
                percent(text).map(f64::to_bits),
                Some(want.to_bits()),
                "{text}"
            );
        }
        for bad in [
            "6", "%", "six%", "1e2%", "1.2.3%", "--1%", "", "1,5%", "- 1%",
        ] {
            assert_eq!(percent(bad), None, "{bad}");
        }
    }

    proptest::proptest! {
        // Any decimal with up to six places, as a percentage, is the number a hundred times
        // smaller written out, to the bit.
        #[test]
        fn any_percentage_reads_as_its_fraction(units in -10_000_000i64..10_000_000, places in 0u32..6) {
            let scale = 10i64.pow(places);
            let (int, frac) = (units.abs() / scale, units.abs() % scale);
            let sign = if units < 0 { "-" } else { "" };
            let text = if places == 0 {
                format!("{sign}{int}%")
            } else {
                format!("{sign}{int}.{frac:0>w$}%", w = places as usize)
            };
            // The same value written as a fraction: the exponent moved by two.
            let want: f64 = format!("{}e-2", text.trim_end_matches('%')).parse().unwrap();
            proptest::prop_assert_eq!(percent(&text).map(f64::to_bits), Some(want.to_bits()), "{}", text);
        }
    }

    #[test]
    fn built_in_demo_is_valid() {
        let (run, d) = load(&crate::demo::SOURCE, Path::new(crate::demo::SCENARIO));
        assert!(!d.has_errors(), "{d}");
        let run = run.expect("the demo loads");
        assert!(run.network.sections.len() >= 30);
        assert!(!run.templates.is_empty());
        assert!(!run.scenario.budget_lines.is_empty());
    }

    #[test]
    fn a_missing_file_is_reported_where_it_is_named() {
        static FILES: &[(&str, &[u8])] = &[("s.toml", include_bytes!("../demo/scenario.toml"))];
        let src = Embedded {
            name: "t",
            files: FILES,
        };
        let (run, d) = load(&src, Path::new("s.toml"));
        assert!(run.is_none());
        let errs = d.errors();
        assert!(errs.len() >= 3, "{d}");
        assert!(
            errs.iter()
                .all(|e| e.place.file == "<t>/s.toml" && e.place.line.is_some()),
            "{d}"
        );
        assert!(
            d.to_string().contains("cannot read `<t>/network.csv`"),
            "{d}"
        );
    }
}

#[cfg(test)]
mod robustness {
    //! Readers must never panic, whatever bytes they are given.
    use super::*;
    use proptest::prelude::*;

    fn demo_text(name: &str) -> String {
        let bytes = crate::demo::FILES.iter().find(|f| f.0 == name).unwrap().1;
        String::from_utf8(bytes.to_vec()).unwrap()
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(200))]

        #[test]
        fn readers_survive_arbitrary_text(s in "\\PC{0,400}") {
            let mut d = Diagnostics::new();
            let _ = network::parse("n.csv", &s, &mut d);
            let _ = cashflow::parse("c.csv", &s, &mut d);
            let _ = scenario::parse("s.toml", &s, Path::new("."), &mut d);
            let _ = treatments::parse("t.toml", &s, &mut d);
            let _ = templates::parse("p.toml", &s, &mut d);
            let _ = crate::text::decode("b", s.as_bytes(), &mut d);
        }

        #[test]
        fn readers_survive_mangled_demo_files(cut in 0usize..4000, junk in "[,\"=\\[\\]{}0-9a-z.\\n-]{0,12}") {
            for name in ["network.csv", "scenario.toml", "treatments.toml", "templates.toml"] {
                let text = demo_text(name);
                let at = text.char_indices().map(|(i, _)| i).nth(cut % text.chars().count()).unwrap_or(0);
                let mangled = format!("{}{}{}", &text[..at], junk, &text[at..]);
                let mut d = Diagnostics::new();
                match name {
                    "network.csv" => { let _ = network::parse(name, &mangled, &mut d); }
                    "scenario.toml" => { let _ = scenario::parse(name, &mangled, Path::new("."), &mut d); }
                    "treatments.toml" => { let _ = treatments::parse(name, &mangled, &mut d); }
                    _ => { let _ = templates::parse(name, &mangled, &mut d); }
                }
                // Whatever is reported names its file.
                prop_assert!(d.iter().all(|x| x.place.file == name));
            }
        }
    }

    /// The demo's four files in memory, one of them changed.
    struct Mem(Vec<(String, Vec<u8>)>);

    impl Source for Mem {
        fn read(&self, path: &Path) -> std::io::Result<Vec<u8>> {
            let key = path.to_string_lossy();
            self.0
                .iter()
                .find(|(n, _)| *n == key)
                .map(|(_, b)| b.clone())
                .ok_or_else(|| std::io::Error::new(std::io::ErrorKind::NotFound, "no such file"))
        }

        fn label(&self, path: &Path) -> String {
            path.display().to_string()
        }
    }

    /// The byte range of the line holding offset `at` (its line end included).
    fn line_around(b: &[u8], at: usize) -> (usize, usize) {
        let start = b[..at]
            .iter()
            .rposition(|c| *c == b'\n')
            .map_or(0, |p| p + 1);
        let end = b[at..]
            .iter()
            .position(|c| *c == b'\n')
            .map_or(b.len(), |p| at + p + 1);
        (start, end)
    }

    /// Byte-level mutations of the kind a fuzzer makes: flip, insert, delete, duplicate or drop
    /// a line, splice in a run of one byte.
    fn mutate(mut b: Vec<u8>, ops: &[(u8, usize, u8)]) -> Vec<u8> {
        for &(op, at, x) in ops {
            let at = if b.is_empty() { 0 } else { at % b.len() };
            match op % 6 {
                0 if !b.is_empty() => b[at] ^= x | 1,
                1 => b.insert(at, x),
                2 if !b.is_empty() => {
                    b.remove(at);
                }
                3 => {
                    let (start, end) = line_around(&b, at);
                    let line = b[start..end].to_vec();
                    b.splice(end..end, line);
                }
                4 => {
                    let (start, end) = line_around(&b, at);
                    b.drain(start..end);
                }
                _ => b
                    .splice(at..at, std::iter::repeat_n(x, 1 + (x as usize % 300)))
                    .for_each(drop),
            }
        }
        b
    }

    // Cases: PROPTEST_CASES (default 256); CI runs many more, in release, for a bounded time.
    proptest! {
        /// Whole runs over mutated demo files: never a panic; every error names its file, and
        /// every error of a file that was read names a line or says it is about the whole file.
        #[test]
        fn whole_runs_survive_byte_mutations(file in 0usize..4, ops in proptest::collection::vec((any::<u8>(), any::<usize>(), any::<u8>()), 1..10)) {
            let names = ["scenario.toml", "network.csv", "treatments.toml", "templates.toml"];
            let mut files: Vec<(String, Vec<u8>)> = crate::demo::FILES
                .iter()
                .map(|(n, b)| ((*n).to_owned(), b.to_vec()))
                .collect();
            let target = names[file];
            for f in &mut files {
                if f.0 == target {
                    f.1 = mutate(std::mem::take(&mut f.1), &ops);
                }
            }
            let (run, d) = load(&Mem(files), Path::new("scenario.toml"));
            for e in d.errors() {
                prop_assert!(!e.place.file.is_empty(), "{e}");
            }
            if let Some(run) = run {
                let mut more = Diagnostics::new();
                crate::plan::commitment_problems(&run, &mut more);
                for e in more.errors() {
                    prop_assert!(e.place.file == "scenario.toml" && e.place.line.is_some(), "{e}");
                }
            }
        }

        /// Every reader on arbitrary bytes: never a panic.
        #[test]
        fn readers_survive_arbitrary_bytes(bytes in proptest::collection::vec(any::<u8>(), 0..3000)) {
            let mut d = Diagnostics::new();
            let text = crate::text::decode("b", bytes.clone(), &mut d);
            let _ = network::parse("n.csv", &text, &mut d);
            let _ = cashflow::parse("c.csv", &text, &mut d);
            let _ = scenario::parse("s.toml", &text, Path::new("."), &mut d);
            let _ = treatments::parse("t.toml", &text, &mut d);
            let _ = templates::parse("p.toml", &text, &mut d);
        }
    }
}
