//! Reading a table kept in a workbook (`.xlsx`, `.xlsm`, `.xls`, `.ods`): a named sheet, or the
//! first. Each row below the header is one record. Cells are
//! taken as typed: a number cell is that number (written back in the shortest text that reads
//! as the same `f64`, so `0.12` stays `0.12` and a cell shown as `12%` is 0.12), a text cell its
//! text, trimmed; a date cell its ISO date; a formula error its code (`#DIV/0!`), which the
//! reader then rejects where a number was expected. Every place is a cell (`Sections!D5`).
//!
//! The header is the first row with two values or more, so a title or caption above the table
//! is skipped (with a note); empty margin columns at either side are dropped.

use crate::diag::{column_letters, Diagnostics, Place};
use calamine::{Data, DataRef, Reader, Sheets};
use std::io::Cursor;

/// Most cells with a value read from one sheet: twenty columns of a million sections, with room
/// to spare. A sheet is read cell by cell, so a stray value far out (`XFD1048576`) costs one
/// cell, not a grid of every cell up to it.
pub const MAX_CELLS: usize = 60_000_000;

/// Every cell with a value of `sheet`, as (0-based row, 0-based column, text), in row order and
/// left to right within a row.
fn cells_of(
    book: &mut Sheets<Cursor<&[u8]>>,
    sheet: &str,
) -> Result<Vec<(u32, u32, String)>, String> {
    let mut out = Vec::new();
    let mut push = |(row, col): (u32, u32), text: String| {
        if text.is_empty() {
            return Ok(());
        }
        if out.len() >= MAX_CELLS {
            return Err(format!("more than {MAX_CELLS} cells with values"));
        }
        out.push((row, col, text));
        Ok(())
    };
    match book {
        // Read as a stream of cells: these formats let a sheet claim any extent.
        Sheets::Xlsx(x) => {
            let mut r = x.worksheet_cells_reader(sheet).map_err(|e| e.to_string())?;
            while let Some(c) = r.next_cell().map_err(|e| e.to_string())? {
                push(c.get_position(), ref_text(c.get_value()))?;
            }
        }
        Sheets::Xlsb(x) => {
            let mut r = x.worksheet_cells_reader(sheet).map_err(|e| e.to_string())?;
            while let Some(c) = r.next_cell().map_err(|e| e.to_string())? {
                push(c.get_position(), ref_text(c.get_value()))?;
            }
        }
        // The reader bounds these itself (an .xls sheet has at most 65,536 × 256 cells; an
        // .ods sheet is capped at 10⁸).
        _ => {
            let range = book.worksheet_range(sheet).map_err(|e| e.to_string())?;
            for (row, col, v) in range.used_cells() {
                let (r0, c0) = range.start().unwrap_or((0, 0));
                push((r0 + row as u32, c0 + col as u32), cell_text(v))?;
            }
        }
    }
    // Cells come in row order from every reader, but not always left to right.
    out.sort_by_key(|&(r, c, _)| (r, c));
    Ok(out)
}

/// The text of a streamed cell (see [`cell_text`]).
fn ref_text(c: &DataRef<'_>) -> String {
    match c {
        DataRef::SharedString(s) => s.trim().to_owned(),
        other => cell_text(&Data::from(other.clone())),
    }
}

/// A workbook's sheet, converted to text records with their rows.
pub struct SheetInput {
    file: String,
    sheet: String,
    /// The header's cells, trimmed.
    pub headers: csv::StringRecord,
    /// The records, each with its number (sheet row or feature).
    pub(super) rows: super::table::Records,
    /// The 1-based sheet column of the header's first cell.
    first_column: usize,
    /// The header's 1-based sheet row.
    header_row: usize,
}

/// Whether `bytes` look like a workbook: a zip container (`.xlsx`, `.ods`) or an OLE compound
/// file (`.xls`).
pub fn is_workbook(bytes: &[u8]) -> bool {
    bytes.starts_with(b"PK\x03\x04") || bytes.starts_with(&[0xD0, 0xCF, 0x11, 0xE0])
}

/// Open a workbook by what its bytes say it is, so that a damaged file's error is the error of
/// its own format: an OpenDocument spreadsheet names its type in a first, uncompressed
/// `mimetype` entry; another zip container is an Office Open XML workbook (`.xlsx`, or
/// `.xlsb`); an OLE compound file an `.xls`.
fn open_book(bytes: &[u8]) -> Result<Sheets<Cursor<&[u8]>>, String> {
    use calamine::{open_workbook_from_rs, Ods, Xls, Xlsb, Xlsx};
    let head = &bytes[..bytes.len().min(200)];
    let is_ods = head
        .windows(54)
        .any(|w| w == b"mimetypeapplication/vnd.oasis.opendocument.spreadsheet");
    let c = Cursor::new(bytes);
    if is_ods {
        open_workbook_from_rs::<Ods<_>, _>(c)
            .map(Sheets::Ods)
            .map_err(|e| e.to_string())
    } else if bytes.starts_with(b"PK") {
        match open_workbook_from_rs::<Xlsx<_>, _>(c.clone()) {
            Ok(b) => Ok(Sheets::Xlsx(b)),
            Err(e) => open_workbook_from_rs::<Xlsb<_>, _>(c.clone())
                .map(Sheets::Xlsb)
                .or_else(|_| open_workbook_from_rs::<Ods<_>, _>(c).map(Sheets::Ods))
                .map_err(|_| e.to_string()),
        }
    } else {
        open_workbook_from_rs::<Xls<_>, _>(c)
            .map(Sheets::Xls)
            .map_err(|e| e.to_string())
    }
}

/// The text of one cell, as the readers see it.
fn cell_text(c: &Data) -> String {
    match c {
        Data::Empty => String::new(),
        Data::String(s) => s.trim().to_owned(),
        Data::Int(i) => i.to_string(),
        // Rust's shortest round-trip form: parsing it gives this very `f64`.
        Data::Float(x) => x.to_string(),
        Data::Bool(b) => if *b { "TRUE" } else { "FALSE" }.to_owned(),
        Data::DateTime(t) => iso_date(t.as_f64()),
        Data::DateTimeIso(s) | Data::DurationIso(s) => s.clone(),
        Data::Error(e) => e.to_string(),
    }
}

/// The ISO date (and time, when there is one) of a spreadsheet's day serial (1900 system: day
/// 1 is 1900-01-01 and day 60 the fictitious 1900-02-29, so serials from 61 count from
/// 1899-12-30).
fn iso_date(serial: f64) -> String {
    if !serial.is_finite() || !(0.0..3.0e6).contains(&serial) {
        return format!("{serial}");
    }
    let days = serial.floor() as i64;
    let secs = ((serial - serial.floor()) * 86_400.0).round() as i64;
    let days = if days < 61 { days + 1 } else { days };
    // Days from 1970-01-01, then the civil date (H. Hinnant's days-to-civil algorithm).
    let z = days - 25_569 + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    let date = format!("{year:04}-{month:02}-{day:02}");
    if secs == 0 {
        date
    } else {
        let s = secs.min(86_399);
        format!("{date}T{:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60)
    }
}

impl SheetInput {
    /// Open `bytes` as a workbook and take the sheet `wanted` (or the first); `layout` says
    /// what the sheet should hold. Failures are reported at `named_at` (where the sheet is
    /// named) or at the file.
    pub fn open(
        file: &str,
        bytes: &[u8],
        wanted: Option<(&str, &Place)>,
        layout: &str,
        d: &mut Diagnostics,
    ) -> Option<SheetInput> {
        let mut book = match open_book(bytes) {
            Ok(b) => b,
            Err(e) => {
                d.error(
                    Place::file(file),
                    format!("an unreadable workbook: {e}"),
                    "an .xlsx, .xls or .ods workbook, or a CSV text file",
                );
                return None;
            }
        };
        let names = book.sheet_names();
        let sheet = match wanted {
            Some((name, place)) => match names.iter().find(|n| n.as_str() == name) {
                Some(n) => n.clone(),
                None => {
                    let e = d.error(
                        place.clone(),
                        format!("no sheet `{name}` in {file}"),
                        format!("one of its sheets: {}", quoted(&names)),
                    );
                    let cands: Vec<&str> = names.iter().map(String::as_str).collect();
                    if let Some(m) = crate::diag::did_you_mean(name, &cands) {
                        e.hint = Some(format!("did you mean `{m}`?"));
                    }
                    return None;
                }
            },
            None => match names.first() {
                Some(n) => n.clone(),
                None => {
                    d.error(
                        Place::file(file),
                        "a workbook with no sheets",
                        layout.to_owned(),
                    );
                    return None;
                }
            },
        };
        let cells = match cells_of(&mut book, &sheet) {
            Ok(c) => c,
            Err(e) => {
                d.error(
                    Place::file(file),
                    format!("the sheet `{sheet}` cannot be read: {e}"),
                    format!("a worksheet of at most {MAX_CELLS} cells with values"),
                );
                return None;
            }
        };
        // Rows of cells, in sheet order: (0-based row, [(0-based column, text)]).
        let mut rows_of: Vec<(u32, Vec<(u32, String)>)> = Vec::new();
        for (row, col, text) in cells {
            match rows_of.last_mut() {
                Some((r, v)) if *r == row => v.push((col, text)),
                _ => rows_of.push((row, vec![(col, text)])),
            }
        }
        // The header: the first row with values in two cells or more. Rows above it (a title,
        // a caption) are skipped with a note.
        let Some(h) = rows_of.iter().position(|(_, v)| v.len() >= 2) else {
            d.error(
                Place::cell(
                    file,
                    &sheet,
                    rows_of.first().map_or(1, |r| r.0 as usize + 1),
                    None,
                ),
                "no header row (a row naming two columns or more)",
                layout.to_owned(),
            );
            return None;
        };
        if let (Some(first), Some(last)) = (rows_of.first(), rows_of[..h].last()) {
            let (first, last) = (first.0 as usize + 1, last.0 as usize + 1);
            let rows = if first == last {
                format!("row {first}")
            } else {
                format!("rows {first} to {last}")
            };
            d.note(
                Place::cell(file, &sheet, first, None),
                format!("{rows}, above the header, skipped as a caption"),
            );
        }
        // The table spans the header's first to last named column.
        let (header_row, header_cells) = &rows_of[h];
        let lo = header_cells.first().map_or(0, |c| c.0);
        let hi = header_cells.last().map_or(0, |c| c.0);
        let width = (hi - lo + 1) as usize;
        let record = |cells: &[(u32, String)]| -> csv::StringRecord {
            let mut fields = vec![""; width];
            for (c, t) in cells {
                if (lo..=hi).contains(c) {
                    fields[(c - lo) as usize] = t;
                }
            }
            fields.into_iter().collect()
        };
        let headers = record(header_cells);
        let mut rows = Vec::with_capacity(rows_of.len() - h - 1);
        let mut outside = 0usize;
        for (row, cells) in &rows_of[h + 1..] {
            for (c, t) in cells.iter().filter(|(c, _)| !(lo..=hi).contains(c)) {
                outside += 1;
                if outside <= 20 {
                    d.error(
                        Place::cell(file, &sheet, *row as usize + 1, Some(*c as usize + 1)),
                        format!("the value `{t}` outside the table's columns"),
                        format!(
                            "values only under the header's columns {} to {}",
                            column_letters(lo as usize + 1),
                            column_letters(hi as usize + 1)
                        ),
                    );
                }
            }
            rows.push((*row as usize + 1, record(cells)));
        }
        if outside > 20 {
            d.error(
                Place::cell(file, &sheet, *header_row as usize + 1, None),
                format!("{} more values outside the table's columns", outside - 20),
                "values only under the header's columns",
            );
        }
        let header_row = *header_row as usize + 1;
        d.note(
            Place::file(file),
            format!("read from the workbook's sheet `{sheet}`"),
        );
        Some(SheetInput {
            file: file.to_owned(),
            sheet,
            headers,
            rows: super::table::Records::new(rows),
            first_column: lo as usize + 1,
            header_row,
        })
    }

    /// Whether the sheet had records after its header (reported at the header row if not).
    pub fn had_rows(&self, what: &str, d: &mut Diagnostics) -> bool {
        if self.rows.is_empty() {
            d.error(
                Place::cell(&self.file, &self.sheet, self.header_row, None),
                "a header but no rows",
                what.to_owned(),
            );
        }
        !self.rows.is_empty()
    }

    /// The place of a row, or of one of its cells (`column`: 0-based index in the header).
    pub fn place(&self, row: usize, column: Option<usize>) -> Place {
        Place::cell(
            &self.file,
            &self.sheet,
            row,
            column.map(|c| c + self.first_column),
        )
    }

    /// Where the sheet's columns are, for places found after reading.
    pub fn cells(&self) -> crate::model::network::Cells {
        crate::model::network::Cells {
            sheet: self.sheet.clone(),
            columns: self.headers.iter().map(str::to_owned).collect(),
            first_column: self.first_column,
        }
    }

    /// The header's 1-based sheet row.
    pub fn header_row(&self) -> usize {
        self.header_row
    }
}

fn quoted(names: &[String]) -> String {
    names
        .iter()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn day_serials_are_iso_dates() {
        // Serial values as spreadsheets show them (1900 date system): 1 = 1900-01-01,
        // 61 = 1900-03-01 (after the fictitious 29 February), 25569 = 1970-01-01,
        // 45658 = 2025-01-01, and half a day is noon.
        assert_eq!(iso_date(1.0), "1900-01-01");
        assert_eq!(iso_date(59.0), "1900-02-28");
        assert_eq!(iso_date(61.0), "1900-03-01");
        assert_eq!(iso_date(25_569.0), "1970-01-01");
        assert_eq!(iso_date(45_658.0), "2025-01-01");
        assert_eq!(iso_date(45_658.5), "2025-01-01T12:00:00");
    }

    #[test]
    fn number_cells_read_back_as_the_same_number() {
        for x in [0.12, 0.1 + 0.2, 172.2, 3.0, -0.5, 1e-7, 123_456.789] {
            let t = cell_text(&Data::Float(x));
            assert_eq!(t.parse::<f64>().unwrap().to_bits(), x.to_bits(), "{t}");
        }
        assert_eq!(cell_text(&Data::Float(3.0)), "3");
        assert_eq!(cell_text(&Data::String("  single ".into())), "single");
        assert!(!is_workbook(b"section_id,length_km\n"));
        assert!(is_workbook(b"PK\x03\x04rest"));
    }
}
