//! Monte Carlo risk analysis over the scenario's uncertain inputs.
//!
//! Each draw takes its own random stream ([`crate::analysis::distribution::stream`]: the seed and the
//! draw's number, nothing else), samples every `[[uncertain]]` input in the scenario's order, and
//! simulates every strategy of every section under those values: each strategy's NPV against the
//! section's base, the network plan's NPV (the plan held fixed), and each budget line's spending
//! by the plan. Draws run in parallel and each draw's sums run in network order, so a draw gives
//! the same numbers bit for bit whatever the thread count, and whether it runs in a whole run or
//! in a slice (`--first-draw K --draws N`).
//!
//! A run's raw results (every draw's numbers) are kept in `risk_slice.bin`, so slices computed
//! apart can be merged into exactly the results of one whole run: the statistics are computed
//! from the draws in draw order, which merging restores.
//!
//! Sampling ([`Sampling`]): independent pseudo-random draws, or quasi-random ones — randomised
//! Sobol' points ([`crate::analysis::sobol`]), each input drawn by its inverse distribution
//! function from one coordinate. Quasi-random draws come in [`REPLICATES`] interleaved
//! replicates (draw k belongs to replicate k mod 8 and is point ⌊k/8⌋ of it), each with its own
//! random digital shift, so that the replicates are independent and their spread measures the
//! precision; like pseudo-random draws, draw k depends on the seed and k alone.
//!
//! Precision: the standard errors of the mean and of P10/P50/P90 from the spread of the same
//! statistic over the [`REPLICATES`] replicate groups (draw k in group k mod 8; for pseudo-random
//! draws the groups are independent too): SE = sd of the group values / √8. With independent
//! draws this is a batch estimate of the usual standard error; with quasi-random draws it is the
//! honest one (the draws within a replicate are not independent).
//!
//! Statistics: mean, standard deviation, and the 10th, 50th and 90th percentiles by linear
//! interpolation between order statistics (the definition numpy and most spreadsheets use by
//! default); the probability that NPV is above zero, that a strategy is its section's best (the
//! highest NPV, the base counting as zero; ties to the earlier strategy), and that a budget line's
//! spending is above its limit.

use crate::analysis::distribution::stream;
use crate::analysis::held::Every;
use crate::error::{Error, Result};
use crate::evaluate::{Parts, Scales};
use crate::input::Run;
use crate::plan::{Row, RowKind, SectionRows};
use crate::progress::Progress;
use crate::simulate::{SectionSim, Trace};
use rayon::prelude::*;
use std::io::Read;
use std::path::Path;

/// What each draw records, in order: every strategy's NPV (sections in network order, each
/// section's strategies in enumeration order), the plan's NPV, then each budget line's spending.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Layout {
    pub sections: Vec<String>,
    pub strategies: Vec<Vec<String>>,
    /// The plan's strategy (index) per section.
    pub plan: Vec<usize>,
    pub lines: Vec<String>,
    pub limits: Vec<f64>,
    /// The uncertain inputs, in sampling order, with their distributions' names.
    pub inputs: Vec<String>,
    pub money: String,
    /// The names of the columns carried from the network, and each section's cells of them
    /// (`,cell…`), so that a merged run writes what a whole one does without the network.
    /// Absent from slices written before.
    #[serde(default)]
    pub carried_names: Vec<String>,
    #[serde(default)]
    pub carried: Vec<String>,
}

impl Layout {
    /// Whether the parts of a layout read from a file agree with each other: one strategy list,
    /// one plan choice (within its list) per section; one limit per budget line.
    pub fn consistent(&self) -> std::result::Result<(), String> {
        let n = self.sections.len();
        if self.strategies.len() != n || self.plan.len() != n {
            return Err(format!(
                "{n} sections but {} strategy lists and {} plan choices",
                self.strategies.len(),
                self.plan.len()
            ));
        }
        for (g, (list, &k)) in self.strategies.iter().zip(&self.plan).enumerate() {
            if k >= list.len() {
                return Err(format!(
                    "section {} (`{}`) chooses strategy {k} of {}",
                    g + 1,
                    self.sections[g],
                    list.len()
                ));
            }
        }
        if !self.carried.is_empty() && self.carried.len() != n {
            return Err(format!(
                "{n} sections but {} rows of carried columns",
                self.carried.len()
            ));
        }
        if self.limits.len() != self.lines.len() {
            return Err(format!(
                "{} budget lines but {} limits",
                self.lines.len(),
                self.limits.len()
            ));
        }
        Ok(())
    }

    pub fn width(&self) -> usize {
        self.strategies.iter().map(Vec::len).sum::<usize>() + 1 + self.lines.len()
    }
}

/// How draws are made.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Sampling {
    /// Independent pseudo-random draws (one SplitMix64 stream per draw).
    #[default]
    Random,
    /// Randomised Sobol' points in [`REPLICATES`] interleaved replicates.
    Sobol,
}

impl Sampling {
    pub fn name(self) -> &'static str {
        match self {
            Sampling::Random => "random",
            Sampling::Sobol => "sobol",
        }
    }

    fn is_random(&self) -> bool {
        *self == Sampling::Random
    }
}

/// Replicate groups of the draws, for the precision of the statistics (and, with Sobol'
/// sampling, the independently shifted sequences).
pub const REPLICATES: u64 = 8;

/// The raw results of draws `first .. first + draws` of a run seeded `seed`.
#[derive(Debug, Clone, PartialEq)]
pub struct Slice {
    pub seed: u64,
    pub sampling: Sampling,
    pub first: u64,
    pub draws: u64,
    pub layout: Layout,
    /// `draws × width` values, draw by draw.
    pub values: Vec<f64>,
}

/// The most raw results a run or merge holds in memory (12 GiB: half the machine this is built
/// for). Every draw's numbers are kept so that statistics and merges are exact.
pub const MAX_RAW_BYTES: u64 = 12 << 30;

/// Refuse a run or merge whose raw results would not fit [`MAX_RAW_BYTES`] or the machine's
/// memory ([`crate::resources::memory_allowance`]), naming the most draws that fit. Returns the
/// raw results' size in bytes.
pub fn check_size(layout: &Layout, draws: u64) -> Result<f64> {
    let bytes = (layout.width() as u64)
        .saturating_mul(draws)
        .saturating_mul(8);
    let allowed =
        (MAX_RAW_BYTES as f64).min(crate::resources::memory_allowance(MAX_RAW_BYTES as f64));
    if bytes as f64 > allowed {
        let per_draw = layout.width() as u64 * 8;
        return Err(Error::Usage(format!(
            "--draws {draws}: {draws} draws of {} numbers each would hold {} of raw results; expected at most {} draws for this network ({} may be held on this machine); use fewer draws, or split the run with --first-draw and merge the slices",
            layout.width(),
            crate::resources::bytes(bytes as f64),
            (allowed / per_draw.max(1) as f64).floor(),
            crate::resources::bytes(allowed),
        )));
    }
    Ok(bytes as f64)
}

/// Time a run of `draws` draws will take, from the simulation's measured throughput: every
/// strategy of every section is simulated over the period in each draw.
pub fn estimated_seconds(layout: &Layout, draws: u64, years: u32) -> f64 {
    let strategies: usize = layout.strategies.iter().map(Vec::len).sum();
    crate::resources::simulation_seconds(strategies as f64 * f64::from(years) * draws as f64)
}

/// The budget rows a run's plan spends against.
fn budget_rows(run: &Run) -> Result<Vec<Row>, crate::error::Error> {
    Ok(crate::plan::rows(run, 1.0)?
        .into_iter()
        .filter(|r| matches!(r.kind, RowKind::Budget(_)))
        .collect())
}

/// The layout of a run under a held plan.
pub fn layout(run: &Run, held: &Every) -> Result<Layout, crate::error::Error> {
    let rows = budget_rows(run)?;
    Ok(Layout {
        sections: run
            .network
            .sections
            .iter()
            .map(|s| s.id.as_str().to_owned())
            .collect(),
        strategies: held
            .strategies
            .iter()
            .map(|v| v.iter().map(|s| s.name.clone()).collect())
            .collect(),
        plan: held.chosen.clone(),
        lines: rows.iter().map(|r| r.name.clone()).collect(),
        limits: rows.iter().map(|r| r.limit).collect(),
        inputs: run
            .scenario
            .uncertain
            .iter()
            .map(|u| format!("{} ({})", u.input, u.distribution.name()))
            .collect(),
        money: run.scenario.money_label.clone(),
        carried_names: crate::schema::carried::carried_names(&run.network),
        carried: run
            .network
            .sections
            .iter()
            .map(|sec| {
                let mut cells = String::new();
                crate::schema::carried::carried_cells(&run.network, sec, &mut cells);
                cells
            })
            .collect(),
    })
}

/// Compute one draw into `out` (length [`Layout::width`]).
fn draw(run: &Run, held: &Every, rows: &[Row], values: &[(&str, f64)], out: &mut [f64]) {
    let v = crate::analysis::vary::apply(run, values);
    let d = v.discounting();
    let y0 = run.scenario.base_year;
    let nstrat: usize = held.strategies.iter().map(Vec::len).sum();
    let (npvs, rest) = out.split_at_mut(nstrat);
    let (network, spend) = rest.split_at_mut(1);
    network[0] = 0.0;
    spend.iter_mut().for_each(|x| *x = 0.0);
    let mut base = Trace::default();
    let mut traces: [Trace; crate::simulate::SIDE_BY_SIDE] = Default::default();
    let mut own = crate::simulate::Flows::default();
    let mut u = Vec::new();
    let mut at = 0;
    for (g, sec) in run.network.sections.iter().enumerate() {
        let s2 = v.section(sec);
        let sim = SectionSim::new(&v.run, &s2);
        let strategies = &held.strategies[g];
        sim.run(&strategies[0], &mut base);
        for t in &mut traces {
            t.clone_from(&base);
        }
        let base_flows = base.flows(d);
        sim.run_each(strategies, &mut traces, |i, t| {
            let npv = if i == 0 {
                0.0
            } else {
                t.flows_into(d, &mut own);
                crate::evaluate::npv_against(d, y0, &own, &base_flows)
            };
            npvs[at + i] = npv;
            if i == held.chosen[g] {
                network[0] += npv;
                crate::plan::uses(run, rows, &s2, t, &mut u);
                for &(j, x) in &u {
                    spend[j as usize] += rows[j as usize].measure(x);
                }
            }
        });
        at += strategies.len();
    }
}

/// Every section simulated once at the scenario's values, for draws whose inputs only scale
/// money ([`crate::evaluate::scales_money_only`]): each strategy's money split by what scales
/// it, and the plan's yearly capital and routine spending.
struct Linear<'a> {
    sims: Vec<SectionSim>,
    /// Per section, its strategies' parts (enumeration order).
    parts: Vec<Vec<Parts>>,
    /// Per section, the plan's strategy's capital and routine spending by year.
    spending: Vec<(Vec<f64>, Vec<f64>)>,
    rows: Vec<SectionRows<'a>>,
}

impl<'a> Linear<'a> {
    /// `None` when some uncertain input changes more than money.
    fn new(run: &'a Run, held: &Every, rows: &[Row]) -> Option<Linear<'a>> {
        let s = &run.scenario;
        if !s
            .uncertain
            .iter()
            .all(|u| crate::evaluate::scales_money_only(&u.input))
        {
            return None;
        }
        let d = &s.discounting;
        let y0 = s.base_year;
        let per: Vec<_> = run
            .network
            .sections
            .par_iter()
            .enumerate()
            .map(|(g, sec)| {
                let sim = SectionSim::new(run, sec);
                let strategies = &held.strategies[g];
                let all: Vec<usize> = (0..strategies.len()).collect();
                let mut spending = (Vec::new(), Vec::new());
                let mut parts: Vec<Parts> = Vec::with_capacity(all.len());
                crate::evaluate::each_split(run, &sim, strategies, &all, |k, t, split, _| {
                    if k == held.chosen[g] {
                        spending = (t.capital.clone(), t.routine.clone());
                    }
                    parts.push(split.pv(d, y0));
                });
                (sim, parts, spending, SectionRows::new(run, rows, sec))
            })
            .collect();
        let mut l = Linear {
            sims: Vec::with_capacity(per.len()),
            parts: Vec::with_capacity(per.len()),
            spending: Vec::with_capacity(per.len()),
            rows: Vec::with_capacity(per.len()),
        };
        for (sim, parts, spending, rows) in per {
            l.sims.push(sim);
            l.parts.push(parts);
            l.spending.push(spending);
            l.rows.push(rows);
        }
        Some(l)
    }

    /// One draw from the split money; `false` (and `out` untouched) when a unit value that is
    /// zero as written is drawn above zero, which no scale of zero money gives.
    fn draw(
        &self,
        run: &Run,
        held: &Every,
        rows: &[Row],
        values: &[(&str, f64)],
        out: &mut [f64],
    ) -> bool {
        let v = crate::analysis::vary::apply(run, values);
        let factor = |name: &str| -> f64 {
            values
                .iter()
                .filter(|(n, _)| *n == name)
                .map(|(_, x)| *x)
                .product()
        };
        let (fc, fr) = (factor("factor.capital_cost"), factor("factor.routine_cost"));
        let mut scales = Vec::with_capacity(self.sims.len());
        for sim in &self.sims {
            match Scales::of(sim, run, &v.run, fc, fr) {
                Some(s) => scales.push(s),
                None => return false,
            }
        }
        let nstrat: usize = held.strategies.iter().map(Vec::len).sum();
        let (npvs, rest) = out.split_at_mut(nstrat);
        let (network, spend) = rest.split_at_mut(1);
        network[0] = 0.0;
        spend.iter_mut().for_each(|x| *x = 0.0);
        let mut u = Vec::new();
        let mut at = 0;
        for (g, parts) in self.parts.iter().enumerate() {
            for (i, p) in parts.iter().enumerate() {
                let npv = if i == 0 { 0.0 } else { p.npv(&scales[g]) };
                npvs[at + i] = npv;
                if i == held.chosen[g] {
                    network[0] += npv;
                }
            }
            let (cap, rt) = &self.spending[g];
            self.rows[g].money_uses((cap, rt), fc, fr, &mut u);
            for &(j, x) in &u {
                spend[j as usize] += rows[j as usize].measure(x);
            }
            at += parts.len();
        }
        true
    }
}

/// The sampled values of draw `k`.
fn sample(run: &Run, seed: u64, sampling: Sampling, k: u64) -> Vec<(&str, f64)> {
    let inputs = &run.scenario.uncertain;
    match sampling {
        Sampling::Random => {
            let mut rng = stream(seed, k);
            inputs
                .iter()
                .map(|u| (u.input.as_str(), u.distribution.sample(&mut rng)))
                .collect()
        }
        Sampling::Sobol => {
            let (replicate, point) = (k % REPLICATES, k / REPLICATES);
            // The replicate's random digital shift: one 32-bit word per input, from a stream
            // of its own (numbered past every draw's).
            let mut shift = stream(seed ^ 0x5EED_50B0_1000_0000, replicate);
            inputs
                .iter()
                .enumerate()
                .map(|(j, u)| {
                    let bits = crate::analysis::sobol::coordinate(point, j)
                        ^ (shift.next_u64() >> 32) as u32;
                    let p = (f64::from(bits) + 0.5) / 4_294_967_296.0;
                    (u.input.as_str(), u.distribution.quantile(p))
                })
                .collect()
        }
    }
}

/// Whether `sampling` can draw the scenario's uncertain inputs (Sobol' points have
/// [`crate::analysis::sobol::MAX_DIMENSIONS`] coordinates).
pub fn check_sampling(run: &Run, sampling: Sampling) -> Result<()> {
    let n = run.scenario.uncertain.len();
    let most = crate::analysis::sobol::MAX_DIMENSIONS;
    if sampling == Sampling::Sobol && n > most {
        return Err(Error::Usage(format!(
            "--sampling sobol: the scenario has {n} uncertain inputs; expected at most {most} (one Sobol' coordinate each), or --sampling random"
        )));
    }
    Ok(())
}

/// Run draws `first .. first + draws` of the plan `held` (every strategy of every section, as
/// [`crate::analysis::held::HeldPlan::every`] enumerates them: each draw weighs them all). When
/// every uncertain input only scales money (the cost and unit-value factors, time and crash unit
/// values), each strategy is simulated once and the draws weigh its split money; otherwise every
/// draw simulates every strategy.
pub fn simulate(
    run: &Run,
    held: &Every,
    seed: u64,
    sampling: Sampling,
    first: u64,
    draws: u64,
    progress: &Progress,
) -> Result<Slice, crate::error::Error> {
    check_sampling(run, sampling)?;
    let layout = layout(run, held)?;
    let width = layout.width();
    let rows = budget_rows(run)?;
    let mut values = vec![0.0; width * draws as usize];
    let linear = Linear::new(run, held, &rows);
    values
        .par_chunks_mut(width.max(1))
        .enumerate()
        .for_each(|(i, out)| {
            let k = first + i as u64;
            let values = sample(run, seed, sampling, k);
            let done = linear
                .as_ref()
                .is_some_and(|l| l.draw(run, held, &rows, &values, out));
            if !done {
                draw(run, held, &rows, &values, out);
            }
            progress.inc(1);
        });
    Ok(Slice {
        seed,
        sampling,
        first,
        draws,
        layout,
        values,
    })
}

const MAGIC: &[u8] = b"PAVESTRAT-RISK-SLICE 1\n";

#[derive(serde::Serialize, serde::Deserialize)]
struct Header {
    seed: u64,
    /// Left out for pseudo-random draws (the files from before quasi-random draws existed).
    #[serde(default, skip_serializing_if = "Sampling::is_random")]
    sampling: Sampling,
    first: u64,
    draws: u64,
    layout: Layout,
}

impl Slice {
    /// The raw file: a magic line, a JSON header line, then the values as little-endian f64.
    pub fn to_bytes(&self) -> Vec<u8> {
        let header = Header {
            seed: self.seed,
            sampling: self.sampling,
            first: self.first,
            draws: self.draws,
            layout: self.layout.clone(),
        };
        let mut out = MAGIC.to_vec();
        out.extend(serde_json::to_vec(&header).unwrap_or_default());
        out.push(b'\n');
        out.reserve(self.values.len() * 8);
        for x in &self.values {
            out.extend_from_slice(&x.to_le_bytes());
        }
        out
    }

    /// Read a raw file written by [`Slice::to_bytes`].
    pub fn read(path: &Path) -> Result<Slice> {
        let label = path.display().to_string();
        let bad = |what: String| {
            Error::Usage(format!(
                "{label}: {what}; expected a risk_slice.bin written by `pavestrat risk --out DIR`"
            ))
        };
        if !path.is_file() {
            return Err(bad("not a regular file".into()));
        }
        let mut bytes = Vec::new();
        std::fs::File::open(path)
            .and_then(|mut f| f.read_to_end(&mut bytes))
            .map_err(|e| bad(format!("cannot read it ({e})")))?;
        let rest = bytes
            .strip_prefix(MAGIC)
            .ok_or_else(|| bad("not a risk slice (its first line differs)".into()))?;
        let nl = rest
            .iter()
            .position(|b| *b == b'\n')
            .ok_or_else(|| bad("no header line".into()))?;
        let h: Header = serde_json::from_slice(&rest[..nl])
            .map_err(|e| bad(format!("an unreadable header ({e})")))?;
        h.layout
            .consistent()
            .map_err(|e| bad(format!("a header that contradicts itself ({e})")))?;
        let body = &rest[nl + 1..];
        let width = h.layout.width();
        let want = width
            .checked_mul(h.draws as usize)
            .and_then(|n| n.checked_mul(8))
            .ok_or_else(|| bad("a header whose size overflows".into()))?;
        if body.len() != want {
            return Err(bad(format!(
                "{} bytes of values where its header promises {want} ({} draws × {width} values)",
                body.len(),
                h.draws
            )));
        }
        let values = body
            .chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().unwrap_or([0; 8])))
            .collect();
        Ok(Slice {
            seed: h.seed,
            sampling: h.sampling,
            first: h.first,
            draws: h.draws,
            layout: h.layout,
            values,
        })
    }
}

/// Merge slices of one run into the slice of the whole: same seed, scenario layout and plan;
/// draw ranges that follow each other with no gap or overlap (in any order given).
pub fn merge(mut parts: Vec<(String, Slice)>) -> Result<Slice> {
    if parts.is_empty() {
        return Err(Error::Usage("--merge: no slices given".into()));
    }
    parts.sort_by_key(|p| p.1.first);
    let (name0, first) = (&parts[0].0, &parts[0].1);
    for (name, s) in &parts[1..] {
        if s.seed != first.seed {
            return Err(Error::Usage(format!(
                "--merge: {name} was drawn with seed {} and {name0} with seed {}; expected slices of one run (one seed)",
                s.seed, first.seed
            )));
        }
        if s.sampling != first.sampling {
            return Err(Error::Usage(format!(
                "--merge: {name} was drawn with --sampling {} and {name0} with --sampling {}; expected slices of one run",
                s.sampling.name(),
                first.sampling.name()
            )));
        }
        if s.layout != first.layout {
            return Err(Error::Usage(format!(
                "--merge: {name} and {name0} differ in their scenario, network, plan or uncertain inputs; expected slices of one run (give every slice the same --scenario and --from)"
            )));
        }
    }
    let mut next = first.first;
    let mut values = Vec::new();
    for (name, s) in &parts {
        if s.first != next {
            return Err(Error::Usage(format!(
                "--merge: {name} starts at draw {} where draw {next} was expected (a gap or an overlap between slices)",
                s.first
            )));
        }
        next += s.draws;
        check_size(&first.layout, next - first.first)?;
        values.extend_from_slice(&s.values);
    }
    Ok(Slice {
        seed: first.seed,
        sampling: first.sampling,
        first: first.first,
        draws: next - first.first,
        layout: first.layout.clone(),
        values,
    })
}

/// Summary statistics of one quantity over the draws.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stats {
    pub mean: f64,
    pub sd: f64,
    pub p10: f64,
    pub p50: f64,
    pub p90: f64,
}

/// The q-quantile of sorted values, linear between order statistics (numpy's default).
pub fn quantile(sorted: &[f64], q: f64) -> f64 {
    if sorted.is_empty() {
        return f64::NAN;
    }
    let h = (sorted.len() - 1) as f64 * q;
    let (i, f) = (h.floor() as usize, h - h.floor());
    if i + 1 < sorted.len() {
        sorted[i] + f * (sorted[i + 1] - sorted[i])
    } else {
        sorted[i]
    }
}

/// Statistics of values (in draw order; the mean is summed in that order).
pub fn stats(values: &[f64]) -> Stats {
    let n = values.len() as f64;
    let mean = values.iter().sum::<f64>() / n;
    let sd = if values.len() > 1 {
        (values.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
    } else {
        0.0
    };
    let mut s = values.to_vec();
    s.sort_by(f64::total_cmp);
    Stats {
        mean,
        sd,
        p10: quantile(&s, 0.1),
        p50: quantile(&s, 0.5),
        p90: quantile(&s, 0.9),
    }
}

/// Standard errors of [`Stats`]' mean and percentiles, from the [`REPLICATES`] groups of the
/// draws (see the module's notes); NaN when a group has fewer than two draws.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Precision {
    pub mean: f64,
    pub p10: f64,
    pub p50: f64,
    pub p90: f64,
}

/// The precision of the statistics of `values`, the draws numbered from `first` in order: each
/// statistic computed on every replicate group (draw k in group k mod [`REPLICATES`]), and the
/// sample standard deviation of the group values over √[`REPLICATES`].
pub fn precision(values: &[f64], first: u64) -> Precision {
    let r = REPLICATES as usize;
    let mut groups: Vec<Vec<f64>> = vec![Vec::with_capacity(values.len() / r + 1); r];
    for (i, x) in values.iter().enumerate() {
        groups[((first + i as u64) % REPLICATES) as usize].push(*x);
    }
    if groups.iter().any(|g| g.len() < 2) {
        return Precision {
            mean: f64::NAN,
            p10: f64::NAN,
            p50: f64::NAN,
            p90: f64::NAN,
        };
    }
    let st: Vec<Stats> = groups.iter().map(|g| stats(g)).collect();
    let se = |f: fn(&Stats) -> f64| {
        let xs: Vec<f64> = st.iter().map(f).collect();
        let m = xs.iter().sum::<f64>() / r as f64;
        let var = xs.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (r as f64 - 1.0);
        (var / r as f64).sqrt()
    };
    Precision {
        mean: se(|s| s.mean),
        p10: se(|s| s.p10),
        p50: se(|s| s.p50),
        p90: se(|s| s.p90),
    }
}

impl Slice {
    fn column(&self, j: usize) -> Vec<f64> {
        let w = self.layout.width();
        (0..self.draws as usize)
            .map(|k| self.values[k * w + j])
            .collect()
    }

    /// The plan's NPV in each draw.
    pub fn network(&self) -> Vec<f64> {
        let n: usize = self.layout.strategies.iter().map(Vec::len).sum();
        self.column(n)
    }

    /// `risk.csv`'s rows: `strategy` rows (every strategy of every section: its NPV; `in_plan`
    /// true for the plan's), one `plan` row (the network plan's NPV) and `budget` rows (each
    /// line's spending by the plan); the standard errors are [`precision`]'s (empty below 16
    /// draws).
    pub fn rows(&self) -> Vec<crate::schema::analysis::Risk> {
        use crate::schema::analysis::Risk;
        use crate::schema::value::{Cents, Fixed};
        let l = &self.layout;
        let w = l.width();
        let n = self.draws as usize;
        let frac = |c: usize| Some(Fixed::<6>::of(c as f64 / n.max(1) as f64));
        // A row's statistics and their standard errors.
        let row = |kind: &str, col: &[f64]| -> Risk {
            let st = stats(col);
            let p = precision(col, self.first);
            Risk {
                kind: kind.to_owned(),
                section_id: String::new(),
                strategy: String::new(),
                line: String::new(),
                limit: None,
                mean: Cents::of_f64(st.mean),
                sd: Cents::of_f64(st.sd),
                p10: Cents::of_f64(st.p10),
                p50: Cents::of_f64(st.p50),
                p90: Cents::of_f64(st.p90),
                prob_positive: None,
                prob_best: None,
                prob_over: None,
                draws: n as u64,
                in_plan: None,
                se_mean: Cents::of_f64(p.mean),
                se_p10: Cents::of_f64(p.p10),
                se_p50: Cents::of_f64(p.p50),
                se_p90: Cents::of_f64(p.p90),
            }
        };
        let mut out = Vec::new();
        // Each section's best strategy in each draw.
        let mut at = 0;
        for (g, names) in l.strategies.iter().enumerate() {
            let mut best = vec![0usize; names.len()];
            for k in 0..n {
                let row = &self.values[k * w + at..k * w + at + names.len()];
                let mut b = 0;
                for (i, x) in row.iter().enumerate() {
                    if *x > row[b] {
                        b = i;
                    }
                }
                best[b] += 1;
            }
            for (i, name) in names.iter().enumerate() {
                let col = self.column(at + i);
                out.push(Risk {
                    section_id: l.sections[g].clone(),
                    strategy: name.clone(),
                    prob_positive: frac(col.iter().filter(|x| **x > 0.0).count()),
                    prob_best: frac(best[i]),
                    in_plan: Some(l.plan[g] == i),
                    ..row("strategy", &col)
                });
            }
            at += names.len();
        }
        let net = self.network();
        out.push(Risk {
            prob_positive: frac(net.iter().filter(|x| **x > 0.0).count()),
            ..row("plan", &net)
        });
        for (j, line) in l.lines.iter().enumerate() {
            let col = self.column(at + 1 + j);
            let limit = l.limits[j];
            out.push(Risk {
                line: line.clone(),
                limit: Cents::of_f64(limit),
                prob_over: frac(col.iter().filter(|x| **x > limit + 0.005).count()),
                ..row("budget", &col)
            });
        }
        out
    }

    /// `risk.csv`: [`Slice::rows`], each section's strategy rows ending with the columns
    /// carried from the network, the plan and budget rows with those cells empty.
    pub fn csv(&self) -> String {
        use crate::schema::analysis::Risk;
        use crate::schema::Record as _;
        let l = &self.layout;
        let mut s = Risk::FILE.head();
        s.pop();
        for name in &l.carried_names {
            s.push(',');
            crate::schema::value::write_text(name, &mut s);
        }
        s.push('\n');
        let blank = ",".repeat(l.carried_names.len());
        // The strategy rows come first, section by section.
        let mut of_section = l
            .strategies
            .iter()
            .enumerate()
            .flat_map(|(g, names)| std::iter::repeat_n(g, names.len()));
        for r in self.rows() {
            let g = if r.kind == "strategy" {
                of_section.next()
            } else {
                None
            };
            let tail = g.and_then(|g| l.carried.get(g)).unwrap_or(&blank);
            r.write_then(&mut s, |out| out.push_str(tail));
        }
        s
    }

    /// `risk_draws.csv`: `draw,plan_npv` and one `spend:<line>` column per budget line.
    pub fn draws_csv(&self) -> String {
        use crate::schema::analysis::RiskDraw;
        use crate::schema::value::Cents;
        let l = &self.layout;
        let w = l.width();
        let n: usize = l.strategies.iter().map(Vec::len).sum();
        let mut s = RiskDraw::head(l.lines.iter().map(String::as_str));
        for k in 0..self.draws as usize {
            let row = &self.values[k * w..(k + 1) * w];
            let draw = RiskDraw {
                draw: self.first + k as u64,
                plan_npv: Cents::of_f64(row[n]),
            };
            draw.write_with(row[n + 1..].iter().map(|x| Cents::of_f64(*x)), &mut s);
        }
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    proptest::proptest! {
        /// The raw slice's reader on arbitrary bytes: never a panic.
        #[test]
        fn a_slice_of_arbitrary_bytes_is_refused_not_a_panic(bytes in proptest::collection::vec(proptest::prelude::any::<u8>(), 0..3000)) {
            let dir = tempfile::tempdir().unwrap();
            let path = dir.path().join(crate::schema::analysis::RISK_SLICE);
            std::fs::write(&path, &bytes).unwrap();
            let _ = Slice::read(&path);
        }
    }

    /// Draws of inputs that only scale money, weighed from split money, give what simulating
    /// every draw gives: every strategy's NPV, the plan's NPV and each line's spending (to
    /// rounding: 1e-9 of the amount, or a cent of spending rounded apart).
    #[test]
    fn money_only_draws_agree_with_simulated_draws() {
        let (run, d) = crate::input::load(
            &crate::demo::SOURCE,
            std::path::Path::new(crate::demo::SCENARIO),
        );
        assert!(!d.has_errors(), "{d}");
        let full = run.unwrap();
        let mut run = full.clone();
        run.scenario
            .uncertain
            .retain(|u| crate::evaluate::scales_money_only(&u.input));
        assert!(run.scenario.uncertain.len() >= 3);
        let settings = crate::plan::Settings {
            objective: run.scenario.plan.objective,
            budget_scale: 1.0,
            select: Default::default(),
        };
        let held = crate::analysis::held::HeldPlan::select(&run, &settings)
            .unwrap()
            .every(&run);
        let rows = budget_rows(&run).unwrap();
        let linear = Linear::new(&run, &held, &rows).expect("money-only inputs");
        let width = layout(&run, &held).unwrap().width();
        let (mut a, mut b) = (vec![0.0; width], vec![0.0; width]);
        for k in 0..12 {
            let sampling = if k % 2 == 0 {
                Sampling::Random
            } else {
                Sampling::Sobol
            };
            let values = sample(&run, 5, sampling, k);
            assert!(linear.draw(&run, &held, &rows, &values, &mut a));
            draw(&run, &held, &rows, &values, &mut b);
            for (i, (x, y)) in a.iter().zip(&b).enumerate() {
                assert!(
                    (x - y).abs() <= 1e-9 * (1.0 + y.abs()) + 0.011,
                    "draw {k}, value {i}: {x} against {y}"
                );
            }
        }
        // A physical input among them: every draw simulates.
        assert!(Linear::new(&full, &held, &rows).is_none());
    }

    #[test]
    fn quantiles_interpolate_like_numpy() {
        // numpy.percentile([1, 2, 3, 4], [10, 50, 90]) = [1.3, 2.5, 3.7] (linear, the default).
        let s = [1.0, 2.0, 3.0, 4.0];
        assert!((quantile(&s, 0.1) - 1.3).abs() < 1e-12);
        assert!((quantile(&s, 0.5) - 2.5).abs() < 1e-12);
        assert!((quantile(&s, 0.9) - 3.7).abs() < 1e-12);
        assert!((quantile(&[5.0], 0.9) - 5.0).abs() < 1e-12);
        let st = stats(&[2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0]);
        assert!((st.mean - 5.0).abs() < 1e-12);
        // Sample standard deviation (n − 1): √(32/7).
        assert!((st.sd - (32.0f64 / 7.0).sqrt()).abs() < 1e-12);
    }

    #[test]
    fn a_slice_whose_header_contradicts_its_data_is_refused_not_indexed() {
        let layout = Layout {
            sections: vec!["A".into(), "B".into()],
            strategies: vec![
                vec!["base".into(), "overlay@2027".into()],
                vec!["base".into()],
            ],
            plan: vec![1, 0],
            lines: vec!["works-2027".into()],
            limits: vec![100.0],
            inputs: vec![],
            money: String::new(),
            carried_names: vec!["road".into()],
            carried: vec![",North Road".into(), ",North Road".into()],
        };
        assert!(layout.consistent().is_ok());
        let slice = Slice {
            seed: 1,
            sampling: Sampling::Random,
            first: 0,
            draws: 1,
            values: vec![0.0; layout.width()],
            layout,
        };
        let dir = tempfile::tempdir().unwrap();
        for (what, change) in [
            ("fewer limits", 0),
            ("fewer sections", 1),
            ("fewer strategies", 2),
            ("fewer rows of carried columns", 3),
        ] {
            let mut bad = slice.clone();
            match change {
                0 => bad.layout.limits.clear(),
                1 => {
                    bad.layout.sections.pop();
                }
                2 => bad.layout.strategies[0].truncate(1),
                _ => {
                    bad.layout.carried.pop();
                }
            }
            bad.values = vec![0.0; bad.layout.width()];
            let p = dir.path().join(format!("{change}.bin"));
            std::fs::write(&p, bad.to_bytes()).unwrap();
            let e = Slice::read(&p).unwrap_err().to_string();
            assert!(e.contains("contradicts itself"), "{what}: {e}");
        }
    }
}
