//! Incremental analysis of mutually exclusive alternatives.
//!
//! Ranking alternatives by their own BCR or IRR can pick the wrong one: a dearer alternative with a
//! lower ratio may still add more net value. The rule of the trade (common practice) is to order
//! the alternatives by present value of cost and walk up the list, comparing each challenger with
//! the last alternative accepted (the defender, starting from doing nothing): the challenger is
//! accepted when its increment over the defender is worth its extra cost — incremental NPV > 0,
//! equivalently incremental BCR > 1 or incremental IRR above the discount rate for a conventional
//! increment. The last defender standing is the alternative of highest NPV.

use super::{appraise_with, bcr, irr, Discounting, Indicators, Irr, Stream};

/// One alternative's own indicators (each against doing nothing).
#[derive(Debug, Clone, PartialEq)]
pub struct Ranked {
    pub name: String,
    pub indicators: Indicators,
}

/// One comparison of a challenger with the defender.
#[derive(Debug, Clone, PartialEq)]
pub struct Step {
    pub challenger: String,
    /// `None` while the defender is doing nothing.
    pub defender: Option<String>,
    pub d_pv_benefits: f64,
    pub d_pv_costs: f64,
    pub d_npv: f64,
    /// Incremental BCR; `None` when the increment costs nothing more.
    pub d_bcr: Option<f64>,
    pub d_irr: Irr,
    pub accepted: bool,
}

/// The whole chain of comparisons and its outcome.
#[derive(Debug, Clone, PartialEq)]
pub struct Analysis {
    /// Alternatives in the order compared (ascending PV of cost).
    pub alternatives: Vec<Ranked>,
    pub steps: Vec<Step>,
    /// The preferred alternative; `None` means doing nothing is best.
    pub winner: Option<String>,
}

/// Relative size under which an incremental NPV counts as zero (the cheaper alternative is kept).
const TIE: f64 = 1e-9;

/// Compare mutually exclusive alternatives, each given as its stream against doing nothing.
///
/// Ties in PV of cost are ordered by name, so the chain is the same on every run.
pub fn analyse(alternatives: &[(String, Stream)], d: &Discounting) -> Analysis {
    analyse_with(alternatives, d, true, true)
}

/// [`analyse`], with each alternative's own IRR looked for only when `own_irr`, and each
/// incremental step's only when `step_irr`.
pub fn analyse_with(
    alternatives: &[(String, Stream)],
    d: &Discounting,
    own_irr: bool,
    step_irr: bool,
) -> Analysis {
    let mut ranked: Vec<(Ranked, &Stream)> = alternatives
        .iter()
        .map(|(n, s)| {
            (
                Ranked {
                    name: n.clone(),
                    indicators: appraise_with(s, d, own_irr),
                },
                s,
            )
        })
        .collect();
    ranked.sort_by(|a, b| {
        a.0.indicators
            .pv_costs
            .total_cmp(&b.0.indicators.pv_costs)
            .then_with(|| a.0.name.cmp(&b.0.name))
    });
    let scale = ranked
        .iter()
        .map(|r| r.0.indicators.npv.abs())
        .fold(1.0, f64::max);
    let mut steps = Vec::with_capacity(ranked.len());
    let mut defender: Option<usize> = None;
    for (i, (ch, ch_stream)) in ranked.iter().enumerate() {
        let (inc, db, dc) = match defender {
            None => (
                (*ch_stream).clone(),
                ch.indicators.pv_benefits,
                ch.indicators.pv_costs,
            ),
            Some(j) => {
                let (df, df_stream) = &ranked[j];
                (
                    ch_stream.minus(df_stream),
                    ch.indicators.pv_benefits - df.indicators.pv_benefits,
                    ch.indicators.pv_costs - df.indicators.pv_costs,
                )
            }
        };
        let d_npv = db - dc;
        let accepted = d_npv > TIE * scale;
        steps.push(Step {
            challenger: ch.name.clone(),
            defender: defender.map(|j| ranked[j].0.name.clone()),
            d_pv_benefits: db,
            d_pv_costs: dc,
            d_npv,
            d_bcr: bcr(db, dc),
            d_irr: if step_irr {
                irr(&inc.net())
            } else {
                Irr::Skipped
            },
            accepted,
        });
        if accepted {
            defender = Some(i);
        }
    }
    Analysis {
        winner: defender.map(|j| ranked[j].0.name.clone()),
        alternatives: ranked.into_iter().map(|r| r.0).collect(),
        steps,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::economics::Timing;
    use crate::model::Year;
    use approx::assert_abs_diff_eq;

    fn project(cost: f64, benefit: f64, years: i32) -> Stream {
        let mut rows = vec![(Year(0), 0.0, cost)];
        rows.extend((1..=years).map(|y| (Year(y), benefit, 0.0)));
        Stream::from_rows(&rows)
    }

    // Source: shared reference values (textbook ranking reversal, computed with numpy-financial):
    // A cost 1000, 250/yr; B cost 1600, 360/yr; 10 years at 10 %. A: NPV 536.14, BCR 1.5361,
    // IRR 21.41 %. B: NPV 612.04, BCR 1.3825, IRR 18.31 %. B−A: NPV 75.90, BCR 1.1265,
    // IRR 12.87 % > 10 %, so B is preferred although its own BCR and IRR are lower.
    #[test]
    fn ranking_reversal_reference_case() {
        let d = Discounting::new(0.10, Year(0), Timing::EndOfYear).unwrap();
        let alts = vec![
            ("B".to_owned(), project(1600.0, 360.0, 10)),
            ("A".to_owned(), project(1000.0, 250.0, 10)),
        ];
        let a = analyse(&alts, &d);
        assert_eq!(a.alternatives[0].name, "A");
        let (ia, ib) = (&a.alternatives[0].indicators, &a.alternatives[1].indicators);
        assert_abs_diff_eq!(ia.npv, 536.14, epsilon = 5e-3);
        assert_abs_diff_eq!(ia.bcr.unwrap(), 1.5361, epsilon = 5e-5);
        assert_abs_diff_eq!(ia.irr.unique().unwrap(), 0.2141, epsilon = 5e-5);
        assert_abs_diff_eq!(ib.npv, 612.04, epsilon = 5e-3);
        assert_abs_diff_eq!(ib.bcr.unwrap(), 1.3825, epsilon = 5e-5);
        assert_abs_diff_eq!(ib.irr.unique().unwrap(), 0.1831, epsilon = 5e-5);

        assert_eq!(a.steps.len(), 2);
        assert_eq!(a.steps[0].defender, None);
        assert!(a.steps[0].accepted);
        let s = &a.steps[1];
        assert_eq!(s.defender.as_deref(), Some("A"));
        assert_abs_diff_eq!(s.d_npv, 75.90, epsilon = 5e-3);
        assert_abs_diff_eq!(s.d_bcr.unwrap(), 1.1265, epsilon = 5e-5);
        assert_abs_diff_eq!(s.d_irr.unique().unwrap(), 0.1287, epsilon = 5e-5);
        assert!(s.accepted);
        assert_eq!(a.winner.as_deref(), Some("B"));
        // Ranking by own BCR or own IRR would have picked A.
        assert!(ia.bcr > ib.bcr && ia.irr.unique() > ib.irr.unique());
    }

    #[test]
    fn doing_nothing_wins_when_nothing_pays() {
        let d = Discounting::new(0.10, Year(0), Timing::EndOfYear).unwrap();
        let alts = vec![("X".to_owned(), project(1000.0, 100.0, 10))];
        let a = analyse(&alts, &d);
        assert!(!a.steps[0].accepted);
        assert_eq!(a.winner, None);
    }

    #[test]
    fn a_rejected_challenger_does_not_become_defender() {
        let d = Discounting::new(0.10, Year(0), Timing::EndOfYear).unwrap();
        // A good, B worse than A at higher cost, C best.
        let alts = vec![
            ("A".to_owned(), project(1000.0, 250.0, 10)),
            ("B".to_owned(), project(1200.0, 260.0, 10)),
            ("C".to_owned(), project(2000.0, 450.0, 10)),
        ];
        let a = analyse(&alts, &d);
        assert!(!a.steps[1].accepted);
        assert_eq!(a.steps[2].defender.as_deref(), Some("A"));
        assert_eq!(a.winner.as_deref(), Some("C"));
        // The winner is the alternative of highest NPV.
        let best = a
            .alternatives
            .iter()
            .max_by(|x, y| x.indicators.npv.total_cmp(&y.indicators.npv))
            .unwrap();
        assert_eq!(Some(best.name.clone()), a.winner);
    }
}
