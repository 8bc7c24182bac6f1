//! `kappaline-hil`: see `kappaline-hil --help`.
fn main() -> std::process::ExitCode {
    kappaline_hil::cli::main()
}
