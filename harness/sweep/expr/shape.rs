//! Constructor forms of argument expressions: `Material(vec3(albedo), r * r)`,
//! `vec4(color, 1)`, `vec2(u, v)`, `mat3x3(t, b, n)`, `array(0.1, 0.2, 0.3)`,
//! and the splat `vec3(x)`. An argument of the function may be any WGSL value
//! type, but the expression language computes scalars and 3-vectors only; a
//! constructor written as a whole argument (or as a part of one) says how the
//! argument's leaves are made from such expressions. The constructor is kept
//! as a [`Node::Construct`] whose parts are ordinary expressions (or further
//! constructors); which type it builds is decided when the argument is bound to
//! the function's parameter (`gate::args`), since the suite does not know the
//! shader's types. `vec3(x)` is rewritten as `vec3(x, x, x)`, an ordinary
//! expression, so it works wherever a vec3 does (reference arguments too).

use super::parse::{parse, FUNCTIONS};
use super::{ExprError, Node};

/// Parse an argument expression: a constructor call as a whole (see the
/// module doc), or an ordinary expression.
pub(super) fn parse_arg(text: &str, limit: u32) -> Result<Node, ExprError> {
    arg(text, 0, 0, limit)
}

fn shifted(e: ExprError, by: usize) -> ExprError {
    ExprError {
        offset: e.offset + by,
        message: e.message,
    }
}

fn arg(text: &str, at: usize, depth: u32, limit: u32) -> Result<Node, ExprError> {
    if depth > limit {
        let l = crate::limits::Limit::ExpressionDepth;
        return Err(ExprError {
            offset: at,
            message: format!(
                "the constructors are nested deeper than {limit} levels (the `{l}` limit); {}",
                l.how_to_raise()
            ),
        });
    }
    let lead = text.len() - text.trim_start().len();
    let t = text.trim();
    let Some(call) = whole_call(t) else {
        return parse(text, limit, false).map_err(|e| shifted(e, at));
    };
    let parts = split_parts(&t[call.open + 1..t.len() - 1]);
    let base = &t[..call.name_end];
    let function = FUNCTIONS.iter().any(|(f, _)| *f == base);
    let generic = call.name_end != call.type_end;
    // `vec3(x, y, z)` is the expression language's own vec3; every other
    // call of a name it does not know, or of a vector with a type parameter
    // or a different number of parts, is a constructor.
    if function && !(base == "vec3" && (parts.len() != 3 || generic)) {
        return parse(text, limit, false).map_err(|e| shifted(e, at));
    }
    let inner = at + lead + call.open + 1;
    let mut nodes = Vec::with_capacity(parts.len());
    for (start, part) in &parts {
        if part.trim().is_empty() {
            return Err(ExprError {
                offset: inner + start,
                message: format!("`{}`: an empty part", &t[..call.open]),
            });
        }
        let n = arg(part, inner + start, depth + 1, limit)?;
        nodes.push((n, part.trim().to_string()));
    }
    if base == "vec3" && nodes.len() == 1 && !matches!(nodes[0].0, Node::Construct(..)) {
        // The splat: one value for every component.
        let x = nodes.remove(0).0;
        return Ok(Node::Call("vec3".into(), vec![x.clone(), x.clone(), x]));
    }
    Ok(Node::Construct(t[..call.type_end].to_string(), nodes))
}

/// Where the parts of a call `name<T>(...)` that spans all of `t` are.
struct Call {
    /// End of the name (before any `<...>`).
    name_end: usize,
    /// End of the name with its type parameters.
    type_end: usize,
    /// The opening parenthesis.
    open: usize,
}

/// `t` as one call `name(...)` or `name<...>(...)` whose closing
/// parenthesis is the last character, else `None`.
fn whole_call(t: &str) -> Option<Call> {
    let b = t.as_bytes();
    if !b
        .first()
        .is_some_and(|c| c.is_ascii_alphabetic() || *c == b'_')
    {
        return None;
    }
    let mut i = 0;
    while i < b.len() && (b[i].is_ascii_alphanumeric() || b[i] == b'_') {
        i += 1;
    }
    let name_end = i;
    if b.get(i) == Some(&b'<') {
        let mut d = 0;
        while i < b.len() {
            match b[i] {
                b'<' => d += 1,
                b'>' => {
                    d -= 1;
                    if d == 0 {
                        i += 1;
                        break;
                    }
                }
                _ => {}
            }
            i += 1;
        }
        if d != 0 {
            return None;
        }
    }
    let type_end = i;
    while i < b.len() && b[i].is_ascii_whitespace() {
        i += 1;
    }
    if b.get(i) != Some(&b'(') || b.last() != Some(&b')') {
        return None;
    }
    let open = i;
    let mut d = 0;
    for (j, &c) in b.iter().enumerate().skip(open) {
        match c {
            b'(' => d += 1,
            b')' => {
                d -= 1;
                if d == 0 && j != b.len() - 1 {
                    return None;
                }
            }
            _ => {}
        }
    }
    (d == 0).then_some(Call {
        name_end,
        type_end,
        open,
    })
}

/// The comma-separated parts of `inner` (commas inside brackets or type
/// parameters belong to their part), each with its byte offset; none for
/// an empty list.
fn split_parts(inner: &str) -> Vec<(usize, &str)> {
    if inner.trim().is_empty() {
        return Vec::new();
    }
    let mut out = Vec::new();
    let (mut d, mut start) = (0i32, 0);
    for (j, c) in inner.bytes().enumerate() {
        match c {
            b'(' | b'<' | b'[' => d += 1,
            b')' | b'>' | b']' => d -= 1,
            b',' if d == 0 => {
                out.push((start, &inner[start..j]));
                start = j + 1;
            }
            _ => {}
        }
    }
    out.push((start, &inner[start..]));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ctor(text: &str) -> (String, Vec<String>) {
        match parse_arg(text, 64).unwrap() {
            Node::Construct(name, parts) => (name, parts.into_iter().map(|p| p.1).collect()),
            other => panic!("not a constructor: {other:?}"),
        }
    }

    #[test]
    fn constructors_keep_their_parts() {
        assert_eq!(
            ctor("Material(vec3(albedo), r * r)"),
            (
                "Material".into(),
                vec!["vec3(albedo)".into(), "r * r".into()]
            )
        );
        assert_eq!(
            ctor(" vec4<f32>(c, 1) "),
            ("vec4<f32>".into(), vec!["c".into(), "1".into()])
        );
        assert_eq!(
            ctor("mat2x2(vec2(a, b), vec2(c, d))").1,
            vec!["vec2(a, b)".to_string(), "vec2(c, d)".into()]
        );
        assert_eq!(ctor("Empty()").1, Vec::<String>::new());
        // Nested constructors are constructors too.
        match parse_arg("Outer(Inner(1, 2), array(1, 2, 3))", 64).unwrap() {
            Node::Construct(_, parts) => {
                assert!(parts.iter().all(|p| matches!(p.0, Node::Construct(..))))
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn ordinary_expressions_stay_ordinary() {
        for text in ["vec3(a, b, c)", "normalize(v + l)", "r * r", "f(a) + g(b)"] {
            let n = parse_arg(text, 64);
            assert!(!matches!(n, Ok(Node::Construct(..))), "{text}: {n:?}");
        }
        // The splat is the vec3 of one value three times.
        let x = Node::Var("x".into());
        assert_eq!(
            parse_arg("vec3(x)", 64).unwrap(),
            Node::Call("vec3".into(), vec![x.clone(), x.clone(), x])
        );
    }

    #[test]
    fn a_constructor_is_no_value_of_the_expression_language() {
        let e = crate::sweep::Expr::parse_arg("Thing(r)", 64).unwrap();
        let err = e
            .bind(&["r".into()], &[crate::sweep::Value::S(0.5)])
            .unwrap_err();
        assert!(err.contains("can only stand as a whole argument"), "{err}");
    }

    #[test]
    fn errors_point_into_the_part() {
        let e = parse_arg("Material(vec3(a), r * * r)", 64).unwrap_err();
        // The second `*` of the second part.
        assert_eq!(e.offset, "Material(vec3(a), r * ".len(), "{e}");
        let e = parse_arg("vec4(a, , b)", 64).unwrap_err();
        assert!(e.message.contains("empty part"), "{e}");
        let deep = format!("{}1{}", "A(".repeat(10), ")".repeat(10));
        assert!(parse_arg(&deep, 4)
            .unwrap_err()
            .message
            .contains("nested deeper"));
    }
}
