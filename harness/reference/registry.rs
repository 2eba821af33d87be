//! The model registry: the types a suite and the CLI see ([`Model`], [`ParamSpec`],
//! [`ParamKind`]), the table of every model (the entries of `table_terms` then those of
//! `table_lobes`, in file order) and the look-ups [`models`], [`find`], [`listing`].

use std::fmt::Write as _;

use super::table_lobes::LOBES;
use super::table_terms::TERMS;

/// The shape of one model parameter.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ParamKind {
    /// One f64.
    Scalar,
    /// Three f64 (a direction or an RGB colour), consecutive in the flattened argument list.
    Vec3,
}

impl ParamKind {
    /// How many scalars the parameter takes in the flattened argument list.
    pub fn width(self) -> usize {
        match self {
            ParamKind::Scalar => 1,
            ParamKind::Vec3 => 3,
        }
    }
}

/// One named parameter of a registered model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ParamSpec {
    /// The name a shader author would use (`n_dot_h`, `alpha`, `base_color`, ...).
    pub name: &'static str,
    /// Scalar or three-component.
    pub kind: ParamKind,
    /// One line: what the parameter means.
    pub doc: &'static str,
    /// The domain of the scalar, or of each component of a vector: `(low, high)`, inclusive.
    pub range: (f64, f64),
}

/// A registered reference model, callable by name.
#[derive(Clone, Copy, Debug)]
pub struct Model {
    /// Unique name, e.g. `ggx_ndf`, `smith_ggx_v_height_correlated`, `cook_torrance_rgb`.
    pub name: &'static str,
    /// `ndf`, `masking`, `fresnel`, `diffuse`, `material`, `brdf`, `sheen`, `clearcoat`,
    /// `multiscatter`, `envbrdf` or `encoding`.
    pub family: &'static str,
    /// One line.
    pub summary: &'static str,
    /// Authors, title, year.
    pub citation: &'static str,
    /// The parameters, in argument order.
    pub params: &'static [ParamSpec],
    /// Number of f64 outputs (1, 2 or 3).
    pub outputs: usize,
    /// Evaluates the model: `args` flattened (a `Vec3` parameter takes 3 consecutive
    /// scalars), `out` of length [`Model::outputs`].
    pub eval: fn(args: &[f64], out: &mut [f64]),
    /// A typical argument list (flattened), inside every parameter's range.
    pub example: &'static [f64],
}

impl Model {
    /// Length of the flattened argument list.
    pub fn arity(&self) -> usize {
        self.params.iter().map(|p| p.kind.width()).sum()
    }

    /// Evaluates at `args` into a new vector of [`Model::outputs`] values.
    ///
    /// Panics if `args.len() != self.arity()`.
    pub fn call(&self, args: &[f64]) -> Vec<f64> {
        assert_eq!(
            args.len(),
            self.arity(),
            "wrong argument count for {}",
            self.name
        );
        let mut out = vec![0.0; self.outputs];
        (self.eval)(args, &mut out);
        out
    }
}

/// All registered models, grouped by family.
/// How many models are registered.
const COUNT: usize = TERMS.len() + LOBES.len();

/// Every model: the separate terms first, then the composed lobes and the rest.
static MODELS: [Model; COUNT] = join(TERMS, LOBES);

/// `first` followed by `second`, at compile time.
const fn join(first: &[Model], second: &[Model]) -> [Model; COUNT] {
    let mut out = [first[0]; COUNT];
    let mut i = 0;
    while i < first.len() {
        out[i] = first[i];
        i += 1;
    }
    while i < COUNT {
        out[i] = second[i - first.len()];
        i += 1;
    }
    out
}

pub fn models() -> &'static [Model] {
    &MODELS
}

/// The model registered under `name`, if any.
pub fn find(name: &str) -> Option<&'static Model> {
    MODELS.iter().find(|m| m.name == name)
}

/// A human-readable listing of every model: name, outputs, summary, parameters and source.
pub fn listing() -> String {
    let mut s = String::new();
    let mut family = "";
    for m in &MODELS {
        if m.family != family {
            family = m.family;
            let _ = writeln!(s, "{family}:");
        }
        let out = match m.outputs {
            1 => "scalar",
            2 => "vec2",
            _ => "rgb",
        };
        let _ = writeln!(s, "  {} -> {}: {}", m.name, out, m.summary);
        for p in m.params {
            let kind = match p.kind {
                ParamKind::Scalar => "",
                ParamKind::Vec3 => " (vec3)",
            };
            let _ = writeln!(
                s,
                "      {}{}  {} [{} .. {}]",
                p.name, kind, p.doc, p.range.0, p.range.1
            );
        }
        let _ = writeln!(s, "      source: {}", m.citation);
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::HashSet;

    #[test]
    fn names_are_unique() {
        let mut seen = HashSet::new();
        for m in models() {
            assert!(seen.insert(m.name), "duplicate model name {}", m.name);
        }
    }

    #[test]
    fn every_model_is_finite_at_its_example() {
        for m in models() {
            assert_eq!(
                m.example.len(),
                m.arity(),
                "{}: example has the wrong length",
                m.name
            );
            let mut i = 0;
            for p in m.params {
                for &x in &m.example[i..i + p.kind.width()] {
                    assert!(
                        p.range.0 <= x && x <= p.range.1,
                        "{}: example {} = {x} outside {:?}",
                        m.name,
                        p.name,
                        p.range
                    );
                }
                i += p.kind.width();
            }
            let out = m.call(m.example);
            assert!(out.iter().all(|x| x.is_finite()), "{}: {out:?}", m.name);
        }
    }

    #[test]
    fn families_and_outputs_are_known() {
        let families = [
            "ndf",
            "masking",
            "fresnel",
            "diffuse",
            "material",
            "brdf",
            "sheen",
            "clearcoat",
            "multiscatter",
            "envbrdf",
            "encoding",
        ];
        for m in models() {
            assert!(
                families.contains(&m.family),
                "{}: family {}",
                m.name,
                m.family
            );
            assert!((1..=3).contains(&m.outputs), "{}", m.name);
            assert!(
                !m.citation.is_empty() && !m.summary.is_empty(),
                "{}",
                m.name
            );
        }
    }

    #[test]
    fn parameter_names_are_unique_within_a_model() {
        for m in models() {
            let mut seen = HashSet::new();
            for p in m.params {
                assert!(
                    seen.insert(p.name),
                    "{}: parameter {} twice",
                    m.name,
                    p.name
                );
            }
        }
    }

    #[test]
    fn find_returns_the_named_model() {
        assert_eq!(find("ggx_ndf").map(|m| m.name), Some("ggx_ndf"));
        assert!(find("no_such_model").is_none());
    }

    #[test]
    fn listing_names_every_model() {
        let text = listing();
        for m in models() {
            assert!(text.contains(m.name), "{}", m.name);
        }
    }
}
