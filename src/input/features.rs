//! Reading a table kept as a GeoJSON FeatureCollection (RFC 7946): a feature per record, its
//! `properties` the columns and its line geometry the `geometry` column. Property values are
//! taken as typed: a number is that number (written back in the shortest text that reads as
//! the same `f64`), a string its text, trimmed, `true`/`false` as words, `null` an empty cell;
//! a list or an object is an error. A `LineString` or `MultiLineString` becomes well-known text
//! of the very same coordinates; a feature without geometry has an empty `geometry` cell; any
//! other geometry type is an error. Every place is the feature's path,
//! `network.geojson: features[3].properties.iri` (features counted from 1 in messages, as rows
//! are).

use crate::diag::{Diagnostics, Place};
use serde_json::Value;

/// Features converted to text records.
pub struct FeatureInput {
    file: String,
    pub headers: csv::StringRecord,
    /// For each column, the first feature that has it (a property set, or a geometry).
    first_with: Vec<usize>,
    /// The records, each with its number (sheet row or feature).
    pub(super) rows: super::table::Records,
}

/// Whether `bytes` look like JSON text (an object first, after any byte-order mark and white
/// space): a network as GeoJSON rather than CSV.
pub fn is_json(bytes: &[u8]) -> bool {
    let b = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
    b.iter().find(|c| !c.is_ascii_whitespace()) == Some(&b'{')
}

/// A number's text: the shortest that reads back as the same `f64` (integers as written).
fn number_text(n: &serde_json::Number) -> String {
    if n.is_i64() || n.is_u64() {
        n.to_string()
    } else {
        n.as_f64().map(|x| x.to_string()).unwrap_or_default()
    }
}

/// A GeoJSON position as `x y` (a third coordinate dropped), or `None`.
fn position(p: &Value) -> Option<String> {
    let a = p.as_array()?;
    let x = a.first()?.as_number()?;
    let y = a.get(1)?.as_number()?;
    Some(format!("{} {}", number_text(x), number_text(y)))
}

fn line_text(l: &Value) -> Option<String> {
    let pts: Option<Vec<String>> = l.as_array()?.iter().map(position).collect();
    Some(format!("({})", pts?.join(", ")))
}

/// A line geometry as well-known text of the same coordinates.
fn geometry_text(g: &Value) -> Result<String, String> {
    let kind = g.get("type").and_then(Value::as_str).unwrap_or("");
    let coords = g.get("coordinates").unwrap_or(&Value::Null);
    let bad = || format!("a {kind} whose coordinates are not lists of [x, y] positions");
    match kind {
        "LineString" => Ok(format!("LINESTRING {}", line_text(coords).ok_or_else(bad)?)),
        "MultiLineString" => {
            let lines: Option<Vec<String>> = coords
                .as_array()
                .map(|a| a.iter().map(line_text).collect::<Option<Vec<_>>>())
                .unwrap_or(None);
            Ok(format!(
                "MULTILINESTRING ({})",
                lines.ok_or_else(bad)?.join(", ")
            ))
        }
        "" => Err("a geometry without a `type`".into()),
        other => Err(format!("a {other}")),
    }
}

impl FeatureInput {
    /// Read `bytes` as a FeatureCollection; `layout` says what it should hold (its features
    /// and their properties).
    pub fn open(
        file: &str,
        bytes: &[u8],
        layout: &str,
        d: &mut Diagnostics,
    ) -> Option<FeatureInput> {
        let b = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(bytes);
        let doc: Value = match serde_json::from_slice(b) {
            Ok(v) => v,
            Err(e) => {
                d.error(
                    Place::line(file, e.line()).with_column(e.column()),
                    format!("unreadable JSON: {e}"),
                    "a GeoJSON FeatureCollection",
                );
                return None;
            }
        };
        let Some(features) = doc
            .get("features")
            .and_then(Value::as_array)
            .filter(|_| doc.get("type").and_then(Value::as_str) == Some("FeatureCollection"))
        else {
            d.error(
                Place::file(file),
                "JSON that is not a GeoJSON FeatureCollection",
                format!("{{\"type\": \"FeatureCollection\", \"features\": [...]}}, {layout}"),
            );
            return None;
        };
        if features.is_empty() {
            d.error(
                Place::file(file).with_field("features"),
                "no features",
                layout.to_owned(),
            );
            return None;
        }
        let place = |k: usize| Place::file(file).with_field(format!("features[{k}]"));
        // The columns: every property's name, in order of first appearance, then `geometry`.
        let mut names: Vec<String> = Vec::new();
        let mut first_with = Vec::new();
        let mut lines = None;
        for (k, f) in features.iter().enumerate() {
            if let Some(p) = f.get("properties").and_then(Value::as_object) {
                for name in p.keys() {
                    if !names.contains(name) {
                        names.push(name.clone());
                        first_with.push(k + 1);
                    }
                }
            }
            if lines.is_none() && f.get("geometry").is_some_and(|g| !g.is_null()) {
                lines = Some(k + 1);
            }
        }
        if let Some(first) = lines {
            if names.iter().any(|n| n == "geometry") {
                d.error(
                    Place::file(file).with_field("properties.geometry"),
                    "a property named `geometry` beside the features' geometries",
                    "the line in each feature's geometry only",
                );
                return None;
            }
            names.push("geometry".into());
            first_with.push(first);
        }
        let lines = lines.is_some();
        let mut rows = Vec::with_capacity(features.len());
        for (k, f) in features.iter().enumerate() {
            let n = k + 1;
            if f.get("type").and_then(Value::as_str) != Some("Feature") {
                d.error(place(n), "not a Feature", "{\"type\": \"Feature\", ...}");
                continue;
            }
            let props = f.get("properties").and_then(Value::as_object);
            let mut cells = Vec::with_capacity(names.len());
            for name in &names {
                if name == "geometry" && lines {
                    let g = f.get("geometry").unwrap_or(&Value::Null);
                    cells.push(match g {
                        Value::Null => String::new(),
                        g => match geometry_text(g) {
                            Ok(t) => t,
                            Err(e) => {
                                d.error(
                                    place(n).with_subfield("geometry"),
                                    e,
                                    "a LineString or MultiLineString, or null",
                                );
                                String::new()
                            }
                        },
                    });
                    continue;
                }
                let v = props.and_then(|p| p.get(name)).unwrap_or(&Value::Null);
                cells.push(match v {
                    Value::Null => String::new(),
                    Value::String(s) => s.trim().to_owned(),
                    Value::Number(x) => number_text(x),
                    Value::Bool(b) => b.to_string(),
                    Value::Array(_) | Value::Object(_) => {
                        d.error(
                            place(n).with_subfield("properties").with_subfield(name),
                            "a list or an object",
                            "a number, a string, true, false or null",
                        );
                        String::new()
                    }
                });
            }
            rows.push((n, cells.into_iter().collect()));
        }
        d.note(
            Place::file(file),
            format!("read as GeoJSON: {} features", features.len()),
        );
        Some(FeatureInput {
            file: file.to_owned(),
            headers: names.into_iter().collect(),
            first_with,
            rows: super::table::Records::new(rows),
        })
    }

    pub fn had_rows(&self, what: &str, d: &mut Diagnostics) -> bool {
        if self.rows.is_empty() {
            d.error(
                Place::file(&self.file).with_field("features"),
                "no features",
                what.to_owned(),
            );
        }
        !self.rows.is_empty()
    }

    /// The place of feature `n`'s properties (the field named after it is the property).
    pub fn place(&self, n: usize) -> Place {
        feature_place(&self.file, n)
    }

    /// Where column `column` first appears (the first feature with that property, or with a
    /// geometry), or, for a column none has, the features as a whole.
    pub fn column_place(&self, column: Option<usize>) -> Place {
        let name = column.and_then(|i| Some((self.first_with.get(i)?, self.headers.get(i)?)));
        match name {
            Some((&n, "geometry")) => Place::file(&self.file)
                .with_field(format!("features[{n}]"))
                .with_subfield("geometry"),
            Some((&n, name)) => feature_place(&self.file, n).with_subfield(name),
            None => Place::file(&self.file).with_field("features"),
        }
    }
}

/// The place of feature `n`'s properties in `file`.
pub fn feature_place(file: &str, n: usize) -> Place {
    Place::file(file).with_field(format!("features[{n}].properties"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_empty_collection_is_one_error() {
        let mut d = Diagnostics::new();
        let got = FeatureInput::open(
            "n.geojson",
            br#"{"type": "FeatureCollection", "features": []}"#,
            "sections",
            &mut d,
        );
        assert!(got.is_none());
        assert_eq!(d.error_count(), 1, "{d}");
        assert!(
            d.to_string().contains("n.geojson: features: no features"),
            "{d}"
        );
    }

    #[test]
    fn lines_become_well_known_text_of_the_same_numbers() {
        let g: Value =
            serde_json::json!({"type": "LineString", "coordinates": [[0.1, 2], [3.5e5, -4.25, 9]]});
        assert_eq!(
            geometry_text(&g).unwrap(),
            "LINESTRING (0.1 2, 350000 -4.25)"
        );
        let m: Value = serde_json::json!({"type": "MultiLineString", "coordinates": [[[0, 0], [1, 1]], [[2, 2], [3, 3]]]});
        assert_eq!(
            geometry_text(&m).unwrap(),
            "MULTILINESTRING ((0 0, 1 1), (2 2, 3 3))"
        );
        let p: Value = serde_json::json!({"type": "Point", "coordinates": [0, 0]});
        assert_eq!(geometry_text(&p).unwrap_err(), "a Point");
        assert!(is_json(b"\xEF\xBB\xBF \n{\"type\""));
        assert!(!is_json(b"section_id,length_km"));
    }
}
