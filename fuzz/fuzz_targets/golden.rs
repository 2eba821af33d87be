//! The golden readers: any bytes must parse or give an error at a line, never
//! a panic or an allocation the file's size does not justify; what parses
//! renders back to bytes that parse to the same dataset. Bytes starting with
//! the compact golden's first line go to the compact reader (header, index,
//! then every block decoded and every range read), the rest to the CSV one.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use shadegate::golden::{self, compact, Golden};
use shadegate::limits::Limits;

fn compact_case(data: &[u8]) {
    let path = Path::new("goldens/fuzz.golden");
    let limits = Limits::default();
    let r = match golden::parse_compact(path, data.to_vec(), &limits) {
        Ok(r) => r,
        Err(d) => {
            assert!(d.line >= 1, "compact golden error without a line: {}", d.rendered);
            return;
        }
    };
    let n = r.len();
    let outputs = match r.read_outputs(0..n) {
        Ok(o) => o,
        Err(d) => {
            assert!(d.line >= 1, "block error without a line: {}", d.rendered);
            return;
        }
    };
    // Any range reads the same values as the whole.
    let (a, b) = (n / 3, n - n / 4);
    let part = r.read_outputs(a..b).expect("a range of a readable golden reads");
    for (p, o) in part.iter().zip(&outputs) {
        assert_eq!(p[..], o[a..b]);
    }
    // Rendered again (inputs as zeros), it reads back to the same outputs.
    let g = Golden {
        header: r.header.clone(),
        inputs: r.inputs.clone(),
        outputs: r.outputs.clone(),
        input_columns: vec![vec![0; n]; r.inputs.len()],
        output_columns: outputs.clone(),
    };
    let back = golden::parse_compact(path, compact::render(&g, 7), &limits)
        .expect("a rendered compact golden parses");
    assert_eq!(back.header, r.header);
    assert_eq!(back.read_outputs(0..n).expect("it reads"), outputs);
    assert_eq!(back.check_inputs(0..n, &g.input_columns).expect("inputs match"), 0);
}

fuzz_target!(|data: &[u8]| {
    if data.starts_with(compact::MAGIC.as_bytes()) {
        return compact_case(data);
    }
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let path = Path::new("goldens/fuzz.csv");
    match golden::parse(path, text) {
        Ok(g) => {
            let back = golden::parse(path, &golden::render(&g)).expect("rendered golden parses");
            assert_eq!(back, g);
        }
        Err(d) => assert!(d.line >= 1, "golden error without a line: {}", d.rendered),
    }
});
