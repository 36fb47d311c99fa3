//! `summary.json` of `plan --out`: the certificate, the run's facts and the scenario's key
//! assumptions, as one typed value written and read by serde.
//!
//! Keys are written in alphabetical order at every level (the order of the struct fields
//! below). A reader refuses a summary that lacks a number the report draws
//! ([`Summary::parse`], naming every missing key at once); other keys missing from an older
//! file read as empty.

use crate::diag::{Diagnostics, Place};
use crate::error::{Error, Result};
use serde::{Deserialize, Serialize};

/// The whole of `summary.json`.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Summary {
    pub assumptions: Assumptions,
    pub bcr_capital: Option<f64>,
    /// The lines the plan uses to within `binding_within` of their limit, each with its price
    /// in the bound.
    pub binding: Vec<Binding>,
    /// The share of a line's limit within which a line is binding.
    pub binding_within: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub bound: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub budget_scale: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub candidate_seconds: f64,
    pub candidates: u64,
    pub caution: String,
    pub contested_sections: u64,
    #[serde(deserialize_with = "nan_if_null")]
    pub gap: f64,
    pub headline_ratio: String,
    pub method: String,
    pub money: String,
    pub npv: Cases,
    pub npv_per_capital: Option<f64>,
    #[serde(deserialize_with = "nan_if_null")]
    pub objective: f64,
    pub objective_kind: String,
    pub price_updates: u64,
    pub pv_agency_cost: Cases,
    pub pv_capital: PlanOnly,
    #[serde(deserialize_with = "nan_if_null")]
    pub requested_gap: f64,
    pub run_id: String,
    #[serde(deserialize_with = "nan_if_null")]
    pub seconds: f64,
    pub sections: u64,
    #[serde(deserialize_with = "nan_if_null")]
    pub selection_seconds: f64,
    pub status: String,
    pub strategies_enumerated: u64,
    pub time_limit_reached: bool,
    pub unverified_coefficients: Vec<Unverified>,
    /// `every` or `picked`: which widening years `widening_plan.csv` lists.
    pub widening_years: String,
}

/// A line whose budget price is above zero.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Binding {
    pub line: String,
    #[serde(deserialize_with = "nan_if_null")]
    pub price: f64,
}

/// An amount for the plan, the base and every section at its best with no limits.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Cases {
    #[serde(deserialize_with = "nan_if_null")]
    pub base: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub plan: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub unconstrained: f64,
}

/// An amount for the plan alone.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct PlanOnly {
    #[serde(deserialize_with = "nan_if_null")]
    pub plan: f64,
}

/// A model coefficient still at a calibration default or a value from memory.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Unverified {
    pub key: String,
    pub standing: String,
    pub value: String,
}

/// The scenario's key assumptions.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Assumptions {
    pub analysis_years: u32,
    pub base_year: crate::model::Year,
    pub condition_classes_iri: Classes,
    pub default_family: String,
    #[serde(deserialize_with = "nan_if_null")]
    pub discount_rate: f64,
    pub discounting: String,
    pub families: Vec<Family>,
    #[serde(deserialize_with = "nan_if_null")]
    pub length_km: f64,
    pub money: String,
    pub sections: u64,
    pub templates: u64,
    pub title: String,
    pub treatments: u64,
    pub unit_values: UnitValues,
}

/// The roughness edges of the condition classes (m/km).
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Classes {
    #[serde(deserialize_with = "nan_if_null")]
    pub good_below: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub poor_above: f64,
}

/// A pavement family and its model's name.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Family {
    pub model: String,
    pub name: String,
}

/// Road-user unit values.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct UnitValues {
    #[serde(deserialize_with = "nan_if_null")]
    pub crash: f64,
    pub operating_per_vehicle_km: PerClass,
    pub time_per_vehicle_hour: PerClass,
}

/// One value per vehicle class.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct PerClass {
    #[serde(deserialize_with = "nan_if_null")]
    pub bus: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub car: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub heavy_truck: f64,
    #[serde(deserialize_with = "nan_if_null")]
    pub light_truck: f64,
}

impl PerClass {
    /// The values with their classes' keys, in the order vehicle classes are listed.
    pub fn by_class(&self) -> [(&'static str, f64); 4] {
        [
            ("car", self.car),
            ("bus", self.bus),
            ("light_truck", self.light_truck),
            ("heavy_truck", self.heavy_truck),
        ]
    }
}

/// A number that may be written as `null` (JSON has no NaN): NaN when it is.
fn nan_if_null<'de, D: serde::Deserializer<'de>>(d: D) -> std::result::Result<f64, D::Error> {
    Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::NAN))
}

/// The numbers of `summary.json` a report draws: a summary without one is not a plan's.
pub const REQUIRED_NUMBERS: &[&[&str]] = &[
    &["sections"],
    &["npv", "plan"],
    &["npv", "unconstrained"],
    &["npv", "base"],
    &["pv_agency_cost", "plan"],
    &["pv_agency_cost", "unconstrained"],
    &["pv_agency_cost", "base"],
    &["pv_capital", "plan"],
    &["assumptions", "discount_rate"],
    &["price_updates"],
];

impl Summary {
    /// The file's text: pretty JSON, keys in alphabetical order, a line break at the end.
    pub fn text(&self) -> String {
        let mut s = serde_json::to_string_pretty(self).unwrap_or_default();
        s.push('\n');
        s
    }

    /// A summary from its text (`label` names it in messages): every number of
    /// [`REQUIRED_NUMBERS`] must be there, and is named when it is not.
    pub fn parse(label: &str, text: &str) -> Result<Summary> {
        let v: serde_json::Value = serde_json::from_str(text).map_err(|e| {
            let mut d = Diagnostics::new();
            d.error(
                Place::line(label.to_owned(), e.line()),
                format!("unreadable JSON ({e})"),
                "summary.json as `pavestrat plan` writes it",
            );
            Error::Input(d)
        })?;
        let mut d = Diagnostics::new();
        for path in REQUIRED_NUMBERS {
            let mut x = &v;
            for k in *path {
                x = &x[*k];
            }
            if x.as_f64().is_none() {
                d.error(
                    Place::file(label.to_owned()).with_field(path.join(".")),
                    format!("no number at `{}`", path.join(".")),
                    "summary.json as `pavestrat plan` writes it",
                );
            }
        }
        if d.has_errors() {
            return Err(Error::Input(d));
        }
        serde_json::from_value(v).map_err(|e| {
            let mut d = Diagnostics::new();
            d.error(
                Place::file(label.to_owned()),
                format!("a value of the wrong kind ({e})"),
                "summary.json as `pavestrat plan` writes it",
            );
            Error::Input(d)
        })
    }
}
