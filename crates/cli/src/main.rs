//! # rungs: command line over rungs-core
//!
//! Thin glue: reads files, calls core, prints text or JSON. Nothing is computed here.

fn main() {
    println!("rungs {}", rungs_core::VERSION);
}
