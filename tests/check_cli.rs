//! `umbra check` and the check inside `umbra films`, run as the user would.

use std::path::Path;
use std::process::Command;
use umbra::image::Point;
use umbra::synth::gerber_writer::GerberWriter;

fn umbra() -> Command {
    Command::new(env!("CARGO_BIN_EXE_umbra"))
}

/// A 12 × 20 mm board whose top copper has two pads joined by a 0.08 mm track.
fn write_defect_board(dir: &Path) {
    let mut g = GerberWriter::new("check test", "Copper,L1,Top", "Positive");
    let pad = g.rect(1.5, 1.5);
    g.select(pad);
    g.flash(Point::new(4.0, 10.0));
    g.flash(Point::new(8.0, 10.0));
    let thin = g.circle(0.08);
    g.select(thin);
    g.move_to(Point::new(4.0, 10.0));
    g.line_to(Point::new(8.0, 10.0));
    std::fs::write(dir.join("t.top-copper.gbr"), g.finish()).unwrap();
    let mut o = GerberWriter::new("check test", "Profile,NP", "Positive");
    let line = o.circle(0.1);
    o.select(line);
    o.polyline(&[
        Point::new(0.0, 0.0),
        Point::new(12.0, 0.0),
        Point::new(12.0, 20.0),
        Point::new(0.0, 20.0),
        Point::new(0.0, 0.0),
    ]);
    std::fs::write(dir.join("t.outline.gbr"), o.finish()).unwrap();
}

#[test]
fn check_reports_the_thin_track_and_denies_on_request() {
    let dir = tempfile::tempdir().unwrap();
    let board = dir.path().join("board");
    std::fs::create_dir(&board).unwrap();
    write_defect_board(&board);
    let proof = dir.path().join("p.png");

    let out = umbra()
        .arg("check")
        .arg(&board)
        .arg("--proof")
        .arg(&proof)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{text}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(text.contains("copper too narrow"), "{text}");
    assert!(proof.exists());

    let out = umbra()
        .arg("check")
        .arg(&board)
        .args(["--no-proof", "--deny", "warnings"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));

    let out = umbra()
        .arg("check")
        .arg(&board)
        .args(["--no-proof", "--json"])
        .output()
        .unwrap();
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let f = &v["findings"][0];
    assert_eq!(f["kind"], "thin-copper");
    assert_eq!(f["number"], 1);
    // Within one 1200 dpi pixel of the drawn width and of the track's middle (6, 10).
    let px = 25.4 / 1200.0;
    assert!((f["width_mm"].as_f64().unwrap() - 0.08).abs() <= px);
    assert!((f["at_mm"]["x"].as_f64().unwrap() - 6.0).abs() <= px);
    assert!((f["at_mm"]["y"].as_f64().unwrap() - 10.0).abs() <= px);
}

#[test]
fn the_demo_board_checks_clean_and_films_writes_the_proof() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node");
    let dir = tempfile::tempdir().unwrap();
    let out = umbra()
        .arg("check")
        .arg(&demo)
        .args(["--deny", "warnings", "--proof"])
        .arg(dir.path().join("wren.png"))
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(out.status.success(), "{text}");
    assert!(text.contains("no findings"), "{text}");

    let films = dir.path().join("films");
    let out = umbra()
        .arg("films")
        .arg(&demo)
        .args(["--quiet", "--date", "2026-01-01", "-o"])
        .arg(&films)
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{text}\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(text.contains("no findings"), "{text}");
    assert!(films.join("proof.png").exists());
    let manifest: serde_json::Value =
        serde_json::from_slice(&std::fs::read(films.join("manifest.json")).unwrap()).unwrap();
    assert_eq!(manifest["check"]["proof"]["file"], "proof.png");
    assert!(
        manifest["check"]["films"][0]["copper_area_mm2"]
            .as_f64()
            .unwrap()
            > 0.0
    );
}

#[test]
fn the_default_profile_file_is_the_default_profile() {
    // The commented file `umbra profile init` writes must say exactly what the code assumes.
    let p = umbra::process::Profile::from_toml(umbra::process::DEFAULT_PROFILE_TOML, "default")
        .unwrap();
    assert_eq!(p, umbra::process::Profile::default());
    assert_eq!(p.limits, umbra::check::ProcessLimits::default());
}

#[test]
fn unknown_limit_keys_and_bad_values_are_refused() {
    let e =
        umbra::process::Profile::from_toml("[limits]\nmin_track_mm = 0.2\n", "p.toml").unwrap_err();
    assert!(e.to_string().contains("min_track_mm"), "{e}");
    let e =
        umbra::process::Profile::from_toml("[limits]\nmin_gap_mm = -1\n", "p.toml").unwrap_err();
    assert!(e.to_string().contains("min_gap_mm"), "{e}");
}
