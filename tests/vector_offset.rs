//! The geometric edge offset against analytic values.
//!
//! Sources: the set of points within d of a disc of radius r is the disc of radius r + d
//! (triangle inequality); a round-pen track of width w shrunk by d has parallel edges at
//! w/2 − d from its centre line (parallel lines at a distance); a hole of radius r in a
//! grown region becomes a hole of radius r − d. Vertices lie on chords inside the true
//! curves by at most the arc tolerance (sagitta bound, `vector::flatten`), so every
//! comparison allows that tolerance plus `SNAP` of grid snapping: the boolean operations
//! snap to an integer grid of at most 1/64 of the arc tolerance and merge points a few grid
//! steps apart (docs/vector.md, "The integer grid"), so `SNAP` allows four such steps.

mod vector_support;

use std::f64::consts::PI;
use umbra::image::{LayerImage, Point, Polarity, Shape};
use umbra::vector::{compose_film, region_area, VectorOptions};
use vector_support::*;

const TOL: f64 = 0.0005;
/// Grid snapping allowance: four steps of the 1/64-tolerance grid (module docs).
const SNAP: f64 = TOL / 16.0;

fn opts() -> VectorOptions {
    VectorOptions {
        arc_tolerance_mm: Some(TOL),
    }
}

/// Distance of every vertex of every ring from `c` (film mm).
fn radii(rings: &[Vec<[f64; 2]>], c: [f64; 2]) -> Vec<f64> {
    rings
        .iter()
        .flatten()
        .map(|p| (p[0] - c[0]).hypot(p[1] - c[1]))
        .collect()
}

/// The y values where the vertical line at `x` crosses the region's edges.
fn crossings(region: &umbra::vector::Region, x: f64) -> Vec<f64> {
    let mut ys = Vec::new();
    for ring in region.iter().flatten() {
        for i in 0..ring.len() {
            let (p, q) = (ring[i], ring[(i + 1) % ring.len()]);
            if (p[0] <= x) != (q[0] <= x) {
                ys.push(p[1] + (q[1] - p[1]) * (x - p[0]) / (q[0] - p[0]));
            }
        }
    }
    ys
}

#[test]
fn a_disc_grown_by_d_has_radius_r_plus_d() {
    let r = 0.5;
    let mut image = LayerImage::default();
    image.push(
        Polarity::Dark,
        Shape::Disc {
            center: Point::new(2.0, 2.0),
            diameter: 2.0 * r,
        },
    );
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 4.0, 4.0), &art);
    for offset_um in [100.0, -100.0] {
        let rc = recipe(1200.0, true, true, offset_um);
        let vf = compose_film(&job(&image, &rc, &fr, &art), &opts());
        let want = r + offset_um / 1000.0;
        assert_eq!(vf.black.len(), 1, "one disc");
        let c = vf.space.apply(Point::new(2.0, 2.0));
        for q in radii(&vf.black[0], c) {
            // Vertices lie on or inside the true circle by at most the tolerance.
            assert!(
                q <= want + SNAP && q >= want - TOL - SNAP,
                "{offset_um}: {q} vs {want}"
            );
        }
        // Area of the disc π(r + d)², less at most the chord segments (perimeter × tol).
        let a = region_area(&vf.black);
        let exact = PI * want * want;
        assert!(
            a <= exact + SNAP && a >= exact - 2.0 * PI * want * TOL,
            "{a} {exact}"
        );
    }
}

#[test]
fn a_track_of_0_2_mm_shrunk_by_0_05_mm_is_0_1_mm_wide() {
    let mut image = LayerImage::default();
    image.push(
        Polarity::Dark,
        Shape::Stroke {
            start: Point::new(1.0, 2.0),
            end: Point::new(4.0, 2.0),
            arc: None,
            width: 0.2,
        },
    );
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 5.0, 4.0), &art);
    let rc = recipe(1200.0, true, true, -50.0);
    let vf = compose_film(&job(&image, &rc, &fr, &art), &opts());
    let y0 = vf.space.apply(Point::new(0.0, 2.0))[1];
    let (x_lo, x_hi) = (
        vf.space.apply(Point::new(1.5, 0.0))[0],
        vf.space.apply(Point::new(3.5, 0.0))[0],
    );
    // Across the straight part the black is exactly 0.1 mm wide, centred on the track.
    for k in 0..=10 {
        let x = x_lo + (x_hi - x_lo) * k as f64 / 10.0;
        let mut ys = crossings(&vf.black, x);
        ys.sort_by(f64::total_cmp);
        assert_eq!(ys.len(), 2, "{ys:?}");
        assert!(
            (ys[1] - ys[0] - 0.1).abs() < SNAP,
            "width {}",
            ys[1] - ys[0]
        );
        assert!(((ys[0] + ys[1]) / 2.0 - y0).abs() < SNAP);
    }
    // The ends are round caps of radius 0.05 mm: total length 3 + 0.1 mm.
    let xs: Vec<f64> = vf.black.iter().flatten().flatten().map(|p| p[0]).collect();
    let len =
        xs.iter().cloned().fold(f64::MIN, f64::max) - xs.iter().cloned().fold(f64::MAX, f64::min);
    assert!((len - 3.1).abs() < TOL + SNAP, "{len}");
    // Area: 3 × 0.1 rectangle + disc of radius 0.05 (minus chord segments).
    let a = region_area(&vf.black);
    let exact = 0.3 + PI * 0.05 * 0.05;
    assert!(
        a <= exact + SNAP && a >= exact - 2.0 * PI * 0.05 * TOL,
        "{a} {exact}"
    );
}

/// A copper pour with a clear cut-out: growing the copper shrinks the hole.
#[test]
fn a_clear_cut_out_shrinks_when_the_copper_grows() {
    let (r, d) = (1.0, 0.15);
    let mut image = LayerImage::default();
    image.push(
        Polarity::Dark,
        Shape::Polygon(umbra::image::Contour::from_points(&[
            Point::new(0.0, 0.0),
            Point::new(6.0, 0.0),
            Point::new(6.0, 6.0),
            Point::new(0.0, 6.0),
        ])),
    );
    image.push(
        Polarity::Clear,
        Shape::Disc {
            center: Point::new(3.0, 3.0),
            diameter: 2.0 * r,
        },
    );
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 6.0, 6.0), &art);
    let rc = recipe(1200.0, true, true, d * 1000.0);
    let vf = compose_film(&job(&image, &rc, &fr, &art), &opts());
    assert_eq!(vf.black.len(), 1);
    assert_eq!(vf.black[0].len(), 2, "outer ring and the hole");
    let c = vf.space.apply(Point::new(3.0, 3.0));
    let hole = &vf.black[0][1];
    let want = r - d;
    for q in radii(std::slice::from_ref(hole), c) {
        // The hole is the complement of a grown region: its boundary is the true circle
        // of radius r − d, approached from the flattened (inscribed) cut-out.
        assert!(q <= want + SNAP && q >= want - TOL - SNAP, "{q} vs {want}");
    }
    // Holes are clockwise (negative area): π(r − d)².
    let ha = -umbra::vector::ring_area(hole);
    assert!(
        (ha - PI * want * want).abs() < 2.0 * PI * want * TOL + SNAP,
        "{ha}"
    );
    // The square grew by d with round corners (Steiner formula): (6 + 2d)² − (4 − π)d²,
    // clipped to the film (border 1 mm, so nothing is clipped).
    let outer = umbra::vector::ring_area(&vf.black[0][0]);
    let exact = (6.0 + 2.0 * d).powi(2) - (4.0 - PI) * d * d;
    assert!((outer - exact).abs() < 1e-3, "{outer} {exact}");
}

/// On a negative film (black = background) the same positive offset grows the
/// background: copper features get smaller.
#[test]
fn on_a_negative_film_growing_black_shrinks_the_copper() {
    let r = 0.8;
    let mut image = LayerImage::default();
    image.push(
        Polarity::Dark,
        Shape::Disc {
            center: Point::new(2.0, 2.0),
            diameter: 2.0 * r,
        },
    );
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 4.0, 4.0), &art);
    let rc = recipe(1200.0, true, false, 100.0);
    let vf = compose_film(&job(&image, &rc, &fr, &art), &opts());
    // One polygon: the film rectangle (black) with a hole where the copper is.
    assert_eq!(vf.black.len(), 1);
    assert_eq!(vf.black[0].len(), 2);
    let c = vf.space.apply(Point::new(2.0, 2.0));
    for q in radii(&vf.black[0][1..], c) {
        assert!((q - (r - 0.1)).abs() < TOL + SNAP, "{q}");
    }
    // The outer ring is the whole film: black touching the film edge is clipped, not grown.
    let w = vf.space.width_mm;
    let h = vf.space.height_mm;
    // Snapping moves each side by at most SNAP: the area by at most the perimeter times SNAP.
    assert!((umbra::vector::ring_area(&vf.black[0][0]) - w * h).abs() < 2.0 * (w + h) * SNAP);
}
