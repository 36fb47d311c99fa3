//! The built-in demo: an invented district ("Vellmark") of our own, with invented unit costs,
//! compiled into the binary so that every command can run on a fresh machine with no files.
//!
//! The scenario and network live here; the treatment catalogue and strategy templates it names
//! are the shipped ones in `strategies/`. Inside the binary all four sit side by side, as they
//! would in a directory a user sets up for their own network.

pub mod synth;

use crate::input::Embedded;

/// Name of the demo's scenario file among [`SOURCE`]'s files.
pub const SCENARIO: &str = "scenario.toml";

/// The demo's files.
pub static FILES: &[(&str, &[u8])] = &[
    ("scenario.toml", include_bytes!("scenario.toml")),
    ("network.csv", include_bytes!("network.csv")),
    (
        "treatments.toml",
        include_bytes!("../../strategies/treatments.toml"),
    ),
    (
        "templates.toml",
        include_bytes!("../../strategies/templates.toml"),
    ),
];

/// The demo as an input source.
pub static SOURCE: Embedded = Embedded {
    name: "built-in demo",
    files: FILES,
};
