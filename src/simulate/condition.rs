//! Pavement condition: roughness (IRI, m/km) and structural number, year by year.
//!
//! Two families of progression sit behind one trait, [`Progression`]:
//! - [`Aashto93`]: the AASHTO 1993 flexible-pavement serviceability loss driven by cumulative
//!   design-lane ESALs, structural number and subgrade modulus, mapped to IRI through the
//!   Al-Omari & Darter (1994) PSR–IRI relation, plus an environmental ageing term;
//! - [`Calibrated`]: an agency's own fitted progression per pavement family.
//!
//! The AASHTO design equation is used here as a performance model: for a pavement of structural
//! number SN, the serviceability lost after W ESALs is the ΔPSI that the equation pairs with W.
//! When SN changes (an overlay), the pavement's current load-related roughness is carried over
//! by finding the W that gives the same loss under the new SN ("equivalent traffic"), so that the
//! model needs no history.

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

/// The state of a pavement at the start of a year.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Condition {
    /// Roughness, m/km.
    pub iri: f64,
    /// Structural number.
    pub sn: f64,
    /// Equivalent design-lane ESALs carried since the surface was new (AASHTO family).
    w: f64,
    /// Roughness not explained by traffic loading: the surface's own start and its ageing.
    offset: f64,
    /// Cached terms that depend on SN only.
    k: f64,
    dd: f64,
}

impl Condition {
    /// Lower the roughness to `to` (a seal's reduction), keeping the traffic-related part.
    pub fn lower(&mut self, to: f64) {
        self.offset -= self.iri - to;
        self.iri = to;
    }
}

/// How a family's roughness progresses and responds to works.
pub trait Progression {
    /// The state of a pavement of this roughness and structural number, its roughness taken as
    /// the traffic-related part where the model tells the two apart.
    fn start(&self, iri: f64, sn: f64) -> Condition;
    /// One year under `esals` design-lane ESALs. Roughness never falls.
    fn age(&self, c: &mut Condition, esals: f64);
    /// A new surface of roughness `iri` (no traffic damage yet).
    fn resurface(&self, c: &mut Condition, iri: f64);
    /// A new structural number, the roughness unchanged.
    fn restructure(&self, c: &mut Condition, sn: f64);
}

/// The AASHTO 1993 family for one section (its subgrade modulus fixed).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Aashto93 {
    pub p: Aashto93Params,
    pub mr_psi: f64,
    pub iri_max: f64,
}

impl Aashto93 {
    fn terms(&self, sn: f64) -> (f64, f64) {
        aashto93_terms(sn, self.p.zr, self.p.s0, self.mr_psi)
    }

    fn max_loss(&self) -> f64 {
        self.p.p0 - self.p.psr_min
    }

    /// Traffic-related IRI after `w` ESALs: the design equation solved for ΔPSI,
    /// ΔPSI = 2.7·10^((log10 W − K)·D), written with natural logarithms (K·ln 10 is cached).
    fn load_iri(&self, c: &Condition, w: f64) -> f64 {
        if w <= 0.0 {
            return iri_from_psr(self.p.p0);
        }
        let dpsi =
            (2.7 * ((w.ln() - c.k * std::f64::consts::LN_10) * c.dd).exp()).min(self.max_loss());
        iri_from_psr(self.p.p0 - dpsi)
    }

    /// ESALs that produce the traffic-related IRI `load` under the cached SN terms.
    fn equivalent_w(&self, c: &Condition, load: f64) -> f64 {
        let dpsi = (self.p.p0 - psr_from_iri(load)).min(self.max_loss());
        if dpsi <= 0.0 {
            0.0
        } else {
            10f64.powf(c.k + (dpsi / 2.7).log10() / c.dd)
        }
    }
}

impl Progression for Aashto93 {
    fn start(&self, iri: f64, sn: f64) -> Condition {
        let (k, dd) = self.terms(sn);
        let mut c = Condition {
            iri,
            sn,
            w: 0.0,
            offset: 0.0,
            k,
            dd,
        };
        c.w = self.equivalent_w(&c, iri);
        c.offset = iri - self.load_iri(&c, c.w);
        c
    }

    fn age(&self, c: &mut Condition, esals: f64) {
        c.w += esals.max(0.0);
        c.offset += self.p.ageing * c.iri;
        let next = (self.load_iri(c, c.w) + c.offset).min(self.iri_max);
        c.iri = next.max(c.iri);
    }

    fn resurface(&self, c: &mut Condition, iri: f64) {
        c.w = 0.0;
        c.offset = iri - self.load_iri(c, 0.0);
        c.iri = iri;
    }

    fn restructure(&self, c: &mut Condition, sn: f64) {
        let load = c.iri - c.offset;
        let (k, dd) = self.terms(sn);
        c.sn = sn;
        c.k = k;
        c.dd = dd;
        c.w = self.equivalent_w(c, load);
        c.offset = c.iri - self.load_iri(c, c.w);
    }
}

/// A user-calibrated family: each year IRI rises by `rise_per_year + ageing·IRI +
/// rise_per_mesa·MESA·(sn_ref/SN)^sn_exponent` (MESA: million design-lane ESALs that year).
/// Every coefficient is a calibration default: replace with the agency's fitted values.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Calibrated {
    pub p: CalibratedParams,
    pub iri_max: f64,
}

impl Calibrated {
    fn load_weight(&self, sn: f64) -> f64 {
        self.p.rise_per_mesa * 1e-6 * (self.p.sn_ref / sn.max(0.1)).powf(self.p.sn_exponent)
    }
}

impl Progression for Calibrated {
    fn start(&self, iri: f64, sn: f64) -> Condition {
        Condition {
            iri,
            sn,
            w: 0.0,
            offset: 0.0,
            k: self.load_weight(sn),
            dd: 0.0,
        }
    }

    fn age(&self, c: &mut Condition, esals: f64) {
        let rise = self.p.rise_per_year + self.p.ageing * c.iri + c.k * esals.max(0.0);
        c.iri = (c.iri + rise).min(self.iri_max).max(c.iri);
    }

    fn resurface(&self, c: &mut Condition, iri: f64) {
        c.iri = iri;
    }

    fn restructure(&self, c: &mut Condition, sn: f64) {
        c.sn = sn;
        c.k = self.load_weight(sn);
    }
}

/// One section's progression: the model of its pavement family, ready to run.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SectionModel {
    Aashto93(Aashto93),
    Calibrated(Calibrated),
}

impl SectionModel {
    /// The model of `family` for a section with subgrade modulus `mr_mpa`.
    pub fn new(family: &FamilyModel, mr_mpa: f64, iri_max: f64) -> SectionModel {
        match family {
            FamilyModel::Aashto93(p) => SectionModel::Aashto93(Aashto93 {
                p: *p,
                mr_psi: mr_mpa * PSI_PER_MPA,
                iri_max,
            }),
            FamilyModel::Calibrated(p) => SectionModel::Calibrated(Calibrated { p: *p, iri_max }),
        }
    }
}

impl Progression for SectionModel {
    fn start(&self, iri: f64, sn: f64) -> Condition {
        match self {
            SectionModel::Aashto93(m) => m.start(iri, sn),
            SectionModel::Calibrated(m) => m.start(iri, sn),
        }
    }
    #[inline]
    fn age(&self, c: &mut Condition, esals: f64) {
        match self {
            SectionModel::Aashto93(m) => m.age(c, esals),
            SectionModel::Calibrated(m) => m.age(c, esals),
        }
    }
    fn resurface(&self, c: &mut Condition, iri: f64) {
        match self {
            SectionModel::Aashto93(m) => m.resurface(c, iri),
            SectionModel::Calibrated(m) => m.resurface(c, iri),
        }
    }
    fn restructure(&self, c: &mut Condition, sn: f64) {
        match self {
            SectionModel::Aashto93(m) => m.restructure(c, sn),
            SectionModel::Calibrated(m) => m.restructure(c, sn),
        }
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

    fn asphalt() -> SectionModel {
        SectionModel::new(
            &FamilyModel::Aashto93(Aashto93Params::default()),
            60.0,
            16.0,
        )
    }

    #[test]
    fn start_keeps_the_given_roughness() {
        for m in [
            asphalt(),
            SectionModel::new(
                &FamilyModel::Calibrated(CalibratedParams::default()),
                60.0,
                16.0,
            ),
        ] {
            for iri in [0.3, 1.0, 2.5, 6.0, 14.0] {
                let c = m.start(iri, 3.5);
                assert_abs_diff_eq!(c.iri, iri, epsilon = 1e-9);
            }
        }
    }

    #[test]
    fn weaker_pavements_and_heavier_traffic_roughen_faster() {
        let m = asphalt();
        let run = |sn: f64, esals: f64| {
            let mut c = m.start(1.5, sn);
            for _ in 0..15 {
                m.age(&mut c, esals);
            }
            c.iri
        };
        assert!(run(2.5, 300_000.0) > run(4.5, 300_000.0));
        assert!(run(3.5, 600_000.0) > run(3.5, 100_000.0));
        // With no traffic, only ageing acts, and slowly.
        let aged = run(3.5, 0.0);
        assert!(aged > 1.5 && aged < 2.5, "{aged}");
    }

    #[test]
    fn restructuring_keeps_roughness_and_slows_progression() {
        let m = asphalt();
        let mut a = m.start(3.0, 2.5);
        let mut b = a;
        m.restructure(&mut b, 4.5);
        assert_abs_diff_eq!(b.iri, 3.0, epsilon = 1e-9);
        m.age(&mut a, 400_000.0);
        m.age(&mut b, 400_000.0);
        assert!(b.iri < a.iri);
    }
}
