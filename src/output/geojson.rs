//! The plan for a GIS: `section_plan.geojson` and `work_programme.geojson`, written when the
//! network has a `geometry` column. Each is a GeoJSON FeatureCollection (RFC 7946): a feature
//! per row of the CSV of the same name, its geometry the section's centre line (a LineString,
//! or a MultiLineString for a line in parts) with the coordinates as read, and its properties
//! the CSV row's columns — texts as strings, money and lengths as numbers (to the cent and the
//! metre, as the CSV writes them), flags as booleans — and the columns carried from the
//! network. Sections without a geometry have a `null` geometry, as RFC 7946 allows.
//!
//! RFC 7946 has coordinates in longitude and latitude (WGS 84); with `network_coordinates =
//! "projected"` they are the network's own easting and northing, and a GIS must be told the
//! system (the standard has no member for it; the collection's own `coordinate_system` member
//! says `lonlat` or `projected`).

use crate::model::network::{Network, Section};
use crate::schema::plan::{SectionPlan, Work};
use serde_json::{json, Map, Value};

/// `section_plan.geojson`'s name.
pub const SECTION_PLAN: &str = "section_plan.geojson";
/// `work_programme.geojson`'s name.
pub const WORK_PROGRAMME: &str = "work_programme.geojson";

/// A section's geometry as a GeoJSON geometry object (`null` without one).
fn geometry(sec: &Section) -> Value {
    match &sec.geometry {
        None => Value::Null,
        Some(lines) if lines.len() == 1 => json!({
            "type": "LineString",
            "coordinates": lines[0],
        }),
        Some(lines) => json!({
            "type": "MultiLineString",
            "coordinates": lines,
        }),
    }
}

/// The columns carried from the network, as properties.
fn carried(net: &Network, sec: &Section, p: &mut Map<String, Value>) {
    use crate::schema::carried::Carried;
    for (name, v) in crate::schema::carried::carried(net, sec) {
        let v = match v {
            Carried::Text(t) => json!(t),
            Carried::Km(x) => x.map_or(Value::Null, |x| json!(x.to_f64())),
        };
        p.insert(name.to_owned(), v);
    }
}

/// One feature's text.
fn feature(net: &Network, sec: &Section, mut props: Map<String, Value>) -> String {
    carried(net, sec, &mut props);
    json!({
        "type": "Feature",
        "geometry": geometry(sec),
        "properties": props,
    })
    .to_string()
}

/// A feature collection's text around the features' texts. Its foreign member
/// `coordinate_system` (`lonlat` or `projected`) says what the coordinates are.
pub fn collection(
    coordinates: crate::model::network::Coordinates,
    features: impl IntoIterator<Item = String>,
) -> String {
    let mut out = format!(
        "{{\"type\":\"FeatureCollection\",\"coordinate_system\":\"{}\",\"features\":[\n",
        coordinates.name()
    );
    for (k, f) in features.into_iter().enumerate() {
        if k > 0 {
            out.push_str(",\n");
        }
        out.push_str(&f);
    }
    out.push_str("\n]}\n");
    out
}

/// The feature of a section plan's row.
pub fn section_feature(net: &Network, sec: &Section, r: &SectionPlan) -> String {
    let mut p = Map::new();
    p.insert("section_id".into(), json!(r.section_id));
    p.insert("region".into(), json!(r.region));
    p.insert("strategy".into(), json!(r.strategy));
    p.insert("npv".into(), json!(r.npv.to_f64()));
    p.insert("pv_agency_cost".into(), json!(r.pv_agency_cost.to_f64()));
    p.insert(
        "unconstrained_strategy".into(),
        json!(r.unconstrained_strategy),
    );
    p.insert(
        "unconstrained_npv".into(),
        json!(r.unconstrained_npv.to_f64()),
    );
    p.insert("same".into(), json!(r.same));
    p.insert(
        "first_works_year".into(),
        r.first_works_year.map_or(Value::Null, |y| json!(y.0)),
    );
    feature(net, sec, p)
}

/// The feature of a work programme's row.
pub fn work_feature(net: &Network, sec: &Section, w: &Work) -> String {
    let mut p = Map::new();
    p.insert("year".into(), json!(w.year.0));
    p.insert("section_id".into(), json!(w.section_id));
    p.insert("treatment".into(), json!(w.treatment));
    p.insert("cost".into(), json!(w.cost.to_f64()));
    p.insert("region".into(), json!(w.region));
    p.insert("category".into(), json!(w.category));
    feature(net, sec, p)
}
