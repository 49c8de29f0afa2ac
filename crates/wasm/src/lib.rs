//! # rungs-wasm: the page's window into core
//!
//! One handle type and plain data-transfer objects; errors become JS `Error`s. No numerics here:
//! every number comes from rungs-core and every figure from rungs-plot.

use wasm_bindgen::prelude::*;

/// Install the panic hook once, so a bug shows a readable message in the console.
#[wasm_bindgen(start)]
pub fn start() {
    console_error_panic_hook::set_once();
}

/// Version of the numerics compiled into this module.
#[wasm_bindgen]
pub fn version() -> String {
    rungs_core::VERSION.to_string()
}

/// Year of the CODATA constants set used by every computation.
#[wasm_bindgen]
pub fn codata_year() -> u32 {
    rungs_core::constants::CODATA_YEAR
}
