//! The report's maps: the network's centre lines (from `section_plan.geojson`, so the report
//! drawn from a directory is the report drawn in memory) coloured by the year of each section's
//! first works, and by the treatment of those works, as inline SVG — no tiles, no network.
//!
//! The colours are this tool's own: for the years, a sequence from dark blue-violet to pale
//! yellow whose lightness rises step by step (so it reads in grey and for every common colour
//! vision deficiency), earlier works also drawn wider; for treatments, colours far apart in hue
//! and lightness, each with its own dash pattern. Sections with no works are thin grey dashes.
//! A scale bar (a round length near a fifth of the width) and a north arrow (the map's top is
//! north: longitude and latitude are drawn equirectangular at the network's middle latitude,
//! a projected system's northing points up) sit in the corners.

use super::chart::esc;
use crate::schema::plan::Work;
use std::collections::BTreeMap;
use std::fmt::Write as _;

/// One section's centre line, as the GeoJSON file holds it.
#[derive(Debug, Clone, PartialEq)]
pub struct MapLine {
    pub section_id: String,
    pub lines: Vec<Vec<[f64; 2]>>,
}

/// The network's lines and what their coordinates are.
#[derive(Debug, Clone, PartialEq)]
pub struct MapData {
    pub lonlat: bool,
    pub sections: Vec<MapLine>,
}

impl MapData {
    /// `section_plan.geojson`'s text read back (`None` if it is not a collection of ours).
    pub fn parse(text: &str) -> Option<MapData> {
        let v: serde_json::Value = serde_json::from_str(text).ok()?;
        let lonlat = v.get("coordinate_system")?.as_str()? == "lonlat";
        let mut sections = Vec::new();
        for f in v.get("features")?.as_array()? {
            let id = f.get("properties")?.get("section_id")?.as_str()?.to_owned();
            let g = f.get("geometry")?;
            if g.is_null() {
                continue;
            }
            let point = |p: &serde_json::Value| -> Option<[f64; 2]> {
                Some([p.get(0)?.as_f64()?, p.get(1)?.as_f64()?])
            };
            let line = |l: &serde_json::Value| -> Option<Vec<[f64; 2]>> {
                l.as_array()?.iter().map(point).collect()
            };
            let coords = g.get("coordinates")?;
            let lines = match g.get("type")?.as_str()? {
                "LineString" => vec![line(coords)?],
                "MultiLineString" => coords
                    .as_array()?
                    .iter()
                    .map(line)
                    .collect::<Option<Vec<_>>>()?,
                _ => return None,
            };
            sections.push(MapLine {
                section_id: id,
                lines,
            });
        }
        Some(MapData { lonlat, sections })
    }
}

/// Year bands' colours, first works earliest first: lightness rises band by band.
pub const YEAR_COLOURS: [&str; 6] = [
    "#2b1a5e", "#36468f", "#2a7594", "#2f9a72", "#7fb636", "#d2bd1c",
];
/// Year bands' line widths: earlier works wider.
const YEAR_WIDTHS: [f64; 6] = [5.5, 4.8, 4.2, 3.7, 3.3, 3.0];
/// Treatments' colours and dash patterns, in the order treatments first appear.
const TREATMENT_STYLES: [(&str, &str); 8] = [
    ("#1f4e9c", ""),
    ("#d9731a", "10 4"),
    ("#2d9f6f", "4 3"),
    ("#b4318a", "12 3 3 3"),
    ("#6b6b00", "2 3"),
    ("#58a6d9", "8 3 2 3 2 3"),
    ("#8c3b1f", "14 5"),
    ("#111111", "1 2"),
];
const NONE_COLOUR: &str = "#9a9a9a";

const WIDTH: f64 = 700.0;
const PAD: f64 = 16.0;

/// The year bands over `first..=last`: up to six bands of whole years.
pub fn year_bands(first: i32, last: i32) -> Vec<(i32, i32)> {
    let span = (last - first + 1).max(1);
    let per = (span + 5) / 6;
    let mut out = Vec::new();
    let mut y = first;
    while y <= last {
        out.push((y, (y + per - 1).min(last)));
        y += per;
    }
    out
}

/// The band index of `year`.
pub fn band_of(bands: &[(i32, i32)], year: i32) -> usize {
    bands
        .iter()
        .position(|(a, b)| (*a..=*b).contains(&year))
        .unwrap_or(0)
}

/// The map section: two maps (first works year, treatment), or nothing without lines.
pub fn section(map: &MapData, works: &[Work]) -> String {
    if map.sections.is_empty() {
        return String::new();
    }
    // Each section's first works: its year and treatment(s).
    let mut first: BTreeMap<&str, (i32, Vec<&str>)> = BTreeMap::new();
    for w in works {
        let e = first
            .entry(w.section_id.as_str())
            .or_insert((w.year.0, Vec::new()));
        if w.year.0 < e.0 {
            *e = (w.year.0, Vec::new());
        }
        if w.year.0 == e.0 && !e.1.contains(&w.treatment.as_str()) {
            e.1.push(w.treatment.as_str());
        }
    }
    let frame = Frame::new(map);
    let mut s = String::from(r#"<section id="map"><h2>Map of the programme</h2>"#);
    s.push_str("<p>Each section's centre line, coloured by the year of its first works under the plan (earlier works also drawn wider), then by the treatment of those works. Sections with no works are thin grey dashes.</p>");

    // By year.
    let years: Vec<i32> = first.values().map(|v| v.0).collect();
    let (lo, hi) = (
        years.iter().copied().min().unwrap_or(0),
        years.iter().copied().max().unwrap_or(0),
    );
    let bands = if years.is_empty() {
        Vec::new()
    } else {
        year_bands(lo, hi)
    };
    let mut legend: Vec<(String, &str, f64, &str)> = bands
        .iter()
        .enumerate()
        .map(|(k, (a, b))| {
            let label = if a == b {
                format!("{a}")
            } else {
                format!("{a}–{b}")
            };
            (label, YEAR_COLOURS[k], YEAR_WIDTHS[k], "")
        })
        .collect();
    legend.push(("no works".into(), NONE_COLOUR, 1.2, "4 3"));
    let paths = |style: &dyn Fn(&str) -> (String, &'static str, f64, &'static str)| {
        let mut p = String::new();
        // Sections without works first, so works are drawn over them.
        let mut order: Vec<&MapLine> = map.sections.iter().collect();
        order.sort_by_key(|m| first.contains_key(m.section_id.as_str()));
        for m in order {
            let (data, colour, width, dash) = style(&m.section_id);
            let dash = if dash.is_empty() {
                String::new()
            } else {
                format!(r#" stroke-dasharray="{dash}""#)
            };
            let _ = write!(
                p,
                r#"<path class="sec" data-section="{}" {data} d="{}" stroke="{colour}" stroke-width="{width}"{dash}><title>{}</title></path>"#,
                esc(&m.section_id),
                frame.path(&m.lines),
                esc(&m.section_id)
            );
        }
        p
    };
    let by_year = paths(&|id| match first.get(id) {
        Some((y, _)) => {
            let k = band_of(&bands, *y);
            (
                format!(r#"data-first-year="{y}""#),
                YEAR_COLOURS[k],
                YEAR_WIDTHS[k],
                "",
            )
        }
        None => ("data-first-year=\"\"".into(), NONE_COLOUR, 1.2, "4 3"),
    });
    s.push_str(&frame.svg("map-years", "Year of first works", &by_year, &legend));

    // By treatment.
    let mut treatments: Vec<&str> = Vec::new();
    for (_, names) in first.values() {
        for n in names {
            if !treatments.contains(n) {
                treatments.push(n);
            }
        }
    }
    treatments.sort_unstable();
    let style_of = |t: &str| {
        let k = treatments.iter().position(|x| *x == t).unwrap_or(0);
        TREATMENT_STYLES[k % TREATMENT_STYLES.len()]
    };
    let mut legend: Vec<(String, &str, f64, &str)> = treatments
        .iter()
        .map(|t| {
            let (c, d) = style_of(t);
            (t.to_string(), c, 3.0, d)
        })
        .collect();
    legend.push(("no works".into(), NONE_COLOUR, 1.2, "4 3"));
    let by_treatment = paths(&|id| match first.get(id) {
        Some((_, names)) => {
            let (c, d) = style_of(names[0]);
            (
                format!(r#"data-treatment="{}""#, esc(&names.join("+"))),
                c,
                3.0,
                d,
            )
        }
        None => ("data-treatment=\"\"".into(), NONE_COLOUR, 1.2, "4 3"),
    });
    s.push_str(&frame.svg(
        "map-treatments",
        "Treatment of the first works",
        &by_treatment,
        &legend,
    ));
    s.push_str("</section>");
    s
}

/// The drawing frame: from map units to SVG pixels, north up.
struct Frame {
    x0: f64,
    y1: f64,
    /// Pixels per map unit (x already scaled for longitude).
    scale: f64,
    /// Longitude's shrink at the middle latitude (1 for a projected system).
    kx: f64,
    /// Metres per map unit of y.
    metres: f64,
    height: f64,
}

impl Frame {
    fn new(map: &MapData) -> Frame {
        let pts = map.sections.iter().flat_map(|m| m.lines.iter().flatten());
        let (mut x0, mut x1, mut y0, mut y1) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
        for [x, y] in pts {
            x0 = x0.min(*x);
            x1 = x1.max(*x);
            y0 = y0.min(*y);
            y1 = y1.max(*y);
        }
        // Longitude and latitude: an equirectangular drawing at the middle latitude, and the
        // mean length of a degree of latitude (about 111.2 km on a sphere of radius 6,371 km).
        let (kx, metres) = if map.lonlat {
            let mid = ((y0 + y1) / 2.0).to_radians();
            (
                mid.cos().max(0.01),
                6_371_000.0 * std::f64::consts::PI / 180.0,
            )
        } else {
            (1.0, 1.0)
        };
        let w = ((x1 - x0) * kx).max(1e-9);
        let h = (y1 - y0).max(1e-9);
        let scale = (WIDTH - 2.0 * PAD) / w.max(h * 0.8);
        let height = (h * scale + 2.0 * PAD + 40.0).max(200.0);
        Frame {
            x0,
            y1,
            scale,
            kx,
            metres,
            height,
        }
    }

    fn px(&self, [x, y]: [f64; 2]) -> (f64, f64) {
        (
            PAD + (x - self.x0) * self.kx * self.scale,
            PAD + (self.y1 - y) * self.scale,
        )
    }

    fn path(&self, lines: &[Vec<[f64; 2]>]) -> String {
        let mut d = String::new();
        for line in lines {
            for (k, p) in line.iter().enumerate() {
                let (x, y) = self.px(*p);
                let _ = write!(d, "{}{x:.1} {y:.1}", if k == 0 { "M" } else { " L" });
            }
        }
        d
    }

    /// The scale bar: a round length (1, 2 or 5 × 10ⁿ m) near a fifth of the width.
    fn scale_bar(&self) -> (f64, String) {
        let metres_per_px = self.metres / self.scale;
        let target = metres_per_px * WIDTH / 5.0;
        let p = 10f64.powf(target.log10().floor());
        let len = [1.0, 2.0, 5.0, 10.0]
            .into_iter()
            .map(|k| k * p)
            .rfind(|l| *l <= target * 1.2)
            .unwrap_or(p);
        let label = if len >= 1000.0 {
            format!("{} km", len / 1000.0)
        } else {
            format!("{len} m")
        };
        (len / metres_per_px, label)
    }

    fn svg(
        &self,
        class: &str,
        title: &str,
        paths: &str,
        legend: &[(String, &str, f64, &str)],
    ) -> String {
        let rows = legend.len().div_ceil(4) as f64;
        let h = self.height + 18.0 * rows + 10.0;
        let mut s = format!(
            r##"<figure><svg class="map {class}" viewBox="0 0 {WIDTH} {h:.0}" width="{WIDTH}" height="{h:.0}" role="img" aria-label="{}"><rect x="0" y="0" width="{WIDTH}" height="{h:.0}" fill="#fbfbf8"/><g fill="none" stroke-linecap="round" stroke-linejoin="round">{paths}</g>"##,
            esc(title)
        );
        // North arrow, top right.
        let (nx, ny) = (WIDTH - 28.0, 18.0);
        let _ = write!(
            s,
            r##"<g class="north"><path d="M{nx} {ny} l8 22 l-8 -6 l-8 6 z" fill="#1a1a1a"/><text x="{nx}" y="{:.0}" text-anchor="middle" class="legend">N</text></g>"##,
            ny + 36.0
        );
        // Scale bar, bottom left of the drawing.
        let (bar, label) = self.scale_bar();
        let by = self.height - 18.0;
        let _ = write!(
            s,
            r##"<g class="scale"><path d="M{PAD} {by:.1} v-5 h{bar:.1} v5" fill="none" stroke="#1a1a1a" stroke-width="1.5"/><text x="{:.1}" y="{:.1}" class="legend">{}</text></g>"##,
            PAD + bar + 6.0,
            by,
            esc(&label)
        );
        // Legend below.
        for (k, (label, colour, width, dash)) in legend.iter().enumerate() {
            let x = PAD + 170.0 * (k % 4) as f64;
            let y = self.height + 4.0 + 18.0 * (k / 4) as f64;
            let dash = if dash.is_empty() {
                String::new()
            } else {
                format!(r#" stroke-dasharray="{dash}""#)
            };
            let _ = write!(
                s,
                r#"<g class="key"><path d="M{x:.1} {y:.1} h34" stroke="{colour}" stroke-width="{width}"{dash}/><text x="{:.1}" y="{:.1}" class="legend">{}</text></g>"#,
                x + 40.0,
                y + 4.0,
                esc(label)
            );
        }
        let _ = write!(
            s,
            r#"<text x="{PAD}" y="{:.0}" class="chart-title">{}</text></svg></figure>"#,
            h - 4.0,
            esc(title)
        );
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bands_cover_the_years_in_at_most_six() {
        for (a, b) in [(2027, 2027), (2027, 2032), (2027, 2056), (2030, 2041)] {
            let bands = year_bands(a, b);
            assert!(bands.len() <= 6 && !bands.is_empty());
            assert_eq!(bands[0].0, a);
            assert_eq!(bands.last().unwrap().1, b);
            for w in bands.windows(2) {
                assert_eq!(w[0].1 + 1, w[1].0, "contiguous");
            }
            for y in a..=b {
                let k = band_of(&bands, y);
                assert!((bands[k].0..=bands[k].1).contains(&y));
            }
        }
    }

    #[test]
    fn year_colours_grow_lighter_band_by_band() {
        // Relative luminance (WCAG 2 formula) must rise strictly, so the bands keep their
        // order in grey and without one of the three cone types.
        let lum = |hex: &str| {
            let c = |k: usize| {
                let v =
                    f64::from(u8::from_str_radix(&hex[1 + 2 * k..3 + 2 * k], 16).unwrap()) / 255.0;
                if v <= 0.04045 {
                    v / 12.92
                } else {
                    ((v + 0.055) / 1.055).powf(2.4)
                }
            };
            0.2126 * c(0) + 0.7152 * c(1) + 0.0722 * c(2)
        };
        let l: Vec<f64> = YEAR_COLOURS.iter().map(|h| lum(h)).collect();
        for w in l.windows(2) {
            assert!(w[1] > w[0] * 1.3, "{l:?}");
        }
    }

    #[test]
    fn a_scale_bar_is_a_round_length() {
        let map = MapData {
            lonlat: false,
            sections: vec![MapLine {
                section_id: "A".into(),
                lines: vec![vec![[0.0, 0.0], [10_000.0, 3_000.0]]],
            }],
        };
        let f = Frame::new(&map);
        let (px, label) = f.scale_bar();
        assert_eq!(label, "2 km");
        assert!((px - 2000.0 * f.scale).abs() < 1e-9);
    }
}
