//! # rungs-wasm: the page's window into core
//!
//! One handle type and plain data-transfer objects; errors become JS `Error`s. No numerics here.

use wasm_bindgen::prelude::*;

/// Version of the numerics compiled into this module.
#[wasm_bindgen]
pub fn version() -> String {
    rungs_core::VERSION.to_string()
}
