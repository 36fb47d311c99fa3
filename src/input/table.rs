//! A table of records, whether it came as CSV text or as a workbook's sheet: the readers ask
//! for the header, each record and the place of a field, and need not know which it was.

use super::csvfile::CsvInput;
use super::features::FeatureInput;
use super::sheet::SheetInput;
use crate::diag::{Diagnostics, Place};

/// Records with their places.
pub enum Rows<'t> {
    Text(CsvInput<'t>),
    Sheet(SheetInput),
    Features(FeatureInput),
}

impl Rows<'_> {
    /// The header's fields.
    pub fn headers(&self) -> &csv::StringRecord {
        match self {
            Rows::Text(c) => &c.headers,
            Rows::Sheet(s) => &s.headers,
            Rows::Features(f) => &f.headers,
        }
    }

    /// Say which columns hold text; see [`CsvInput::text_columns`] (a sheet's cells are typed,
    /// so it has nothing to convert).
    pub fn text_columns(&mut self, is_text: impl Fn(&str) -> bool) {
        if let Rows::Text(c) = self {
            c.text_columns(is_text);
        }
    }

    /// Move to the next record and return its line (CSV) or row (sheet).
    pub fn next_row(&mut self, d: &mut Diagnostics) -> Option<usize> {
        match self {
            Rows::Text(c) => c.next_row(d),
            Rows::Sheet(s) => s.rows.next_row(),
            Rows::Features(f) => f.rows.next_row(),
        }
    }

    /// The current record.
    pub fn record(&self) -> &csv::StringRecord {
        match self {
            Rows::Text(c) => c.record(),
            Rows::Sheet(s) => s.rows.record(),
            Rows::Features(f) => f.rows.record(),
        }
    }

    /// Report a table with a header but no records; `true` when there were records.
    pub fn had_rows(&self, what: &str, d: &mut Diagnostics) -> bool {
        match self {
            Rows::Text(c) => c.had_rows(what, d),
            Rows::Sheet(s) => s.had_rows(what, d),
            Rows::Features(f) => f.had_rows(what, d),
        }
    }

    /// The header's line or row.
    pub fn header_row(&self) -> usize {
        match self {
            Rows::Text(_) | Rows::Features(_) => 1,
            Rows::Sheet(s) => s.header_row(),
        }
    }

    /// The place of a record's `line` (CSV), row (sheet) or feature, at a column (0-based in
    /// the header) when given: a cell in a sheet; the line alone in a CSV; the feature's
    /// properties in GeoJSON (a field named after it is the property). For the header (line
    /// 1 of a GeoJSON table), the collection's properties.
    pub fn place(&self, file: &str, line: usize, column: Option<usize>) -> Place {
        match self {
            Rows::Text(_) => Place::line(file, line),
            Rows::Sheet(s) => s.place(line, column),
            Rows::Features(f) => f.place(line),
        }
    }

    /// The place of the header's column `column` (0-based; `None` for the header as a whole,
    /// where a missing column is reported): the header line or its cell in a CSV or sheet,
    /// with the column's number and name; in GeoJSON the first feature with the property, or
    /// the features as a whole.
    pub fn header_place(&self, file: &str, column: Option<usize>) -> Place {
        match self {
            Rows::Features(f) => f.column_place(column),
            _ => {
                let place = self.place(file, self.header_row(), column);
                match column.and_then(|i| Some((i, self.headers().get(i)?))) {
                    Some((i, h)) => place.with_subfield(&format!("column {} `{h}`", i + 1)),
                    None => place,
                }
            }
        }
    }

    /// The word for a column in messages, and its plural: a column, or a GeoJSON feature's
    /// property.
    pub fn column_word(&self) -> (&'static str, &'static str) {
        match self {
            Rows::Features(_) => ("property", "properties"),
            _ => ("column", "columns"),
        }
    }

    /// The word for a record's number in messages: line, row or feature.
    pub fn row_word(&self) -> &'static str {
        match self {
            Rows::Text(_) => "line",
            Rows::Sheet(_) => "row",
            Rows::Features(_) => "feature",
        }
    }
}

/// Records already in memory (a sheet's, a feature collection's), each with its number (sheet
/// row or feature), read one at a time.
pub struct Records {
    rows: Vec<(usize, csv::StringRecord)>,
    next: usize,
    /// Returned by [`Records::record`] before the first.
    none: csv::StringRecord,
}

impl Records {
    pub fn new(rows: Vec<(usize, csv::StringRecord)>) -> Records {
        Records {
            rows,
            next: 0,
            none: csv::StringRecord::new(),
        }
    }

    /// Move to the next record and return its number.
    pub fn next_row(&mut self) -> Option<usize> {
        let row = self.rows.get(self.next)?.0;
        self.next += 1;
        Some(row)
    }

    /// The current record.
    pub fn record(&self) -> &csv::StringRecord {
        match self.next.checked_sub(1).and_then(|k| self.rows.get(k)) {
            Some((_, r)) => r,
            None => &self.none,
        }
    }

    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }
}
