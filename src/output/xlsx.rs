//! Spreadsheet output (`plan --xlsx FILE`): the work programme, the programme by section and
//! year (`programme.csv`), section plan, budget use and appraisal in one workbook, with numbers
//! as typed numeric cells (money to the cent with thousands separators, rates as percentages,
//! ratios and roughness to two decimals), plus a sheet with the run's facts and the
//! planning-level caution. Every table has readable headings (one title per column name, the
//! same across sheets, from the CSV files' names), a filter on its heading row, the heading
//! frozen, and a totals row of its money columns (a `SUBTOTAL` formula, so a filter totals what
//! it shows, stored with its value: the exact sum of the cells to the cent). Built with the
//! `xlsx` cargo feature (on by default).
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

/// The workbook for a plan and its sections' appraisal (every section's, in network order), as
/// bytes.
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
        /// An owned text (a carried note, a name made for the row).
        Owned(String),
        /// Money, written to the cent and counted in the sheet's totals.
        Money(f64),
        /// A count or a year: a whole number.
        Number(f64),
        /// A ratio, a roughness or a quantity: two decimals shown (the cell holds the value).
        Ratio(f64),
        /// A budget price: four decimals shown.
        Price(f64),
        Rate(Option<f64>),
        Flag(bool),
    }

    struct Sheet<'w> {
        ws: &'w mut Worksheet,
        row: u32,
        columns: u16,
        money: Format,
        rate: Format,
        ratio: Format,
        price: Format,
        /// Each money column's sum in cents (the cells hold amounts to the cent).
        sums: Vec<Option<i128>>,
    }

    impl Sheet<'_> {
        fn head<S: AsRef<str>>(&mut self, names: &[S]) -> Result<()> {
            let bold = Format::new().set_bold();
            for (c, n) in names.iter().enumerate() {
                let t = crate::output::titles::title(n.as_ref());
                self.ws
                    .write_string_with_format(0, c as u16, &t, &bold)
                    .map_err(fault)?;
                self.ws
                    .set_column_width(c as u16, (t.chars().count() as f64 + 4.0).max(12.0))
                    .map_err(fault)?;
            }
            self.ws.set_freeze_panes(1, 0).map_err(fault)?;
            self.row = 1;
            self.columns = names.len() as u16;
            self.sums = vec![None; names.len()];
            Ok(())
        }

        fn line(&mut self, cells: &[Cell<'_>]) -> Result<()> {
            let r = self.row;
            for (k, cell) in cells.iter().enumerate() {
                let c = k as u16;
                match cell {
                    Cell::Text(s) => self.ws.write_string(r, c, *s).map(|_| ()),
                    Cell::Owned(s) => self.ws.write_string(r, c, s).map(|_| ()),
                    Cell::Money(x) => match crate::model::money::units_half_even(*x, 2) {
                        Some(cents) => {
                            if let Some(sum) = self.sums.get_mut(k) {
                                *sum = Some(sum.unwrap_or(0) + cents);
                            }
                            self.ws
                                .write_number_with_format(r, c, cents as f64 / 100.0, &self.money)
                                .map(|_| ())
                        }
                        None => Ok(()),
                    },
                    Cell::Number(x) if x.is_finite() => self.ws.write_number(r, c, *x).map(|_| ()),
                    Cell::Ratio(x) if x.is_finite() => self
                        .ws
                        .write_number_with_format(r, c, *x, &self.ratio)
                        .map(|_| ()),
                    Cell::Price(x) if x.is_finite() => self
                        .ws
                        .write_number_with_format(r, c, *x, &self.price)
                        .map(|_| ()),
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

        /// Close the table: a filter on the heading row over its rows, and (with `totals`) a
        /// totals row below them — each money column's `SUBTOTAL(109, …)` (the sum of the rows
        /// a filter shows), stored with its value, the exact sum of the column's cells.
        fn finish(&mut self, totals: bool) -> Result<()> {
            let last = self.row.saturating_sub(1).max(1);
            let right = self.columns.saturating_sub(1);
            self.ws.autofilter(0, 0, last, right).map_err(fault)?;
            if !totals || self.row < 2 {
                return Ok(());
            }
            let r = self.row;
            let bold = Format::new().set_bold();
            self.ws
                .write_string_with_format(r, 0, "Total", &bold)
                .map_err(fault)?;
            let money = self.money.clone().set_bold();
            for (k, sum) in self.sums.iter().enumerate() {
                let Some(cents) = sum else { continue };
                let col = crate::diag::column_letters(k + 1);
                let value = Fixed2(*cents).to_string();
                let f = rust_xlsxwriter::Formula::new(format!("=SUBTOTAL(109,{col}2:{col}{})", r))
                    .set_result(value);
                self.ws
                    .write_formula_with_format(r, k as u16, f, &money)
                    .map_err(fault)?;
            }
            self.row += 1;
            Ok(())
        }
    }

    /// Cents as the decimal text of the amount.
    struct Fixed2(i128);

    impl std::fmt::Display for Fixed2 {
        fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
            let mut s = String::new();
            crate::schema::Value::write(&crate::schema::value::Fixed::<2>(self.0), &mut s);
            f.write_str(&s)
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
            columns: 0,
            money: Format::new().set_num_format(format!("#,##0.00 \"{money}\"")),
            rate: Format::new().set_num_format("0.00%"),
            ratio: Format::new().set_num_format("0.00"),
            price: Format::new().set_num_format("0.0000"),
            sums: Vec::new(),
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

        // The columns carried from the network: the road as text, the chainage as numbers,
        // the user's notes as text.
        let net = &run.network;
        let carried = crate::schema::carried::carried_names(net);
        let carry = |sec: &crate::model::network::Section, cells: &mut Vec<Cell<'_>>| {
            use crate::schema::carried::Carried;
            for (_, v) in crate::schema::carried::carried(net, sec) {
                cells.push(match v {
                    Carried::Text(t) => Cell::Owned(t.to_owned()),
                    Carried::Km(x) => Cell::Ratio(x.map_or(f64::NAN, |x| x.to_f64())),
                });
            }
        };
        let with_carried = |cols: &[&str]| -> Vec<String> {
            cols.iter()
                .map(|c| c.to_string())
                .chain(carried.iter().cloned())
                .collect()
        };

        let mut sh = sheet(&mut wb, "Work programme", &money)?;
        sh.head(&with_carried(Work::FILE.columns))?;
        for w in &p.works {
            let t = &run.catalogue.treatments[w.treatment];
            let sec = &secs[w.section];
            let mut cells = vec![
                Cell::Number(f64::from((s.base_year + w.year).0)),
                Cell::Text(sec.id.as_str()),
                Cell::Text(&t.id),
                Cell::Money(w.cost),
                Cell::Text(sec.region.as_deref().unwrap_or("")),
                Cell::Text(t.category.name()),
            ];
            carry(sec, &mut cells);
            sh.line(&cells)?;
        }
        sh.finish(true)?;

        // The programme by section and year, with its own totals rows.
        let rows = crate::output::programme::rows(run, &p.works);
        check_rows("Programme", rows.len())?;
        let mut sh = sheet(&mut wb, "Programme", &money)?;
        let mut head: Vec<String> = crate::output::programme::COLUMNS
            .iter()
            .map(|c| c.to_string())
            .collect();
        for y in 0..s.analysis_years {
            let year = s.base_year.0 + y as i32;
            head.push(format!("cost_{year}"));
            head.push(format!("treatment_{year}"));
        }
        head.extend(carried.iter().cloned());
        sh.head(&head)?;
        for r in &rows {
            let sec = r.section.map(|g| &secs[g]);
            let [km, lane_km, m2, cost] = r.quantities();
            let [per_lane_km, per_m2] = r.rates();
            let mut cells = vec![
                Cell::Text(r.kind),
                Cell::Text(&r.name),
                Cell::Text(sec.map_or("", |x| x.id.as_str())),
                Cell::Text(sec.and_then(|x| x.region.as_deref()).unwrap_or("")),
                Cell::Number(r.works() as f64),
                Cell::Ratio(km),
                Cell::Ratio(lane_km),
                Cell::Number(m2),
                Cell::Money(cost),
                Cell::Money(per_lane_km.unwrap_or(f64::NAN)),
                Cell::Money(per_m2.unwrap_or(f64::NAN)),
            ];
            for (y, c) in r.by_year().enumerate() {
                cells.push(Cell::Money(c));
                cells.push(Cell::Text(r.treatments.get(y).map_or("", String::as_str)));
            }
            if let Some(sec) = sec {
                carry(sec, &mut cells);
            }
            sh.line(&cells)?;
        }
        sh.finish(false)?;

        let e = Enumerator::for_run(run);
        let first = crate::output::files::first_works(p, secs.len());
        let mut sh = sheet(&mut wb, "Section plan", &money)?;
        sh.head(&with_carried(SectionPlan::FILE.columns))?;
        for (g, sec) in secs.iter().enumerate() {
            let k = c.chosen(plan, g);
            let (u, unpv) = (c.unconstrained[g].strategy, c.unconstrained[g].npv);
            let chosen = &e.name(c.strategy[k]);
            let un = &e.name(u);
            let mut cells = vec![
                Cell::Text(sec.id.as_str()),
                Cell::Text(sec.region.as_deref().unwrap_or("")),
                Cell::Text(chosen),
                Cell::Money(c.npv[k]),
                Cell::Money(c.pv_agency[k]),
                Cell::Text(un),
                Cell::Money(unpv),
                Cell::Flag(chosen == un),
                Cell::Number(first[g].map_or(f64::NAN, |y| f64::from((s.base_year + y).0))),
            ];
            carry(sec, &mut cells);
            sh.line(&cells)?;
        }
        sh.finish(true)?;

        let mut sh = sheet(&mut wb, "Budget use", &money)?;
        // budget_use.csv's columns but its budget group.
        sh.head(&BudgetUse::FILE.columns[..9])?;
        let states = p.line_states(run);
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
                    Cell::Price(p.outcome.prices[j]),
                    Cell::Text(states[j].name()),
                    Cell::Text(line.category.name()),
                    Cell::Text(line.region.as_deref().unwrap_or("")),
                    Cell::Money(limit - used),
                ])?;
            }
        }
        sh.finish(true)?;

        let mut sh = sheet(&mut wb, "Appraisal", &money)?;
        sh.head(&with_carried(&[
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
            "preferred",
        ]))?;
        // Every section's appraisal, in network order.
        for (sec, r) in secs.iter().zip(appraisal) {
            for st in &r.strategies {
                let i = &st.indicators;
                let irr = match &i.irr {
                    crate::economics::irr::Irr::Unique(x) => Some(*x),
                    _ => None,
                };
                let mut cells = vec![
                    Cell::Text(&r.section),
                    Cell::Text(&st.strategy),
                    Cell::Text(st.template.as_deref().unwrap_or("")),
                    Cell::Money(st.pv_agency),
                    Cell::Money(st.pv_user),
                    Cell::Money(i.npv),
                    Cell::Ratio(i.bcr.unwrap_or(f64::NAN)),
                    Cell::Ratio(st.bcr_capital.unwrap_or(f64::NAN)),
                    Cell::Ratio(st.npv_per_capital.unwrap_or(f64::NAN)),
                    Cell::Rate(irr),
                    Cell::Text(i.irr.status()),
                    Cell::Rate(i.fyrr),
                    Cell::Ratio(st.mean_iri),
                    Cell::Flag(st.strategy == r.best),
                ];
                carry(sec, &mut cells);
                sh.line(&cells)?;
            }
        }
        // Strategies of one section are alternatives: their money does not add up.
        sh.finish(false)?;

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
