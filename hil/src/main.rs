fn main() { println!("kappaline-hil: harness not built yet"); }
