//! `pavestrat risk`: Monte Carlo over the scenario's uncertain inputs (see [`pavestrat::analysis::risk`]).
//! Prints the network plan's NPV distribution and the budget lines most likely to be overspent;
//! `--out DIR` writes `risk.csv` and `risk_draws.csv`, and the raw `risk_slice.bin` for a slice
//! (`--first-draw K`) or when asked (`--keep-raw`). Slices of one run (`--first-draw K --draws
//! N`) merge with `risk --merge DIR…` into exactly the files one whole run would give.

use super::plan::parse_seconds;
use super::sensitivity::held;
use super::{load_scenario, Context, OutArg};
use pavestrat::analysis::risk::{merge, simulate, Sampling, Slice};
use pavestrat::error::{Error, Result};
use pavestrat::io::{print_stdout, StreamSet};
use pavestrat::schema::analysis::RISK_SLICE;
use std::path::PathBuf;

/// Arguments of `risk`.
#[derive(Debug, clap::Args)]
pub struct Args {
    /// Scenario file (TOML). Without it, the built-in demo is used (and said so).
    #[arg(long, value_name = "FILE", conflicts_with = "merge")]
    pub scenario: Option<PathBuf>,

    /// Hold the plan written by `pavestrat plan --out DIR` (its section_plan.csv); without it the
    /// plan is selected afresh, as `plan` would. Give every slice of a split run the same one.
    #[arg(long, value_name = "DIR", conflicts_with = "merge")]
    pub from: Option<PathBuf>,

    /// Number of draws.
    #[arg(long, value_name = "N", default_value_t = 1000, value_parser = clap::value_parser!(u64).range(1..=100_000_000))]
    pub draws: u64,

    /// Seed of the run: the same seed gives the same draws, whatever the machine or threads.
    #[arg(long, value_name = "S", default_value_t = 2027)]
    pub seed: u64,

    /// How the draws are made: `random` (independent pseudo-random draws) or `sobol`
    /// (randomised Sobol' points, in 8 independently shifted replicates: usually a more precise
    /// P50/P90 for the same draws; best with draws a multiple of 8 times a power of two). Give
    /// every slice of a split run the same one.
    #[arg(long, value_name = "HOW", default_value = "random", value_parser = ["random", "sobol"], conflicts_with = "merge")]
    pub sampling: String,

    /// Number of the first draw, to run one slice of a larger run (draws K, K+1, …): the slice
    /// also writes its raw results (risk_slice.bin) for `--merge`. Without it, draws start at 0.
    #[arg(long, value_name = "K")]
    pub first_draw: Option<u64>,

    /// Also write the raw results (risk_slice.bin: 8 bytes × strategies × draws), for a later
    /// `--merge`; a slice (`--first-draw`) writes them anyway.
    #[arg(long)]
    pub keep_raw: bool,

    /// Most seconds the plan's selection may take (when there is no --from).
    #[arg(long, value_name = "SECONDS", default_value_t = 10.0, value_parser = parse_seconds)]
    pub time_limit: f64,

    /// Merge the raw results (risk_slice.bin) of these slices' --out directories instead of
    /// drawing.
    #[arg(long, value_name = "DIR", num_args = 1..)]
    pub merge: Vec<PathBuf>,

    #[command(flatten)]
    pub out: OutArg,
}

/// The files `risk --out DIR` writes.
pub const FILES: [&str; 3] = pavestrat::schema::analysis::RISK_FILES;

/// Run `risk`.
pub fn run(args: Args, ctx: Context) -> Result<()> {
    let mut plan_run: Option<String> = None;
    let first_draw = args.first_draw.unwrap_or(0);
    // The raw results are for merging: a slice's, or when asked.
    let keep_raw = args.keep_raw || args.first_draw.is_some();
    let slice = if args.merge.is_empty() {
        let (run, diags) = load_scenario(args.scenario.as_deref(), ctx);
        let Some(run) = run else {
            return Err(Error::Input(diags));
        };
        ctx.notes(&diags);
        if run.scenario.uncertain.is_empty() {
            return Err(Error::Usage(format!(
                "{}: the scenario declares no uncertain inputs; expected [[uncertain]] entries \
                 (input, distribution and its parameters; see the README)",
                run.scenario.file
            )));
        }
        if first_draw.checked_add(args.draws).is_none() {
            return Err(Error::Usage(
                "--first-draw + --draws: past the largest draw number".into(),
            ));
        }
        let held = held(&run, args.from.as_deref(), args.time_limit, ctx)?;
        plan_run.clone_from(&held.plan_run);
        // Each draw weighs every strategy of every section: enumerated once for the run.
        let every = held.every(&run);
        let layout = pavestrat::analysis::risk::layout(&run, &every)?;
        let raw = pavestrat::analysis::risk::check_size(&layout, args.draws)?;
        let secs = pavestrat::analysis::risk::estimated_seconds(
            &layout,
            args.draws,
            run.scenario.analysis_years,
        );
        if secs > pavestrat::resources::ANNOUNCE_SECONDS
            || raw > pavestrat::resources::ANNOUNCE_BYTES
        {
            ctx.say(&format!(
                "note: {} draws × {} strategies: about {} and {} of raw results (estimated from the measured simulation speed; fewer --draws, or slices with --first-draw, take less)",
                args.draws,
                layout.strategies.iter().map(Vec::len).sum::<usize>(),
                pavestrat::resources::duration(secs),
                pavestrat::resources::bytes(raw)
            ));
        }
        let bar = ctx.progress.bar("risk", args.draws, "draws");
        let sampling = if args.sampling == "sobol" {
            Sampling::Sobol
        } else {
            Sampling::Random
        };
        let s = simulate(
            &run, &every, args.seed, sampling, first_draw, args.draws, &bar,
        )?;
        bar.finish();
        s
    } else {
        let mut parts = Vec::new();
        let mut plans = Vec::new();
        for dir in &args.merge {
            // With a manifest, the slice must be one of its files (its entry names the plan).
            let slice = RISK_SLICE;
            let plan = match pavestrat::io::verify(dir)? {
                Some(m) => match m.files.get(slice) {
                    Some(entry) => entry.for_plan.clone(),
                    None => {
                        return Err(Error::Usage(format!(
                            "--merge {}: the directory has no raw results ({slice}); run each \
                             slice with --first-draw K (or a whole run with --keep-raw)",
                            dir.display()
                        )))
                    }
                },
                None => None,
            };
            plans.push(plan);
            let p = dir.join(slice);
            parts.push((p.display().to_string(), Slice::read(&p)?));
        }
        // The merged draws are of the plan every slice names, if they all name the same one.
        if plans.windows(2).all(|w| w[0] == w[1]) {
            plan_run = plans.into_iter().next().flatten();
        }
        merge(parts)?
    };
    if let Some(dir) = &args.out.out {
        let files = if keep_raw { &FILES[..] } else { &FILES[..2] };
        let mut set = StreamSet::create(dir, "risk", files)?;
        set.made_for(plan_run);
        set.write(0, slice.csv().as_bytes())?;
        set.write(1, slice.draws_csv().as_bytes())?;
        if keep_raw {
            set.write(2, &slice.to_bytes())?;
        }
        for p in set.commit()? {
            ctx.say(&format!("wrote {}", p.display()));
        }
    }
    if args.out.out.is_none() || !ctx.quiet {
        print_stdout(&pavestrat::output::terminal::risk(&slice))?;
    }
    Ok(())
}
