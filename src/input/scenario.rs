//! The scenario file (TOML): the frame of a run — years, discounting, money, the files that hold
//! the network and the strategies, economic unit values and budget lines.
//!
//! ```toml
//! [scenario]
//! title = "Example district"
//! base_year = 2027          # the year money is discounted to
//! analysis_years = 30       # length of the analysis period, base year included
//! discount_rate = 0.06      # real, as a fraction
//! discounting = "end-of-year"   # or "mid-year"
//! money = "CR"              # label printed beside amounts
//!
//! [files]                   # paths relative to this file
//! network = "network.csv"  # or a workbook, .xlsx / .xls / .ods
//! network_sheet = "Roads"   # optional: the workbook's sheet (else its first)
//! network_coordinates = "lonlat"   # or "projected": what a `geometry` column's x and y are
//! treatments = "treatments.toml"
//! strategies = ["templates.toml"]
//!
//! [unit_values]             # money, as decimal text
//! time = { car = "7.80", bus = "36.00", light_truck = "11.50", heavy_truck = "16.20" }
//! operating = { car = "0.19", bus = "0.92", light_truck = "0.34", heavy_truck = "0.88" }
//! crash = "96000"
//!
//! [[budget]]                # one budget line per year from first_year to last_year
//! name = "works"
//! category = "capital"      # capital | routine | all
//! region = "north"          # optional: only sections of this region count
//! first_year = 2027
//! last_year = 2031
//! per_year = "5400000"
//! years = { 2029 = "7000000" }   # optional: other limits for single years
//! ```

use super::tomldoc::{Doc, Table, Value};
use crate::diag::{Diagnostics, Place};
use crate::economics::{Discounting, Timing};
use crate::model::catalogue::Category;
use crate::model::money::Money;
use crate::model::{Region, Year, YearOffset};
use std::path::{Path, PathBuf};

/// The vehicle classes every unit value and traffic share is given for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum VehicleClass {
    Car,
    Bus,
    LightTruck,
    HeavyTruck,
}

impl VehicleClass {
    pub const ALL: [VehicleClass; 4] = [
        VehicleClass::Car,
        VehicleClass::Bus,
        VehicleClass::LightTruck,
        VehicleClass::HeavyTruck,
    ];

    /// The key used in files.
    pub fn key(self) -> &'static str {
        match self {
            VehicleClass::Car => "car",
            VehicleClass::Bus => "bus",
            VehicleClass::LightTruck => "light_truck",
            VehicleClass::HeavyTruck => "heavy_truck",
        }
    }
}

/// One value per vehicle class.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct PerClass<T>(pub [T; 4]);

impl<T: Copy> PerClass<T> {
    pub fn get(&self, c: VehicleClass) -> T {
        self.0[c as usize]
    }
}

/// A money limit on agency spending in one year.
#[derive(Debug, Clone, PartialEq)]
pub struct BudgetLine {
    /// `{group}-{year}`: the line's name in every output.
    pub name: String,
    /// The `[[budget]]` entry it came from.
    pub group: String,
    pub year: Year,
    pub limit: Money,
    pub category: Category,
    pub region: Option<Region>,
    /// Where the `[[budget]]` entry is.
    pub place: Place,
}

/// Economic unit values (money).
#[derive(Debug, Clone, PartialEq)]
pub struct UnitValues {
    /// Value of one vehicle-hour of travel time.
    pub time: PerClass<Money>,
    /// Vehicle operating cost per vehicle-km on a smooth road.
    pub operating: PerClass<Money>,
    /// Average cost of one injury crash.
    pub crash: Money,
}

/// A file named by the scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct FileRef {
    /// As written in the scenario.
    pub written: String,
    /// Resolved against the scenario's directory.
    pub path: PathBuf,
    /// Where the scenario names it.
    pub place: Place,
}

/// The files a scenario names.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioFiles {
    pub network: FileRef,
    /// The sheet of a workbook network, and where the scenario names it.
    pub network_sheet: Option<(String, Place)>,
    /// What the network's geometry's coordinates are.
    pub coordinates: crate::model::network::Coordinates,
    pub treatments: FileRef,
    pub strategies: Vec<FileRef>,
}

/// The resolved scenario.
#[derive(Debug, Clone, PartialEq)]
pub struct Scenario {
    pub file: String,
    pub title: String,
    pub base_year: Year,
    pub analysis_years: u32,
    pub discounting: Discounting,
    pub money_label: String,
    pub files: ScenarioFiles,
    pub unit_values: UnitValues,
    pub budget_lines: Vec<BudgetLine>,
    /// Objective, commitments and condition targets for `plan`.
    pub plan: super::plan::PlanRules,
    /// Model coefficients ([`super::models`]); defaults where the file is silent.
    pub models: super::models::Models,
    /// Inputs declared uncertain (`[[uncertain]]`), for `risk`.
    pub uncertain: Vec<super::uncertain::Uncertain>,
}

impl Scenario {
    /// The last year of the analysis period.
    pub fn last_year(&self) -> Year {
        self.base_year + YearOffset(self.analysis_years.saturating_sub(1))
    }

    /// Whether some budget line limits spending of `category` in `year` (a line of that
    /// category, or of `all`).
    pub fn year_has_line(&self, year: i32, category: Category) -> bool {
        self.budget_lines
            .iter()
            .any(|b| b.year.0 == year && (b.category == category || b.category == Category::All))
    }

    /// The budget groups (the `[[budget]]` entries' names), in the scenario's order: a group's
    /// lines are next to each other.
    pub fn budget_groups(&self) -> Vec<&str> {
        let mut groups: Vec<&str> = self.budget_lines.iter().map(|b| b.group.as_str()).collect();
        groups.dedup();
        groups
    }

    /// How the budget groups overlap: a group whose every line lies within wider lines of its
    /// year — network-wide where it is a region's, or of category `all` where it is capital's
    /// or routine's — so that spending counted against it also counts against those (a
    /// ring-fenced budget), with the groups of the wider lines; and pairs of groups with the
    /// same scope year by year, whose limits both hold on the same spending.
    pub fn budget_overlaps(&self) -> Vec<BudgetOverlap<'_>> {
        let groups = self.budget_groups();
        let lines = |g: &str| -> Vec<&BudgetLine> {
            self.budget_lines.iter().filter(|b| b.group == g).collect()
        };
        let mut out = Vec::new();
        for (i, a) in groups.iter().enumerate() {
            let la = lines(a);
            // The wider lines over each of a's lines, if every one has some.
            let mut outer: Vec<&str> = Vec::new();
            let within = la.iter().all(|x| {
                let wide: Vec<&BudgetLine> = self
                    .budget_lines
                    .iter()
                    .filter(|y| covers(y, x) && !covers(x, y))
                    .collect();
                for y in &wide {
                    if !outer.contains(&y.group.as_str()) {
                        outer.push(&y.group);
                    }
                }
                !wide.is_empty()
            });
            if within {
                out.push(BudgetOverlap::Within { inner: a, outer });
            }
            for b in &groups[i + 1..] {
                let lb = lines(b);
                let same = |x: &BudgetLine, y: &BudgetLine| covers(x, y) && covers(y, x);
                if la.iter().all(|x| lb.iter().any(|y| same(x, y)))
                    && lb.iter().all(|y| la.iter().any(|x| same(x, y)))
                {
                    out.push(BudgetOverlap::Same { a, b });
                }
            }
        }
        out
    }
}

/// Whether every spending `inner` limits also counts against `outer`: the same year, `outer`'s
/// category the same or `all`, its region the same or none (the whole network).
fn covers(outer: &BudgetLine, inner: &BudgetLine) -> bool {
    outer.year == inner.year
        && (outer.category == Category::All || outer.category == inner.category)
        && (outer.region.is_none() || outer.region == inner.region)
}

/// What `[plan] years_without_lines` makes of the years after each scope's lines end (a scope:
/// a category and a region, or the whole network), to the end of the analysis period: nothing
/// (`unlimited`); the scope's last line held on year by year, its group's lines extended with
/// its last limit (`last-limit`); or an error at the `[[budget]]` whose lines end early
/// (`error`).
fn after_lines_end(
    lines: Vec<BudgetLine>,
    rule: super::plan::YearsWithoutLines,
    period: Option<(i64, i64)>,
    d: &mut Diagnostics,
) -> Vec<BudgetLine> {
    use super::plan::YearsWithoutLines;
    let Some((_, last)) = period else {
        return lines;
    };
    if rule == YearsWithoutLines::Unlimited {
        return lines;
    }
    // Each scope's last line.
    let mut ends: Vec<usize> = Vec::new();
    for (i, b) in lines.iter().enumerate() {
        let same = |k: &usize| lines[*k].category == b.category && lines[*k].region == b.region;
        match ends.iter_mut().find(|k| same(k)) {
            Some(k) if b.year > lines[*k].year => *k = i,
            Some(_) => {}
            None => ends.push(i),
        }
    }
    let ends: Vec<usize> = ends
        .into_iter()
        .filter(|&k| i64::from(lines[k].year.0) < last)
        .collect();
    if rule == YearsWithoutLines::Error {
        for &k in &ends {
            let b = &lines[k];
            d.error(
                b.place.clone().with_subfield("last_year"),
                format!(
                    "the `{}` lines end in {}, and no other line of its scope ({}{}) runs on \
                     to the period's end in {last}",
                    b.group,
                    b.year.0,
                    b.category.name(),
                    b.region
                        .as_deref()
                        .map(|r| format!(", {r}"))
                        .unwrap_or_default()
                ),
                "budget lines to the end of the analysis period, or [plan] years_without_lines \
                 = \"unlimited\" or \"last-limit\"",
            );
        }
        return lines;
    }
    let mut out = Vec::with_capacity(lines.len());
    for (i, b) in lines.iter().enumerate() {
        out.push(b.clone());
        if ends.contains(&i) {
            for y in (b.year.0 + 1)..=(last as i32) {
                out.push(BudgetLine {
                    name: format!("{}-{y}", b.group),
                    year: Year(y),
                    ..b.clone()
                });
            }
        }
    }
    out
}

/// Budget groups that limit some of the same spending ([`Scenario::budget_overlaps`]).
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum BudgetOverlap<'s> {
    /// Every line of `inner` is a region's share of network-wide lines of the `outer` groups.
    Within { inner: &'s str, outer: Vec<&'s str> },
    /// The two groups limit the same spending, year by year.
    Same { a: &'s str, b: &'s str },
}

impl std::fmt::Display for BudgetOverlap<'_> {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            BudgetOverlap::Within { inner, outer } => {
                let outer = outer.join(" and ");
                write!(
                    f,
                    "{inner} lies within {outer}: its spending also counts against {outer}, so \
                     its money is counted once, in {outer}"
                )
            }
            BudgetOverlap::Same { a, b } => write!(
                f,
                "{a} and {b} limit the same spending in the same years: the smaller limit holds, \
                 and only it is counted"
            ),
        }
    }
}

/// The most the budget lines let be spent, each year's money counted once: the largest
/// spending, by region and category, that keeps within every line of the year, counting only
/// spending some line limits (capital works in a year with no capital and no `all` line are
/// not counted, nor routine spending with no routine and no `all` line). So a ring-fenced line
/// inside a wider one adds nothing (its money is part of the wider line's), two lines of the
/// same scope count once at the smaller limit, and a regional `all` line limits its region
/// only. `lines` are each line with the limit to count (the scenario's, or a scaled one).
///
/// Each year is a maximum flow (Ford and Fulkerson's theorem): source → the network-wide `all`
/// line → each category's network-wide line → that category's line in each region → the
/// region's `all` line → sink, a missing line an unlimited arc; one path per region and
/// category that some line limits.
pub fn total_limit<'a>(lines: impl IntoIterator<Item = (&'a BudgetLine, f64)>) -> f64 {
    let mut years: Vec<(Year, [Caps<'a>; 3])> = Vec::new();
    for (line, limit) in lines {
        let k = match years.iter().position(|e| e.0 == line.year) {
            Some(k) => k,
            None => {
                years.push((line.year, Default::default()));
                years.len() - 1
            }
        };
        let caps = &mut years[k].1[line.category as usize];
        match line.region.as_ref() {
            None => caps.0 = Some(caps.0.map_or(limit, |x: f64| x.min(limit))),
            Some(r) => match caps.1.iter_mut().find(|(n, _)| *n == r.as_str()) {
                Some((_, x)) => *x = x.min(limit),
                None => caps.1.push((r.as_str(), limit)),
            },
        }
    }
    years.iter().map(|(_, caps)| year_money(caps)).sum()
}

/// One category's lines of a year: the network-wide limit, and each region's (the smallest,
/// where several lines share a scope).
type Caps<'a> = (Option<f64>, Vec<(&'a str, f64)>);

/// One year's money for [`total_limit`]: the maximum flow through its lines (capital, routine,
/// all).
fn year_money(caps: &[Caps<'_>; 3]) -> f64 {
    const INF: f64 = f64::INFINITY;
    let [capital, routine, all] = caps;
    // The regions any line names, then the rest of the network (`None`).
    let mut regions: Vec<Option<&str>> = Vec::new();
    for (_, per) in caps {
        for (r, _) in per {
            if !regions.contains(&Some(*r)) {
                regions.push(Some(*r));
            }
        }
    }
    regions.push(None);
    let of = |per: &[(&str, f64)], r: Option<&str>| -> Option<f64> {
        let r = r?;
        per.iter().find(|(n, _)| *n == r).map(|(_, x)| *x)
    };
    // Nodes: 0 source, 1 after the network-wide all line, 2 and 3 the categories, then each
    // region, then the sink.
    let n = 4 + regions.len() + 1;
    let sink = n - 1;
    let mut cap = vec![vec![0.0f64; n]; n];
    cap[0][1] = all.0.unwrap_or(INF);
    for (c, cat) in [capital, routine].into_iter().enumerate() {
        cap[1][2 + c] = cat.0.unwrap_or(INF);
        for (k, &r) in regions.iter().enumerate() {
            let own = of(&cat.1, r);
            let region_all = of(&all.1, r);
            let limited =
                all.0.is_some() || cat.0.is_some() || own.is_some() || region_all.is_some();
            if limited {
                cap[2 + c][4 + k] = own.unwrap_or(INF);
            }
        }
    }
    for (k, &r) in regions.iter().enumerate() {
        cap[4 + k][sink] = of(&all.1, r).unwrap_or(INF);
    }
    max_flow(&mut cap, 0, sink)
}

/// The maximum flow from `s` to `t` through arcs of capacity `cap[u][v]` (Edmonds and Karp:
/// shortest augmenting paths). Every path from `s` to `t` must have an arc of finite capacity.
fn max_flow(cap: &mut [Vec<f64>], s: usize, t: usize) -> f64 {
    let n = cap.len();
    let mut total = 0.0;
    loop {
        let mut prev = vec![usize::MAX; n];
        prev[s] = s;
        let mut queue = std::collections::VecDeque::from([s]);
        while let Some(u) = queue.pop_front() {
            for v in 0..n {
                if prev[v] == usize::MAX && cap[u][v] > 0.0 {
                    prev[v] = u;
                    queue.push_back(v);
                }
            }
        }
        if prev[t] == usize::MAX {
            return total;
        }
        let mut push = f64::INFINITY;
        let mut v = t;
        while v != s {
            push = push.min(cap[prev[v]][v]);
            v = prev[v];
        }
        if !push.is_finite() {
            // No line limits this path: its spending is not counted (none is built so).
            return total;
        }
        let mut v = t;
        while v != s {
            let u = prev[v];
            cap[u][v] -= push;
            cap[v][u] += push;
            v = u;
        }
        total += push;
    }
}

/// Earliest and latest base year accepted (a guard against typos such as 207).
const YEARS: (i64, i64) = (1950, 2200);

/// What could be read of a scenario: the whole of it when valid, and otherwise still the files
/// it names, so that they can be checked in the same pass.
#[derive(Debug, Clone, Default)]
pub struct Partial {
    pub scenario: Option<Scenario>,
    pub files: Option<ScenarioFiles>,
    /// The pavement families, when the model tables were read without error (so that the
    /// network's surfaces can be checked even if something else in the scenario is wrong).
    pub families: Option<Vec<String>>,
}

/// Read a scenario from its text; relative file paths resolve against `dir`.
pub fn parse(file: &str, text: &str, dir: &Path, d: &mut Diagnostics) -> Option<Scenario> {
    parse_partial(file, text, dir, d).scenario
}

/// Read a scenario, keeping what is usable of it even when some of it is wrong.
pub fn parse_partial(file: &str, text: &str, dir: &Path, d: &mut Diagnostics) -> Partial {
    let before = d.error_count();
    let doc = Doc::parse(file, text, d);
    if d.error_count() > before {
        return Partial::default();
    }
    let mut top = doc.table();

    let frame = top
        .require(
            "scenario",
            d,
            "a [scenario] table with base_year, analysis_years and discount_rate",
        )
        .and_then(|v| v.table(d))
        .map(|t| read_frame(t, d));
    let period = frame.as_ref().map(|f| f.1).unwrap_or(None);
    let frame = frame.and_then(|f| f.0);
    let files = top
        .require(
            "files",
            d,
            "a [files] table naming network, treatments and strategies",
        )
        .and_then(|v| v.table(d))
        .and_then(|t| read_files(t, dir, d));
    let unit_values = top
        .require(
            "unit_values",
            d,
            "a [unit_values] table with time, operating and crash",
        )
        .and_then(|v| v.table(d))
        .and_then(|t| read_unit_values(t, d));
    let budgets = top.get("budget");
    let uncertain = top.get("uncertain");
    let plan = super::plan::read(&mut top, period, d);
    let (models, families_ok) = super::models::read(&mut top, d);
    let families = families_ok.then(|| {
        models
            .condition
            .families
            .iter()
            .map(|f| f.name.clone())
            .collect()
    });
    top.finish(d);

    let budget_lines = match budgets {
        Some(v) => read_budgets(&v, period, d),
        None => Vec::new(),
    };
    let budget_lines = after_lines_end(budget_lines, plan.years_without_lines, period, d);
    for t in &plan.targets {
        if let Some(b) = budget_lines.iter().find(|b| b.group == t.group) {
            d.error(
                t.place.clone().with_subfield("name"),
                format!(
                    "the name `{}`, also a [[budget]] name (line {})",
                    t.group,
                    b.place.line.unwrap_or(0)
                ),
                "target names that differ from budget names, so that every line has its own name",
            );
        }
    }
    let scenario = (|| {
        let (frame, files, unit_values) = (frame?, files.clone()?, unit_values?);
        Some(Scenario {
            file: file.to_owned(),
            title: frame.title,
            base_year: frame.base_year,
            analysis_years: frame.analysis_years,
            discounting: frame.discounting,
            money_label: frame.money,
            files,
            unit_values,
            budget_lines,
            plan,
            models,
            uncertain: Vec::new(),
        })
    })();
    // Uncertain inputs are checked against the scenario they vary (its values and families).
    let scenario = match (scenario, uncertain) {
        (Some(mut s), Some(v)) => {
            s.uncertain = super::uncertain::read(&v, &s, d);
            Some(s)
        }
        (s, _) => s,
    };
    Partial {
        scenario: scenario.filter(|_| d.error_count() == before),
        files,
        families,
    }
}

struct Frame {
    title: String,
    base_year: Year,
    analysis_years: u32,
    discounting: Discounting,
    money: String,
}

/// The frame, and the analysis period (first and last year) when those two keys were good.
fn read_frame(mut t: Table<'_, '_>, d: &mut Diagnostics) -> (Option<Frame>, Option<(i64, i64)>) {
    let title = t
        .get("title")
        .and_then(|v| v.string(d).map(str::to_owned))
        .unwrap_or_default();
    let base_year = t
        .require("base_year", d, "the year money is discounted to, e.g. 2027")
        .and_then(|v| {
            v.integer_in(
                d,
                YEARS.0,
                YEARS.1,
                &format!("a year from {} to {}", YEARS.0, YEARS.1),
            )
        });
    let analysis_years = t
        .require(
            "analysis_years",
            d,
            "the length of the analysis period in years, e.g. 30",
        )
        .and_then(|v| {
            let n = v.integer_in(d, 1, 100, "a whole number of years from 1 to 100");
            if let Some(n) = n.filter(|n| *n < 30) {
                // NCHRP pavement-type selection guidance: at least 30 years for rehabilitation,
                // 40 for new pavement, so that every alternative reaches a comparable state.
                d.note(
                    v.place(),
                    format!("an analysis period of {n} years is short for pavement life-cycle appraisal"),
                )
                .hint = Some(
                    "NCHRP pavement-type selection guidance asks for at least 30 years for \
                     rehabilitation and 40 for new pavement"
                        .into(),
                );
            }
            n
        });
    let rate = t
        .require(
            "discount_rate",
            d,
            "the real discount rate as a fraction, e.g. 0.06",
        )
        .and_then(|v| {
            let r = v.fraction_in(
                d,
                -0.5,
                1.0,
                "a real discount rate as a fraction from -0.5 to 1 (0.06 or \"6%\" for 6 %)",
            );
            if let Some(x) = r {
                if x > 0.3 {
                    d.note(
                        v.place(),
                        format!(
                            "a real discount rate of {:.1} % is unusually high",
                            x * 100.0
                        ),
                    )
                    .hint = Some("rates are fractions: 0.06 means 6 %".into());
                }
            }
            r
        });
    let timing = match t.get("discounting") {
        Some(v) => v
            .word(d, &["end-of-year", "mid-year"])
            .and_then(Timing::parse),
        None => Some(Timing::EndOfYear),
    };
    let money = match t.get("money") {
        Some(v) => v.string(d).map(str::to_owned),
        None => Some(String::new()),
    };
    t.finish(d);
    let period = match (base_year, analysis_years) {
        (Some(b), Some(n)) => Some((b, b + n - 1)),
        _ => None,
    };
    let frame = (|| {
        let (base_year, analysis_years, rate, timing, money) =
            (base_year?, analysis_years?, rate?, timing?, money?);
        let base_year = Year(base_year as i32);
        let discounting = Discounting::new(rate, base_year, timing).ok()?;
        Some(Frame {
            title,
            base_year,
            analysis_years: analysis_years as u32,
            discounting,
            money,
        })
    })();
    (frame, period)
}

fn file_ref(v: &Value<'_, '_>, dir: &Path, d: &mut Diagnostics) -> Option<FileRef> {
    let s = v.string(d)?;
    if s.trim().is_empty() {
        d.error(
            v.place(),
            "found an empty path",
            "the path of a file, relative to the scenario file",
        );
        return None;
    }
    Some(FileRef {
        written: s.to_owned(),
        path: dir.join(s),
        place: v.place(),
    })
}

fn read_files(mut t: Table<'_, '_>, dir: &Path, d: &mut Diagnostics) -> Option<ScenarioFiles> {
    let network = t
        .require(
            "network",
            d,
            "the network file (CSV or a workbook), e.g. \"network.csv\"",
        )
        .and_then(|v| file_ref(&v, dir, d));
    let network_sheet = t.get("network_sheet").and_then(|v| {
        let s = v.string(d)?;
        if s.trim().is_empty() {
            d.error(v.place(), "found an empty name", "the name of a sheet");
            return None;
        }
        Some((s.to_owned(), v.place()))
    });
    let coordinates = match t.get("network_coordinates") {
        Some(v) => v
            .word(d, &["lonlat", "projected"])
            .and_then(crate::model::network::Coordinates::parse),
        None => Some(crate::model::network::Coordinates::LonLat),
    };
    let treatments = t
        .require(
            "treatments",
            d,
            "the treatment catalogue, e.g. \"treatments.toml\"",
        )
        .and_then(|v| file_ref(&v, dir, d));
    let strategies = t
        .require(
            "strategies",
            d,
            "a list of strategy template files, e.g. [\"templates.toml\"]",
        )
        .and_then(|v| {
            let items = v.array(d)?;
            if items.is_empty() {
                d.error(
                    v.place(),
                    "found an empty list",
                    "at least one strategy template file",
                );
                return None;
            }
            let refs: Vec<Option<FileRef>> = items.iter().map(|i| file_ref(i, dir, d)).collect();
            refs.into_iter().collect::<Option<Vec<_>>>()
        });
    t.finish(d);
    Some(ScenarioFiles {
        network: network?,
        network_sheet,
        coordinates: coordinates?,
        treatments: treatments?,
        strategies: strategies?,
    })
}

fn per_class(v: Value<'_, '_>, d: &mut Diagnostics) -> Option<PerClass<Money>> {
    let mut t = v.table(d)?;
    let mut out = [Money::ZERO; 4];
    let mut ok = true;
    for c in VehicleClass::ALL {
        match t
            .require(c.key(), d, "an amount of money for this vehicle class")
            .and_then(|x| x.money_non_negative(d))
        {
            Some(m) => out[c as usize] = m,
            None => ok = false,
        }
    }
    t.finish(d);
    ok.then_some(PerClass(out))
}

fn read_unit_values(mut t: Table<'_, '_>, d: &mut Diagnostics) -> Option<UnitValues> {
    let time = t
        .require(
            "time",
            d,
            "a table of money per vehicle-hour by vehicle class",
        )
        .and_then(|v| per_class(v, d));
    let operating = t
        .require(
            "operating",
            d,
            "a table of operating cost per vehicle-km by vehicle class",
        )
        .and_then(|v| per_class(v, d));
    let crash = t
        .require("crash", d, "the average cost of one injury crash")
        .and_then(|v| v.money_non_negative(d));
    t.finish(d);
    Some(UnitValues {
        time: time?,
        operating: operating?,
        crash: crash?,
    })
}

/// The optional `region` key of a `[[budget]]` or `[[target]]` entry: `Some(None)` when absent,
/// `None` when present but not a string (reported).
pub(super) fn optional_region(
    t: &mut Table<'_, '_>,
    d: &mut Diagnostics,
) -> Option<Option<Region>> {
    match t.get("region") {
        Some(v) => v.string(d).map(|s| Some(Region::new(s))),
        None => Some(None),
    }
}

/// Whether an entry's `first_year` is no later than its `last_year`; reported when not.
pub(super) fn years_in_order(place: &Place, y0: i64, y1: i64, d: &mut Diagnostics) -> bool {
    if y0 > y1 {
        d.error(
            place.clone().with_subfield("last_year"),
            format!("found first_year {y0} after last_year {y1}"),
            "first_year no later than last_year",
        );
        return false;
    }
    true
}

fn read_budgets(
    v: &Value<'_, '_>,
    period: Option<(i64, i64)>,
    d: &mut Diagnostics,
) -> Vec<BudgetLine> {
    let Some(items) = v.array(d) else {
        return Vec::new();
    };
    let (first, last) = period.unwrap_or(YEARS);
    let in_period = match period {
        Some(_) => format!("a year of the analysis period, {first} to {last}"),
        None => format!("a year from {first} to {last}"),
    };
    let mut lines: Vec<BudgetLine> = Vec::new();
    let mut groups: Vec<(String, Place)> = Vec::new();
    for item in items {
        let Some(mut t) = item.table(d) else { continue };
        let place = t.place();
        let name = t
            .require("name", d, "a name for the budget line, e.g. \"works\"")
            .and_then(|v| v.identifier(d).map(|s| (s.to_owned(), v.place())));
        let category = match t.get("category") {
            Some(v) => v
                .word(d, &["capital", "routine", "all"])
                .and_then(Category::parse),
            None => Some(Category::All),
        };
        let region = optional_region(&mut t, d);
        let y0 = t
            .require("first_year", d, "the first year the line applies to")
            .and_then(|v| v.integer_in(d, first, last, &in_period));
        let y1 = t
            .require("last_year", d, "the last year the line applies to")
            .and_then(|v| v.integer_in(d, first, last, &in_period));
        let per_year = t
            .require("per_year", d, "the limit in each year, as decimal text")
            .and_then(|v| v.money_non_negative(d));
        let mut overrides: Vec<(i64, Money)> = Vec::new();
        if let Some(v) = t.get("years") {
            if let Some(mut yt) = v.table(d) {
                for (key, val) in yt.entries() {
                    let year = key
                        .parse::<i64>()
                        .ok()
                        .filter(|y| (first..=last).contains(y));
                    let amount = val.money_non_negative(d);
                    match (year, amount) {
                        (Some(y), Some(m)) => overrides.push((y, m)),
                        (None, _) => {
                            d.error(
                                val.place(),
                                format!("found the key `{key}`"),
                                in_period.clone(),
                            );
                        }
                        _ => {}
                    }
                }
                yt.finish(d);
            }
        }
        t.finish(d);
        let (
            Some((name, name_place)),
            Some(category),
            Some(region),
            Some(y0),
            Some(y1),
            Some(per_year),
        ) = (name, category, region, y0, y1, per_year)
        else {
            continue;
        };
        if !years_in_order(&place, y0, y1, d) {
            continue;
        }
        if let Some((_, p)) = groups.iter().find(|(g, _)| *g == name) {
            d.error(
                name_place,
                format!(
                    "duplicate budget name `{name}` (first at line {})",
                    p.line.unwrap_or(0)
                ),
                "a name used by one [[budget]] entry only",
            );
            continue;
        }
        let clash = (y0..=y1).find_map(|y| {
            let n = format!("{name}-{y}");
            lines.iter().find(|l| l.name == n).map(|l| l.name.clone())
        });
        if let Some(c) = clash {
            d.error(
                name_place,
                format!("the budget line name `{c}` twice (from two [[budget]] names)"),
                "budget names whose `name-YEAR` line names differ",
            );
            continue;
        }
        groups.push((name.clone(), name_place));
        for (y, _) in &overrides {
            if *y < y0 || *y > y1 {
                d.error(
                    place.clone().with_subfield("years"),
                    format!("found a limit for {y}, outside first_year..last_year ({y0}..{y1})"),
                    "override years within the line's years",
                );
            }
        }
        for y in y0..=y1 {
            let limit = overrides
                .iter()
                .rev()
                .find(|(oy, _)| *oy == y)
                .map_or(per_year, |(_, m)| *m);
            lines.push(BudgetLine {
                name: format!("{name}-{y}"),
                group: name.clone(),
                year: Year(y as i32),
                limit,
                category,
                region: region.clone(),
                place: place.clone(),
            });
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = r#"
[scenario]
title = "t"
base_year = 2027
analysis_years = 30
discount_rate = 0.06
money = "CR"

[files]
network = "net.csv"
treatments = "treatments.toml"
strategies = ["a.toml", "b.toml"]

[unit_values]
time = { car = "7.80", bus = "36", light_truck = "11.5", heavy_truck = "16.2" }
operating = { car = "0.19", bus = "0.92", light_truck = "0.34", heavy_truck = "0.88" }
crash = 96000

[[budget]]
name = "works"
category = "capital"
first_year = 2027
last_year = 2029
per_year = "5000000"
years = { 2028 = "6500000.50" }
"#;

    #[test]
    fn reads_a_good_scenario() {
        let mut d = Diagnostics::new();
        let s = parse("s.toml", GOOD, Path::new("/data"), &mut d).expect("parses");
        assert!(d.is_empty(), "{d}");
        assert_eq!(s.last_year(), Year(2056));
        assert_eq!(s.files.network.path, PathBuf::from("/data/net.csv"));
        assert_eq!(s.files.strategies.len(), 2);
        assert_eq!(s.unit_values.time.get(VehicleClass::Bus).to_string(), "36");
        let names: Vec<&str> = s.budget_lines.iter().map(|b| b.name.as_str()).collect();
        assert_eq!(names, ["works-2027", "works-2028", "works-2029"]);
        assert_eq!(s.budget_lines[1].limit.to_string(), "6500000.5");
        assert_eq!(s.budget_lines[2].limit.to_string(), "5000000");
    }

    #[test]
    fn ring_fenced_money_is_counted_once_and_overlaps_are_named() {
        let more = r#"
[[budget]]
name = "river-works"
category = "capital"
region = "river"
first_year = 2027
last_year = 2029
per_year = "1000000"

[[budget]]
name = "hill-works"
category = "capital"
region = "hill"
first_year = 2028
last_year = 2030
per_year = "700000"

[[budget]]
name = "north-upkeep"
category = "routine"
region = "north"
first_year = 2027
last_year = 2027
per_year = "300000"

[[budget]]
name = "south-upkeep"
category = "routine"
region = "south"
first_year = 2027
last_year = 2027
per_year = "200000"

[[budget]]
name = "north-upkeep-cap"
category = "routine"
region = "north"
first_year = 2027
last_year = 2027
per_year = "250000"
"#;
        let mut d = Diagnostics::new();
        let text = format!("{GOOD}{more}");
        let s = parse("s.toml", &text, Path::new("/data"), &mut d).expect("parses");
        // Capital: works each year (5 M, 6.5 M, 5 M; river-works inside them adds nothing),
        // then hill-works alone in 2030 (0.7 M); routine in 2027: north's smaller limit
        // (0.25 M) and south's (0.2 M). Worked by hand.
        let total = total_limit(s.budget_lines.iter().map(|b| (b, b.limit.to_f64())));
        assert!(
            (total - (5e6 + 6_500_000.5 + 5e6 + 7e5 + 2.5e5 + 2e5)).abs() < 1e-6,
            "{total}"
        );
        let o = s.budget_overlaps();
        assert_eq!(
            o,
            [
                BudgetOverlap::Within {
                    inner: "river-works",
                    outer: vec!["works"]
                },
                BudgetOverlap::Same {
                    a: "north-upkeep",
                    b: "north-upkeep-cap"
                }
            ],
            "hill-works reaches 2030, where no network-wide line is"
        );
        assert!(o[0].to_string().contains("counted once, in works"));
        // Scaled limits count the same way.
        let half = total_limit(s.budget_lines.iter().map(|b| (b, b.limit.to_f64() / 2.0)));
        assert!((half - total / 2.0).abs() < 1e-6);
    }

    #[test]
    fn a_line_of_every_category_caps_the_capital_and_routine_lines_of_its_year() {
        let more = r#"
[[budget]]
name = "upkeep"
category = "routine"
first_year = 2027
last_year = 2027
per_year = "500000"

[[budget]]
name = "cap"
category = "all"
first_year = 2027
last_year = 2027
per_year = "5200000"
"#;
        let mut d = Diagnostics::new();
        let text = format!("{GOOD}{more}");
        let s = parse("s.toml", &text, Path::new("/data"), &mut d).expect("parses");
        // 2027: the least of 5.2 M (all) and 5 M + 0.5 M (capital and routine); then works
        // alone in 2028 and 2029.
        let total = total_limit(s.budget_lines.iter().map(|b| (b, b.limit.to_f64())));
        assert!(
            (total - (5.2e6 + 6_500_000.5 + 5e6)).abs() < 1e-6,
            "{total}"
        );
        // upkeep lies within cap; works does not (cap holds in 2027 only).
        assert_eq!(
            s.budget_overlaps(),
            [BudgetOverlap::Within {
                inner: "upkeep",
                outer: vec!["cap"]
            }]
        );
    }

    /// A regional `all` line limits its own region: beside network-wide capital and routine
    /// lines it takes nothing from the rest of the network (it used to cap the year at its own
    /// limit). Worked by hand.
    #[test]
    fn a_regional_line_of_every_category_limits_its_region_only() {
        let more = r#"
[[budget]]
name = "upkeep"
category = "routine"
first_year = 2027
last_year = 2027
per_year = "2000000"

[[budget]]
name = "north-all"
category = "all"
region = "north"
first_year = 2027
last_year = 2028
per_year = "1000000"

[[budget]]
name = "north-works"
category = "capital"
region = "north"
first_year = 2028
last_year = 2028
per_year = "400000"
"#;
        let mut d = Diagnostics::new();
        let text = format!("{GOOD}{more}");
        let s = parse("s.toml", &text, Path::new("/data"), &mut d).expect("parses");
        // 2027: works 5 M and upkeep 2 M, north's share of both within north-all's 1 M and
        // the rest of the network not limited by it: 7 M. 2028: works 6.5 M, all of it
        // possibly outside north, and north's routine spending, which only north-all limits:
        // 1 M. 2029: works 5 M.
        let total = total_limit(s.budget_lines.iter().map(|b| (b, b.limit.to_f64())));
        assert!(
            (total - (7e6 + 6_500_000.5 + 1e6 + 5e6)).abs() < 1e-6,
            "{total}"
        );
    }

    /// The maximum flow is the linear programme it stands for: over random years of lines
    /// (network-wide and regional, of every category, some absent), the most spending within
    /// every line, counting only spending some line limits, solved as an LP by good_lp's
    /// microlp, equals [`year_money`].
    #[test]
    fn year_money_is_the_largest_spending_within_every_line() {
        use good_lp::{constraint, variable, Expression, ProblemVariables, Solution, SolverModel};
        let mut rng = crate::demo::synth::SplitMix64::new(11);
        let names = ["a", "b", "c"];
        for case in 0..300 {
            let mut caps: [Caps<'_>; 3] = Default::default();
            for c in &mut caps {
                if rng.range(0.0, 1.0) < 0.5 {
                    c.0 = Some(rng.range(0.0, 10.0).round());
                }
                for r in names {
                    if rng.range(0.0, 1.0) < 0.4 {
                        c.1.push((r, rng.range(0.0, 10.0).round()));
                    }
                }
            }
            let of = |per: &[(&str, f64)], r: Option<&str>| {
                r.and_then(|r| per.iter().find(|x| x.0 == r).map(|x| x.1))
            };
            let regions: Vec<Option<&str>> = names.iter().map(|r| Some(*r)).chain([None]).collect();
            let mut vars = ProblemVariables::new();
            // s[k][c]: spending of category c in region k, when some line limits it.
            let mut s: Vec<[Option<good_lp::Variable>; 2]> = Vec::new();
            for &r in &regions {
                let mut row = [None, None];
                for (c, slot) in row.iter_mut().enumerate() {
                    let limited = caps[2].0.is_some()
                        || caps[c].0.is_some()
                        || of(&caps[c].1, r).is_some()
                        || of(&caps[2].1, r).is_some();
                    if limited {
                        *slot = Some(vars.add(variable().min(0.0)));
                    }
                }
                s.push(row);
            }
            let all: Vec<good_lp::Variable> = s.iter().flatten().flatten().copied().collect();
            let total: Expression = all.iter().copied().sum();
            let mut m = vars.maximise(total.clone()).using(good_lp::microlp);
            if let Some(w) = caps[2].0 {
                m = m.with(constraint!(total.clone() <= w));
            }
            for c in 0..2 {
                if let Some(w) = caps[c].0 {
                    let e: Expression = s.iter().filter_map(|row| row[c]).sum();
                    m = m.with(constraint!(e <= w));
                }
                for (k, &r) in regions.iter().enumerate() {
                    if let (Some(l), Some(v)) = (of(&caps[c].1, r), s[k][c]) {
                        m = m.with(constraint!(v <= l));
                    }
                }
            }
            for (k, &r) in regions.iter().enumerate() {
                if let Some(l) = of(&caps[2].1, r) {
                    let e: Expression = s[k].iter().flatten().copied().sum();
                    m = m.with(constraint!(e <= l));
                }
            }
            let lp = if all.is_empty() {
                0.0
            } else {
                let sol = m.solve().expect("bounded: every variable is limited");
                all.iter().map(|v| sol.value(*v)).sum()
            };
            let flow = year_money(&caps);
            assert!(
                (lp - flow).abs() < 1e-6,
                "case {case}: LP {lp}, flow {flow}, {caps:?}"
            );
        }
    }

    #[test]
    fn reports_every_problem_at_once() {
        let bad = GOOD
            .replace("discount_rate = 0.06", "discount_rate = 6")
            .replace("money = \"CR\"", "money = \"CR\"\ncurrency = \"x\"")
            .replace("crash = 96000", "crash = \"96,000\"")
            .replace("last_year = 2029", "last_year = 2090")
            .replace("bus = \"36\"", "bus = \"-3\"");
        let mut d = Diagnostics::new();
        assert!(parse("s.toml", &bad, Path::new("."), &mut d).is_none());
        let text = d.to_string();
        assert_eq!(d.error_count(), 5, "{text}");
        for want in [
            "scenario.discount_rate",
            "unknown key `scenario.currency`",
            "unit_values.crash",
            "budget[1].last_year",
            "unit_values.time.bus",
        ] {
            assert!(text.contains(want), "missing {want} in\n{text}");
        }
        // Each names a line.
        assert!(d.errors().iter().all(|e| e.place.line.is_some()));
    }

    #[test]
    fn a_short_analysis_period_gets_a_note() {
        let mut d = Diagnostics::new();
        let s = parse(
            "s.toml",
            &GOOD.replace("analysis_years = 30", "analysis_years = 12"),
            Path::new("."),
            &mut d,
        );
        assert!(s.is_some());
        assert_eq!(d.error_count(), 0);
        assert!(
            d.to_string()
                .contains("analysis period of 12 years is short"),
            "{d}"
        );
    }

    #[test]
    fn missing_tables_are_named() {
        let mut d = Diagnostics::new();
        assert!(parse(
            "s.toml",
            "[scenario]\nbase_year = 2027\n",
            Path::new("."),
            &mut d
        )
        .is_none());
        let text = d.to_string();
        for want in [
            "analysis_years",
            "discount_rate",
            "`files`",
            "`unit_values`",
        ] {
            assert!(text.contains(want), "missing {want} in\n{text}");
        }
    }
}
