//! The treatment catalogue (TOML): every work action a strategy can use, with its cost and its
//! effect on the pavement, plus the routine maintenance every section receives.
//!
//! ```toml
//! [routine]                       # every year, on every section, in every strategy
//! per_lane_km = "1400"            # money per lane-km a year on a smooth road
//! per_lane_km_per_iri = "260"     # extra money per lane-km a year for each m/km of IRI
//! holding_from_iri = 5.0          # holding repairs (patching that keeps the road passable)
//! holding_per_lane_km = "2400"    # start above this IRI, reach this yearly cost per lane-km
//! holding_slows = 0.6             # 1 m/km above it, and then take this share off the yearly rise
//!
//! [treatment.overlay]
//! label = "50 mm asphalt overlay"
//! action = "overlay"              # seal | overlay | mill-inlay | reconstruct | widen
//! category = "capital"            # budget category: capital (default) | routine
//! cost = "68000"                  # decimal text
//! cost_per = "lane-km"            # km | lane-km | m2
//! iri_after = 1.4                 # IRI on a smooth road after the works (m/km) — or iri_reduction = 1.0
//! carry_over = 0.3                # optional: share of the roughness above iri_after the works leave
//! thickness_mm = 50               # with layer_coefficient: added SN = thickness (in) × a
//! layer_coefficient = 0.44        # AASHTO 1993 layer coefficient, per inch
//! life_years = 12
//! work_zone_days = 10
//!
//! [treatment.widen]
//! action = "widen"
//! lanes_added = 2
//! carriageway_after = "divided"
//! crash_factor = 0.55             # crash rate multiplier after the works
//! sn_after = 5.0                  # or thickness_mm + layer_coefficient
//! ...
//! ```

use super::tomldoc::{is_identifier, Doc, Table};
use crate::diag::Diagnostics;
use crate::model::catalogue::Category;
use crate::model::catalogue::{
    Action, Catalogue, Component, CostBasis, IriEffect, Routine, StructuralEffect, Treatment,
};
use crate::model::network::Carriageway;

/// Names a treatment may not take: they mean something else in every output.
pub const RESERVED: [&str; 2] = ["base", "routine"];

/// Read the catalogue from its text. Also returns the names of all treatments the file
/// declares, valid or not, so that templates can be checked against them in the same pass.
pub fn parse(file: &str, text: &str, d: &mut Diagnostics) -> (Option<Catalogue>, Vec<String>) {
    let mut names = Vec::new();
    let cat = parse_into(file, text, d, &mut names);
    (cat, names)
}

fn parse_into(
    file: &str,
    text: &str,
    d: &mut Diagnostics,
    names: &mut Vec<String>,
) -> Option<Catalogue> {
    let before = d.error_count();
    let doc = Doc::parse(file, text, d);
    if d.error_count() > before {
        return None;
    }
    let mut top = doc.table();
    let routine = top
        .require(
            "routine",
            d,
            "a [routine] table with per_lane_km, per_lane_km_per_iri and the holding repairs",
        )
        .and_then(|v| v.table(d))
        .and_then(|t| read_routine(t, d));
    let mut treatments = Vec::new();
    if let Some(v) = top.require("treatment", d, "[treatment.NAME] tables, one per treatment") {
        {
            if let Some(mut t) = v.table(d) {
                let entries = t.entries();
                if entries.is_empty() {
                    d.error(
                        t.place(),
                        "no treatments",
                        "at least one [treatment.NAME] table",
                    );
                }
                for (id, val) in entries {
                    names.push(id.clone());
                    if !is_identifier(&id) || RESERVED.contains(&id.as_str()) {
                        d.error(
                            val.place(),
                            format!("the treatment name `{id}`"),
                            "a name of letters, digits, `_` and `-`, other than `base` and `routine`",
                        );
                        continue;
                    }
                    if let Some(tt) = val.table(d) {
                        if let Some(tr) = read_treatment(&id, tt, d) {
                            treatments.push(tr);
                        }
                    }
                }
                t.finish(d);
            }
        }
    }
    top.finish(d);
    let routine = routine?;
    if d.error_count() > before {
        return None;
    }
    Some(Catalogue {
        file: file.to_owned(),
        routine,
        treatments,
    })
}

fn read_routine(mut t: Table<'_, '_>, d: &mut Diagnostics) -> Option<Routine> {
    let a = t
        .require(
            "per_lane_km",
            d,
            "the yearly cost per lane-km on a smooth road",
        )
        .and_then(|v| v.money_non_negative(d));
    let b = t
        .require(
            "per_lane_km_per_iri",
            d,
            "the extra yearly cost per lane-km for each m/km of IRI",
        )
        .and_then(|v| v.money_non_negative(d));
    let from = t
        .require(
            "holding_from_iri",
            d,
            "the IRI (m/km) above which holding repairs keep a road passable",
        )
        .and_then(|v| v.number_in(d, 1.0, 25.0, "an IRI in m/km from 1 to 25"));
    let cost = t
        .require(
            "holding_per_lane_km",
            d,
            "the yearly cost per lane-km of holding repairs",
        )
        .and_then(|v| v.money_non_negative(d));
    let slows = t
        .require(
            "holding_slows",
            d,
            "the share of the yearly rise in roughness holding repairs take off",
        )
        .and_then(|v| v.fraction_in(d, 0.0, 0.95, "a share from 0 to 0.95"));
    t.finish(d);
    Some(Routine {
        per_lane_km: a?,
        per_lane_km_per_iri: b?,
        holding_from_iri: from?,
        holding_per_lane_km: cost?,
        holding_slows: slows?,
    })
}

fn read_treatment(id: &str, mut t: Table<'_, '_>, d: &mut Diagnostics) -> Option<Treatment> {
    let place = t.place();
    let label = match t.get("label") {
        Some(v) => v.string(d).map(str::to_owned),
        None => Some(id.to_owned()),
    };
    let action = t
        .require(
            "action",
            d,
            "the kind of work: seal, overlay, mill-inlay, reconstruct or widen",
        )
        .and_then(|v| v.word(d, &Action::NAMES).and_then(Action::parse));
    let category = match t.get("category") {
        Some(v) => v.word(d, &["capital", "routine"]).map(|s| {
            if s == "routine" {
                Category::Routine
            } else {
                Category::Capital
            }
        }),
        None => Some(Category::Capital),
    };
    let cost = t
        .require("cost", d, "the unit cost as decimal text, e.g. \"68000\"")
        .and_then(|v| v.money_non_negative(d));
    let cost_per = t
        .require("cost_per", d, "what the cost is per: km, lane-km or m2")
        .and_then(|v| {
            v.word(d, &["km", "lane-km", "m2"]).map(|s| match s {
                "km" => CostBasis::Km,
                "lane-km" => CostBasis::LaneKm,
                _ => CostBasis::SquareMetre,
            })
        });
    let iri_after = t.number_at(
        "iri_after",
        d,
        0.3,
        10.0,
        "an IRI after the works in m/km, from 0.3 to 10",
    );
    let iri_reduction = t.number_at(
        "iri_reduction",
        d,
        0.0,
        15.0,
        "a fall in IRI in m/km, from 0 to 15",
    );
    let thickness = t.number_at(
        "thickness_mm",
        d,
        1.0,
        1000.0,
        "a layer thickness in mm, from 1 to 1000",
    );
    let coefficient = t.number_at(
        "layer_coefficient",
        d,
        0.01,
        1.0,
        "an AASHTO layer coefficient per inch, from 0.01 to 1 (asphalt ≈ 0.44)",
    );
    let sn_after = t.number_at(
        "sn_after",
        d,
        0.5,
        15.0,
        "a structural number from 0.5 to 15",
    );
    let lanes_added = match t.get("lanes_added") {
        Some(v) => v
            .integer_in(d, 0, 6, "a whole number of lanes from 0 to 6")
            .map(|x| x as u8),
        None => Some(0),
    };
    let carriageway_after = match t.get("carriageway_after") {
        Some(v) => v
            .word(d, &["single", "divided"])
            .and_then(Carriageway::parse)
            .map(Some),
        None => Some(None),
    };
    let crash_factor = match t.get("crash_factor") {
        Some(v) => v.number_in(d, 0.0, 3.0, "a crash-rate multiplier from 0 to 3"),
        None => Some(1.0),
    };
    let life_years = t
        .require("life_years", d, "the expected life in years")
        .and_then(|v| v.integer_in(d, 1, 80, "a whole number of years from 1 to 80"))
        .map(|x| x as u32);
    let work_zone_days = match t.get("work_zone_days") {
        Some(v) => v
            .integer_in(d, 0, 730, "a whole number of days from 0 to 730")
            .map(|x| x as u32),
        None => Some(0),
    };
    let carry_place = t.get("carry_over").map(|v| v.place());
    let carry_over = match t.get("carry_over") {
        Some(v) => v
            .fraction_in(d, 0.0, 1.0, "a share from 0 to 1 of the roughness left")
            .map(Some),
        None => Some(None),
    };
    let components = match t.get("components") {
        Some(v) => read_components(&v, d),
        None => Some(Vec::new()),
    };
    t.finish(d);

    let iri = match (&iri_after, &iri_reduction) {
        (Some((_, Some(x))), None) => Some(IriEffect::ResetTo(*x)),
        (None, Some((_, Some(x)))) => Some(IriEffect::Reduce(*x)),
        (Some(_), Some((p, _))) => {
            d.error(p.clone(), "both iri_after and iri_reduction", "one of them");
            None
        }
        (None, None) => {
            d.error(
                place.clone(),
                format!("no effect on roughness for `{id}`"),
                "iri_after or iri_reduction",
            );
            None
        }
        _ => None, // the value itself was bad and is already reported
    };
    if let (Some(IriEffect::Reduce(_)), Some(p)) = (&iri, &carry_place) {
        d.error(
            p.clone(),
            "carry_over beside iri_reduction",
            "carry_over only with iri_after (a reduction leaves the rest of the roughness already)",
        );
        return None;
    }
    let structure = match (&thickness, &coefficient, &sn_after) {
        (None, None, None) => Some(StructuralEffect::None),
        (Some((_, Some(h))), Some((_, Some(a))), None) => Some(StructuralEffect::Layer {
            thickness_mm: *h,
            layer_coefficient: *a,
        }),
        (None, None, Some((_, Some(sn)))) => Some(StructuralEffect::SetTo(*sn)),
        (Some((p, _)), None, None) | (None, Some((p, _)), None) => {
            d.error(
                p.clone(),
                "only one of thickness_mm and layer_coefficient",
                "both, or neither",
            );
            None
        }
        (_, _, Some((p, _))) if thickness.is_some() || coefficient.is_some() => {
            d.error(
                p.clone(),
                "sn_after beside a layer",
                "either sn_after or thickness_mm with layer_coefficient",
            );
            None
        }
        _ => None,
    };
    let (action, lanes_added) = (action?, lanes_added?);
    let mut ok = true;
    if action == Action::Widen && lanes_added == 0 {
        d.error(
            place.clone(),
            format!("a widening `{id}` that adds no lanes"),
            "lanes_added of 1 or more",
        );
        ok = false;
    }
    if action != Action::Widen && (lanes_added > 0 || matches!(carriageway_after, Some(Some(_)))) {
        d.error(
            place.clone(),
            format!(
                "lanes_added or carriageway_after on the {} `{id}`",
                action.name()
            ),
            "lane changes only on action = \"widen\"",
        );
        ok = false;
    }
    if action == Action::Reconstruct
        && !matches!(structure, Some(StructuralEffect::SetTo(_)))
        && structure.is_some()
    {
        d.error(
            place.clone(),
            format!("a reconstruction `{id}` without sn_after"),
            "sn_after: the structural number of the new pavement",
        );
        ok = false;
    }
    if !ok {
        return None;
    }
    Some(Treatment {
        id: id.to_owned(),
        label: label?,
        action,
        category: category?,
        cost: cost?,
        cost_per: cost_per?,
        iri: iri?,
        structure: structure?,
        lanes_added,
        carriageway_after: carriageway_after?,
        crash_factor: crash_factor?,
        life_years: life_years?,
        work_zone_days: work_zone_days?,
        carry_over: carry_over?,
        components: components?,
        place,
    })
}

/// `components = [{ name = "earthworks", share = 0.6, life_years = 40 }, …]`: shares add up to 1.
fn read_components(
    v: &super::tomldoc::Value<'_, '_>,
    d: &mut Diagnostics,
) -> Option<Vec<Component>> {
    let out = v.tables(d, |t, d| {
        let name = t
            .require("name", d, "a name for the part, e.g. \"earthworks\"")
            .and_then(|v| v.identifier(d).map(str::to_owned));
        let share = t
            .require("share", d, "the part's share of the cost")
            .and_then(|v| v.fraction_in(d, 0.0, 1.0, "a share from 0 to 1"));
        let life = t
            .require("life_years", d, "the part's expected life in years")
            .and_then(|v| v.integer_in(d, 1, 120, "a whole number of years from 1 to 120"))
            .map(|x| x as u32);
        Some(Component {
            name: name?,
            share: share?,
            life_years: life?,
        })
    })?;
    let total: f64 = out.iter().map(|c| c.share).sum();
    if out.is_empty() || (total - 1.0).abs() > 1e-6 {
        d.error(
            v.place(),
            format!("parts whose shares add up to {total}"),
            "parts whose shares of the cost add up to 1",
        );
        return None;
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = r#"
[routine]
per_lane_km = "1400"
per_lane_km_per_iri = "260"
holding_from_iri = 5.0
holding_per_lane_km = "2400"
holding_slows = 0.6

[treatment.overlay]
action = "overlay"
cost = "68000"
cost_per = "lane-km"
iri_after = 2.2
thickness_mm = 50.8
layer_coefficient = 0.44
life_years = 12

[treatment.widen]
action = "widen"
cost = 1.2e6
cost_per = "km"
iri_after = 1.8
sn_after = 5.0
lanes_added = 2
carriageway_after = "divided"
crash_factor = 0.55
life_years = 20
work_zone_days = 120
"#;

    #[test]
    fn layer_equation_reference_pavement() {
        // AASHTO 1993 layer equation SN = a1·D1 + a2·D2·m2 + a3·D3·m3 (D in inches), shared
        // reference list: 4 in of asphalt (a1 0.44) + 10 in of base (a2 0.14) + 8 in of subbase
        // (a3 0.11), drainage m = 1 → SN 4.04 (formula confirmed, coefficients typical).
        let layer = |inches: f64, a: f64| StructuralEffect::Layer {
            thickness_mm: inches * 25.4,
            layer_coefficient: a,
        };
        let sn: f64 = [layer(4.0, 0.44), layer(10.0, 0.14), layer(8.0, 0.11)]
            .iter()
            .map(|l| l.added_sn().unwrap())
            .sum();
        assert!((sn - 4.04).abs() < 1e-12, "{sn}");
    }

    #[test]
    fn reads_a_good_catalogue() {
        let mut d = Diagnostics::new();
        let (c, names) = parse("t.toml", GOOD, &mut d);
        let c = c.expect("parses");
        assert_eq!(names, ["overlay", "widen"]);
        assert!(d.is_empty(), "{d}");
        let o = c.get("overlay").unwrap();
        // 50.8 mm = 2 in; 2 × 0.44 = 0.88 (AASHTO 1993 layer equation).
        assert!((o.structure.added_sn().unwrap() - 0.88).abs() < 1e-12);
        let w = c.get("widen").unwrap();
        assert_eq!(w.cost.to_string(), "1200000");
        assert_eq!(w.carriageway_after, Some(Carriageway::Divided));
        assert_eq!(w.structure, StructuralEffect::SetTo(5.0));
    }

    #[test]
    fn inconsistent_treatments_are_explained() {
        let bad = GOOD
            .replace("iri_after = 2.2\n", "iri_after = 2.2\niri_reduction = 1\n")
            .replace("layer_coefficient = 0.44\n", "")
            .replace("lanes_added = 2\n", "lanes_added = 0\n")
            .replace(
                "[treatment.widen]",
                "[treatment.routine]\naction = \"seal\"\n\n[treatment.widen]",
            );
        let mut d = Diagnostics::new();
        assert!(parse("t.toml", &bad, &mut d).0.is_none());
        let t = d.to_string();
        for want in [
            "both iri_after and iri_reduction",
            "only one of thickness_mm",
            "adds no lanes",
            "the treatment name `routine`",
        ] {
            assert!(t.contains(want), "missing {want} in\n{t}");
        }
        // A share of roughness carried over means nothing beside a reduction.
        let bad = GOOD.replace("iri_after = 2.2\n", "iri_reduction = 1\ncarry_over = 0.3\n");
        let mut d = Diagnostics::new();
        assert!(parse("t.toml", &bad, &mut d).0.is_none());
        let t = d.to_string();
        assert!(t.contains("carry_over beside iri_reduction"), "{t}");
        assert!(d.errors().iter().all(|e| e.place.line.is_some()), "{t}");
    }
}
