//! Turning the bytes of an input file into text, and byte offsets back into lines and columns.
//!
//! Agencies' files come from spreadsheets and databases on every platform, so the readers accept
//! what is harmless and say how they read it: CRLF line ends, a UTF-8 byte-order mark (what a
//! spreadsheet's "CSV UTF-8" export starts with; removed, so that it cannot glue itself to the
//! first column's name) and non-UTF-8 bytes (read as Windows-1252, the usual single-byte encoding
//! of spreadsheet exports) are accepted with a note. UTF-16 and UTF-32 are errors; the rest of
//! such a file is still checked, so one pass shows every problem.

use crate::diag::{Diagnostics, Place};

const BOM: &[u8] = b"\xEF\xBB\xBF";

/// Windows-1252 code points for bytes 0x80..=0x9F; the five bytes it leaves undefined map to the
/// C1 control of the same number, as the WHATWG Encoding Standard does.
const CP1252_HIGH: [u32; 32] = [
    0x20AC, 0x0081, 0x201A, 0x0192, 0x201E, 0x2026, 0x2020, 0x2021, 0x02C6, 0x2030, 0x0160, 0x2039,
    0x0152, 0x008D, 0x017D, 0x008F, 0x0090, 0x2018, 0x2019, 0x201C, 0x201D, 0x2022, 0x2013, 0x2014,
    0x02DC, 0x2122, 0x0161, 0x203A, 0x0153, 0x009D, 0x017E, 0x0178,
];

/// Decode Windows-1252 bytes into a string (total: every byte maps to one character).
pub fn decode_cp1252(bytes: &[u8]) -> String {
    bytes
        .iter()
        .map(|&b| match b {
            0x80..=0x9F => char::from_u32(CP1252_HIGH[usize::from(b - 0x80)]).unwrap_or('\u{FFFD}'),
            _ => char::from(b),
        })
        .collect()
}

/// Decode an input file's bytes, recording how it was read in `diags`.
///
/// Returns the text with any byte-order mark removed (so later checks still run). Valid UTF-8
/// is taken over without a copy.
pub fn decode(file: &str, bytes: impl Into<Vec<u8>>, diags: &mut Diagnostics) -> String {
    let mut body: Vec<u8> = bytes.into();
    if let Some((name, text)) = wide(&body) {
        // One error for the whole file; the text is decoded anyway so that every other problem
        // is found in the same pass.
        diags
            .error(
                Place::line(file, 1).with_column(1),
                format!("a file in {name}"),
                "UTF-8 text",
            )
            .hint = Some(format!(
            "save it again as UTF-8 (in a spreadsheet 'CSV (comma delimited)' or 'CSV UTF-8'; in \
             a text editor 'Save with encoding: UTF-8'); it was read as {name} to check the rest"
        ));
        return text;
    }
    let mut offset = 0;
    if body.starts_with(BOM) {
        diags.note(
            Place::line(file, 1),
            "UTF-8 with a byte-order mark (as a spreadsheet's 'CSV UTF-8' saves it); accepted, \
             the mark removed",
        );
        body.drain(..BOM.len());
        offset = BOM.len();
    }
    let text = match String::from_utf8(body) {
        Ok(s) => s,
        Err(e) => {
            let at = e.utf8_error().valid_up_to();
            let body = e.into_bytes();
            let line = 1 + body[..at].iter().filter(|&&b| b == b'\n').count();
            diags
                .note(
                    Place::line(file, line),
                    format!(
                        "bytes that are not UTF-8 (first at byte {}); the file was read as \
                         Windows-1252 (Western European)",
                        at + 1 + offset
                    ),
                )
                .hint = Some("save the file as UTF-8 if names look wrong in the output".into());
            decode_cp1252(&body)
        }
    };
    if let Some(pos) = text.find("\r\n") {
        let line = 1 + text[..pos].matches('\n').count();
        diags.note(
            Place::line(file, line),
            "CRLF (Windows) line ends; accepted",
        );
    }
    text
}

/// A UTF-16 or UTF-32 file (by its byte-order mark, or, without one, by the zero bytes that
/// ASCII text has in every second or every four bytes): its encoding's name and its text, with
/// undecodable units as U+FFFD.
fn wide(b: &[u8]) -> Option<(&'static str, String)> {
    let utf32 = |b: &[u8], le: bool| -> String {
        b.chunks(4)
            .map(|c| {
                let mut w = [0u8; 4];
                w[..c.len()].copy_from_slice(c);
                let u = if le {
                    u32::from_le_bytes(w)
                } else {
                    u32::from_be_bytes(w)
                };
                char::from_u32(u).unwrap_or('\u{FFFD}')
            })
            .collect()
    };
    let utf16 = |b: &[u8], le: bool| -> String {
        let units: Vec<u16> = b
            .chunks(2)
            .map(|c| {
                let w = [c[0], *c.get(1).unwrap_or(&0)];
                if le {
                    u16::from_le_bytes(w)
                } else {
                    u16::from_be_bytes(w)
                }
            })
            .collect();
        String::from_utf16_lossy(&units)
    };
    if b.starts_with(&[0xFF, 0xFE, 0, 0]) {
        return Some(("UTF-32 (little-endian)", utf32(&b[4..], true)));
    }
    if b.starts_with(&[0, 0, 0xFE, 0xFF]) {
        return Some(("UTF-32 (big-endian)", utf32(&b[4..], false)));
    }
    if b.starts_with(&[0xFF, 0xFE]) {
        return Some(("UTF-16 (little-endian)", utf16(&b[2..], true)));
    }
    if b.starts_with(&[0xFE, 0xFF]) {
        return Some(("UTF-16 (big-endian)", utf16(&b[2..], false)));
    }
    // No byte-order mark: look at the zero bytes of the first 4 KiB.
    let head = &b[..b.len().min(4096)];
    if head.len() < 8 {
        return None;
    }
    let zeros_at = |m: usize, r: usize| {
        head.iter()
            .enumerate()
            .filter(|(i, &x)| i % m == r && x == 0)
            .count() as f64
            / (head.len() / m).max(1) as f64
    };
    if zeros_at(4, 1) > 0.9 && zeros_at(4, 2) > 0.9 && zeros_at(4, 3) > 0.9 {
        return Some(("UTF-32 (little-endian)", utf32(b, true)));
    }
    if zeros_at(4, 0) > 0.9 && zeros_at(4, 1) > 0.9 && zeros_at(4, 2) > 0.9 {
        return Some(("UTF-32 (big-endian)", utf32(b, false)));
    }
    if zeros_at(2, 1) > 0.9 && zeros_at(2, 0) < 0.1 {
        return Some(("UTF-16 (little-endian)", utf16(b, true)));
    }
    if zeros_at(2, 0) > 0.9 && zeros_at(2, 1) < 0.1 {
        return Some(("UTF-16 (big-endian)", utf16(b, false)));
    }
    None
}

/// Maps byte offsets of a text to 1-based line and column numbers.
#[derive(Debug, Clone)]
pub struct LineIndex {
    starts: Vec<usize>,
    text: String,
}

impl LineIndex {
    pub fn new(text: &str) -> LineIndex {
        let mut starts = vec![0];
        for (i, b) in text.bytes().enumerate() {
            if b == b'\n' {
                starts.push(i + 1);
            }
        }
        LineIndex {
            starts,
            text: text.to_owned(),
        }
    }

    /// The 1-based (line, column) of a byte offset; columns count characters.
    pub fn position(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text.len());
        let line = match self.starts.binary_search(&offset) {
            Ok(i) => i,
            Err(i) => i - 1,
        };
        let start = self.starts[line];
        let col = self
            .text
            .get(start..offset)
            .map(|s| s.chars().count())
            .unwrap_or(offset - start);
        (line + 1, col + 1)
    }

    /// A place for a byte offset in `file`.
    pub fn place(&self, file: &str, offset: usize) -> Place {
        let (line, col) = self.position(offset);
        Place::line(file, line).with_column(col)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bom_is_a_note_and_is_stripped() {
        let mut d = Diagnostics::new();
        let t = decode("n.csv", &b"\xEF\xBB\xBFa,b\n1,2\n"[..], &mut d);
        assert_eq!(t, "a,b\n1,2\n");
        assert!(!d.has_errors());
        assert_eq!(d.note_count(), 1);
        assert!(d.iter().any(|x| x.found.contains("byte-order mark")));
        // A mark with Windows-1252 bytes after it: both said, the mark still removed.
        let mut d = Diagnostics::new();
        let t = decode("n.csv", &b"\xEF\xBB\xBFa\n\xE9\n"[..], &mut d);
        assert_eq!(t, "a\n\u{e9}\n");
        assert_eq!(d.note_count(), 2);
    }

    #[test]
    fn crlf_and_latin1_are_notes() {
        let mut d = Diagnostics::new();
        let t = decode("n.csv", &b"a,b\r\nS\xE9rignac,2\r\n"[..], &mut d);
        assert_eq!(t, "a,b\r\nSérignac,2\r\n");
        assert!(!d.has_errors());
        assert_eq!(d.note_count(), 2);
        let notes: Vec<String> = d.iter().map(|x| x.found.clone()).collect();
        assert!(notes.iter().any(|n| n.contains("Windows-1252")));
        assert!(notes.iter().any(|n| n.contains("CRLF")));
        // The non-UTF-8 byte is on line 2.
        assert!(d.iter().any(|x| x.place.line == Some(2)));
    }

    #[test]
    fn cp1252_high_range() {
        assert_eq!(decode_cp1252(b"\x80\x93x\x94"), "\u{20AC}\u{201C}x\u{201D}");
    }

    #[test]
    fn offsets_to_lines_and_columns() {
        let ix = LineIndex::new("ab\ncdé\nf");
        assert_eq!(ix.position(0), (1, 1));
        assert_eq!(ix.position(3), (2, 1));
        assert_eq!(ix.position(7), (2, 4));
        assert_eq!(ix.position(8), (3, 1));
        assert_eq!(ix.position(100), (3, 2));
    }

    #[test]
    fn wide_encodings_are_one_error_and_still_read() {
        let text = "section_id,length_km\nA,1.5\n";
        let le: Vec<u8> = [0xFF, 0xFE]
            .into_iter()
            .chain(text.encode_utf16().flat_map(u16::to_le_bytes))
            .collect();
        let be_no_bom: Vec<u8> = text.encode_utf16().flat_map(u16::to_be_bytes).collect();
        let le32: Vec<u8> = text
            .chars()
            .flat_map(|c| (c as u32).to_le_bytes())
            .collect();
        for (bytes, name) in [
            (le, "UTF-16 (little-endian)"),
            (be_no_bom, "UTF-16 (big-endian)"),
            (le32, "UTF-32 (little-endian)"),
        ] {
            let mut d = Diagnostics::new();
            assert_eq!(decode("n.csv", bytes, &mut d), text);
            assert_eq!(d.error_count(), 1, "{d}");
            assert!(d.to_string().contains(name), "{d}");
            assert!(d.to_string().contains("UTF-8"), "{d}");
        }
    }
}
