//! The network file (CSV): one row per road section.
//!
//! Required columns, exactly these names: `section_id, length_km, lanes, carriageway, iri,
//! structural_number, aadt, heavy_share, growth_rate`. Optional: `region, lane_width_m, surface,
//! subgrade_mr_mpa, last_works_year, speed_kmh`, and the location `road, from_km, to_km`.
//! Columns starting `x_` are the user's own notes, carried along untouched; any other column is
//! an error (a misspelt optional column would otherwise be silently ignored). Every field is
//! read as text and converted here, so nothing is type-guessed. All problems of all rows are
//! reported, each with its line and column name.
//!
//! Location: `geometry` is the section's centre line as well-known text (`LINESTRING (x y, …)`
//! or `MULTILINESTRING`), in the coordinates the scenario names (`[files] network_coordinates`).
//! `from_km` and `to_km` are a section's chainage along its `road` (both or neither,
//! `from_km < to_km`, and a road named). Two sections of one road may touch but not overlap.
//! With the chainage columns, `length_km` may be left out (or a cell left empty): it is then
//! `to_km − from_km`, to the metre. Where both are given and differ by more than 5 %, a note
//! says so (a chainage can differ from the measured length; the stated `length_km` is used).

use super::table::Rows;
use crate::diag::{did_you_mean, Diagnostics, Place};
use crate::model::network::{Carriageway, Network, Origin, Section};
use crate::model::Year;
use std::collections::HashMap;

use crate::model::SectionId;

/// The required columns, in the documented order.
pub const REQUIRED: [&str; 9] = [
    "section_id",
    "length_km",
    "lanes",
    "carriageway",
    "iri",
    "structural_number",
    "aadt",
    "heavy_share",
    "growth_rate",
];

/// The optional columns.
pub const OPTIONAL: [&str; 10] = [
    "region",
    "lane_width_m",
    "surface",
    "subgrade_mr_mpa",
    "last_works_year",
    "speed_kmh",
    "road",
    "from_km",
    "to_km",
    "geometry",
];

/// Most chainage, km: longer than any road.
const MAX_CHAINAGE_KM: f64 = 100_000.0;

/// Where `required[1]` points when `length_km` is left out (chainage given): no field.
const NO_COLUMN: usize = usize::MAX;

/// What a network table holds, for the error on an empty one.
fn layout() -> String {
    format!(
        "a header line naming the columns {} and one row per section",
        REQUIRED.join(", ")
    )
}

/// Read the network from decoded CSV text.
pub fn parse(file: &str, text: &str, d: &mut Diagnostics) -> Option<Network> {
    let input = super::csvfile::CsvInput::open(file, text, &layout(), d)?;
    parse_rows(file, Rows::Text(input), d)
}

/// Read the network from a workbook's sheet (`sheet`, named where `place` says, or the
/// first).
pub fn parse_workbook(
    file: &str,
    bytes: &[u8],
    sheet: Option<(&str, &Place)>,
    d: &mut Diagnostics,
) -> Option<Network> {
    let input = super::sheet::SheetInput::open(file, bytes, sheet, &layout(), d)?;
    parse_rows(file, Rows::Sheet(input), d)
}

/// Read the network from a GeoJSON FeatureCollection of its sections.
pub fn parse_features(file: &str, bytes: &[u8], d: &mut Diagnostics) -> Option<Network> {
    let layout = format!(
        "a feature per section, with the properties {}",
        REQUIRED.join(", ")
    );
    let input = super::features::FeatureInput::open(file, bytes, &layout, d)?;
    parse_rows(file, Rows::Features(input), d)
}

/// Read the network from its records.
fn parse_rows(file: &str, mut input: Rows<'_>, d: &mut Diagnostics) -> Option<Network> {
    let before = d.error_count();
    input.text_columns(|c| {
        matches!(
            c,
            "section_id" | "region" | "surface" | "carriageway" | "road" | "geometry"
        ) || c.starts_with("x_")
    });
    let cols = read_header(file, &input, d)?;

    let mut sections = Vec::new();
    let mut seen: HashMap<String, usize> = HashMap::new();
    let mut regions = crate::model::region::Interner::default();
    let row_word = input.row_word();
    while let Some(line) = input.next_row(d) {
        let record = input.record();
        // Duplicates are checked on the raw id, so a bad row still claims its id.
        let id = record.get(cols.required[0]).unwrap_or("").to_owned();
        let duplicate = match seen.get(&id) {
            Some(first) if !id.is_empty() => {
                d.error(
                    input
                        .place(file, line, Some(cols.required[0]))
                        .with_subfield("section_id"),
                    format!("duplicate section_id `{id}` (first on {row_word} {first})"),
                    "each section_id once",
                );
                true
            }
            _ => {
                seen.insert(id, line);
                false
            }
        };
        let mut row = Row {
            file,
            input: &input,
            line,
            record,
            cols: &cols,
            d,
            regions: &mut regions,
            ok: true,
        };
        if let Some(s) = row.section() {
            if !duplicate {
                sections.push(s);
            }
        }
    }
    if !input.had_rows("at least one section after the header line", d) {
        return None;
    }
    check_chainage(file, &input, &cols, &sections, row_word, d);
    if d.error_count() > before {
        return None;
    }
    let origin = match &input {
        Rows::Text(_) => Origin::Text,
        Rows::Sheet(s) => Origin::Sheet(s.cells()),
        Rows::Features(_) => Origin::Features,
    };
    Some(Network {
        file: file.to_owned(),
        sections,
        note_columns: cols.notes.iter().map(|(n, _)| n.clone()).collect(),
        origin,
        road_column: cols.optional[6].is_some(),
        geometry_column: cols.optional[9].is_some(),
        chainage_columns: cols.optional[7].is_some() && cols.optional[8].is_some(),
    })
}

/// Sections of one road must not overlap (they may touch); where `length_km` is given beside
/// a chainage, a difference of more than 5 % is noted once, with a count.
fn check_chainage(
    file: &str,
    input: &Rows<'_>,
    cols: &Columns,
    sections: &[Section],
    row_word: &str,
    d: &mut Diagnostics,
) {
    let mut located: Vec<(&str, f64, f64, &Section)> = sections
        .iter()
        .filter_map(|s| {
            let (a, b) = s.chainage?;
            Some((s.road.as_deref()?, a, b, s))
        })
        .collect();
    located.sort_by(|x, y| {
        (x.0, x.1, x.2, x.3.line)
            .partial_cmp(&(y.0, y.1, y.2, y.3.line))
            .unwrap_or(std::cmp::Ordering::Equal)
    });
    // The section reaching furthest so far on this road.
    let mut reach: Option<(&str, f64, &Section)> = None;
    for &(road, a, b, s) in &located {
        match reach {
            Some((r, end, prev)) if r == road && a < end => {
                let (pa, pb) = prev.chainage.unwrap_or_default();
                d.error(
                    input
                        .place(file, s.line, cols.optional[7])
                        .with_subfield("from_km"),
                    format!(
                        "km {a}–{b} of road `{road}` overlaps section `{}` ({row_word} {}, km \
                         {pa}–{pb})",
                        prev.id.as_str(),
                        prev.line
                    ),
                    "sections of one road that do not overlap (they may touch)",
                );
                if b > end {
                    reach = Some((road, b, s));
                }
            }
            _ => reach = Some((road, b, s)),
        }
    }
    if cols.required[1] == NO_COLUMN {
        return;
    }
    let differs: Vec<&Section> = sections
        .iter()
        .filter(|s| {
            s.chainage.is_some_and(|(a, b)| {
                let c = b - a;
                (s.length_km - c).abs() > 0.05 * c + 0.0005
            })
        })
        .collect();
    if let Some(first) = differs.first() {
        let (a, b) = first.chainage.unwrap_or_default();
        d.note(
            input
                .place(file, first.line, Some(cols.required[1]))
                .with_subfield("length_km"),
            format!(
                "length_km {} differs from its chainage ({} km) by more than 5 %{}; the \
                 length_km given is used",
                first.length_km,
                ((b - a) * 1000.0).round() / 1000.0,
                match differs.len() {
                    1 => String::new(),
                    2 => ", and so does one more section".to_owned(),
                    n => format!(", and so do {} more sections", n - 1),
                }
            ),
        );
    }
}

/// Column positions.
struct Columns {
    required: [usize; 9],
    optional: [Option<usize>; 10],
    notes: Vec<(String, usize)>,
}

fn read_header(file: &str, input: &Rows<'_>, d: &mut Diagnostics) -> Option<Columns> {
    let headers = input.headers();
    let (word, words) = input.column_word();
    let mut pos: HashMap<&str, usize> = HashMap::new();
    let mut notes = Vec::new();
    let mut ok = true;
    let known: Vec<&str> = REQUIRED.iter().chain(OPTIONAL.iter()).copied().collect();
    for (i, h) in headers.iter().enumerate() {
        let place = input.header_place(file, Some(i));
        if h.is_empty() {
            d.error(place, "an empty column name", "a column name");
            ok = false;
        } else if pos.contains_key(h) || notes.iter().any(|(n, _)| n == h) {
            d.error(place, format!("the column `{h}` twice"), "each column once");
            ok = false;
        } else if h.starts_with("x_") {
            notes.push((h.to_owned(), i));
        } else if known.contains(&h) {
            pos.insert(h, i);
        } else {
            let e = d.error(
                place,
                format!("unknown {word} `{h}`"),
                format!("a documented {word}, or a name starting `x_` for your own notes"),
            );
            if let Some(m) = did_you_mean(h, &known) {
                e.hint = Some(format!("did you mean `{m}`?"));
            }
            ok = false;
        }
    }
    let mut required = [0usize; 9];
    let chainage = pos.contains_key("from_km") && pos.contains_key("to_km");
    for (k, name) in REQUIRED.iter().enumerate() {
        match pos.get(name) {
            Some(&i) => required[k] = i,
            None if *name == "length_km" && chainage => required[k] = NO_COLUMN,
            None => {
                d.error(
                    input.header_place(file, None),
                    format!("no `{name}` {word}"),
                    format!("the required {words} {}", REQUIRED.join(", ")),
                );
                ok = false;
            }
        }
    }
    let mut optional = [None; 10];
    for (k, name) in OPTIONAL.iter().enumerate() {
        optional[k] = pos.get(name).copied();
    }
    if pos.contains_key("from_km") != pos.contains_key("to_km") {
        let (has, lacks) = if pos.contains_key("from_km") {
            ("from_km", "to_km")
        } else {
            ("to_km", "from_km")
        };
        d.error(
            input.header_place(file, None),
            format!("a `{has}` {word} but no `{lacks}`"),
            format!("both chainage {words}, from_km and to_km, or neither"),
        );
        ok = false;
    }
    ok.then_some(Columns {
        required,
        optional,
        notes,
    })
}

/// One data row being converted; every failed field is recorded and marks the row bad.
struct Row<'a> {
    file: &'a str,
    input: &'a Rows<'a>,
    line: usize,
    record: &'a csv::StringRecord,
    cols: &'a Columns,
    d: &'a mut Diagnostics,
    regions: &'a mut crate::model::region::Interner,
    ok: bool,
}

impl<'a> Row<'a> {
    fn bad(&mut self, field: &str, found: String, expected: &str) {
        let column = REQUIRED
            .iter()
            .position(|c| *c == field)
            .map(|k| self.cols.required[k])
            .or_else(|| {
                let k = OPTIONAL.iter().position(|c| *c == field)?;
                self.cols.optional[k]
            });
        self.d.error(
            self.input
                .place(self.file, self.line, column)
                .with_subfield(field),
            found,
            expected.to_owned(),
        );
        self.ok = false;
    }

    fn raw(&self, k: usize) -> &'a str {
        let record: &'a csv::StringRecord = self.record;
        record.get(self.cols.required[k]).unwrap_or("")
    }

    fn opt_raw(&self, k: usize) -> Option<&'a str> {
        let record: &'a csv::StringRecord = self.record;
        self.cols.optional[k]
            .and_then(|i| record.get(i))
            .filter(|s| !s.is_empty())
    }

    /// A finite number in `lo..=hi` (checked as `lo < x` when `open_lo`).
    fn number(
        &mut self,
        field: &str,
        raw: &str,
        lo: f64,
        hi: f64,
        open_lo: bool,
        expected: &str,
    ) -> Option<f64> {
        if raw.is_empty() {
            self.bad(field, "an empty value".into(), expected);
            return None;
        }
        let Ok(x) = raw.parse::<f64>() else {
            let hint = if raw.contains(',') {
                " (use `.` as the decimal point)"
            } else {
                ""
            };
            self.bad(field, format!("found `{raw}`{hint}"), expected);
            return None;
        };
        if !x.is_finite() {
            self.bad(
                field,
                format!("found `{raw}` (NaN and infinity are not allowed)"),
                expected,
            );
            return None;
        }
        if x < lo || x > hi || (open_lo && x <= lo) {
            let note = if x < 0.0 && lo >= 0.0 {
                " (negative)"
            } else {
                ""
            };
            self.bad(field, format!("found {raw}{note}"), expected);
            return None;
        }
        Some(x)
    }

    /// A rate or share in `lo..=hi`: a number (`0.03`) or a percentage (`3%`, read as 0.03 to
    /// the bit).
    fn fraction(
        &mut self,
        field: &str,
        raw: &str,
        lo: f64,
        hi: f64,
        expected: &str,
    ) -> Option<f64> {
        if raw.trim_end().ends_with('%') {
            let Some(x) = crate::input::percent(raw) else {
                self.bad(field, format!("found `{raw}`"), expected);
                return None;
            };
            if x < lo || x > hi {
                self.bad(field, format!("found {raw}"), expected);
                return None;
            }
            return Some(x);
        }
        let x = self.number(field, raw, f64::MIN, f64::MAX, false, expected)?;
        if x < lo || x > hi {
            let hint = if x > 1.0 && x <= 100.0 {
                format!(
                    "found {raw} (a percentage? write {} or {raw}% for {raw} %)",
                    x / 100.0
                )
            } else {
                format!("found {raw}")
            };
            self.bad(field, hint, expected);
            return None;
        }
        Some(x)
    }

    /// The road and chainage columns: `(road, Some((from_km, to_km)))`.
    fn location(&mut self) -> (Option<String>, Option<(f64, f64)>) {
        let road = self.opt_raw(6).map(str::to_owned);
        let expected = "a chainage in km from 0 to 100000";
        let from = self
            .opt_raw(7)
            .map(|r| self.number("from_km", r, 0.0, MAX_CHAINAGE_KM, false, expected));
        let to = self
            .opt_raw(8)
            .map(|r| self.number("to_km", r, 0.0, MAX_CHAINAGE_KM, false, expected));
        let chainage = match (from, to) {
            (None, None) => None,
            (Some(Some(a)), Some(Some(b))) if b > a => Some((a, b)),
            (Some(Some(a)), Some(Some(b))) => {
                let what = if b < a { "before" } else { "equal to" };
                self.bad(
                    "to_km",
                    format!("to_km {b} {what} from_km {a}"),
                    "a chainage past from_km (write each section in the road's direction)",
                );
                None
            }
            (Some(_), None) => {
                self.bad(
                    "to_km",
                    "an empty value".into(),
                    "to_km, as from_km is given",
                );
                None
            }
            (None, Some(_)) => {
                self.bad(
                    "from_km",
                    "an empty value".into(),
                    "from_km, as to_km is given",
                );
                None
            }
            _ => None, // a bad number, reported
        };
        if chainage.is_some() && road.is_none() {
            self.bad(
                "road",
                "an empty value".into(),
                "the road the chainage runs along",
            );
        }
        (road, chainage)
    }

    fn section(&mut self) -> Option<Section> {
        let id = self.raw(0).to_owned();
        if id.is_empty() {
            self.bad(
                "section_id",
                "an empty value".into(),
                "an identifier for the section",
            );
        }
        let (road, chainage) = self.location();
        let length_expected = "a length in km, more than 0 and at most 1000";
        let length_km = match chainage {
            // Derived from the chainage, to the metre.
            Some((a, b)) if self.raw(1).is_empty() => {
                let l = ((b - a) * 1000.0).round() / 1000.0;
                if l > 0.0 && l <= 1000.0 {
                    Some(l)
                } else {
                    self.bad(
                        "to_km",
                        format!("a chainage of {l} km (to_km − from_km)"),
                        length_expected,
                    );
                    None
                }
            }
            _ => self.number("length_km", self.raw(1), 0.0, 1000.0, true, length_expected),
        };
        let lanes_raw = self.raw(2);
        let lanes = match lanes_raw.parse::<u8>() {
            Ok(n) if (1..=12).contains(&n) => Some(n),
            _ => {
                self.bad(
                    "lanes",
                    format!("found `{lanes_raw}`"),
                    "a whole number of lanes from 1 to 12 (both directions)",
                );
                None
            }
        };
        let cw_raw = self.raw(3);
        let carriageway = Carriageway::parse(cw_raw);
        if carriageway.is_none() {
            self.bad(
                "carriageway",
                format!("found `{cw_raw}`"),
                "`single` or `divided`",
            );
        }
        let iri = self.number(
            "iri",
            self.raw(4),
            0.0,
            25.0,
            true,
            "roughness (IRI) in m/km, more than 0 and at most 25",
        );
        let sn = self.number(
            "structural_number",
            self.raw(5),
            0.0,
            15.0,
            true,
            "an AASHTO structural number, more than 0 and at most 15",
        );
        let aadt = self.number(
            "aadt",
            self.raw(6),
            0.0,
            500_000.0,
            false,
            "annual average daily traffic, vehicles/day, from 0 to 500000",
        );
        let heavy = self.fraction(
            "heavy_share",
            self.raw(7),
            0.0,
            1.0,
            "a share from 0 to 1 (0.12 or 12% for 12 %)",
        );
        let growth = self.fraction(
            "growth_rate",
            self.raw(8),
            -0.5,
            0.5,
            "a yearly growth rate as a fraction from -0.5 to 0.5 (0.03 or 3% for 3 %)",
        );

        let region = self.opt_raw(0).map(|r| self.regions.get(r));
        let lane_width_m = match self.opt_raw(1) {
            Some(r) => self.number(
                "lane_width_m",
                r,
                2.0,
                6.0,
                false,
                "a lane width in metres from 2 to 6",
            ),
            None => None,
        };
        let surface = match self.opt_raw(2) {
            Some(s) if super::tomldoc::is_identifier(s) => Some(s.to_owned()),
            Some(s) => {
                self.bad(
                    "surface",
                    format!("found `{s}`"),
                    "a surface (pavement family) name of letters, digits, `_` and `-`",
                );
                None
            }
            None => None,
        };
        let subgrade = match self.opt_raw(3) {
            Some(r) => self.number(
                "subgrade_mr_mpa",
                r,
                5.0,
                1000.0,
                false,
                "a subgrade resilient modulus in MPa from 5 to 1000",
            ),
            None => None,
        };
        let last_works_year = match self.opt_raw(4) {
            Some(r) => match r.parse::<i32>() {
                Ok(y) if (1900..=2200).contains(&y) => Some(y),
                _ => {
                    self.bad(
                        "last_works_year",
                        format!("found `{r}`"),
                        "a year from 1900 to 2200",
                    );
                    None
                }
            },
            None => None,
        };
        let speed = match self.opt_raw(5) {
            Some(r) => self.number(
                "speed_kmh",
                r,
                5.0,
                200.0,
                false,
                "a speed in km/h from 5 to 200",
            ),
            None => None,
        };
        let geometry = match self.opt_raw(9) {
            Some(w) => match crate::model::network::parse_wkt_line(w) {
                Ok(g) => Some(g),
                Err(e) => {
                    let shown: String = w.chars().take(60).collect();
                    self.bad(
                        "geometry",
                        format!("`{shown}`: {e}"),
                        "the centre line as well-known text: LINESTRING (x y, x y, …) or \
                         MULTILINESTRING ((x y, …), …)",
                    );
                    None
                }
            },
            None => None,
        };
        let notes = self
            .cols
            .notes
            .iter()
            .map(|(_, i)| self.record.get(*i).unwrap_or("").to_owned())
            .collect();
        if !self.ok {
            return None;
        }
        Some(Section {
            id: SectionId(id),
            line: self.line,
            length_km: length_km?,
            lanes: lanes?,
            carriageway: carriageway?,
            iri: iri?,
            structural_number: sn?,
            aadt: aadt?,
            heavy_share: heavy?,
            growth_rate: growth?,
            region,
            lane_width_m,
            surface,
            subgrade_mr_mpa: subgrade,
            last_works_year: last_works_year.map(Year),
            speed_kmh: speed,
            road,
            chainage,
            geometry,
            notes,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const HEAD: &str =
        "section_id,length_km,lanes,carriageway,iri,structural_number,aadt,heavy_share,growth_rate";

    fn read(text: &str) -> (Option<Network>, Diagnostics) {
        let mut d = Diagnostics::new();
        let n = parse("n.csv", text, &mut d);
        (n, d)
    }

    #[test]
    fn reads_required_optional_and_note_columns() {
        let text = format!("{HEAD},region,x_owner\nA1,2.5,2,single,3.1,3.2,4200,0.12,0.03,north,county\nA2,1,4,divided,2.0,5,15000,0.2,0.01,,\n");
        let (n, d) = read(&text);
        let n = n.expect("reads");
        assert!(d.is_empty(), "{d}");
        assert_eq!(n.sections.len(), 2);
        assert_eq!(n.sections[0].region.as_deref(), Some("north"));
        assert_eq!(n.sections[1].region, None);
        assert_eq!(n.note_columns, vec!["x_owner"]);
        assert_eq!(n.sections[0].notes, vec!["county"]);
        assert_eq!(n.sections[1].line, 3);
        assert!((n.length_km() - 3.5).abs() < 1e-12);
    }

    #[test]
    fn every_bad_field_is_reported_with_line_and_column() {
        let text = format!(
            "{HEAD}\nA1,-2,0,single,NaN,3,100,1.2,3\nA1,1,2,dual,2,3,inf,0.1,0.02\nA1,1,2,single,2,3,100,0.1,0.02\n"
        );
        let (n, d) = read(&text);
        assert!(n.is_none());
        let text = d.to_string();
        for want in [
            "n.csv:2: length_km: found -2 (negative)",
            "n.csv:2: lanes",
            "n.csv:2: iri: found `NaN`",
            "n.csv:2: heavy_share",
            "n.csv:2: growth_rate: found 3 (a percentage?",
            "n.csv:3: carriageway: found `dual`",
            "n.csv:3: aadt: found `inf`",
        ] {
            assert!(text.contains(want), "missing `{want}` in\n{text}");
        }
        // Rows 3 and 4 repeat the id of row 2: a bad row still claims its id.
        assert!(
            text.contains("n.csv:4: section_id: duplicate section_id `A1` (first on line 2)"),
            "{text}"
        );
        assert_eq!(d.error_count(), 7 + 2, "{text}");
    }

    #[test]
    fn a_bad_optional_field_does_not_hide_the_next() {
        let text = format!("{HEAD},lane_width_m,speed_kmh\nA1,1,2,single,2,3,100,0.1,0.02,9,900\n");
        let (_, d) = read(&text);
        let t = d.to_string();
        assert!(t.contains("lane_width_m") && t.contains("speed_kmh"), "{t}");
    }

    #[test]
    fn duplicates_name_the_first_line() {
        let text =
            format!("{HEAD}\nA1,1,2,single,2,3,100,0.1,0.02\nA1,1,2,single,2,3,100,0.1,0.02\n");
        let (_, d) = read(&text);
        assert!(
            d.to_string()
                .contains("n.csv:3: section_id: duplicate section_id `A1` (first on line 2)"),
            "{d}"
        );
    }

    #[test]
    fn header_problems() {
        let (_, d) = read("section_id,length_km,lanez,carriageway,iri,structural_number,aadt,heavy_share,growth_rate,region,region\n");
        let t = d.to_string();
        assert!(t.contains("unknown column `lanez`"), "{t}");
        assert!(t.contains("did you mean `lanes`?"), "{t}");
        assert!(t.contains("no `lanes` column"), "{t}");
        assert!(t.contains("the column `region` twice"), "{t}");
    }

    #[test]
    fn empty_and_header_only() {
        let (_, d) = read("");
        assert!(d.to_string().contains("the file is empty"));
        let (_, d) = read(&format!("{HEAD}\n"));
        assert!(d.to_string().contains("a header but no rows"));
    }

    #[test]
    fn quoted_fields_are_accepted_with_a_note() {
        let (n, d) = read(&format!(
            "{HEAD}\n\"A 1\",\"2.5\",2,single,3,3,100,0.1,0.02\n"
        ));
        assert_eq!(n.unwrap().sections[0].id.as_str(), "A 1");
        assert!(!d.has_errors());
        assert!(d.to_string().contains("quoted fields"));
    }

    #[test]
    fn chainage_gives_the_length_and_overlaps_are_located() {
        let head = "section_id,lanes,carriageway,iri,structural_number,aadt,heavy_share,growth_rate,road,from_km,to_km";
        let row = |id: &str, road: &str, a: &str, b: &str| {
            format!("{id},2,single,3,3,100,0.1,0.02,{road},{a},{b}\n")
        };
        // No length_km column: lengths from the chainage, to the metre (12.3 − 10.1 is
        // 2.2000000000000011 in floating point).
        let text = format!(
            "{head}\n{}{}{}",
            row("A", "R1", "10.1", "12.3"),
            row("B", "R1", "12.3", "15"),
            row("C", "R2", "0", "4.25")
        );
        let (n, d) = read(&text);
        let n = n.unwrap_or_else(|| panic!("{d}"));
        let lengths: Vec<f64> = n.sections.iter().map(|s| s.length_km).collect();
        assert_eq!(lengths, [2.2, 2.7, 4.25]);
        assert_eq!(n.sections[0].road.as_deref(), Some("R1"));
        assert_eq!(n.sections[1].chainage, Some((12.3, 15.0)));
        assert!(n.road_column && n.chainage_columns);
        // Overlapping, reversed, one-sided and road-less chainages: each named where it is.
        let text = format!(
            "{head}\n{}{}{}{}{}{}",
            row("A", "R1", "10", "12"),
            row("B", "R1", "11.5", "13"),
            row("C", "R1", "14", "13"),
            row("D", "R2", "3", ""),
            row("E", "", "1", "2"),
            row("F", "R1", "13", "13")
        );
        let (n, d) = read(&text);
        assert!(n.is_none());
        let t = d.to_string();
        for want in [
            "n.csv:3: from_km: km 11.5–13 of road `R1` overlaps section `A` (line 2, km 10–12)",
            "n.csv:4: to_km: to_km 13 before from_km 14",
            "n.csv:5: to_km: an empty value; expected to_km, as from_km is given",
            "n.csv:6: road: an empty value; expected the road the chainage runs along",
            "n.csv:7: to_km: to_km 13 equal to from_km 13",
        ] {
            assert!(t.contains(want), "missing `{want}` in\n{t}");
        }
        // Touching sections are fine; a length far from the chainage is noted once, counted.
        let text = format!(
            "{HEAD},road,from_km,to_km\nA,2,2,single,3,3,100,0.1,0.02,R,0,2\nB,1.5,2,single,3,3,100,0.1,0.02,R,2,4\nC,9,2,single,3,3,100,0.1,0.02,R,4,5\n"
        );
        let (n, d) = read(&text);
        assert!((n.expect("reads").sections[1].length_km - 1.5).abs() < 1e-12);
        assert!(
            d.to_string().contains(
                "n.csv:3: length_km: length_km 1.5 differs from its chainage (2 km) by more than 5 %, and so does one more section"
            ),
            "{d}"
        );
        // One chainage column alone is an error of the header.
        let (_, d) = read(&format!(
            "{HEAD},from_km\nA,2,2,single,3,3,100,0.1,0.02,1\n"
        ));
        assert!(
            d.to_string().contains("a `from_km` column but no `to_km`"),
            "{d}"
        );
    }

    #[test]
    fn a_geojson_header_problem_is_placed_at_a_feature_or_the_features() {
        // Feature 2 alone has a misspelt property; no feature has `iri`.
        let props = r#""section_id": "A", "length_km": 1, "lanes": 2, "carriageway": "single",
            "structural_number": 4, "aadt": 5000, "heavy_share": 0.1, "growth_rate": 0.02"#;
        let doc = format!(
            r#"{{"type": "FeatureCollection", "features": [
                {{"type": "Feature", "geometry": null, "properties": {{{props}}}}},
                {{"type": "Feature", "geometry": null, "properties": {{{props}, "surfce": "asphalt"}}}}
            ]}}"#
        );
        let mut d = Diagnostics::new();
        assert!(parse_features("n.geojson", doc.as_bytes(), &mut d).is_none());
        let t = d.to_string();
        for want in [
            "n.geojson: features[2].properties.surfce: unknown property `surfce`",
            "n.geojson: features: no `iri` property; expected the required properties",
        ] {
            assert!(t.contains(want), "missing `{want}` in\n{t}");
        }
        assert_eq!(d.error_count(), 2, "{t}");
    }

    #[test]
    fn wrong_field_count() {
        let (_, d) = read(&format!("{HEAD}\nA1,1,2\n"));
        assert!(
            d.to_string()
                .contains("n.csv:2: found 3 fields; expected 9 fields"),
            "{d}"
        );
    }
}
