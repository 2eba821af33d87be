//! The texture op: WGSL's texture built-ins on a bound look-up table, per
//! lane. Lowering (`lower/texture.rs`) emits it, the verifier checks its
//! slots like any op's, and the executor calls [`TextureOp::run`] with
//! copies of its operand columns, so it needs no `unsafe` of its own.

use std::sync::Arc;

use super::exec::{RawIssue, RawKind};
use super::ir::{At, Slot};
use super::lanes::{Lanes, LANES};
use crate::table::{sample, Sampler, Table};

/// `textureSampleLevel` / `textureSample` / `textureLoad` on a
/// `texture_2d<f32>` bound to a look-up table: `dst` (the four channels of
/// the `vec4<f32>` result) from `coords` and `level`, per lane, as
/// [`crate::table::sample`] defines them.
#[derive(Clone)]
pub(crate) struct TextureOp {
    pub table: Arc<Table>,
    pub access: TextureAccess,
    /// `u`, `v` (f32) when sampling; `x`, `y` (i32 or u32) when loading.
    pub coords: [Slot; 2],
    /// The level: f32 when sampling, i32 or u32 when loading; `None`: 0.
    pub level: Option<Slot>,
    pub dst: [Slot; 4],
    /// Lanes whose out-of-bounds loads are reported.
    pub mask: Slot,
    pub at: At,
}

#[derive(Clone, Copy, Debug)]
pub(crate) enum TextureAccess {
    Sample(Sampler),
    /// Whether the coordinates and the level are signed (`i32`).
    Load {
        coords_signed: bool,
        level_signed: bool,
    },
}

impl TextureOp {
    /// The operand slots the op reads.
    pub fn operands(&self) -> Vec<Slot> {
        let mut v = vec![self.coords[0], self.coords[1], self.mask];
        v.extend(self.level);
        v
    }

    /// The four result columns, from the operand columns `read` gives (each
    /// copied out whole before anything is written, so the caller may write
    /// the destinations afterwards); out-of-bounds loads read `(0, 0, 0, 0)`
    /// and are reported for lanes in `mask` (WGSL allows that result; see
    /// [`crate::table::sample`]).
    pub fn run(&self, read: impl Fn(Slot) -> Lanes, issues: &mut Vec<RawIssue>) -> [Lanes; 4] {
        let (u, v, mask) = (read(self.coords[0]), read(self.coords[1]), read(self.mask));
        let level = self.level.map(read);
        let mut out = [[0u32; LANES]; 4];
        for lane in 0..LANES {
            let texel = match self.access {
                TextureAccess::Sample(s) => {
                    let l = level.map_or(0.0, |l| f32::from_bits(l[lane]));
                    sample::sample(
                        &self.table,
                        &s,
                        f32::from_bits(u[lane]),
                        f32::from_bits(v[lane]),
                        l,
                    )
                }
                TextureAccess::Load {
                    coords_signed,
                    level_signed,
                } => {
                    let int = |bits: u32, signed: bool| {
                        if signed {
                            i64::from(bits as i32)
                        } else {
                            i64::from(bits)
                        }
                    };
                    let (x, y) = (int(u[lane], coords_signed), int(v[lane], coords_signed));
                    let l = level.map_or(0, |l| int(l[lane], level_signed));
                    match sample::load(&self.table, x, y, l) {
                        Some(t) => t,
                        None => {
                            if mask[lane] != 0 {
                                issues.push(RawIssue {
                                    lane,
                                    at: self.at,
                                    kind: RawKind::OutOfBounds,
                                    detail: format!(
                                        "textureLoad at texel ({x}, {y}) level {l} is outside \
                                         the {} × {} table with one level; read as (0, 0, 0, 0)",
                                        self.table.width(),
                                        self.table.height()
                                    ),
                                });
                            }
                            [0.0; 4]
                        }
                    }
                }
            };
            for (c, o) in out.iter_mut().enumerate() {
                o[lane] = texel[c].to_bits();
            }
        }
        out
    }
}
