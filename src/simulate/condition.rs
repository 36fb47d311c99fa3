//! Pavement condition: roughness (IRI, m/km) and structural number, year by year.
//!
//! Two families of progression sit behind one trait, [`Progression`]:
//! - [`Aashto93`]: the load-related loss of serviceability that the AASHTO 1993 flexible design
//!   equation gives for a pavement's structural number and subgrade, mapped to IRI through the
//!   Al-Omari & Darter (1994) PSR–IRI relation, beside Paterson's (1987) structural roughness
//!   term; plus Paterson's environmental term;
//! - [`Calibrated`]: an agency's own progression per pavement family, linear in its coefficients
//!   so that `pavestrat calibrate` can fit it to survey history.
//!
//! Every relation is used only inside the range it was fitted on, and the yearly rise is a
//! smooth, bounded function of structural number and traffic (the rules of DESIGN.md):
//! - the AASHTO equation is evaluated only at its terminal loss (p0 − pt, 2.7 on the Road Test),
//!   where its curvature term β = 0.40 + 1094/(SN+1)^5.19 drops out: it gives the traffic a
//!   pavement carries to terminal serviceability, W_t. The loss is spread evenly over that
//!   traffic (p0 − pt)/W_t per ESAL. β itself is not used: run year by year it turns a thin
//!   pavement's loss into a step (β = 6.7 at SN 1.7);
//! - the AASHTO loss per ESAL is turned into roughness at the road's serviceability, never below
//!   the terminal serviceability (a smooth floor), so the PSR–IRI slope stays in range;
//! - on weak or structurally exhausted pavements the AASHTO rate overshoots what in-service roads
//!   show (it fails a SN 2 road under a few hundred trucks a day within a year or two); the
//!   load-related rise is the smooth minimum of the AASHTO rate and Paterson's structural term
//!   `263·e^(m·t)·(1+SNC)^−5` m/km per million ESALs, so Paterson governs there and AASHTO on
//!   strong pavements, with no switch and no kink;
//! - the whole yearly rise is bounded smoothly by `max_rise` (a rise above about 1 m/km in a year
//!   is a structural failure, not a trend: common practice), slows with the roughness left below
//!   `iri_max`, and is slowed by the holding repairs the simulation pays for on rough roads.
//!
//! A section starts placed on its curve: its surface age from `last_works_year` (or, without it,
//! the age Paterson's integrated form gives for today's roughness), and the design-lane ESALs
//! its structure has carried since, from today's traffic and growth. Today's roughness is split
//! into an as-built part, an ageing part and a load part ([`Placement`]): not all of it is load.

use crate::input::models::{Aashto93Params, CalibratedParams, ConditionParams, FamilyModel};

/// Present serviceability rating from IRI (m/km): PSR = 5·e^(−0.26·IRI).
///
/// Source: Al-Omari & Darter, TRR 1435 (1994) (5·e^(−0.0041·IRI) with IRI in in/mi).
pub fn psr_from_iri(iri: f64) -> f64 {
    5.0 * (-0.26 * iri).exp()
}

/// IRI (m/km) from PSR, the inverse of [`psr_from_iri`].
pub fn iri_from_psr(psr: f64) -> f64 {
    -(psr / 5.0).ln() / 0.26
}

/// The AASHTO 1993 flexible design equation: log10 of the 18-kip ESALs a pavement of structural
/// number `sn` carries while losing `dpsi` of serviceability, at reliability deviate `zr`,
/// overall standard deviation `s0` and subgrade resilient modulus `mr_psi`.
///
/// Source: AASHTO *Guide for Design of Pavement Structures* (1993), equation for flexible
/// pavements: log10 W18 = ZR·S0 + 9.36·log10(SN+1) − 0.20 + log10(ΔPSI/2.7)/(0.40 +
/// 1094/(SN+1)^5.19) + 2.32·log10(MR) − 8.07.
pub fn aashto93_log_w18(sn: f64, zr: f64, s0: f64, mr_psi: f64, dpsi: f64) -> f64 {
    let (k, dd) = aashto93_terms(sn, zr, s0, mr_psi);
    k + (dpsi / 2.7).log10() / dd
}

/// The two parts of the design equation that depend on SN only: the constant and the divisor.
fn aashto93_terms(sn: f64, zr: f64, s0: f64, mr_psi: f64) -> (f64, f64) {
    let k = zr * s0 + 9.36 * (sn + 1.0).log10() - 0.20 + 2.32 * mr_psi.log10() - 8.07;
    let dd = 0.40 + 1094.0 / (sn + 1.0).powf(5.19);
    (k, dd)
}

/// The structural number the AASHTO 1993 equation requires for `w18` ESALs (bisection; the
/// equation's W18 rises monotonically with SN). `None` when no SN in 0–20 suffices.
pub fn aashto93_required_sn(w18: f64, zr: f64, s0: f64, mr_psi: f64, dpsi: f64) -> Option<f64> {
    let target = w18.log10();
    let f = |sn: f64| aashto93_log_w18(sn, zr, s0, mr_psi, dpsi) - target;
    let (mut lo, mut hi) = (0.0_f64, 20.0_f64);
    if f(hi) < 0.0 {
        return None;
    }
    if f(lo) >= 0.0 {
        return Some(0.0);
    }
    for _ in 0..80 {
        let mid = 0.5 * (lo + hi);
        if f(mid) < 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

/// Megapascals to pounds per square inch.
pub const PSI_PER_MPA: f64 = 145.037_738;

/// Condition class of a roughness.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ConditionClass {
    Good,
    Fair,
    Poor,
}

impl ConditionClass {
    pub fn name(self) -> &'static str {
        match self {
            ConditionClass::Good => "good",
            ConditionClass::Fair => "fair",
            ConditionClass::Poor => "poor",
        }
    }
}

/// The class of `iri` (m/km): good below `good_below`, poor above `poor_above`, fair between
/// (both edges fair). Defaults: US 23 CFR 490.313, 95 and 170 in/mi.
pub fn classify(iri: f64, p: &ConditionParams) -> ConditionClass {
    if iri < p.good_below {
        ConditionClass::Good
    } else if iri > p.poor_above {
        ConditionClass::Poor
    } else {
        ConditionClass::Fair
    }
}

/// Paterson's structural number of a pavement with its subgrade, SNC = SN + SNsg, the subgrade's
/// part SNsg = 3.51·log10(CBR) − 0.85·(log10 CBR)² − 1.43 (Hodges, Rolt & Jones, 1975, as used by
/// Paterson, 1987; from memory), with CBR = MR/1500 (MR in psi: the AASHTO 1993 correlation
/// MR = 1500·CBR, from memory) held within 2–100 %, where the relation was fitted (our choice).
pub fn subgrade_sn(mr_psi: f64) -> f64 {
    let l = (mr_psi / 1500.0).clamp(2.0, 100.0).log10();
    3.51 * l - 0.85 * l * l - 1.43
}

/// Paterson's (1987) aggregate roughness progression, integrated form:
/// IRI(t) = e^(m·t)·[IRI0 + a·(1+SNC)^−5·NE(t)], NE in million design-lane ESALs, `a` = 263.
///
/// Source: Paterson, *Road Deterioration and Maintenance Effects* (1987); Paterson &
/// Attoh-Okine (1992) (from memory; the shared reference list's check values).
pub fn paterson_iri(iri0: f64, snc: f64, m: f64, years: f64, ne_million: f64, a: f64) -> f64 {
    (m * years).exp() * (iri0 + a * (1.0 + snc).powi(-5) * ne_million)
}

/// Paterson's structural term as a rate: m/km of roughness per design-lane ESAL at surface age
/// `age`, a·e^(m·age)·(1+SNC)^−5 / 10⁶ — the time derivative of [`paterson_iri`]'s load part.
pub fn paterson_per_esal(a: f64, snc: f64, m: f64, age: f64) -> f64 {
    a * 1e-6 * (m * age).exp() * (1.0 + snc.max(0.0)).powi(-5)
}

/// Traffic (18-kip ESALs) a pavement of structural number `sn` carries while losing `dpsi` of
/// serviceability: the AASHTO 1993 equation solved for W18 ([`aashto93_log_w18`]).
pub fn aashto93_w(sn: f64, zr: f64, s0: f64, mr_psi: f64, dpsi: f64) -> f64 {
    10f64.powf(aashto93_log_w18(sn, zr, s0, mr_psi, dpsi))
}

/// The AASHTO 1993 overlay design's condition factor of an existing pavement from its remaining
/// life RL = 1 − Np/N1.5 (traffic carried over traffic to serviceability 1.5):
/// CF = RL^0.165, not below 0.5 (the Guide's chart runs from 1 down to about 0.5).
///
/// Source: AASHTO *Guide for Design of Pavement Structures* (1993), Part III, remaining-life
/// method (the power fit to the chart and its floor from memory). RL 0.5 → 0.89; RL 0.1 → 0.68.
pub fn condition_factor(remaining_life: f64) -> f64 {
    remaining_life.clamp(0.0, 1.0).powf(0.165).max(0.5)
}

/// A smooth bound on a yearly rise: x/(1+(x/r)⁴)^¼ — equal to x for small rises, below `r`
/// always, increasing and smooth in x (no clamp, no kink). Elasticity at most 1.
#[inline]
pub fn bounded_rise(x: f64, r: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    // The fourth root as two square roots: the same value, far cheaper than powf in the
    // yearly loop.
    x / (1.0 + (x / r).powi(4)).sqrt().sqrt()
}

/// A smooth minimum of two non-negative rates, (a⁻⁴ + b⁻⁴)^−¼: at most the smaller, close to it
/// when the two differ, increasing in each.
#[inline]
pub fn soft_min(a: f64, b: f64) -> f64 {
    if a <= 0.0 || b <= 0.0 {
        return 0.0;
    }
    // (m/a)⁴ + (m/b)⁴ with m the smaller: one of the two is exactly 1 (x/x is 1 in IEEE
    // arithmetic), so one division serves, and the sum is the same to the bit.
    let (m, other) = if a <= b { (a, b) } else { (b, a) };
    let r = m / other;
    m / (r.powi(4) + 1.0).sqrt().sqrt()
}

/// A smooth floor of a serviceability at `pt`: (psr⁸ + pt⁸)^⅛.
#[inline]
fn psr_floor(psr: f64, pt: f64) -> f64 {
    let m = psr.max(pt);
    // As in `soft_min`: the larger over itself is exactly 1, so one division serves (a zero
    // or NaN serviceability takes the general form, which gives what it always gave).
    if psr > 0.0 && pt > 0.0 {
        let r = psr.min(pt) / m;
        return m * (r.powi(8) + 1.0).sqrt().sqrt().sqrt();
    }
    m * ((psr / m).powi(8) + (pt / m).powi(8)).sqrt().sqrt().sqrt()
}

/// Whether the processor has AVX2 (asked once).
#[cfg(target_arch = "x86_64")]
fn avx2() -> bool {
    static HAS: std::sync::OnceLock<bool> = std::sync::OnceLock::new();
    *HAS.get_or_init(|| std::arch::is_x86_feature_detected!("avx2"))
}

/// Where a section stands on its curve today.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Placement {
    /// Years since its surface was last renewed.
    pub age: f64,
    /// Design-lane ESALs its structure has carried since.
    pub esals: f64,
    /// Today's roughness split: as built, environmental ageing since, traffic loading since, and
    /// what neither explains (the survey's roughness is always kept whole).
    pub as_built: f64,
    pub ageing: f64,
    pub load: f64,
    pub other: f64,
}

/// The state of a pavement at the start of a year.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Condition {
    /// Roughness, m/km.
    pub iri: f64,
    /// Structural number.
    pub sn: f64,
    /// Design-lane ESALs the structure has carried since it was built or last strengthened.
    pub esals: f64,
    /// Years since the surface was renewed.
    pub age: f64,
    /// Terms that depend on SN only: serviceability lost per ESAL (AASHTO family), roughness
    /// per ESAL at age 0 (Paterson's term, or the calibrated load term), and ESALs to PSR 1.5.
    psi_per_esal: f64,
    per_esal: f64,
    w_15: f64,
}

/// How a family's roughness rises in a year, before the shared bound and holding repairs.
pub trait Progression {
    /// The terms of a structural number: (PSI per ESAL, m/km per ESAL at age 0).
    fn terms(&self, sn: f64) -> (f64, f64);
    /// The rise in roughness over one year under `esals` design-lane ESALs (m/km, ≥ 0), in two
    /// parts: what does not depend on traffic, and the load-related rise.
    fn parts(&self, c: &Condition, esals: f64) -> (f64, f64);
    /// The whole rise, [`Progression::parts`] added.
    fn raw_rise(&self, c: &Condition, esals: f64) -> f64 {
        let (a, b) = self.parts(c, esals);
        a + b
    }
    /// The environmental coefficient m (share of IRI a year), for placing a section.
    fn environment(&self) -> f64;
}

/// The AASHTO 1993 family for one section (its subgrade modulus fixed).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Aashto93 {
    pub p: Aashto93Params,
    pub mr_psi: f64,
    /// Paterson's subgrade contribution, [`subgrade_sn`].
    pub snsg: f64,
}

impl Progression for Aashto93 {
    fn terms(&self, sn: f64) -> (f64, f64) {
        let loss = self.p.p0 - self.p.terminal_psr;
        let wt = aashto93_w(sn, self.p.zr, self.p.s0, self.mr_psi, loss);
        let pat = paterson_per_esal(self.p.structural_rise, sn + self.snsg, 0.0, 0.0);
        (loss / wt * self.p.load_factor, pat * self.p.load_factor)
    }

    #[inline]
    fn parts(&self, c: &Condition, esals: f64) -> (f64, f64) {
        self.parts_aged(c, esals, (self.p.ageing * c.age).exp())
    }

    fn environment(&self) -> f64 {
        self.p.ageing
    }
}

impl Aashto93 {
    /// [`Progression::parts`] given Paterson's age factor e^(m·age) of `c`'s surface age (the
    /// yearly loop looks it up in a table of whole ages instead of taking the exponential).
    #[inline]
    fn parts_aged(&self, c: &Condition, esals: f64, age_factor: f64) -> (f64, f64) {
        let m = self.p.ageing;
        let esals = esals.max(0.0);
        let psr = psr_floor(psr_from_iri(c.iri), self.p.terminal_psr);
        let aashto = c.psi_per_esal * esals / (0.26 * psr);
        let paterson = c.per_esal * age_factor * esals;
        (m * c.iri, soft_min(aashto, paterson))
    }
}

/// Paterson's age factor e^(m·age) of every whole surface age a section's runs can reach, taken
/// once per section: a surface's age is always a whole number of years (placed from whole years,
/// then one a year, or reset to 0 by works), so the yearly loop reads the factor from here with
/// the very bits `exp` gives. Any other age (none arises in a run) falls back to `exp`.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct AgeFactors {
    m: f64,
    by_age: Vec<f64>,
}

impl AgeFactors {
    /// The factors of ages 0 to `max_age` for `model`'s family (none for a family without an
    /// age term).
    pub fn new(model: &SectionModel, max_age: usize) -> AgeFactors {
        match &model.family {
            Family::Aashto93(a) => {
                let m = a.p.ageing;
                AgeFactors {
                    m,
                    by_age: (0..=max_age).map(|k| (m * k as f64).exp()).collect(),
                }
            }
            Family::Calibrated(_) => AgeFactors::default(),
        }
    }

    /// e^(m·age).
    #[inline]
    fn at(&self, age: f64) -> f64 {
        let k = age as usize;
        #[allow(clippy::float_cmp)] // only a whole age, exactly, reads the table
        if k as f64 == age {
            if let Some(&f) = self.by_age.get(k) {
                return f;
            }
        }
        (self.m * age).exp()
    }
}

/// A user-calibrated family: each year IRI rises by
/// `rise_per_year + ageing·IRI + rise_per_mesa·MESA·(sn_ref/SN)^sn_exponent` (MESA: million
/// design-lane ESALs that year) — linear in its coefficients, so that it can be fitted to surveys
/// by least squares. The defaults are of the magnitude Paterson's relation gives; replace them
/// with the agency's fitted values (`pavestrat calibrate`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Calibrated {
    pub p: CalibratedParams,
}

impl Calibrated {
    /// The load term's weight per ESAL at structural number `sn`.
    pub fn load_weight(p: &CalibratedParams, sn: f64) -> f64 {
        p.rise_per_mesa * 1e-6 * (p.sn_ref / sn.max(0.1)).powf(p.sn_exponent)
    }
}

impl Progression for Calibrated {
    fn terms(&self, sn: f64) -> (f64, f64) {
        (0.0, Calibrated::load_weight(&self.p, sn))
    }

    #[inline]
    fn parts(&self, c: &Condition, esals: f64) -> (f64, f64) {
        (
            self.p.rise_per_year + self.p.ageing * c.iri,
            c.per_esal * esals.max(0.0),
        )
    }

    fn environment(&self) -> f64 {
        self.p.ageing
    }
}

/// A family's model, ready to run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Family {
    Aashto93(Aashto93),
    Calibrated(Calibrated),
}

/// One section's progression: its family's model, and what every family shares — the bound on
/// a year's rise, the maximum roughness, and the structural terms that overlays use.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SectionModel {
    pub family: Family,
    iri_max: f64,
    max_rise: f64,
    iri_new: f64,
    mr_psi: f64,
    snsg: f64,
}

impl SectionModel {
    /// The model of `family` for a section with subgrade modulus `mr_mpa`.
    pub fn new(family: &FamilyModel, mr_mpa: f64, c: &ConditionParams) -> SectionModel {
        let mr_psi = mr_mpa * PSI_PER_MPA;
        let snsg = subgrade_sn(mr_psi);
        let family = match family {
            FamilyModel::Aashto93(p) => Family::Aashto93(Aashto93 {
                p: *p,
                mr_psi,
                snsg,
            }),
            FamilyModel::Calibrated(p) => Family::Calibrated(Calibrated { p: *p }),
        };
        SectionModel {
            family,
            iri_max: c.iri_max,
            max_rise: c.max_rise,
            iri_new: c.iri_floor,
            mr_psi,
            snsg,
        }
    }

    fn progression(&self) -> &dyn Progression {
        match &self.family {
            Family::Aashto93(m) => m,
            Family::Calibrated(m) => m,
        }
    }

    /// ESALs to serviceability 1.5 at structural number `sn` (AASHTO 1993 at mean performance,
    /// S0 0.45, p0 4.2: the overlay design's N1.5), whatever the roughness family.
    fn w_15(&self, sn: f64) -> f64 {
        aashto93_w(sn, 0.0, 0.45, self.mr_psi, 4.2 - 1.5)
    }

    fn with_sn(&self, c: &mut Condition, sn: f64) {
        let (a, b) = self.progression().terms(sn);
        c.sn = sn;
        c.psi_per_esal = a;
        c.per_esal = b;
        c.w_15 = self.w_15(sn);
    }

    /// Where a section of roughness `iri` and structural number `sn` stands today. `age` is the
    /// years since its last works when known; `esals_now` its design-lane ESALs this year and
    /// `growth` their yearly growth, which give the traffic carried since. Without an age, the
    /// age is the one at which Paterson's integrated form reaches today's roughness (within 0–80
    /// years).
    pub fn place(
        &self,
        iri: f64,
        sn: f64,
        age: Option<f64>,
        esals_now: f64,
        growth: f64,
    ) -> Placement {
        let m = self.progression().environment();
        let snc = sn + self.snsg;
        // ESALs carried over the last a years, for whole a (today's traffic discounted back by
        // its growth), as one running sum.
        let g = (1.0 + growth).max(0.01);
        let carried_by_age = |years: usize| -> Vec<f64> {
            let mut w = vec![0.0; years + 1];
            let mut e = esals_now.max(0.0);
            for a in 1..=years {
                e /= g;
                w[a] = w[a - 1] + e;
            }
            w
        };
        let a_coef = 263.0;
        let (age, esals) = match age {
            Some(a) => {
                let a = a.max(0.0);
                let w = carried_by_age((a.floor() as usize).min(200));
                (a, w[w.len() - 1])
            }
            None if iri <= self.iri_new => (0.0, 0.0),
            None => {
                // Paterson's integrated form is non-decreasing in whole years: the first year
                // that reaches today's roughness, 80 at most.
                let w = carried_by_age(80);
                let a = (0..=80)
                    .find(|&a| {
                        paterson_iri(self.iri_new, snc, m, a as f64, w[a] * 1e-6, a_coef) >= iri
                    })
                    .unwrap_or(80);
                (a as f64, w[a])
            }
        };
        let as_built = self.iri_new.min(iri);
        let ageing = ((m * age).exp() - 1.0) * as_built;
        let load = (m * age).exp() * a_coef * (1.0 + snc.max(0.0)).powi(-5) * esals * 1e-6;
        let room = iri - as_built;
        let scale = if ageing + load > room && ageing + load > 0.0 {
            room / (ageing + load)
        } else {
            1.0
        };
        Placement {
            age,
            esals,
            as_built,
            ageing: ageing * scale,
            load: load * scale,
            other: (room - (ageing + load) * scale).max(0.0),
        }
    }

    /// The state of a pavement of this roughness and structural number, placed as `at` says.
    pub fn start(&self, iri: f64, sn: f64, at: &Placement) -> Condition {
        let mut c = Condition {
            iri: iri.min(self.iri_max),
            sn,
            esals: at.esals,
            age: at.age,
            psi_per_esal: 0.0,
            per_esal: 0.0,
            w_15: 0.0,
        };
        self.with_sn(&mut c, sn);
        c
    }

    /// The rise in roughness over one year under `esals` design-lane ESALs, with holding repairs
    /// taking `slow` (0–1) off it: the family's rise, bounded smoothly by `max_rise`, and slowed
    /// as roughness nears `iri_max`.
    #[inline]
    pub fn rise(&self, c: &Condition, esals: f64, slow: f64) -> f64 {
        // Matched, not through `progression()`: the yearly loop's hottest call, inlined.
        let raw = match &self.family {
            Family::Aashto93(m) => m.raw_rise(c, esals),
            Family::Calibrated(m) => m.raw_rise(c, esals),
        };
        self.bound(c, raw, slow)
    }

    /// The shared bound, holding repairs and headroom applied to a family's raw rise.
    #[inline]
    fn bound(&self, c: &Condition, raw: f64, slow: f64) -> f64 {
        let headroom = (1.0 - (c.iri / self.iri_max).powi(4)).max(0.0);
        bounded_rise(raw, self.max_rise) * (1.0 - slow.clamp(0.0, 1.0)) * headroom
    }

    /// The family's own yearly rise in two parts (no bound, no holding repairs): what
    /// calibration fits against survey history.
    pub fn raw_parts(&self, c: &Condition, esals: f64) -> (f64, f64) {
        self.progression().parts(c, esals)
    }

    /// One year under `esals` design-lane ESALs. Roughness never falls, nor passes `iri_max`.
    #[inline]
    pub fn age(&self, c: &mut Condition, esals: f64, slow: f64) {
        let rise = self.rise(c, esals, slow);
        self.step(c, esals, rise);
    }

    /// [`SectionModel::age`] with the age factors of this model taken once ([`AgeFactors`]):
    /// the same result to the bit.
    #[inline(always)]
    pub fn age_with(&self, c: &mut Condition, esals: f64, slow: f64, f: &AgeFactors) {
        let raw = match &self.family {
            Family::Aashto93(m) => {
                let (a, b) = m.parts_aged(c, esals, f.at(c.age));
                a + b
            }
            Family::Calibrated(m) => m.raw_rise(c, esals),
        };
        let rise = self.bound(c, raw, slow);
        self.step(c, esals, rise);
    }

    /// [`SectionModel::age_with`] for four conditions at once, each with its own traffic and
    /// holding repairs: the same result to the bit. The AASHTO family's yearly rise is a chain of
    /// roots and divisions whose every step waits on the one before; in four lanes of one vector
    /// register (AVX2, where the processor has it) four chains cost about what one does, since a
    /// vector root or division takes no longer than a single one. Each lane does the very
    /// operations, in the very order, that [`SectionModel::age_with`] does (IEEE roots, divisions,
    /// products and sums are exact per lane; the exponentials are taken one by one as there); a
    /// lane whose inputs the vector form does not cover (a NaN, a serviceability at or below
    /// zero) sends all four through the one-by-one path.
    #[inline]
    pub fn age_four(
        &self,
        mut c: [&mut Condition; 4],
        esals: [f64; 4],
        slow: [f64; 4],
        f: &AgeFactors,
    ) {
        #[cfg(target_arch = "x86_64")]
        if let Family::Aashto93(m) = &self.family {
            if avx2() {
                // SAFETY: the processor has AVX2 (checked at run time just above).
                if unsafe { self.age_four_avx2(m, &mut c, esals, slow, f) } {
                    return;
                }
            }
        }
        let [c0, c1, c2, c3] = c;
        self.age_with(c0, esals[0], slow[0], f);
        self.age_with(c1, esals[1], slow[1], f);
        self.age_with(c2, esals[2], slow[2], f);
        self.age_with(c3, esals[3], slow[3], f);
    }

    /// The vector form of [`SectionModel::age_four`] for the AASHTO family; `false` (and nothing
    /// changed) when a lane's inputs are outside what it covers.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    unsafe fn age_four_avx2(
        &self,
        m: &Aashto93,
        c: &mut [&mut Condition; 4],
        esals: [f64; 4],
        slow: [f64; 4],
        f: &AgeFactors,
    ) -> bool {
        use std::arch::x86_64::*;
        let pt = m.p.terminal_psr;
        let mut iri = [0.0; 4];
        let mut psr = [0.0; 4];
        let mut af = [0.0; 4];
        let mut psi = [0.0; 4];
        let mut per = [0.0; 4];
        let mut e = [0.0; 4];
        let mut sl = [0.0; 4];
        for k in 0..4 {
            iri[k] = c[k].iri;
            psr[k] = psr_from_iri(c[k].iri);
            af[k] = f.at(c[k].age);
            psi[k] = c[k].psi_per_esal;
            per[k] = c[k].per_esal;
            e[k] = esals[k].max(0.0);
            sl[k] = slow[k].clamp(0.0, 1.0);
            // psr_floor's general branch, and NaN (whose comparisons the vector selects would
            // settle differently from `max`/`min`), are left to the one-by-one path.
            let ok = psr[k] > 0.0
                && pt > 0.0
                && !iri[k].is_nan()
                && !af[k].is_nan()
                && !psi[k].is_nan()
                && !per[k].is_nan()
                && !e[k].is_nan()
                && !sl[k].is_nan();
            if !ok {
                return false;
            }
        }
        // SAFETY (all intrinsics below): AVX2 is enabled for this function; loads and stores
        // are of four-element arrays on the stack.
        unsafe {
            let ld = |a: &[f64; 4]| _mm256_loadu_pd(a.as_ptr());
            let splat = |x: f64| _mm256_set1_pd(x);
            let one = splat(1.0);
            let zero = _mm256_setzero_pd();
            let (iri_v, psr_v, e_v) = (ld(&iri), ld(&psr), ld(&e));
            // psr_floor(psr, pt) = max · (r⁸ + 1)^⅛, r = min / max.
            let pt_v = splat(pt);
            let hi = _mm256_max_pd(psr_v, pt_v);
            let lo = _mm256_min_pd(psr_v, pt_v);
            let r = _mm256_div_pd(lo, hi);
            let r2 = _mm256_mul_pd(r, r);
            let r4 = _mm256_mul_pd(r2, r2);
            let r8 = _mm256_mul_pd(r4, r4);
            let root8 = _mm256_sqrt_pd(_mm256_sqrt_pd(_mm256_sqrt_pd(_mm256_add_pd(r8, one))));
            let pf = _mm256_mul_pd(hi, root8);
            // The AASHTO rate and Paterson's, as in `parts_aged`.
            let aashto =
                _mm256_div_pd(_mm256_mul_pd(ld(&psi), e_v), _mm256_mul_pd(splat(0.26), pf));
            let paterson = _mm256_mul_pd(_mm256_mul_pd(ld(&per), ld(&af)), e_v);
            // soft_min(aashto, paterson).
            let le = _mm256_cmp_pd::<_CMP_LE_OQ>(aashto, paterson);
            let small = _mm256_blendv_pd(paterson, aashto, le);
            let other = _mm256_blendv_pd(aashto, paterson, le);
            let q = _mm256_div_pd(small, other);
            let q2 = _mm256_mul_pd(q, q);
            let q4 = _mm256_mul_pd(q2, q2);
            let soft = _mm256_div_pd(
                small,
                _mm256_sqrt_pd(_mm256_sqrt_pd(_mm256_add_pd(q4, one))),
            );
            let none = _mm256_or_pd(
                _mm256_cmp_pd::<_CMP_LE_OQ>(aashto, zero),
                _mm256_cmp_pd::<_CMP_LE_OQ>(paterson, zero),
            );
            let load = _mm256_blendv_pd(soft, zero, none);
            let raw = _mm256_add_pd(_mm256_mul_pd(splat(m.p.ageing), iri_v), load);
            // bound: bounded_rise(raw, max_rise) · (1 − slow) · headroom.
            let t = _mm256_div_pd(raw, splat(self.max_rise));
            let t2 = _mm256_mul_pd(t, t);
            let t4 = _mm256_mul_pd(t2, t2);
            let bounded =
                _mm256_div_pd(raw, _mm256_sqrt_pd(_mm256_sqrt_pd(_mm256_add_pd(one, t4))));
            let bounded = _mm256_blendv_pd(bounded, zero, _mm256_cmp_pd::<_CMP_LE_OQ>(raw, zero));
            let h = _mm256_div_pd(iri_v, splat(self.iri_max));
            let h2 = _mm256_mul_pd(h, h);
            let h4 = _mm256_mul_pd(h2, h2);
            let room = _mm256_sub_pd(one, h4);
            let headroom = _mm256_blendv_pd(room, zero, _mm256_cmp_pd::<_CMP_LT_OQ>(room, zero));
            let rise = _mm256_mul_pd(
                _mm256_mul_pd(bounded, _mm256_sub_pd(one, ld(&sl))),
                headroom,
            );
            let next = _mm256_add_pd(iri_v, rise);
            let mut out = [0.0; 4];
            _mm256_storeu_pd(out.as_mut_ptr(), next);
            for k in 0..4 {
                // step(): the same min and max, one by one.
                let ck = &mut *c[k];
                ck.iri = out[k].min(self.iri_max).max(ck.iri);
                ck.age += 1.0;
                ck.esals += esals[k].max(0.0);
            }
        }
        true
    }

    #[inline]
    fn step(&self, c: &mut Condition, esals: f64, rise: f64) {
        c.iri = (c.iri + rise).min(self.iri_max).max(c.iri);
        c.age += 1.0;
        c.esals += esals.max(0.0);
    }

    /// A new surface: roughness falls to `iri_after` plus the share `carry` of the roughness above
    /// it that the works leave (never above what it was); the surface's age starts again.
    pub fn resurface(&self, c: &mut Condition, iri_after: f64, carry: f64) {
        let to = iri_after + carry.clamp(0.0, 1.0) * (c.iri - iri_after).max(0.0);
        c.iri = c.iri.min(to);
        c.age = 0.0;
    }

    /// A seal: roughness lowered to `to`; the surface's age starts again.
    pub fn lower(&self, c: &mut Condition, to: f64) {
        c.iri = c.iri.min(to);
        c.age = 0.0;
    }

    /// An overlay adding `added` to the existing pavement's effective structural number,
    /// SNeff = CF·SN ([`condition_factor`] of the remaining life the traffic carried leaves).
    pub fn strengthen(&self, c: &mut Condition, added: f64) {
        let rl = 1.0 - c.esals / c.w_15.max(1.0);
        let sn = condition_factor(rl) * c.sn + added.max(0.0);
        self.with_sn(c, sn);
        c.esals = 0.0;
    }

    /// A new pavement of structural number `sn` (reconstruction): its traffic starts again.
    pub fn rebuild(&self, c: &mut Condition, sn: f64) {
        self.with_sn(c, sn);
        c.esals = 0.0;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::models::IN_PER_MI_PER_M_PER_KM;
    use approx::assert_abs_diff_eq;

    #[test]
    fn aashto93_chart_example() {
        // AASHTO Guide for Design of Pavement Structures (1993), flexible design chart example
        // (reproduced in Mannering et al., Principles of Highway Engineering and Traffic
        // Analysis): W18 = 5e6, R = 95 % (ZR = −1.645), S0 = 0.35, MR = 5000 psi, ΔPSI = 1.9
        // → SN 5.0 from the chart; the equation solved exactly gives 4.976.
        let sn = aashto93_required_sn(5e6, -1.645, 0.35, 5000.0, 1.9).unwrap();
        assert_abs_diff_eq!(sn, 5.0, epsilon = 0.05);
        assert_abs_diff_eq!(sn, 4.976, epsilon = 0.002);
    }

    #[test]
    fn aashto93_design_sheet_example() {
        // Published design sheet citing the 1986 Guide: W18 = 6500, ZR = 0, S0 = 0.40,
        // MR = 5000 psi, ΔPSI = 2.0 → SN 1.36 (the equation gives 1.372).
        let sn = aashto93_required_sn(6500.0, 0.0, 0.40, 5000.0, 2.0).unwrap();
        assert_abs_diff_eq!(sn, 1.36, epsilon = 0.02);
        assert_abs_diff_eq!(sn, 1.372, epsilon = 0.002);
    }

    #[test]
    fn psr_iri_reference_values() {
        // Al-Omari & Darter, TRR 1435 (1994): IRI 95 in/mi → PSR 3.387; 170 in/mi → 2.490.
        assert_abs_diff_eq!(
            psr_from_iri(95.0 / IN_PER_MI_PER_M_PER_KM),
            3.387,
            epsilon = 0.002
        );
        assert_abs_diff_eq!(
            psr_from_iri(170.0 / IN_PER_MI_PER_M_PER_KM),
            2.490,
            epsilon = 0.002
        );
        assert_abs_diff_eq!(iri_from_psr(psr_from_iri(3.7)), 3.7, epsilon = 1e-12);
    }

    #[test]
    fn federal_condition_classes_and_their_edges() {
        // US 23 CFR 490.313: good < 95 in/mi, fair 95–170 (both edges), poor > 170.
        let p = ConditionParams::default();
        let cls = |in_mi: f64| classify(in_mi / IN_PER_MI_PER_M_PER_KM, &p);
        assert_eq!(cls(94.9), ConditionClass::Good);
        assert_eq!(cls(95.0), ConditionClass::Fair);
        assert_eq!(cls(170.0), ConditionClass::Fair);
        assert_eq!(cls(170.1), ConditionClass::Poor);
    }

    fn model(family: FamilyModel) -> SectionModel {
        SectionModel::new(&family, 50.0, &ConditionParams::default())
    }

    fn asphalt() -> SectionModel {
        model(FamilyModel::Aashto93(Aashto93Params::default()))
    }

    fn surface_treatment() -> SectionModel {
        model(FamilyModel::Calibrated(CalibratedParams::default()))
    }

    fn placed(m: &SectionModel, iri: f64, sn: f64, age: f64, esals: f64) -> Condition {
        let at = m.place(iri, sn, Some(age), esals, 0.03);
        m.start(iri, sn, &at)
    }

    #[test]
    fn paterson_structural_term_reference_values() {
        // Paterson (1987), integrated form (from memory; arithmetic in the shared reference
        // list): SNC 4, NE 1.0 million, t 0 → +0.0842 m/km from the structural term; SNC 2 →
        // +1.082.
        assert_abs_diff_eq!(
            paterson_iri(0.0, 4.0, 0.023, 0.0, 1.0, 263.0),
            0.0842,
            epsilon = 5e-5
        );
        assert_abs_diff_eq!(
            paterson_iri(0.0, 2.0, 0.023, 0.0, 1.0, 263.0),
            1.082,
            epsilon = 5e-4
        );
        // The rate is the time derivative of the integrated form's load part.
        let (snc, m, t) = (3.0, 0.023, 7.0);
        let per_mesa = paterson_per_esal(263.0, snc, m, t) * 1e6;
        let h = 1e-4;
        let d = (paterson_iri(0.0, snc, m, t, 1.0 + h, 263.0)
            - paterson_iri(0.0, snc, m, t, 1.0, 263.0))
            / h;
        assert_abs_diff_eq!(per_mesa, d, epsilon = 1e-6);
    }

    #[test]
    fn overlay_condition_factor_reference_values() {
        // AASHTO 1993 Guide, Part III remaining-life method (from memory, shared reference
        // list): RL 0.5 → CF ≈ 0.89; RL 0.1 → CF ≈ 0.68; a new pavement keeps its SN.
        assert_abs_diff_eq!(condition_factor(0.5), 0.89, epsilon = 0.005);
        assert_abs_diff_eq!(condition_factor(0.1), 0.68, epsilon = 0.005);
        assert_abs_diff_eq!(condition_factor(1.0), 1.0, epsilon = 1e-12);
        assert_abs_diff_eq!(condition_factor(0.0), 0.5, epsilon = 1e-12);
    }

    #[test]
    fn an_overlay_adds_to_the_effective_structural_number() {
        let m = asphalt();
        // Half the traffic to PSR 1.5 carried: CF ≈ 0.89 of SN 4, plus 50 mm at 0.44/in.
        let mut c = placed(&m, 2.5, 4.0, 10.0, 0.0);
        c.esals = 0.5 * m.w_15(4.0);
        let added = 50.0 / 25.4 * 0.44;
        m.strengthen(&mut c, added);
        assert_abs_diff_eq!(c.sn, 0.5f64.powf(0.165) * 4.0 + added, epsilon = 1e-9);
        assert_abs_diff_eq!(c.esals, 0.0, epsilon = 0.0);
        // A new pavement's SN is kept whole.
        let mut fresh = placed(&m, 1.2, 4.0, 0.0, 0.0);
        m.strengthen(&mut fresh, added);
        assert_abs_diff_eq!(fresh.sn, 4.0 + added, epsilon = 1e-9);
    }

    #[test]
    fn smooth_helpers_behave() {
        for x in [0.0, 0.01, 0.1, 0.5, 1.0, 3.0, 100.0] {
            let b = bounded_rise(x, 0.8);
            assert!(b <= x + 1e-15 && b < 0.8);
        }
        assert_abs_diff_eq!(bounded_rise(0.1, 0.8), 0.1, epsilon = 1e-4);
        assert!(soft_min(1.0, 1.0) <= 1.0 && soft_min(1.0, 1.0) > 0.8);
        assert_abs_diff_eq!(soft_min(0.01, 1.0), 0.01, epsilon = 1e-9);
        assert!(psr_floor(0.2, 1.5) >= 1.5 && (psr_floor(4.0, 1.5) - 4.0).abs() < 1e-3);
    }

    #[test]
    fn start_keeps_the_given_roughness_and_splits_it() {
        for m in [asphalt(), surface_treatment()] {
            for iri in [0.3, 1.0, 2.5, 6.0, 14.0] {
                for age in [None, Some(0.0), Some(12.0)] {
                    let at = m.place(iri, 3.5, age, 200_000.0, 0.03);
                    let c = m.start(iri, 3.5, &at);
                    assert_abs_diff_eq!(c.iri, iri, epsilon = 1e-9);
                    let sum = at.as_built + at.ageing + at.load + at.other;
                    assert_abs_diff_eq!(sum, iri, epsilon = 1e-9);
                    assert!(at.as_built >= 0.0 && at.ageing >= 0.0 && at.load >= 0.0);
                }
            }
        }
        // A rough, old pavement is not all load damage.
        let m = asphalt();
        let at = m.place(6.0, 2.5, Some(20.0), 20_000.0, 0.02);
        assert!(at.ageing > 0.3 && at.load < 6.0 - at.as_built, "{at:?}");
        // Without an age, today's roughness gives one: rougher means older.
        let young = m.place(1.5, 4.0, None, 300_000.0, 0.03).age;
        let old = m.place(4.0, 4.0, None, 300_000.0, 0.03).age;
        assert!(young < old, "{young} {old}");
    }

    #[test]
    fn weaker_pavements_and_heavier_traffic_roughen_faster() {
        for m in [asphalt(), surface_treatment()] {
            let run = |sn: f64, esals: f64| {
                let mut c = placed(&m, 1.5, sn, 0.0, esals);
                for _ in 0..15 {
                    m.age(&mut c, esals, 0.0);
                }
                c.iri
            };
            assert!(run(2.5, 300_000.0) > run(4.5, 300_000.0));
            assert!(run(3.5, 600_000.0) > run(3.5, 100_000.0));
            // With no traffic, only the environment acts, and slowly.
            let aged = run(3.5, 0.0);
            assert!(aged > 1.5 && aged < 2.5, "{aged}");
        }
    }

    #[test]
    fn strong_pavements_roughen_at_published_rates() {
        // Common practice (shared reference list): sound asphalt pavements roughen about
        // 0.02–0.15 m/km a year in their first decade.
        let m = asphalt();
        for sn in [4.0, 5.0, 6.0] {
            for esals in [50_000.0, 300_000.0, 800_000.0] {
                let mut c = placed(&m, 1.2, sn, 0.0, esals);
                for _ in 0..10 {
                    m.age(&mut c, esals, 0.0);
                }
                let rate = (c.iri - 1.2) / 10.0;
                assert!((0.02..=0.15).contains(&rate), "SN {sn}, {esals}: {rate}");
            }
        }
    }

    #[test]
    fn holding_repairs_slow_the_rise() {
        let m = asphalt();
        let c = placed(&m, 7.0, 2.0, 25.0, 20_000.0);
        assert!(m.rise(&c, 20_000.0, 0.6) < 0.5 * m.rise(&c, 20_000.0, 0.0));
    }

    #[test]
    fn works_depend_on_the_road_before() {
        let m = asphalt();
        let mut rough = placed(&m, 8.0, 2.5, 20.0, 10_000.0);
        let mut smooth = placed(&m, 3.0, 2.5, 20.0, 10_000.0);
        m.resurface(&mut rough, 1.4, (-50.0f64 / 40.0).exp());
        m.resurface(&mut smooth, 1.4, (-50.0f64 / 40.0).exp());
        assert!(
            rough.iri > smooth.iri && smooth.iri > 1.4,
            "{rough:?} {smooth:?}"
        );
        assert_abs_diff_eq!(rough.age, 0.0, epsilon = 0.0);
        let mut rebuilt = placed(&m, 8.0, 2.5, 20.0, 10_000.0);
        m.resurface(&mut rebuilt, 1.1, 0.0);
        m.rebuild(&mut rebuilt, 5.2);
        assert_abs_diff_eq!(rebuilt.iri, 1.1, epsilon = 1e-12);
        assert_abs_diff_eq!(rebuilt.sn, 5.2, epsilon = 1e-12);
    }

    /// Four conditions aged at once ([`SectionModel::age_four`], in vector lanes where the
    /// processor has AVX2) end where each aged alone ends, bit for bit: random states over and
    /// beyond what a run meets — no traffic, no Paterson term, the roughness cap, holding repairs
    /// from none to whole, surfaces of every age, strong and failed structures — and a lane with
    /// a NaN, which sends all four through the one-by-one path.
    #[test]
    fn four_conditions_aged_at_once_are_aged_alone() {
        let mut rng = crate::demo::synth::SplitMix64::new(23);
        let mut fam = Aashto93Params::default();
        for m in [asphalt(), surface_treatment(), {
            fam.ageing = 0.04;
            model(FamilyModel::Aashto93(fam))
        }] {
            let f = AgeFactors::new(&m, 120);
            for round in 0..20_000 {
                let mut cs: Vec<Condition> = (0..4)
                    .map(|_| {
                        let iri = rng.range(0.2, 16.5);
                        let sn = rng.range(0.5, 9.0);
                        let mut c = placed(
                            &m,
                            iri.min(15.9),
                            sn,
                            rng.range(0.0, 60.0).floor(),
                            rng.range(0.0, 4e6),
                        );
                        c.iri = iri.min(16.0);
                        if rng.range(0.0, 1.0) < 0.05 {
                            c.per_esal = 0.0;
                        }
                        c
                    })
                    .collect();
                let mut esals: [f64; 4] = std::array::from_fn(|_| rng.range(0.0, 3e6));
                let slow: [f64; 4] = std::array::from_fn(|_| rng.range(-0.2, 1.2));
                if round % 17 == 0 {
                    esals[1] = 0.0;
                }
                if round % 101 == 0 {
                    cs[2].iri = f64::NAN;
                }
                let mut alone = cs.clone();
                for k in 0..4 {
                    m.age_with(&mut alone[k], esals[k], slow[k], &f);
                }
                let [a, b, c, d] = &mut cs[..] else {
                    unreachable!()
                };
                m.age_four([a, b, c, d], esals, slow, &f);
                for k in 0..4 {
                    for (x, y) in [
                        (cs[k].iri, alone[k].iri),
                        (cs[k].age, alone[k].age),
                        (cs[k].esals, alone[k].esals),
                    ] {
                        assert_eq!(
                            x.to_bits(),
                            y.to_bits(),
                            "lane {k} of round {round}: {x} {y}"
                        );
                    }
                }
            }
        }
    }

    /// The one-division forms of the smooth minimum and floor give the same bits as the
    /// symmetric forms they replaced, over the rates and serviceabilities the loop meets and
    /// far beyond (each value's own scale, ratios from 1e-12 to 1e12, equal values, infinities).
    #[test]
    fn one_division_forms_are_the_symmetric_ones_to_the_bit() {
        fn soft_min_symmetric(a: f64, b: f64) -> f64 {
            if a <= 0.0 || b <= 0.0 {
                return 0.0;
            }
            let m = a.min(b);
            let (x, y) = (m / a, m / b);
            m / (x.powi(4) + y.powi(4)).sqrt().sqrt()
        }
        fn psr_floor_symmetric(psr: f64, pt: f64) -> f64 {
            let m = psr.max(pt);
            m * ((psr / m).powi(8) + (pt / m).powi(8)).sqrt().sqrt().sqrt()
        }
        let mut rng = crate::demo::synth::SplitMix64::new(17);
        let mut values = vec![0.0, 1.0, 2.5, 5.0, 1e-300, 1e300, f64::INFINITY];
        for _ in 0..20_000 {
            values.push(10f64.powf(rng.range(-12.0, 12.0)));
        }
        for w in values.windows(2) {
            let (a, b) = (w[0], w[1]);
            for (x, y) in [(a, b), (b, a), (a, a)] {
                assert_eq!(
                    soft_min(x, y).to_bits(),
                    soft_min_symmetric(x, y).to_bits(),
                    "{x} {y}"
                );
                let (p, t) = (x.min(5.0), y.min(5.0));
                assert_eq!(
                    psr_floor(p, t).to_bits(),
                    psr_floor_symmetric(p, t).to_bits(),
                    "{p} {t}"
                );
            }
        }
    }
}
