//! Sobol' low-discrepancy points for quasi-random draws.
//!
//! Sobol' (1967), with the direction numbers of Joe & Kuo, "Constructing Sobol sequences with
//! better two-dimensional projections", SIAM J. Sci. Comput. 30 (2008) 2635–2654 (their table
//! `new-joe-kuo-6.21201`, the first [`MAX_DIMENSIONS`] dimensions). Point `n` is computed
//! directly from `n` (the XOR of the direction numbers of the bits of n's Gray code, the order of
//! Antonov & Saleev, 1979), so any draw can be made alone: in any thread, in a whole run or a
//! slice of one. Points have 32 bits per coordinate.

use std::sync::OnceLock;

/// The most dimensions (uncertain inputs) the table holds.
pub const MAX_DIMENSIONS: usize = 32;

/// Bits of each coordinate.
const BITS: usize = 32;

/// Dimensions 2 to 32: the primitive polynomial (its bits, the degree's and the constant's
/// included) and the initial direction integers m₁…m_s (Joe & Kuo 2008, new-joe-kuo-6.21201).
/// Dimension 1 is van der Corput's sequence (every mᵢ = 1).
const TABLE: [(u32, &[u32]); MAX_DIMENSIONS - 1] = [
    (3, &[1]),
    (7, &[1, 3]),
    (11, &[1, 3, 1]),
    (13, &[1, 1, 1]),
    (19, &[1, 1, 3, 3]),
    (25, &[1, 3, 5, 13]),
    (37, &[1, 1, 5, 5, 17]),
    (41, &[1, 1, 5, 5, 5]),
    (47, &[1, 1, 7, 11, 19]),
    (55, &[1, 1, 5, 1, 1]),
    (59, &[1, 1, 1, 3, 11]),
    (61, &[1, 3, 5, 5, 31]),
    (67, &[1, 3, 3, 9, 7, 49]),
    (91, &[1, 1, 1, 15, 21, 21]),
    (97, &[1, 3, 1, 13, 27, 49]),
    (103, &[1, 1, 1, 15, 7, 5]),
    (109, &[1, 3, 1, 15, 13, 25]),
    (115, &[1, 1, 5, 5, 19, 61]),
    (131, &[1, 3, 7, 11, 23, 15, 103]),
    (137, &[1, 3, 7, 13, 13, 15, 69]),
    (143, &[1, 1, 3, 13, 7, 35, 63]),
    (145, &[1, 3, 5, 9, 1, 25, 53]),
    (157, &[1, 3, 1, 13, 9, 35, 107]),
    (167, &[1, 3, 1, 5, 27, 61, 31]),
    (171, &[1, 1, 5, 11, 19, 41, 61]),
    (185, &[1, 3, 5, 3, 3, 13, 69]),
    (191, &[1, 1, 7, 13, 1, 19, 1]),
    (193, &[1, 3, 7, 5, 13, 19, 59]),
    (203, &[1, 1, 3, 9, 25, 29, 41]),
    (211, &[1, 3, 5, 13, 23, 1, 55]),
    (213, &[1, 3, 7, 3, 13, 59, 17]),
];

/// Direction numbers vᵢ = mᵢ·2^(32−i) of every dimension, by the recurrence of Bratley & Fox
/// (ACM TOMS 14, 1988): m_i = 2a₁m_{i−1} ⊕ 4a₂m_{i−2} ⊕ … ⊕ 2^s·m_{i−s} ⊕ m_{i−s}.
fn directions() -> &'static [[u32; BITS]; MAX_DIMENSIONS] {
    static V: OnceLock<[[u32; BITS]; MAX_DIMENSIONS]> = OnceLock::new();
    V.get_or_init(|| {
        let mut v = [[0u32; BITS]; MAX_DIMENSIONS];
        for (i, slot) in v[0].iter_mut().enumerate() {
            *slot = 1 << (BITS - 1 - i);
        }
        for (d, (poly, init)) in TABLE.iter().enumerate() {
            let s = init.len();
            let mut m = [0u64; BITS];
            for (i, &x) in init.iter().enumerate() {
                m[i] = u64::from(x);
            }
            for i in s..BITS {
                let mut x = m[i - s] ^ (m[i - s] << s);
                for k in 1..s {
                    if (poly >> (s - k)) & 1 == 1 {
                        x ^= m[i - k] << k;
                    }
                }
                m[i] = x;
            }
            for i in 0..BITS {
                // mᵢ < 2^(i+1), so the shift keeps it inside 32 bits.
                v[d + 1][i] = (m[i] << (BITS - 1 - i)) as u32;
            }
        }
        v
    })
}

/// Coordinate `dim` (from 0, below [`MAX_DIMENSIONS`]) of point `n` of the sequence, as a
/// 32-bit integer (the point is it / 2³²). Point 0 is the origin.
pub fn coordinate(n: u64, dim: usize) -> u32 {
    let v = &directions()[dim.min(MAX_DIMENSIONS - 1)];
    let mut gray = n ^ (n >> 1);
    let mut x = 0u32;
    let mut b = 0;
    while gray != 0 && b < BITS {
        if gray & 1 == 1 {
            x ^= v[b];
        }
        gray >>= 1;
        b += 1;
    }
    x
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SciPy 1.17.1, `scipy.stats.qmc.Sobol(d=32, scramble=False, bits=32).random(16384)`, the
    /// rows of these indices times 2³² (the same Joe & Kuo table).
    const SCIPY: [(u64, [u32; 32]); 4] = [
        (
            5,
            [
                3758096384, 3758096384, 536870912, 1610612736, 3758096384, 2684354560, 3758096384,
                1610612736, 1610612736, 536870912, 1610612736, 3758096384, 3758096384, 536870912,
                3758096384, 1610612736, 3758096384, 1610612736, 1610612736, 2684354560, 2684354560,
                2684354560, 3758096384, 1610612736, 1610612736, 1610612736, 3758096384, 536870912,
                2684354560, 2684354560, 3758096384, 2684354560,
            ],
        ),
        (
            100,
            [
                1778384896, 1107296256, 3321888768, 3120562176, 3791650816, 3187671040, 100663296,
                2046820352, 2717908992, 2986344448, 1979711488, 2919235584, 2046820352, 3657433088,
                1375731712, 2113929216, 2919235584, 3187671040, 3590324224, 1442840576, 3254779904,
                1711276032, 33554432, 2113929216, 100663296, 33554432, 4060086272, 2852126720,
                1040187392, 3120562176, 3053453312, 1778384896,
            ],
        ),
        (
            1000,
            [
                943718400, 415236096, 2227175424, 2906652672, 1203765248, 3896508416, 197132288,
                3862953984, 2151677952, 297795584, 364904448, 1094713344, 692060160, 1648361472,
                616562688, 1589641216, 3091202048, 1480589312, 4257218560, 3116367872, 2243952640,
                2361393152, 4081057792, 2319450112, 2503999488, 3896508416, 171966464, 4206886912,
                255852544, 1463812096, 633339904, 624951296,
            ],
        ),
        (
            12345,
            [
                2752774144, 3493593088, 688652288, 2262564864, 3816030208, 252968960, 546570240,
                486801408, 3443785728, 1845231616, 319029248, 2571894784, 3998482432, 4045144064,
                148111360, 2752249856, 268697600, 218890240, 1371799552, 1475084288, 855900160,
                348913664, 2607022080, 3705405440, 1895563264, 1270087680, 1572077568, 2070151168,
                376700928, 1737228288, 1232338944, 2843475968,
            ],
        ),
    ];

    #[test]
    fn points_match_scipy() {
        for (n, row) in SCIPY {
            for (d, &x) in row.iter().enumerate() {
                assert_eq!(coordinate(n, d), x, "point {n}, dimension {d}");
            }
        }
        assert!((0..MAX_DIMENSIONS).all(|d| coordinate(0, d) == 0));
        assert!((0..MAX_DIMENSIONS).all(|d| coordinate(1, d) == 1 << 31));
    }

    #[test]
    fn every_elementary_interval_of_the_first_points_holds_one() {
        // The defining property of a (t, s)-sequence in base 2 for one dimension (t = 0): the
        // first 2^m points put exactly one point in each interval [j/2^m, (j+1)/2^m).
        for d in 0..MAX_DIMENSIONS {
            for m in [4u32, 8, 10] {
                let mut seen = vec![false; 1 << m];
                for n in 0..(1u64 << m) {
                    let j = (coordinate(n, d) >> (32 - m)) as usize;
                    assert!(!seen[j], "dimension {d}, 2^{m} points: interval {j} twice");
                    seen[j] = true;
                }
            }
        }
    }
}
