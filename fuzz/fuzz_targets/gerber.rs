//! Fuzz target: the Gerber reader must never panic or loop forever on any input; it returns
//! either a file or an error naming a position. Run with `cargo fuzz run gerber`.
#![no_main]

use libfuzzer_sys::fuzz_target;
use umbra::limits::Limits;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    // Small caps keep each run fast; the limits themselves are part of what is tested.
    let limits = Limits {
        max_objects: 100_000,
        max_step_repeat: 1_000,
        max_block_depth: 8,
        max_macro_primitives: 1_000,
        ..Limits::default()
    };
    if let Err(e) = umbra::gerber::read(&text, "fuzz.gbr", &limits) {
        assert!(e.pos.line >= 1 && e.pos.column >= 1);
    }
});
