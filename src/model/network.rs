//! The road network as the tool holds it: sections with their attributes, read and checked by
//! [`crate::input::network`].

use crate::model::{Region, SectionId, Year};

/// Single carriageway (two-way, undivided) or divided (dual carriageway).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Carriageway {
    Single,
    Divided,
}

impl Carriageway {
    pub fn name(self) -> &'static str {
        match self {
            Carriageway::Single => "single",
            Carriageway::Divided => "divided",
        }
    }

    /// `single` or `divided`, in any case.
    pub fn parse(s: &str) -> Option<Carriageway> {
        [Carriageway::Single, Carriageway::Divided]
            .into_iter()
            .find(|c| c.name().eq_ignore_ascii_case(s))
    }
}

/// One road section.
#[derive(Debug, Clone, PartialEq)]
pub struct Section {
    pub id: SectionId,
    /// Line of the network file it was read from (its row, for a workbook's sheet).
    pub line: usize,
    pub length_km: f64,
    pub lanes: u8,
    pub carriageway: Carriageway,
    /// Roughness, m/km.
    pub iri: f64,
    /// AASHTO structural number of the pavement.
    pub structural_number: f64,
    /// Annual average daily traffic in the base year, vehicles/day (both directions).
    pub aadt: f64,
    /// Share of heavy vehicles in the AADT, 0–1.
    pub heavy_share: f64,
    /// Yearly compound traffic growth, as a fraction.
    pub growth_rate: f64,
    pub region: Option<Region>,
    pub lane_width_m: Option<f64>,
    pub surface: Option<String>,
    pub subgrade_mr_mpa: Option<f64>,
    pub last_works_year: Option<Year>,
    pub speed_kmh: Option<f64>,
    /// The road the section lies on.
    pub road: Option<String>,
    /// Its chainage along the road, km: (from, to), from < to.
    pub chainage: Option<(f64, f64)>,
    /// Its centre line: one or more lines of (x, y) points (longitude and latitude, or a
    /// projected system's easting and northing, as the scenario says).
    pub geometry: Option<Vec<Vec<[f64; 2]>>>,
    /// The `x_` columns' values, in the order of [`Network::note_columns`].
    pub notes: Vec<String>,
}

/// The resolved network.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Network {
    pub file: String,
    pub sections: Vec<Section>,
    /// Names of the user's `x_` columns.
    pub note_columns: Vec<String>,
    /// What the network was read from, for the places of later findings.
    pub origin: Origin,
    /// The network has a `road` column.
    pub road_column: bool,
    /// The network has the chainage columns `from_km` and `to_km`.
    pub chainage_columns: bool,
    /// The network has a `geometry` column.
    pub geometry_column: bool,
}

/// What a network's coordinates are.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Coordinates {
    /// Longitude and latitude in degrees (WGS 84, as GeoJSON's RFC 7946 has them).
    #[default]
    LonLat,
    /// A projected system's easting and northing, in metres.
    Projected,
}

impl Coordinates {
    pub fn name(self) -> &'static str {
        match self {
            Coordinates::LonLat => "lonlat",
            Coordinates::Projected => "projected",
        }
    }

    /// `lonlat` or `projected`, in any case.
    pub fn parse(s: &str) -> Option<Coordinates> {
        [Coordinates::LonLat, Coordinates::Projected]
            .into_iter()
            .find(|c| c.name().eq_ignore_ascii_case(s))
    }
}

/// A line geometry from its well-known text (ISO 19125 / OGC Simple Features): `LINESTRING (x
/// y, x y, …)` or `MULTILINESTRING ((x y, …), (x y, …))`, keywords in any case; a third
/// coordinate (`LINESTRING Z`) is dropped. Each line needs two points or more, every number
/// finite. The error says what was wrong.
///
/// ```
/// use pavestrat::model::network::parse_wkt_line;
/// assert_eq!(parse_wkt_line("LINESTRING (0 0, 3 4)"), Ok(vec![vec![[0.0, 0.0], [3.0, 4.0]]]));
/// assert_eq!(
///     parse_wkt_line("multilinestring z ((0 0 9, 1 1 9), (2 2 9, 3 3 9))").map(|l| l.len()),
///     Ok(2)
/// );
/// assert!(parse_wkt_line("POINT (1 2)").is_err());
/// assert!(parse_wkt_line("LINESTRING (1 2)").is_err());
/// assert!(parse_wkt_line("LINESTRING (1 2, x 3)").is_err());
/// assert!(parse_wkt_line("LINESTRING Zé(1 2, 3 4)").is_err());
/// ```
pub fn parse_wkt_line(text: &str) -> Result<Vec<Vec<[f64; 2]>>, String> {
    let t = text.trim();
    let upper = t.to_ascii_uppercase();
    let (multi, rest) = if let Some(r) = upper.strip_prefix("MULTILINESTRING") {
        (true, &t[t.len() - r.len()..])
    } else if let Some(r) = upper.strip_prefix("LINESTRING") {
        (false, &t[t.len() - r.len()..])
    } else {
        return Err("not a LINESTRING or MULTILINESTRING".into());
    };
    let mut rest = rest.trim_start();
    for dim in ["ZM", "Z", "M"] {
        if let Some(after) = rest
            .get(..dim.len())
            .filter(|h| h.eq_ignore_ascii_case(dim))
            .and_then(|_| rest.get(dim.len()..))
        {
            rest = after.trim_start();
            break;
        }
    }
    let body = rest
        .strip_prefix('(')
        .and_then(|r| r.trim_end().strip_suffix(')'))
        .ok_or("no parenthesised coordinates")?;
    let parts: Vec<&str> = if multi {
        let mut v = Vec::new();
        for p in body.split(')') {
            let p = p.trim().trim_start_matches(',').trim();
            if p.is_empty() {
                continue;
            }
            v.push(
                p.strip_prefix('(')
                    .ok_or("a line of a MULTILINESTRING without `(`")?,
            );
        }
        v
    } else {
        vec![body]
    };
    let mut lines = Vec::with_capacity(parts.len());
    for part in parts {
        let mut line = Vec::new();
        for point in part.split(',') {
            let mut xs = point.split_whitespace().map(str::parse::<f64>);
            match (xs.next(), xs.next()) {
                (Some(Ok(x)), Some(Ok(y))) if x.is_finite() && y.is_finite() => line.push([x, y]),
                _ => return Err(format!("the point `{}` is not two numbers", point.trim())),
            }
            if xs.next().is_some_and(|z| z.is_err()) {
                return Err(format!("the point `{}` is not two numbers", point.trim()));
            }
        }
        if line.len() < 2 {
            return Err("a line of fewer than two points".into());
        }
        lines.push(line);
    }
    if lines.is_empty() {
        return Err("no lines".into());
    }
    Ok(lines)
}

/// What a network was read from.
#[derive(Debug, Clone, PartialEq, Default)]
pub enum Origin {
    /// CSV text: a section's place is its line.
    #[default]
    Text,
    /// A workbook's sheet: a section's field is a cell.
    Sheet(Cells),
    /// A GeoJSON FeatureCollection: a section's field is a property of its feature.
    Features,
}

/// The columns of a network read from a workbook's sheet.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Cells {
    pub sheet: String,
    /// The header's names, in column order.
    pub columns: Vec<String>,
    /// The 1-based sheet column of the first.
    pub first_column: usize,
}

impl Network {
    /// Where a section's `field` was read: its line of a CSV, or its cell of a sheet.
    pub fn place(&self, section: &Section, field: &str) -> crate::diag::Place {
        use crate::diag::Place;
        match &self.origin {
            Origin::Text => Place::line(self.file.clone(), section.line),
            Origin::Sheet(c) => {
                let column = c
                    .columns
                    .iter()
                    .position(|h| h == field)
                    .map(|k| k + c.first_column);
                Place::cell(self.file.clone(), &c.sheet, section.line, column)
            }
            Origin::Features => crate::input::features::feature_place(&self.file, section.line),
        }
        .with_subfield(field)
    }

    /// Total length, km (summed in file order).
    pub fn length_km(&self) -> f64 {
        self.sections.iter().map(|s| s.length_km).sum()
    }

    /// Distinct regions, sorted.
    pub fn regions(&self) -> Vec<&str> {
        let mut r: Vec<&str> = self
            .sections
            .iter()
            .filter_map(|s| s.region.as_deref())
            .collect();
        r.sort_unstable();
        r.dedup();
        r
    }
}
