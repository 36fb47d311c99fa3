//! Behaviour a practitioner knows (common practice), checked on the whole simulation and
//! appraisal rather than on one model at a time.

use crate::appraise;
use crate::enumerate::{Enumerator, Strategy, Works};
use crate::input::Run;
use crate::model::network::Section;
use crate::simulate::{SectionSim, Trace};
use proptest::prelude::*;
use std::path::Path;

fn demo() -> Run {
    let (run, d) = crate::input::load(&crate::demo::SOURCE, Path::new(crate::demo::SCENARIO));
    assert!(!d.has_errors(), "{d}");
    run.unwrap()
}

fn section(run: &Run, id: &str) -> Section {
    run.network
        .sections
        .iter()
        .find(|s| s.id.as_str() == id)
        .unwrap()
        .clone()
}

fn trace(run: &Run, sec: &Section, st: &Strategy) -> Trace {
    let mut t = Trace::default();
    SectionSim::new(run, sec).run(st, &mut t);
    t
}

fn one_works(run: &Run, treatment: &str, year: u32) -> Strategy {
    Strategy {
        name: format!("{treatment}@{year}"),
        key: Default::default(),
        template: Some(0),
        works: vec![Works {
            year: crate::model::YearOffset(year),
            treatment: run
                .catalogue
                .treatments
                .iter()
                .position(|t| t.id == treatment)
                .unwrap(),
        }],
        trigger: None,
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    /// Without works, roughness never falls, whatever the section (common practice).
    #[test]
    fn base_roughness_never_falls(
        iri in 0.5f64..14.0,
        sn in 1.0f64..7.0,
        aadt in 50.0f64..60_000.0,
        heavy in 0.0f64..0.5,
        growth in -0.02f64..0.08,
        mr in 20.0f64..200.0,
        calibrated in any::<bool>(),
    ) {
        let run = demo();
        let mut sec = section(&run, "OR-02");
        sec.iri = iri;
        sec.structural_number = sn;
        sec.aadt = aadt;
        sec.heavy_share = heavy;
        sec.growth_rate = growth;
        sec.subgrade_mr_mpa = Some(mr);
        sec.surface = Some(if calibrated { "surface_treatment" } else { "asphalt" }.into());
        let t = trace(&run, &sec, &Strategy::base());
        for w in t.iri.windows(2) {
            prop_assert!(w[1] >= w[0], "{:?}", t.iri);
        }
        prop_assert!(t.iri.iter().all(|x| x.is_finite()));
        prop_assert!(t.capital.iter().all(|x| x.abs() <= 0.0));
    }
}

#[test]
fn an_overlay_lowers_roughness_and_adds_to_the_effective_structural_number() {
    let run = demo();
    for id in ["OR-04", "ML-02", "VA-01"] {
        let sec = section(&run, id);
        let base = trace(&run, &sec, &Strategy::base());
        let ov = trace(&run, &sec, &one_works(&run, "overlay", 3));
        // Works in year 3 take effect from year 4.
        assert!(ov.iri[4] < ov.iri[3], "{id}: {:?}", &ov.iri[..6]);
        assert!(ov.iri[4] < base.iri[4]);
        // AASHTO 1993 overlay design: the layer adds to CF × SN, CF from 0.5 to 1 by the
        // traffic carried (50 mm at 0.44 per inch adds 0.866).
        let added = 50.0 / 25.4 * 0.44;
        assert!(
            ov.sn[4] >= 0.5 * ov.sn[3] + added - 1e-9,
            "{id}: {:?}",
            &ov.sn[..6]
        );
        assert!(ov.sn[4] <= ov.sn[3] + added + 1e-9);
        assert!(ov.capital[3] > 0.0);
        // Identical to the base before the works, bit for bit.
        assert_eq!(&ov.iri[..4], &base.iri[..4]);
        assert_eq!(&ov.routine[..3], &base.routine[..3]);
        // A rougher road afterwards costs its users more than the smoother one.
        assert!(ov.operating[4] < base.operating[4]);
    }
}

#[test]
fn user_costs_rise_with_roughness_and_with_congestion() {
    let run = demo();
    let sec = section(&run, "CP-04");
    let per_vkm = |s: &Section| {
        let t = trace(&run, s, &Strategy::base());
        let vkm = s.aadt * 365.0 * s.length_km;
        (
            t.operating[0] / vkm,
            t.time[0] / vkm,
            (t.operating[0] + t.time[0] + t.crashes[0]) / vkm,
        )
    };
    let mut rough = sec.clone();
    rough.iri = sec.iri + 3.0;
    let (o1, t1, u1) = per_vkm(&sec);
    let (o2, t2, u2) = per_vkm(&rough);
    assert!(o2 > o1 && t2 > t1 && u2 > u1);
    // More traffic on the same road: a higher v/c, so more time per vehicle-km.
    let mut busy = sec.clone();
    busy.aadt = sec.aadt * 1.6;
    let (_, t3, _) = per_vkm(&busy);
    assert!(t3 > t1);
}

#[test]
fn the_base_strategy_against_itself_is_exactly_zero() {
    let run = demo();
    let picked: Vec<&Section> = run.network.sections.iter().take(6).collect();
    for r in appraise::network(&run, &picked, false, appraise::IrrScope::Every) {
        let b = r.get("base").unwrap();
        assert!(
            b.indicators.npv.abs() <= 0.0,
            "{}: {}",
            r.section,
            b.indicators.npv
        );
        assert!(b.indicators.pv_benefits.abs() <= 0.0 && b.indicators.pv_costs.abs() <= 0.0);
        assert_eq!(b.indicators.irr, crate::economics::Irr::None);
        // The preferred strategy has the highest NPV, and is the base only when nothing beats it.
        let max = r
            .strategies
            .iter()
            .map(|s| s.indicators.npv)
            .fold(f64::MIN, f64::max);
        let best = r.get(&r.best).unwrap();
        assert!(
            (best.indicators.npv - max).abs() <= 1e-6 * max.abs().max(1.0),
            "{}",
            r.section
        );
    }
}

fn widening(run: &Run, sec: &Section) -> appraise::WideningTiming {
    let e = Enumerator::for_run(run);
    appraise::section(run, &e, sec, false, appraise::IrrScope::Every)
        .widening
        .expect("widening strategies")
}

#[test]
fn faster_growth_brings_widening_earlier() {
    let run = demo();
    let mut slow = section(&run, "CP-01");
    slow.growth_rate = 0.02;
    let mut fast = slow.clone();
    fast.growth_rate = 0.05;
    let (ws, wf) = (widening(&run, &slow), widening(&run, &fast));
    let (Some(fs), Some(ff)) = (ws.by_fyrr, wf.by_fyrr) else {
        panic!("both reach the rate: {ws:?} {wf:?}");
    };
    assert!(ff < fs, "FYRR rule: fast {ff}, slow {fs}");
    assert!(wf.by_npv.unwrap() <= ws.by_npv.unwrap(), "{wf:?}\n{ws:?}");
}

#[test]
fn a_higher_discount_rate_delays_widening_or_removes_it() {
    let mut low = demo();
    let sec = section(&low, "FW-01");
    let mut high = low.clone();
    low.scenario.discounting = low.scenario.discounting.with_rate(0.04).unwrap();
    high.scenario.discounting = high.scenario.discounting.with_rate(0.12).unwrap();
    let (wl, wh) = (widening(&low, &sec), widening(&high, &sec));
    let later = |a: Option<crate::model::Year>, b: Option<crate::model::Year>| match (a, b) {
        (Some(l), Some(h)) => h >= l,
        (_, None) => true,
        (None, Some(_)) => false,
    };
    assert!(wl.by_fyrr.is_some());
    assert!(later(wl.by_fyrr, wh.by_fyrr), "{wl:?}\n{wh:?}");
    assert!(later(wl.by_npv, wh.by_npv), "{wl:?}\n{wh:?}");
    assert!(wh.by_fyrr != wl.by_fyrr || wh.by_fyrr.is_none());
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(60))]

    /// Whatever coefficients the scenario reader accepts, every strategy's yearly results are
    /// finite numbers, and the base's roughness never falls.
    #[test]
    fn any_accepted_coefficients_give_finite_results(
        exponent in 1.0f64..10.0,
        beta in 0.0f64..20.0,
        max_vc in 0.1f64..10.0,
        two_lane in 100.0f64..10_000.0,
        drop in 0.0f64..1.0,
        min_factor in 0.05f64..1.0,
        zone in 1.0f64..200.0,
        p0 in 1.0f64..5.0,
        loss_share in 0.0f64..1.0,
        zr in -5.0f64..5.0,
        s0 in 0.0f64..1.0,
        ageing in 0.0f64..0.1,
        rise in 0.0f64..50.0,
        sn_exp in 0.0f64..6.0,
        sn in 0.01f64..15.0,
        mr in 5.0f64..1000.0,
    ) {
        use crate::input::models::{Aashto93Params, CalibratedParams, FamilyModel};
        let mut run = demo();
        let m = &mut run.scenario.models;
        m.traffic.load_exponent = exponent;
        m.capacity.bpr_beta = beta;
        m.capacity.max_vc = max_vc;
        m.capacity.two_lane_pc_h = two_lane;
        m.speed.drop_per_iri = drop;
        m.speed.min_factor = min_factor;
        m.speed.work_zone_kmh = zone;
        // The reader's rule: a loss p0 − terminal_psr from 0.5 to 2.7, terminal_psr ≥ 0.5.
        let hi = (p0 - 0.5).min(2.7);
        prop_assume!(hi >= 0.5);
        let loss = 0.5 + (hi - 0.5) * loss_share;
        let terminal_psr = p0 - loss;
        for f in &mut m.condition.families {
            f.model = match f.model {
                FamilyModel::Aashto93(_) => FamilyModel::Aashto93(Aashto93Params {
                    p0, terminal_psr, zr, s0, ageing, ..Aashto93Params::default()
                }),
                FamilyModel::Calibrated(_) => FamilyModel::Calibrated(CalibratedParams {
                    rise_per_mesa: rise,
                    sn_exponent: sn_exp,
                    ageing,
                    ..CalibratedParams::default()
                }),
            };
        }
        let e = Enumerator::for_run(&run);
        for id in ["CP-04", "ML-03", "VA-02"] {
            let mut sec = section(&run, id);
            sec.structural_number = sn;
            sec.subgrade_mr_mpa = Some(mr);
            let sim = SectionSim::new(&run, &sec);
            let mut t = Trace::default();
            for (k, st) in e.strategies(&sec).iter().enumerate().step_by(7) {
                sim.run(st, &mut t);
                let all = t.capital.iter().chain(&t.routine).chain(&t.operating).chain(&t.time)
                    .chain(&t.crashes).chain(&t.delay).chain(&t.iri).chain(&t.sn);
                for v in all {
                    prop_assert!(v.is_finite(), "{id} {}: {v}", st.name);
                }
                prop_assert!(t.residual.is_finite());
                if k == 0 {
                    prop_assert!(t.iri.windows(2).all(|w| w[1] >= w[0]), "{:?}", t.iri);
                }
            }
        }
    }
}

/// A family's model with coefficients drawn over the whole range the scenario reader accepts.
fn any_family() -> impl proptest::strategy::Strategy<Value = crate::input::models::FamilyModel> {
    use crate::input::models::{Aashto93Params, CalibratedParams, FamilyModel};
    use proptest::strategy::Strategy as _;
    prop_oneof![
        (
            1.0f64..5.0,
            0.0f64..1.0,
            -5.0f64..5.0,
            0.0f64..1.0,
            0.0f64..0.1,
            0.0f64..2000.0,
            0.0f64..10.0
        )
            .prop_filter("a loss the reader accepts", |t| t.0 - 0.5 >= 0.5)
            .prop_map(
                |(p0, share, zr, s0, ageing, structural_rise, load_factor)| {
                    let hi = (p0 - 0.5).min(2.7);
                    FamilyModel::Aashto93(Aashto93Params {
                        p0,
                        terminal_psr: p0 - (0.5 + (hi - 0.5) * share),
                        zr,
                        s0,
                        ageing,
                        structural_rise,
                        load_factor,
                    })
                }
            ),
        (
            0.0f64..1.0,
            0.0f64..0.1,
            0.0f64..50.0,
            0.5f64..15.0,
            0.0f64..6.0
        )
            .prop_map(
                |(rise_per_year, ageing, rise_per_mesa, sn_ref, sn_exponent)| {
                    FamilyModel::Calibrated(CalibratedParams {
                        rise_per_year,
                        ageing,
                        rise_per_mesa,
                        sn_ref,
                        sn_exponent,
                    })
                }
            ),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    /// Over any section and coefficients the readers accept, the base case stays physical: no
    /// year's rise passes 1.0 m/km (common practice: more is a structural failure, not a
    /// trend), roughness never passes its maximum and never falls.
    #[test]
    fn the_base_case_never_jumps_nor_passes_the_maximum(
        family in any_family(),
        iri in 0.01f64..25.0,
        sn in 0.01f64..15.0,
        aadt in 0.0f64..500_000.0,
        heavy in 0.0f64..1.0,
        growth in -0.5f64..0.5,
        mr in 5.0f64..1000.0,
        lanes in 1u8..=12,
        age in proptest::option::of(0i32..127),
        max_rise in 0.05f64..1.0,
        iri_max in 2.0f64..30.0,
    ) {
        let mut run = demo();
        let c = &mut run.scenario.models.condition;
        c.max_rise = max_rise;
        c.iri_max = iri_max;
        c.iri_floor = c.iri_floor.min(iri_max * 0.5);
        for f in &mut c.families {
            f.model = family;
        }
        let mut sec = section(&run, "OR-02");
        sec.iri = iri;
        sec.structural_number = sn;
        sec.aadt = aadt;
        sec.heavy_share = heavy;
        sec.growth_rate = growth;
        sec.subgrade_mr_mpa = Some(mr);
        sec.lanes = lanes;
        sec.last_works_year = age.map(|a| crate::model::Year(run.scenario.base_year.0 - a));
        let t = trace(&run, &sec, &Strategy::base());
        for w in t.iri.windows(2) {
            prop_assert!(w[1] >= w[0], "{:?}", t.iri);
            prop_assert!(w[1] - w[0] <= 1.0 && w[1] - w[0] <= max_rise + 1e-12, "{:?}", t.iri);
        }
        prop_assert!(t.iri.iter().all(|x| x.is_finite() && *x <= iri_max + 1e-12));
        prop_assert!(t.routine.iter().all(|x| x.is_finite() && *x >= 0.0));
    }

    /// The yearly rise as a function of structural number and traffic, at any state and any
    /// coefficients the reader accepts: more heavy traffic never slows it, a larger SN never
    /// speeds it up, and it is continuous — 1 % more ESALs changes it by at most 1 %, 1 % more SN
    /// by at most 10 % (the AASHTO equation's own sensitivity: 9.36·SN/(SN+1) % for 1 % of SN).
    #[test]
    fn the_yearly_rise_is_monotone_and_continuous(
        family in any_family(),
        iri in 0.3f64..16.0,
        sn in 0.05f64..15.0,
        esals in 0.0f64..5e6,
        age in 0.0f64..80.0,
        carried in 0.0f64..5e7,
        mr in 5.0f64..1000.0,
        slow in 0.0f64..0.95,
    ) {
        use crate::input::models::ConditionParams;
        use crate::simulate::condition::{Placement, SectionModel};
        let m = SectionModel::new(&family, mr, &ConditionParams::default());
        let at = Placement { age, esals: carried, as_built: 0.0, ageing: 0.0, load: 0.0, other: iri };
        let rise = |sn: f64, e: f64| m.rise(&m.start(iri, sn, &at), e, slow);
        let r = rise(sn, esals);
        prop_assert!(r.is_finite() && r >= 0.0);
        let more_traffic = rise(sn, esals * 1.01 + 1.0);
        let stronger = rise(sn * 1.01, esals);
        prop_assert!(more_traffic >= r * (1.0 - 1e-12), "{r} {more_traffic}");
        prop_assert!(stronger <= r * (1.0 + 1e-12), "{r} {stronger}");
        if r > 1e-9 {
            prop_assert!(rise(sn, esals * 1.01) <= r * 1.01 * (1.0 + 1e-9), "{r}");
            prop_assert!(stronger >= r * 0.90, "{r} {stronger}");
        }
    }
}

/// A run into a trace that holds another strategy's run replays only the years after their works
/// part; it must give the same trace, bit for bit, as a run from the base year. Every ordered
/// pair of a spread of the demo's and a synthetic network's strategies (timed works, triggers,
/// widening, the base), including a strategy after itself.
#[test]
fn a_resumed_run_is_the_run_from_the_base_year() {
    let run = demo();
    let text = crate::demo::synth::network_csv(40, 9);
    let mut d = crate::diag::Diagnostics::new();
    let synth = crate::input::network::parse("synth.csv", &text, &mut d).unwrap();
    let e = Enumerator::for_run(&run);
    let mut pairs = 0;
    let mut resumed = 0;
    for sec in run
        .network
        .sections
        .iter()
        .chain(&synth.sections)
        .step_by(3)
    {
        let sim = SectionSim::new(&run, sec);
        let all = e.strategies(sec);
        let pick: Vec<&Strategy> = all.iter().step_by(5).chain(all.last()).collect();
        let fresh: Vec<Trace> = pick.iter().map(|st| trace(&run, sec, st)).collect();
        for a in &pick {
            for (b, want) in pick.iter().zip(&fresh) {
                let mut t = Trace::default();
                sim.run(a, &mut t);
                let from = sim.replay_from(b, &t);
                sim.run(b, &mut t);
                assert_eq!(&t, want, "{}: {} after {}", sec.id, b.name, a.name);
                assert_eq!(t.works, want.works);
                pairs += 1;
                resumed += usize::from(from > 0);
            }
        }
    }
    // Most pairs share a first year or more: the check covers resumed runs, not only fresh ones.
    assert!(pairs > 2_000 && resumed * 2 > pairs, "{resumed} of {pairs}");
}

/// Strategies played four at a time ([`SectionSim::run_each`], [`SectionSim::run_each_of`])
/// give each strategy the trace a run of it alone from the base year gives, bit for bit: every
/// strategy of a spread of the demo's and a synthetic network's sections in order, and
/// scattered orders whose lanes start in different years (traces holding other strategies'
/// runs, a strategy beside itself, a last group with idle lanes).
#[test]
fn strategies_played_side_by_side_are_played_alone() {
    let run = demo();
    let text = crate::demo::synth::network_csv(40, 11);
    let mut d = crate::diag::Diagnostics::new();
    let synth = crate::input::network::parse("synth.csv", &text, &mut d).unwrap();
    let e = Enumerator::for_run(&run);
    let bits = |t: &Trace| -> Vec<u64> {
        [
            &t.capital,
            &t.routine,
            &t.operating,
            &t.time,
            &t.crashes,
            &t.delay,
            &t.iri,
            &t.sn,
        ]
        .iter()
        .flat_map(|v| v.iter().map(|x| x.to_bits()))
        .chain([t.residual.to_bits()])
        .collect()
    };
    let mut checked = 0;
    for sec in run
        .network
        .sections
        .iter()
        .chain(&synth.sections)
        .step_by(2)
    {
        let sim = SectionSim::new(&run, sec);
        let all = e.strategies(sec);
        let fresh: Vec<Trace> = all.iter().map(|st| trace(&run, sec, st)).collect();
        let mut traces: [Trace; crate::simulate::SIDE_BY_SIDE] = Default::default();
        let mut seen = 0;
        sim.run_each(&all, &mut traces, |i, t| {
            assert_eq!(i, seen, "{}: strategies in order", sec.id);
            assert_eq!(bits(t), bits(&fresh[i]), "{}: {}", sec.id, all[i].name);
            assert_eq!(t.works, fresh[i].works);
            seen += 1;
        });
        assert_eq!(seen, all.len());
        // Scattered orders and a strategy beside itself: the traces hold other strategies'
        // runs, so the lanes start in different years.
        for k in (0..all.len()).step_by(7) {
            let which = [
                k,
                (k * 5 + 3) % all.len(),
                k,
                all.len() - 1 - k % all.len(),
                k / 2,
            ];
            let mut got = 0;
            sim.run_each_of(&all, which, &mut traces, |i, t| {
                assert_eq!(i, which[got]);
                assert_eq!(bits(t), bits(&fresh[i]), "{}: {}", sec.id, all[i].name);
                got += 1;
            });
            assert_eq!(got, which.len());
            checked += 1;
        }
    }
    assert!(checked > 100, "{checked}");
}
