use std::process::ExitCode;

fn main() -> ExitCode {
    ExitCode::from(kickback::app::main())
}
