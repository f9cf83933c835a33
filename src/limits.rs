//! Caps that keep hostile or broken input from exhausting the machine.
//!
//! Each limit is far above anything a real board needs (the largest real file in our test
//! corpus has under 100,000 objects) and is reported with a clear error when exceeded.

/// Configurable resource caps.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Limits {
    /// Largest input file read, in bytes. Real Gerber files are rarely above 50 MB.
    pub max_file_bytes: u64,
    /// Most objects one layer image may hold after step-repeat and block expansion.
    pub max_objects: usize,
    /// Most copies one step-repeat may make (X count × Y count).
    pub max_step_repeat: u64,
    /// Deepest nesting of block apertures (AB inside AB).
    pub max_block_depth: usize,
    /// Most primitives one aperture macro instance may produce.
    pub max_macro_primitives: usize,
    /// Most pixels one film may have (width × height); 25400 dpi A3 is about 7.6e10.
    pub max_film_pixels: u64,
}

impl Default for Limits {
    fn default() -> Self {
        Limits {
            max_file_bytes: 512 * 1024 * 1024,
            max_objects: 20_000_000,
            max_step_repeat: 100_000,
            max_block_depth: 32,
            max_macro_primitives: 100_000,
            max_film_pixels: 100_000_000_000,
        }
    }
}
