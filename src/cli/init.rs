//! `pavestrat init DIR`: write a scenario for a user to edit — the built-in demo's four files, or
//! with `--sections N` a synthetic network of N sections drawn like the demo's (budgets scaled
//! to its size), for trying the tool at network scale.
//!
//! Existing files are never overwritten unless `--force` is given; all four files are written or
//! none.

use super::Context;
use pavestrat::demo::{self, synth};
use pavestrat::error::{Error, Result};
use pavestrat::io::OutputSet;
use std::path::PathBuf;

/// Arguments of `init`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Directory to write scenario.toml, network.csv, treatments.toml and templates.toml into.
    #[arg(value_name = "DIR")]
    pub dir: PathBuf,

    /// Write a synthetic network of this many sections instead of the demo's.
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u64).range(1..=10_000_000))]
    pub sections: Option<u64>,

    /// Seed of the synthetic network (the same seed gives the same network).
    #[arg(long, value_name = "S", default_value_t = 1, requires = "sections")]
    pub seed: u64,

    /// Overwrite files that already exist.
    #[arg(long)]
    pub force: bool,
}

/// Run `init`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let file = |name: &str| -> Vec<u8> {
        demo::FILES
            .iter()
            .find(|f| f.0 == name)
            .map(|f| f.1.to_vec())
            .unwrap_or_default()
    };
    let mut set = OutputSet::plain();
    match args.sections {
        None => {
            for (name, bytes) in demo::FILES {
                set.add(*name, bytes.to_vec());
            }
        }
        Some(n) => {
            let (scenario, net_text) = synth::synthetic_files(n as usize, args.seed);
            let scenario = scenario.replace("# Demo scenario: the Vellmark district",
                &format!(
                    "# Synthetic network of {n} sections (seed {}), budgets scaled from the demo.\n# Demo scenario: the Vellmark district",
                    args.seed
                ),
            );
            set.add("scenario.toml", scenario.into_bytes());
            set.add("network.csv", net_text.into_bytes());
            set.add("treatments.toml", file("treatments.toml"));
            set.add("templates.toml", file("templates.toml"));
        }
    }
    if !args.force {
        let existing: Vec<String> = set
            .names()
            .map(|n| args.dir.join(n))
            .filter(|p| p.exists())
            .map(|p| p.display().to_string())
            .collect();
        if !existing.is_empty() {
            return Err(Error::Usage(format!(
                "{} already exist{}; expected a directory without them (or --force to overwrite)",
                existing.join(", "),
                if existing.len() == 1 { "s" } else { "" }
            )));
        }
    }
    for p in set.commit(&args.dir, "init")? {
        ctx.say(&format!("wrote {}", p.display()));
    }
    ctx.say(&format!(
        "next: pavestrat check --scenario {0}; pavestrat appraise --scenario {0}",
        args.dir.join("scenario.toml").display()
    ));
    Ok(())
}
