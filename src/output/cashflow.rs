//! What `cashflow` writes and prints: the table, `cashflow.csv`, `incremental.csv` and
//! `cashflow.json` of an [`Appraisal`] (columns in
//! [`crate::schema::others::cashflow`]).

use crate::economics::alternatives::Appraisal;
use crate::economics::budget::Portfolio;
use crate::economics::{Indicators, Irr};
use crate::input::cashflow::SINGLE;
use crate::model::money::grouped;
use crate::output::format::{csv_field, irr_text, num, opt, pct, rates};
use crate::schema::others::cashflow;
use serde_json::{json, Value};

pub fn table(a: &Appraisal) -> String {
    let d = &a.discounting;
    let mut s = format!(
        "Cash-flow appraisal of {}\nrate {:.2} % real, base year {}, {} discounting\n\n",
        a.file,
        d.rate() * 100.0,
        d.base_year(),
        d.timing()
    );
    if a.alternatives.len() == 1 && a.alternatives[0].0 == SINGLE {
        let i = &a.alternatives[0].1;
        let rows = [
            ("PV of benefits", grouped(i.pv_benefits, 2)),
            ("PV of costs", grouped(i.pv_costs, 2)),
            ("NPV", grouped(i.npv, 2)),
            (
                "BCR",
                i.bcr.map_or("n/a (no costs)".into(), |b| format!("{b:.4}")),
            ),
            ("IRR", irr_text(&i.irr)),
            ("MIRR", pct(i.mirr)),
            ("FYRR", pct(i.fyrr)),
        ];
        for (k, v) in rows {
            s.push_str(&format!("  {k:<16}{v:>20}\n"));
        }
        if let Irr::Multiple(_) = i.irr {
            s.push_str("\n  The net flow changes sign more than once: several rates make NPV zero, so the IRR\n  is ambiguous. Judge the stream by its NPV.\n");
        }
    } else {
        let w = a
            .alternatives
            .iter()
            .map(|x| x.0.chars().count())
            .max()
            .unwrap_or(10)
            .max(11);
        s.push_str(&format!(
            "  {:<w$} {:>16} {:>16} {:>16} {:>8} {:>10} {:>9} {:>9}\n",
            "alternative", "PV benefits", "PV costs", "NPV", "BCR", "IRR", "MIRR", "FYRR"
        ));
        for (n, i) in &a.alternatives {
            s.push_str(&format!(
                "  {:<w$} {:>16} {:>16} {:>16} {:>8} {:>10} {:>9} {:>9}\n",
                n,
                grouped(i.pv_benefits, 0),
                grouped(i.pv_costs, 0),
                grouped(i.npv, 0),
                i.bcr.map_or("n/a".into(), |b| format!("{b:.3}")),
                match &i.irr {
                    Irr::Multiple(_) => "ambiguous".to_owned(),
                    other => irr_text(other),
                },
                pct(i.mirr),
                pct(i.fyrr)
            ));
        }
        if let Some(inc) = &a.incremental {
            s.push_str("\nIncremental analysis (ascending PV of cost; each challenger against the last one accepted):\n");
            let steps: Vec<(String, &crate::economics::incremental::Step)> = inc
                .steps
                .iter()
                .map(|st| {
                    (
                        format!(
                            "{} vs {}",
                            st.challenger,
                            st.defender.as_deref().unwrap_or("doing nothing")
                        ),
                        st,
                    )
                })
                .collect();
            let w = steps
                .iter()
                .map(|x| x.0.chars().count())
                .max()
                .unwrap_or(10)
                .max(10);
            s.push_str(&format!(
                "  {:<w$} {:>16} {:>16} {:>8} {:>18}  decision\n",
                "comparison", "extra PV cost", "extra NPV", "BCR", "IRR"
            ));
            for (name, st) in steps {
                s.push_str(&format!(
                    "  {:<w$} {:>16} {:>16} {:>8} {:>18}  {}\n",
                    name,
                    grouped(st.d_pv_costs, 0),
                    grouped(st.d_npv, 0),
                    st.d_bcr.map_or("n/a".into(), |b| format!("{b:.3}")),
                    irr_text(&st.d_irr),
                    if st.accepted { "accepted" } else { "rejected" }
                ));
            }
            match &inc.winner {
                Some(w) => {
                    let npv = a
                        .alternatives
                        .iter()
                        .find(|x| &x.0 == w)
                        .map_or(f64::NAN, |x| x.1.npv);
                    s.push_str(&format!("\nPreferred: {w} (NPV {})\n", grouped(npv, 0)));
                }
                None => {
                    s.push_str("\nPreferred: doing nothing (no alternative has a positive NPV)\n")
                }
            }
        }
    }
    if let Some(b) = &a.budget {
        let names = |p: &Portfolio| {
            if p.chosen.is_empty() {
                "nothing".to_owned()
            } else {
                p.chosen
                    .iter()
                    .map(|&i| b.projects[i].name.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            }
        };
        s.push_str(&format!(
            "\nIndependent projects within a budget of {} (counted against PV of costs):\n",
            grouped(b.budget, 2)
        ));
        for (title, p) in [
            ("best set", &b.best),
            ("largest NPV first", &b.by_npv),
            ("largest NPV per cost first", &b.by_ratio),
        ] {
            s.push_str(&format!(
                "  {title:<28} NPV {:>16}  cost {:>16}  {}\n",
                grouped(p.npv, 2),
                grouped(p.cost, 2),
                names(p)
            ));
        }
    }
    s.push('\n');
    s.push_str(crate::CAUTION);
    s.push('\n');
    s
}

pub fn alternatives_csv(a: &Appraisal) -> String {
    let mut s = cashflow::CASHFLOW.head();
    for (n, i) in &a.alternatives {
        s.push_str(&format!(
            "{},{},{},{},{},{},{},{},{}\n",
            csv_field(n),
            num(i.npv),
            num(i.pv_benefits),
            num(i.pv_costs),
            opt(i.bcr),
            rates(&i.irr),
            i.irr.status(),
            opt(i.mirr),
            opt(i.fyrr)
        ));
    }
    s
}

pub fn incremental_csv(a: &Appraisal) -> String {
    let mut s = cashflow::INCREMENTAL.head();
    if let Some(inc) = &a.incremental {
        for (k, st) in inc.steps.iter().enumerate() {
            s.push_str(&format!(
                "{},{},{},{},{},{},{},{},{},{}\n",
                k + 1,
                csv_field(&st.challenger),
                csv_field(st.defender.as_deref().unwrap_or("")),
                num(st.d_pv_benefits),
                num(st.d_pv_costs),
                num(st.d_npv),
                opt(st.d_bcr),
                rates(&st.d_irr),
                st.d_irr.status(),
                st.accepted
            ));
        }
    }
    s
}

fn jnum(x: f64) -> Value {
    serde_json::Number::from_f64(x).map_or(Value::Null, Value::Number)
}

fn jopt(x: Option<f64>) -> Value {
    x.map_or(Value::Null, jnum)
}

fn indicators_json(i: &Indicators) -> serde_json::Map<String, Value> {
    let mut m = serde_json::Map::new();
    m.insert("npv".into(), jnum(i.npv));
    m.insert("pv_benefits".into(), jnum(i.pv_benefits));
    m.insert("pv_costs".into(), jnum(i.pv_costs));
    m.insert("bcr".into(), jopt(i.bcr));
    m.insert(
        "irr".into(),
        Value::Array(i.irr.rates().into_iter().map(jnum).collect()),
    );
    m.insert("irr_status".into(), json!(i.irr.status()));
    m.insert("mirr".into(), jopt(i.mirr));
    m.insert("fyrr".into(), jopt(i.fyrr));
    m
}

pub fn to_json(a: &Appraisal) -> Value {
    let d = &a.discounting;
    let mut top = serde_json::Map::new();
    top.insert("rate".into(), jnum(d.rate()));
    top.insert("base_year".into(), json!(d.base_year()));
    top.insert("discounting".into(), json!(d.timing().name()));
    if a.alternatives.len() == 1 && a.alternatives[0].0 == SINGLE {
        top.extend(indicators_json(&a.alternatives[0].1));
    } else {
        let alts: Vec<Value> = a
            .alternatives
            .iter()
            .map(|(n, i)| {
                let mut m = serde_json::Map::new();
                m.insert("name".into(), json!(n));
                m.extend(indicators_json(i));
                Value::Object(m)
            })
            .collect();
        top.insert("alternatives".into(), Value::Array(alts));
    }
    if let Some(inc) = &a.incremental {
        let steps: Vec<Value> = inc
            .steps
            .iter()
            .map(|st| {
                json!({
                    "challenger": st.challenger,
                    "defender": st.defender,
                    "d_pv_benefits": jnum(st.d_pv_benefits),
                    "d_pv_costs": jnum(st.d_pv_costs),
                    "d_npv": jnum(st.d_npv),
                    "d_bcr": jopt(st.d_bcr),
                    "d_irr": Value::Array(st.d_irr.rates().into_iter().map(jnum).collect()),
                    "d_irr_status": st.d_irr.status(),
                    "accepted": st.accepted,
                })
            })
            .collect();
        top.insert(
            "incremental".into(),
            json!({ "steps": steps, "winner": inc.winner }),
        );
    }
    if let Some(b) = &a.budget {
        let set = |p: &Portfolio| {
            json!({
                "projects": p.chosen.iter().map(|&i| b.projects[i].name.clone()).collect::<Vec<_>>(),
                "npv": jnum(p.npv),
                "cost": jnum(p.cost),
            })
        };
        top.insert(
            "budget".into(),
            json!({
                "limit": jnum(b.budget),
                "best": set(&b.best),
                "largest_npv_first": set(&b.by_npv),
                "largest_npv_per_cost_first": set(&b.by_ratio),
            }),
        );
    }
    top.insert("caution".into(), json!(crate::CAUTION));
    Value::Object(top)
}
