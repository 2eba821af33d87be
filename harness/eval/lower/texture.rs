//! Lowering of WGSL's texture built-ins on `texture_2d<f32>` variables the
//! check binds to look-up tables (`textureSampleLevel`, `textureSample`,
//! `textureLoad`) into [`Op::Texture`]. Everything else that touches a
//! texture stays a located "not supported" error, and so does a texture the
//! check does not bind.

use naga::{Expression as E, Handle};

use super::{Frame, Item, Lowered, Val};
use crate::eval::ir::Op;
use crate::eval::texture::{TextureAccess, TextureOp};
use crate::table::Bound;
use crate::values::{ScalarKind as K, Ty};

impl<'m> super::Compiler<'m> {
    /// Lower an `ImageSample` or `ImageLoad` expression.
    pub(super) fn texture(
        &mut self,
        frame: &mut Frame<'m>,
        expr: &'m E,
        out: &mut Vec<Op>,
    ) -> Lowered<Item> {
        let (image, coordinate, level, access, what) = match *expr {
            E::ImageSample {
                image,
                sampler,
                gather,
                coordinate,
                array_index,
                offset,
                ref level,
                depth_ref,
                clamp_to_edge,
            } => {
                let name = super::unsupported::sample_name(
                    gather.is_some(),
                    level,
                    depth_ref.is_some(),
                    clamp_to_edge,
                );
                let level = match level {
                    naga::SampleLevel::Auto | naga::SampleLevel::Zero => None,
                    naga::SampleLevel::Exact(h) => Some(*h),
                    _ => return Err(self.unsupported(name)),
                };
                if gather.is_some() || depth_ref.is_some() || clamp_to_edge {
                    return Err(self.unsupported(name));
                }
                if array_index.is_some() || offset.is_some() {
                    return Err(
                        self.unsupported(&format!("{name} with an array index or a texel offset"))
                    );
                }
                let s = match self.bound(frame, sampler, name)? {
                    Bound::Sampler(s) => s,
                    Bound::Table(_) => {
                        return Err(self.err(
                            "the check binds a table to this sampler variable; \
                             bind it to a sampler description instead",
                        ))
                    }
                };
                (image, coordinate, level, TextureAccess::Sample(s), name)
            }
            E::ImageLoad {
                image,
                coordinate,
                array_index,
                sample,
                level,
            } => {
                if array_index.is_some() || sample.is_some() {
                    return Err(self.unsupported("`textureLoad` with an array or sample index"));
                }
                let signed = |c: &mut Self, h| -> Lowered<bool> {
                    Ok(c.expr_ty(frame, h)?.scalar_kind() == Some(K::I32))
                };
                let access = TextureAccess::Load {
                    coords_signed: signed(self, coordinate)?,
                    level_signed: match level {
                        Some(l) => signed(self, l)?,
                        None => true,
                    },
                };
                (image, coordinate, level, access, "`textureLoad`")
            }
            _ => unreachable!("texture() is called for texture expressions only"),
        };
        let table = match self.bound(frame, image, what)? {
            Bound::Table(t) => t,
            Bound::Sampler(_) => {
                return Err(self.err(
                    "the check binds a sampler description to this texture variable; \
                     bind it to a table instead",
                ))
            }
        };
        let c = self.value(frame, coordinate, out)?;
        let level = match level {
            Some(l) => Some(self.value(frame, l, out)?.slots[0]),
            None => None,
        };
        let dst = self.slots(4);
        let at = self.site("");
        let op = TextureOp {
            table,
            access,
            coords: [c.slots[0], c.slots[1]],
            level,
            dst: [dst[0], dst[1], dst[2], dst[3]],
            mask: self.current(),
            at,
        };
        self.emit(out, Op::Texture(Box::new(op)));
        Ok(Item::Value(Val {
            ty: Ty::Vector(4, K::F32),
            slots: dst,
        }))
    }

    /// What the check binds to the texture or sampler variable `h` refers to:
    /// a `texture_2d<f32>` or a non-comparison `sampler` declared at module
    /// scope. Anything else, or a variable the check does not bind, is not
    /// supported (located at the expression).
    fn bound(
        &mut self,
        frame: &Frame<'m>,
        h: Handle<naga::Expression>,
        what: &str,
    ) -> Lowered<Bound> {
        let E::GlobalVariable(g) = frame.func.expressions[h] else {
            return Err(self.unsupported(
                "a texture or sampler passed as a function argument (sample the module-scope \
                 variable directly)",
            ));
        };
        let gv = &self.module.global_variables[g];
        let name = gv.name.clone().unwrap_or_default();
        let ok_type = matches!(
            self.module.types[gv.ty].inner,
            naga::TypeInner::Image {
                dim: naga::ImageDimension::D2,
                arrayed: false,
                class: naga::ImageClass::Sampled {
                    kind: naga::ScalarKind::Float,
                    multi: false,
                },
            } | naga::TypeInner::Sampler { comparison: false }
        );
        if !ok_type {
            return Err(self.unsupported(&format!(
                "the resource `{name}` (only `texture_2d<f32>` and `sampler` variables can be \
                 bound to look-up tables)"
            )));
        }
        let binding = gv.binding.as_ref().map(|b| (b.group, b.binding));
        match self.bindings.find(gv.name.as_deref(), binding) {
            Some(b) => Ok(b.clone()),
            None => Err(self.err(format!(
                "{what} on the resource `{name}` (a texture or sampler binding) is not supported \
                 in CPU evaluation unless the check binds it (`[check.textures.{name}]` or \
                 `[check.samplers.{name}]`)"
            ))),
        }
    }
}
