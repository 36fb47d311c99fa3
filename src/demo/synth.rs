//! Synthetic networks drawn like the demo's, for trying the tool at network scale
//! (`pavestrat init DIR --sections N --seed S`).
//!
//! Sections come in the demo's three kinds and proportions: busy two-lane roads nearing capacity
//! (half), lightly trafficked rough roads (four in ten), and divided arterials (one in ten), each
//! drawn uniformly within the demo's ranges. The generator is SplitMix64 (Steele, Lea & Flood,
//! "Fast splittable pseudorandom number generators", OOPSLA 2014), written out here so that a
//! seed gives the same network on every platform and version of every dependency.

/// A small, fast generator with a 64-bit state; the same seed gives the same sequence.
#[derive(Debug, Clone)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    pub fn new(seed: u64) -> SplitMix64 {
        SplitMix64(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1), from the top 53 bits.
    pub fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// Uniform in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
}

/// The network file's header, as the demo's.
pub const HEADER: &str =
    "section_id,length_km,lanes,carriageway,iri,structural_number,aadt,heavy_share,\
growth_rate,region,lane_width_m,surface,subgrade_mr_mpa,last_works_year,speed_kmh,road,from_km,to_km";

const REGIONS: [&str; 3] = ["north", "south", "river"];

/// A network of `n` sections drawn from `seed`, as CSV text. Base year for last works: 2027.
pub fn network_csv(n: usize, seed: u64) -> String {
    let mut r = SplitMix64::new(seed);
    let mut s = String::with_capacity(n * 96 + 200);
    s.push_str(HEADER);
    s.push('\n');
    let width = n.to_string().len().max(4);
    // Where the next section of the current road starts, in tenths of a km.
    let mut at_tenths = 0i64;
    for i in 0..n {
        let kind = r.unit();
        let region = REGIONS[(r.next_u64() % 3) as usize];
        let road = i / 5 + 1;
        let (lanes, cw, iri, sn, aadt, heavy, growth, surface, speed) = if kind < 0.5 {
            (
                2,
                "single",
                r.range(1.6, 3.3),
                r.range(3.8, 5.4),
                r.range(9_000.0, 16_000.0),
                r.range(0.10, 0.22),
                r.range(0.015, 0.031),
                "asphalt",
                [80, 90, 100][(r.next_u64() % 3) as usize],
            )
        } else if kind < 0.9 {
            (
                2,
                "single",
                r.range(3.4, 6.5),
                r.range(1.7, 2.8),
                r.range(250.0, 1_400.0),
                r.range(0.06, 0.14),
                r.range(0.005, 0.025),
                if r.unit() < 0.8 {
                    "asphalt"
                } else {
                    "surface_treatment"
                },
                [60, 70, 80][(r.next_u64() % 3) as usize],
            )
        } else {
            (
                4,
                "divided",
                r.range(1.6, 2.6),
                r.range(5.0, 6.0),
                r.range(24_000.0, 30_000.0),
                r.range(0.12, 0.16),
                r.range(0.014, 0.025),
                "asphalt",
                100,
            )
        };
        let length = r.range(1.0, 9.0);
        let length_text = format!("{length:.1}");
        if i % 5 == 0 {
            at_tenths = 0;
        }
        let from = at_tenths;
        at_tenths += length_text.replace('.', "").parse::<i64>().unwrap_or(0);
        let tenths = |t: i64| format!("{}.{}", t / 10, t % 10);
        let lane_width = r.range(3.2, 3.6);
        let mr = r.range(40.0, 90.0);
        let last = 2000 + (r.next_u64() % 26) as i32;
        s.push_str(&format!(
            "S{i:0width$},{length_text},{lanes},{cw},{iri:.1},{sn:.1},{aadt:.0},{heavy:.2},{growth:.3},{region},{lane_width:.2},{surface},{mr:.0},{last},{speed},Synthetic road {road},{},{}\n",
            tenths(from),
            tenths(at_tenths)
        ));
    }
    s
}

/// Sections in the demo network.
pub const DEMO_SECTIONS: f64 = 40.0;

/// The scenario and network texts of a synthetic network of `n` sections drawn from `seed`: the
/// network from [`network_csv`], and the demo scenario with its budgets scaled to it by
/// [`scaled_scenario`] (regional lines by the sections each region got, against the demo's).
/// What `init --sections N --seed S` writes, and what the benchmarks run.
pub fn synthetic_files(n: usize, seed: u64) -> (String, String) {
    let text = |name: &str| {
        super::FILES
            .iter()
            .find(|f| f.0 == name)
            .map(|f| String::from_utf8_lossy(f.1).into_owned())
            .unwrap_or_default()
    };
    let demo_net = text("network.csv");
    let net = network_csv(n, seed);
    let count = |text: &str, region: &str| {
        text.lines()
            .filter(|l| l.split(',').nth(9) == Some(region))
            .count() as f64
    };
    let regional = |r: &str| {
        let demo = count(&demo_net, r);
        if demo > 0.0 {
            count(&net, r) / demo
        } else {
            n as f64 / DEMO_SECTIONS
        }
    };
    let scenario = scaled_scenario(&text("scenario.toml"), n as f64 / DEMO_SECTIONS, &regional);
    (scenario, net)
}

/// The demo scenario with every budget amount (`per_year` and single-year `years` limits)
/// multiplied by `factor`, rounded to whole units: budgets for a synthetic network of another
/// size. A `[[budget]]` entry with a `region` is multiplied by `regional(region)` instead, so
/// that regional lines follow the number of sections the draw put in each region; an entry whose
/// region got no section is left out. Commitments
/// are left out: they name the demo's own sections.
pub fn scaled_scenario(text: &str, factor: f64, regional: &dyn Fn(&str) -> f64) -> String {
    // Each line's factor: that of the [[budget]] entry it belongs to.
    let lines: Vec<&str> = text.lines().collect();
    let mut factors = vec![factor; lines.len()];
    // Regional entries whose region has no section in the drawn network are left out (the
    // scenario would be refused: a line for a region the network does not have).
    let mut skip = vec![false; lines.len()];
    let mut i = 0;
    while i < lines.len() {
        if lines[i].trim_start().starts_with("[[budget]]") {
            let mut end = i + 1;
            while end < lines.len()
                && !lines[end].trim().is_empty()
                && !lines[end].trim_start().starts_with('[')
            {
                end += 1;
            }
            let region = lines[i + 1..end].iter().find_map(|l| {
                let t = l
                    .trim_start()
                    .strip_prefix("region")?
                    .trim_start()
                    .strip_prefix('=')?;
                Some(t.trim().split('"').nth(1)?.to_owned())
            });
            if let Some(r) = region {
                let f = regional(&r);
                for (x, s) in factors[i..end].iter_mut().zip(&mut skip[i..end]) {
                    *x = f;
                    *s = f <= 0.0;
                }
            }
            i = end;
        } else {
            i += 1;
        }
    }
    let mut out = String::with_capacity(text.len());
    // Commitments name the demo's sections, which a synthetic network does not have.
    let mut in_commit = false;
    for ((line, factor), skip) in lines.iter().copied().zip(factors).zip(skip) {
        if skip {
            continue;
        }
        let scale = |amount: &str| -> String {
            match amount.parse::<f64>() {
                Ok(x) => format!("{:.0}", x * factor),
                Err(_) => amount.to_owned(),
            }
        };
        let t = line.trim_start();
        if t.starts_with("[[commit]]") {
            in_commit = true;
            continue;
        }
        if in_commit {
            if t.is_empty() || t.starts_with('[') {
                in_commit = false;
            } else {
                continue;
            }
        }
        if t.starts_with("per_year") || t.starts_with("years") {
            // Replace every quoted amount on the line.
            let mut rest = line;
            let mut new = String::new();
            while let Some(a) = rest.find('"') {
                let Some(b) = rest[a + 1..].find('"') else {
                    break;
                };
                new.push_str(&rest[..=a]);
                new.push_str(&scale(&rest[a + 1..a + 1 + b]));
                new.push('"');
                rest = &rest[a + 2 + b..];
            }
            new.push_str(rest);
            out.push_str(&new);
        } else {
            out.push_str(line);
        }
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diag::Diagnostics;

    #[test]
    fn splitmix64_reference_sequence() {
        // First outputs for seed 1234567 from the reference C implementation (Vigna's
        // splitmix64.c), as listed in several independent ports; from memory.
        let mut r = SplitMix64::new(1234567);
        assert_eq!(r.next_u64(), 6457827717110365317);
        assert_eq!(r.next_u64(), 3203168211198807973);
    }

    #[test]
    fn synthetic_networks_are_valid_and_reproducible() {
        let a = network_csv(300, 7);
        assert_eq!(a, network_csv(300, 7));
        assert_ne!(a, network_csv(300, 8));
        let mut d = Diagnostics::new();
        let net = crate::input::network::parse("n.csv", &a, &mut d).expect("parses");
        assert!(!d.has_errors(), "{d}");
        assert_eq!(net.sections.len(), 300);
        let divided = net.sections.iter().filter(|s| s.lanes == 4).count();
        assert!((10..=60).contains(&divided), "{divided}");
    }

    #[test]
    fn budgets_scale() {
        let text = "[[budget]]\nper_year = \"100\"\nyears = { 2027 = \"40\", 2028 = \"10.5\" }\nname = \"x\"\n";
        let s = scaled_scenario(text, 2.5, &|_| 9.0);
        assert_eq!(s, "[[budget]]\nper_year = \"250\"\nyears = { 2027 = \"100\", 2028 = \"26\" }\nname = \"x\"\n");
        let text = "[[budget]]\nregion = \"north\"\nper_year = \"100\"\n\n[[budget]]\nper_year = \"100\"\n";
        let s = scaled_scenario(text, 2.0, &|r| if r == "north" { 3.0 } else { 0.0 });
        assert_eq!(s, "[[budget]]\nregion = \"north\"\nper_year = \"300\"\n\n[[budget]]\nper_year = \"200\"\n");
    }
}
