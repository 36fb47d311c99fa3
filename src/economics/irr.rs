//! Internal rate of return: every rate in (−99 %, 1000 %] at which a stream's NPV is zero.
//!
//! A stream `v_0 … v_n` (one value a year) has NPV(r) = Σ v_t (1+r)^−t. With x = 1/(1+r) this is
//! the polynomial p(x) = Σ v_t x^t, so the IRRs are p's real roots in x ∈ [1/11, 100). The search
//! is split at r = 0 so that every polynomial is evaluated on (0, 1], where Horner's rule is well
//! conditioned: rates r ≥ 0 are roots of p(x) with x ∈ [1/11, 1]; rates −0.99 < r ≤ 0 are roots
//! of the reversed polynomial q(y) = yⁿ p(1/y) with y = 1 + r ∈ (0.01, 1].
//!
//! Roots are isolated exactly rather than guessed from a starting point: between consecutive real
//! roots of p′ the polynomial is monotone, so each such piece holds at most one root, found by
//! Brent's method; the roots of p′ come from the same procedure one degree down. A root of even
//! multiplicity (NPV touching zero) is caught at a critical point. Descartes' rule of signs gives a
//! fast path: no sign change in the stream means no positive root in x, one sign change means
//! exactly one, which a single bracket finds — the usual case of an investment followed by returns.
//!
//! Reference behaviour: numpy-financial's `irr` returns the one root nearest zero and `nan` when
//! there is none; this module returns them all, and the caller says the IRR is ambiguous when
//! there is more than one.

/// Lowest rate searched (exclusive): −99 %.
pub const MIN_RATE: f64 = -0.99;
/// Highest rate searched (inclusive): 1000 %.
pub const MAX_RATE: f64 = 10.0;

/// The internal rate(s) of return of a stream.
#[derive(Debug, Clone, PartialEq)]
pub enum Irr {
    /// A single rate: the IRR.
    Unique(f64),
    /// Several rates make NPV zero: the IRR is ambiguous and should not be used to rank.
    Multiple(Vec<f64>),
    /// No rate in (−99 %, 1000 %] makes NPV zero.
    None,
    /// Not looked for (`appraise --no-irr`, or a row no output shows).
    Skipped,
}

impl Irr {
    /// `unique`, `multiple` or `none`.
    pub fn status(&self) -> &'static str {
        match self {
            Irr::Unique(_) => "unique",
            Irr::Multiple(_) => "multiple",
            Irr::None => "none",
            Irr::Skipped => "skipped",
        }
    }

    /// Every rate found, ascending.
    pub fn rates(&self) -> Vec<f64> {
        match self {
            Irr::Unique(r) => vec![*r],
            Irr::Multiple(v) => v.clone(),
            Irr::None | Irr::Skipped => vec![],
        }
    }

    /// The rate when there is exactly one.
    pub fn unique(&self) -> Option<f64> {
        match self {
            Irr::Unique(r) => Some(*r),
            _ => None,
        }
    }
}

/// All internal rates of return of `values` (index t = years from the first value).
///
/// ```
/// use pavestrat::economics::irr::{irr, Irr};
/// // numpy-financial 1.0.0 documentation: irr([-100, 39, 59, 55, 20]) = 0.28095
/// let Irr::Unique(r) = irr(&[-100.0, 39.0, 59.0, 55.0, 20.0]) else { panic!() };
/// assert!((r - 0.28095).abs() < 5e-6);
/// // Two rates, 10 % and 20 %: the IRR is ambiguous.
/// assert_eq!(irr(&[-100.0, 230.0, -132.0]).status(), "multiple");
/// ```
pub fn irr(values: &[f64]) -> Irr {
    if values.iter().any(|v| !v.is_finite()) {
        return Irr::None;
    }
    // Drop leading and trailing zeros: they only multiply p by a power of x.
    let Some(first) = values.iter().position(|v| *v != 0.0) else {
        return Irr::None;
    };
    let last = values.iter().rposition(|v| *v != 0.0).unwrap_or(first);
    let c = &values[first..=last];
    if c.len() < 2 {
        return Irr::None;
    }
    let changes = sign_changes(c);
    let mut rates = if changes == 0 {
        Vec::new()
    } else if changes == 1 {
        single_root(c).into_iter().collect()
    } else {
        all_roots(c)
    };
    rates.sort_by(f64::total_cmp);
    rates.dedup_by(|a, b| (*a - *b).abs() <= 1e-10 * (1.0 + b.abs()));
    match rates.len() {
        0 => Irr::None,
        1 => Irr::Unique(rates[0]),
        _ => Irr::Multiple(rates),
    }
}

fn sign_changes(c: &[f64]) -> usize {
    let mut changes = 0;
    let mut prev = 0.0f64;
    for &v in c {
        if v != 0.0 {
            if prev != 0.0 && (v > 0.0) != (prev > 0.0) {
                changes += 1;
            }
            prev = v;
        }
    }
    changes
}

/// Horner evaluation of Σ c_i z^i.
fn horner(c: &[f64], z: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * z + ci)
}

/// Σ |c_i| z^i: the scale against which a value of the polynomial counts as zero.
fn magnitude(c: &[f64], z: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * z + ci.abs())
}

/// Coefficients of the derivative of Σ c_i z^i.
fn derivative(c: &[f64]) -> Vec<f64> {
    c.iter()
        .enumerate()
        .skip(1)
        .map(|(i, v)| v * i as f64)
        .collect()
}

fn reversed(c: &[f64]) -> Vec<f64> {
    c.iter().rev().copied().collect()
}

/// Bounds of the two search intervals (in x for r ≥ 0, in y = 1 + r for r ≤ 0).
const X_LO: f64 = 1.0 / (1.0 + MAX_RATE);
const Y_LO: f64 = 1.0 + MIN_RATE;

/// One sign change: exactly one positive root in x; find it if it lies in range.
fn single_root(c: &[f64]) -> Option<f64> {
    // At x = 1 (r = 0) p(1) = Σ c; the root is at r ≥ 0 iff p changes sign on [X_LO, 1].
    let p1 = c.iter().sum::<f64>();
    if p1 == 0.0 {
        return Some(0.0);
    }
    let plo = horner(c, X_LO);
    if (plo > 0.0) != (p1 > 0.0) || plo == 0.0 {
        let x = brent(|x| horner(c, x), X_LO, 1.0, plo, p1)?;
        return Some(1.0 / x - 1.0);
    }
    let q = reversed(c);
    let qlo = horner(&q, Y_LO);
    if (qlo > 0.0) != (p1 > 0.0) {
        let y = brent(|y| horner(&q, y), Y_LO, 1.0, qlo, p1)?;
        let r = y - 1.0;
        return (r > MIN_RATE).then_some(r);
    }
    None
}

/// Several sign changes: isolate every root in both intervals.
fn all_roots(c: &[f64]) -> Vec<f64> {
    let mut rates: Vec<f64> = certified_roots(c, X_LO, 1.0)
        .into_iter()
        .map(|x| 1.0 / x - 1.0)
        .collect();
    let q = reversed(c);
    rates.extend(
        certified_roots(&q, Y_LO, 1.0)
            .into_iter()
            .map(|y| y - 1.0)
            .filter(|r| *r > MIN_RATE),
    );
    rates
}

/// A polynomial with what the cell tests need: its derivative, and the absolute-value
/// polynomials that bound it and its first two derivatives on [0, z] (increasing in z ≥ 0).
struct Bounded {
    c: Vec<f64>,
    d1: Vec<f64>,
    abs0: Vec<f64>,
    abs1: Vec<f64>,
    abs2: Vec<f64>,
    noise: f64,
}

impl Bounded {
    fn new(c: &[f64]) -> Bounded {
        let d1 = derivative(c);
        let abs0: Vec<f64> = c.iter().map(|v| v.abs()).collect();
        let abs1: Vec<f64> = d1.iter().map(|v| v.abs()).collect();
        let abs2: Vec<f64> = d1
            .iter()
            .enumerate()
            .skip(1)
            .map(|(j, v)| v.abs() * j as f64)
            .collect();
        Bounded {
            noise: 8.0 * (c.len() as f64 + 1.0) * f64::EPSILON,
            c: c.to_vec(),
            d1,
            abs0,
            abs1,
            abs2,
        }
    }
}

/// Real roots of Σ c_i z^i on [lo, hi] ⊂ (0, 1], ascending, by certified subdivision.
///
/// Each cell [a, b] is settled by a bound, not by sampling: with M₁ = Σ j|c_j| b^(j−1) ≥ |p′| on
/// the cell, |p(a)| + |p(b)| > M₁(b − a) proves there is no root in it; a sign change with p′ of
/// one sign at both ends and |p′(a)| + |p′(b)| > M₂(b − a) (M₂ bounding |p″|) proves exactly one,
/// which Brent's method finds. A cell neither test settles is halved; after [`MAX_DEPTH`] halvings
/// (roots closer than ~1e-6, or of even multiplicity) the exact derivative recursion
/// [`roots_in`] takes over on that small cell. Rounding is allowed for with a noise margin of
/// 8(n+1)ε times the absolute-value polynomial.
fn certified_roots(c: &[f64], lo: f64, hi: f64) -> Vec<f64> {
    let Some(deg) = c.iter().rposition(|v| *v != 0.0) else {
        return Vec::new();
    };
    let big = c[..=deg].iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let scaled: Vec<f64> = c[..=deg].iter().map(|v| v / big).collect();
    if deg <= 2 {
        return roots_in(&scaled, lo, hi);
    }
    let p = Bounded::new(&scaled);
    let mut roots = Vec::new();
    const START: usize = 4;
    let mut a = lo;
    let mut pa = horner(&p.c, a);
    for i in 1..=START {
        let b = if i == START {
            hi
        } else {
            lo + (hi - lo) * i as f64 / START as f64
        };
        let pb = horner(&p.c, b);
        cell(&p, a, b, pa, pb, 0, &mut roots);
        a = b;
        pa = pb;
    }
    if pa == 0.0 {
        roots.push(hi);
    }
    roots.sort_by(f64::total_cmp);
    roots.dedup_by(|x, y| (*x - *y).abs() <= 1e-12);
    roots
}

/// Cells this many halvings deep (width ~1e-6 of the interval) go to the exact recursion.
const MAX_DEPTH: u32 = 20;

fn cell(p: &Bounded, a: f64, b: f64, pa: f64, pb: f64, depth: u32, roots: &mut Vec<f64>) {
    if pa == 0.0 {
        roots.push(a);
    }
    let h = b - a;
    let slack = p.noise * (horner(&p.abs0, a) + horner(&p.abs0, b));
    let m1 = horner(&p.abs1, b);
    if pa != 0.0 && pb != 0.0 && (pa > 0.0) == (pb > 0.0) {
        if pa.abs() + pb.abs() > m1 * h + slack {
            return; // no root
        }
    } else if pa != 0.0 && pb != 0.0 {
        let (da, db) = (horner(&p.d1, a), horner(&p.d1, b));
        let m2 = horner(&p.abs2, b);
        let dslack = p.noise * (horner(&p.abs1, a) + m1);
        if da != 0.0 && (da > 0.0) == (db > 0.0) && da.abs() + db.abs() > m2 * h + dslack {
            if let Some(z) = brent(|z| horner(&p.c, z), a, b, pa, pb) {
                roots.push(z);
            }
            return; // exactly one root
        }
    }
    if depth >= MAX_DEPTH {
        roots.extend(
            roots_in(&p.c, a, b)
                .into_iter()
                .filter(|z| *z > a || pa != 0.0),
        );
        return;
    }
    let m = 0.5 * (a + b);
    let pm = horner(&p.c, m);
    cell(p, a, m, pa, pm, depth + 1, roots);
    cell(p, m, b, pm, pb, depth + 1, roots);
}

/// Real roots of Σ c_i z^i on [a, b] ⊂ (0, 1], ascending.
fn roots_in(c: &[f64], a: f64, b: f64) -> Vec<f64> {
    // Trim trailing zero coefficients (lower the degree) and scale to unit size.
    let Some(deg) = c.iter().rposition(|v| *v != 0.0) else {
        return Vec::new();
    };
    let big = c[..=deg].iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let c: Vec<f64> = c[..=deg].iter().map(|v| v / big).collect();
    match deg {
        0 => Vec::new(),
        1 => {
            let z = -c[0] / c[1];
            if (a..=b).contains(&z) {
                vec![z]
            } else {
                Vec::new()
            }
        }
        _ => {
            let deriv = derivative(&c);
            let crit = roots_in(&deriv, a, b);
            let mut knots = Vec::with_capacity(crit.len() + 2);
            knots.push(a);
            knots.extend(crit.iter().copied().filter(|z| *z > a && *z < b));
            knots.push(b);
            let mut roots = Vec::new();
            for w in knots.windows(2) {
                let (lo, hi) = (w[0], w[1]);
                let (flo, fhi) = (horner(&c, lo), horner(&c, hi));
                if flo == 0.0 {
                    roots.push(lo);
                } else if fhi != 0.0 && (flo > 0.0) != (fhi > 0.0) {
                    if let Some(z) = brent(|z| horner(&c, z), lo, hi, flo, fhi) {
                        roots.push(z);
                    }
                }
            }
            if horner(&c, b) == 0.0 {
                roots.push(b);
            }
            // Even-multiplicity roots: the polynomial touches zero at a critical point.
            for &z in &crit {
                if horner(&c, z).abs() <= 1e-12 * magnitude(&c, z) {
                    roots.push(z);
                }
            }
            roots.sort_by(f64::total_cmp);
            roots.dedup_by(|p, q| (*p - *q).abs() <= 1e-12);
            roots
        }
    }
}

/// Brent's method (inverse quadratic interpolation, secant and bisection) for a root of `f` in
/// [a, b] given f(a) = fa and f(b) = fb of opposite signs. Brent, *Algorithms for Minimization
/// without Derivatives* (1973), ch. 4.
// `a == c` below is the algorithm's test of whether c is still a copy of a: exact on purpose.
#[allow(clippy::float_cmp)]
pub fn brent(f: impl Fn(f64) -> f64, a: f64, b: f64, fa: f64, fb: f64) -> Option<f64> {
    let (mut a, mut b, mut fa, mut fb) = (a, b, fa, fb);
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if (fa > 0.0) == (fb > 0.0) {
        return None;
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..200 {
        if (fb > 0.0) == (fc > 0.0) {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 1e-300;
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                let qq = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qq * (qq - r) - (b - a) * (r - 1.0));
                q = (qq - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * m * q - (tol * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        } else {
            d = m;
            e = m;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol.copysign(m) };
        fb = f(b);
    }
    Some(b)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_abs_diff_eq;

    fn npv0(values: &[f64], r: f64) -> f64 {
        values
            .iter()
            .enumerate()
            .map(|(t, v)| v / (1.0 + r).powi(t as i32))
            .sum()
    }

    // Source: numpy-financial 1.0.0 documentation of `irr` (values rounded to 5 decimals there).
    #[test]
    fn numpy_financial_documented_examples() {
        let cases: [(&[f64], f64); 5] = [
            (&[-100.0, 39.0, 59.0, 55.0, 20.0], 0.28095),
            (&[-100.0, 0.0, 0.0, 74.0], -0.0955),
            (&[-100.0, 100.0, 0.0, -7.0], -0.0833),
            (&[-100.0, 100.0, 0.0, 7.0], 0.06206),
            (&[-5.0, 10.5, 1.0, -8.0, 1.0], 0.0886),
        ];
        for (v, want) in cases {
            let rates = irr(v).rates();
            assert!(
                rates.iter().any(|r| (r - want).abs() < 5e-5),
                "{v:?}: {rates:?} lacks {want}"
            );
            for r in rates {
                assert_abs_diff_eq!(npv0(v, r), 0.0, epsilon = 1e-9);
            }
        }
    }

    // Source: shared reference values; [-100, 230, -132] = -100 (1 - 1.1x)(1 - 1.2x)/... has
    // roots 10 % and 20 % (algebra).
    #[test]
    fn two_rates_are_both_reported() {
        let got = irr(&[-100.0, 230.0, -132.0]);
        assert_eq!(got.status(), "multiple");
        let r = got.rates();
        assert_eq!(r.len(), 2);
        assert_abs_diff_eq!(r[0], 0.10, epsilon = 1e-12);
        assert_abs_diff_eq!(r[1], 0.20, epsilon = 1e-12);
    }

    // Source: numpy-financial returns nan for these (no real rate).
    #[test]
    fn no_rate_when_none_exists() {
        assert_eq!(irr(&[-100.0, 50.0, -100.0]), Irr::None);
        assert_eq!(irr(&[100.0, 50.0, 10.0]), Irr::None);
        assert_eq!(irr(&[-1.0, -2.0]), Irr::None);
        assert_eq!(irr(&[0.0, 0.0]), Irr::None);
        assert_eq!(irr(&[5.0]), Irr::None);
        assert_eq!(irr(&[-1.0, f64::NAN]), Irr::None);
    }

    #[test]
    fn double_root_is_found() {
        // -(1 - x)^2 : NPV touches zero at r = 0 without changing sign.
        let got = irr(&[-1.0, 2.0, -1.0]);
        assert_eq!(got.rates().len(), 1);
        assert_abs_diff_eq!(got.rates()[0], 0.0, epsilon = 1e-6);
    }

    #[test]
    fn rates_outside_the_range_are_not_reported() {
        // -1 + 20/(1+r): r = 19, above 1000 %.
        assert_eq!(irr(&[-1.0, 20.0]), Irr::None);
        // -1 + 0.005/(1+r): r = -0.995, below -99 %.
        assert_eq!(irr(&[-1.0, 0.005]), Irr::None);
        // At the top edge exactly: -1 + 11/(1+r) → r = 10.
        assert_abs_diff_eq!(irr(&[-1.0, 11.0]).unique().unwrap(), 10.0, epsilon = 1e-12);
    }

    #[test]
    fn leading_and_trailing_zeros_do_not_matter() {
        let a = irr(&[-100.0, 39.0, 59.0, 55.0, 20.0]).unique().unwrap();
        let b = irr(&[0.0, 0.0, -100.0, 39.0, 59.0, 55.0, 20.0, 0.0])
            .unique()
            .unwrap();
        assert_abs_diff_eq!(a, b, epsilon = 1e-13);
    }

    #[test]
    fn certified_subdivision_agrees_with_the_exact_recursion() {
        // Streams with later outlays (several sign changes), including near-double roots.
        let cases: Vec<Vec<f64>> = vec![
            vec![-100.0, 230.0, -132.0, 0.0, 1.0],
            vec![
                -1000.0, 300.0, 300.0, -200.0, 400.0, 400.0, -900.0, 500.0, 500.0, 500.0,
            ],
            vec![-1.0, 3.0, -3.0, 1.0 + 1e-9], // (x-1)^3: a triple root, nudged
            vec![-1.0, 2.0, -1.0 - 1e-12, 0.1, -0.1],
            (0..30)
                .map(|t| if t % 7 == 0 { -500.0 } else { 90.0 })
                .collect(),
        ];
        for v in cases {
            for (a, b, c) in [(X_LO, 1.0, v.clone()), (Y_LO, 1.0, reversed(&v))] {
                let exact = roots_in(&c, a, b);
                let cert = certified_roots(&c, a, b);
                assert_eq!(
                    exact.len(),
                    cert.len(),
                    "{v:?} on [{a}, {b}]: {exact:?} vs {cert:?}"
                );
                for (x, y) in exact.iter().zip(&cert) {
                    assert!((x - y).abs() < 1e-7, "{v:?}: {exact:?} vs {cert:?}");
                }
            }
        }
    }

    #[test]
    fn three_rates() {
        // (1.05 - 1/x)(1.15 - 1/x)(1.30 - 1/x) scaled: roots at 5 %, 15 %, 30 %.
        // Expand Π (1 - (1+r_i) x) = 1 - s1 x + s2 x^2 - s3 x^3.
        let (a, b, c) = (1.05, 1.15, 1.30);
        let v = [1.0, -(a + b + c), a * b + a * c + b * c, -(a * b * c)];
        let r = irr(&v).rates();
        assert_eq!(r.len(), 3, "{r:?}");
        for (got, want) in r.iter().zip([0.05, 0.15, 0.30]) {
            assert_abs_diff_eq!(*got, want, epsilon = 1e-9);
        }
    }
}
