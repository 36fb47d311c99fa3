//! SVG charts drawn by the tool: linear scales with rounded ticks, axes with titles and units,
//! lines, points, bars and reference lines.
//!
//! Every chart is an `<svg class="chart" data-chart="ID">` with its scales written on the root
//! (`data-x-domain`, `data-x-range`, `data-y-domain`, `data-y-range`, and `data-y2-…` for a right
//! axis), and every plotted value is a mark (`class="mark"`) carrying the value it draws
//! (`data-series`, `data-x`, `data-y`). The pixel geometry follows from the value and the scale,
//! so a reader (or a test) can check both.
//!
//! Colours: the Okabe–Ito palette (Okabe & Ito, "Color Universal Design", 2008), safe for the
//! common colour-vision deficiencies; lines also differ by dash pattern so the charts survive
//! black-and-white printing.

use std::fmt::Write as _;

/// Okabe–Ito colours used by the report.
pub const BLUE: &str = "#0072B2";
pub const VERMILLION: &str = "#D55E00";
pub const GREEN: &str = "#009E73";
pub const ORANGE: &str = "#E69F00";
pub const SKY: &str = "#56B4E9";
pub const PURPLE: &str = "#CC79A7";
pub const GREY: &str = "#6b6b6b";

/// Escape text for HTML and SVG.
pub fn esc(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            c => o.push(c),
        }
    }
    o
}

/// A linear map from a value domain to a pixel range.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Scale {
    pub d0: f64,
    pub d1: f64,
    pub p0: f64,
    pub p1: f64,
}

impl Scale {
    pub fn at(&self, v: f64) -> f64 {
        if (self.d1 - self.d0).abs() < f64::MIN_POSITIVE {
            return (self.p0 + self.p1) / 2.0;
        }
        self.p0 + (v - self.d0) / (self.d1 - self.d0) * (self.p1 - self.p0)
    }
}

/// Rounded ticks covering `[lo, hi]`: (first, last, step), about `n` of them (1, 2 or 5 × 10^k).
pub fn nice(lo: f64, hi: f64, n: usize) -> (f64, f64, f64) {
    let (mut lo, mut hi) = (lo.min(hi), lo.max(hi));
    if !lo.is_finite() || !hi.is_finite() {
        return (0.0, 1.0, 0.2);
    }
    if hi - lo < 1e-12 * hi.abs().max(1.0) {
        let pad = if hi == 0.0 { 1.0 } else { hi.abs() * 0.1 };
        lo -= pad;
        hi += pad;
    }
    let raw = (hi - lo) / n.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).floor() * step;
    let last = (hi / step).ceil() * step;
    (first, last, step)
}

/// How a chart labels its numbers: a divisor and its word for money, or a plain format.
#[derive(Debug, Clone)]
pub struct Units {
    pub divisor: f64,
    pub decimals: usize,
    pub percent: bool,
    /// No tick labels (the chart labels its rows itself).
    pub hidden: bool,
}

impl Units {
    pub fn plain(decimals: usize) -> Units {
        Units {
            divisor: 1.0,
            decimals,
            percent: false,
            hidden: false,
        }
    }

    /// Ticks without labels.
    pub fn hidden() -> Units {
        Units {
            hidden: true,
            ..Units::plain(0)
        }
    }

    pub fn percent(decimals: usize) -> Units {
        Units {
            divisor: 0.01,
            decimals,
            percent: true,
            hidden: false,
        }
    }

    /// Money in thousands, millions or billions by the size of `largest`; returns the units
    /// and the word for the axis title ("millions").
    pub fn money(largest: f64) -> (Units, &'static str) {
        let a = largest.abs();
        let (divisor, word) = if a >= 5e9 {
            (1e9, "billions")
        } else if a >= 5e6 {
            (1e6, "millions")
        } else if a >= 5e3 {
            (1e3, "thousands")
        } else {
            (1.0, "")
        };
        (
            Units {
                divisor,
                decimals: 1,
                percent: false,
                hidden: false,
            },
            word,
        )
    }

    pub fn label(&self, v: f64, step: f64) -> String {
        if self.hidden {
            return String::new();
        }
        let x = v / self.divisor;
        let s = step / self.divisor;
        // As many decimals as the step needs (2.5 → 1, 0.25 → 2, 5 → 0).
        let decimals = (0..=(self.decimals + 2))
            .find(|&d| {
                let k = s * 10f64.powi(d as i32);
                (k - k.round()).abs() < 1e-6 * k.abs().max(1.0)
            })
            .unwrap_or(self.decimals + 2);
        let t = crate::model::money::grouped(x, decimals);
        if self.percent {
            format!("{t}%")
        } else {
            t
        }
    }
}

/// One chart being drawn.
pub struct Chart {
    pub id: String,
    pub width: f64,
    pub height: f64,
    pub x: Scale,
    pub y: Scale,
    pub y2: Option<Scale>,
    body: String,
    axes: String,
}

/// Margins: left, right, top, bottom.
const LEFT: f64 = 78.0;
const RIGHT: f64 = 20.0;
const RIGHT2: f64 = 66.0;
const TOP: f64 = 50.0;
const BOTTOM: f64 = 52.0;

/// What a chart shows: its axes' domains, titles and units.
pub struct Spec<'a> {
    pub id: &'a str,
    pub title: &'a str,
    pub width: f64,
    pub height: f64,
    /// x domain (before rounding); `x_pad` adds half a band each side (bars on years).
    pub x: (f64, f64),
    pub x_pad: f64,
    pub x_title: &'a str,
    pub x_units: Units,
    /// Whether x ticks are whole numbers (years).
    pub x_integer: bool,
    pub y: (f64, f64),
    pub y_title: &'a str,
    pub y_units: Units,
    /// A right axis: domain, title, units.
    pub y2: Option<((f64, f64), &'a str, Units)>,
}

impl Chart {
    pub fn new(s: Spec<'_>) -> Chart {
        let right = if s.y2.is_some() { RIGHT2 } else { RIGHT };
        let (x0, x1, xs) = if s.x_integer {
            let span = (s.x.1 - s.x.0).max(1.0);
            // About one label per 44 px of plot width.
            let fit = ((s.width - LEFT - right) / 44.0).floor().max(1.0);
            let step = (span / fit).ceil().max(1.0);
            (s.x.0 - s.x_pad, s.x.1 + s.x_pad, step)
        } else {
            let (a, b, st) = nice(s.x.0, s.x.1, 6);
            (a - s.x_pad, b + s.x_pad, st)
        };
        let (y0, y1, ys) = nice(s.y.0, s.y.1, 5);
        let x = Scale {
            d0: x0,
            d1: x1,
            p0: LEFT,
            p1: s.width - right,
        };
        let y = Scale {
            d0: y0,
            d1: y1,
            p0: s.height - BOTTOM,
            p1: TOP,
        };
        let mut c = Chart {
            id: s.id.to_owned(),
            width: s.width,
            height: s.height,
            x,
            y,
            y2: None,
            body: String::new(),
            axes: String::new(),
        };
        // Grid and y ticks.
        let mut a = String::new();
        let mut v = y0;
        while v <= y1 + ys * 1e-9 {
            let py = y.at(v);
            let _ = write!(
                a,
                r#"<line class="grid" x1="{:.2}" x2="{:.2}" y1="{py:.2}" y2="{py:.2}"/><text class="tick" data-axis="y" x="{:.2}" y="{:.2}" text-anchor="end">{}</text>"#,
                LEFT,
                s.width - right,
                LEFT - 6.0,
                py + 4.0,
                esc(&s.y_units.label(v, ys))
            );
            v += ys;
        }
        // x ticks.
        let first = if s.x_integer { s.x.0 } else { x0 + s.x_pad };
        let last = if s.x_integer { s.x.1 } else { x1 - s.x_pad };
        let mut v = first;
        while v <= last + xs * 1e-9 {
            let px = x.at(v);
            let label = if s.x_integer {
                format!("{v:.0}")
            } else {
                s.x_units.label(v, xs)
            };
            let _ = write!(
                a,
                r#"<line class="axis" x1="{px:.2}" x2="{px:.2}" y1="{:.2}" y2="{:.2}"/><text class="tick" data-axis="x" x="{px:.2}" y="{:.2}" text-anchor="middle">{}</text>"#,
                s.height - BOTTOM,
                s.height - BOTTOM + 4.0,
                s.height - BOTTOM + 17.0,
                esc(&label)
            );
            v += xs;
        }
        // Axis lines and titles.
        let _ = write!(
            a,
            r#"<line class="axis" x1="{LEFT}" x2="{LEFT}" y1="{TOP}" y2="{:.2}"/><line class="axis" x1="{LEFT}" x2="{:.2}" y1="{:.2}" y2="{:.2}"/>"#,
            s.height - BOTTOM,
            s.width - right,
            s.height - BOTTOM,
            s.height - BOTTOM
        );
        let _ = write!(
            a,
            r#"<text class="axis-title" data-axis="x" x="{:.2}" y="{:.2}" text-anchor="middle">{}</text>"#,
            (LEFT + s.width - right) / 2.0,
            s.height - 10.0,
            esc(s.x_title)
        );
        let _ = write!(
            a,
            r#"<text class="axis-title" data-axis="y" transform="translate(16 {:.2}) rotate(-90)" text-anchor="middle">{}</text>"#,
            (TOP + s.height - BOTTOM) / 2.0,
            esc(s.y_title)
        );
        let _ = write!(
            a,
            r#"<text class="chart-title" x="{LEFT}" y="16">{}</text>"#,
            esc(s.title)
        );
        if let Some(((lo, hi), title, units)) = s.y2 {
            let (a0, a1, st) = nice(lo, hi, 5);
            let sc = Scale {
                d0: a0,
                d1: a1,
                p0: s.height - BOTTOM,
                p1: TOP,
            };
            let xr = s.width - right;
            let mut v = a0;
            while v <= a1 + st * 1e-9 {
                let py = sc.at(v);
                let _ = write!(
                    a,
                    r#"<line class="axis" x1="{xr:.2}" x2="{:.2}" y1="{py:.2}" y2="{py:.2}"/><text class="tick" data-axis="y2" x="{:.2}" y="{:.2}" text-anchor="start">{}</text>"#,
                    xr + 4.0,
                    xr + 7.0,
                    py + 4.0,
                    esc(&units.label(v, st))
                );
                v += st;
            }
            let _ = write!(
                a,
                r#"<line class="axis" x1="{xr:.2}" x2="{xr:.2}" y1="{TOP}" y2="{:.2}"/><text class="axis-title" data-axis="y2" transform="translate({:.2} {:.2}) rotate(90)" text-anchor="middle">{}</text>"#,
                s.height - BOTTOM,
                s.width - 12.0,
                (TOP + s.height - BOTTOM) / 2.0,
                esc(title)
            );
            c.y2 = Some(sc);
        }
        c.axes = a;
        c
    }

    fn y_of(&self, right: bool) -> Scale {
        if right {
            self.y2.unwrap_or(self.y)
        } else {
            self.y
        }
    }

    /// A line through points (drawn as a polyline plus one mark per point).
    pub fn line(
        &mut self,
        series: &str,
        colour: &str,
        dash: &str,
        points: &[(f64, f64)],
        right: bool,
    ) {
        let y = self.y_of(right);
        let pts: Vec<String> = points
            .iter()
            .map(|&(a, b)| format!("{:.2},{:.2}", self.x.at(a), y.at(b)))
            .collect();
        let _ = write!(
            self.body,
            r#"<polyline class="series" data-series="{}" fill="none" stroke="{colour}" stroke-width="2" stroke-dasharray="{dash}" points="{}"/>"#,
            esc(series),
            pts.join(" ")
        );
        for &(a, b) in points {
            self.point(series, colour, a, b, right, 2.6);
        }
    }

    /// One point mark.
    pub fn point(&mut self, series: &str, colour: &str, a: f64, b: f64, right: bool, r: f64) {
        let y = self.y_of(right);
        let _ = write!(
            self.body,
            r#"<circle class="mark" data-series="{}" data-x="{a}" data-y="{b}"{} cx="{:.3}" cy="{:.3}" r="{r}" fill="{colour}"/>"#,
            esc(series),
            if right { r#" data-axis="y2""# } else { "" },
            self.x.at(a),
            y.at(b)
        );
    }

    /// A bar from `from` to `from + value` at x = `a`, `width` in x units.
    #[allow(clippy::too_many_arguments)]
    pub fn bar(
        &mut self,
        series: &str,
        colour: &str,
        a: f64,
        width: f64,
        from: f64,
        value: f64,
        extra: &str,
    ) {
        let (ya, yb) = (self.y.at(from), self.y.at(from + value));
        let (xa, xb) = (self.x.at(a - width / 2.0), self.x.at(a + width / 2.0));
        let _ = write!(
            self.body,
            r#"<rect class="mark{}" data-series="{}" data-x="{a}" data-y="{value}" data-from="{from}" x="{:.3}" y="{:.3}" width="{:.3}" height="{:.3}" fill="{colour}"/>"#,
            extra,
            esc(series),
            xa.min(xb),
            ya.min(yb),
            (xb - xa).abs(),
            (yb - ya).abs()
        );
    }

    /// A short horizontal mark at value `b` over x = `a` ± `width`/2 (a limit on a bar).
    pub fn level(&mut self, series: &str, colour: &str, a: f64, width: f64, b: f64) {
        let py = self.y.at(b);
        let _ = write!(
            self.body,
            r#"<line class="mark" data-series="{}" data-x="{a}" data-y="{b}" x1="{:.3}" x2="{:.3}" y1="{py:.3}" y2="{py:.3}" stroke="{colour}" stroke-width="2.5"/>"#,
            esc(series),
            self.x.at(a - width / 2.0),
            self.x.at(a + width / 2.0)
        );
    }

    /// A horizontal reference line across the chart.
    pub fn reference(&mut self, label: &str, colour: &str, b: f64, right: bool) {
        self.reference_at(label, colour, b, right, false);
    }

    /// [`Chart::reference`] with its label at the left end of the line when `left`.
    pub fn reference_at(&mut self, label: &str, colour: &str, b: f64, right: bool, left: bool) {
        let y = self.y_of(right);
        let py = y.at(b);
        let (lx, anchor) = if left {
            (self.x.p0 + 4.0, "start")
        } else {
            (self.x.p1 - 4.0, "end")
        };
        let _ = write!(
            self.body,
            r#"<line class="reference" data-y="{b}" x1="{:.2}" x2="{:.2}" y1="{py:.2}" y2="{py:.2}" stroke="{colour}" stroke-dasharray="5 4"/><text class="note" x="{lx:.2}" y="{:.2}" text-anchor="{anchor}">{}</text>"#,
            self.x.p0,
            self.x.p1,
            py - 4.0,
            esc(label)
        );
    }

    /// A vertical segment between two values at x = `a` (an interval such as plan-to-bound).
    pub fn whisker(&mut self, series: &str, colour: &str, a: f64, lo: f64, hi: f64) {
        let _ = write!(
            self.body,
            r#"<line class="mark" data-series="{}" data-x="{a}" data-y="{hi}" data-from="{lo}" x1="{:.3}" x2="{:.3}" y1="{:.3}" y2="{:.3}" stroke="{colour}" stroke-width="1.5"/>"#,
            esc(series),
            self.x.at(a),
            self.x.at(a),
            self.y.at(lo),
            self.y.at(hi)
        );
    }

    /// Text at a data position (centred above it by `dy` pixels).
    pub fn label(&mut self, class: &str, a: f64, b: f64, dy: f64, text: &str, value: Option<f64>) {
        let _ = write!(
            self.body,
            r#"<text class="{class}" data-x="{a}"{} x="{:.2}" y="{:.2}" text-anchor="middle">{}</text>"#,
            value
                .map(|v| format!(r#" data-value="{v}""#))
                .unwrap_or_default(),
            self.x.at(a),
            self.y.at(b) - dy,
            esc(text)
        );
    }

    /// Raw SVG added to the chart's body.
    pub fn raw(&mut self, svg: &str) {
        self.body.push_str(svg);
    }

    /// The finished `<svg>` with a legend of (name, colour, dash) entries.
    pub fn finish(self, legend: &[(&str, &str, &str)]) -> String {
        let mut lg = String::new();
        let mut x = LEFT + 4.0;
        for (name, colour, dash) in legend {
            let _ = write!(
                lg,
                r#"<g class="legend-item"><line x1="{x:.1}" x2="{:.1}" y1="{:.1}" y2="{:.1}" stroke="{colour}" stroke-width="3" stroke-dasharray="{dash}"/><text class="legend" x="{:.1}" y="{:.1}">{}</text></g>"#,
                x + 22.0,
                TOP - 16.0,
                TOP - 16.0,
                x + 27.0,
                TOP - 12.0,
                esc(name)
            );
            x += 40.0 + 7.0 * name.chars().count() as f64;
        }
        let y2 = self
            .y2
            .map(|s| {
                format!(
                    r#" data-y2-domain="{} {}" data-y2-range="{} {}""#,
                    s.d0, s.d1, s.p0, s.p1
                )
            })
            .unwrap_or_default();
        format!(
            r#"<svg class="chart" data-chart="{id}" xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {w} {h}" width="{w}" height="{h}" role="img" aria-label="{id}" data-x-domain="{} {}" data-x-range="{} {}" data-y-domain="{} {}" data-y-range="{} {}"{y2}>{}{}{}</svg>"#,
            self.x.d0,
            self.x.d1,
            self.x.p0,
            self.x.p1,
            self.y.d0,
            self.y.d1,
            self.y.p0,
            self.y.p1,
            self.axes,
            self.body,
            lg,
            id = esc(&self.id),
            w = self.width,
            h = self.height,
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_ticks_cover_the_range_with_round_steps() {
        assert_eq!(nice(0.0, 9.3, 5), (0.0, 10.0, 2.0));
        let (a, b, s) = nice(1.37, 4.21, 5);
        assert!(a <= 1.37 && b >= 4.21);
        assert!([0.5, 1.0].contains(&s), "step {s}");
        let (a, b, _) = nice(5.0, 5.0, 5);
        assert!(a < 5.0 && b > 5.0);
    }

    #[test]
    fn scales_map_domain_ends_to_range_ends() {
        let s = Scale {
            d0: 0.0,
            d1: 10.0,
            p0: 300.0,
            p1: 20.0,
        };
        assert!((s.at(0.0) - 300.0).abs() < 1e-12);
        assert!((s.at(10.0) - 20.0).abs() < 1e-12);
        assert!((s.at(5.0) - 160.0).abs() < 1e-12);
    }

    #[test]
    fn money_units_pick_a_readable_divisor() {
        assert_eq!(Units::money(6.5e6).1, "millions");
        assert_eq!(Units::money(40_000.0).1, "thousands");
        let (u, _) = Units::money(6.5e6);
        assert_eq!(u.label(3e6, 1e6), "3");
        assert_eq!(u.label(2.5e6, 5e5), "2.5");
        assert_eq!(Units::percent(0).label(0.25, 0.05), "25%");
    }

    #[test]
    fn text_is_escaped() {
        assert_eq!(esc(r#"a<b & "c"'"#), "a&lt;b &amp; &quot;c&quot;&#39;");
    }
}
