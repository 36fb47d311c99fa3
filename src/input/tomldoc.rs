//! A checked walk over a TOML document that keeps every value's line and column.
//!
//! Serde's derive stops at the first wrong key or value; a user fixing a scenario wants all of
//! them. So TOML files are parsed into toml's spanned tree and read through [`Table`], a cursor
//! that converts and range-checks each value, records every problem with its place in a
//! [`Diagnostics`] list, remembers which keys it was asked for, and on [`Table::finish`] reports
//! every other key as unknown (with a "did you mean" where one is close). Numbers keep their
//! source text, so money written as a TOML number is still read exactly.

use crate::diag::{did_you_mean, Diagnostics, Place};
use crate::model::money::Money;
use crate::text::LineIndex;
use std::ops::Range;
use toml::de::{DeTable, DeValue};
use toml::Spanned;

/// A parsed TOML file and what is needed to point into it.
pub struct Doc<'i> {
    pub file: String,
    pub lines: LineIndex,
    pub root: Spanned<DeTable<'i>>,
}

/// The line with the most nesting (dots, brackets and braces), when some line has a lot of it:
/// where a parser that gives no place for "too deep" most likely stopped.
fn deepest_line(text: &str) -> Option<usize> {
    let (line, depth) = text
        .lines()
        .enumerate()
        .map(|(i, l)| (i + 1, l.bytes().filter(|b| b"[{.".contains(b)).count()))
        .max_by(|a, b| a.1.cmp(&b.1).then(b.0.cmp(&a.0)))?;
    (depth >= 64).then_some(line)
}

impl<'i> Doc<'i> {
    /// Parse `text`, recording syntax errors (all the parser recovers from) in `diags`.
    pub fn parse(file: &str, text: &'i str, diags: &mut Diagnostics) -> Doc<'i> {
        let lines = LineIndex::new(text);
        let (root, errors) = DeTable::parse_recoverable(text);
        for e in errors {
            let place = match e.span() {
                Some(s) => lines.place(file, s.start),
                None => match deepest_line(text) {
                    Some(line) => Place::line(file, line),
                    None => Place::file(file),
                },
            };
            diags.error(
                place,
                format!("TOML syntax: {}", e.message().trim()),
                "valid TOML",
            );
        }
        Doc {
            file: file.to_owned(),
            lines,
            root,
        }
    }

    /// A cursor on the top-level table.
    pub fn table(&self) -> Table<'_, 'i> {
        Table {
            doc: self,
            path: String::new(),
            table: self.root.get_ref(),
            span: self.root.span(),
            asked: Vec::new(),
        }
    }

    /// The place of a byte offset.
    pub fn place(&self, offset: usize) -> Place {
        self.lines.place(&self.file, offset)
    }
}

/// A value with its place, handed out by a [`Table`].
pub struct Value<'a, 'i> {
    pub doc: &'a Doc<'i>,
    pub path: String,
    pub value: &'a DeValue<'i>,
    pub span: Range<usize>,
}

impl<'a, 'i> Value<'a, 'i> {
    /// The place of this value, naming its key path.
    pub fn place(&self) -> Place {
        self.doc
            .place(self.span.start)
            .with_field(self.path.clone())
    }

    fn wrong(&self, d: &mut Diagnostics, expected: &str) {
        d.error(
            self.place(),
            format!("found {}", describe(self.value)),
            expected.to_owned(),
        );
    }

    /// A finite number (integer or float).
    pub fn number(&self, d: &mut Diagnostics) -> Option<f64> {
        let raw = match self.value {
            DeValue::Integer(i) if i.radix() == 10 => i.as_str().replace('_', ""),
            DeValue::Float(f) => f.as_str().replace('_', ""),
            _ => {
                self.wrong(d, "a number");
                return None;
            }
        };
        match raw.parse::<f64>() {
            Ok(x) if x.is_finite() => Some(x),
            _ => {
                d.error(
                    self.place(),
                    format!("found `{raw}`"),
                    "a finite number (NaN and infinity are not allowed)",
                );
                None
            }
        }
    }

    /// A number within `lo..=hi`.
    pub fn number_in(&self, d: &mut Diagnostics, lo: f64, hi: f64, expected: &str) -> Option<f64> {
        let x = self.number(d)?;
        if x < lo || x > hi {
            d.error(self.place(), format!("found {x}"), expected.to_owned());
            return None;
        }
        Some(x)
    }

    /// A rate or share within `lo..=hi`: a number (`0.06`), or a string with a percentage
    /// (`"6%"`, read as 0.06 to the bit, as [`crate::input::percent`] reads it).
    pub fn fraction_in(
        &self,
        d: &mut Diagnostics,
        lo: f64,
        hi: f64,
        expected: &str,
    ) -> Option<f64> {
        let DeValue::String(text) = self.value else {
            return self.number_in(d, lo, hi, expected);
        };
        let Some(x) = crate::input::percent(text.as_ref()) else {
            d.error(
                self.place(),
                format!("found \"{text}\""),
                format!("{expected} (a number, or a percentage such as \"6%\")"),
            );
            return None;
        };
        if x < lo || x > hi {
            d.error(
                self.place(),
                format!("found \"{text}\""),
                expected.to_owned(),
            );
            return None;
        }
        Some(x)
    }

    /// An integer within `lo..=hi`.
    pub fn integer_in(&self, d: &mut Diagnostics, lo: i64, hi: i64, expected: &str) -> Option<i64> {
        let DeValue::Integer(i) = self.value else {
            self.wrong(d, expected);
            return None;
        };
        let raw = i.as_str().replace('_', "");
        match i64::from_str_radix(&raw, i.radix()) {
            Ok(x) if (lo..=hi).contains(&x) => Some(x),
            _ => {
                d.error(self.place(), format!("found {i}"), expected.to_owned());
                None
            }
        }
    }

    /// A string.
    pub fn string(&self, d: &mut Diagnostics) -> Option<&'a str> {
        match self.value {
            DeValue::String(s) => Some(s.as_ref()),
            _ => {
                self.wrong(d, "a string");
                None
            }
        }
    }

    /// One of `choices`, in any case (`Single` is `single`); the choice as written there.
    pub fn word<'c>(&self, d: &mut Diagnostics, choices: &[&'c str]) -> Option<&'c str> {
        let s = self.string(d)?;
        if let Some(c) = choices.iter().find(|c| c.eq_ignore_ascii_case(s)) {
            Some(c)
        } else {
            let hint = did_you_mean(s, choices);
            let e = d.error(
                self.place(),
                format!("found `{s}`"),
                format!("one of {}", list(choices)),
            );
            if let Some(h) = hint {
                e.hint = Some(format!("did you mean `{h}`?"));
            }
            None
        }
    }

    /// A name made of letters, digits, `_` and `-` (used in file names and column headers).
    pub fn identifier(&self, d: &mut Diagnostics) -> Option<&'a str> {
        let s = self.string(d)?;
        if is_identifier(s) {
            Some(s)
        } else {
            d.error(
                self.place(),
                format!("found `{s}`"),
                "a name of letters, digits, `_` and `-`, starting with a letter",
            );
            None
        }
    }

    /// An exact amount of money, written as a string (`"1250.00"`) or a TOML number.
    pub fn money(&self, d: &mut Diagnostics) -> Option<Money> {
        let raw = match self.value {
            DeValue::String(s) => s.to_string(),
            DeValue::Integer(i) if i.radix() == 10 => i.as_str().replace('_', ""),
            DeValue::Float(f) => f.as_str().replace('_', ""),
            _ => {
                self.wrong(
                    d,
                    "an amount of money (decimal text such as \"1250.00\", or a number)",
                );
                return None;
            }
        };
        match Money::parse(&raw) {
            Ok(m) => Some(m),
            Err(e) => {
                d.error(
                    self.place(),
                    format!("found {e}"),
                    "an amount of money as plain decimal text, such as \"1250.00\"",
                );
                None
            }
        }
    }

    /// An amount of money that is zero or more.
    pub fn money_non_negative(&self, d: &mut Diagnostics) -> Option<Money> {
        let m = self.money(d)?;
        if m.is_negative() {
            d.error(
                self.place(),
                format!("found {m}"),
                "an amount of zero or more",
            );
            return None;
        }
        Some(m)
    }

    /// A table, as a cursor.
    pub fn table(&self, d: &mut Diagnostics) -> Option<Table<'a, 'i>> {
        match self.value {
            DeValue::Table(t) => Some(Table {
                doc: self.doc,
                path: self.path.clone(),
                table: t,
                span: self.span.clone(),
                asked: Vec::new(),
            }),
            _ => {
                self.wrong(d, "a table");
                None
            }
        }
    }

    /// An array of tables, each read by `read` and then finished here. Every item is read, so
    /// every problem is reported; `None` when the value is no array or any item failed.
    pub fn tables<T>(
        &self,
        d: &mut Diagnostics,
        mut read: impl FnMut(&mut Table<'a, 'i>, &mut Diagnostics) -> Option<T>,
    ) -> Option<Vec<T>> {
        let mut out = Vec::new();
        let mut ok = true;
        for item in &self.array(d)? {
            let Some(mut t) = item.table(d) else {
                ok = false;
                continue;
            };
            let x = read(&mut t, d);
            t.finish(d);
            match x {
                Some(x) => out.push(x),
                None => ok = false,
            }
        }
        ok.then_some(out)
    }

    /// An array's items.
    pub fn array(&self, d: &mut Diagnostics) -> Option<Vec<Value<'a, 'i>>> {
        match self.value {
            DeValue::Array(items) => Some(
                items
                    .iter()
                    .enumerate()
                    .map(|(i, v)| Value {
                        doc: self.doc,
                        path: format!("{}[{}]", self.path, i + 1),
                        value: v.get_ref(),
                        span: v.span(),
                    })
                    .collect(),
            ),
            _ => {
                self.wrong(d, "an array");
                None
            }
        }
    }

    /// A pair `[low, high]` of integers with low ≤ high, each within `lo..=hi`.
    pub fn int_range(&self, d: &mut Diagnostics, lo: i64, hi: i64) -> Option<(i64, i64)> {
        let items = self.array(d)?;
        let expected = format!("a pair [first, last] of whole numbers from {lo} to {hi}");
        if items.len() != 2 {
            d.error(
                self.place(),
                format!("found {} items", items.len()),
                expected,
            );
            return None;
        }
        let a = items[0].integer_in(d, lo, hi, &expected);
        let b = items[1].integer_in(d, lo, hi, &expected);
        let (a, b) = (a?, b?);
        if a > b {
            d.error(
                self.place(),
                format!("found [{a}, {b}]"),
                "the first no later than the last",
            );
            return None;
        }
        Some((a, b))
    }
}

/// A cursor on one TOML table.
pub struct Table<'a, 'i> {
    pub doc: &'a Doc<'i>,
    /// Dotted key path of this table (`""` for the document).
    pub path: String,
    table: &'a DeTable<'i>,
    span: Range<usize>,
    asked: Vec<String>,
}

impl<'a, 'i> Table<'a, 'i> {
    fn child_path(&self, key: &str) -> String {
        if self.path.is_empty() {
            key.to_owned()
        } else {
            format!("{}.{key}", self.path)
        }
    }

    /// The place of the table itself.
    pub fn place(&self) -> Place {
        let p = self.doc.place(self.span.start);
        if self.path.is_empty() {
            p
        } else {
            p.with_field(self.path.clone())
        }
    }

    /// The value of `key`, if present; the key counts as known.
    pub fn get(&mut self, key: &str) -> Option<Value<'a, 'i>> {
        self.asked.push(key.to_owned());
        self.table
            .iter()
            .find(|(k, _)| k.get_ref().as_ref() == key)
            .map(|(_, v)| Value {
                doc: self.doc,
                path: self.child_path(key),
                value: v.get_ref(),
                span: v.span(),
            })
    }

    /// The value of a required key; its absence is recorded.
    pub fn require(
        &mut self,
        key: &str,
        d: &mut Diagnostics,
        expected: &str,
    ) -> Option<Value<'a, 'i>> {
        let v = self.get(key);
        if v.is_none() {
            d.error(
                self.place(),
                format!("missing key `{}`", self.child_path(key)),
                expected.to_owned(),
            );
        }
        v
    }

    /// An optional number within `lo..=hi`: `None` when absent, else its place and the value
    /// (`None` inside when the value was wrong, which is recorded).
    pub fn number_at(
        &mut self,
        key: &str,
        d: &mut Diagnostics,
        lo: f64,
        hi: f64,
        expected: &str,
    ) -> Option<(Place, Option<f64>)> {
        self.get(key)
            .map(|v| (v.place(), v.number_in(d, lo, hi, expected)))
    }

    /// Every key of the table with its value, in the file's order of keys (lexicographic).
    pub fn entries(&mut self) -> Vec<(String, Value<'a, 'i>)> {
        let out: Vec<(String, Value<'a, 'i>)> = self
            .table
            .iter()
            .map(|(k, v)| {
                let key = k.get_ref().to_string();
                (
                    key.clone(),
                    Value {
                        doc: self.doc,
                        path: self.child_path(&key),
                        value: v.get_ref(),
                        span: v.span(),
                    },
                )
            })
            .collect();
        for (k, _) in &out {
            self.asked.push(k.clone());
        }
        out
    }

    /// Report every key that was never asked for as unknown.
    pub fn finish(self, d: &mut Diagnostics) {
        let known: Vec<&str> = self.asked.iter().map(String::as_str).collect();
        for (k, _) in self.table.iter() {
            let key = k.get_ref().as_ref();
            if !known.contains(&key) {
                let e = d.error(
                    self.doc
                        .place(k.span().start)
                        .with_field(self.child_path(key)),
                    format!("unknown key `{}`", self.child_path(key)),
                    if known.is_empty() {
                        "no keys here".to_owned()
                    } else {
                        format!("one of {}", list(&known))
                    },
                );
                if let Some(h) = did_you_mean(key, &known) {
                    e.hint = Some(format!("did you mean `{h}`?"));
                }
            }
        }
    }
}

/// `true` for names of letters, digits, `_` and `-` that start with a letter.
pub fn is_identifier(s: &str) -> bool {
    let mut chars = s.chars();
    matches!(chars.next(), Some(c) if c.is_ascii_alphabetic())
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
}

fn list(words: &[&str]) -> String {
    let mut w: Vec<&str> = words.to_vec();
    w.dedup();
    w.iter()
        .map(|s| format!("`{s}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

fn describe(v: &DeValue<'_>) -> String {
    match v {
        DeValue::String(s) => format!("the string \"{s}\""),
        DeValue::Integer(i) => format!("the integer {i}"),
        DeValue::Float(f) => format!("the number {f}"),
        DeValue::Boolean(b) => format!("the boolean {b}"),
        DeValue::Datetime(t) => format!("the date-time {t}"),
        DeValue::Array(_) => "an array".to_owned(),
        DeValue::Table(_) => "a table".to_owned(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_problem_is_reported_with_its_line() {
        let text = "[a]\nx = 1\ny = \"two\"\nz = nan\nw = 3\n";
        let mut d = Diagnostics::new();
        let doc = Doc::parse("t.toml", text, &mut d);
        let mut top = doc.table();
        let mut a = top
            .require("a", &mut d, "a table")
            .unwrap()
            .table(&mut d)
            .unwrap();
        assert_eq!(
            a.require("x", &mut d, "").unwrap().number(&mut d),
            Some(1.0)
        );
        assert_eq!(a.require("y", &mut d, "").unwrap().number(&mut d), None);
        assert_eq!(a.require("z", &mut d, "").unwrap().number(&mut d), None);
        assert!(a.require("missing", &mut d, "a number").is_none());
        a.finish(&mut d);
        top.finish(&mut d);
        let errs = d.errors();
        assert_eq!(errs.len(), 4, "{d}");
        let lines: Vec<Option<usize>> = errs.iter().map(|e| e.place.line).collect();
        assert_eq!(lines, vec![Some(1), Some(3), Some(4), Some(5)]);
        assert!(errs[3].found.contains("unknown key `a.w`"));
    }

    #[test]
    fn words_are_read_in_any_case() {
        let text = "a = \"Mid-Year\"\nb = \"DIVIDED\"\nc = \"sideways\"\n";
        let mut d = Diagnostics::new();
        let doc = Doc::parse("t.toml", text, &mut d);
        let mut t = doc.table();
        let choices = ["end-of-year", "mid-year"];
        assert_eq!(t.get("a").unwrap().word(&mut d, &choices), Some("mid-year"));
        let cw = ["single", "divided"];
        assert_eq!(t.get("b").unwrap().word(&mut d, &cw), Some("divided"));
        assert_eq!(t.get("c").unwrap().word(&mut d, &cw), None);
        assert_eq!(d.error_count(), 1);
        assert!(d.errors()[0].found.contains("`sideways`"));
    }

    #[test]
    fn rates_and_shares_take_percentages() {
        let text = "a = \"6%\"\nb = 0.06\nc = \"six\"\nd = \"150%\"\n";
        let mut d = Diagnostics::new();
        let doc = Doc::parse("t.toml", text, &mut d);
        let mut t = doc.table();
        let mut at = |k: &str| t.get(k).unwrap().fraction_in(&mut d, 0.0, 1.0, "a share");
        assert_eq!(at("a").map(f64::to_bits), Some(0.06f64.to_bits()));
        assert_eq!(at("b"), Some(0.06));
        assert_eq!(at("c"), None);
        assert_eq!(at("d"), None);
        let found: Vec<String> = d
            .errors()
            .iter()
            .map(|e| format!("{}: {}", e.place, e.found))
            .collect();
        assert_eq!(
            found,
            [
                "t.toml:3:5: c: found \"six\"",
                "t.toml:4:5: d: found \"150%\""
            ]
        );
    }

    #[test]
    fn money_keeps_the_literal_exactly() {
        let text = "a = 0.1\nb = \"1250.10\"\nc = 1_000\nd = \"1,000\"\n";
        let mut d = Diagnostics::new();
        let doc = Doc::parse("t.toml", text, &mut d);
        let mut t = doc.table();
        let a = t.get("a").unwrap().money(&mut d).unwrap();
        let b = t.get("b").unwrap().money(&mut d).unwrap();
        let c = t.get("c").unwrap().money(&mut d).unwrap();
        assert_eq!(a.to_string(), "0.1");
        assert_eq!(b.to_string(), "1250.1");
        assert_eq!(c.to_string(), "1000");
        assert!(t.get("d").unwrap().money(&mut d).is_none());
        assert_eq!(d.error_count(), 1);
    }

    #[test]
    fn syntax_errors_have_places() {
        let mut d = Diagnostics::new();
        let _ = Doc::parse("t.toml", "a = 1\nb = = 2\n", &mut d);
        assert!(d.has_errors());
        assert_eq!(d.errors()[0].place.line, Some(2));
    }

    #[test]
    fn misspelt_key_gets_a_suggestion() {
        let mut d = Diagnostics::new();
        let doc = Doc::parse("t.toml", "discount_rat = 0.04\n", &mut d);
        let mut t = doc.table();
        let _ = t.get("discount_rate");
        t.finish(&mut d);
        assert_eq!(
            d.errors()[0].hint.as_deref(),
            Some("did you mean `discount_rate`?")
        );
    }
}
