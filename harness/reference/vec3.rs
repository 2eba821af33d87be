//! Three-component f64 vectors for the reference models.
//!
//! A vector is a plain `[f64; 3]` so that callers can pass array literals and so that the
//! registry's flattened argument lists map onto it without conversion. Only the handful of
//! operations the models need are here.

/// A three-component vector or RGB triple in f64.
pub type Vec3 = [f64; 3];

/// Dot product `a.x*b.x + a.y*b.y + a.z*b.z`.
#[inline]
pub fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Cross product `a × b` (right-handed).
#[inline]
pub fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Component-wise sum `a + b`.
#[inline]
pub fn add(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2]]
}

/// Component-wise difference `a - b`.
#[inline]
pub fn sub(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

/// Scalar multiple `s * a`.
#[inline]
pub fn scale(a: Vec3, s: f64) -> Vec3 {
    [a[0] * s, a[1] * s, a[2] * s]
}

/// Component-wise product `a * b` (used for RGB colours).
#[inline]
pub fn mul(a: Vec3, b: Vec3) -> Vec3 {
    [a[0] * b[0], a[1] * b[1], a[2] * b[2]]
}

/// Euclidean length `sqrt(dot(a, a))`.
#[inline]
pub fn length(a: Vec3) -> f64 {
    dot(a, a).sqrt()
}

/// `a / length(a)`.
///
/// The zero vector has no direction: it returns NaN components (0/0), which the models let
/// propagate rather than invent a direction.
#[inline]
pub fn normalize(a: Vec3) -> Vec3 {
    scale(a, 1.0 / length(a))
}

/// Linear interpolation `a + (b - a) * t`, component-wise, the GLSL/WGSL `mix`.
#[inline]
pub fn mix(a: Vec3, b: Vec3, t: f64) -> Vec3 {
    [
        a[0] + (b[0] - a[0]) * t,
        a[1] + (b[1] - a[1]) * t,
        a[2] + (b[2] - a[2]) * t,
    ]
}

/// Mirror reflection of the direction `d` about the unit normal `n`: `2 (n·d) n - d`.
///
/// Both `d` and the result point away from the surface (the convention of `v` and `l` in
/// the BRDFs); this is the negation of WGSL's `reflect(-d, n)`.
#[inline]
pub fn reflect_about(d: Vec3, n: Vec3) -> Vec3 {
    sub(scale(n, 2.0 * dot(n, d)), d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cross_of_basis_vectors_is_right_handed() {
        // Mathematical identity: x × y = z for a right-handed basis.
        assert_eq!(cross([1.0, 0.0, 0.0], [0.0, 1.0, 0.0]), [0.0, 0.0, 1.0]);
    }

    #[test]
    fn reflect_about_keeps_the_angle_to_the_normal() {
        // Identity: the mirror direction makes the same angle with n as the incident one.
        let n = [0.0, 0.0, 1.0];
        let d = normalize([0.3, -0.4, 0.8]);
        let r = reflect_about(d, n);
        assert!((dot(r, n) - dot(d, n)).abs() < 1e-15);
        assert!((r[0] + d[0]).abs() < 1e-15 && (r[1] + d[1]).abs() < 1e-15);
    }
}
