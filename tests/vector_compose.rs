//! Semantics of the vector composition: polarity in order, composites, negative images,
//! and the film-space map.
//!
//! Expected areas are exact arithmetic on rectangles and discs (πr²); flattened circles lie
//! inside the true ones by at most the arc tolerance, so a disc of radius r may lose up to
//! 2πr·tol of area (sagitta bound), which is the tolerance of each check.

mod vector_support;

use std::f64::consts::PI;
use umbra::film::compose::film_map;
use umbra::image::{Contour, LayerImage, Point, Polarity, Shape};
use umbra::vector::{compose_film, region_area, VectorOptions};
use vector_support::*;

const TOL: f64 = 0.0005;

fn opts() -> VectorOptions {
    VectorOptions {
        arc_tolerance_mm: Some(TOL),
    }
}

fn square(c: Point, side: f64) -> Shape {
    let h = side / 2.0;
    Shape::Polygon(Contour::from_points(&[
        Point::new(c.x - h, c.y - h),
        Point::new(c.x + h, c.y - h),
        Point::new(c.x + h, c.y + h),
        Point::new(c.x - h, c.y + h),
    ]))
}

fn disc(c: Point, r: f64) -> Shape {
    Shape::Disc {
        center: c,
        diameter: 2.0 * r,
    }
}

fn film_and_area(
    image: &LayerImage,
    dark_is_material: bool,
    black_is_material: bool,
) -> (f64, f64) {
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 4.0, 4.0), &art);
    let rc = recipe(1200.0, dark_is_material, black_is_material, 0.0);
    let vf = compose_film(&job(image, &rc, &fr, &art), &opts());
    (
        vf.space.width_mm * vf.space.height_mm,
        region_area(&vf.black),
    )
}

fn area_of(image: &LayerImage, dark_is_material: bool, black_is_material: bool) -> f64 {
    film_and_area(image, dark_is_material, black_is_material).1
}

fn close(a: f64, b: f64, slack: f64) {
    assert!((a - b).abs() <= slack + 1e-6, "{a} vs {b}");
}

const C: Point = Point::new(2.0, 2.0);

#[test]
fn objects_paint_in_order() {
    // Dark 4×4, Clear disc r = 1, Dark disc r = 0.5: 16 − π + π/4.
    let mut image = LayerImage::default();
    image.push(Polarity::Dark, square(C, 4.0));
    image.push(Polarity::Clear, disc(C, 1.0));
    image.push(Polarity::Dark, disc(C, 0.5));
    close(
        area_of(&image, true, true),
        16.0 - PI + PI / 4.0,
        2.0 * PI * 1.5 * TOL,
    );
    // The same objects with the last two swapped: the small disc is cleared again.
    let mut swapped = LayerImage::default();
    swapped.push(Polarity::Dark, square(C, 4.0));
    swapped.push(Polarity::Dark, disc(C, 0.5));
    swapped.push(Polarity::Clear, disc(C, 1.0));
    close(area_of(&swapped, true, true), 16.0 - PI, 2.0 * PI * TOL);
}

#[test]
fn a_composite_is_combined_before_it_is_painted() {
    // A 2×2 pad with a hole of radius 0.5 (add square, subtract disc).
    let pad = Shape::Composite(vec![(true, square(C, 2.0)), (false, disc(C, 0.5))]);
    // Painted Dark over a 4×4 Dark square, its hole does not cut the square (image.rs).
    let mut over = LayerImage::default();
    over.push(Polarity::Dark, square(C, 4.0));
    over.push(Polarity::Dark, pad.clone());
    close(area_of(&over, true, true), 16.0, 1e-6);
    // Painted Clear, it removes the pad but leaves the disc where the hole is.
    let mut clear = LayerImage::default();
    clear.push(Polarity::Dark, square(C, 4.0));
    clear.push(Polarity::Clear, pad.clone());
    close(
        area_of(&clear, true, true),
        16.0 - (4.0 - PI / 4.0),
        2.0 * PI * 0.5 * TOL,
    );
    // Alone: the pad with its hole.
    let mut alone = LayerImage::default();
    alone.push(Polarity::Dark, pad);
    close(
        area_of(&alone, true, true),
        4.0 - PI / 4.0,
        2.0 * PI * 0.5 * TOL,
    );
}

#[test]
fn negative_images_and_negative_films() {
    let mut image = LayerImage::default();
    image.push(Polarity::Dark, disc(C, 1.0));
    // The film is the 4×4 board plus a 1 mm border, 6×6 mm rounded up to whole pixels
    // (as the raster film). Layer material is kept within the board grown by 0.5 mm (5×5),
    // as the raster path clips it.
    let film = film_and_area(&image, true, true).0;
    assert!(
        (36.0..36.0 + 2.0 * 6.0 * 25.4 / 1200.0 + 1e-9).contains(&film),
        "{film}"
    );
    let clip = 25.0;
    // Dark = material, black = material: the disc.
    close(area_of(&image, true, true), PI, 2.0 * PI * TOL);
    // Dark = material, black = background: the film minus the disc.
    close(area_of(&image, true, false), film - PI, 2.0 * PI * TOL);
    // Dark = absence (negative file), black = material: the clip area minus the disc.
    close(area_of(&image, false, true), clip - PI, 2.0 * PI * TOL);
    // Negative file, black = background: the film minus that.
    close(
        area_of(&image, false, false),
        film - clip + PI,
        2.0 * PI * TOL,
    );
}

#[test]
fn film_space_is_the_raster_device_map_divided_by_the_pitch() {
    // DeviceMap (raster::device docs): px = width − (x − origin.x)·sx when mirrored,
    // py = height − (y − origin.y)·sy; film mm = (px·25.4/dpi_x, (height − py)·25.4/dpi_y).
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 10.0, 7.0), &art);
    let mut rc = recipe(1200.0, true, true, 0.0);
    rc.mirror = true;
    rc.scale_x = 1.002;
    rc.scale_y = 0.999;
    rc.dpi_y = 600.0;
    let map = film_map(&fr, &rc);
    let image = LayerImage::default();
    let vf = compose_film(&job(&image, &rc, &fr, &art), &opts());
    assert!(vf.space.reverses());
    for p in [
        Point::new(0.0, 0.0),
        Point::new(10.0, 7.0),
        Point::new(3.3, 5.1),
    ] {
        let (px, py) = map.to_px(p);
        let u = vf.space.apply(p);
        assert!((u[0] - px * 25.4 / 1200.0).abs() < 1e-9);
        assert!((u[1] - (map.height as f64 - py) * 25.4 / 600.0).abs() < 1e-9);
    }
    assert!((vf.space.width_mm - map.width as f64 * 25.4 / 1200.0).abs() < 1e-12);
    assert!((vf.space.height_mm - map.height as f64 * 25.4 / 600.0).abs() < 1e-12);
}

#[test]
fn strokes_arcs_and_rings_have_their_analytic_areas() {
    // A straight round-pen stroke: length·w + πw²/4 (rectangle plus two half discs).
    let mut line = LayerImage::default();
    line.push(
        Polarity::Dark,
        Shape::Stroke {
            start: Point::new(1.0, 1.0),
            end: Point::new(3.0, 3.0),
            arc: None,
            width: 0.4,
        },
    );
    let l = 8f64.sqrt();
    close(
        area_of(&line, true, true),
        l * 0.4 + PI * 0.04,
        2.0 * PI * 0.2 * TOL,
    );
    // A full ring of radius 1, pen 0.4: π((1.2)² − (0.8)²) (annulus).
    let mut ring = LayerImage::default();
    ring.push(
        Polarity::Dark,
        Shape::Stroke {
            start: Point::new(3.0, 2.0),
            end: Point::new(3.0, 2.0),
            arc: Some((C, umbra::image::Turn::Clockwise)),
            width: 0.4,
        },
    );
    close(
        area_of(&ring, true, true),
        PI * (1.44 - 0.64),
        2.0 * PI * 2.0 * TOL,
    );
    // A half-circle arc stroke of radius 1, pen 0.4: half annulus plus two half discs
    // of radius 0.2 (the caps stick out beyond the end rays): π(1.44 − 0.64)/2 + π·0.04.
    let mut half = LayerImage::default();
    half.push(
        Polarity::Dark,
        Shape::Stroke {
            start: Point::new(3.0, 2.0),
            end: Point::new(1.0, 2.0),
            arc: Some((C, umbra::image::Turn::CounterClockwise)),
            width: 0.4,
        },
    );
    close(
        area_of(&half, true, true),
        PI * 0.8 / 2.0 + PI * 0.04,
        2.0 * PI * 2.0 * TOL,
    );
    // A pen wider than the radius (r = 0.1, w = 0.6): a sector of radius 0.4 swept over
    // π plus the caps. For a half turn: the half disc of radius 0.4 plus the two end discs
    // of radius 0.3 about (2.1, 2) and (1.9, 2), which reach below the diameter only by
    // their lower halves: π·0.16/2 + 2 half discs minus their overlap, computed here as
    // the area of the union of two discs of radius 0.3 at distance 0.2 (lens formula) / 2.
    let (r, d) = (0.3f64, 0.2f64);
    let lens = 2.0 * r * r * (d / (2.0 * r)).acos() - d / 2.0 * (4.0 * r * r - d * d).sqrt();
    let union_two = 2.0 * PI * r * r - lens;
    let mut fat = LayerImage::default();
    fat.push(
        Polarity::Dark,
        Shape::Stroke {
            start: Point::new(2.1, 2.0),
            end: Point::new(1.9, 2.0),
            arc: Some((C, umbra::image::Turn::CounterClockwise)),
            width: 0.6,
        },
    );
    close(
        area_of(&fat, true, true),
        PI * 0.16 / 2.0 + union_two / 2.0,
        2.0 * PI * 1.0 * TOL,
    );
}

#[test]
fn a_cut_out_stays_clear_when_the_union_is_split_into_leaves() {
    // A 10 × 10 mm pour, a clear disc of radius 0.5 cut from it near its upper right
    // corner, then 600 small dark discs in the pour's left half: more pieces than one leaf
    // of the union holds, and along the union's Z-order the pour's centre and the cut-out
    // lie some 300 discs apart.
    let mut image = LayerImage::default();
    image.push(Polarity::Dark, square(Point::new(5.0, 5.0), 10.0));
    image.push(Polarity::Clear, disc(Point::new(8.5, 8.5), 0.5));
    for i in 0..20 {
        for j in 0..30 {
            let c = Point::new(0.5 + 0.2 * i as f64, 0.5 + 0.3 * j as f64);
            image.push(Polarity::Dark, disc(c, 0.05));
        }
    }
    let art = bare_artwork();
    let fr = frame(bounds(0.0, 0.0, 10.0, 10.0), &art);
    let rc = recipe(1200.0, true, true, 0.0);
    let vf = compose_film(&job(&image, &rc, &fr, &art), &opts());
    // Area: square minus disc, 100 − π·0.25 (arithmetic); the hole's chords lie inside the
    // true circle, so the hole may lose up to 2π·0.5·TOL (sagitta bound).
    close(
        region_area(&vf.black),
        100.0 - PI * 0.25,
        2.0 * PI * 0.5 * TOL,
    );
}
