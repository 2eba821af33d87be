//! Call-graph attribution: judge a callee at the arguments its caller really passes it.
//!
//! When `brdf` fails and the suite also binds a term it calls (say `material_f0`) to a
//! reference, the question is whether that call deviates from the term's own reference at
//! the arguments `brdf` gives it. [`call_sites`] lists the calls from a caller to a callee
//! (with their lines); [`capture`] evaluates, for one call site, what the callee received
//! and returned at every point of the caller's sweep; [`attribute`] judges the captured
//! results against the callee's reference, and `diagnose::search` can then name the
//! callee's mistake from the same columns.
//!
//! How capturing works without a hook in the evaluator: the tool rewrites a copy of the
//! validated naga module in memory (never a file): one private global per argument, one for
//! the result and one "reached" flag; at the chosen call site (inside whatever branches and
//! loops hold it) it stores the arguments and the flag just before the call and the result
//! just after; and for each captured value it adds a wrapper function, with the caller's
//! parameters, that calls the caller and returns the global. The rewritten module is
//! validated again and each wrapper compiled with the ordinary evaluator, so the capture
//! runs exactly the caller's code up to the call. A call inside a loop captures its last
//! execution; a point whose call is never reached has `reached = false`. Arguments passed
//! by pointer are not captured (an error names them).

use std::collections::BTreeMap;

use naga::{
    AddressSpace, Block, Expression, Function, FunctionResult, GlobalVariable, Handle, Literal,
    Module, Range, Scalar, Span, Statement, Type, TypeInner,
};

use crate::diagnostic::Diagnostic;
use crate::eval::Program;
use crate::reference::Model;
use crate::values::bits_to_f64;
use crate::wgsl::Shader;

/// One call from a caller to a callee.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CallSite {
    pub caller: String,
    pub callee: String,
    /// Which call to `callee` in the caller's body, in source order (0 is the first).
    pub index: usize,
    /// Where the call is in the shader's source.
    pub line: u32,
    pub column: u32,
}

/// What one call site received and returned at every point of the caller's sweep.
#[derive(Clone, Debug)]
pub struct Captured {
    pub site: CallSite,
    /// The callee's argument leaves, named as `Program::input_leaves` names them, each a
    /// column of f64 values.
    pub args: Vec<(String, Vec<f64>)>,
    /// The callee's result leaves at that call.
    pub result: Vec<(String, Vec<f64>)>,
    /// Whether the call was executed for the point.
    pub reached: Vec<bool>,
}

impl Captured {
    /// The argument columns as slices.
    pub fn arg_columns(&self) -> Vec<&[f64]> {
        self.args.iter().map(|(_, c)| c.as_slice()).collect()
    }

    /// The result columns as slices.
    pub fn result_columns(&self) -> Vec<&[f64]> {
        self.result.iter().map(|(_, c)| c.as_slice()).collect()
    }
}

/// How one call site compares with the callee's reference at the arguments it received.
#[derive(Clone, Debug, PartialEq)]
pub struct Attribution {
    pub site: CallSite,
    /// Points of the caller's sweep at which the call ran.
    pub reached: usize,
    /// Of those, points at which the callee's result fails against its reference.
    pub deviating: Vec<usize>,
    /// The caller's failing points at which the call ran, and how many of them the callee
    /// deviates at: `deviating_failing / failing_reached` is the share of the caller's
    /// failure the call accounts for.
    pub failing_reached: usize,
    pub deviating_failing: usize,
}

fn find_function(module: &Module, name: &str) -> Option<Handle<Function>> {
    module
        .functions
        .iter()
        .find(|(_, f)| f.name.as_deref() == Some(name))
        .map(|(h, _)| h)
}

fn missing(shader: &Shader, what: &str) -> Diagnostic {
    Diagnostic::without_position(&shader.path, format!("no function `{what}` in the shader"))
}

/// Every call statement to `callee` in `block`, in order, with its span.
fn calls_in(block: &Block, callee: Handle<Function>, out: &mut Vec<Span>) {
    for (s, span) in block.span_iter() {
        match s {
            Statement::Call { function, .. } if *function == callee => out.push(*span),
            Statement::Block(b) => calls_in(b, callee, out),
            Statement::If { accept, reject, .. } => {
                calls_in(accept, callee, out);
                calls_in(reject, callee, out);
            }
            Statement::Loop {
                body, continuing, ..
            } => {
                calls_in(body, callee, out);
                calls_in(continuing, callee, out);
            }
            Statement::Switch { cases, .. } => {
                for c in cases {
                    calls_in(&c.body, callee, out);
                }
            }
            _ => {}
        }
    }
}

/// The calls from `caller` to `callee`, in source order.
pub fn call_sites(
    shader: &Shader,
    caller: &str,
    callee: &str,
) -> Result<Vec<CallSite>, Diagnostic> {
    let m = &shader.module;
    let f = find_function(m, caller).ok_or_else(|| missing(shader, caller))?;
    let c = find_function(m, callee).ok_or_else(|| missing(shader, callee))?;
    let mut spans = Vec::new();
    calls_in(&m.functions[f].body, c, &mut spans);
    Ok(spans
        .into_iter()
        .enumerate()
        .map(|(index, span)| {
            let (line, column) = shader.line_col(span);
            CallSite {
                caller: caller.into(),
                callee: callee.into(),
                index,
                line,
                column,
            }
        })
        .collect())
}

/// The globals the rewrite stores into, and the statements it inserts.
struct Plan {
    callee: Handle<Function>,
    index: usize,
    seen: usize,
    /// Pointer expressions (in the caller's arena) of the argument, result and flag globals.
    args: Vec<Handle<Expression>>,
    result: Option<Handle<Expression>>,
    flag: Handle<Expression>,
    one: Handle<Expression>,
    done: bool,
}

/// `block` with the stores of `plan` around its chosen call.
fn rewrite(block: &Block, plan: &mut Plan) -> Block {
    let mut out = Block::with_capacity(block.len());
    for (s, span) in block.span_iter() {
        let s = match s {
            Statement::Call {
                function,
                arguments,
                result,
            } if *function == plan.callee => {
                let chosen = plan.seen == plan.index;
                plan.seen += 1;
                if chosen {
                    plan.done = true;
                    for (&g, &a) in plan.args.iter().zip(arguments) {
                        out.push(
                            Statement::Store {
                                pointer: g,
                                value: a,
                            },
                            Span::UNDEFINED,
                        );
                    }
                    out.push(
                        Statement::Store {
                            pointer: plan.flag,
                            value: plan.one,
                        },
                        Span::UNDEFINED,
                    );
                    out.push(s.clone(), *span);
                    if let (Some(g), Some(r)) = (plan.result, result) {
                        out.push(
                            Statement::Store {
                                pointer: g,
                                value: *r,
                            },
                            Span::UNDEFINED,
                        );
                    }
                    continue;
                }
                s.clone()
            }
            Statement::Block(b) => Statement::Block(rewrite(b, plan)),
            Statement::If {
                condition,
                accept,
                reject,
            } => Statement::If {
                condition: *condition,
                accept: rewrite(accept, plan),
                reject: rewrite(reject, plan),
            },
            Statement::Loop {
                body,
                continuing,
                break_if,
            } => Statement::Loop {
                body: rewrite(body, plan),
                continuing: rewrite(continuing, plan),
                break_if: *break_if,
            },
            Statement::Switch { selector, cases } => Statement::Switch {
                selector: *selector,
                cases: cases
                    .iter()
                    .map(|c| naga::SwitchCase {
                        value: c.value,
                        body: rewrite(&c.body, plan),
                        fall_through: c.fall_through,
                    })
                    .collect(),
            },
            other => other.clone(),
        };
        out.push(s, *span);
    }
    out
}

fn private(module: &mut Module, name: String, ty: Handle<Type>) -> Handle<GlobalVariable> {
    module.global_variables.append(
        GlobalVariable {
            name: Some(name),
            space: AddressSpace::Private,
            binding: None,
            ty,
            init: None,
            memory_decorations: Default::default(),
        },
        Span::UNDEFINED,
    )
}

/// A function with `caller`'s parameters that calls it and returns global `g`.
fn wrapper(
    module: &Module,
    caller: Handle<Function>,
    g: Handle<GlobalVariable>,
    name: &str,
) -> Function {
    let c = &module.functions[caller];
    let mut f = Function {
        name: Some(name.into()),
        arguments: c.arguments.clone(),
        result: Some(FunctionResult {
            ty: module.global_variables[g].ty,
            binding: None,
        }),
        ..Default::default()
    };
    let args: Vec<_> = (0..c.arguments.len() as u32)
        .map(|i| {
            f.expressions
                .append(Expression::FunctionArgument(i), Span::UNDEFINED)
        })
        .collect();
    let result = c.result.as_ref().map(|_| {
        f.expressions
            .append(Expression::CallResult(caller), Span::UNDEFINED)
    });
    let ptr = f
        .expressions
        .append(Expression::GlobalVariable(g), Span::UNDEFINED);
    let load = f
        .expressions
        .append(Expression::Load { pointer: ptr }, Span::UNDEFINED);
    f.body.push(
        Statement::Call {
            function: caller,
            arguments: args,
            result,
        },
        Span::UNDEFINED,
    );
    f.body.push(
        Statement::Emit(Range::new_from_bounds(load, load)),
        Span::UNDEFINED,
    );
    f.body
        .push(Statement::Return { value: Some(load) }, Span::UNDEFINED);
    f
}

/// Evaluate what call `site` receives and returns at every point of the caller's sweep.
/// `inputs` are the caller's input columns in the evaluator's encoding (as
/// `Program::eval` takes them).
pub fn capture(
    shader: &Shader,
    site: &CallSite,
    inputs: &[&[u32]],
) -> Result<Captured, Diagnostic> {
    let mut module = shader.module.clone();
    let caller =
        find_function(&module, &site.caller).ok_or_else(|| missing(shader, &site.caller))?;
    let callee =
        find_function(&module, &site.callee).ok_or_else(|| missing(shader, &site.callee))?;
    let callee_fn = module.functions[callee].clone();
    for (j, a) in callee_fn.arguments.iter().enumerate() {
        if matches!(module.types[a.ty].inner, TypeInner::Pointer { .. }) {
            return Err(Diagnostic::without_position(
                &shader.path,
                format!(
                    "argument {} of `{}` is a pointer; its value cannot be captured",
                    j + 1,
                    site.callee
                ),
            ));
        }
    }
    let f32_ty = module.types.insert(
        Type {
            name: None,
            inner: TypeInner::Scalar(Scalar::F32),
        },
        Span::UNDEFINED,
    );
    let arg_globals: Vec<_> = callee_fn
        .arguments
        .iter()
        .enumerate()
        .map(|(j, a)| private(&mut module, format!("__capture_arg{j}"), a.ty))
        .collect();
    let result_global = callee_fn
        .result
        .as_ref()
        .map(|r| private(&mut module, "__capture_result".into(), r.ty));
    let flag_global = private(&mut module, "__capture_reached".into(), f32_ty);

    let body = {
        let f = &mut module.functions[caller];
        let mut gexpr = |g| {
            f.expressions
                .append(Expression::GlobalVariable(g), Span::UNDEFINED)
        };
        let args = arg_globals.iter().map(|&g| gexpr(g)).collect();
        let result = result_global.map(&mut gexpr);
        let flag = gexpr(flag_global);
        let one = f
            .expressions
            .append(Expression::Literal(Literal::F32(1.0)), Span::UNDEFINED);
        let mut plan = Plan {
            callee,
            index: site.index,
            seen: 0,
            args,
            result,
            flag,
            one,
            done: false,
        };
        let body = rewrite(&f.body, &mut plan);
        if !plan.done {
            return Err(Diagnostic::without_position(
                &shader.path,
                format!(
                    "`{}` has no call {} to `{}`",
                    site.caller,
                    site.index + 1,
                    site.callee
                ),
            ));
        }
        body
    };
    module.functions[caller].body = body;

    let mut names = Vec::new();
    let mut globals: Vec<_> = arg_globals.clone();
    globals.extend(result_global);
    globals.push(flag_global);
    for (k, &g) in globals.iter().enumerate() {
        let name = format!("__capture_{k}");
        let w = wrapper(&module, caller, g, &name);
        module.functions.append(w, Span::UNDEFINED);
        names.push(name);
    }
    let caps = naga::valid::Capabilities::SHADER_FLOAT16
        | naga::valid::Capabilities::SHADER_FLOAT16_IN_FLOAT32;
    let info = naga::valid::Validator::new(naga::valid::ValidationFlags::all(), caps)
        .validate(&module)
        .map_err(|e| {
            Diagnostic::without_position(
                &shader.path,
                format!(
                    "capturing the call to `{}` failed validation: {}",
                    site.callee,
                    e.as_inner()
                ),
            )
        })?;
    let rewritten = Shader {
        path: shader.path.clone(),
        source: shader.source.clone(),
        module,
        info,
        parts: shader.parts.clone(),
    };

    let mut columns = Vec::new();
    for name in &names {
        let p = Program::compile(&rewritten, name, &BTreeMap::new())?;
        let mut out = Vec::new();
        p.eval(inputs, &mut out);
        columns.push(
            p.output_leaves()
                .into_iter()
                .zip(out)
                .map(|((_, kind), col)| {
                    col.into_iter()
                        .map(|b| bits_to_f64(kind, b))
                        .collect::<Vec<f64>>()
                })
                .collect::<Vec<_>>(),
        );
    }
    // Leaf names as the callee's own program names its inputs and result.
    let callee_program = Program::compile(shader, &site.callee, &BTreeMap::new())?;
    let mut arg_names = callee_program.input_leaves().into_iter().map(|(n, _)| n);
    let mut result_names = callee_program.output_leaves().into_iter().map(|(n, _)| n);
    let mut cols = columns.into_iter();
    let mut args = Vec::new();
    for _ in &arg_globals {
        for col in cols.next().unwrap_or_default() {
            args.push((arg_names.next().unwrap_or_default(), col));
        }
    }
    let mut result = Vec::new();
    if result_global.is_some() {
        for col in cols.next().unwrap_or_default() {
            result.push((result_names.next().unwrap_or_default(), col));
        }
    }
    let reached = cols
        .next()
        .and_then(|c| c.into_iter().next())
        .unwrap_or_default()
        .into_iter()
        .map(|x| x == 1.0)
        .collect();
    Ok(Captured {
        site: site.clone(),
        args,
        result,
        reached,
    })
}

/// Judge a captured call against the callee's reference: `reference_args` maps the
/// callee's argument leaves at a point to the model's flattened arguments (the suite's
/// binding for the callee's own check), `pass(i, got, expected)` is the callee check's
/// tolerance, and `failing` are the caller's failing points.
pub fn attribute<M, P>(
    captured: &Captured,
    model: &Model,
    reference_args: M,
    pass: P,
    failing: &[usize],
) -> Attribution
where
    M: Fn(&[f64]) -> Vec<f64>,
    P: Fn(usize, &[f64], &[f64]) -> bool,
{
    let n = captured.reached.len();
    let mut deviating = Vec::new();
    let mut leaves = vec![0.0; captured.args.len()];
    let mut got = vec![0.0; captured.result.len()];
    for i in (0..n).filter(|&i| captured.reached[i]) {
        for (k, (_, c)) in captured.args.iter().enumerate() {
            leaves[k] = c[i];
        }
        for (k, (_, c)) in captured.result.iter().enumerate() {
            got[k] = c[i];
        }
        let want = model.call(&reference_args(&leaves));
        if !pass(i, &got, &want) {
            deviating.push(i);
        }
    }
    let failing_reached: Vec<usize> = failing
        .iter()
        .copied()
        .filter(|&i| i < n && captured.reached[i])
        .collect();
    let deviating_failing = failing_reached
        .iter()
        .filter(|i| deviating.binary_search(i).is_ok())
        .count();
    Attribution {
        site: captured.site.clone(),
        reached: captured.reached.iter().filter(|&&r| r).count(),
        deviating,
        failing_reached: failing_reached.len(),
        deviating_failing,
    }
}
