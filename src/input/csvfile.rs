//! The part of reading a CSV input that every CSV file shares: an empty file, quoted fields, the
//! header, unreadable records, blank lines and rows of the wrong width, each reported with its
//! line. The file-specific readers see only well-formed rows.

use crate::diag::{Diagnostics, Place};

/// A CSV text being read row by row.
pub struct CsvInput<'t> {
    file: &'t str,
    reader: csv::Reader<&'t [u8]>,
    pub headers: csv::StringRecord,
    record: csv::StringRecord,
    rows: usize,
}

impl<'t> CsvInput<'t> {
    /// Open decoded CSV text; `layout` says what the file should hold, for the empty-file error.
    pub fn open(
        file: &'t str,
        text: &'t str,
        layout: &str,
        d: &mut Diagnostics,
    ) -> Option<CsvInput<'t>> {
        if text.trim().is_empty() {
            d.error(Place::line(file, 1), "the file is empty", layout.to_owned());
            return None;
        }
        if let Some(pos) = text.find('"') {
            let line = 1 + text[..pos].matches('\n').count();
            d.note(
                Place::line(file, line),
                "quoted fields; accepted (quotes removed)",
            );
        }
        let mut reader = csv::ReaderBuilder::new()
            .has_headers(true)
            .flexible(true)
            .trim(csv::Trim::All)
            .from_reader(text.as_bytes());
        let headers = match reader.headers() {
            Ok(h) => h.clone(),
            Err(e) => {
                d.error(
                    Place::line(file, 1),
                    format!("unreadable header: {e}"),
                    "a CSV header line",
                );
                return None;
            }
        };
        Some(CsvInput {
            file,
            reader,
            headers,
            record: csv::StringRecord::new(),
            rows: 0,
        })
    }

    /// Move to the next non-blank row with one field per column and return its line; rows of
    /// the wrong width are reported and skipped. `None` at the end, or after an unreadable
    /// record (reported).
    pub fn next_row(&mut self, d: &mut Diagnostics) -> Option<usize> {
        loop {
            match self.reader.read_record(&mut self.record) {
                Ok(false) => return None,
                Ok(true) => {}
                Err(e) => {
                    let line = e.position().map_or(0, |p| p.line() as usize);
                    d.error(
                        Place::line(self.file, line),
                        format!("unreadable CSV: {e}"),
                        "well-formed CSV",
                    );
                    return None;
                }
            }
            let line = self.record.position().map_or(0, |p| p.line() as usize);
            if self.record.iter().all(str::is_empty) {
                continue; // a blank line
            }
            self.rows += 1;
            if self.record.len() != self.headers.len() {
                d.error(
                    Place::line(self.file, line),
                    format!("found {} fields", self.record.len()),
                    format!("{} fields, one per header column", self.headers.len()),
                );
                continue;
            }
            return Some(line);
        }
    }

    /// The current row.
    pub fn record(&self) -> &csv::StringRecord {
        &self.record
    }

    /// Report a file with a header but no rows; `true` when there were rows.
    pub fn had_rows(&self, what: &str, d: &mut Diagnostics) -> bool {
        if self.rows == 0 {
            d.error(
                Place::line(self.file, 1),
                "a header but no rows",
                what.to_owned(),
            );
        }
        self.rows > 0
    }
}
