//! The columns a section-level file carries from the network after its own: the location
//! (`road`, `from_km`, `to_km`, when the network has them), then each of the user's `x_`
//! columns. One list for every writer (the CSV files, the workbook, the GeoJSON files), so
//! that they carry the same columns in the same order.

use super::value::Fixed;
use crate::model::network::{Network, Section};

/// One cell carried from the network into a section-level output: a text (the road, a note)
/// or a chainage, to the metre.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Carried<'a> {
    Text(&'a str),
    Km(Option<Fixed<3>>),
}

/// The columns carried from the network into the section-level files (CSV, workbook,
/// GeoJSON), after their own: the location (`road`, `from_km`, `to_km`, when the network has
/// them), then each `x_` column — each with a section's value.
pub fn carried<'a>(
    net: &'a Network,
    sec: &'a Section,
) -> impl Iterator<Item = (&'a str, Carried<'a>)> + 'a {
    let road = net
        .road_column
        .then(|| ("road", Carried::Text(sec.road.as_deref().unwrap_or(""))));
    let km = |x: Option<f64>| Carried::Km(x.map(Fixed::<3>::of));
    let chainage = net.chainage_columns.then(|| {
        [
            ("from_km", km(sec.chainage.map(|c| c.0))),
            ("to_km", km(sec.chainage.map(|c| c.1))),
        ]
    });
    let notes = net
        .note_columns
        .iter()
        .zip(&sec.notes)
        .map(|(n, v)| (n.as_str(), Carried::Text(v.as_str())));
    road.into_iter()
        .chain(chainage.into_iter().flatten())
        .chain(notes)
}

/// The names of [`carried`]'s columns (the network's first section tells them; a network has
/// one at least).
pub fn carried_names(net: &Network) -> Vec<String> {
    net.sections
        .first()
        .map(|sec| carried(net, sec).map(|(n, _)| n.to_owned()).collect())
        .unwrap_or_default()
}

/// The number of [`carried`]'s columns.
pub fn carried_count(net: &Network) -> usize {
    usize::from(net.road_column) + 2 * usize::from(net.chainage_columns) + net.note_columns.len()
}

/// `spec`'s header line with [`carried`]'s columns after its own.
pub fn head_carrying(spec: super::FileSpec, net: &Network) -> String {
    let mut h = spec.head();
    h.pop();
    h.push_str(&carried_head(net));
    h.push('\n');
    h
}

/// A row's cells of [`carried`]'s columns when the row is no section's (a network or budget
/// row of a file whose other rows are sections'): empty, each after a comma.
pub fn carried_blank(net: &Network, out: &mut String) {
    for _ in 0..carried_count(net) {
        out.push(',');
    }
}

/// [`carried_cells`] of section `g`, or [`carried_blank`] for a row that is no section's.
pub fn carried_cells_of(net: &Network, g: Option<usize>, out: &mut String) {
    match g.and_then(|g| net.sections.get(g)) {
        Some(sec) => carried_cells(net, sec, out),
        None => carried_blank(net, out),
    }
}

/// [`carried`]'s header cells, as `,name…` (empty when there are none).
pub fn carried_head(net: &Network) -> String {
    let mut h = String::new();
    for n in carried_names(net) {
        h.push(',');
        super::value::write_text(&n, &mut h);
    }
    h
}

impl Carried<'_> {
    /// The cell's text as the CSV files hold it, before any quoting (a chainage to the metre,
    /// empty for none).
    pub fn text(&self) -> std::borrow::Cow<'_, str> {
        match self {
            Carried::Text(t) => std::borrow::Cow::Borrowed(t),
            Carried::Km(Some(x)) => {
                let mut s = String::new();
                super::Value::write(x, &mut s);
                std::borrow::Cow::Owned(s)
            }
            Carried::Km(None) => std::borrow::Cow::Borrowed(""),
        }
    }
}

/// A section's cells of [`carried`]'s columns, each after a comma.
pub fn carried_cells(net: &Network, sec: &Section, out: &mut String) {
    for (_, v) in carried(net, sec) {
        out.push(',');
        super::value::write_text(&v.text(), out);
    }
}
