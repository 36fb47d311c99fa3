//! Reading the tool's own output files back (for `explain`, `report` and `risk --merge`): a CSV
//! read whole with its header, and typed cells whose errors name the file, line and column.

use crate::diag::{Diagnostics, Place};
use crate::error::{Error, Result};
use std::path::Path;

/// A CSV file read whole: its header and rows (with their line numbers), and the file's name.
#[derive(Debug, Clone)]
pub struct Table {
    pub label: String,
    pub head: Vec<String>,
    pub rows: Vec<(usize, csv::StringRecord)>,
}

/// Read `dir/name`, keeping the rows `keep` accepts. `maker` names the command that writes the
/// file (for messages).
pub fn read(
    dir: &Path,
    name: &str,
    maker: &str,
    keep: impl Fn(&csv::StringRecord) -> bool,
) -> Result<Table> {
    let path = dir.join(name);
    let label = path.display().to_string();
    let bytes = crate::io::read_file(&path).map_err(|e| {
        Error::Usage(format!(
            "cannot read {label}: {e}; expected the output directory of `{maker} --out DIR` (give it with --from DIR)"
        ))
    })?;
    parse(&label, &bytes, maker, keep)
}

/// Parse a CSV held in memory, labelled `label` in messages.
pub fn parse(
    label: &str,
    bytes: &[u8],
    maker: &str,
    keep: impl Fn(&csv::StringRecord) -> bool,
) -> Result<Table> {
    let mut r = csv::ReaderBuilder::new()
        .has_headers(true)
        .from_reader(bytes);
    let bad = |line: usize, what: String| {
        let mut d = Diagnostics::new();
        d.error(
            Place::line(label.to_owned(), line),
            what,
            format!("a file as `{maker}` writes it"),
        );
        Error::Input(d)
    };
    let head: Vec<String> = r
        .headers()
        .map_err(|e| bad(1, format!("an unreadable header ({e})")))?
        .iter()
        .map(str::to_owned)
        .collect();
    let mut rows = Vec::new();
    for (i, rec) in r.records().enumerate() {
        let rec = rec.map_err(|e| bad(i + 2, format!("an unreadable row ({e})")))?;
        if keep(&rec) {
            rows.push((i + 2, rec));
        }
    }
    Ok(Table {
        label: label.to_owned(),
        head,
        rows,
    })
}

impl Table {
    /// The position of a column, or an error naming the file and the missing column.
    pub fn column(&self, name: &str) -> Result<usize> {
        self.head.iter().position(|h| h == name).ok_or_else(|| {
            let mut d = Diagnostics::new();
            d.error(
                Place::line(self.label.clone(), 1),
                format!("no `{name}` column"),
                format!("a header with `{name}`"),
            );
            Error::Input(d)
        })
    }

    /// A finite number, or an error naming file, line and column.
    pub fn number(&self, line: usize, rec: &csv::StringRecord, col: usize) -> Result<f64> {
        self.optional(line, rec, col)?.ok_or_else(|| {
            let mut d = Diagnostics::new();
            d.error(
                Place::line(self.label.clone(), line).with_field(self.head[col].clone()),
                "an empty cell",
                "a number",
            );
            Error::Input(d)
        })
    }

    /// A finite number, or `None` for an empty cell.
    pub fn optional(
        &self,
        line: usize,
        rec: &csv::StringRecord,
        col: usize,
    ) -> Result<Option<f64>> {
        let text = rec.get(col).unwrap_or("").trim();
        if text.is_empty() {
            return Ok(None);
        }
        text.parse::<f64>()
            .ok()
            .filter(|x| x.is_finite())
            .map(Some)
            .ok_or_else(|| {
                let mut d = Diagnostics::new();
                d.error(
                    Place::line(self.label.clone(), line).with_field(self.head[col].clone()),
                    format!("found `{text}`"),
                    "a number",
                );
                Error::Input(d)
            })
    }

    /// `true`/`false`, or an error naming file, line and column.
    pub fn flag(&self, line: usize, rec: &csv::StringRecord, col: usize) -> Result<bool> {
        match rec.get(col).unwrap_or("") {
            "true" => Ok(true),
            "false" => Ok(false),
            other => {
                let mut d = Diagnostics::new();
                d.error(
                    Place::line(self.label.clone(), line).with_field(self.head[col].clone()),
                    format!("found `{other}`"),
                    "true or false",
                );
                Err(Error::Input(d))
            }
        }
    }

    /// The text of a cell (empty when missing).
    pub fn text<'r>(&self, rec: &'r csv::StringRecord, col: usize) -> &'r str {
        rec.get(col).unwrap_or("")
    }
}
