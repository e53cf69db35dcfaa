//! Arbitrary text as one value or expression; a value that comes back must be usable.
#![no_main]

use kickback::netlist::{evaluate_value, Num};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    if let Ok(Num::Known(v)) = evaluate_value(&text) {
        assert!(v.is_finite(), "{text:?} evaluated to {v}");
    }
});
