//! Chains of straight strokes composed as one outline (`umbra::vector::chain`) cover the
//! same area as the strokes' capsules united one by one, and are still cut by later Clear
//! objects.
//!
//! References outside the code under test: the area of a stroke of a round pen is the
//! Minkowski sum of the segment and the pen's disc (a capsule: 2hL + πh², elementary
//! geometry); the `geo` crate (BooleanOps, Area) unites and cuts finely flattened capsules
//! for the general cases. Flattened shapes lie inside the true ones by at most the arc
//! tolerance, so each check allows tolerance × perimeter (docs/vector.md).

mod vector_support;

use geo::{Area, BooleanOps, Coord, LineString, MultiPolygon, Polygon};
use std::f64::consts::PI;
use umbra::image::{LayerImage, Point, Polarity, Shape};
use umbra::vector::chain::runs;
use umbra::vector::{compose_film, region_area, VectorOptions};
use vector_support::*;

const TOL: f64 = 0.0005;

fn stroke(a: (f64, f64), b: (f64, f64), width: f64) -> Shape {
    Shape::Stroke {
        start: Point::new(a.0, a.1),
        end: Point::new(b.0, b.1),
        arc: None,
        width,
    }
}

/// Strokes along `pts` drawn end to end, all Dark.
fn chain_image(pts: &[(f64, f64)], width: f64) -> LayerImage {
    let mut image = LayerImage::default();
    for w in pts.windows(2) {
        image.push(Polarity::Dark, stroke(w[0], w[1], width));
    }
    image
}

/// The black area of `image` on a bare film over a 4 × 4 mm board (mirrored or not).
fn black_area(image: &LayerImage, mirror: bool) -> f64 {
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 4.0, 4.0), &art);
    let mut rc = recipe(1200.0, true, true, 0.0);
    rc.mirror = mirror;
    let opts = VectorOptions {
        arc_tolerance_mm: Some(TOL),
    };
    region_area(&compose_film(&job(image, &rc, &fr, &art), &opts).black)
}

/// A capsule for geo, its half circles flattened to 720 chords per turn (sagitta ~1e-5 h,
/// far below the tolerance of the checks).
fn geo_capsule(a: (f64, f64), b: (f64, f64), h: f64) -> MultiPolygon<f64> {
    let dir = (b.1 - a.1).atan2(b.0 - a.0);
    let mut pts: Vec<Coord<f64>> = Vec::new();
    for (c, from) in [(b, dir - PI / 2.0), (a, dir + PI / 2.0)] {
        for k in 0..=360 {
            let t = from + PI * k as f64 / 360.0;
            pts.push(Coord {
                x: c.0 + h * t.cos(),
                y: c.1 + h * t.sin(),
            });
        }
    }
    MultiPolygon(vec![Polygon::new(LineString::from(pts), vec![])])
}

fn geo_disc(c: (f64, f64), r: f64) -> MultiPolygon<f64> {
    let pts: Vec<Coord<f64>> = (0..720)
        .map(|k| {
            let t = 2.0 * PI * k as f64 / 720.0;
            Coord {
                x: c.0 + r * t.cos(),
                y: c.1 + r * t.sin(),
            }
        })
        .collect();
    MultiPolygon(vec![Polygon::new(LineString::from(pts), vec![])])
}

/// The capsules of the strokes along `pts`, united one by one with geo.
fn geo_union(pts: &[(f64, f64)], h: f64) -> MultiPolygon<f64> {
    pts.windows(2).fold(MultiPolygon(vec![]), |acc, w| {
        acc.union(&geo_capsule(w[0], w[1], h))
    })
}

fn perimeter(m: &MultiPolygon<f64>) -> f64 {
    let ring = |l: &LineString<f64>| {
        l.0.windows(2)
            .map(|w| (w[1].x - w[0].x).hypot(w[1].y - w[0].y))
            .sum::<f64>()
    };
    m.0.iter()
        .map(|p| ring(p.exterior()) + p.interiors().iter().map(ring).sum::<f64>())
        .sum()
}

fn close(got: f64, want: f64, slack: f64) {
    assert!((got - want).abs() <= slack, "{got} vs {want} (±{slack})");
}

#[test]
fn an_l_shaped_chain_has_the_area_of_its_two_capsules() {
    // Two strokes of pen radius h meeting at a right angle, lengths L1 and L2: the two
    // capsules (2hL + πh² each) overlap in the disc at the corner plus the square of side
    // h on the inner side outside it: 2h(L1 + L2) + πh² − h² + πh²/4 (elementary geometry).
    let (h, l1, l2) = (0.2, 2.0, 1.5);
    let pts = [(1.0, 1.0), (1.0 + l1, 1.0), (1.0 + l1, 1.0 + l2)];
    let image = chain_image(&pts, 2.0 * h);
    // The two strokes are one chain.
    assert_eq!(runs(&image.objects), vec![0..2]);
    let want = 2.0 * h * (l1 + l2) + PI * h * h - h * h + PI * h * h / 4.0;
    let perim = 2.0 * (l1 + l2) + 2.0 * PI * h;
    close(black_area(&image, false), want, TOL * perim);
}

#[test]
fn a_winding_chain_matches_its_capsules_united_one_by_one() {
    // Left and right turns, 45° steps, a stroke shorter than the pen's radius, a full
    // reversal and a crossing of the chain with itself.
    let h = 0.15;
    let pts = [
        (0.5, 0.5),
        (2.5, 0.5),
        (3.2, 1.2),
        (3.2, 1.3), // shorter than h
        (2.0, 1.3),
        (3.0, 1.3), // turns straight back
        (3.0, 3.0),
        (1.5, 3.0),
        (1.5, 0.2), // crosses the first stroke
        (0.6, 1.1),
        (0.65, 1.05), // short again, at the end
        (0.7, 1.15),
    ];
    let image = chain_image(&pts, 2.0 * h);
    assert_eq!(runs(&image.objects), vec![0..pts.len() - 1]);
    let expected = geo_union(&pts, h);
    let slack = TOL * perimeter(&expected);
    for mirror in [false, true] {
        close(black_area(&image, mirror), expected.unsigned_area(), slack);
    }
}

#[test]
fn a_later_clear_object_still_cuts_the_chain() {
    let h = 0.2;
    let pts = [(0.5, 1.0), (2.0, 1.0), (2.0, 2.5), (3.5, 2.5)];
    let cut = ((2.0, 1.8), 0.5);
    let mut image = chain_image(&pts, 2.0 * h);
    image.push(Polarity::Clear, disc_shape(cut.0, cut.1));
    assert_eq!(runs(&image.objects), vec![0..3, 3..4]);
    let disc = geo_disc(cut.0, cut.1);
    let expected = geo_union(&pts, h).difference(&disc);
    // The cut's edge counts too: its chords lie inside the true circle as well.
    let slack = TOL * (perimeter(&geo_union(&pts, h)) + perimeter(&disc));
    close(black_area(&image, false), expected.unsigned_area(), slack);
    // The disc really removes something: about 2h × 1 mm of the vertical stroke.
    assert!(geo_union(&pts, h).unsigned_area() - expected.unsigned_area() > 0.3);
}

#[test]
fn a_clear_object_between_strokes_breaks_the_chain() {
    // Dark stroke, Clear disc over its end, Dark strokes on from there: the disc cuts the
    // first stroke only (objects paint in order, Gerber spec rev 2024.05, 4.9.2), so the
    // chain must not span it.
    let h = 0.2;
    let first = [(0.5, 1.0), (2.0, 1.0)];
    let rest = [(2.0, 1.0), (2.0, 2.5), (3.5, 2.5)];
    let cut = ((2.0, 1.0), 0.35);
    let mut image = LayerImage::default();
    image.push(Polarity::Dark, stroke(first[0], first[1], 2.0 * h));
    image.push(Polarity::Clear, disc_shape(cut.0, cut.1));
    for w in rest.windows(2) {
        image.push(Polarity::Dark, stroke(w[0], w[1], 2.0 * h));
    }
    assert_eq!(runs(&image.objects), vec![0..1, 1..2, 2..4]);
    let disc = geo_disc(cut.0, cut.1);
    let expected = geo_union(&first, h)
        .difference(&disc)
        .union(&geo_union(&rest, h));
    let slack = TOL * (perimeter(&geo_union(&first, h)) + perimeter(&geo_union(&rest, h)));
    close(black_area(&image, false), expected.unsigned_area(), slack);
}

fn disc_shape(c: (f64, f64), r: f64) -> Shape {
    Shape::Disc {
        center: Point::new(c.0, c.1),
        diameter: 2.0 * r,
    }
}
