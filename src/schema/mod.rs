//! Every file the tool writes, in one place: its name, the command that writes it, its columns
//! in order, and — for the files another command reads back (a plan's files for `report`,
//! `explain`, `sensitivity` and `risk`; the analyses' files for `report`) — one typed row that
//! is both written and read by the code here.
//!
//! A row's cells are typed by how the file holds them ([`value`]): money as whole cents, a
//! share to six decimals, a price in full precision. A row made in memory therefore holds
//! exactly what the file says, and a report drawn from the plan in memory is the report drawn
//! from its files afterwards (`report --from DIR`), byte for byte.
//!
//! - [`plan`]: `plan --out`'s files (work programme, section plan, candidates, budget and target
//!   use, condition, widening plan, limits) and [`summary`], its `summary.json`;
//! - [`analysis`]: the frontier's, sensitivity's and risk's files;
//! - [`others`]: the files of `appraise`, `select`, `cashflow`, `calibrate` and `init`, which
//!   no command reads back: their names and columns;
//! - [`readback`]: a CSV of ours read whole, its errors naming file, line and column.
//!
//! The schema sits below both the writers ([`crate::output`]) and the readers (the report, the
//! held plan of [`crate::analysis::held`], `explain`), so that neither reaches into the other.

pub mod analysis;
pub mod carried;
pub mod compare;
pub mod others;
pub mod plan;
pub mod readback;
pub mod summary;
pub mod value;

use crate::diag::{Diagnostics, Place};
use crate::error::{Error, Result};
use crate::schema::readback::Table;
use std::path::Path;
pub use value::Value;

/// One output file: its name, the command that writes it, and its columns in order (for files
/// with columns named after the scenario's lines, the fixed ones).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FileSpec {
    pub name: &'static str,
    /// The command that writes it, for messages (`pavestrat plan`).
    pub maker: &'static str,
    pub columns: &'static [&'static str],
}

impl FileSpec {
    /// The header line, ending in a line break.
    pub fn head(&self) -> String {
        let mut s = self.columns.join(",");
        s.push('\n');
        s
    }

    /// The file `dir/NAME` read whole, every row kept.
    pub fn read(&self, dir: &Path) -> Result<Table> {
        crate::schema::readback::read(dir, self.name, self.maker, |_| true)
    }

    /// The position of each column in `t`'s header, or an error naming the first missing one.
    pub fn positions(&self, t: &Table) -> Result<Vec<usize>> {
        self.columns.iter().map(|c| t.column(c)).collect()
    }
}

/// A row of one of the files above, written and read by the same code.
pub trait Record: Sized {
    const FILE: FileSpec;
    /// Append the row's cells, comma-separated, and a line break.
    fn write(&self, out: &mut String);
    /// [`Record::write`] with more cells before the line break: `tail` appends them, each
    /// after a comma (the columns a file carries from the network).
    fn write_then(&self, out: &mut String, tail: impl FnOnce(&mut String)) {
        self.write(out);
        out.pop();
        tail(out);
        out.push('\n');
    }
    /// The row from its cells, in [`Record::FILE`]'s column order.
    fn from_cells(cells: &mut Cells<'_>) -> Result<Self>;
}

/// The cells of one row being read, in a file's column order, with the place of each for
/// messages.
pub struct Cells<'t> {
    table: &'t Table,
    positions: &'t [usize],
    line: usize,
    rec: &'t csv::StringRecord,
    next: usize,
}

impl<'t> Cells<'t> {
    /// The cells of `rec` (line `line` of `table`) at `positions`, in order.
    pub fn new(
        table: &'t Table,
        positions: &'t [usize],
        line: usize,
        rec: &'t csv::StringRecord,
    ) -> Cells<'t> {
        Cells {
            table,
            positions,
            line,
            rec,
            next: 0,
        }
    }

    /// The next cell as a `T`, or an error naming file, line and column.
    pub fn take<T: Value>(&mut self) -> Result<T> {
        let col = self.positions[self.next];
        self.next += 1;
        let text = self.rec.get(col).unwrap_or("");
        T::parse(text).ok_or_else(|| {
            let mut d = Diagnostics::new();
            d.error(
                Place::line(self.table.label.clone(), self.line)
                    .with_field(self.table.head[col].clone()),
                format!("found `{text}`"),
                T::EXPECTED,
            );
            Error::Input(d)
        })
    }
}

/// Every row of a table as `R`s.
pub fn rows_of<R: Record>(t: &Table) -> Result<Vec<R>> {
    let positions = R::FILE.positions(t)?;
    t.rows
        .iter()
        .map(|(line, rec)| R::from_cells(&mut Cells::new(t, &positions, *line, rec)))
        .collect()
}

/// Every row of a table as `R`s, each with its line in the file (for messages about it).
pub fn lines_of<R: Record>(t: &Table) -> Result<Vec<(usize, R)>> {
    let positions = R::FILE.positions(t)?;
    t.rows
        .iter()
        .map(|(line, rec)| {
            Ok((
                *line,
                R::from_cells(&mut Cells::new(t, &positions, *line, rec))?,
            ))
        })
        .collect()
}

/// `dir`'s file of `R`s, read whole.
pub fn read<R: Record>(dir: &Path) -> Result<Vec<R>> {
    rows_of(&R::FILE.read(dir)?)
}

/// `dir`'s file of `R`s when it is there (`None` when it is not).
pub fn read_if_there<R: Record>(dir: &Path) -> Result<Option<Vec<R>>> {
    if !dir.join(R::FILE.name).exists() {
        return Ok(None);
    }
    read(dir).map(Some)
}

/// A whole file of `R`s: the header, then every row.
pub fn text<R: Record>(rows: &[R]) -> String {
    let mut s = R::FILE.head();
    for r in rows {
        r.write(&mut s);
    }
    s
}

/// A comma before every cell but a row's first.
#[doc(hidden)]
pub fn separate(out: &mut String, first: &mut bool) {
    if !*first {
        out.push(',');
    }
    *first = false;
}

/// A file of rows: the struct, its [`Record`] impl and the file's [`FileSpec`], from one list
/// of `field: Type = "column"` in column order.
macro_rules! record {
    (
        $(#[$meta:meta])*
        $name:ident in $file:literal by $maker:literal {
            $( $(#[$fmeta:meta])* $field:ident : $ty:ty = $col:literal ),+ $(,)?
        }
    ) => {
        $(#[$meta])*
        #[derive(Debug, Clone, PartialEq)]
        pub struct $name {
            $( $(#[$fmeta])* pub $field: $ty ),+
        }

        impl $crate::schema::Record for $name {
            const FILE: $crate::schema::FileSpec = $crate::schema::FileSpec {
                name: $file,
                maker: $maker,
                columns: &[$($col),+],
            };

            fn write(&self, out: &mut String) {
                let mut first = true;
                $(
                    $crate::schema::separate(out, &mut first);
                    $crate::schema::Value::write(&self.$field, out);
                )+
                out.push('\n');
            }

            fn from_cells(
                cells: &mut $crate::schema::Cells<'_>,
            ) -> $crate::error::Result<Self> {
                Ok($name { $( $field: cells.take::<$ty>()? ),+ })
            }
        }
    };
}
pub(crate) use record;

#[cfg(test)]
mod tests {
    use super::*;

    record! {
        /// A file of every cell type, for the tests.
        Probe in "probe.csv" by "pavestrat test" {
            name: String = "name",
            year: i32 = "year",
            cost: value::Cents = "cost",
            share: value::Fixed<6> = "share",
            price: value::Price = "price",
            real: value::Real = "real",
            gap: value::Sci6 = "gap",
            limit: value::Dec = "limit",
            rate: Option<value::Fixed<6>> = "rate",
            flag: bool = "flag",
        }
    }

    fn probe(name: &str, x: f64) -> Probe {
        Probe {
            name: name.to_owned(),
            year: 2031,
            cost: value::Cents::of(x * 1234.5678),
            share: value::Fixed::of(x / 7.0),
            price: value::Price(x / 3.0),
            real: value::Real(x.sqrt()),
            gap: value::Sci6::of(x * 1e-9),
            limit: value::Dec(rust_decimal::Decimal::new(125_050, 2)),
            rate: (x > 1.0).then(|| value::Fixed::of(x / 100.0)),
            flag: x > 2.0,
        }
    }

    /// A row written and read back is the row: every cell type, text that needs quoting, and
    /// the numbers as the file holds them (a row made in memory already holds them so).
    #[test]
    fn rows_round_trip_through_their_text() {
        let rows: Vec<Probe> = [0.0, 0.5, 1.0, 2.75, 10.0, 12345.678]
            .iter()
            .enumerate()
            .map(|(i, &x)| probe(&format!("s{i}, \"quoted\""), x))
            .collect();
        let text = text(&rows);
        assert!(text.starts_with("name,year,cost,share,price,real,gap,limit,rate,flag\n"));
        let t =
            crate::schema::readback::parse("probe.csv", text.as_bytes(), "test", |_| true).unwrap();
        let back: Vec<Probe> = rows_of(&t).unwrap();
        assert_eq!(back, rows);
        assert_eq!(super::text(&back), text);
    }

    proptest::proptest! {
        /// Every reader of the tool's own files on arbitrary bytes (each file of a plan's
        /// directory, the summary, the manifest): never a panic.
        #[test]
        fn own_files_survive_arbitrary_bytes(bytes in proptest::collection::vec(proptest::prelude::any::<u8>(), 0..3000)) {
            use crate::schema::analysis::{FrontierLevel, Risk, RiskDraw, Sensitivity};
            use crate::schema::plan::*;
            let dir = tempfile::tempdir().unwrap();
            let d = dir.path();
            for name in crate::output::report::FILES_READ
                .iter()
                .chain(&[
                    CANDIDATES,
                    SectionPlan::FILE.name,
                    Limit::FILE.name,
                    "manifest.json",
                    crate::output::geojson::SECTION_PLAN,
                ])
            {
                std::fs::write(d.join(name), &bytes).unwrap();
            }
            let _ = read::<SectionPlan>(d);
            let _ = read::<Limit>(d);
            let _ = read::<FrontierLevel>(d);
            let _ = read::<Sensitivity>(d);
            let _ = read::<Risk>(d);
            let _ = read::<RiskDraw>(d);
            let _ = read_candidates(d, |_| true);
            let _ = summary::Summary::parse("summary.json", &String::from_utf8_lossy(&bytes));
            let _ = crate::output::report::Inputs::read(d);
            let _ = crate::io::verify(d);
        }
    }

    /// A bad cell is refused with its file, line and column, and what was expected.
    #[test]
    fn a_bad_cell_is_located() {
        let mut text = super::text(&[probe("a", 1.0), probe("b", 2.0)]);
        text = text.replacen("2031", "twenty", 2);
        let t =
            crate::schema::readback::parse("probe.csv", text.as_bytes(), "test", |_| true).unwrap();
        let Err(Error::Input(d)) = rows_of::<Probe>(&t) else {
            panic!("a bad year must be refused");
        };
        let m = d.to_string();
        assert!(
            m.contains("probe.csv") && m.contains("year") && m.contains("twenty"),
            "{m}"
        );
        let missing = "name,year\na,2031\n";
        let t = crate::schema::readback::parse("probe.csv", missing.as_bytes(), "test", |_| true)
            .unwrap();
        let Err(Error::Input(d)) = rows_of::<Probe>(&t) else {
            panic!("a missing column must be refused");
        };
        assert!(d.to_string().contains("cost"), "{d}");
    }
}
