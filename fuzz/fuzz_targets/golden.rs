//! The golden reader: any text must parse or give an error at a line, never
//! a panic or an allocation the file's size does not justify; what parses
//! renders back to text that parses to the same dataset.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use shadegate::golden;

fuzz_target!(|data: &[u8]| {
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
