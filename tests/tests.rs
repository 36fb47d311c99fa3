//! The integration tests: one binary, a module per command. Each test runs the real executable in
//! a temporary directory; on failure it prints the command, its stdout and stderr.

mod appraise;
mod calibrate;
mod carried;
mod cashflow;
mod check;
mod compare;
mod golden;
mod outputs;
mod plan;
mod readme;
mod report;
mod risk;
mod select;
mod util;
mod workbook;
