//! Malformed input (fixtures/malformed, written for these tests): each file gives a clear
//! error naming file, line and column, or reads with a specific warning — never a panic,
//! never a hang. The expected positions were counted by hand in each fixture.

use std::path::Path;
use std::time::{Duration, Instant};
use umbra::gerber;
use umbra::limits::Limits;

enum Expect {
    /// An error at line:column whose message contains the text.
    Error(&'static str, &'static str),
    /// Reads, with a warning containing the text.
    Warning(&'static str),
}
use Expect::*;

const CASES: &[(&str, Expect)] = &[
    ("truncated_in_extended.gbr", Error("4:1", "never closed")),
    ("truncated_in_coordinate.gbr", Error("7:1", "truncated")),
    ("unknown_function_code.gbr", Error("7:1", "unexpected 'Q'")),
    (
        "unknown_extended_command.gbr",
        Warning("unknown extended command '%ZZ42"),
    ),
    ("bad_number.gbr", Error("6:4", "unexpected 'a'")),
    (
        "bad_aperture_number.gbr",
        Error("4:2", "decimals separated by X"),
    ),
    ("undefined_aperture.gbr", Error("5:1", "D11")),
    ("huge_step_repeat.gbr", Error("4:2", "max_step_repeat")),
    (
        "coordinates_before_format.gbr",
        Error("5:1", "format statement"),
    ),
    ("no_units.gbr", Error("5:1", "units are not known")),
    ("unknown_macro.gbr", Error("4:2", "macro 'THERMAL'")),
    (
        "flash_in_region.gbr",
        Error("7:1", "not allowed inside a region"),
    ),
    ("impossible_arc.gbr", Error("8:4", "no circle fits")),
    ("unclosed_block.gbr", Error("5:2", "never closed")),
    ("bad_operation_code.gbr", Error("4:5", "D07")),
    ("region_end_without_start.gbr", Error("4:1", "G37 without")),
    ("deeply_nested_blocks.gbr", Error("36:2", "max_block_depth")),
];

fn dir() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("fixtures/malformed")
}

#[test]
fn every_malformed_fixture_gives_its_error_or_warning() {
    let mut problems = Vec::new();
    for (name, expect) in CASES {
        let text = std::fs::read_to_string(dir().join(name)).expect("fixture exists");
        let start = Instant::now();
        let result = gerber::read(&text, name, &Limits::default());
        assert!(
            start.elapsed() < Duration::from_secs(2),
            "{name} took too long"
        );
        match (expect, result) {
            (Error(at, needle), Err(e)) => {
                let want = format!("{name}:{at}: ");
                let s = e.to_string();
                if !s.starts_with(&want) || !s.contains(needle) {
                    problems.push(format!(
                        "{name}: expected error at {at} containing {needle:?}, got {s}"
                    ));
                }
            }
            (Warning(needle), Ok(g)) => {
                if !g
                    .warnings
                    .iter()
                    .any(|w| w.to_string().contains(needle) && w.pos.is_some())
                {
                    problems.push(format!(
                        "{name}: expected warning {needle:?}, got {:?}",
                        g.warnings
                    ));
                }
            }
            (Error(..), Ok(_)) => problems.push(format!("{name}: expected an error, read fine")),
            (Warning(_), Err(e)) => {
                problems.push(format!("{name}: expected a warning, got error {e}"))
            }
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn every_fixture_is_listed() {
    let mut files: Vec<String> = std::fs::read_dir(dir())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    files.sort();
    let mut listed: Vec<String> = CASES.iter().map(|(n, _)| n.to_string()).collect();
    listed.sort();
    assert_eq!(files, listed);
}

#[test]
fn every_prefix_of_a_valid_file_reads_or_fails_cleanly() {
    // Truncation at every byte: no panic, and an error always names a position inside the
    // text.
    let text = "%FSLAX26Y26*%\n%MOMM*%\n%ADD10C,0.5*%\n%ADD11R,1X2*%\n%ABD12*%\nD10*\nX0Y0D03*\n%AB*%\nD11*\nG01*\nX0Y0D02*\nX1000000Y1000000D01*\nG75*G03X2000000Y0I1000000J-1000000D01*\nG36*X0Y0D02*X1000000D01*Y1000000D01*X0Y0D01*G37*\n%SRX2Y2I1J1*%\nD12*X3000000Y0D03*\n%SR*%\nM02*\n";
    let lines = text.lines().count() as u32;
    for cut in 0..=text.len() {
        if let Err(e) = gerber::read(&text[..cut], "t.gbr", &Limits::default()) {
            assert!(e.pos.line >= 1 && e.pos.line <= lines + 1, "cut {cut}: {e}");
        }
    }
}

#[test]
fn binary_garbage_is_an_error_not_a_panic() {
    let mut x: u32 = 12345;
    let bytes: Vec<u8> = (0..5000)
        .map(|_| {
            // xorshift: deterministic pseudo-random bytes
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            (x & 0xFF) as u8
        })
        .collect();
    let text = String::from_utf8_lossy(&bytes);
    assert!(gerber::read(&text, "garbage.bin", &Limits::default()).is_err());
}
