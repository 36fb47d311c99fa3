//! The part of reading a CSV input that every CSV file shares: the separator (comma, semicolon
//! or tab, told from the header line), an empty file, quoted fields, the header, unreadable
//! records, blank lines and rows of the wrong width, each reported with its line. The
//! file-specific readers see only well-formed rows.
//!
//! A spreadsheet saved as CSV where the decimal separator is a comma (much of Europe) separates
//! its fields with semicolons and writes `1,5` for 1.5: in a semicolon-separated file, a field
//! that is a number with one decimal comma and no point is read with a decimal point, and the
//! first such field is named in a note.

use crate::diag::{Diagnostics, Place};

/// A CSV text being read row by row.
pub struct CsvInput<'t> {
    file: &'t str,
    reader: csv::Reader<&'t [u8]>,
    pub headers: csv::StringRecord,
    record: csv::StringRecord,
    rows: usize,
    /// The file separates fields with semicolons: decimal commas are read as points.
    decimal_comma: bool,
    /// Whether the note on decimal commas has been given.
    said_decimal_comma: bool,
    /// Columns that hold text (names, identifiers): never read for a decimal comma.
    text: Vec<bool>,
}

/// The separator of a CSV text, told from its first non-blank line (outside quotes): the most
/// frequent of comma, semicolon and tab; a comma when there is none or a tie with it.
pub fn separator(text: &str) -> u8 {
    let line = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
    let mut counts = [0usize; 3];
    let mut quoted = false;
    for c in line.chars() {
        match c {
            '"' => quoted = !quoted,
            ',' if !quoted => counts[0] += 1,
            ';' if !quoted => counts[1] += 1,
            '\t' if !quoted => counts[2] += 1,
            _ => {}
        }
    }
    let [comma, semi, tab] = counts;
    if semi > comma && semi >= tab {
        b';'
    } else if tab > comma && tab > semi {
        b'\t'
    } else {
        b','
    }
}

/// The byte offset of the first quoted field whose quotes are not needed (it holds no
/// separator, quote or line break): the sign of a spreadsheet that quotes every field, worth a
/// note. Quotes around a field that needs them (a well-known text's commas) are plain CSV.
fn needless_quotes(text: &str, sep: u8) -> Option<usize> {
    let b = text.as_bytes();
    let mut k = 0;
    while let Some(off) = b[k..].iter().position(|&c| c == b'"') {
        let start = k + off;
        // The field's end: the next quote not doubled.
        let mut j = start + 1;
        let mut needed = false;
        loop {
            match b.get(j) {
                None => return None, // an unclosed quote: the reader reports it
                Some(b'"') if b.get(j + 1) == Some(&b'"') => {
                    needed = true;
                    j += 2;
                }
                Some(b'"') => break,
                Some(&c) => {
                    needed |= c == sep || c == b'\n' || c == b'\r';
                    j += 1;
                }
            }
        }
        if !needed {
            return Some(start);
        }
        k = j + 1;
    }
    None
}

/// `field` with its decimal comma made a point, when it is a number written with one comma and
/// no point (`1,5`, `-0,25`, `,5`, `2,2%`).
fn decimal_point(field: &str) -> Option<String> {
    let body = field.strip_prefix(['-', '+']).unwrap_or(field);
    let body = body.strip_suffix('%').unwrap_or(body);
    let (int, frac) = body.split_once(',')?;
    let digits = |s: &str| s.bytes().all(|b| b.is_ascii_digit());
    (digits(int) && !frac.is_empty() && digits(frac)).then(|| field.replacen(',', ".", 1))
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
        let sep = separator(text);
        if let Some(pos) = needless_quotes(text, sep) {
            let line = 1 + text[..pos].matches('\n').count();
            d.note(
                Place::line(file, line),
                "quoted fields; accepted (quotes removed)",
            );
        }
        if sep != b',' {
            let (name, what) = if sep == b';' {
                (
                    "semicolons",
                    "; a number with a decimal comma (`1,5`) is read as 1.5",
                )
            } else {
                ("tabs", "")
            };
            d.note(
                Place::line(file, 1),
                format!("fields separated by {name}; accepted{what}"),
            );
        }
        let mut reader = csv::ReaderBuilder::new()
            .delimiter(sep)
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
            decimal_comma: sep == b';',
            said_decimal_comma: false,
            text: Vec::new(),
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
            if self.decimal_comma {
                self.points_for_commas(line, d);
            }
            return Some(line);
        }
    }

    /// Say which columns hold text (by their header name): their fields are taken as written,
    /// never read for a decimal comma.
    pub fn text_columns(&mut self, is_text: impl Fn(&str) -> bool) {
        self.text = self.headers.iter().map(is_text).collect();
    }

    /// The current row with every decimal comma made a point (see the module's notes).
    fn points_for_commas(&mut self, line: usize, d: &mut Diagnostics) {
        let fixed: Vec<Option<String>> = self
            .record
            .iter()
            .enumerate()
            .map(|(k, f)| match self.text.get(k) {
                Some(true) => None,
                _ => decimal_point(f),
            })
            .collect();
        let Some(first) = fixed.iter().position(Option::is_some) else {
            return;
        };
        if !self.said_decimal_comma {
            self.said_decimal_comma = true;
            d.note(
                Place::line(self.file, line).with_field(self.headers.get(first).unwrap_or("")),
                format!(
                    "`{}` read as {} (a decimal comma)",
                    &self.record[first],
                    fixed[first].as_deref().unwrap_or("")
                ),
            );
        }
        let mut out =
            csv::StringRecord::with_capacity(self.record.as_slice().len(), self.record.len());
        for (f, p) in self.record.iter().zip(&fixed) {
            out.push_field(p.as_deref().unwrap_or(f));
        }
        out.set_position(self.record.position().cloned());
        self.record = out;
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_separator_is_the_header_lines_most_frequent() {
        assert_eq!(separator("a,b,c\n1;2;3\n"), b',');
        assert_eq!(separator("a;b;c\n1,5;2;3\n"), b';');
        assert_eq!(separator("a\tb\tc\n"), b'\t');
        // Separators inside quotes do not count; blank leading lines are skipped.
        assert_eq!(separator("\n\"a;b;c\",d\n"), b',');
        assert_eq!(separator("\"x,y\";b;c\n"), b';');
        // One column, or a tie with the comma: a comma.
        assert_eq!(separator("section_id\nA\n"), b',');
        assert_eq!(separator("a,b;c\n"), b',');
    }

    #[test]
    fn decimal_commas_only_in_numbers() {
        assert_eq!(decimal_point("1,5").as_deref(), Some("1.5"));
        assert_eq!(decimal_point("-0,25").as_deref(), Some("-0.25"));
        assert_eq!(decimal_point(",5").as_deref(), Some(".5"));
        assert_eq!(decimal_point("2,2%").as_deref(), Some("2.2%"));
        for kept in ["1.5", "1,5,2", "1,", "a,5", "1,5e3", "", "12", "1.234,5"] {
            assert_eq!(decimal_point(kept), None, "{kept}");
        }
    }

    /// Read every row of `text` as the readers see them.
    fn rows(text: &str, is_text: impl Fn(&str) -> bool) -> (Vec<Vec<String>>, Diagnostics) {
        let mut d = Diagnostics::new();
        let mut input = CsvInput::open("f.csv", text, "rows", &mut d).unwrap();
        input.text_columns(is_text);
        let mut out = Vec::new();
        while input.next_row(&mut d).is_some() {
            out.push(input.record().iter().map(str::to_owned).collect());
        }
        (out, d)
    }

    #[test]
    fn a_semicolon_file_reads_decimal_commas_but_not_in_text_columns() {
        let (r, d) = rows("id;x;y\n1,5;2,25;3\n7;-0,5;1,5\n", |c| c == "id");
        assert_eq!(r, [["1,5", "2.25", "3"], ["7", "-0.5", "1.5"]]);
        assert!(!d.has_errors());
        let notes: Vec<String> = d
            .iter()
            .map(|n| format!("{}: {}", n.place, n.found))
            .collect();
        assert_eq!(notes.len(), 2, "{notes:?}");
        assert!(notes[0].contains("separated by semicolons"), "{notes:?}");
        assert!(
            notes[1].contains("f.csv:2: x: `2,25` read as 2.25"),
            "{notes:?}"
        );
        // A comma-separated file is read as written, with no note.
        let (r, d) = rows("id,x\n\"1,5\",2\n", |_| false);
        assert_eq!(r, [["1,5", "2"]]);
        assert!(d.iter().all(|n| !n.found.contains("separated")));
        // Tabs: fields as written.
        let (r, d) = rows("id\tx\nA\t1,5\n", |_| false);
        assert_eq!(r, [["A", "1,5"]]);
        assert!(d.iter().any(|n| n.found.contains("separated by tabs")));
    }
}
