use std::process::ExitCode;

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    if args.first().map(String::as_str) != Some("check") {
        eprintln!("usage: kickback check FILE...");
        return ExitCode::from(2);
    }
    let options = kickback::check::CheckOptions::default();
    let mut code = 0u8;
    for path in &args[1..] {
        let report = kickback::check::check_file(std::path::Path::new(path), &options);
        if let Some(failure) = &report.failure {
            eprintln!("error: {failure}");
            code = 2;
            continue;
        }
        for f in &report.findings {
            let loc = report.sources.locate(f.span);
            println!(
                "{}:{}:{}: {}[{}]: {}",
                loc.file, loc.line, loc.column, f.severity, f.rule, f.message
            );
            if f.severity == kickback::diagnostic::Severity::Error && code == 0 {
                code = 1;
            }
        }
    }
    ExitCode::from(code)
}
