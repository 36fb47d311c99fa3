//! Every file and summary the tool writes, made from typed results through the schema
//! ([`crate::schema`]): the plan's files ([`files`]), the other commands' ([`appraisal`],
//! [`cashflow`], [`selection`], [`calibration`], [`comparison`]), what the terminal shows ([`terminal`]), the HTML
//! report ([`report`]), the workbook ([`xlsx`]), the headings of both ([`titles`]), and the number formats of the files no one
//! reads back ([`format`](mod@format)).

pub mod appraisal;
pub mod calibration;
pub mod cashflow;
pub mod comparison;
pub mod files;
pub mod format;
pub mod geojson;
pub mod programme;
pub mod report;
pub mod selection;
pub mod terminal;
pub mod titles;
pub mod xlsx;
