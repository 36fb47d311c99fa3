//! `programme.csv`: the plan's works as finance reads them — a row per section with works,
//! its spending year by year beside the treatment done that year, then totals: all works, and
//! by budget group, region, category and treatment. Every row has the quantities treated (km,
//! lane-km, m² — each works counted once, on the lanes it works on, as its cost is priced) and
//! the unit rates they give (cost per lane-km and per m²).
//!
//! The sums are exact: each works' cost is taken to the cent and each quantity to its written
//! unit (the metre, the square metre) before adding, so every total equals the sum of the rows
//! it totals, to the cent. A budget group's total counts the works its lines count (year,
//! category, region); routine upkeep is not works and is in `budget_use.csv`, so a group that
//! counts routine money spends more there than here.

use crate::input::Run;
use crate::model::catalogue::{Action, Category};
use crate::plan::PlannedWork;
use crate::schema::carried::{carried_cells_of, carried_head};
use crate::schema::value::{write_text, Fixed};
use crate::schema::Value;

/// The file's name.
pub const NAME: &str = crate::schema::plan::PROGRAMME;

/// The columns before the years' (then `cost_YEAR,treatment_YEAR` for every year of the
/// analysis, then the columns carried from the network).
pub const COLUMNS: [&str; 11] = [
    "kind",
    "name",
    "section_id",
    "region",
    "works",
    "km",
    "lane_km",
    "area_m2",
    "cost",
    "cost_per_lane_km",
    "cost_per_m2",
];

/// One row's sums, in written units: metres, square metres, cents.
#[derive(Debug, Clone)]
struct Tally {
    works: u64,
    metres: i128,
    lane_metres: i128,
    area_m2: i128,
    cents: i128,
    /// Cents by year of the analysis.
    by_year: Vec<i128>,
}

impl Tally {
    fn new(years: usize) -> Tally {
        Tally {
            works: 0,
            metres: 0,
            lane_metres: 0,
            area_m2: 0,
            cents: 0,
            by_year: vec![0; years],
        }
    }

    fn add(&mut self, w: &Item) {
        self.works += 1;
        self.metres += w.metres;
        self.lane_metres += w.lane_metres;
        self.area_m2 += w.area_m2;
        self.cents += w.cents;
        self.by_year[w.year] += w.cents;
    }
}

/// One works, in written units.
#[derive(Debug, Clone, Copy)]
struct Item {
    section: usize,
    year: usize,
    treatment: usize,
    metres: i128,
    lane_metres: i128,
    area_m2: i128,
    cents: i128,
}

/// `x` in units of 10^-p, half to even.
fn units(x: f64, p: u32) -> i128 {
    crate::model::money::units_half_even(x, p).unwrap_or(0)
}

/// Each works of the plan with its quantities: the lanes a works is on are the section's lanes
/// at the time (a widening's are the lanes it adds, and the lanes after it count for later
/// works), as the simulation prices them.
fn items(run: &Run, works: &[PlannedWork]) -> Vec<Item> {
    let secs = &run.network.sections;
    let mut order: Vec<&PlannedWork> = works.iter().collect();
    order.sort_by_key(|w| (w.section, w.year.0 as usize, w.treatment));
    let mut out = Vec::with_capacity(order.len());
    let mut lanes = 0u8;
    let mut last = usize::MAX;
    for w in order {
        let sec = &secs[w.section];
        if w.section != last {
            lanes = sec.lanes;
            last = w.section;
        }
        let t = &run.catalogue.treatments[w.treatment];
        let worked = if t.action == Action::Widen {
            t.lanes_added
        } else {
            lanes
        };
        if t.action == Action::Widen {
            lanes = lanes.saturating_add(t.lanes_added);
        }
        let width = sec
            .lane_width_m
            .unwrap_or(crate::simulate::DEFAULT_LANE_WIDTH_M);
        let km = sec.length_km;
        out.push(Item {
            section: w.section,
            year: w.year.0 as usize,
            treatment: w.treatment,
            metres: units(km, 3),
            lane_metres: units(km * f64::from(worked), 3),
            area_m2: units(km * 1000.0 * f64::from(worked) * width, 0),
            cents: units(w.cost, 2),
        });
    }
    out
}

/// One row of the programme, in written units.
#[derive(Debug, Clone)]
pub struct Row {
    /// `section`, `total`, `group`, `region`, `category` or `treatment`.
    pub kind: &'static str,
    /// The total's name (`all`, the group, region, category or treatment); empty for a section.
    pub name: String,
    /// The section's index in network order, for a section's row.
    pub section: Option<usize>,
    tally: Tally,
    /// A section's treatments by year (joined with `+` when more than one).
    pub treatments: Vec<String>,
}

impl Row {
    pub fn works(&self) -> u64 {
        self.tally.works
    }
    /// Km, lane-km, m² treated and cost, as written (km to the metre, cost to the cent).
    pub fn quantities(&self) -> [f64; 4] {
        let t = &self.tally;
        [
            t.metres as f64 / 1000.0,
            t.lane_metres as f64 / 1000.0,
            t.area_m2 as f64,
            t.cents as f64 / 100.0,
        ]
    }
    /// Cost per lane-km and per m², to the cent (`None` with no quantity).
    pub fn rates(&self) -> [Option<f64>; 2] {
        let [_, lane_km, m2, cost] = self.quantities();
        [lane_km, m2].map(|q| (q > 0.0).then(|| Fixed::<2>::of(cost / q).to_f64()))
    }
    /// Cost by year of the analysis, to the cent.
    pub fn by_year(&self) -> impl Iterator<Item = f64> + '_ {
        self.tally.by_year.iter().map(|c| *c as f64 / 100.0)
    }
}

/// The programme's rows: sections with works in network order, then the totals (all works,
/// each budget group, region, category and treatment that has works).
pub fn rows(run: &Run, works: &[PlannedWork]) -> Vec<Row> {
    let s = &run.scenario;
    let years = s.analysis_years as usize;
    let net = &run.network;
    let cat = &run.catalogue;
    let items = items(run, works);
    let mut out = Vec::new();

    // Sections, in network order.
    let mut k = 0;
    while k < items.len() {
        let g = items[k].section;
        let end = k + items[k..].iter().take_while(|i| i.section == g).count();
        let mut t = Tally::new(years);
        let mut names: Vec<Vec<&str>> = vec![Vec::new(); years];
        for i in &items[k..end] {
            t.add(i);
            names[i.year].push(cat.treatments[i.treatment].id.as_str());
        }
        out.push(Row {
            kind: "section",
            name: String::new(),
            section: Some(g),
            tally: t,
            treatments: names.iter().map(|n| n.join("+")).collect(),
        });
        k = end;
    }

    // Totals.
    let total =
        |kind: &'static str, name: &str, keep: &dyn Fn(&Item) -> bool, out: &mut Vec<Row>| {
            let mut t = Tally::new(years);
            items.iter().filter(|i| keep(i)).for_each(|i| t.add(i));
            if kind == "total" || t.works > 0 {
                out.push(Row {
                    kind,
                    name: name.to_owned(),
                    section: None,
                    tally: t,
                    treatments: Vec::new(),
                });
            }
        };
    total("total", "all", &|_| true, &mut out);
    for g in s.budget_groups() {
        let counts = |i: &Item| {
            let t = &cat.treatments[i.treatment];
            let region = net.sections[i.section].region.as_ref();
            let year = s.base_year.0 + i.year as i32;
            s.budget_lines.iter().any(|b| {
                b.group == g
                    && b.year.0 == year
                    && (b.category == Category::All || b.category == t.category)
                    && b.region.as_ref().is_none_or(|r| Some(r) == region)
            })
        };
        total("group", g, &counts, &mut out);
    }
    for r in net.regions() {
        total(
            "region",
            r,
            &|i: &Item| net.sections[i.section].region.as_deref() == Some(r),
            &mut out,
        );
    }
    for c in [Category::Capital, Category::Routine] {
        total(
            "category",
            c.name(),
            &|i: &Item| cat.treatments[i.treatment].category == c,
            &mut out,
        );
    }
    for (j, t) in cat.treatments.iter().enumerate() {
        total("treatment", &t.id, &|i: &Item| i.treatment == j, &mut out);
    }
    out
}

/// The whole file.
pub fn text(run: &Run, works: &[PlannedWork]) -> String {
    let s = &run.scenario;
    let net = &run.network;
    let mut out = COLUMNS.join(",");
    for y in 0..s.analysis_years {
        let year = s.base_year.0 + y as i32;
        out.push_str(&format!(",cost_{year},treatment_{year}"));
    }
    out.push_str(&carried_head(net));
    out.push('\n');
    for r in rows(run, works) {
        match r.section {
            Some(g) => {
                let sec = &net.sections[g];
                let region = sec.region.as_deref().unwrap_or("");
                row(&mut out, r.kind, "", sec.id.as_str(), region, &r);
            }
            None => row(&mut out, r.kind, &r.name, "", "", &r),
        }
        // A totals row is no section's: its carried cells are empty.
        carried_cells_of(net, r.section, &mut out);
        out.push('\n');
    }
    out
}

/// A row's cells up to its years' (no line break, no carried cells).
fn row(out: &mut String, kind: &str, name: &str, section: &str, region: &str, r: &Row) {
    let t = &r.tally;
    for (k, text) in [kind, name, section, region].into_iter().enumerate() {
        if k > 0 {
            out.push(',');
        }
        write_text(text, out);
    }
    out.push_str(&format!(",{}", t.works));
    for (v, p) in [
        (t.metres, 3),
        (t.lane_metres, 3),
        (t.area_m2, 0),
        (t.cents, 2),
    ] {
        out.push(',');
        write_units(v, p, out);
    }
    // Unit rates, to the cent: cost over lane-km and over m².
    for rate in r.rates() {
        out.push(',');
        if let Some(x) = rate {
            Fixed::<2>::of(x).write(out);
        }
    }
    for (y, c) in t.by_year.iter().enumerate() {
        out.push(',');
        write_units(*c, 2, out);
        out.push(',');
        if let Some(n) = r.treatments.get(y) {
            write_text(n, out);
        }
    }
}

fn write_units(v: i128, p: u32, out: &mut String) {
    match p {
        0 => Fixed::<0>(v).write(out),
        2 => Fixed::<2>(v).write(out),
        _ => Fixed::<3>(v).write(out),
    }
}
