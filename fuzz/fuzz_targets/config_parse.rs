//! Arbitrary text as `kickback.toml`: a configuration or an error with a position, never a panic.
#![no_main]

use kickback::config::Config;
use libfuzzer_sys::fuzz_target;
use std::path::Path;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    match Config::parse(&text, Path::new("kickback.toml")) {
        Ok(config) => {
            let _ = kickback::check::validate_rule_ids(&config);
        }
        Err(e) => assert!(e.line >= 1 && e.column >= 1, "{e:?}"),
    }
});
