//! Diagnostics: what is wrong with an input, and exactly where.
//!
//! Validation never stops at the first problem. Every reader pushes its findings into one
//! [`Diagnostics`] list, so that `pavestrat check` can show a user everything to fix in one pass.
//! A finding carries its place (file, line, column, field) apart from its text, so that tests can
//! assert on the place and the binary can print it the same way everywhere.

use std::fmt;

/// How serious a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub enum Severity {
    /// The input cannot be used; the run stops with exit code 2.
    Error,
    /// The input was accepted, but the user should know how it was read.
    Note,
}

/// Where a finding is: a file and, when known, a line, a column and a field name.
#[derive(Debug, Clone, PartialEq, Eq, PartialOrd, Ord, Default)]
pub struct Place {
    /// The file as the user named it (or `<stdin>`, or `<built-in demo>/name`).
    pub file: String,
    /// 1-based line number.
    pub line: Option<usize>,
    /// 1-based column (characters, not bytes).
    pub column: Option<usize>,
    /// The field, column header or key path concerned.
    pub field: Option<String>,
    /// The worksheet, for a place in a workbook: `line` is then its row and `column` its
    /// column (both 1-based), shown as a cell reference (`Sections!D5`).
    pub sheet: Option<String>,
}

impl Place {
    /// A place that is a whole file.
    pub fn file(file: impl Into<String>) -> Place {
        Place {
            file: file.into(),
            ..Place::default()
        }
    }

    /// A place at a line of a file.
    pub fn line(file: impl Into<String>, line: usize) -> Place {
        Place {
            file: file.into(),
            line: Some(line),
            ..Place::default()
        }
    }

    /// The same place, naming a field.
    pub fn with_field(mut self, field: impl Into<String>) -> Place {
        self.field = Some(field.into());
        self
    }

    /// The same place, naming a key inside its current field (`budget[3]` → `budget[3].region`).
    pub fn with_subfield(mut self, key: &str) -> Place {
        self.field = Some(match self.field.take() {
            Some(f) if !f.is_empty() => format!("{f}.{key}"),
            _ => key.to_owned(),
        });
        self
    }

    /// The same place, at a column.
    pub fn with_column(mut self, column: usize) -> Place {
        self.column = Some(column);
        self
    }

    /// A cell of a workbook's sheet (`row` and `column` 1-based), or a whole row when `column`
    /// is `None`.
    pub fn cell(file: impl Into<String>, sheet: &str, row: usize, column: Option<usize>) -> Place {
        Place {
            file: file.into(),
            line: Some(row),
            column,
            field: None,
            sheet: Some(sheet.to_owned()),
        }
    }
}

/// A spreadsheet's letters for a 1-based column number: 1 → `A`, 27 → `AA`.
pub fn column_letters(mut column: usize) -> String {
    let mut out = Vec::new();
    while column > 0 {
        let k = (column - 1) % 26;
        out.push(b'A' + k as u8);
        column = (column - 1) / 26;
    }
    out.reverse();
    String::from_utf8(out).unwrap_or_default()
}

impl fmt::Display for Place {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if let (Some(sheet), Some(row)) = (&self.sheet, self.line) {
            // A sheet name with anything but letters, digits and `_` is quoted, as in a formula.
            let plain = sheet.chars().all(|c| c.is_alphanumeric() || c == '_');
            let q = if plain { "" } else { "'" };
            match self.column {
                Some(col) => write!(f, ": {q}{sheet}{q}!{}{row}", column_letters(col))?,
                None => write!(f, ": {q}{sheet}{q}!{row}:{row}")?,
            }
        } else if let Some(line) = self.line {
            write!(f, ":{line}")?;
            if let Some(col) = self.column {
                write!(f, ":{col}")?;
            }
        }
        if let Some(field) = &self.field {
            write!(f, ": {field}")?;
        }
        Ok(())
    }
}

/// One finding about the input.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    pub severity: Severity,
    pub place: Place,
    /// What was found, in plain words (quote the offending text).
    pub found: String,
    /// What was expected instead; empty for notes that need no fix.
    pub expected: String,
    /// How to fix it, where a fix is known.
    pub hint: Option<String>,
}

impl Diagnostic {
    /// Attach a hint.
    pub fn hint(mut self, hint: impl Into<String>) -> Diagnostic {
        self.hint = Some(hint.into());
        self
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let tag = match self.severity {
            Severity::Error => "error",
            Severity::Note => "note",
        };
        write!(f, "{tag}: {}: {}", self.place, self.found)?;
        if !self.expected.is_empty() {
            write!(f, "; expected {}", self.expected)?;
        }
        if let Some(hint) = &self.hint {
            write!(f, "\n  hint: {hint}")?;
        }
        Ok(())
    }
}

/// Most findings printed of one list; the rest are counted (see [`Diagnostics::shown`]).
pub const PRINTED: usize = 200;

/// All findings of one validation pass, in the order found.
#[derive(Debug, Clone, Default)]
pub struct Diagnostics {
    items: Vec<Diagnostic>,
}

impl Diagnostics {
    pub fn new() -> Diagnostics {
        Diagnostics::default()
    }

    /// Record an error and return a handle to add a hint.
    pub fn error(
        &mut self,
        place: Place,
        found: impl Into<String>,
        expected: impl Into<String>,
    ) -> &mut Diagnostic {
        self.push(Diagnostic {
            severity: Severity::Error,
            place,
            found: found.into(),
            expected: expected.into(),
            hint: None,
        })
    }

    /// Record a note (accepted input the user should know about).
    pub fn note(&mut self, place: Place, found: impl Into<String>) -> &mut Diagnostic {
        self.push(Diagnostic {
            severity: Severity::Note,
            place,
            found: found.into(),
            expected: String::new(),
            hint: None,
        })
    }

    fn push(&mut self, d: Diagnostic) -> &mut Diagnostic {
        self.items.push(d);
        let last = self.items.len() - 1;
        &mut self.items[last]
    }

    /// Move every finding of `other` into this list.
    pub fn extend(&mut self, other: Diagnostics) {
        self.items.extend(other.items);
    }

    pub fn has_errors(&self) -> bool {
        self.items.iter().any(|d| d.severity == Severity::Error)
    }

    pub fn error_count(&self) -> usize {
        self.items
            .iter()
            .filter(|d| d.severity == Severity::Error)
            .count()
    }

    pub fn note_count(&self) -> usize {
        self.items.len() - self.error_count()
    }

    pub fn iter(&self) -> impl Iterator<Item = &Diagnostic> {
        self.items.iter()
    }

    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }

    /// Findings sorted by file, then line and column (stable for equal places), for printing.
    pub fn sorted(&self) -> Vec<&Diagnostic> {
        let mut v: Vec<&Diagnostic> = self.items.iter().collect();
        v.sort_by(|a, b| {
            (&a.place.file, a.place.line, a.place.column).cmp(&(
                &b.place.file,
                b.place.line,
                b.place.column,
            ))
        });
        v
    }

    /// The first `limit` findings by place (errors before notes when both are asked for), and
    /// how many are left out: long lists are cut so that a million bad rows print a page, not
    /// a hundred megabytes.
    pub fn shown(&self, limit: usize, errors_only: bool) -> (Vec<&Diagnostic>, usize) {
        let mut all: Vec<&Diagnostic> = self
            .sorted()
            .into_iter()
            .filter(|d| !errors_only || d.severity == Severity::Error)
            .collect();
        let hidden = all.len().saturating_sub(limit);
        all.truncate(limit);
        (all, hidden)
    }

    /// The closing line of a failed check: `3 problems found in the input`.
    pub fn problem_line(&self) -> String {
        let n = self.error_count();
        format!(
            "{n} problem{} found in the input",
            if n == 1 { "" } else { "s" }
        )
    }

    /// Only the errors, sorted.
    pub fn errors(&self) -> Vec<&Diagnostic> {
        self.sorted()
            .into_iter()
            .filter(|d| d.severity == Severity::Error)
            .collect()
    }
}

impl fmt::Display for Diagnostics {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for d in self.sorted() {
            writeln!(f, "{d}")?;
        }
        Ok(())
    }
}

/// Levenshtein distance, for "did you mean" hints on misspelt keys and columns.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    for (i, ca) in a.chars().enumerate() {
        cur[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let sub = prev[j] + usize::from(ca != *cb);
            cur[j + 1] = sub.min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        std::mem::swap(&mut prev, &mut cur);
    }
    prev[b.len()]
}

/// The closest of `candidates` to `word`, if it is close enough to be a likely misspelling.
pub fn did_you_mean<'a>(word: &str, candidates: &[&'a str]) -> Option<&'a str> {
    candidates
        .iter()
        .map(|c| (edit_distance(word, c), *c))
        .filter(|(d, c)| *d <= 2.max(c.len() / 4))
        .min()
        .map(|(_, c)| c)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn place_prints_file_line_column_field() {
        let p = Place::line("network.csv", 12)
            .with_column(3)
            .with_field("lanes");
        assert_eq!(p.to_string(), "network.csv:12:3: lanes");
        assert_eq!(Place::file("a.toml").to_string(), "a.toml");
    }

    #[test]
    fn a_workbook_place_is_a_cell_reference() {
        let p = Place::cell("inv.xlsx", "Sections", 5, Some(4)).with_field("iri");
        assert_eq!(p.to_string(), "inv.xlsx: Sections!D5: iri");
        assert_eq!(
            Place::cell("inv.ods", "Road list", 7, None).to_string(),
            "inv.ods: 'Road list'!7:7"
        );
        let letters: Vec<String> = [1, 26, 27, 52, 53, 702, 703, 16384]
            .into_iter()
            .map(column_letters)
            .collect();
        // Spreadsheets' own column names; XFD is the last column of an xlsx sheet.
        assert_eq!(letters, ["A", "Z", "AA", "AZ", "BA", "ZZ", "AAA", "XFD"]);
    }

    #[test]
    fn diagnostics_count_and_sort() {
        let mut d = Diagnostics::new();
        d.error(Place::line("b.csv", 9), "found x", "y");
        d.note(Place::line("a.csv", 2), "CRLF line ends");
        d.error(Place::line("a.csv", 5), "found z", "w").hint = Some("fix".into());
        assert_eq!(d.error_count(), 2);
        assert_eq!(d.note_count(), 1);
        let s = d.sorted();
        assert_eq!(s[0].place.line, Some(2));
        assert_eq!(s[2].place.file, "b.csv");
        assert!(d
            .to_string()
            .contains("error: a.csv:5: found z; expected w\n  hint: fix"));
    }

    #[test]
    fn suggestions_for_misspellings() {
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(
            did_you_mean("discount_rat", &["discount_rate", "base_year"]),
            Some("discount_rate")
        );
        assert_eq!(did_you_mean("zzz", &["discount_rate"]), None);
    }
}
