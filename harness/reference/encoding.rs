//! Transfer and encoding functions: the sRGB transfer curve, the octahedral encoding of
//! unit vectors, and a fitted filmic tone curve.

use super::vec3::{normalize, Vec3};

/// The sRGB encoding (linear light to the non-linear signal).
///
/// Formula: `12.92 x` for `x ≤ 0.0031308`, else `1.055 x^(1/2.4) - 0.055`.
///
/// Domain: `x` in `0 ..= 1` (values below 0 take the linear branch; above 1 the power
/// branch, as written). Edges: 0 at 0, 1 at 1 (to within `1.055 - 0.055` rounding: exactly
/// 1 in f64); the two branches meet at the threshold to about 1e-7 (the standard's rounded
/// constants; tested).
///
/// Source: IEC 61966-2-1:1999, "Multimedia systems and equipment - Colour measurement and
/// management - Part 2-1: Default RGB colour space - sRGB".
pub fn srgb_encode(x: f64) -> f64 {
    if x <= 0.0031308 {
        12.92 * x
    } else {
        1.055 * x.powf(1.0 / 2.4) - 0.055
    }
}

/// The sRGB decoding (the signal to linear light), the inverse of [`srgb_encode`].
///
/// Formula: `x / 12.92` for `x ≤ 0.04045`, else `((x + 0.055) / 1.055)^2.4`.
///
/// Domain: `x` in `0 ..= 1`. Edges: 0 at 0, 1 at 1. The standard's thresholds 0.04045 and
/// 0.0031308 are not exact images of each other (`0.0031308 · 12.92 = 0.04044994`), so the
/// round trip is exact only to about 1e-7 near the threshold and to f64 rounding elsewhere
/// (tested).
///
/// Source: IEC 61966-2-1:1999.
pub fn srgb_decode(x: f64) -> f64 {
    if x <= 0.04045 {
        x / 12.92
    } else {
        ((x + 0.055) / 1.055).powf(2.4)
    }
}

/// `±1` with the sign of `x`, `+1` at zero (the octahedral papers' `signNotZero`).
fn sign_not_zero(x: f64) -> f64 {
    if x >= 0.0 {
        1.0
    } else {
        -1.0
    }
}

/// Octahedral encoding of a unit vector into the square `[-1, 1]²`.
///
/// Formula: `p = (x, y) / (|x| + |y| + |z|)`; for `z < 0` the lower half is folded over
/// the diagonals: `p = ((1 - |p.y|) signNotZero(p.x), (1 - |p.x|) signNotZero(p.y))`.
///
/// Domain: a non-zero vector (its direction is encoded; a unit vector is expected).
/// Edges: `+z` maps to the centre `(0, 0)`; `-z` to the corner `(1, 1)` (all four corners
/// decode to `-z`); the equator to the diamond `|u| + |v| = 1`. The zero vector gives NaN.
///
/// Source: Z. H. Cigolle, S. Donow, D. Evangelakos, M. Mara, M. McGuire, Q. Meyer, "A
/// Survey of Efficient Representations for Independent Unit Vectors", Journal of Computer
/// Graphics Techniques 3(2), 2014.
pub fn octahedral_encode(n: Vec3) -> [f64; 2] {
    let l1 = n[0].abs() + n[1].abs() + n[2].abs();
    let (px, py) = (n[0] / l1, n[1] / l1);
    if n[2] < 0.0 {
        [
            (1.0 - py.abs()) * sign_not_zero(px),
            (1.0 - px.abs()) * sign_not_zero(py),
        ]
    } else {
        [px, py]
    }
}

/// Octahedral decoding of a point of `[-1, 1]²` to a unit vector, the inverse of
/// [`octahedral_encode`].
///
/// Formula: `v = (u, w, 1 - |u| - |w|)`; for `v.z < 0`,
/// `(v.x, v.y) = ((1 - |w|) signNotZero(u), (1 - |u|) signNotZero(w))`; then normalise.
///
/// Domain: `u`, `w` in `-1 ..= 1`. Edges: the centre decodes to `+z`, every corner to
/// `-z`, the diamond `|u| + |w| = 1` to the equator. The round trip through
/// [`octahedral_encode`] returns the input to f64 rounding (tested over the sphere).
///
/// Source: Cigolle et al. 2014, as above.
pub fn octahedral_decode(u: f64, w: f64) -> Vec3 {
    let z = 1.0 - u.abs() - w.abs();
    let (x, y) = if z < 0.0 {
        (
            (1.0 - w.abs()) * sign_not_zero(u),
            (1.0 - u.abs()) * sign_not_zero(w),
        )
    } else {
        (u, w)
    };
    normalize([x, y, z])
}

/// A fitted filmic tone curve: `saturate(x (2.51 x + 0.03) / (x (2.43 x + 0.59) + 0.14))`.
///
/// Domain: `x ≥ 0` (scene-referred linear light). Edges: 0 at 0; slope `0.03 / 0.14` at
/// 0; tends to `2.51 / 2.43 > 1` for large `x`, so it saturates at 1 (reached at
/// `x = (0.56 + sqrt(0.3584)) / 0.16 ≈ 7.24`). The source's rational fit was made for input pre-scaled by about 0.6; the
/// model is the curve as written, without that exposure.
///
/// Source: K. Narkowicz, web article on a fitted filmic tone-mapping curve, 2015 (the
/// coefficients are quoted from memory of it: common practice).
pub fn filmic_narkowicz(x: f64) -> f64 {
    (x * (2.51 * x + 0.03) / (x * (2.43 * x + 0.59) + 0.14)).clamp(0.0, 1.0)
}
