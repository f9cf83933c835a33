//! The band rasterizer: areas against analytic formulas, pixel-exact agreement with
//! independent per-pixel point-in-shape tests, non-square pixels, mirroring, threading and
//! degenerate input.

use std::f64::consts::PI;
use umbra::image::{Bounds, Contour, Object, Point, Polarity, Segment, Shape, Turn};
use umbra::raster::{render, render_with, Bitmap, DeviceMap, RenderOptions};

fn dark(shape: Shape) -> Object {
    Object {
        polarity: Polarity::Dark,
        shape,
    }
}

fn clear(shape: Shape) -> Object {
    Object {
        polarity: Polarity::Clear,
        shape,
    }
}

fn disc(x: f64, y: f64, d: f64) -> Shape {
    Shape::Disc {
        center: Point::new(x, y),
        diameter: d,
    }
}

fn line(x0: f64, y0: f64, x1: f64, y1: f64, w: f64) -> Shape {
    Shape::Stroke {
        start: Point::new(x0, y0),
        end: Point::new(x1, y1),
        arc: None,
        width: w,
    }
}

fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Shape {
    Shape::Polygon(Contour::from_points(&[
        Point::new(x0, y0),
        Point::new(x1, y0),
        Point::new(x1, y1),
        Point::new(x0, y1),
    ]))
}

fn bounds_of(objects: &[Object]) -> Bounds {
    let mut b = Bounds::EMPTY;
    for o in objects {
        b.union(&o.shape.bounds());
    }
    b
}

/// A map covering the objects with a 0.5 mm margin at `dpi` (square pixels).
fn map_for(objects: &[Object], dpi: f64) -> DeviceMap {
    DeviceMap::covering(&bounds_of(objects), 0.5, dpi, dpi)
}

fn area_mm2(b: &Bitmap, map: &DeviceMap) -> f64 {
    b.count_ones() as f64 * (25.4 / map.dpi_x) * (25.4 / map.dpi_y)
}

/// Pixel count × pixel area within 0.5 % of the analytic area, or within one pixel width
/// along the whole perimeter (the worst case of point sampling: every pixel the edge crosses
/// wrong).
fn assert_area(name: &str, objects: &[Object], analytic: f64, perimeter: f64) {
    for dpi in [600.0, 1200.0, 2400.0] {
        let map = map_for(objects, dpi);
        let got = area_mm2(&render(objects, &map), &map);
        let tol = (0.005 * analytic).max(perimeter * 25.4 / dpi);
        assert!(
            (got - analytic).abs() <= tol,
            "{name} at {dpi} dpi: {got:.5} mm² vs analytic {analytic:.5} (tol {tol:.5})"
        );
    }
}

#[test]
fn disc_area_is_pi_r_squared() {
    // Analytic: area of a circle π r², perimeter 2π r.
    let objs = [dark(disc(3.1, -2.7, 10.0))];
    assert_area("disc", &objs, PI * 25.0, 2.0 * PI * 5.0);
}

#[test]
fn track_area_is_a_capsule() {
    // Analytic: a round pen of width w swept over length L covers a capsule,
    // w·L + π w²/4; perimeter 2L + π w. Drawn at 30° so no edge follows the pixel grid.
    let (w, l) = (0.2, 20.0);
    let (c, s) = (30f64.to_radians().cos(), 30f64.to_radians().sin());
    let objs = [dark(line(1.0, 1.0, 1.0 + l * c, 1.0 + l * s, w))];
    assert_area("track", &objs, w * l + PI * w * w / 4.0, 2.0 * l + PI * w);
}

#[test]
fn rectangle_polygon_area() {
    // Analytic: width × height; perimeter 2(w + h).
    let objs = [dark(rect(0.013, 0.021, 12.313, 7.721))];
    assert_area("rectangle", &objs, 12.3 * 7.7, 2.0 * (12.3 + 7.7));
}

#[test]
fn region_with_clear_cut_out_loses_the_hole() {
    // Analytic: 20 × 15 rectangle minus a disc of diameter 6 (π·3²) painted clear on top.
    let objs = [dark(rect(0.0, 0.0, 20.0, 15.0)), clear(disc(9.3, 7.1, 6.0))];
    assert_area(
        "region minus hole",
        &objs,
        300.0 - 9.0 * PI,
        70.0 + 6.0 * PI,
    );
}

#[test]
fn arc_stroke_area_is_ring_sector_plus_caps() {
    // Analytic: a round pen of width w along an arc of radius r and sweep θ covers the ring
    // sector θ·r·w plus two half-disc caps (π (w/2)² together), caps not overlapping.
    let (r, w, sweep) = (8.0, 0.5, 135f64.to_radians());
    let c = Point::new(2.0, 3.0);
    let a0 = 20f64.to_radians();
    let start = Point::new(c.x + r * a0.cos(), c.y + r * a0.sin());
    let end = Point::new(c.x + r * (a0 + sweep).cos(), c.y + r * (a0 + sweep).sin());
    let analytic = sweep * r * w + PI * w * w / 4.0;
    let perimeter = 2.0 * sweep * r + PI * w;
    for (s, e, turn) in [
        (start, end, Turn::CounterClockwise),
        (end, start, Turn::Clockwise),
    ] {
        let objs = [dark(Shape::Stroke {
            start: s,
            end: e,
            arc: Some((c, turn)),
            width: w,
        })];
        assert_area("arc stroke", &objs, analytic, perimeter);
    }
}

#[test]
fn polygon_with_arc_edges_area() {
    // Analytic: a half disc of radius 4 (π r²/2) closed by its diameter; perimeter π r + 2r.
    let contour = Contour {
        start: Point::new(4.0, 0.0),
        segments: vec![
            Segment::Arc {
                to: Point::new(-4.0, 0.0),
                center: Point::new(0.0, 0.0),
                turn: Turn::CounterClockwise,
            },
            Segment::Line {
                to: Point::new(4.0, 0.0),
            },
        ],
    };
    let objs = [dark(Shape::Polygon(contour))];
    assert_area("half disc", &objs, PI * 8.0, PI * 4.0 + 8.0);
}

/// Distance from `p` to the segment a–b (analytic geometry, independent of the renderer).
fn dist_to_segment(p: Point, a: Point, b: Point) -> f64 {
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let l2 = dx * dx + dy * dy;
    let t = if l2 == 0.0 {
        0.0
    } else {
        (((p.x - a.x) * dx + (p.y - a.y) * dy) / l2).clamp(0.0, 1.0)
    };
    p.dist(Point::new(a.x + t * dx, a.y + t * dy))
}

/// Compares every pixel with `inside(centre) → Option<bool>` (None: too close to the
/// boundary to call). Returns the number of pixels compared.
fn assert_matches_oracle(
    name: &str,
    bitmap: &Bitmap,
    map: &DeviceMap,
    inside: impl Fn(Point) -> Option<bool>,
) -> usize {
    let mut compared = 0;
    for y in 0..bitmap.height() {
        for x in 0..bitmap.width() {
            let p = map.to_mm(x as f64 + 0.5, y as f64 + 0.5);
            if let Some(want) = inside(p) {
                compared += 1;
                assert_eq!(bitmap.get(x, y), want, "{name}: pixel ({x},{y}) at {p:?}");
            }
        }
    }
    compared
}

#[test]
fn capsules_match_a_point_to_segment_distance_test() {
    // Oracle: a point is inside a round-pen stroke iff its distance to the centre segment is
    // below w/2 (definition of the swept disc). Pixels within 1e-9 mm of the edge are skipped.
    let cases = [
        (0.3, 0.4, 3.7, 2.9, 0.9),
        (0.5, 2.0, 3.5, 2.0, 0.61), // horizontal
        (2.0, 0.2, 2.0, 3.8, 0.33), // vertical
        (1.0, 1.0, 1.0, 1.0, 1.5),  // zero length: a disc
        (3.9, 0.1, 0.2, 3.3, 0.07), // thinner than a pixel at 600 dpi
    ];
    for (x0, y0, x1, y1, w) in cases {
        let (a, b) = (Point::new(x0, y0), Point::new(x1, y1));
        let objs = [dark(line(x0, y0, x1, y1, w))];
        let map = DeviceMap::new(Point::new(-0.5, -0.5), 120, 110, 600.0, 700.0);
        let bmp = render(&objs, &map);
        let n = assert_matches_oracle("capsule", &bmp, &map, |p| {
            let d = dist_to_segment(p, a, b) - w / 2.0;
            (d.abs() > 1e-9).then_some(d < 0.0)
        });
        assert!(n > 10_000);
        assert!(bmp.count_ones() > 0);
    }
}

#[test]
fn arc_strokes_match_a_sampled_distance_test() {
    // Oracle: distance to the arc from 4,000 points sampled along it (no use of the
    // renderer's sector logic); pixels whose distance is within the sampling error of w/2
    // are skipped.
    let c = Point::new(2.0, 2.0);
    let cases: [(f64, f64, f64, Turn, f64); 6] = [
        (1.5, 10.0, 100.0, Turn::CounterClockwise, 0.3),
        (1.5, 10.0, 100.0, Turn::Clockwise, 0.3), // the long way round (260°)
        (1.2, 200.0, 10.0, Turn::CounterClockwise, 0.5), // 170°
        (1.0, 45.0, 45.0, Turn::Clockwise, 0.2),  // full ring
        (0.3, 0.0, 120.0, Turn::CounterClockwise, 0.9), // pen wider than the radius
        (1.7, 300.0, 20.0, Turn::CounterClockwise, 0.1), // crosses angle 0
    ];
    for (r, a0, a1, turn, w) in cases {
        let at = |deg: f64| {
            let a = deg.to_radians();
            Point::new(c.x + r * a.cos(), c.y + r * a.sin())
        };
        let (s, e) = (at(a0), at(a1));
        let sweep = umbra::image::arc_sweep(s, e, c, turn);
        let n = 4_000;
        let samples: Vec<Point> = (0..=n)
            .map(|k| {
                let a = a0.to_radians() + sweep * k as f64 / n as f64;
                Point::new(c.x + r * a.cos(), c.y + r * a.sin())
            })
            .collect();
        let step = r * sweep.abs() / n as f64;
        let objs = [dark(Shape::Stroke {
            start: s,
            end: e,
            arc: Some((c, turn)),
            width: w,
        })];
        let map = DeviceMap::new(Point::new(-0.2, -0.2), 52, 50, 300.0, 280.0);
        let bmp = render(&objs, &map);
        assert_matches_oracle("arc", &bmp, &map, |p| {
            let d = samples
                .iter()
                .map(|q| q.dist(p))
                .fold(f64::INFINITY, f64::min)
                - w / 2.0;
            // Sampling can overestimate the distance by at most step²/(8·(w/2)) + step/2.
            (d.abs() > step).then_some(d < 0.0)
        });
    }
}

#[test]
fn polygons_match_geo_point_in_polygon() {
    // Oracle: the geo crate's `Contains` (an independent point-in-polygon test) for a simple
    // concave polygon, where the non-zero and even-odd rules agree.
    use geo::Contains;
    let pts = [
        (0.2, 0.1),
        (3.9, 0.4),
        (2.1, 1.6),
        (3.7, 3.8),
        (1.1, 2.2),
        (0.3, 3.1),
    ];
    let poly = geo::Polygon::new(geo::LineString::from(pts.to_vec()), vec![]);
    let objs = [dark(Shape::Polygon(Contour::from_points(
        &pts.iter()
            .map(|&(x, y)| Point::new(x, y))
            .collect::<Vec<_>>(),
    )))];
    let map = DeviceMap::new(Point::new(0.0, 0.0), 100, 100, 600.0, 600.0).with_mirror(true);
    let bmp = render(&objs, &map);
    let n = assert_matches_oracle("polygon", &bmp, &map, |p| {
        let q = geo::Point::new(p.x, p.y);
        // Skip centres within 1e-9 mm of an edge (measure zero; boundary rules differ).
        let near_edge = pts
            .iter()
            .zip(pts.iter().cycle().skip(1))
            .any(|(&a, &b)| dist_to_segment(p, Point::new(a.0, a.1), Point::new(b.0, b.1)) < 1e-9);
        (!near_edge).then(|| poly.contains(&q))
    });
    assert!(n > 9_000);
}

#[test]
fn self_overlapping_contour_fills_by_non_zero_winding() {
    // A five-pointed star drawn as one contour {5/2}: its centre pentagon has winding number
    // 2, filled under the non-zero rule (ISO 32000-1 §8.5.3.3.2; Gerber spec 2024.05 §4.10
    // regions) and empty under even-odd.
    let pts: Vec<Point> = (0..5)
        .map(|k| {
            let a = (90.0 + 144.0 * k as f64).to_radians();
            Point::new(5.0 + 4.0 * a.cos(), 5.0 + 4.0 * a.sin())
        })
        .collect();
    let objs = [dark(Shape::Polygon(Contour::from_points(&pts)))];
    let map = DeviceMap::new(Point::new(0.0, 0.0), 236, 236, 600.0, 600.0);
    let bmp = render(&objs, &map);
    let (cx, cy) = map.to_px(Point::new(5.0, 5.0));
    assert!(
        bmp.get(cx as usize, cy as usize),
        "centre of the star is dark"
    );
    // A tip is dark, a point between two tips outside the star is clear.
    let (tx, ty) = map.to_px(Point::new(5.0, 8.6));
    assert!(bmp.get(tx as usize, ty as usize));
    let (ox, oy) = map.to_px(Point::new(5.0, 1.0));
    assert!(!bmp.get(ox as usize, oy as usize));
}

#[test]
fn non_square_pixels_measure_right_each_way() {
    // A 10 mm square at 1200 × 600 dpi spans 10/25.4 × 1200 = 472.4 columns and
    // 10/25.4 × 600 = 236.2 rows (1 in = 25.4 mm): 472 ± 1 and 236 ± 1.
    let objs = [dark(rect(0.0, 0.0, 10.0, 10.0))];
    let map = DeviceMap::covering(&bounds_of(&objs), 1.0, 1200.0, 600.0);
    let bmp = render(&objs, &map);
    let rows: Vec<usize> = (0..bmp.height())
        .filter(|&y| (0..bmp.width()).any(|x| bmp.get(x, y)))
        .collect();
    let mid = rows[rows.len() / 2];
    let cols = (0..bmp.width()).filter(|&x| bmp.get(x, mid)).count() as i64;
    assert!((cols - 472).abs() <= 1, "columns {cols}");
    assert!((rows.len() as i64 - 236).abs() <= 1, "rows {}", rows.len());
    // A disc on non-square pixels is still round in millimetres: diameter 8 mm each way.
    let objs = [dark(disc(0.0, 0.0, 8.0))];
    let map = DeviceMap::covering(&bounds_of(&objs), 1.0, 1200.0, 600.0);
    let bmp = render(&objs, &map);
    let (cx, cy) = map.to_px(Point::new(0.0, 0.0));
    let across = (0..bmp.width())
        .filter(|&x| bmp.get(x, cy as usize))
        .count() as i64;
    let down = (0..bmp.height())
        .filter(|&y| bmp.get(cx as usize, y))
        .count() as i64;
    assert!((across - 378).abs() <= 1, "across {across}"); // 8/25.4·1200 = 377.95
    assert!((down - 189).abs() <= 1, "down {down}"); // 8/25.4·600 = 188.98
}

/// A deterministic mix of every shape and both polarities (linear congruential generator,
/// constants from Numerical Recipes).
fn random_objects(n: usize, seed: u64) -> Vec<Object> {
    let mut s = seed;
    let mut next = move || {
        s = s.wrapping_mul(1_664_525).wrapping_add(1_013_904_223) & 0xffff_ffff;
        s as f64 / 4_294_967_296.0
    };
    let mut out = Vec::new();
    for i in 0..n {
        let (x, y) = (next() * 20.0, next() * 20.0);
        let shape = match i % 5 {
            0 => disc(x, y, next() * 2.0),
            1 => line(
                x,
                y,
                x + next() * 6.0 - 3.0,
                y + next() * 6.0 - 3.0,
                next() * 0.5,
            ),
            2 => Shape::Stroke {
                start: Point::new(x + 1.0, y),
                end: Point::new(x, y + 1.0),
                arc: Some((
                    Point::new(x, y),
                    if next() < 0.5 {
                        Turn::Clockwise
                    } else {
                        Turn::CounterClockwise
                    },
                )),
                width: next() * 0.4,
            },
            3 => rect(x, y, x + next() * 3.0, y + next() * 3.0),
            _ => Shape::Composite(vec![
                (true, disc(x, y, 1.6)),
                (false, disc(x, y, 0.7)),
                (true, rect(x - 0.1, y - 0.6, x + 0.1, y + 0.6)),
            ]),
        };
        let polarity = if next() < 0.2 {
            Polarity::Clear
        } else {
            Polarity::Dark
        };
        out.push(Object { polarity, shape });
    }
    out
}

#[test]
fn parallel_bands_equal_serial_and_small_bands() {
    let objs = random_objects(400, 7);
    let map = DeviceMap::new(Point::new(-1.0, -1.0), 530, 520, 600.0, 600.0);
    let parallel = render_with(
        &objs,
        &map,
        &RenderOptions {
            band_rows: 64,
            parallel: true,
        },
    );
    let serial = render_with(
        &objs,
        &map,
        &RenderOptions {
            band_rows: 7,
            parallel: false,
        },
    );
    let one_band = render_with(
        &objs,
        &map,
        &RenderOptions {
            band_rows: 10_000,
            parallel: false,
        },
    );
    assert!(parallel.count_ones() > 10_000);
    assert_eq!(parallel, serial);
    assert_eq!(parallel, one_band);
}

#[test]
fn mirrored_film_is_the_unmirrored_film_flipped() {
    let objs = random_objects(200, 11);
    let map = DeviceMap::new(Point::new(-1.0, -1.0), 333, 300, 600.0, 500.0);
    let plain = render(&objs, &map);
    let mirrored = render(&objs, &map.with_mirror(true));
    assert_eq!(mirrored, plain.mirrored_x());
    // Mirroring twice is the identity.
    assert_eq!(plain.mirrored_x().mirrored_x(), plain);
    // And the board's left edge is on the film's right: a disc at board x = 0.5 mm.
    let objs = [dark(disc(0.5, 5.0, 0.4))];
    let map = DeviceMap::new(Point::new(0.0, 0.0), 236, 236, 600.0, 600.0).with_mirror(true);
    let bmp = render(&objs, &map);
    let (px, py) = map.to_px(Point::new(0.5, 5.0));
    assert!(px > 200.0 && bmp.get(px as usize, py as usize));
}

#[test]
fn later_objects_paint_over_earlier_and_composites_cut_only_themselves() {
    // Gerber spec 2024.05 §4.9: objects superimpose in order; §4.4.6: an aperture hole cuts
    // the flash, not the image below.
    let map = DeviceMap::new(Point::new(0.0, 0.0), 240, 240, 600.0, 600.0);
    let at = |bmp: &Bitmap, x: f64, y: f64| {
        let (px, py) = map.to_px(Point::new(x, y));
        bmp.get(px as usize, py as usize)
    };
    let under = dark(rect(1.0, 1.0, 9.0, 9.0));
    let pad_with_hole = dark(Shape::Composite(vec![
        (true, disc(5.0, 5.0, 4.0)),
        (false, disc(5.0, 5.0, 1.0)),
    ]));
    let bmp = render(&[under.clone(), pad_with_hole], &map);
    assert!(
        at(&bmp, 5.0, 5.0),
        "the hole does not cut the dark rectangle below"
    );
    let bmp = render(&[under.clone(), clear(disc(5.0, 5.0, 4.0))], &map);
    assert!(!at(&bmp, 5.0, 5.0) && at(&bmp, 2.0, 2.0));
    let bmp = render(&[clear(disc(5.0, 5.0, 4.0)), under], &map);
    assert!(at(&bmp, 5.0, 5.0), "clear first, dark later: dark wins");
}

#[test]
fn degenerate_input_paints_nothing_and_never_panics() {
    let map = DeviceMap::new(Point::new(0.0, 0.0), 200, 200, 600.0, 600.0);
    // Zero width / diameter: no pixel centre is inside a zero-area shape.
    let zero = [
        dark(line(1.0, 1.0, 7.0, 5.0, 0.0)),
        dark(line(1.0, 4.0, 7.0, 4.0, 0.0)),
        dark(disc(4.0, 4.0, 0.0)),
        dark(Shape::Polygon(Contour::from_points(&[
            Point::new(1.0, 1.0),
            Point::new(5.0, 5.0),
        ]))),
        dark(Shape::Polygon(Contour::default())),
        dark(Shape::Composite(vec![(false, disc(4.0, 4.0, 3.0))])),
        dark(Shape::Stroke {
            start: Point::new(2.0, 2.0),
            end: Point::new(4.0, 2.0),
            arc: Some((Point::new(3.0, 2.0), Turn::Clockwise)),
            width: 0.0,
        }),
    ];
    assert_eq!(render(&zero, &map).count_ones(), 0);
    // Non-finite and enormous numbers are skipped or clipped; each object is checked alone
    // against the pixels it must cover (counted from the map, not the renderer).
    let rows_where = |f: &dyn Fn(f64) -> bool| {
        (0..200)
            .filter(|&j| f(map.to_mm(0.5, j as f64 + 0.5).y))
            .count() as u64
    };
    let cols_where = |f: &dyn Fn(f64) -> bool| {
        (0..200)
            .filter(|&i| f(map.to_mm(i as f64 + 0.5, 0.5).x))
            .count() as u64
    };
    let nothing = 0u64;
    let wild: Vec<(Object, u64)> = vec![
        (dark(disc(f64::NAN, 1.0, 1.0)), nothing),
        (dark(line(0.0, 0.0, f64::INFINITY, 1.0, 0.2)), nothing),
        (dark(disc(1e300, -1e300, 1e300)), nothing),
        (
            dark(Shape::Stroke {
                start: Point::new(1e200, 0.0),
                end: Point::new(-1e200, 0.0),
                arc: Some((Point::new(0.0, 0.0), Turn::CounterClockwise)),
                width: 1.0,
            }),
            nothing,
        ),
        // A 2·10¹² mm track through the film: every row within 0.25 mm of y = 3.
        (
            dark(line(-1e12, 3.0, 1e12, 3.0, 0.5)),
            200 * rows_where(&|y| (y - 3.0).abs() < 0.25),
        ),
        // A rectangle far larger than the film: every row below y = 1 mm.
        (
            dark(rect(-1e15, -1e15, 1e15, 1.0)),
            200 * rows_where(&|y| y < 1.0),
        ),
        // A full circle of radius 10⁹ mm through (1, 1), centre to the right: on the film it
        // is the half-plane x > 1 mm (its curvature is far below a pixel here).
        (
            dark(Shape::Polygon(Contour {
                start: Point::new(1.0, 1.0),
                segments: vec![Segment::Arc {
                    to: Point::new(1.0, 1.0),
                    center: Point::new(1e9, 1.0),
                    turn: Turn::Clockwise,
                }],
            })),
            200 * cols_where(&|x| x > 1.0),
        ),
        // A disc far larger than the film covers all of it.
        (dark(disc(0.0, 0.0, 1e12)), 200 * 200),
    ];
    for (i, (o, want)) in wild.iter().enumerate() {
        let got = render(std::slice::from_ref(o), &map).count_ones();
        assert_eq!(got, *want, "wild object {i}");
    }
    let wild: Vec<Object> = wild.into_iter().map(|(o, _)| o).collect();
    // Nonsense resolutions and band sizes neither panic nor loop.
    for dpi in [0.0, -600.0, f64::NAN, f64::INFINITY] {
        let odd = DeviceMap::new(Point::new(0.0, 0.0), 50, 40, dpi, 600.0);
        let _ = render(&objs_for_odd_maps(), &odd);
        let odd = DeviceMap::new(Point::new(0.0, 0.0), 50, 40, 600.0, dpi);
        let _ = render(&objs_for_odd_maps(), &odd);
    }
    let huge_bands = RenderOptions {
        band_rows: usize::MAX,
        parallel: true,
    };
    assert_eq!(
        render_with(&objs_for_odd_maps(), &map, &huge_bands),
        render(&objs_for_odd_maps(), &map)
    );
    let empty = DeviceMap::new(Point::new(0.0, 0.0), 0, 0, 600.0, 600.0);
    assert_eq!(render(&wild, &empty).width(), 0);
}

fn objs_for_odd_maps() -> Vec<Object> {
    random_objects(30, 3)
}
