//! Networks kept as workbooks or GIS layers: the demo network saved as an .xlsx (typed cells, as
//! a spreadsheet program writes them), as an .ods and as GeoJSON gives the CSV's plan byte for
//! byte, and a bad cell or property is named where it is (`sheet!cell`, `features[k]`).

use crate::golden::plan_files;
use crate::util::Workdir;
use std::io::Write;

fn demo_rows() -> Vec<Vec<String>> {
    let bytes = pavestrat::demo::FILES[1].1;
    let mut r = csv::ReaderBuilder::new()
        .has_headers(false)
        .from_reader(bytes);
    r.records()
        .map(|rec| rec.unwrap().iter().map(str::to_owned).collect())
        .collect()
}

/// The demo files with the scenario's network pointed at `name`, written from `bytes`.
fn with_workbook(name: &str, bytes: &[u8], sheet: Option<&str>) -> Workdir {
    let wd = Workdir::new();
    wd.demo_files();
    wd.write(name, bytes);
    let scenario = wd.read("scenario.toml");
    assert!(scenario.contains("network = \"network.csv\"\n"));
    let line = match sheet {
        Some(s) => format!("network = \"{name}\"\nnetwork_sheet = \"{s}\"\n"),
        None => format!("network = \"{name}\"\n"),
    };
    wd.write(
        "scenario.toml",
        scenario.replace("network = \"network.csv\"\n", &line),
    );
    wd
}

fn csv_plan() -> Vec<(String, Vec<u8>)> {
    let wd = Workdir::new();
    wd.demo_files();
    plan_files(&wd)
}

fn assert_same(got: &[(String, Vec<u8>)], want: &[(String, Vec<u8>)], label: &str) {
    assert_eq!(
        got.iter().map(|f| &f.0).collect::<Vec<_>>(),
        want.iter().map(|f| &f.0).collect::<Vec<_>>(),
        "{label}"
    );
    for ((name, a), (_, b)) in got.iter().zip(want) {
        assert!(a == b, "{name} differs ({label})");
    }
}

/// An .ods spreadsheet (OpenDocument, ISO/IEC 26300) of `rows` on a sheet named `sheet`, with
/// number cells where a field reads as a number, as a spreadsheet program keeps them.
fn ods(sheet: &str, rows: &[Vec<String>]) -> Vec<u8> {
    let esc = |s: &str| {
        s.replace('&', "&amp;")
            .replace('<', "&lt;")
            .replace('>', "&gt;")
    };
    let mut table = String::new();
    for r in rows {
        table.push_str("<table:table-row>");
        for f in r {
            if f.parse::<f64>().is_ok() {
                table.push_str(&format!(
                    "<table:table-cell office:value-type=\"float\" office:value=\"{f}\"><text:p>{f}</text:p></table:table-cell>"
                ));
            } else if f.is_empty() {
                table.push_str("<table:table-cell/>");
            } else {
                table.push_str(&format!(
                    "<table:table-cell office:value-type=\"string\"><text:p>{}</text:p></table:table-cell>",
                    esc(f)
                ));
            }
        }
        table.push_str("</table:table-row>");
    }
    let content = format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\
<office:document-content xmlns:office=\"urn:oasis:names:tc:opendocument:xmlns:office:1.0\" \
xmlns:table=\"urn:oasis:names:tc:opendocument:xmlns:table:1.0\" \
xmlns:text=\"urn:oasis:names:tc:opendocument:xmlns:text:1.0\" office:version=\"1.2\">\
<office:body><office:spreadsheet><table:table table:name=\"{sheet}\">{table}</table:table>\
</office:spreadsheet></office:body></office:document-content>"
    );
    let manifest = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\
<manifest:manifest xmlns:manifest=\"urn:oasis:names:tc:opendocument:xmlns:manifest:1.0\" manifest:version=\"1.2\">\
<manifest:file-entry manifest:full-path=\"/\" manifest:media-type=\"application/vnd.oasis.opendocument.spreadsheet\"/>\
<manifest:file-entry manifest:full-path=\"content.xml\" manifest:media-type=\"text/xml\"/>\
</manifest:manifest>";
    let mut out = std::io::Cursor::new(Vec::new());
    let mut zip = zip::ZipWriter::new(&mut out);
    let stored =
        zip::write::SimpleFileOptions::default().compression_method(zip::CompressionMethod::Stored);
    for (name, body) in [
        ("mimetype", "application/vnd.oasis.opendocument.spreadsheet"),
        ("META-INF/manifest.xml", manifest),
        ("content.xml", content.as_str()),
    ] {
        zip.start_file(name, stored).unwrap();
        zip.write_all(body.as_bytes()).unwrap();
    }
    zip.finish().unwrap();
    out.into_inner()
}

#[test]
fn an_ods_network_gives_the_csv_plan_and_names_a_bad_cell() {
    let want = csv_plan();
    let rows = demo_rows();
    let wd = with_workbook("inventory.ods", &ods("Roads", &rows), None);
    assert_same(&plan_files(&wd), &want, "ods");
    // A bad roughness on the third section: named as its cell (column E, sheet row 4).
    let mut bad = rows.clone();
    assert_eq!(bad[0][4], "iri");
    bad[3][4] = "rough".into();
    let wd = with_workbook("inventory.ods", &ods("Roads", &bad), Some("Roads"));
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("inventory.ods: Roads!E4: iri: found `rough`");
    // A sheet the workbook lacks is an error where the scenario names it.
    let wd = with_workbook("inventory.ods", &ods("Roads", &rows), Some("roads"));
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("no sheet `roads` in")
        .stderr_has("did you mean `Roads`?");
}

#[cfg(feature = "xlsx")]
#[test]
fn an_xlsx_network_gives_the_csv_plan_and_names_a_bad_cell() {
    use rust_xlsxwriter::Workbook;
    let want = csv_plan();
    let rows = demo_rows();
    // Written as a spreadsheet program keeps them: numbers as number cells, shares formatted
    // as percentages (the cell still holds 0.16), a title sheet before the data, and the table
    // starting at B3 below a caption.
    let book = |rows: &[Vec<String>]| -> Vec<u8> {
        let mut wb = Workbook::new();
        let about = wb.add_worksheet();
        about.set_name("About").unwrap();
        about.write_string(0, 0, "Fenwick district roads").unwrap();
        let ws = wb.add_worksheet();
        ws.set_name("Road list").unwrap();
        ws.write_string(0, 1, "Inventory, surveyed 2026").unwrap();
        let pct = rust_xlsxwriter::Format::new().set_num_format("0.0%");
        for (r, row) in rows.iter().enumerate() {
            for (c, f) in row.iter().enumerate() {
                let (r, c) = (r as u32 + 2, c as u16 + 1);
                match f.parse::<f64>() {
                    Ok(x) if r > 2 && (c == 8 || c == 9) => {
                        ws.write_number_with_format(r, c, x, &pct).unwrap();
                    }
                    Ok(x) => {
                        ws.write_number(r, c, x).unwrap();
                    }
                    Err(_) if f.is_empty() => {}
                    Err(_) => {
                        ws.write_string(r, c, f).unwrap();
                    }
                }
            }
        }
        wb.save_to_buffer().unwrap()
    };
    let wd = with_workbook("inventory.xlsx", &book(&rows), Some("Road list"));
    assert_same(&plan_files(&wd), &want, "xlsx");
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(0)
        .stderr_has("inventory.xlsx: 'Road list'!1:1: row 1, above the header, skipped");
    // The first sheet is taken when none is named: here the title sheet, which has no table.
    let wd = with_workbook("inventory.xlsx", &book(&rows), None);
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("inventory.xlsx: About!1:1: no header row");
    // A bad cell is named by its sheet and cell: the table starts at B3, so the fifth section's
    // lanes are in D8.
    let mut bad = rows.clone();
    assert_eq!(bad[0][2], "lanes");
    bad[5][2] = "2.5".into();
    let wd = with_workbook("inventory.xlsx", &book(&bad), Some("Road list"));
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("inventory.xlsx: 'Road list'!D8: lanes: found `2.5`");
}

/// The demo network as a GeoJSON FeatureCollection (RFC 7946), as a GIS exports a layer:
/// properties typed (numbers as numbers), each centre line a LineString. The plan is the CSV's,
/// byte for byte; a bad property is named by its feature.
#[test]
fn a_geojson_network_gives_the_csv_plan_and_names_a_bad_property() {
    let want = csv_plan();
    let rows = demo_rows();
    let head = &rows[0];
    let collection = |rows: &[Vec<String>]| -> Vec<u8> {
        let features: Vec<serde_json::Value> = rows[1..]
            .iter()
            .map(|r| {
                let mut props = serde_json::Map::new();
                let mut geometry = serde_json::Value::Null;
                for (h, f) in head.iter().zip(r) {
                    if h == "geometry" {
                        let body = f.trim_start_matches("LINESTRING (").trim_end_matches(')');
                        let pts: Vec<[f64; 2]> = body
                            .split(", ")
                            .map(|p| {
                                let mut xy = p.split(' ').map(|v| v.parse::<f64>().unwrap());
                                [xy.next().unwrap(), xy.next().unwrap()]
                            })
                            .collect();
                        geometry = serde_json::json!({"type": "LineString", "coordinates": pts});
                    } else if f.is_empty() {
                        props.insert(h.clone(), serde_json::Value::Null);
                    } else if let (Ok(x), false) = (f.parse::<f64>(), h == "section_id") {
                        props.insert(h.clone(), serde_json::json!(x));
                    } else {
                        props.insert(h.clone(), serde_json::json!(f));
                    }
                }
                serde_json::json!({"type": "Feature", "properties": props, "geometry": geometry})
            })
            .collect();
        serde_json::to_vec_pretty(&serde_json::json!({
            "type": "FeatureCollection",
            "features": features,
        }))
        .unwrap()
    };
    let wd = with_workbook("roads.geojson", &collection(&rows), None);
    assert_same(&plan_files(&wd), &want, "geojson");
    let mut bad = rows.clone();
    assert_eq!(bad[0][4], "iri");
    bad[4][4] = "rough".into();
    let wd = with_workbook("roads.geojson", &collection(&bad), None);
    wd.run(&["check", "--scenario", "scenario.toml"])
        .expect_code(2)
        .stderr_has("roads.geojson: features[4].properties.iri: found `rough`");
}
