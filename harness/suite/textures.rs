//! A check's look-up tables in place of textures: the `[check.textures.X]`
//! and `[check.samplers.X]` tables of the suite file, and their resolution
//! into the [`Bindings`] the evaluator reads.
//!
//! ```toml
//! [check.textures.env_lut]          # a texture_2d<f32> variable, by name...
//! model = "split_sum"               # a registry model with two scalar parameters,
//! size = [32, 32]                   # evaluated at the texel centres of a 32 × 32 grid
//! u = [0.0, 1.0]                    # first parameter across x (default [0, 1])
//! v = [0.0, 1.0]                    # second parameter down y (default [0, 1])
//!
//! [check.textures."@group(0) @binding(3)"]   # ...or by its binding
//! file = "tables/albedo.csv"        # a table file (see `crate::table::parse`)
//!
//! [check.samplers.env_sampler]      # a sampler variable (by name or binding)
//! filter = "linear"                 # or mag_filter / min_filter: nearest | linear
//! address = "clamp-to-edge"         # or address_u / address_v: clamp-to-edge | repeat | mirror-repeat
//! weight_bits = 8                   # optional: fixed-point filter weights
//! ```
//!
//! A sampler left out of the check is not bound (the function's sampling is a
//! located "not supported" error); a sampler table with no keys is WebGPU's
//! default sampler (nearest, clamp-to-edge). Whether every key names a
//! variable of the shader is checked when the function is compiled: an unused
//! binding is an error there, located at its key here.

use std::collections::{BTreeMap, HashMap};
use std::path::PathBuf;
use std::sync::{Arc, Mutex, OnceLock};

use toml::Spanned;

use super::domain::num;
use super::locate::{key_in, Ctx};
use super::Suite;
use crate::diagnostic::Diagnostic;
use crate::limits::{Limit, Limits};
use crate::reference::{Model, ParamKind};
use crate::table::{self, Address, Bindings, Bound, Filter, Resource, Sampler, Table};

/// The raw `textures` / `samplers` tables of a check.
pub(super) type Raw = Option<BTreeMap<Spanned<String>, Spanned<toml::Table>>>;

/// A check's texture and sampler bindings, validated (tables not yet read).
#[derive(Clone, Debug, Default)]
pub struct Textures {
    pub tables: Vec<TableBinding>,
    pub samplers: Vec<SamplerBinding>,
}

/// One `[check.textures.X]` entry.
#[derive(Clone, Debug)]
pub struct TableBinding {
    pub resource: Resource,
    pub source: TableSource,
    /// Byte span of the key in the suite text.
    pub at: std::ops::Range<usize>,
}

/// Where a bound table comes from.
#[derive(Clone, Debug)]
pub enum TableSource {
    /// A table file, as written (relative to the suite's folder).
    File(PathBuf),
    /// A registry model of two scalar parameters evaluated at the texel
    /// centres of a `width × height` grid: the first parameter runs from
    /// `u.0` to `u.1` across x, the second from `v.0` to `v.1` down y (at
    /// `lo + (i + ½) / n · (hi − lo)`); the model's outputs are the channels.
    Model {
        model: &'static Model,
        width: u32,
        height: u32,
        u: (f64, f64),
        v: (f64, f64),
    },
}

/// One `[check.samplers.X]` entry.
#[derive(Clone, Debug)]
pub struct SamplerBinding {
    pub resource: Resource,
    pub sampler: Sampler,
    /// Byte span of the key in the suite text.
    pub at: std::ops::Range<usize>,
}

impl Textures {
    pub fn is_empty(&self) -> bool {
        self.tables.is_empty() && self.samplers.is_empty()
    }

    /// The bindings the evaluator reads: table files read (located errors
    /// name the file and line), model grids computed (once per process for
    /// each model, size and range).
    pub fn resolve(&self, suite: &Suite) -> Result<Bindings, Diagnostic> {
        let mut entries = Vec::new();
        for t in &self.tables {
            let table = match &t.source {
                TableSource::File(p) => Arc::new(table::load(&suite.resolve(p), &suite.limits)?),
                TableSource::Model {
                    model,
                    width,
                    height,
                    u,
                    v,
                } => model_table(model, *width, *height, *u, *v),
            };
            entries.push((t.resource.clone(), Bound::Table(table)));
        }
        for s in &self.samplers {
            entries.push((s.resource.clone(), Bound::Sampler(s.sampler)));
        }
        Ok(Bindings { entries })
    }

    /// Every binding must name a texture or sampler variable of the shader
    /// (`declared`: each handle variable's name and binding), so a typo is
    /// not silently left unbound.
    pub fn check_declared(
        &self,
        suite: &Suite,
        check: &str,
        declared: &[Declared],
    ) -> Result<(), Diagnostic> {
        let resources = self
            .tables
            .iter()
            .map(|t| (&t.resource, &t.at, "textures"))
            .chain(
                self.samplers
                    .iter()
                    .map(|s| (&s.resource, &s.at, "samplers")),
            );
        for (r, at, table) in resources {
            if !declared.iter().any(|(n, b)| r.matches(n.as_deref(), *b)) {
                let names: Vec<String> = declared
                    .iter()
                    .map(|(n, b)| match (n, b) {
                        (Some(n), Some((g, b))) => format!("`{n}` (@group({g}) @binding({b}))"),
                        (Some(n), None) => format!("`{n}`"),
                        _ => "an unnamed resource".into(),
                    })
                    .collect();
                return Err(suite.error_at(
                    at.clone(),
                    format!(
                        "key `{table}`: the shader of check `{check}` declares no texture or \
                         sampler {r} (declared: {})",
                        if names.is_empty() {
                            "none".into()
                        } else {
                            names.join(", ")
                        }
                    ),
                ));
            }
        }
        Ok(())
    }
}

/// A texture or sampler variable of a shader: its name and its
/// `(group, binding)`.
pub type Declared = (Option<String>, Option<(u32, u32)>);

/// A model's grid, computed once per process for each model, size and range.
fn model_table(model: &'static Model, w: u32, h: u32, u: (f64, f64), v: (f64, f64)) -> Arc<Table> {
    type Key = (&'static str, u32, u32, [u64; 4]);
    static CACHE: OnceLock<Mutex<HashMap<Key, Arc<Table>>>> = OnceLock::new();
    let key = (
        model.name,
        w,
        h,
        [u.0.to_bits(), u.1.to_bits(), v.0.to_bits(), v.1.to_bits()],
    );
    let cache = CACHE.get_or_init(Default::default);
    if let Some(t) = cache.lock().expect("table cache").get(&key) {
        return t.clone();
    }
    let t = Arc::new(
        Table::from_fn(w, h, model.outputs as u32, |s, t, out| {
            let a = u.0 + s * (u.1 - u.0);
            let b = v.0 + t * (v.1 - v.0);
            (model.eval)(&[a, b], out);
        })
        .expect("sizes checked when the suite was read"),
    );
    cache.lock().expect("table cache").insert(key, t.clone());
    t
}

/// `name` or `@group(G) @binding(B)`.
fn resource(key: &str) -> Option<Resource> {
    if let Some(rest) = key.strip_prefix("@group(") {
        let (g, rest) = rest.split_once(')')?;
        let rest = rest.strip_prefix(" @binding(")?;
        let b = rest.strip_suffix(')')?;
        let digits = |s: &str| !s.is_empty() && s.bytes().all(|c| c.is_ascii_digit());
        if !digits(g) || !digits(b) {
            return None;
        }
        return Some(Resource::Binding {
            group: g.parse().ok()?,
            binding: b.parse().ok()?,
        });
    }
    let mut chars = key.chars();
    let first = chars.next()?;
    ((first.is_ascii_alphabetic() || first == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_'))
    .then(|| Resource::Name(key.to_string()))
}

/// Validate a check's `textures` and `samplers` tables (the suite hook).
pub(super) fn parse(
    cx: &Ctx,
    textures: Raw,
    samplers: Raw,
    limits: &Limits,
) -> Result<Textures, Diagnostic> {
    let mut out = Textures::default();
    let mut seen: Vec<Resource> = Vec::new();
    let entries = |raw: Raw, table: &'static str| {
        raw.unwrap_or_default()
            .into_iter()
            .map(move |(k, v)| (k, v, table))
    };
    for (key, value, table) in entries(textures, "textures").chain(entries(samplers, "samplers")) {
        let at = key.span();
        let name = key.get_ref();
        let r = resource(name).ok_or_else(|| {
            cx.err(
                at.clone(),
                format!(
                    "key `{table}.{name}`: expected a WGSL variable name or \
                     \"@group(G) @binding(B)\""
                ),
            )
        })?;
        if seen.contains(&r) {
            return Err(cx.err(
                at.clone(),
                format!("key `{table}.{name}`: {r} is bound twice in this check"),
            ));
        }
        seen.push(r.clone());
        let span = value.span();
        let fields = Fields {
            cx,
            t: value.get_ref(),
            span,
            prefix: format!("{table}.{name}"),
            at: at.clone(),
        };
        if table == "textures" {
            let source = fields.table_source(limits)?;
            out.tables.push(TableBinding {
                resource: r,
                source,
                at,
            });
        } else {
            let sampler = fields.sampler()?;
            out.samplers.push(SamplerBinding {
                resource: r,
                sampler,
                at,
            });
        }
    }
    Ok(out)
}

/// One binding's table of keys, with located errors.
struct Fields<'a> {
    cx: &'a Ctx<'a>,
    t: &'a toml::Table,
    span: std::ops::Range<usize>,
    prefix: String,
    /// The binding's key (where errors about the table as a whole point).
    at: std::ops::Range<usize>,
}

impl Fields<'_> {
    fn err(&self, key: &str, msg: impl std::fmt::Display) -> Diagnostic {
        let span = key_in(self.cx.text, self.span.clone(), key);
        let span = if span == self.span {
            self.at.clone()
        } else {
            span
        };
        self.cx
            .err(span, format!("key `{}.{key}`: {msg}", self.prefix))
    }

    fn only(&self, allowed: &[&str]) -> Result<(), Diagnostic> {
        match self.t.keys().find(|k| !allowed.contains(&k.as_str())) {
            Some(k) => Err(self.err(k, format!("unknown key (expected: {})", allowed.join(", ")))),
            None => Ok(()),
        }
    }

    fn string(&self, key: &str) -> Result<Option<&str>, Diagnostic> {
        match self.t.get(key) {
            None => Ok(None),
            Some(toml::Value::String(s)) => Ok(Some(s)),
            Some(v) => Err(self.err(key, format!("expected a string, found {}", v.type_str()))),
        }
    }

    fn range(&self, key: &str) -> Result<(f64, f64), Diagnostic> {
        let Some(v) = self.t.get(key) else {
            return Ok((0.0, 1.0));
        };
        let pair = match v {
            toml::Value::Array(a) if a.len() == 2 => (num(&a[0]), num(&a[1])),
            _ => return Err(self.err(key, "expected two numbers [first, last]")),
        };
        match pair {
            (Ok(a), Ok(b)) if a.is_finite() && b.is_finite() => Ok((a, b)),
            (Err(m), _) | (_, Err(m)) => Err(self.err(key, m)),
            _ => Err(self.err(key, "the range must be finite")),
        }
    }

    fn table_source(&self, limits: &Limits) -> Result<TableSource, Diagnostic> {
        match (self.t.contains_key("file"), self.t.contains_key("model")) {
            (true, true) | (false, false) => {
                return Err(self.cx.err(
                    self.at.clone(),
                    format!(
                        "key `{}`: give either `file` (a table file) or `model` (a registry \
                         model evaluated on a grid)",
                        self.prefix
                    ),
                ))
            }
            (true, false) => {
                self.only(&["file"])?;
                let f = self.string("file")?.unwrap_or_default();
                if f.is_empty() {
                    return Err(self.err("file", "expected a path to a table file"));
                }
                return Ok(TableSource::File(PathBuf::from(f)));
            }
            (false, true) => {}
        }
        self.only(&["model", "size", "u", "v"])?;
        let name = self.string("model")?.unwrap_or_default();
        let model = crate::reference::find(name).ok_or_else(|| {
            self.err(
                "model",
                format!("no reference model named `{name}` (see `shadegate models`)"),
            )
        })?;
        if model.params.len() != 2
            || model.params.iter().any(|p| p.kind != ParamKind::Scalar)
            || model.outputs > 4
        {
            return Err(self.err(
                "model",
                format!(
                    "`{name}` cannot fill a table: a table model takes two scalar parameters \
                     (one per axis) and gives 1 to 4 values (one per channel)"
                ),
            ));
        }
        let size = match self.t.get("size") {
            Some(toml::Value::Array(a)) if a.len() == 2 => {
                let dim = |v: &toml::Value| match v {
                    toml::Value::Integer(i) if (1..=i64::from(u32::MAX)).contains(i) => {
                        Some(*i as u32)
                    }
                    _ => None,
                };
                match (dim(&a[0]), dim(&a[1])) {
                    (Some(w), Some(h)) => (w, h),
                    _ => {
                        return Err(
                            self.err("size", "expected two positive integers [width, height]")
                        )
                    }
                }
            }
            Some(_) => {
                return Err(self.err("size", "expected two positive integers [width, height]"))
            }
            None => return Err(self.err("size", "missing: the grid's [width, height] in texels")),
        };
        let texels = u64::from(size.0) * u64::from(size.1);
        if texels > limits.table_texels {
            return Err(self.err(
                "size",
                format!(
                    "a {} × {} table has {texels} texels, more than the `{}` limit of {}; {}",
                    size.0,
                    size.1,
                    Limit::TableTexels,
                    limits.table_texels,
                    Limit::TableTexels.how_to_raise()
                ),
            ));
        }
        Ok(TableSource::Model {
            model,
            width: size.0,
            height: size.1,
            u: self.range("u")?,
            v: self.range("v")?,
        })
    }

    fn sampler(&self) -> Result<Sampler, Diagnostic> {
        self.only(&[
            "filter",
            "mag_filter",
            "min_filter",
            "address",
            "address_u",
            "address_v",
            "weight_bits",
        ])?;
        let filter = |key: &str| -> Result<Option<Filter>, Diagnostic> {
            Ok(match self.string(key)? {
                None => None,
                Some("nearest") => Some(Filter::Nearest),
                Some("linear") => Some(Filter::Linear),
                Some(o) => {
                    return Err(self.err(
                        key,
                        format!("expected \"nearest\" or \"linear\", found \"{o}\""),
                    ))
                }
            })
        };
        let address = |key: &str| -> Result<Option<Address>, Diagnostic> {
            Ok(match self.string(key)? {
                None => None,
                Some("clamp-to-edge") => Some(Address::ClampToEdge),
                Some("repeat") => Some(Address::Repeat),
                Some("mirror-repeat") => Some(Address::MirrorRepeat),
                Some(o) => {
                    return Err(self.err(
                        key,
                        format!(
                            "expected \"clamp-to-edge\", \"repeat\" or \"mirror-repeat\", \
                             found \"{o}\""
                        ),
                    ))
                }
            })
        };
        let both = |one: &str, a: &str, b: &str| {
            if self.t.contains_key(one) && (self.t.contains_key(a) || self.t.contains_key(b)) {
                Err(self.err(one, format!("give `{one}` or `{a}`/`{b}`, not both")))
            } else {
                Ok(())
            }
        };
        both("filter", "mag_filter", "min_filter")?;
        both("address", "address_u", "address_v")?;
        let d = Sampler::default();
        let f = filter("filter")?;
        let a = address("address")?;
        let weight_bits = match self.t.get("weight_bits") {
            None => None,
            Some(toml::Value::Integer(b))
                if (1..=i64::from(table::sample::MAX_WEIGHT_BITS)).contains(b) =>
            {
                Some(*b as u8)
            }
            Some(_) => {
                return Err(self.err(
                    "weight_bits",
                    format!(
                        "expected an integer from 1 to {}",
                        table::sample::MAX_WEIGHT_BITS
                    ),
                ))
            }
        };
        Ok(Sampler {
            mag_filter: filter("mag_filter")?.or(f).unwrap_or(d.mag_filter),
            min_filter: filter("min_filter")?.or(f).unwrap_or(d.min_filter),
            address_u: address("address_u")?.or(a).unwrap_or(d.address_u),
            address_v: address("address_v")?.or(a).unwrap_or(d.address_v),
            weight_bits,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::Path;

    const HEAD: &str = "[[check]]\nname = \"c\"\nshader = \"s.wgsl\"\nfunction = \"f\"\ngolden = true\n\n[check.sweep]\nx = { list = [0.5] }\n";

    fn parse(extra: &str) -> Result<crate::suite::Suite, Diagnostic> {
        crate::suite::parse(Path::new("s.toml"), &format!("{HEAD}{extra}"))
    }

    #[track_caller]
    fn bad(extra: &str, line: u32, words: &str) {
        let e = parse(extra).expect_err("refused");
        assert!(e.message.contains(words), "{}", e.rendered);
        assert_eq!(e.line, line, "{}", e.rendered);
    }

    #[test]
    fn textures_and_samplers_parse() {
        let s = parse(
            "\n[check.textures.lut]\nmodel = \"split_sum\"\nsize = [8, 4]\nv = [1.0, 0.0]\n\n\
             [check.textures.\"@group(1) @binding(2)\"]\nfile = \"t.csv\"\n\n\
             [check.samplers.samp]\nfilter = \"linear\"\naddress_u = \"repeat\"\nweight_bits = 8\n",
        )
        .unwrap();
        let t = &s.checks[0].textures;
        assert_eq!(t.tables.len(), 2);
        assert!(t.tables.iter().any(|b| b.resource
            == Resource::Binding {
                group: 1,
                binding: 2
            }));
        let lut = t
            .tables
            .iter()
            .find(|b| b.resource == Resource::Name("lut".into()))
            .unwrap();
        match &lut.source {
            TableSource::Model {
                width,
                height,
                u,
                v,
                ..
            } => {
                assert_eq!((*width, *height, *u, *v), (8, 4, (0.0, 1.0), (1.0, 0.0)))
            }
            other => panic!("{other:?}"),
        }
        let s = t.samplers[0].sampler;
        assert_eq!(
            (
                s.mag_filter,
                s.min_filter,
                s.address_u,
                s.address_v,
                s.weight_bits
            ),
            (
                Filter::Linear,
                Filter::Linear,
                Address::Repeat,
                Address::ClampToEdge,
                Some(8)
            )
        );
    }

    #[test]
    fn bad_bindings_are_located() {
        bad(
            "\n[check.textures.lut]\nmodel = \"nope\"\nsize = [2, 2]\n",
            11,
            "no reference model",
        );
        bad(
            "\n[check.textures.lut]\nmodel = \"schlick_fresnel_rgb\"\nsize = [2, 2]\n",
            11,
            "two scalar",
        );
        bad(
            "\n[check.textures.lut]\nmodel = \"split_sum\"\nsize = [0, 2]\n",
            12,
            "positive integers",
        );
        bad(
            "\n[check.textures.lut]\nmodel = \"split_sum\"\n",
            10,
            "size",
        );
        bad(
            "\n[check.textures.lut]\nfile = \"a.csv\"\nmodel = \"split_sum\"\n",
            10,
            "either `file`",
        );
        bad(
            "\n[check.textures.lut]\nfile = \"a.csv\"\nsize = [2, 2]\n",
            12,
            "unknown key",
        );
        bad(
            "\n[check.textures.\"2lut\"]\nfile = \"a.csv\"\n",
            10,
            "variable name",
        );
        bad(
            "\n[check.textures.\"@group(0) @binding(x)\"]\nfile = \"a.csv\"\n",
            10,
            "variable name",
        );
        bad(
            "\n[check.samplers.s]\nfilter = \"cubic\"\n",
            11,
            "\"nearest\" or \"linear\"",
        );
        bad(
            "\n[check.samplers.s]\naddress = \"wrap\"\n",
            11,
            "mirror-repeat",
        );
        bad(
            "\n[check.samplers.s]\naddress = \"repeat\"\naddress_u = \"repeat\"\n",
            11,
            "not both",
        );
        bad(
            "\n[check.samplers.s]\nweight_bits = 40\n",
            11,
            "from 1 to 24",
        );
        bad(
            "\n[check.textures.s]\nfile = \"a.csv\"\n[check.samplers.s]\nfilter = \"linear\"\n",
            12,
            "bound twice",
        );
        bad(
            "\n[check.textures.lut]\nmodel = \"split_sum\"\nsize = [4, 4]\n\n[limits]\ntable_texels = 10\n",
            12,
            "`table_texels` limit of 10",
        );
    }
}
