//! Spreadsheet output (`plan --xlsx FILE`): the work programme, section plan, budget use and
//! appraisal in one workbook, with numbers as typed numeric cells (money with thousands
//! separators and two decimals, rates as percentages), plus a sheet with the run's facts and the
//! planning-level caution. Built with the `xlsx` cargo feature (on by default).
//!
//! The bytes are written by `plan`: with `--out`, as part of the directory's all-or-nothing set
//! (staged beside the target and moved into place with it); alone, atomically.

use crate::appraise::SectionResult;
use crate::error::{Error, Result};
use crate::input::Run;
use crate::plan::Plan;

/// Rows a worksheet holds, heading included.
pub const MAX_ROWS: usize = 1_048_576;

/// Fail with a usage error when this build has no spreadsheet writer.
pub fn available() -> Result<()> {
    if cfg!(feature = "xlsx") {
        Ok(())
    } else {
        Err(Error::Usage(
            "--xlsx: this build has no spreadsheet writer; rebuild with the `xlsx` cargo feature \
             (on by default), or use the CSV outputs of --out"
                .to_owned(),
        ))
    }
}

/// The workbook for a plan and its sections' appraisal, as bytes.
#[cfg(feature = "xlsx")]
pub fn plan_bytes(run: &Run, p: &Plan, appraisal: &[SectionResult]) -> Result<Vec<u8>> {
    imp::workbook(run, p, appraisal)
}

/// The workbook for a plan and its sections' appraisal, as bytes.
#[cfg(not(feature = "xlsx"))]
pub fn plan_bytes(_run: &Run, _p: &Plan, _appraisal: &[SectionResult]) -> Result<Vec<u8>> {
    available()?;
    Ok(Vec::new())
}

#[cfg(feature = "xlsx")]
mod imp {
    use super::*;
    use crate::enumerate::Enumerator;
    use crate::plan::RowKind;
    use crate::schema::plan::{BudgetUse, SectionPlan, Work};
    use crate::schema::Record as _;
    use rust_xlsxwriter::{Format, Workbook, Worksheet, XlsxError};

    fn fault(e: XlsxError) -> Error {
        Error::Internal(format!("building the workbook: {e}"))
    }

    /// One cell's content.
    enum Cell<'a> {
        Text(&'a str),
        Money(f64),
        Number(f64),
        Rate(Option<f64>),
        Flag(bool),
    }

    struct Sheet<'w> {
        ws: &'w mut Worksheet,
        row: u32,
        money: Format,
        rate: Format,
    }

    impl Sheet<'_> {
        fn head(&mut self, names: &[&str]) -> Result<()> {
            let bold = Format::new().set_bold();
            for (c, n) in names.iter().enumerate() {
                self.ws
                    .write_string_with_format(0, c as u16, *n, &bold)
                    .map_err(fault)?;
                self.ws
                    .set_column_width(c as u16, (n.len() as f64 + 4.0).max(12.0))
                    .map_err(fault)?;
            }
            self.ws.set_freeze_panes(1, 0).map_err(fault)?;
            self.row = 1;
            Ok(())
        }

        fn line(&mut self, cells: &[Cell<'_>]) -> Result<()> {
            let r = self.row;
            for (c, cell) in cells.iter().enumerate() {
                let c = c as u16;
                match cell {
                    Cell::Text(s) => self.ws.write_string(r, c, *s).map(|_| ()),
                    Cell::Money(x) if x.is_finite() => self
                        .ws
                        .write_number_with_format(r, c, *x, &self.money)
                        .map(|_| ()),
                    Cell::Number(x) if x.is_finite() => self.ws.write_number(r, c, *x).map(|_| ()),
                    Cell::Rate(Some(x)) if x.is_finite() => self
                        .ws
                        .write_number_with_format(r, c, *x, &self.rate)
                        .map(|_| ()),
                    Cell::Flag(b) => self.ws.write_boolean(r, c, *b).map(|_| ()),
                    _ => Ok(()),
                }
                .map_err(fault)?;
            }
            self.row += 1;
            Ok(())
        }
    }

    fn sheet<'w>(wb: &'w mut Workbook, name: &str, money: &str) -> Result<Sheet<'w>> {
        // Rows go out in order and are not revisited: a sheet in constant-memory mode streams
        // them to a temporary file instead of holding every cell (2.4 GB for 10,000 sections).
        let ws = wb.add_worksheet_with_constant_memory().map_err(fault)?;
        ws.set_name(name).map_err(fault)?;
        Ok(Sheet {
            ws,
            row: 0,
            money: Format::new().set_num_format(format!("#,##0.00 \"{money}\"")),
            rate: Format::new().set_num_format("0.00%"),
        })
    }

    fn check_rows(name: &str, rows: usize) -> Result<()> {
        if rows + 1 > MAX_ROWS {
            return Err(Error::Usage(format!(
                "--xlsx: the sheet `{name}` would need {rows} rows, more than a worksheet holds \
                 ({}); use the CSV outputs of --out for a network this large",
                MAX_ROWS - 1
            )));
        }
        Ok(())
    }

    pub fn workbook(run: &Run, p: &Plan, appraisal: &[SectionResult]) -> Result<Vec<u8>> {
        let s = &run.scenario;
        let secs = &run.network.sections;
        let c = &p.candidates;
        let plan = &p.outcome.plan;
        let strategies_total: usize = appraisal.iter().map(|r| r.strategies.len()).sum();
        check_rows("Work programme", p.works.len())?;
        check_rows("Section plan", secs.len())?;
        check_rows("Appraisal", strategies_total)?;
        let money = s.money_label.replace('"', "");
        let mut wb = Workbook::new();
        // Deflate at level 3: a network's appraisal sheet runs to hundreds of thousands of rows,
        // compressed on one thread. Measured on 10,000 sections (`plan --xlsx`, 2026-12-03):
        // the library's default level 6 took 36.1 s for an 87 MB file, level 3 24.3 s for 94 MB,
        // level 1 23.1 s for 134 MB.
        wb.set_zip_compression_level(3);

        let mut sh = sheet(&mut wb, "Work programme", &money)?;
        sh.head(Work::FILE.columns)?;
        for w in &p.works {
            let t = &run.catalogue.treatments[w.treatment];
            let sec = &secs[w.section];
            sh.line(&[
                Cell::Number(f64::from((s.base_year + w.year).0)),
                Cell::Text(sec.id.as_str()),
                Cell::Text(&t.id),
                Cell::Money(
                    crate::model::money::Money::from_f64_rounded(w.cost)
                        .map_or(f64::NAN, |m| m.to_f64()),
                ),
                Cell::Text(sec.region.as_deref().unwrap_or("")),
                Cell::Text(t.category.name()),
            ])?;
        }

        let e = Enumerator::for_run(run);
        let mut sh = sheet(&mut wb, "Section plan", &money)?;
        sh.head(SectionPlan::FILE.columns)?;
        for (g, sec) in secs.iter().enumerate() {
            let k = c.chosen(plan, g);
            let (u, unpv) = (c.unconstrained[g].strategy, c.unconstrained[g].npv);
            let chosen = &e.name(c.strategy[k]);
            let un = &e.name(u);
            sh.line(&[
                Cell::Text(sec.id.as_str()),
                Cell::Text(sec.region.as_deref().unwrap_or("")),
                Cell::Text(chosen),
                Cell::Money(c.npv[k]),
                Cell::Money(c.pv_agency[k]),
                Cell::Text(un),
                Cell::Money(unpv),
                Cell::Flag(chosen == un),
            ])?;
        }

        let mut sh = sheet(&mut wb, "Budget use", &money)?;
        // budget_use.csv's columns but its budget group.
        sh.head(&BudgetUse::FILE.columns[..8])?;
        for (j, row) in c.rows.iter().enumerate() {
            if let RowKind::Budget(b) = row.kind {
                let line = &s.budget_lines[b];
                let limit = row.money.unwrap_or_default().to_f64();
                let used = p.spent[b].to_f64();
                sh.line(&[
                    Cell::Text(&row.name),
                    Cell::Number(f64::from(line.year.0)),
                    Cell::Money(limit),
                    Cell::Money(used),
                    Cell::Number(p.outcome.prices[j]),
                    Cell::Text(line.category.name()),
                    Cell::Text(line.region.as_deref().unwrap_or("")),
                    Cell::Money(limit - used),
                ])?;
            }
        }

        let mut sh = sheet(&mut wb, "Appraisal", &money)?;
        sh.head(&[
            "section_id",
            "strategy",
            "template",
            "pv_agency_cost",
            "pv_user_cost",
            "npv",
            "bcr",
            "bcr_capital",
            "npv_per_capital",
            "irr",
            "irr_status",
            "fyrr",
            "mean_iri",
            "best",
        ])?;
        for r in appraisal {
            for st in &r.strategies {
                let i = &st.indicators;
                let irr = match &i.irr {
                    crate::economics::irr::Irr::Unique(x) => Some(*x),
                    _ => None,
                };
                sh.line(&[
                    Cell::Text(&r.section),
                    Cell::Text(&st.strategy),
                    Cell::Text(st.template.as_deref().unwrap_or("")),
                    Cell::Money(st.pv_agency),
                    Cell::Money(st.pv_user),
                    Cell::Money(i.npv),
                    Cell::Number(i.bcr.unwrap_or(f64::NAN)),
                    Cell::Number(st.bcr_capital.unwrap_or(f64::NAN)),
                    Cell::Number(st.npv_per_capital.unwrap_or(f64::NAN)),
                    Cell::Rate(irr),
                    Cell::Text(i.irr.status()),
                    Cell::Rate(i.fyrr),
                    Cell::Number(st.mean_iri),
                    Cell::Flag(st.strategy == r.best),
                ])?;
            }
        }

        let mut sh = sheet(&mut wb, "About", &money)?;
        sh.head(&["item", "value"])?;
        let title = if s.title.is_empty() {
            &s.file
        } else {
            &s.title
        };
        let facts = [
            ("scenario", Cell::Text(title)),
            ("money", Cell::Text(&s.money_label)),
            ("base year", Cell::Number(f64::from(s.base_year.0))),
            ("analysis years", Cell::Number(f64::from(s.analysis_years))),
            ("discount rate", Cell::Rate(Some(s.discounting.rate()))),
            ("objective", Cell::Money(c.objective_of(p.outcome.value))),
            ("status", Cell::Text(p.outcome.status.name())),
            ("caution", Cell::Text(crate::CAUTION)),
        ];
        for (k, v) in facts {
            sh.line(&[Cell::Text(k), v])?;
        }
        sh.ws.set_column_width(1, 60).map_err(fault)?;

        wb.save_to_buffer().map_err(fault)
    }
}
