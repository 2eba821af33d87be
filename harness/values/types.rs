//! The value types: the scalar kinds (f32, f16, i32, u32, bool) and the WGSL value types
//! built from them (vectors, matrices, arrays, structs). The evaluator's view of WGSL types: every value is flattened into scalar
//! "leaves" (vector components, matrix entries column-major, array elements,
//! struct members in declaration order), each leaf one slot column.

use std::fmt;

/// The scalar type of one leaf.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ScalarKind {
    F32,
    F16,
    I32,
    U32,
    Bool,
}

impl ScalarKind {
    pub fn is_float(self) -> bool {
        matches!(self, ScalarKind::F32 | ScalarKind::F16)
    }

    /// WGSL spelling.
    pub fn wgsl(self) -> &'static str {
        match self {
            ScalarKind::F32 => "f32",
            ScalarKind::F16 => "f16",
            ScalarKind::I32 => "i32",
            ScalarKind::U32 => "u32",
            ScalarKind::Bool => "bool",
        }
    }

    pub fn parse(s: &str) -> Option<ScalarKind> {
        Some(match s {
            "f32" => ScalarKind::F32,
            "f16" => ScalarKind::F16,
            "i32" => ScalarKind::I32,
            "u32" => ScalarKind::U32,
            "bool" => ScalarKind::Bool,
            _ => return None,
        })
    }
}

/// A WGSL value type the evaluator can hold.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Ty {
    Scalar(ScalarKind),
    Vector(u8, ScalarKind),
    Matrix {
        columns: u8,
        rows: u8,
        kind: ScalarKind,
    },
    Array(Box<Ty>, u32),
    Struct {
        name: String,
        members: Vec<(String, Ty)>,
    },
}

impl Ty {
    /// Number of scalar leaves.
    pub fn leaf_count(&self) -> usize {
        match self {
            Ty::Scalar(_) => 1,
            Ty::Vector(n, _) => *n as usize,
            Ty::Matrix { columns, rows, .. } => *columns as usize * *rows as usize,
            // Saturating: a nest of huge arrays is refused by the slot limit,
            // never wrapped around to a small count.
            Ty::Array(t, n) => t.leaf_count().saturating_mul(*n as usize),
            Ty::Struct { members, .. } => members
                .iter()
                .fold(0usize, |a, (_, t)| a.saturating_add(t.leaf_count())),
        }
    }

    /// Scalar kinds of all leaves, in storage order.
    pub fn leaves(&self) -> Vec<ScalarKind> {
        let mut out = Vec::with_capacity(self.leaf_count());
        self.push_leaves(&mut out);
        out
    }

    fn push_leaves(&self, out: &mut Vec<ScalarKind>) {
        match self {
            Ty::Scalar(k) => out.push(*k),
            Ty::Vector(n, k) => out.extend(std::iter::repeat_n(*k, *n as usize)),
            Ty::Matrix {
                columns,
                rows,
                kind,
            } => out.extend(std::iter::repeat_n(
                *kind,
                *columns as usize * *rows as usize,
            )),
            Ty::Array(t, n) => {
                for _ in 0..*n {
                    t.push_leaves(out)
                }
            }
            Ty::Struct { members, .. } => members.iter().for_each(|(_, t)| t.push_leaves(out)),
        }
    }

    /// Names of all leaves with `prefix`: `n.x`, `m[1].y`, `s.albedo.z`, `a[3]`.
    pub fn leaf_names(&self, prefix: &str) -> Vec<String> {
        let mut out = Vec::with_capacity(self.leaf_count());
        self.push_names(prefix, &mut out);
        out
    }

    fn push_names(&self, prefix: &str, out: &mut Vec<String>) {
        const XYZW: [&str; 4] = ["x", "y", "z", "w"];
        match self {
            Ty::Scalar(_) => out.push(prefix.to_string()),
            Ty::Vector(n, _) => {
                out.extend(XYZW[..*n as usize].iter().map(|c| format!("{prefix}.{c}")))
            }
            Ty::Matrix { columns, rows, .. } => {
                for c in 0..*columns {
                    for r in &XYZW[..*rows as usize] {
                        out.push(format!("{prefix}[{c}].{r}"));
                    }
                }
            }
            Ty::Array(t, n) => {
                for i in 0..*n {
                    t.push_names(&format!("{prefix}[{i}]"), out)
                }
            }
            Ty::Struct { members, .. } => {
                for (name, t) in members {
                    t.push_names(&format!("{prefix}.{name}"), out)
                }
            }
        }
    }

    /// The scalar kind when every leaf has the same one (scalars, vectors, matrices).
    pub fn scalar_kind(&self) -> Option<ScalarKind> {
        match self {
            Ty::Scalar(k) | Ty::Vector(_, k) | Ty::Matrix { kind: k, .. } => Some(*k),
            _ => None,
        }
    }
}

impl Ty {
    /// The evaluator's type for naga type `h` of `module`, or why it has none.
    /// The messages say what is not supported; callers add where.
    pub fn from_naga(module: &naga::Module, h: naga::Handle<naga::Type>) -> Result<Ty, String> {
        let t = &module.types[h];
        Self::from_naga_inner(module, &t.inner, t.name.as_deref())
    }

    /// [`Ty::from_naga`] for a type known only by value (a type resolution
    /// without a handle); a struct is then looked up in the module's types.
    pub fn from_naga_inner(
        module: &naga::Module,
        inner: &naga::TypeInner,
        name: Option<&str>,
    ) -> Result<Ty, String> {
        use naga::{ScalarKind as NK, TypeInner as TI};
        let kind = |s: naga::Scalar| -> Result<ScalarKind, String> {
            Ok(match (s.kind, s.width) {
                (NK::Float, 4) => ScalarKind::F32,
                (NK::Float, 2) => ScalarKind::F16,
                (NK::Sint, 4) => ScalarKind::I32,
                (NK::Uint, 4) => ScalarKind::U32,
                (NK::Bool, _) => ScalarKind::Bool,
                (NK::AbstractInt | NK::AbstractFloat, _) => return Err(
                    "an abstract numeric type that survived naga's concretisation is not supported"
                        .into(),
                ),
                (k, w) => return Err(format!("scalar type {k:?} of {w} bytes is not supported")),
            })
        };
        Ok(match inner {
            TI::Scalar(s) => Ty::Scalar(kind(*s)?),
            TI::Vector { size, scalar } => Ty::Vector(*size as u8, kind(*scalar)?),
            TI::Matrix { columns, rows, scalar } => {
                Ty::Matrix { columns: *columns as u8, rows: *rows as u8, kind: kind(*scalar)? }
            }
            TI::Array { base, size: naga::ArraySize::Constant(n), .. } => {
                Ty::Array(Box::new(Self::from_naga(module, *base)?), n.get())
            }
            TI::Array { .. } => return Err("runtime-sized or override-sized arrays are not supported".into()),
            TI::Struct { members, .. } => {
                let name = match name {
                    Some(n) => n.to_string(),
                    None => module
                        .types
                        .iter()
                        .find(|(_, t)| &t.inner == inner)
                        .and_then(|(_, t)| t.name.clone())
                        .unwrap_or_else(|| "struct".into()),
                };
                let mut ms = Vec::new();
                for (i, m) in members.iter().enumerate() {
                    ms.push((m.name.clone().unwrap_or_else(|| format!("m{i}")), Self::from_naga(module, m.ty)?));
                }
                Ty::Struct { name, members: ms }
            }
            TI::Image { .. } => return Err("texture types are not supported".into()),
            TI::Sampler { .. } => return Err("sampler types are not supported".into()),
            TI::Atomic(_) => return Err("atomic types are not supported".into()),
            TI::Pointer { .. } | TI::ValuePointer { .. } => {
                return Err("pointer parameters are not supported at the top level (call the function from a wrapper \
                            that owns the variable)"
                    .into())
            }
            other => return Err(format!("type {other:?} is not supported")),
        })
    }
}

impl fmt::Display for Ty {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Ty::Scalar(k) => f.write_str(k.wgsl()),
            Ty::Vector(n, k) => write!(f, "vec{n}<{}>", k.wgsl()),
            Ty::Matrix {
                columns,
                rows,
                kind,
            } => write!(f, "mat{columns}x{rows}<{}>", kind.wgsl()),
            Ty::Array(t, n) => write!(f, "array<{t}, {n}>"),
            Ty::Struct { name, .. } => f.write_str(name),
        }
    }
}
