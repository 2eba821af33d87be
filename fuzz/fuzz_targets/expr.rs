//! The argument expression language: parse, list variables, bind to a
//! sweep of two parameters (a scalar and a vec3) and evaluate at one point.
//! Any input must give an expression or an error, never a panic.
#![no_main]

use libfuzzer_sys::fuzz_target;
use shadegate::sweep::{Expr, Value};

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(e) = Expr::parse(text) else {
        return;
    };
    let _ = e.variables();
    let names = ["x".to_string(), "v".to_string()];
    let example = [Value::S(0.5), Value::V([0.0, 0.6, 0.8])];
    if let Ok(b) = e.bind(&names, &example) {
        let _ = b.eval(&[Value::S(-0.25), Value::V([1.0, 0.0, 0.0])]);
    }
    let _ = e.substitute("x", &Expr::parse("x * 2").expect("parses"));
});
