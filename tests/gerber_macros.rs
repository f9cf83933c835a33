//! Aperture macros through the public `MacroDef` API only, checked against the Gerber Layer
//! Format Specification rev 2024.05 §4.5 (examples quoted from memory, marked as such),
//! analytic formulas (named beside each check) and the `geo` crate for polygon areas.
//!
//! Areas of shapes with arcs or subtractions are measured with a point-in-shape sampler
//! written here, independent of the code under test (arcs flattened finely, sample at cell
//! centres), and compared within 0.5 %.

#[path = "gerber_macros/sampler.rs"]
mod sampler;

use geo::{Area, BoundingRect};
use proptest::prelude::*;
use sampler::sampled_area;
use std::f64::consts::PI;
use umbra::diag::{InputError, Pos, Warning};
use umbra::gerber::macros::MacroDef;
use umbra::image::{Point, Segment, Shape};
use umbra::limits::Limits;

// ---------------------------------------------------------------- helpers

const FILE: &str = "larkspur-macros.gbr";
const AD: Pos = Pos::new(40, 1);

/// Blocks one per line starting at line 2 (the name line `%AMname*` is line 1).
fn blocks(src: &[&'static str]) -> Vec<(&'static str, Pos)> {
    src.iter()
        .enumerate()
        .map(|(i, b)| (*b, Pos::new(i as u32 + 2, 1)))
        .collect()
}

fn define(name: &str, src: &[&'static str]) -> MacroDef {
    MacroDef::parse(name, &blocks(src), FILE).unwrap_or_else(|e| panic!("{e}"))
}

fn run(def: &MacroDef, params: &[f64]) -> (Result<Shape, InputError>, Vec<Warning>) {
    let mut warnings = Vec::new();
    let r = def.instantiate(params, FILE, AD, &Limits::default(), &mut warnings);
    (r, warnings)
}

fn shape(src: &[&'static str], params: &[f64]) -> Shape {
    let def = define("M", src);
    let (r, w) = run(&def, params);
    assert!(w.is_empty(), "unexpected warnings {w:?}");
    r.unwrap_or_else(|e| panic!("{e}"))
}

fn error(src: &[&'static str], params: &[f64]) -> InputError {
    let def = define("M", src);
    run(&def, params).0.expect_err("expected an error")
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * (1.0 + a.abs().max(b.abs()))
}

fn assert_bounds(s: &Shape, min_x: f64, min_y: f64, max_x: f64, max_y: f64) {
    let b = s.bounds();
    assert!(
        close(b.min_x, min_x)
            && close(b.min_y, min_y)
            && close(b.max_x, max_x)
            && close(b.max_y, max_y),
        "bounds {b:?}, expected ({min_x}, {min_y})..({max_x}, {max_y})"
    );
}

/// A polygon shape as a geo polygon (lines only).
fn geo_polygon(s: &Shape) -> geo::Polygon<f64> {
    let Shape::Polygon(c) = s else {
        panic!("not a polygon: {s:?}")
    };
    let mut pts = vec![geo::Coord {
        x: c.start.x,
        y: c.start.y,
    }];
    for seg in &c.segments {
        let Segment::Line { to } = seg else {
            panic!("arc in {s:?}")
        };
        pts.push(geo::Coord { x: to.x, y: to.y });
    }
    geo::Polygon::new(geo::LineString::from(pts), vec![])
}

fn vertices(s: &Shape) -> Vec<Point> {
    let Shape::Polygon(c) = s else {
        panic!("not a polygon: {s:?}")
    };
    std::iter::once(c.start)
        .chain(c.segments.iter().map(|s| s.end()))
        .collect()
}

fn assert_area_within_half_percent(s: &Shape, expected: f64) {
    let a = sampled_area(s, 600);
    assert!(
        (a - expected).abs() <= 0.005 * expected,
        "sampled area {a}, expected {expected}"
    );
}

/// Area of {x ≥ h, y ≥ h, x² + y² ≤ r²}: F(√(r²−h²)) − F(h) − h(√(r²−h²) − h), where
/// F(x) = (x√(r²−x²) + r² asin(x/r))/2 is the antiderivative of √(r²−x²) (analytic).
fn corner_area(r: f64, h: f64) -> f64 {
    if r * r <= 2.0 * h * h {
        return 0.0;
    }
    let f = |x: f64| (x * (r * r - x * x).sqrt() + r * r * (x / r).asin()) / 2.0;
    let w = (r * r - h * h).sqrt();
    f(w) - f(h) - h * (w - h)
}

/// Area of the strip |y| ≤ h inside a disc of radius r: 2[h√(r²−h²) + r² asin(h/r)]
/// (analytic, the integral of the chord length).
fn strip_in_disc(r: f64, h: f64) -> f64 {
    2.0 * (h * (r * r - h * h).sqrt() + r * r * (h / r).asin())
}

// ---------------------------------------------------------------- primitives

#[test]
fn circle_diameter_centre_and_optional_rotation() {
    // Spec §4.5.1 (circle): exposure, diameter, centre x, centre y [, rotation].
    assert_eq!(
        shape(&["1,1,1.5,2,3"], &[]),
        Shape::Disc {
            center: Point::new(2.0, 3.0),
            diameter: 1.5
        }
    );
    // Rotation is about the macro origin (spec §4.5.1): (5, 0) turned 90° is (0, 5), exactly.
    let s = shape(&["1,1,$1,5,0,90"], &[2.0]);
    assert_eq!(
        s,
        Shape::Disc {
            center: Point::new(0.0, 5.0),
            diameter: 2.0
        }
    );
    // Circle area πd²/4 (analytic), sampled.
    assert_area_within_half_percent(&s, PI);
}

#[test]
fn vector_line_spec_example() {
    // From memory of the spec's vector line example: width 0.9 from (0, 0.45) to (12, 0.45).
    // Rectangle area w × length = 0.9 × 12 (analytic, measured with geo); square ends.
    let s = shape(&["20,1,0.9,0,0.45,12,0.45,0"], &[]);
    assert!(close(geo_polygon(&s).unsigned_area(), 10.8));
    assert_bounds(&s, 0.0, 0.0, 12.0, 0.9);
    // Code 2 is the revoked synonym (spec §8): same shape, with a warning.
    let def = define("OLD", &["2,1,0.9,0,0.45,12,0.45,0"]);
    let (r, w) = run(&def, &[]);
    assert_eq!(r.unwrap(), s);
    assert_eq!(w.len(), 1);
    assert!(w[0].message.contains("revoked"), "{}", w[0]);
}

#[test]
fn vector_line_rotation_is_about_the_origin() {
    // A line from (1, 0) to (4, 0), width 1, turned 90° about the origin lies along y from
    // 1 to 4 (rotation about the macro origin, spec §4.5.1).
    let s = shape(&["20,1,1,1,0,4,0,90"], &[]);
    assert_bounds(&s, -0.5, 1.0, 0.5, 4.0);
    // Diagonal 3-4-5 line: area w × length = 2 × 5 (analytic).
    let s = shape(&["20,1,2,0,0,3,4,0"], &[]);
    assert!(close(geo_polygon(&s).unsigned_area(), 10.0));
}

#[test]
fn center_line_rotated_about_the_origin() {
    // 4 × 2 centred at (5, 0), rotated 90°: centred at (0, 5), now 2 wide and 4 tall.
    let s = shape(&["21,1,4,2,5,0,90"], &[]);
    assert_bounds(&s, -1.0, 3.0, 1.0, 7.0);
    for v in vertices(&s) {
        // Exact at 90° (image::rotation_sin_cos): every corner is on the 0.5 grid.
        assert_eq!(v.x * 2.0, (v.x * 2.0).round(), "{v:?}");
        assert_eq!(v.y * 2.0, (v.y * 2.0).round(), "{v:?}");
    }
    // At 30° about its own centre (the origin): half extents (w/2)cos θ + (h/2)sin θ and
    // (w/2)sin θ + (h/2)cos θ (analytic); area w × h.
    let s = shape(&["21,1,4,2,0,0,30"], &[]);
    let (c, sn) = (30f64.to_radians().cos(), 30f64.to_radians().sin());
    let (hx, hy) = (2.0 * c + sn, 2.0 * sn + c);
    assert_bounds(&s, -hx, -hy, hx, hy);
    assert!(close(geo_polygon(&s).unsigned_area(), 8.0));
}

#[test]
fn lower_left_line_is_revoked_but_drawn() {
    // Code 22 (revoked, spec §8): width, height, lower-left corner.
    let def = define("LL", &["22,1,4,2,1,1,0"]);
    let (r, w) = run(&def, &[]);
    let s = r.unwrap();
    assert_bounds(&s, 1.0, 1.0, 5.0, 3.0);
    assert!(close(geo_polygon(&s).unsigned_area(), 8.0));
    assert_eq!(w.len(), 1);
    assert_eq!(w[0].pos, Some(Pos::new(2, 1)));
}

#[test]
fn outline_triangle_spec_example() {
    // From memory of the spec's outline example "Triangle_30": 3 vertices, (1,-1) (1,1)
    // (2,1) back to (1,-1), rotated 30°, written over several lines.
    let def = MacroDef::parse(
        "Triangle_30",
        &[("\n4,1,3,\n1,-1,\n1,1,\n2,1,\n1,-1,\n30", Pos::new(1, 14))],
        FILE,
    )
    .unwrap();
    let (r, w) = run(&def, &[]);
    assert!(w.is_empty(), "{w:?}");
    let s = r.unwrap();
    // Triangle area ½ · base 2 · height 1 = 1 (analytic; measured with geo).
    assert!(close(geo_polygon(&s).unsigned_area(), 1.0));
    // Each vertex rotated 30° about the origin: (x cos − y sin, x sin + y cos).
    let (c, sn) = (30f64.to_radians().cos(), 30f64.to_radians().sin());
    let rot = |x: f64, y: f64| Point::new(x * c - y * sn, x * sn + y * c);
    let expect = [rot(1.0, -1.0), rot(1.0, 1.0), rot(2.0, 1.0), rot(1.0, -1.0)];
    let got = vertices(&s);
    assert_eq!(got.len(), 4);
    for (g, e) in got.iter().zip(expect) {
        assert!(g.dist(e) < 1e-12, "{g:?} vs {e:?}");
    }
    let rect = geo_polygon(&s).bounding_rect().unwrap();
    assert!(close(
        rect.min().x,
        expect.iter().map(|p| p.x).fold(f64::MAX, f64::min)
    ));
}

#[test]
fn outline_not_closed_warns_and_closes() {
    // Spec §4.5.1 (outline): the last point must equal the first; a unit square left open.
    let def = define("OPEN", &["4,1,4,0,0,1,0,1,1,0,1,0,0.5,0"]);
    let (r, w) = run(&def, &[]);
    let s = r.unwrap();
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].message.contains("closed"));
    // Quadrilateral (0,0) (1,0) (1,1) (0,1) (0,0.5): the unit square's area 1 (geo).
    assert!(close(geo_polygon(&s).unsigned_area(), 1.0));
}

#[test]
fn outline_modifier_count_follows_the_vertex_count() {
    // n = 3 needs 2 + 2·4 + 1 = 11 modifiers; 10 given (rotation missing).
    let e = error(&["4,1,3,0,0,1,0,0,1,0,0"], &[]);
    assert!(e.message.contains("needs 11 modifiers"), "{e}");
    assert!(e.message.contains("rotation"), "{e}");
    // A hostile vertex count is refused before anything is allocated.
    let e = error(&["4,1,1000000000000,0,0"], &[]);
    assert!(e.message.contains("outline"), "{e}");
}

#[test]
fn polygon_octagon_spec_example() {
    // From memory of the spec's polygon example: octagon, centre (0,0), diameter 8.
    let s = shape(&["5,1,8,0,0,8,0"], &[]);
    // Regular n-gon area (n/2)·R²·sin(2π/n) = 4 · 16 · sin(π/4) (analytic; geo).
    assert!(close(
        geo_polygon(&s).unsigned_area(),
        4.0 * 16.0 * (PI / 4.0).sin()
    ));
    // Corners at multiples of 45° on radius 4: extremes ±4 on both axes.
    assert_bounds(&s, -4.0, -4.0, 4.0, 4.0);
    // Spec §4.5.1 (polygon): first vertex on the positive x axis through the centre before
    // rotation. Hexagon about (2, 0), diameter 2, turned 90° about the origin: the centre
    // moves to (0, 2) and the first vertex (3, 0) to (0, 3).
    let s = shape(&["5,1,6,2,0,2,90"], &[]);
    assert_eq!(vertices(&s)[0], Point::new(0.0, 3.0));
    assert!(close(
        geo_polygon(&s).unsigned_area(),
        3.0 * (PI / 3.0).sin()
    ));
}

#[test]
fn polygon_vertex_count_is_checked() {
    assert!(error(&["5,1,2,0,0,1,0"], &[])
        .message
        .contains("at least 3"));
    assert!(error(&["5,1,3.5,0,0,1,0"], &[])
        .message
        .contains("whole number"));
    // More than 12 (spec maximum) is drawn with a warning.
    let def = define("FINE", &["5,1,16,0,0,1,0"]);
    let (r, w) = run(&def, &[]);
    assert_eq!(vertices(&r.unwrap()).len(), 17);
    assert_eq!(w.len(), 1);
}

#[test]
fn thermal_area_and_bounds() {
    // From memory of the spec's thermal example: 7,0,0,0.8,0.55,0.125,45.
    let s = shape(&["7,0,0,0.8,0.55,0.125,45"], &[]);
    let Shape::Composite(parts) = &s else {
        panic!("{s:?}")
    };
    assert_eq!(parts.len(), 4);
    assert!(parts.iter().all(|(add, _)| *add));
    // Ring π(D² − d²)/4 minus the four gap strips = 4 × (corner(R) − corner(r)) (analytic).
    let expect = 4.0 * (corner_area(0.4, 0.0625) - corner_area(0.275, 0.0625));
    assert!(expect < PI * (0.64 - 0.3025) / 4.0);
    assert_area_within_half_percent(&s, expect);
    // Centre (1, 0) turned 90° about the origin → centre (0, 1). Along the axes the gaps cut
    // the extremes: half extent √(R² − h²) (analytic).
    let s = shape(&["7,1,0,0.8,0.55,0.125,90"], &[]);
    let e = (0.16f64 - 0.0625 * 0.0625).sqrt();
    assert_bounds(&s, -e, 1.0 - e, e, 1.0 + e);
}

#[test]
fn thermal_without_hole_or_gap() {
    // No gap, no hole: the whole disc, πD²/4 (analytic).
    assert_area_within_half_percent(&shape(&["7,0,0,2,0,0,0"], &[]), PI);
    // Gap ≥ D/√2 leaves nothing (spec §4.5.1 requires gap < D/√2): warned, empty.
    let def = define("T", &["7,0,0,1,0,0.8,0"]);
    let (r, w) = run(&def, &[]);
    assert_eq!(r.unwrap(), Shape::Composite(vec![]));
    assert_eq!(w.len(), 1);
}

#[test]
fn moire_spec_example() {
    // From memory of the spec's moiré example: centre 0,0, outer 5, ring 0.5, gap 0.5,
    // 2 rings, crosshair 0.1 thick and 6 long, no rotation.
    let def = define("TARGET", &["6,0,0,5,0.5,0.5,2,0.1,6,0"]);
    let (r, w) = run(&def, &[]);
    let s = r.unwrap();
    assert_eq!(w.len(), 1, "deprecation warning: {w:?}");
    let Shape::Composite(parts) = &s else {
        panic!("{s:?}")
    };
    assert_eq!(parts.len(), 4, "two rings and two bars");
    assert_bounds(&s, -3.0, -3.0, 3.0, 3.0);
    // Rings: outer diameters 5 and 3, inner 4 and 2: Σ π(D² − d²)/4 (analytic). Crosshair:
    // 2·t·l − t² (two bars sharing a t × t square). Their overlap: each bar crosses each
    // ring in two strip pieces, strip_in_disc(R) − strip_in_disc(r) per bar and ring (the
    // central t × t square lies inside the innermost hole).
    let h = 0.05;
    let rings = PI * (25.0 - 16.0) / 4.0 + PI * (9.0 - 4.0) / 4.0;
    let cross = 2.0 * 0.1 * 6.0 - 0.01;
    let overlap: f64 = [(2.5, 2.0), (1.5, 1.0)]
        .iter()
        .map(|&(ro, ri)| 2.0 * (strip_in_disc(ro, h) - strip_in_disc(ri, h)))
        .sum();
    assert_area_within_half_percent(&s, rings + cross - overlap);
}

#[test]
fn moire_rings_stop_when_the_diameter_runs_out() {
    // Outer 4, thickness 1, gap 0, up to 100 rings: ring 1 is 4→2, ring 2 is 2→0 (a disc),
    // then nothing is left: together the disc of diameter 4, area 4π (analytic).
    let def = define("T", &["6,0,0,4,1,0,100,0,0,0"]);
    let s = run(&def, &[]).0.unwrap();
    let Shape::Composite(parts) = &s else {
        panic!("{s:?}")
    };
    assert_eq!(parts.len(), 2);
    assert_area_within_half_percent(&s, 4.0 * PI);
}

// ---------------------------------------------------------------- composition

#[test]
fn donut_spec_examples() {
    // From memory of the spec's DONUTVAR example: a circle with its inner part cleared by
    // an exposure-off circle, %ADD34DONUTVAR,0.100X0X0X0.080*%.
    let s = shape(&["1,1,$1,$2,$3", "1,0,$4,$2,$3"], &[0.1, 0.0, 0.0, 0.08]);
    assert_eq!(
        s,
        Shape::Composite(vec![
            (
                true,
                Shape::Disc {
                    center: Point::new(0.0, 0.0),
                    diameter: 0.1
                }
            ),
            (
                false,
                Shape::Disc {
                    center: Point::new(0.0, 0.0),
                    diameter: 0.08
                }
            ),
        ])
    );
    // Annulus area π(D² − d²)/4 (analytic).
    assert_area_within_half_percent(&s, PI * (0.01 - 0.0064) / 4.0);
    // DONUTCAL (from memory): the inner diameter computed by an assignment, $4=$1x0.75.
    let s = shape(
        &["1,1,$1,$2,$3", "$4=$1x0.75", "1,0,$4,$2,$3"],
        &[0.1, 0.0, 0.0],
    );
    let Shape::Composite(parts) = &s else {
        panic!("{s:?}")
    };
    assert_eq!(
        parts[1],
        (
            false,
            Shape::Disc {
                center: Point::new(0.0, 0.0),
                diameter: 0.1 * 0.75
            }
        )
    );
}

#[test]
fn exposure_off_cuts_only_the_macro_itself() {
    // Spec §4.5.1: exposure off erases within the macro; an off primitive before anything
    // was drawn cuts nothing, and a later on primitive is drawn over the hole.
    let s = shape(&["1,0,9,0,0", "1,1,4,0,0", "1,0,2,0,0", "1,1,1,0,0"], &[]);
    let Shape::Composite(parts) = &s else {
        panic!("{s:?}")
    };
    let flags: Vec<bool> = parts.iter().map(|(add, _)| *add).collect();
    assert_eq!(flags, [true, false, true]);
    // Disc 4 minus disc 2 plus disc 1: π(16 − 4 + 1)/4 (analytic).
    assert_area_within_half_percent(&s, PI * 13.0 / 4.0);
}

#[test]
fn zero_sizes_draw_nothing_and_negative_sizes_are_errors() {
    assert_eq!(shape(&["1,1,0,0,0"], &[]), Shape::Composite(vec![]));
    assert_eq!(shape(&["21,1,0,1,0,0,0"], &[]), Shape::Composite(vec![]));
    let e = error(&["1,1,1,0,0", "21,1,-1,1,0,0,0"], &[]);
    assert_eq!(e.pos, Pos::new(3, 6));
    assert!(
        e.message.contains("'M'") && e.message.contains("centre line"),
        "{e}"
    );
    assert!(e.message.contains("width"), "{e}");
}

// ---------------------------------------------------------------- expressions and variables

#[test]
fn expression_precedence_and_variables() {
    // Spec §4.5 (arithmetic expressions): x and / before + and −, left to right; unary
    // signs; parentheses. Each value is used as a circle diameter.
    let cases: [(&'static str, f64); 7] = [
        ("1,1,1+2x3,0,0", 7.0),
        ("1,1,(1+2)x3,0,0", 9.0),
        ("1,1,-2x-3,0,0", 6.0),
        ("1,1,10/4,0,0", 2.5),
        ("1,1,$1x$2,0,0", 12.0),
        ("1,1,$2-$1/2,0,0", 2.5),
        ("1,1,8-3-2,0,0", 3.0),
    ];
    for (block, d) in cases {
        let s = shape(&[block], &[3.0, 4.0]);
        assert_eq!(
            s,
            Shape::Disc {
                center: Point::new(0.0, 0.0),
                diameter: d
            },
            "{block}"
        );
    }
}

#[test]
fn division_by_zero_names_macro_expression_and_position() {
    let def = MacroDef::parse("DIV", &[("1,1,\n$1/$2,0,0", Pos::new(3, 7))], FILE).unwrap();
    let e = run(&def, &[1.0, 0.0]).0.unwrap_err();
    // The '/' is on the next line, third character.
    assert_eq!(e.pos, Pos::new(4, 3));
    assert_eq!(e.file, FILE);
    assert!(e.message.contains("division by zero"), "{e}");
    assert!(
        e.message.contains("'DIV'") && e.message.contains("`$1/$2`"),
        "{e}"
    );
    assert!(
        e.message.contains("40:1"),
        "names the aperture definition: {e}"
    );
}

#[test]
fn assignment_and_reassignment() {
    // $3 = $1 + $2 = 3, drawn; then $3 = $3 x 2 = 6 (reassignment accepted).
    let s = shape(
        &["$3=$1+$2", "1,1,$3,0,0", "$3=$3x2", "1,1,$3,10,0"],
        &[1.0, 2.0],
    );
    let Shape::Composite(parts) = &s else {
        panic!("{s:?}")
    };
    assert_eq!(
        parts[0].1,
        Shape::Disc {
            center: Point::new(0.0, 0.0),
            diameter: 3.0
        }
    );
    assert_eq!(
        parts[1].1,
        Shape::Disc {
            center: Point::new(10.0, 0.0),
            diameter: 6.0
        }
    );
    // An assignment may override a parameter.
    let s = shape(&["$1=0.5", "1,1,$1,0,0"], &[2.0]);
    assert_eq!(
        s,
        Shape::Disc {
            center: Point::new(0.0, 0.0),
            diameter: 0.5
        }
    );
}

#[test]
fn unset_variable_reads_as_zero_with_one_warning() {
    let def = define("U", &["1,1,1,$5,$5"]);
    let (r, w) = run(&def, &[1.0]);
    assert_eq!(
        r.unwrap(),
        Shape::Disc {
            center: Point::new(0.0, 0.0),
            diameter: 1.0
        }
    );
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].message.contains("$5"));
    assert_eq!(w[0].pos, Some(Pos::new(2, 7)));
}

// ---------------------------------------------------------------- modifiers and codes

#[test]
fn too_few_modifiers_name_the_primitive_and_the_macro() {
    let e = error(&["20,1,0.5,0,0,1,0"], &[]);
    assert_eq!(e.pos, Pos::new(2, 1));
    assert!(
        e.message.contains("'M'") && e.message.contains("vector line"),
        "{e}"
    );
    assert!(
        e.message.contains("needs 7") && e.message.contains("rotation"),
        "{e}"
    );
}

#[test]
fn extra_modifiers_are_warned_once_per_macro() {
    let def = define("X", &["21,1,1,1,0,0,0,7,8"]);
    let (r, w) = run(&def, &[]);
    assert!(r.is_ok());
    assert_eq!(w.len(), 1);
    assert!(w[0].message.contains("2 extra"), "{}", w[0]);
    assert_eq!(w[0].pos, Some(Pos::new(2, 16)));
    // A second aperture using the same macro does not repeat it.
    assert!(run(&def, &[]).1.is_empty());
}

#[test]
fn deprecated_codes_warn_once() {
    let def = define(
        "OLD",
        &["2,1,1,0,0,1,0,0", "2,1,1,0,1,1,1,0", "22,1,1,1,0,0,0"],
    );
    let (_, w) = run(&def, &[]);
    assert_eq!(w.len(), 2, "one per code: {w:?}");
    assert!(run(&def, &[]).1.is_empty());
}

#[test]
fn exposure_must_be_zero_or_one() {
    let e = error(&["1,2,1,0,0"], &[]);
    assert!(e.message.contains("exposure"), "{e}");
    assert_eq!(e.pos, Pos::new(2, 3));
    // An expression giving 1 is fine.
    assert!(matches!(
        shape(&["1,$1/2,1,0,0"], &[2.0]),
        Shape::Disc { .. }
    ));
}

#[test]
fn comments_whitespace_and_empty_blocks() {
    let s = shape(
        &[
            "0 Larkspur pad, 1,2,3 are not modifiers",
            "  \r\n",
            " 1 , 1 ,\t1.5 , 0 , 0 ",
        ],
        &[],
    );
    assert_eq!(
        s,
        Shape::Disc {
            center: Point::new(0.0, 0.0),
            diameter: 1.5
        }
    );
}

#[test]
fn syntax_errors_are_reported_at_parse() {
    let parse = |b: &'static str| MacroDef::parse("S", &blocks(&[b]), FILE).unwrap_err();
    let e = parse("3,1,1,0,0");
    assert!(e.message.contains("unknown primitive code 3"), "{e}");
    let e = parse("1,1,,0,0");
    assert!(e.message.contains("empty"), "{e}");
    assert_eq!(e.pos, Pos::new(2, 5));
    let e = parse("1,1,2#,0,0");
    assert_eq!(e.pos, Pos::new(2, 6));
    let e = parse("$4");
    assert!(e.message.contains("assignment"), "{e}");
    let e = parse("$0=1");
    assert!(e.message.contains("$1"), "{e}");
    let deep =
        Box::leak(format!("1,1,{}1{},0,0", "(".repeat(100), ")".repeat(100)).into_boxed_str());
    assert!(parse(deep).message.contains("nested"));
}

#[test]
fn primitive_limit_counts_moire_rings() {
    let limits = Limits {
        max_macro_primitives: 3,
        ..Limits::default()
    };
    let mut w = Vec::new();
    let def = define(
        "MANY",
        &["1,1,1,0,0", "1,1,1,1,0", "1,1,1,2,0", "1,1,1,3,0"],
    );
    let e = def.instantiate(&[], FILE, AD, &limits, &mut w).unwrap_err();
    assert!(e.message.contains("max_macro_primitives"), "{e}");
    assert_eq!(e.pos, Pos::new(5, 1));
    // A moiré with 10 rings is 10 + 2 primitives.
    let def = define("RINGS", &["6,0,0,100,1,1,10,1,200,0"]);
    let limits = Limits {
        max_macro_primitives: 11,
        ..Limits::default()
    };
    assert!(def.instantiate(&[], FILE, AD, &limits, &mut w).is_err());
    let limits = Limits {
        max_macro_primitives: 12,
        ..Limits::default()
    };
    assert!(def.instantiate(&[], FILE, AD, &limits, &mut w).is_ok());
}

#[test]
fn non_finite_results_are_errors() {
    let e = error(&["1,1,$1x$1,0,0"], &[1e300]);
    assert!(e.message.contains("too large"), "{e}");
}

// ---------------------------------------------------------------- robustness

fn finite(s: &Shape) -> bool {
    let p = |p: &Point| p.x.is_finite() && p.y.is_finite();
    match s {
        Shape::Disc { center, diameter } => p(center) && diameter.is_finite() && *diameter >= 0.0,
        Shape::Stroke {
            start, end, width, ..
        } => p(start) && p(end) && width.is_finite(),
        Shape::Polygon(c) => p(&c.start) && c.segments.iter().all(|s| p(&s.end())),
        Shape::Composite(parts) => parts.iter().all(|(_, s)| finite(s)),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    /// Never panics on random expressions in any modifier of any primitive, and anything
    /// returned is finite.
    #[test]
    fn instantiate_never_panics(
        code in prop::sample::select(vec!["1", "2", "4", "5", "6", "7", "20", "21", "22"]),
        mods in prop::collection::vec("[0-9$x/()+. -]{0,12}", 0..14),
        params in prop::collection::vec(-1e3f64..1e3, 0..5),
    ) {
        let block = format!("{code},{}", mods.join(","));
        let text: &str = &block;
        if let Ok(def) = MacroDef::parse("P", &[(text, Pos::new(1, 1))], FILE) {
            let mut w = Vec::new();
            let limits = Limits { max_macro_primitives: 1000, ..Limits::default() };
            if let Ok(s) = def.instantiate(&params, FILE, AD, &limits, &mut w) {
                prop_assert!(finite(&s), "{s:?}");
            }
        }
    }

    /// Random whole bodies, including assignments and comments.
    #[test]
    fn parse_never_panics(body in "[0-9$=x/()+.,* \n-]{0,80}") {
        let pieces: Vec<(&str, Pos)> = body.split('*').map(|b| (b, Pos::new(1, 1))).collect();
        if let Ok(def) = MacroDef::parse("Q", &pieces, FILE) {
            let mut w = Vec::new();
            let limits = Limits { max_macro_primitives: 1000, ..Limits::default() };
            let _ = def.instantiate(&[1.0, 2.0], FILE, AD, &limits, &mut w);
        }
    }
}
