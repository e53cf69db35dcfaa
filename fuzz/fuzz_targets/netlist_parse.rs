//! Arbitrary bytes, decoded as a netlist file is, through the front end.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = kickback::netlist::decode(data.to_vec());
    let _ = kickback::netlist::parse_str("fuzz.cir", &text);
});
