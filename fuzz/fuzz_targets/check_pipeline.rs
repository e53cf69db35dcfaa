//! Bytes → netlist → circuit → analysis → rules → every renderer. The pipeline's own panic
//! guard is bypassed in effect: an internal-error failure counts as a crash here.
#![no_main]

use kickback::check::{check_str, CheckError, CheckOptions};
use kickback::config::Config;
use kickback::diagnostic::Severity;
use kickback::netlist::Limits;
use kickback::report;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = kickback::netlist::decode(data.to_vec());
    let options = CheckOptions {
        // Small enough that the fuzzer explores shapes rather than sizes.
        limits: Limits {
            max_elements: 20_000,
            ..Limits::default()
        },
        config_path: None,
        rule_levels: Vec::new(),
    };
    let file = check_str("fuzz.cir", &text, &Config::default(), &options);
    if let Some(CheckError::Internal { message, .. }) = &file.failure {
        panic!("internal error: {message}");
    }
    let reports = [file];
    let human = report::cards::CardsOptions {
        color: true,
        unicode: true,
        width: 100,
        min_severity: Severity::Note,
        summary: true,
    };
    let _ = report::cards::render(&reports, &human);
    let _ = report::lines::render(&reports, Severity::Note);
    let _ = report::json::render(&reports);
    let _ = report::sarif::render(&reports);
});
