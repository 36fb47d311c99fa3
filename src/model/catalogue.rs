//! The treatment catalogue as the tool holds it: every work action with its cost and effect,
//! and the routine maintenance every section receives — read and checked by
//! [`crate::input::treatments`].

use crate::diag::Place;
use crate::model::money::Money;
use crate::model::network::Carriageway;

/// What kind of work a treatment is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Action {
    Seal,
    Overlay,
    MillInlay,
    Reconstruct,
    Widen,
}

impl Action {
    pub const NAMES: [&'static str; 5] = ["seal", "overlay", "mill-inlay", "reconstruct", "widen"];

    pub fn name(self) -> &'static str {
        Action::NAMES[self as usize]
    }

    /// One of [`Action::NAMES`], in any case.
    pub fn parse(s: &str) -> Option<Action> {
        [
            Action::Seal,
            Action::Overlay,
            Action::MillInlay,
            Action::Reconstruct,
            Action::Widen,
        ]
        .into_iter()
        .find(|a| a.name().eq_ignore_ascii_case(s))
    }
}

/// What a treatment's cost is counted per.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CostBasis {
    /// Per km of section.
    Km,
    /// Per km of each lane (lanes before the works).
    LaneKm,
    /// Per square metre of carriageway (length × lanes × lane width).
    SquareMetre,
}

impl CostBasis {
    pub fn name(self) -> &'static str {
        match self {
            CostBasis::Km => "km",
            CostBasis::LaneKm => "lane-km",
            CostBasis::SquareMetre => "m2",
        }
    }
}

/// How a treatment changes roughness.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum IriEffect {
    /// IRI becomes this value (m/km), or stays if already lower.
    ResetTo(f64),
    /// IRI falls by this much (m/km), not below a floor set by the condition model.
    Reduce(f64),
}

/// How a treatment changes the structural number.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum StructuralEffect {
    None,
    /// A new layer: SN rises by thickness (inches) × layer coefficient (AASHTO 1993 layer equation).
    Layer {
        thickness_mm: f64,
        layer_coefficient: f64,
    },
    /// The pavement is rebuilt to this structural number.
    SetTo(f64),
}

impl StructuralEffect {
    /// The structural number added by a layer, or `None` for other effects.
    pub fn added_sn(&self) -> Option<f64> {
        match *self {
            StructuralEffect::Layer {
                thickness_mm,
                layer_coefficient,
            } => Some(thickness_mm / 25.4 * layer_coefficient),
            _ => None,
        }
    }
}

/// One treatment of the catalogue.
#[derive(Debug, Clone, PartialEq)]
pub struct Treatment {
    pub id: String,
    pub label: String,
    pub action: Action,
    pub category: Category,
    pub cost: Money,
    pub cost_per: CostBasis,
    pub iri: IriEffect,
    pub structure: StructuralEffect,
    pub lanes_added: u8,
    pub carriageway_after: Option<Carriageway>,
    /// Crash-rate multiplier after the works (1 = no change).
    pub crash_factor: f64,
    pub life_years: u32,
    pub work_zone_days: u32,
    /// Share of the roughness above `iri_after` that the works leave, when the catalogue says;
    /// otherwise [`Treatment::carry`] works it out.
    pub carry_over: Option<f64>,
    /// Parts with their own lives and shares of the cost (a widening's earthworks and its
    /// pavement); empty: one part, the whole cost, `life_years`.
    pub components: Vec<Component>,
    pub place: Place,
}

/// A part of a treatment valued on its own at the end of the period.
#[derive(Debug, Clone, PartialEq)]
pub struct Component {
    pub name: String,
    /// Share of the treatment's cost (the shares add up to 1).
    pub share: f64,
    pub life_years: u32,
}

impl Treatment {
    /// Share of the roughness above the as-built value that the works leave: the catalogue's
    /// `carry_over`; none for a reconstruction; e^(−thickness/`carry_depth_mm`) for a new layer;
    /// otherwise 0.3 (a mill-and-inlay or a widening costed without a layer: calibration
    /// default). Common practice: roughness after works depends on roughness before, and
    /// thicker works remove more of it.
    pub fn carry(&self, carry_depth_mm: f64) -> f64 {
        if let Some(c) = self.carry_over {
            return c;
        }
        match (self.action, self.structure) {
            (Action::Reconstruct, _) => 0.0,
            (_, StructuralEffect::Layer { thickness_mm, .. }) => {
                (-thickness_mm / carry_depth_mm.max(1e-9)).exp()
            }
            _ => 0.3,
        }
    }

    /// The parts valued at the end of the period: (share of cost, life in years).
    pub fn parts(&self) -> Vec<(f64, u32)> {
        if self.components.is_empty() {
            vec![(1.0, self.life_years)]
        } else {
            self.components
                .iter()
                .map(|c| (c.share, c.life_years))
                .collect()
        }
    }
}

/// Routine maintenance, applied every year to every section.
#[derive(Debug, Clone, PartialEq)]
pub struct Routine {
    pub per_lane_km: Money,
    pub per_lane_km_per_iri: Money,
    /// Holding repairs: roughness (m/km) above which they start.
    pub holding_from_iri: f64,
    /// Their yearly cost per lane-km once in full (1 m/km above `holding_from_iri`).
    pub holding_per_lane_km: Money,
    /// The share of the yearly rise in roughness they take off once in full.
    pub holding_slows: f64,
}

/// The resolved catalogue.
#[derive(Debug, Clone, PartialEq)]
pub struct Catalogue {
    pub file: String,
    pub routine: Routine,
    pub treatments: Vec<Treatment>,
}

impl Catalogue {
    /// The treatment with this id.
    pub fn get(&self, id: &str) -> Option<&Treatment> {
        self.treatments.iter().find(|t| t.id == id)
    }
}

/// Which spending a budget line limits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Category {
    /// Treatments: seals, overlays, reconstruction, widening.
    Capital,
    /// Routine maintenance.
    Routine,
    /// Both.
    All,
}

impl Category {
    pub fn name(self) -> &'static str {
        match self {
            Category::Capital => "capital",
            Category::Routine => "routine",
            Category::All => "all",
        }
    }

    /// `capital`, `routine` or `all`, in any case.
    pub fn parse(s: &str) -> Option<Category> {
        [Category::Capital, Category::Routine, Category::All]
            .into_iter()
            .find(|c| c.name().eq_ignore_ascii_case(s))
    }
}
