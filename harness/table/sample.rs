//! What WGSL's texture built-ins return for a `texture_2d<f32>` bound to a
//! [`Table`], under a WebGPU sampler described by [`Sampler`].
//!
//! Sources: WGSL, "Texture Built-in Functions" (`textureSample`,
//! `textureSampleLevel`, `textureLoad`); WebGPU, "GPUSamplerDescriptor"
//! (`addressModeU/V`, `magFilter`, `minFilter`) and its texel-coordinate rules,
//! which follow the filtering and wrapping operations of the Vulkan
//! specification ("Texel Filtering", "Wrapping Operation"; from memory of
//! that text: common practice on every WebGPU back end).
//!
//! - **Texel centres at half-integers.** A texture coordinate `u` in `[0, 1]`
//!   maps to `x = u · width` texels; texel `i` covers `[i, i + 1)` and its
//!   centre is `i + ½`, so `u = (i + ½) / width` reads texel `i` exactly.
//! - **Nearest**: texel `floor(u · width)`, then wrapped by the address mode.
//! - **Linear**: `x = u · width − ½`, `i0 = floor(x)`, `i1 = i0 + 1`, weight
//!   `α = x − i0`; both indices wrapped by the address mode, then the four
//!   texels blended bilinearly (`(1−α)(1−β) t00 + α(1−β) t10 + (1−α)β t01 +
//!   αβ t11`). Here the blend is computed in f64 and rounded to f32 once: the
//!   exact value. Hardware computes the weights in fixed point
//!   ([`Sampler::weight_bits`] emulates that; README "Look-up tables in
//!   place of textures" gives the size of the effect).
//! - **Address modes** act on integer texel indices `i` of an axis of `n`
//!   texels: clamp-to-edge `clamp(i, 0, n−1)`; repeat `i mod n`; mirror-repeat
//!   `m = i mod 2n`, then `m` if `m < n`, else `2n − 1 − m`.
//! - **Level.** A table has one mip level. `textureSampleLevel`'s level
//!   selects the magnification filter when it is `≤ 0` and the minification
//!   filter when it is `> 0` (Vulkan's rule, from memory); either way level 0
//!   is read, since the level is clamped to the levels present.
//!   `textureSample` has no derivatives on the CPU (one invocation per point,
//!   no quad): it is evaluated as `textureSampleLevel` at level 0, so the
//!   magnification filter applies. A GPU computes a level from the
//!   coordinate's screen-space derivatives, which is only 0 when the texture
//!   is magnified; that difference is the caller's to accept.
//! - **NaN coordinates** have no defined texel: every channel reads NaN (a
//!   choice; the spec leaves the result to the implementation).
//! - **`textureLoad`** reads texel `(x, y)` of level `level` unfiltered. Out of
//!   range (any coordinate outside `[0, size)` or a level other than 0) the
//!   WGSL spec ("textureLoad") lets an implementation return any in-bounds
//!   texel or `(0, 0, 0, 0)` or `(0, 0, 0, 1)`; [`load`] returns `None` and
//!   the evaluator reads `(0, 0, 0, 0)` and reports the point as out of
//!   bounds, as it does for an array index.

use super::Table;

/// Texel filtering of one sampler (`GPUFilterMode`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Filter {
    Nearest,
    Linear,
}

/// Addressing along one axis (`GPUAddressMode`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Address {
    ClampToEdge,
    Repeat,
    MirrorRepeat,
}

impl Address {
    /// Wrap texel index `i` into `0..n` (`n > 0`).
    pub fn wrap(self, i: i64, n: u32) -> u32 {
        let n = i64::from(n);
        let w = match self {
            Address::ClampToEdge => i.clamp(0, n - 1),
            Address::Repeat => i.rem_euclid(n),
            Address::MirrorRepeat => {
                let m = i.rem_euclid(2 * n);
                if m < n {
                    m
                } else {
                    2 * n - 1 - m
                }
            }
        };
        w as u32
    }

    /// The WebGPU spelling (`"clamp-to-edge"`, ...).
    pub fn name(self) -> &'static str {
        match self {
            Address::ClampToEdge => "clamp-to-edge",
            Address::Repeat => "repeat",
            Address::MirrorRepeat => "mirror-repeat",
        }
    }
}

impl Filter {
    /// The WebGPU spelling (`"nearest"`, `"linear"`).
    pub fn name(self) -> &'static str {
        match self {
            Filter::Nearest => "nearest",
            Filter::Linear => "linear",
        }
    }
}

/// The state of a WebGPU sampler that matters for a one-level 2D texture.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Sampler {
    pub mag_filter: Filter,
    pub min_filter: Filter,
    pub address_u: Address,
    pub address_v: Address,
    /// When set, linear filtering rounds each weight to a multiple of
    /// `2^-bits` first, as fixed-point filtering hardware does (Vulkan's
    /// `subTexelPrecisionBits`, at least 4, commonly 8). `None`: exact
    /// weights. At most [`MAX_WEIGHT_BITS`].
    pub weight_bits: Option<u8>,
}

/// The most fractional bits [`Sampler::weight_bits`] may ask for.
pub const MAX_WEIGHT_BITS: u8 = 24;

impl Default for Sampler {
    /// WebGPU's default sampler: nearest filtering, clamp-to-edge.
    fn default() -> Sampler {
        Sampler {
            mag_filter: Filter::Nearest,
            min_filter: Filter::Nearest,
            address_u: Address::ClampToEdge,
            address_v: Address::ClampToEdge,
            weight_bits: None,
        }
    }
}

/// `textureSampleLevel(t, s, vec2(u, v), level)` on a one-level `table`
/// (see the module documentation; `textureSample` is this at level 0).
pub fn sample(table: &Table, s: &Sampler, u: f32, v: f32, level: f32) -> [f32; 4] {
    if u.is_nan() || v.is_nan() {
        return [f32::NAN; 4];
    }
    let filter = if level > 0.0 {
        s.min_filter
    } else {
        s.mag_filter
    };
    let (w, h) = (table.width(), table.height());
    // Exact in f64: a 24-bit significand times a 32-bit integer.
    let x = f64::from(u) * f64::from(w);
    let y = f64::from(v) * f64::from(h);
    match filter {
        Filter::Nearest => {
            let i = s.address_u.wrap(index(x), w);
            let j = s.address_v.wrap(index(y), h);
            table.texel(i, j)
        }
        Filter::Linear => {
            let (x, y) = (x - 0.5, y - 0.5);
            let (i0, j0) = (index(x), index(y));
            let a = weight(frac(x), s.weight_bits);
            let b = weight(frac(y), s.weight_bits);
            let (ia, ib) = (
                s.address_u.wrap(i0, w),
                s.address_u.wrap(i0.saturating_add(1), w),
            );
            let (ja, jb) = (
                s.address_v.wrap(j0, h),
                s.address_v.wrap(j0.saturating_add(1), h),
            );
            let (t00, t10, t01, t11) = (
                table.texel(ia, ja),
                table.texel(ib, ja),
                table.texel(ia, jb),
                table.texel(ib, jb),
            );
            let mut out = [0f32; 4];
            for c in 0..4 {
                let f = |t: [f32; 4]| f64::from(t[c]);
                let r = (1.0 - a) * (1.0 - b) * f(t00)
                    + a * (1.0 - b) * f(t10)
                    + (1.0 - a) * b * f(t01)
                    + a * b * f(t11);
                out[c] = r as f32;
            }
            out
        }
    }
}

/// `floor(x)` as a texel index; infinities saturate (and then wrap like
/// any far index).
fn index(x: f64) -> i64 {
    x.floor() as i64
}

/// `x − floor(x)`; 0 for an infinite `x` (whose index saturates).
fn frac(x: f64) -> f64 {
    if x.is_finite() {
        x - x.floor()
    } else {
        0.0
    }
}

/// A filter weight in `[0, 1)`, rounded to `bits` fractional bits if asked
/// (to nearest, ties up: the result may be 1).
fn weight(a: f64, bits: Option<u8>) -> f64 {
    match bits {
        None => a,
        Some(b) => {
            let scale = f64::from(1u32 << b.min(MAX_WEIGHT_BITS));
            (a * scale + 0.5).floor() / scale
        }
    }
}

/// `textureLoad(t, vec2(x, y), level)`: the texel, or `None` when the
/// access is out of bounds (see the module documentation for what the
/// evaluator then reads).
pub fn load(table: &Table, x: i64, y: i64, level: i64) -> Option<[f32; 4]> {
    let inside = |i: i64, n: u32| (0..i64::from(n)).contains(&i);
    if level != 0 || !inside(x, table.width()) || !inside(y, table.height()) {
        return None;
    }
    Some(table.texel(x as u32, y as u32))
}

#[cfg(test)]
mod tests {
    //! Hand-computed values from the definitions in the module documentation
    //! (WGSL/WebGPU texel-coordinate rules), on a 4 × 2 table whose texels are
    //! distinct powers of two so every blend is exact in f32:
    //!
    //! ```text
    //! y = 0:  0   1   2   4
    //! y = 1:  8  16  32  64
    //! ```
    use super::*;
    use Address::*;

    fn table() -> Table {
        Table::new(4, 2, 1, vec![0., 1., 2., 4., 8., 16., 32., 64.]).unwrap()
    }

    fn sampler(filter: Filter, u: Address, v: Address) -> Sampler {
        Sampler {
            mag_filter: filter,
            min_filter: filter,
            address_u: u,
            address_v: v,
            weight_bits: None,
        }
    }

    #[track_caller]
    fn lin(mode: Address, u: f32, v: f32, want: f32) {
        let got = sample(&table(), &sampler(Filter::Linear, mode, mode), u, v, 0.0)[0];
        assert_eq!(got, want, "linear {mode:?} at ({u}, {v})");
    }

    #[track_caller]
    fn near(mode: Address, u: f32, v: f32, want: f32) {
        let got = sample(&table(), &sampler(Filter::Nearest, mode, mode), u, v, 0.0)[0];
        assert_eq!(got, want, "nearest {mode:?} at ({u}, {v})");
    }

    #[test]
    fn texel_centres_read_the_texel_in_every_mode() {
        let t = table();
        for mode in [ClampToEdge, Repeat, MirrorRepeat] {
            for y in 0..2 {
                for x in 0..4 {
                    let (u, v) = ((x as f32 + 0.5) / 4.0, (y as f32 + 0.5) / 2.0);
                    lin(mode, u, v, t.texel(x, y)[0]);
                    near(mode, u, v, t.texel(x, y)[0]);
                }
            }
        }
    }

    #[test]
    fn linear_between_centres_blends_bilinearly() {
        for mode in [ClampToEdge, Repeat, MirrorRepeat] {
            // x = 0.5, y = 0.5: the four texels (0,0), (1,0), (0,1), (1,1).
            lin(mode, 0.25, 0.5, (0. + 1. + 8. + 16.) / 4.);
            // x = 0.25 (α = ¼) on row 0: ¾ · 0 + ¼ · 1.
            lin(mode, 0.1875, 0.25, 0.25);
            // α = ¾ between texels 2 and 3 of row 1: ¼ · 32 + ¾ · 64.
            lin(mode, 0.8125, 0.75, 56.0);
        }
    }

    #[test]
    fn linear_edges_follow_the_address_mode() {
        // u = 0: x = -0.5, texels -1 and 0, α = ½; row 0. Clamp: (t0 + t0) / 2;
        // repeat: (t3 + t0) / 2; mirror: -1 mirrors to 0.
        lin(ClampToEdge, 0.0, 0.25, 0.0);
        lin(Repeat, 0.0, 0.25, 2.0);
        lin(MirrorRepeat, 0.0, 0.25, 0.0);
        // u = 1: x = 3.5, texels 3 and 4. Clamp: (t3 + t3) / 2; repeat:
        // (t3 + t0) / 2; mirror: 4 mirrors to 3.
        lin(ClampToEdge, 1.0, 0.25, 4.0);
        lin(Repeat, 1.0, 0.25, 2.0);
        lin(MirrorRepeat, 1.0, 0.25, 4.0);
        // v edges on column 1 (u = 0.375): rows -1/0 and 1/2.
        lin(ClampToEdge, 0.375, 0.0, 1.0);
        lin(Repeat, 0.375, 0.0, 8.5); // (t(1,1) + t(1,0)) / 2
        lin(MirrorRepeat, 0.375, 1.0, 16.0);
        lin(Repeat, 0.375, 1.0, 8.5);
    }

    #[test]
    fn linear_corners_follow_the_address_mode() {
        // (0, 0): texels x ∈ {-1, 0}, y ∈ {-1, 0}, all weights ¼.
        lin(ClampToEdge, 0.0, 0.0, 0.0);
        lin(Repeat, 0.0, 0.0, (64. + 8. + 4. + 0.) / 4.);
        lin(MirrorRepeat, 0.0, 0.0, 0.0);
        // (1, 1): x ∈ {3, 4}, y ∈ {1, 2}.
        lin(ClampToEdge, 1.0, 1.0, 64.0);
        lin(Repeat, 1.0, 1.0, (64. + 8. + 4. + 0.) / 4.);
        lin(MirrorRepeat, 1.0, 1.0, 64.0);
        // (1, 0): x ∈ {3, 4}, y ∈ {-1, 0}.
        lin(ClampToEdge, 1.0, 0.0, 4.0);
        lin(Repeat, 1.0, 0.0, (64. + 8. + 4. + 0.) / 4.);
        lin(MirrorRepeat, 1.0, 0.0, 4.0);
        // Per-axis modes: repeat along u, clamp along v, at (0, 0).
        let s = sampler(Filter::Linear, Repeat, ClampToEdge);
        assert_eq!(sample(&table(), &s, 0.0, 0.0, 0.0)[0], (4. + 0.) / 2.);
    }

    #[test]
    fn linear_beyond_the_edges() {
        // u = -0.25: x = -1.5, texels -2 and -1; u = 1.25: texels 4 and 5.
        lin(ClampToEdge, -0.25, 0.25, 0.0);
        lin(Repeat, -0.25, 0.25, (2. + 4.) / 2.);
        lin(MirrorRepeat, -0.25, 0.25, (1. + 0.) / 2.);
        lin(ClampToEdge, 1.25, 0.25, 4.0);
        lin(Repeat, 1.25, 0.25, (0. + 1.) / 2.);
        lin(MirrorRepeat, 1.25, 0.25, (4. + 2.) / 2.);
        // Far away: u = 2 is x = 7.5, texels 7 and 8 (repeat: 3 and 0;
        // mirror: 7 mod 8 = 7 → 0, 8 mod 8 = 0 → 0).
        lin(Repeat, 2.0, 0.25, (4. + 0.) / 2.);
        lin(MirrorRepeat, 2.0, 0.25, 0.0);
        lin(ClampToEdge, 2.0, 0.25, 4.0);
    }

    #[test]
    fn nearest_picks_the_covering_texel_and_wraps_it() {
        near(ClampToEdge, 0.3, 0.6, 16.0); // floor(1.2), floor(1.2)
        near(ClampToEdge, -0.1, 0.25, 0.0); // texel -1
        near(Repeat, -0.1, 0.25, 4.0);
        near(MirrorRepeat, -0.1, 0.25, 0.0);
        near(ClampToEdge, 1.0, 0.25, 4.0); // texel 4
        near(Repeat, 1.0, 0.25, 0.0);
        near(MirrorRepeat, 1.0, 0.25, 4.0);
        near(Repeat, -0.3, 0.25, 2.0); // texel -2
        near(MirrorRepeat, -0.3, 0.25, 1.0);
        near(Repeat, 0.0, 1.0, 0.0); // corner (0, 1): texel (0, 2) → (0, 0)
        near(MirrorRepeat, 0.0, 1.0, 8.0); // row 2 mirrors to row 1
        near(ClampToEdge, 1.0, 1.0, 64.0);
    }

    #[test]
    fn level_picks_mag_or_min_filter_and_reads_level_zero() {
        let s = Sampler {
            mag_filter: Filter::Linear,
            min_filter: Filter::Nearest,
            ..Sampler::default()
        };
        assert_eq!(sample(&table(), &s, 0.25, 0.25, 0.0)[0], 0.5);
        assert_eq!(sample(&table(), &s, 0.25, 0.25, -1.0)[0], 0.5);
        assert_eq!(sample(&table(), &s, 0.25, 0.25, 3.0)[0], 1.0); // floor(1.0)
    }

    #[test]
    fn missing_channels_and_nan() {
        let t = Table::new(1, 1, 2, vec![0.5, 0.25]).unwrap();
        let s = sampler(Filter::Linear, Repeat, Repeat);
        assert_eq!(sample(&t, &s, 0.7, 0.1, 0.0), [0.5, 0.25, 0.0, 1.0]);
        assert!(sample(&t, &s, f32::NAN, 0.1, 0.0)
            .iter()
            .all(|c| c.is_nan()));
        // Infinite coordinates saturate and wrap: some texel, never a panic.
        assert_eq!(sample(&t, &s, f32::INFINITY, 0.1, 0.0)[0], 0.5);
    }

    #[test]
    fn weight_bits_round_the_weights() {
        let s = Sampler {
            weight_bits: Some(2),
            ..sampler(Filter::Linear, ClampToEdge, ClampToEdge)
        };
        // α = 0.3 (x = 0.3 + 0.5 - 0.5): rounds to 0.25; row 0 texels 0, 1.
        let u = 0.8 / 4.0;
        assert_eq!(sample(&table(), &s, u, 0.25, 0.0)[0], 0.25);
        let exact = sample(
            &table(),
            &sampler(Filter::Linear, ClampToEdge, ClampToEdge),
            u,
            0.25,
            0.0,
        );
        assert!((exact[0] - 0.3).abs() < 1e-6);
    }

    #[test]
    fn load_reads_texels_and_refuses_out_of_range() {
        let t = table();
        assert_eq!(load(&t, 3, 1, 0).unwrap()[0], 64.0);
        assert_eq!(load(&t, 0, 0, 0).unwrap(), [0.0, 0.0, 0.0, 1.0]);
        assert_eq!(load(&t, 4, 0, 0), None);
        assert_eq!(load(&t, -1, 0, 0), None);
        assert_eq!(load(&t, 0, 2, 0), None);
        assert_eq!(load(&t, 0, 0, 1), None);
    }
}
