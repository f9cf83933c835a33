//! Broken drill files (fixtures/malformed-drill/, written for these tests): each gives a
//! clear error with file, line and column, or reads with a warning; none panics or hangs.
//! Every prefix of every fixture (a file cut short at any byte) is read too.

use std::path::Path;
use std::time::{Duration, Instant};
use umbra::excellon;
use umbra::limits::Limits;

enum Expect {
    /// An error on this line whose message contains the text.
    Error(u32, &'static str),
    /// Reads, with a warning containing the text.
    Warning(&'static str),
}

const CASES: &[(&str, Expect)] = &[
    (
        "truncated-mid-number.drl",
        Expect::Error(8, "number is missing"),
    ),
    ("truncated-no-end.drl", Expect::Warning("no end code")),
    ("undefined-tool.drl", Expect::Error(10, "T03")),
    ("bad-number.drl", Expect::Error(8, "malformed number")),
    ("huge-repeat.drl", Expect::Error(8, "max_step_repeat")),
    (
        "overflowing-repeat.drl",
        Expect::Error(8, "whole repeat count"),
    ),
    ("no-units.drl", Expect::Error(6, "units")),
    ("route-left-open.drl", Expect::Warning("router down")),
    ("impossible-arc.drl", Expect::Error(9, "radius")),
    ("giant-arc.drl", Expect::Warning("span")),
    ("garbage.drl", Expect::Error(8, "unexpected character")),
    ("endless-digits.drl", Expect::Error(7, "30 digits")),
    ("empty.drl", Expect::Warning("no end code")),
];

fn fixture(name: &str) -> String {
    let p = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fixtures/malformed-drill")
        .join(name);
    String::from_utf8_lossy(&std::fs::read(&p).unwrap()).into_owned()
}

#[test]
fn each_malformed_file_gives_its_error_or_warning() {
    for (name, expect) in CASES {
        let text = fixture(name);
        let result = excellon::read(&text, name, &Limits::default());
        match (expect, result) {
            (Expect::Error(line, words), Err(e)) => {
                assert_eq!(e.file, *name);
                assert_eq!(e.pos.line, *line, "{name}: {e}");
                assert!(e.pos.column >= 1);
                assert!(e.message.contains(words), "{name}: {e}");
            }
            (Expect::Warning(words), Ok(d)) => {
                assert!(
                    d.warnings.iter().any(|w| w.message.contains(words)),
                    "{name}: {:?}",
                    d.warnings
                );
            }
            (Expect::Error(..), Ok(d)) => panic!("{name}: read without error: {:?}", d.warnings),
            (Expect::Warning(_), Err(e)) => panic!("{name}: unexpected error {e}"),
        }
    }
}

#[test]
fn open_route_is_closed_and_giant_arc_stays_bounded() {
    let d = excellon::read(&fixture("route-left-open.drl"), "r", &Limits::default()).unwrap();
    assert_eq!(d.slots.len(), 1);
    assert_eq!(d.slots[0].path.len(), 3);
    let d = excellon::read(&fixture("giant-arc.drl"), "g", &Limits::default()).unwrap();
    // Sagitta formula: a half circle of r = 1e6 mm within 1 µm needs
    // ceil(π / (2 acos(1 − 1e-9))) ≈ 35 125 chords.
    let n = d.slots[0].path.len();
    assert!((30_000..40_000).contains(&n), "{n}");
}

#[test]
fn every_prefix_of_every_fixture_reads_without_panic() {
    let started = Instant::now();
    let all: Vec<String> =
        std::fs::read_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("fixtures/malformed-drill"))
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
    assert!(all.len() >= CASES.len());
    for name in all {
        let text = fixture(&name);
        for cut in (0..=text.len()).filter(|&i| text.is_char_boundary(i)) {
            // Ok or Err are both fine; a panic fails the test.
            let _ = excellon::read(&text[..cut], &name, &Limits::default());
        }
    }
    assert!(started.elapsed() < Duration::from_secs(60));
}

#[test]
fn one_huge_line_stays_fast_and_warnings_are_capped() {
    // 300 000 unknown codes on one line: positions must not be recounted from the line
    // start for each word, and the warning list must not grow without bound.
    let text = format!(
        "M48\nMETRIC\nT1C1.0\n%\nT1\n{}X1.0Y1.0 ; ünïcode comment\nM30\n",
        "G99".repeat(300_000)
    );
    let started = Instant::now();
    let d = excellon::read(&text, "huge.drl", &Limits::default()).unwrap();
    assert!(started.elapsed() < Duration::from_secs(20));
    assert_eq!(d.holes.len(), 1);
    assert!(d.warnings.len() <= 1001, "{}", d.warnings.len());
    assert!(d.warnings.last().unwrap().message.contains("more warnings"));
    // An error far along such a line still names the right column.
    let text = format!(
        "M48\nMETRIC\nT1C1.0\n%\nT1\n{}X1.0#\nM30\n",
        "M06".repeat(100_000)
    );
    let e = excellon::read(&text, "huge.drl", &Limits::default()).unwrap_err();
    assert_eq!((e.pos.line, e.pos.column), (6, 300_005));
}
