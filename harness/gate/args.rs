//! Binding a check's argument expressions to the parameters of a WGSL
//! function of any value type: every input leaf of the function gets one
//! f64 column of one bound expression (or zeros).
//!
//! What a parameter can be given, for `fn shade(m: Material, ...)` with
//! `struct Material { base: vec3<f32>, roughness: f32 }`:
//!
//! - the whole value by a constructor: `m = "Material(vec3(albedo), r * r)"`,
//!   `c = "vec4(color, 1)"`, `uv = "vec2(u, 0.5)"`, `n = "vec3(0.5)"` (the
//!   splat), `xf = "mat3x3(t, b, n)"` (columns) or nine scalars,
//!   `w = "array(0.2, 0.3, 0.5)"`; parts are expressions (scalars or
//!   3-vectors) or constructors in turn, nested as deep as the type;
//! - a part by its path, the way `shadegate eval` names leaves:
//!   `"m.base" = "vec3(albedo)"`, `"m.roughness" = "r"`, `"xf[2]" = "n"`
//!   (a matrix column), `"w[0]" = "0.2"` (an array element);
//! - nothing: a scalar or vector at the top level takes the sweep parameter
//!   of its name; a struct field takes the sweep parameter named like the
//!   field (`roughness`) when nothing else binds it;
//! - a `ptr<function, T>` parameter is read back as outputs; its initial
//!   value is bound the same way, and is zero (what a fresh `var` holds)
//!   when nothing binds it.
//!
//! Every problem is an [`ArgError`] naming the `args` key (when one is to
//! blame), the parameter path, its type and what was given; the gate places
//! it at the key's line of the suite.

use std::collections::{BTreeMap, BTreeSet};

use crate::sweep::{expr::BoundExpr, Expr, Points, Value};
use crate::values::{ScalarKind, Ty};

/// Where one input leaf's values come from.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Leaf {
    /// Column `k` of the bound expressions' columns, concatenated in order.
    Column(usize),
    /// Zero at every point (an out-parameter's initial value).
    Zero,
}

/// The bound expressions and, per input leaf of the function, its source.
pub struct Inputs {
    pub exprs: Vec<BoundExpr>,
    pub leaves: Vec<Leaf>,
}

/// A problem with a check's arguments, and the `args` key it concerns.
#[derive(Debug, Clone, PartialEq)]
pub struct ArgError {
    pub key: Option<String>,
    pub message: String,
}

impl std::fmt::Display for ArgError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match &self.key {
            Some(k) => write!(f, "key `args.{k}`: {}", self.message),
            None => f.write_str(&self.message),
        }
    }
}

/// The root parameter of an `args` key: `m` for `m.base`, `xf` for `xf[1]`.
pub fn root_of(key: &str) -> &str {
    key.split(['.', '[']).next().unwrap_or(key)
}

/// [`bind`] for a check's own function, every problem placed at its
/// `args` key's line of the suite (or the check's line).
pub fn located(
    suite: &crate::suite::Suite,
    check: &crate::suite::Check,
    program: &crate::eval::Program,
    args: &BTreeMap<String, Expr>,
    points: &Points,
) -> Result<(), String> {
    match bind(
        &check.function,
        program.params(),
        program.out_params(),
        args,
        points,
    ) {
        Ok(_) => Ok(()),
        Err(e) => {
            let line = e
                .key
                .as_ref()
                .and_then(|k| check.args_at.get(k))
                .map_or(check.line, |span| {
                    crate::suite::line_col(&suite.text, span.start).0
                });
            Err(format!(
                "{}:{line}: check `{}`: {e}",
                suite.path.display(),
                check.name
            ))
        }
    }
}

/// The output columns a reference giving `width` values is compared with:
/// every output, or, for a function with `ptr<function, T>` parameters
/// whose reference gives as many values as its return value has, only the
/// return value's (the pointers' final values are then judged by the
/// golden or a twin, which compare every output).
pub fn reference_view<'g>(
    program: &crate::eval::Program,
    got: &'g [Vec<f64>],
    width: usize,
) -> &'g [Vec<f64>] {
    if width != got.len() && !program.out_params().is_empty() {
        let r = program.result().map_or(0, Ty::leaf_count);
        if width == r && r > 0 {
            return &got[..r];
        }
    }
    got
}

/// How many values `expr` gives over `points` (1 or 3), when it binds.
pub fn width_of(expr: &Expr, points: &Points) -> Option<usize> {
    expr.bind(&points.names, &example(points))
        .ok()
        .map(|b| b.width)
}

/// An example value per sweep parameter, for the trial evaluation that
/// finds an expression's width (1 or 3).
pub fn example(points: &Points) -> Vec<Value> {
    points
        .widths
        .iter()
        .map(|&w| {
            if w == 1 {
                Value::S(0.5)
            } else {
                Value::V([0.0, 0.6, 0.8])
            }
        })
        .collect()
}

/// Bind every parameter of `function` (`params`, in order; the names in
/// `out_params` are pointer parameters) from `args` and the sweep.
pub fn bind(
    function: &str,
    params: &[(String, Ty)],
    out_params: &[(String, Ty)],
    args: &BTreeMap<String, Expr>,
    points: &Points,
) -> Result<Inputs, ArgError> {
    let mut b = Binder {
        function,
        params,
        args,
        points,
        example: example(points),
        exprs: Vec::new(),
        width: 0,
        leaves: Vec::new(),
        used: BTreeSet::new(),
    };
    // A key under a parameter that names no part of it is a typo: say so
    // first. (A key naming no parameter at all is the suite's to refuse,
    // `Suite::check_args`; a property's quadrature direction is such a
    // key where the function does not take it.)
    let is_param = |k: &str| params.iter().any(|(n, _)| n == root_of(k));
    for k in args.keys().filter(|k| is_param(k)) {
        if !names_a_part(k, params) {
            return Err(unknown_path(k, params));
        }
    }
    for (name, ty) in params {
        let out = out_params.iter().any(|(n, _)| n == name);
        b.node(name, name, None, ty, out)?;
    }
    if let Some(k) = args
        .keys()
        .find(|k| is_param(k) && !b.used.contains(k.as_str()))
    {
        return Err(unknown_path(k, params));
    }
    Ok(Inputs {
        exprs: b.exprs,
        leaves: b.leaves,
    })
}

struct Binder<'a> {
    function: &'a str,
    params: &'a [(String, Ty)],
    args: &'a BTreeMap<String, Expr>,
    points: &'a Points,
    example: Vec<Value>,
    exprs: Vec<BoundExpr>,
    /// Columns of the bound expressions so far.
    width: usize,
    leaves: Vec<Leaf>,
    used: BTreeSet<&'a str>,
}

/// The children of a value node: (path, field name, type).
pub(crate) fn children(path: &str, ty: &Ty) -> Vec<(String, Option<String>, Ty)> {
    match ty {
        Ty::Struct { members, .. } => members
            .iter()
            .map(|(m, t)| (format!("{path}.{m}"), Some(m.clone()), t.clone()))
            .collect(),
        Ty::Array(t, n) => (0..*n)
            .map(|i| (format!("{path}[{i}]"), None, (**t).clone()))
            .collect(),
        Ty::Matrix {
            columns,
            rows,
            kind,
        } => (0..*columns)
            .map(|c| (format!("{path}[{c}]"), None, Ty::Vector(*rows, *kind)))
            .collect(),
        Ty::Scalar(_) | Ty::Vector(..) => Vec::new(),
    }
}

/// How a constructor of `ty` is written (`Material(...)`, `vec4(...)`).
fn constructor_of(ty: &Ty) -> String {
    match ty {
        Ty::Scalar(k) => k.wgsl().to_string(),
        Ty::Vector(n, _) => format!("vec{n}"),
        Ty::Matrix { columns, rows, .. } => format!("mat{columns}x{rows}"),
        Ty::Array(..) => "array".into(),
        Ty::Struct { name, .. } => name.clone(),
    }
}

impl<'a> Binder<'a> {
    fn err(&self, key: Option<&str>, message: String) -> ArgError {
        ArgError {
            key: key.map(str::to_string),
            message,
        }
    }

    /// Bind the value at `path` (of parameter `param`): its own `args`
    /// entry, else its parts, else a sweep parameter, else zeros for an
    /// out-parameter.
    fn node(
        &mut self,
        param: &str,
        path: &str,
        field: Option<&str>,
        ty: &Ty,
        out: bool,
    ) -> Result<(), ArgError> {
        if let Some((key, e)) = self.args.get_key_value(path) {
            self.used.insert(key);
            // A part given as well would be ignored: refuse it.
            if let Some(sub) = self.args.keys().find(|k| {
                k.len() > path.len()
                    && k.starts_with(path)
                    && matches!(k.as_bytes()[path.len()], b'.' | b'[')
            }) {
                return Err(self.err(
                    Some(sub),
                    format!("`{path}` is given whole (key `args.{path}`) and in part here; give one or the other"),
                ));
            }
            return self.given(path, ty, e, key);
        }
        let parts = children(path, ty);
        if !parts.is_empty() {
            for (p, f, t) in &parts {
                self.node(param, p, f.as_deref(), t, out)?;
            }
            return Ok(());
        }
        // A scalar or vector leaf with no expression of its own.
        let sweep_name = field.unwrap_or(path);
        if self.points.names.iter().any(|n| n == sweep_name) {
            let e = Expr::parse(sweep_name)
                .map_err(|e| self.err(None, format!("sweep parameter `{sweep_name}`: {e}")))?;
            return self.plain(path, ty, &e, None);
        }
        if out {
            self.leaves
                .extend(std::iter::repeat_n(Leaf::Zero, ty.leaf_count()));
            return Ok(());
        }
        let sweep = self.points.names.join(", ");
        if path == param {
            return Err(self.err(
                None,
                format!(
                    "argument `{param}` has no expression and no sweep parameter of that name (`{param}`: {ty} of `{}`; sweep: {sweep})",
                    self.function
                ),
            ));
        }
        let whole = self
            .param_type(param)
            .map(|t| format!("the whole `{param} = \"{}(...)\"`", constructor_of(&t)))
            .unwrap_or_default();
        Err(self.err(
            None,
            format!(
                "argument `{param}` of `{}`: `{path}` ({ty}) has no expression: give `\"{path}\" = \"...\"` in `args`, {whole}{} (sweep: {sweep})",
                self.function,
                field.map_or(String::new(), |f| format!(", or a sweep parameter `{f}`")),
            ),
        ))
    }

    fn param_type(&self, param: &str) -> Option<Ty> {
        self.params
            .iter()
            .find(|(n, _)| n == param)
            .map(|(_, t)| t.clone())
    }

    /// Bind `e` (the entry of `key`) to the value at `path` of type `ty`.
    fn given(&mut self, path: &str, ty: &Ty, e: &Expr, key: &str) -> Result<(), ArgError> {
        let Some((name, parts)) = e.constructor() else {
            return self.plain(path, ty, e, Some(key));
        };
        let (base, param) = match name.split_once('<') {
            Some((b, p)) => (b.trim(), Some(p.trim_end_matches('>').trim())),
            None => (name, None),
        };
        let want = constructor_of(ty);
        let mismatch = |why: String| ArgError {
            key: Some(key.to_string()),
            message: format!("`{path}` is {ty}, but `{}` {why}", e.text),
        };
        if base != want {
            return Err(mismatch(format!(
                "constructs `{base}`; write `{want}(...)` ({})",
                shape_hint(ty)
            )));
        }
        // A type parameter, where given, must be the leaves' own.
        if let (Some(p), Some(k)) = (param, ty.scalar_kind()) {
            if matches!(ty, Ty::Vector(..) | Ty::Matrix { .. }) && p != k.wgsl() {
                return Err(mismatch(format!(
                    "says its components are `{p}`; they are `{}`",
                    k.wgsl()
                )));
            }
        }
        match ty {
            Ty::Scalar(_) => {
                if parts.len() != 1 {
                    return Err(mismatch(format!("has {} parts; give one", parts.len())));
                }
                self.given_part(path, ty, &parts[0], key)
            }
            Ty::Vector(n, k) => self.components(path, ty, &parts, *n as usize, *k, key),
            Ty::Matrix {
                columns,
                rows,
                kind,
            } => {
                let (c, r) = (*columns as usize, *rows as usize);
                if parts.len() == c {
                    for (i, p) in parts.iter().enumerate() {
                        self.given_part(
                            &format!("{path}[{i}]"),
                            &Ty::Vector(*rows, *kind),
                            p,
                            key,
                        )?;
                    }
                    Ok(())
                } else if parts.len() == c * r {
                    for p in &parts {
                        self.given_part(path, &Ty::Scalar(*kind), p, key)?;
                    }
                    Ok(())
                } else {
                    Err(mismatch(format!(
                        "has {} parts; give {c} columns (vec{r}) or {} scalars, column by column",
                        parts.len(),
                        c * r
                    )))
                }
            }
            Ty::Array(t, n) => {
                if parts.len() != *n as usize {
                    return Err(mismatch(format!(
                        "has {} elements; the array has {n}",
                        parts.len()
                    )));
                }
                for (i, p) in parts.iter().enumerate() {
                    self.given_part(&format!("{path}[{i}]"), t, p, key)?;
                }
                Ok(())
            }
            Ty::Struct { members, .. } => {
                if parts.len() != members.len() {
                    let names: Vec<_> = members.iter().map(|(m, t)| format!("{m}: {t}")).collect();
                    return Err(mismatch(format!(
                        "has {} parts; `{want}` has {} fields, in order: {}",
                        parts.len(),
                        members.len(),
                        names.join(", ")
                    )));
                }
                for ((m, t), p) in members.iter().zip(&parts) {
                    self.given_part(&format!("{path}.{m}"), t, p, key)?;
                }
                Ok(())
            }
        }
    }

    /// One part of a constructor: a constructor in turn, or an expression.
    fn given_part(&mut self, path: &str, ty: &Ty, e: &Expr, key: &str) -> Result<(), ArgError> {
        self.given(path, ty, e, key)
    }

    /// A vector's parts: one scalar (the splat), or parts whose components
    /// add up to `n` (scalars, 3-vector expressions, vector constructors).
    fn components(
        &mut self,
        path: &str,
        ty: &Ty,
        parts: &[Expr],
        n: usize,
        kind: ScalarKind,
        key: &str,
    ) -> Result<(), ArgError> {
        let start = self.leaves.len();
        for p in parts {
            match p.constructor() {
                Some((name, _)) => {
                    let m = name
                        .strip_prefix("vec")
                        .and_then(|r| r.chars().next())
                        .and_then(|c| c.to_digit(10))
                        .filter(|m| (2..=4).contains(m));
                    let Some(m) = m else {
                        return Err(self.err(
                            Some(key),
                            format!(
                                "`{path}` is {ty}; its part `{}` constructs `{name}`, not a vector",
                                p.text
                            ),
                        ));
                    };
                    self.given(path, &Ty::Vector(m as u8, kind), p, key)?;
                }
                None => {
                    let b = self.bind_expr(path, p, Some(key))?;
                    self.push(&b);
                }
            }
        }
        let got = self.leaves.len() - start;
        if parts.len() == 1 && got == 1 {
            // The splat: the one value in every component.
            let leaf = self.leaves[start];
            self.leaves.extend(std::iter::repeat_n(leaf, n - 1));
            return Ok(());
        }
        if got != n {
            return Err(self.err(
                Some(key),
                format!("`{path}` is {ty}, but its parts give {got} component(s); give one (the splat) or {n}"),
            ));
        }
        Ok(())
    }

    /// An ordinary expression for the value at `path`: it must give as
    /// many values as the type has leaves (a scalar, or a vec3).
    fn plain(&mut self, path: &str, ty: &Ty, e: &Expr, key: Option<&str>) -> Result<(), ArgError> {
        let b = self.bind_expr(path, e, key)?;
        let fits = matches!(ty, Ty::Scalar(_) | Ty::Vector(3, _)) && ty.leaf_count() == b.width;
        if !fits {
            let what = if b.width == 1 { "a scalar" } else { "a vec3" };
            return Err(self.err(
                key,
                format!(
                    "`{path}` is {ty}, but `{}` gives {what}; {}",
                    e.text,
                    shape_hint(ty)
                ),
            ));
        }
        self.push(&b);
        Ok(())
    }

    fn bind_expr(
        &mut self,
        path: &str,
        e: &Expr,
        key: Option<&str>,
    ) -> Result<BoundExpr, ArgError> {
        e.bind(&self.points.names, &self.example)
            .map_err(|m| self.err(key, format!("`{path}`: `{}`: {m}", e.text)))
    }

    /// Add `b`'s columns as leaves.
    fn push(&mut self, b: &BoundExpr) {
        for k in 0..b.width {
            self.leaves.push(Leaf::Column(self.width + k));
        }
        self.width += b.width;
        self.exprs.push(b.clone());
    }
}

/// How a value of `ty` is given, in a few words.
fn shape_hint(ty: &Ty) -> String {
    match ty {
        Ty::Scalar(_) => "give a scalar expression".into(),
        Ty::Vector(3, _) => "give a vec3 expression, or `vec3(x)` for the same value in each component".into(),
        Ty::Vector(n, _) => format!(
            "give `vec{n}(...)` with {n} components (scalars or vectors), or `vec{n}(x)` for the same value in each"
        ),
        Ty::Matrix { columns, rows, .. } => format!(
            "give `mat{columns}x{rows}(...)` with {columns} columns (vec{rows}) or {} scalars, or its columns by path (`m[0]`, ...)",
            *columns as usize * *rows as usize
        ),
        Ty::Array(t, n) => format!("give `array(...)` with {n} elements ({t}), or elements by path (`a[0]`, ...)"),
        Ty::Struct { name, members } => {
            let fields: Vec<_> = members.iter().map(|(m, _)| m.as_str()).collect();
            format!(
                "give `{name}(...)` with its fields in order ({}), or fields by path (`p.{}`, ...)",
                fields.join(", "),
                fields.first().copied().unwrap_or("field")
            )
        }
    }
}

/// Whether `key` is a parameter or a part of one (walking the path, not
/// listing every part).
fn names_a_part(key: &str, params: &[(String, Ty)]) -> bool {
    let root = root_of(key);
    let Some((_, ty)) = params.iter().find(|(n, _)| n == root) else {
        return false;
    };
    let (mut path, mut ty) = (root.to_string(), ty.clone());
    while path.len() < key.len() {
        let next = children(&path, &ty).into_iter().find(|(p, _, _)| {
            key.starts_with(p.as_str())
                && (key.len() == p.len() || key[p.len()..].starts_with(['.', '[']))
        });
        match next {
            Some((p, _, t)) => (path, ty) = (p, t),
            None => return false,
        }
    }
    true
}

/// The error for an `args` key that names no part of any parameter: what
/// the deepest part it reaches is, and which parts that one has.
fn unknown_path(key: &str, params: &[(String, Ty)]) -> ArgError {
    let root = root_of(key);
    let Some((_, mut ty)) = params.iter().find(|(n, _)| n == root).cloned() else {
        let names: Vec<_> = params.iter().map(|(n, _)| n.as_str()).collect();
        return ArgError {
            key: Some(key.into()),
            message: format!("no parameter `{root}` (has: {})", names.join(", ")),
        };
    };
    let mut path = root.to_string();
    loop {
        let parts = children(&path, &ty);
        match parts.iter().find(|(p, _, _)| {
            key.starts_with(p.as_str()) && {
                let rest = &key[p.len()..];
                rest.is_empty() || rest.starts_with(['.', '['])
            }
        }) {
            Some((p, _, t)) if p.len() < key.len() => {
                path = p.clone();
                ty = t.clone();
            }
            _ => {
                let names: Vec<_> = parts.iter().map(|(p, _, _)| format!("`{p}`")).collect();
                let has = if names.is_empty() {
                    "it has no parts to name (a scalar or vector is given whole)".to_string()
                } else {
                    format!("its parts are {}", names.join(", "))
                };
                return ArgError {
                    key: Some(key.into()),
                    message: format!(
                        "`{path}` ({ty}) has no part `{}`; {has}",
                        &key[path.len()..]
                    ),
                };
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn material() -> Ty {
        Ty::Struct {
            name: "Material".into(),
            members: vec![
                ("base".into(), Ty::Vector(3, ScalarKind::F32)),
                ("roughness".into(), Ty::Scalar(ScalarKind::F32)),
            ],
        }
    }

    fn points() -> Points {
        Points {
            names: vec!["r".into(), "roughness".into(), "d".into()],
            widths: vec![1, 1, 3],
            columns: vec![
                vec![vec![0.25, 0.5]],
                vec![vec![0.7, 0.8]],
                vec![vec![1.0, 2.0], vec![3.0, 4.0], vec![5.0, 6.0]],
            ],
            len: 2,
        }
    }

    fn args(list: &[(&str, &str)]) -> BTreeMap<String, Expr> {
        list.iter()
            .map(|(k, v)| (k.to_string(), Expr::parse_arg(v, 64).unwrap()))
            .collect()
    }

    fn bound(ty: Ty, list: &[(&str, &str)]) -> Result<Inputs, ArgError> {
        bind("f", &[("m".into(), ty)], &[], &args(list), &points())
    }

    #[test]
    fn a_struct_whole_by_fields_and_from_the_sweep() {
        let whole = bound(material(), &[("m", "Material(vec3(r), r * r)")]).unwrap();
        // The splat reuses its expression's three columns; r * r is the fourth.
        assert_eq!(whole.leaves.len(), 4);
        let fields = bound(material(), &[("m.base", "d")]).unwrap();
        // `roughness` comes from the sweep parameter named like the field.
        assert_eq!(fields.exprs.len(), 2);
        assert_eq!(fields.exprs[1].var, Some(1));
        let e = bound(material(), &[("m", "Material(d)")]).err().unwrap();
        assert!(
            e.message.contains(
                "has 1 parts; `Material` has 2 fields, in order: base: vec3<f32>, roughness: f32"
            ),
            "{e}"
        );
        let e = bound(material(), &[("m", "Stuff(d, r)")]).err().unwrap();
        assert!(
            e.message
                .contains("constructs `Stuff`; write `Material(...)`"),
            "{e}"
        );
        let e = bound(material(), &[("m", "Material(d, r)"), ("m.base", "d")])
            .err()
            .unwrap();
        assert_eq!(e.key.as_deref(), Some("m.base"));
        let e = bound(material(), &[("m.bsae", "d")]).err().unwrap();
        assert!(
            e.message
                .contains("has no part `.bsae`; its parts are `m.base`, `m.roughness`"),
            "{e}"
        );
    }

    #[test]
    fn a_field_nobody_binds_is_named() {
        let p = Points {
            names: vec!["r".into()],
            widths: vec![1],
            columns: vec![vec![vec![0.5]]],
            len: 1,
        };
        let e = bind("f", &[("m".into(), material())], &[], &args(&[]), &p)
            .err()
            .unwrap();
        assert!(
            e.message.contains("`m.base` (vec3<f32>) has no expression"),
            "{e}"
        );
    }

    #[test]
    fn vectors_matrices_and_arrays() {
        let v4 = Ty::Vector(4, ScalarKind::F32);
        assert_eq!(
            bound(v4.clone(), &[("m", "vec4(d, 1)")])
                .unwrap()
                .leaves
                .len(),
            4
        );
        assert_eq!(
            bound(v4.clone(), &[("m", "vec4(r)")]).unwrap().leaves,
            vec![Leaf::Column(0); 4]
        );
        assert_eq!(
            bound(v4.clone(), &[("m", "vec4(vec2(r, r), vec2(1, 2))")])
                .unwrap()
                .leaves
                .len(),
            4
        );
        let e = bound(v4.clone(), &[("m", "vec4(d)")]).err().unwrap();
        assert!(e.message.contains("its parts give 3 component(s)"), "{e}");
        let e = bound(v4.clone(), &[("m", "d")]).err().unwrap();
        assert!(
            e.message.contains("is vec4<f32>, but `d` gives a vec3"),
            "{e}"
        );
        let e = bound(v4, &[("m", "vec4<i32>(r)")]).err().unwrap();
        assert!(e.message.contains("they are `f32`"), "{e}");
        let m3 = Ty::Matrix {
            columns: 3,
            rows: 3,
            kind: ScalarKind::F32,
        };
        assert_eq!(
            bound(m3.clone(), &[("m", "mat3x3(d, d, vec3(0, 0, 1))")])
                .unwrap()
                .leaves
                .len(),
            9
        );
        assert_eq!(
            bound(m3.clone(), &[("m", "mat3x3(1, 0, 0, 0, 1, 0, 0, 0, r)")])
                .unwrap()
                .leaves
                .len(),
            9
        );
        assert_eq!(
            bound(
                m3.clone(),
                &[("m[0]", "d"), ("m[1]", "d"), ("m[2]", "vec3(r)")]
            )
            .unwrap()
            .leaves
            .len(),
            9
        );
        let e = bound(m3, &[("m", "mat3x3(d, d)")]).err().unwrap();
        assert!(
            e.message.contains("give 3 columns (vec3) or 9 scalars"),
            "{e}"
        );
        let a = Ty::Array(Box::new(Ty::Scalar(ScalarKind::F32)), 3);
        assert_eq!(
            bound(a.clone(), &[("m", "array(r, 2, 3)")])
                .unwrap()
                .leaves
                .len(),
            3
        );
        assert_eq!(
            bound(a.clone(), &[("m[0]", "r"), ("m[1]", "1"), ("m[2]", "2")])
                .unwrap()
                .leaves
                .len(),
            3
        );
        let e = bound(a, &[("m", "array(r, 2)")]).err().unwrap();
        assert!(e.message.contains("has 2 elements; the array has 3"), "{e}");
    }

    #[test]
    fn nested_structs_with_arrays() {
        let outer = Ty::Struct {
            name: "Layered".into(),
            members: vec![
                ("top".into(), material()),
                (
                    "weights".into(),
                    Ty::Array(Box::new(Ty::Scalar(ScalarKind::F32)), 2),
                ),
            ],
        };
        let b = bound(
            outer.clone(),
            &[("m", "Layered(Material(d, r), array(r, 1 - r))")],
        )
        .unwrap();
        assert_eq!(b.leaves.len(), 6);
        let b = bound(
            outer,
            &[("m.top.base", "d"), ("m.weights", "array(0.5, 0.5)")],
        )
        .unwrap();
        assert_eq!(b.leaves.len(), 6);
    }

    #[test]
    fn an_out_parameter_starts_at_zero() {
        let ty = Ty::Vector(3, ScalarKind::F32);
        let b = bind(
            "f",
            &[("out_n".into(), ty.clone())],
            &[("out_n".into(), ty)],
            &args(&[]),
            &points(),
        )
        .unwrap();
        assert_eq!(b.leaves, vec![Leaf::Zero; 3]);
    }
}
