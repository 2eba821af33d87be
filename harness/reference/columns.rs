//! Column forms of the models a check evaluates most: the same function as the registry's
//! per-point [`Model::eval`](super::Model), run over whole columns of arguments.
//!
//! A check compares its function with a reference at every point of a sweep, so the
//! reference's per-point cost bounds a check's speed. Called point by point through the
//! registry's function pointer, a model's `sqrt`s and divisions run one at a time, each
//! waiting on the last. Here the per-point function is inlined into one loop over the columns,
//! with the model's configuration a constant, so the compiler turns the loop into vector
//! instructions (on x86-64 also copies compiled for AVX2 and for AVX-512, the widest the
//! machine has chosen at run time). Nothing is rewritten: the loop body *is* the model's own
//! function, so every IEEE operation is the same, in the same order, and gives the same
//! bits. `tests::every_width_matches_the_registry` checks that bit for bit for every entry
//! here at every width the machine runs, NaNs and the points below the horizon included, at
//! several column lengths.
//!
//! A model without a column form is evaluated point by point; [`find`] says which have one.

use super::brdf::CookTorrance;
use super::{fresnel, masking, ndf};
use crate::widths::{at_widths, Runs};

/// Evaluates a model over columns: `args[k]` is the column of flattened argument `k` (as
/// [`Model::eval`](super::Model) numbers them), `out[j]` of output `j`; every column has
/// `out[0].len()` values or more, and only that many are read and written.
pub type ColumnsFn = fn(args: &[&[f64]], out: &mut [&mut [f64]]);

/// The column form of the model registered as `name`, if it has one.
pub fn find(name: &str) -> Option<ColumnsFn> {
    TABLE.iter().find(|(n, ..)| *n == name).map(|&(_, f, _)| f)
}

/// The names of the models that have a column form.
pub fn names() -> impl Iterator<Item = &'static str> {
    TABLE.iter().map(|&(n, ..)| n)
}

/// Defines module `$name`: `columns`, a [`ColumnsFn`] for a model with `$arity` flattened
/// arguments and `$outs` outputs whose value at one point is `$body` (an `[f64; $outs]`,
/// computed from `$a: [f64; $arity]`), compiled for the baseline target and, on x86-64,
/// with AVX2 and with AVX-512 enabled ([`at_widths!`]), run at the widest the machine has;
/// and `at`, the same run at a given width. IEEE operations give the same bits at any
/// vector width, so the choice never changes a result
/// (`tests::every_width_matches_the_registry`).
macro_rules! columns {
    ($name:ident, $arity:literal, $outs:literal, |$a:ident| $body:expr) => {
        mod $name {
            use super::*;

            /// The model at every point of one block: `res[j][i]` is
            /// output `j` at the point whose arguments are `cols[k][i]`.
            #[inline(always)]
            fn block(cols: [&[f64; BLOCK]; $arity], res: &mut [[f64; BLOCK]; $outs]) {
                for i in 0..BLOCK {
                    let mut $a = [0.0; $arity];
                    for (x, c) in $a.iter_mut().zip(&cols) {
                        *x = c[i];
                    }
                    let r: [f64; $outs] = $body;
                    for (o, v) in res.iter_mut().zip(r) {
                        o[i] = v;
                    }
                }
            }

            at_widths! {
                /// The model over the columns, compiled for `at`.
                pub(super) fn at(at: Runs, args: &[&[f64]], out: &mut [&mut [f64]]) {
                    // Whole blocks of `BLOCK` points read the argument columns
                    // in place, as arrays of the block's length (no bounds to
                    // check), and write into a local array, which the compiler
                    // knows aliases nothing, so the loop over a block
                    // vectorises. A short last block is copied into local
                    // arrays first; the lanes past its end are computed but not
                    // written out.
                    let n = out[0].len();
                    let mut res = [[0.0f64; BLOCK]; $outs];
                    let mut start = 0;
                    while start + BLOCK <= n {
                        let end = start + BLOCK;
                        block(
                            std::array::from_fn(|k| {
                                args[k][start..end].try_into().expect("a block's length")
                            }),
                            &mut res,
                        );
                        for (o, r) in out.iter_mut().zip(&res) {
                            o[start..end].copy_from_slice(r);
                        }
                        start = end;
                    }
                    if start < n {
                        let mut ins = [[0.0f64; BLOCK]; $arity];
                        for (x, c) in ins.iter_mut().zip(args) {
                            x[..n - start].copy_from_slice(&c[start..n]);
                        }
                        block(std::array::from_fn(|k| &ins[k]), &mut res);
                        for (o, r) in out.iter_mut().zip(&res) {
                            o[start..n].copy_from_slice(&r[..n - start]);
                        }
                    }
                }
            }

            /// The widest form this machine runs.
            pub(super) fn columns(args: &[&[f64]], out: &mut [&mut [f64]]) {
                at(Runs::best(), args, out)
            }
        }
    };
}

/// Points per block of the column loops.
const BLOCK: usize = 64;

/// The first three arguments from `k` as a vector.
#[inline(always)]
fn v3(a: &[f64], k: usize) -> [f64; 3] {
    [a[k], a[k + 1], a[k + 2]]
}

/// A Cook-Torrance configuration over its registry arguments
/// `(n, v, l, base_color, metallic, roughness)`.
#[inline(always)]
fn cook_torrance(m: &CookTorrance, a: &[f64; 14]) -> [f64; 3] {
    m.eval(v3(a, 0), v3(a, 3), v3(a, 6), v3(a, 9), a[12], a[13])
}

columns!(cook_torrance_rgb, 14, 3, |a| cook_torrance(
    &CookTorrance::STANDARD,
    &a
));
columns!(cook_torrance_burley_rgb, 14, 3, |a| cook_torrance(
    &CookTorrance::BURLEY,
    &a
));
columns!(cook_torrance_f90_from_f0_rgb, 14, 3, |a| cook_torrance(
    &CookTorrance::F90_FROM_F0,
    &a
));
columns!(cook_torrance_fast_rgb, 14, 3, |a| cook_torrance(
    &CookTorrance::FAST_VISIBILITY,
    &a
));
columns!(cook_torrance_specular, 10, 1, |a| {
    let f = CookTorrance::SPECULAR_ONLY.eval(v3(&a, 0), v3(&a, 3), v3(&a, 6), [1.0; 3], 0.0, a[9]);
    [f[0]]
});
columns!(ggx_ndf, 2, 1, |a| [ndf::ggx(a[0], a[1])]);
columns!(smith_ggx_v_height_correlated, 3, 1, |a| [
    masking::ggx_v_height_correlated(a[0], a[1], a[2])
]);
columns!(schlick_fresnel, 2, 1, |a| [fresnel::schlick(a[0], a[1])]);
columns!(schlick_fresnel_rgb, 4, 3, |a| fresnel::schlick_rgb(
    a[0],
    v3(&a, 1)
));

/// A model's column form, and the same run at a given width.
type Entry = (
    &'static str,
    ColumnsFn,
    fn(Runs, &[&[f64]], &mut [&mut [f64]]),
);

/// The [`Entry`] of each module defined by [`columns!`], named by it.
macro_rules! table {
    ($($name:ident),* $(,)?) => {
        &[$((stringify!($name), $name::columns, $name::at)),*]
    };
}

/// Every column form, by registry name (the module's own).
const TABLE: &[Entry] = table![
    cook_torrance_rgb,
    cook_torrance_burley_rgb,
    cook_torrance_f90_from_f0_rgb,
    cook_torrance_fast_rgb,
    cook_torrance_specular,
    ggx_ndf,
    smith_ggx_v_height_correlated,
    schlick_fresnel,
    schlick_fresnel_rgb,
];

#[cfg(test)]
mod tests {
    use super::*;

    /// A small deterministic generator (xorshift64), so failures reproduce.
    fn next(s: &mut u64) -> u64 {
        *s ^= *s << 13;
        *s ^= *s >> 7;
        *s ^= *s << 17;
        *s
    }

    /// An argument value: mostly uniform in `-0.25 ..= 1.25` (so vectors point below the
    /// surface too and colours leave `0 ..= 1`), sometimes an edge: 0, ±1, a NaN, ±∞, a
    /// subnormal.
    fn value(s: &mut u64) -> f64 {
        let r = next(s);
        match r % 64 {
            0 => 0.0,
            1 => 1.0,
            2 => -1.0,
            3 => f64::NAN,
            4 => f64::INFINITY,
            5 => f64::NEG_INFINITY,
            6 => f64::MIN_POSITIVE / 8.0,
            _ => -0.25 + 1.5 * ((r >> 11) as f64 / (1u64 << 53) as f64),
        }
    }

    /// The same bits, or both NaN. Rust leaves the sign and payload of a NaN that arithmetic
    /// makes unspecified (the `f64` documentation, "NaN bit patterns"): a vector instruction
    /// and a scalar one, or one operand order and the other, may give different NaNs. The
    /// comparison stage reads a reference NaN as NaN whatever its bits
    /// (`compare::same_nonfinite`), so that difference never reaches a verdict.
    fn same(a: f64, b: f64) -> bool {
        a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan())
    }

    #[test]
    fn every_width_matches_the_registry() {
        // Lengths below, at and across the block size, so partial blocks run too.
        let lengths = [1, BLOCK - 1, BLOCK, 3 * BLOCK + 5, 4000];
        let mut seed = 0x5eed_0017_u64;
        for &(name, chosen, at) in TABLE {
            let model = crate::reference::find(name)
                .unwrap_or_else(|| panic!("column form `{name}` names no registered model"));
            let mut forms: Vec<(String, Option<Runs>)> = Runs::all()
                .into_iter()
                .map(|w| (format!("{:?}", w.width()), Some(w)))
                .collect();
            forms.push(("chosen".into(), None));
            for &n in &lengths {
                let args: Vec<Vec<f64>> = (0..model.arity())
                    .map(|_| (0..n).map(|_| value(&mut seed)).collect())
                    .collect();
                let cols: Vec<&[f64]> = args.iter().map(|c| &c[..]).collect();
                for (width, f) in &forms {
                    let mut got: Vec<Vec<f64>> = vec![vec![0.0; n]; model.outputs];
                    let mut outs: Vec<&mut [f64]> = got.iter_mut().map(|c| &mut c[..]).collect();
                    match f {
                        Some(w) => at(*w, &cols, &mut outs),
                        None => chosen(&cols, &mut outs),
                    }
                    for i in 0..n {
                        let point: Vec<f64> = args.iter().map(|c| c[i]).collect();
                        let want = model.call(&point);
                        for (j, w) in want.iter().enumerate() {
                            assert!(
                                same(got[j][i], *w),
                                "`{name}` ({width}) output {j} at {point:?}: column form {} vs per point {w}",
                                got[j][i]
                            );
                        }
                    }
                }
            }
        }
    }
}
