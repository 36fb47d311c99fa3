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
    /// Where the columns are, when the network was read from a workbook's sheet.
    pub cells: Option<Cells>,
    /// The network has a `road` column.
    pub road_column: bool,
    /// The network has the chainage columns `from_km` and `to_km`.
    pub chainage_columns: bool,
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
        match &self.cells {
            None => Place::line(self.file.clone(), section.line),
            Some(c) => {
                let column = c
                    .columns
                    .iter()
                    .position(|h| h == field)
                    .map(|k| k + c.first_column);
                Place::cell(self.file.clone(), &c.sheet, section.line, column)
            }
        }
        .with_field(field)
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
