//! Fuzz target for the Excellon reader: any bytes must give Ok or Err, never a panic or an
//! endless loop, and an Ok result must keep the `DrillFile` guarantees.
//! Run with `cargo fuzz run drill` from the `fuzz` folder.
#![no_main]

use libfuzzer_sys::fuzz_target;
use umbra::excellon;
use umbra::limits::Limits;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    // Small caps keep each run fast; they are checked like the defaults.
    let limits = Limits {
        max_objects: 200_000,
        max_step_repeat: 10_000,
        ..Limits::default()
    };
    let _ = excellon::looks_like_drill(&text);
    if let Ok(d) = excellon::read(&text, "fuzz.drl", &limits) {
        for t in &d.tools {
            assert!(t.diameter_mm.is_finite() && t.diameter_mm >= 0.0);
        }
        for h in &d.holes {
            assert!(h.tool < d.tools.len());
            assert!(h.at.x.is_finite() && h.at.y.is_finite());
        }
        for s in &d.slots {
            assert!(s.tool < d.tools.len());
            assert!(s.path.len() >= 2);
            assert!(s.path.iter().all(|p| p.x.is_finite() && p.y.is_finite()));
        }
    }
});
