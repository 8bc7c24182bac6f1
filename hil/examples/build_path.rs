//! Runs the `build-path` command by hand, e.g.
//! `cargo run -p kappaline-hil --example build_path -- --input hil/data/orchard_rows.csv --out-rs /tmp/p.rs --out-svg /tmp/p.svg`.

fn main() -> anyhow::Result<()> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    kappaline_hil::pathcmd::run(&args)
}
