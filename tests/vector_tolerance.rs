//! The arc tolerance of the vector films as a setting: the profile key
//! `[device] vector_arc_tolerance_um` and `umbra films --arc-tolerance-um`.
//!
//! Sources: the sagitta of a chord subtending the angle θ on a circle of radius r is
//! r·(1 − cos(θ/2)) (elementary geometry); the default tolerance is 1/8 of the device dot,
//! 25.4/dpi/8 mm (docs/vector.md). Grid snapping of the boolean operations moves points by
//! a few steps of 1/64 of the tolerance (docs/vector.md, "The integer grid").

mod vector_support;

use std::path::Path;
use std::process::Command;
use umbra::image::{LayerImage, Point, Polarity, Shape};
use umbra::process::Profile;
use umbra::vector::{compose_film, VectorFilm, VectorOptions};
use vector_support::*;

fn disc_film(r: f64, opts: &VectorOptions) -> (VectorFilm, [f64; 2]) {
    let mut image = LayerImage::default();
    image.push(
        Polarity::Dark,
        Shape::Disc {
            center: Point::new(5.0, 5.0),
            diameter: 2.0 * r,
        },
    );
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 10.0, 10.0), &art);
    let rc = recipe(1200.0, true, true, 0.0);
    let vf = compose_film(&job(&image, &rc, &fr, &art), opts);
    let c = vf.space.apply(Point::new(5.0, 5.0));
    (vf, c)
}

fn vertices(vf: &VectorFilm) -> usize {
    vf.black.iter().flatten().map(|r| r.len()).sum()
}

#[test]
fn the_profile_key_reaches_the_vector_film() {
    let p = Profile::from_toml("[device]\nvector_arc_tolerance_um = 5.0\n", "lab.toml").unwrap();
    let (vf, _) = disc_film(1.0, &VectorOptions::from_profile(&p));
    // 5 µm = 0.005 mm (unit conversion).
    assert_eq!(vf.tolerance_mm, 0.005);
    // 0 and absent both mean the default: 1/8 of a 1200 dpi dot (docs/vector.md).
    let dot_eighth = 25.4 / 1200.0 / 8.0;
    for text in ["[device]\nvector_arc_tolerance_um = 0\n", ""] {
        let p = Profile::from_toml(text, "lab.toml").unwrap();
        let (vf, _) = disc_film(1.0, &VectorOptions::from_profile(&p));
        assert!((vf.tolerance_mm - dot_eighth).abs() < 1e-12, "{text:?}");
    }
}

#[test]
fn a_bad_tolerance_is_an_error_naming_key_and_file() {
    for v in ["-1.0", "nan", "inf", "1000.0"] {
        let text = format!("[device]\nvector_arc_tolerance_um = {v}\n");
        let e = Profile::from_toml(&text, "lab.toml")
            .unwrap_err()
            .to_string();
        assert!(e.contains("lab.toml"), "{e}");
        assert!(e.contains("device.vector_arc_tolerance_um"), "{e}");
    }
}

#[test]
fn the_command_line_option_refuses_a_negative_tolerance() {
    let dir = tempfile::tempdir().unwrap();
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node");
    let out = Command::new(env!("CARGO_BIN_EXE_umbra"))
        .args(["films", "-q", "--vector", "--arc-tolerance-um=-2", "-o"])
        .arg(dir.path().join("out"))
        .arg(&demo)
        .output()
        .unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--arc-tolerance-um"), "{err}");
    // Refused before any work: nothing written.
    assert!(!dir.path().join("out").exists());
}

#[test]
fn a_coarse_tolerance_gives_fewer_vertices() {
    let fine = disc_film(
        2.0,
        &VectorOptions {
            arc_tolerance_mm: Some(0.0005),
        },
    );
    let coarse = disc_film(
        2.0,
        &VectorOptions {
            arc_tolerance_mm: Some(0.02),
        },
    );
    // Chords per circle grow as π/acos(1 − t/r): about 140 at 0.5 µm, 23 at 20 µm on 2 mm.
    assert!(vertices(&coarse.0) * 4 < vertices(&fine.0));
}

#[test]
fn every_chord_of_a_flattened_circle_is_within_the_tolerance() {
    for t_um in [0.5, 2.6, 20.0, 100.0] {
        let t = t_um / 1000.0;
        let snap = t / 16.0;
        for r in [0.1, 0.75, 3.0] {
            let (vf, c) = disc_film(
                r,
                &VectorOptions {
                    arc_tolerance_mm: Some(t),
                },
            );
            assert_eq!(vf.black.len(), 1);
            let ring = &vf.black[0][0];
            assert!(ring.len() >= 3);
            for i in 0..ring.len() {
                let (p, q) = (ring[i], ring[(i + 1) % ring.len()]);
                // Vertices lie on the true circle.
                for v in [p, q] {
                    let d = (v[0] - c[0]).hypot(v[1] - c[1]);
                    assert!((d - r).abs() <= snap, "t {t} r {r}: vertex at {d}");
                }
                // The chord's angle θ and its sagitta r(1 − cos(θ/2)).
                let a = (p[1] - c[1]).atan2(p[0] - c[0]);
                let b = (q[1] - c[1]).atan2(q[0] - c[0]);
                let theta = (b - a).rem_euclid(std::f64::consts::TAU);
                let sagitta = r * (1.0 - (theta / 2.0).cos());
                assert!(sagitta <= t + snap, "t {t} r {r}: sagitta {sagitta}");
            }
        }
    }
}
