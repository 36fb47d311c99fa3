//! What the tool writes and reads back: number and field formats shared by every output
//! ([`format`](mod@format)), the tool's own CSVs read back with their places ([`readback`]), the workbook
//! ([`xlsx`]) and the HTML report ([`report`]).

pub mod appraisal;
pub mod calibration;
pub mod cashflow;
pub mod files;
pub mod format;
pub mod readback;
pub mod report;
pub mod schema;
pub mod selection;
pub mod terminal;
pub mod xlsx;
