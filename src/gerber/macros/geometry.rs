//! Exact outlines of the macro primitives (Gerber spec rev 2024.05, §4.5.1), in macro
//! coordinates before the primitive's rotation. Inputs are already validated (sizes >= 0);
//! a primitive with no area returns nothing.

use crate::image::{rotation_sin_cos, Contour, Point, Segment, Shape, Similarity, Turn};

/// Rotates `shape` counter-clockwise by `degrees` about the macro origin (0, 0), as every
/// macro primitive's rotation is (spec §4.5.1). Exact at multiples of 90°.
pub(super) fn rotated_about_origin(shape: Shape, degrees: f64) -> Shape {
    if degrees == 0.0 {
        return shape;
    }
    shape.transformed(&Similarity {
        rotation_deg: degrees,
        ..Similarity::IDENTITY
    })
}

/// A filled circle, or nothing when the diameter is zero.
pub(super) fn disc(center: Point, diameter: f64) -> Option<Shape> {
    (diameter > 0.0).then_some(Shape::Disc { center, diameter })
}

/// The rectangle of `width` whose centre line runs from `start` to `end`: the ends are
/// square and do not extend past the end points (primitive 20, spec §4.5.1, vector line).
pub(super) fn vector_line(width: f64, start: Point, end: Point) -> Option<Shape> {
    let length = start.dist(end);
    if width <= 0.0 || length == 0.0 {
        return None;
    }
    // Unit direction, then the half-width normal (to the left of the direction).
    let (ux, uy) = ((end.x - start.x) / length, (end.y - start.y) / length);
    let (nx, ny) = (-uy * width / 2.0, ux * width / 2.0);
    Some(Shape::Polygon(Contour::from_points(&[
        Point::new(start.x - nx, start.y - ny),
        Point::new(end.x - nx, end.y - ny),
        Point::new(end.x + nx, end.y + ny),
        Point::new(start.x + nx, start.y + ny),
    ])))
}

/// An axis-aligned rectangle from its lower-left corner (counter-clockwise contour).
pub(super) fn rectangle(lower_left: Point, width: f64, height: f64) -> Option<Shape> {
    if width <= 0.0 || height <= 0.0 {
        return None;
    }
    let (x0, y0) = (lower_left.x, lower_left.y);
    let (x1, y1) = (x0 + width, y0 + height);
    Some(Shape::Polygon(Contour::from_points(&[
        Point::new(x0, y0),
        Point::new(x1, y0),
        Point::new(x1, y1),
        Point::new(x0, y1),
    ])))
}

/// An axis-aligned rectangle about its centre (primitive 21, spec §4.5.1, centre line).
pub(super) fn centered_rectangle(center: Point, width: f64, height: f64) -> Option<Shape> {
    rectangle(
        Point::new(center.x - width / 2.0, center.y - height / 2.0),
        width,
        height,
    )
}

/// A regular polygon with `vertices` corners on the circle of `diameter` about `center`,
/// the first corner on the positive x axis through the centre (primitive 5, spec §4.5.1, polygon).
pub(super) fn regular_polygon(center: Point, vertices: u32, diameter: f64) -> Option<Shape> {
    if diameter <= 0.0 || vertices < 3 {
        return None;
    }
    let r = diameter / 2.0;
    let points: Vec<Point> = (0..vertices)
        .map(|k| {
            // 360·k/n is an exact integer when the corner is on an axis, so rotation_sin_cos
            // makes those corners exact.
            let (s, c) = rotation_sin_cos(360.0 * f64::from(k) / f64::from(vertices));
            Point::new(center.x + r * c, center.y + r * s)
        })
        .collect();
    Some(Shape::Polygon(Contour::from_points(&points)))
}

/// The annulus between `outer` and `inner` diameters about `center` as a full-circle stroke
/// (exact), a disc when there is no hole, nothing when it has no area.
pub(super) fn ring(center: Point, outer: f64, inner: f64) -> Option<Shape> {
    let inner = inner.max(0.0);
    if outer <= inner {
        return None;
    }
    if inner == 0.0 {
        return disc(center, outer);
    }
    let mid_radius = (outer + inner) / 4.0;
    let start = Point::new(center.x + mid_radius, center.y);
    Some(Shape::Stroke {
        start,
        end: start,
        arc: Some((center, Turn::CounterClockwise)),
        width: (outer - inner) / 2.0,
    })
}

/// The four pieces of a thermal (primitive 7, spec §4.5.1, thermal): the ring between the `outer`
/// and `inner` diameters about `center`, minus a cross of two bars of width `gap` along the
/// x and y axes through the centre. Each piece is a closed contour of lines and arcs, listed
/// counter-clockwise from the first quadrant. Empty when the gap swallows the ring.
pub(super) fn thermal(center: Point, outer: f64, inner: f64, gap: f64) -> Vec<Shape> {
    let (ro, ri, h) = (outer / 2.0, inner.max(0.0) / 2.0, gap / 2.0);
    // The piece exists only where the outer circle reaches past the corner of the cross.
    if ro <= ri || ro * ro <= 2.0 * h * h {
        return Vec::new();
    }
    // First-quadrant piece about the origin.
    let far = (ro * ro - h * h).sqrt();
    let o = Point::new(0.0, 0.0);
    let piece = if ri * ri > 2.0 * h * h {
        // The inner circle cuts both bar edges: bounded by two arcs and two straight edges.
        let near = (ri * ri - h * h).sqrt();
        Contour {
            start: Point::new(near, h),
            segments: vec![
                Segment::Line {
                    to: Point::new(far, h),
                },
                Segment::Arc {
                    to: Point::new(h, far),
                    center: o,
                    turn: Turn::CounterClockwise,
                },
                Segment::Line {
                    to: Point::new(h, near),
                },
                Segment::Arc {
                    to: Point::new(near, h),
                    center: o,
                    turn: Turn::Clockwise,
                },
            ],
        }
    } else {
        // The inner circle lies inside the cross: the piece has a square corner at (h, h).
        Contour {
            start: Point::new(h, h),
            segments: vec![
                Segment::Line {
                    to: Point::new(far, h),
                },
                Segment::Arc {
                    to: Point::new(h, far),
                    center: o,
                    turn: Turn::CounterClockwise,
                },
                Segment::Line {
                    to: Point::new(h, h),
                },
            ],
        }
    };
    (0..4)
        .map(|quadrant| {
            Shape::Polygon(piece.transformed(&Similarity {
                rotation_deg: 90.0 * f64::from(quadrant),
                offset: center,
                ..Similarity::IDENTITY
            }))
        })
        .collect()
}

/// Dimensions of a moiré (primitive 6, spec §4.5.1, moiré; deprecated).
#[derive(Debug, Clone, Copy)]
pub(super) struct Moire {
    pub center: Point,
    pub outer_diameter: f64,
    pub ring_thickness: f64,
    pub gap: f64,
    pub max_rings: u64,
    pub crosshair_thickness: f64,
    pub crosshair_length: f64,
}

/// The rings (outermost first) and the two crosshair bars of a moiré. Ring k has outer
/// diameter `outer − 2k·(thickness + gap)` and inner diameter 2·thickness less; rings stop
/// at `max_rings` or when no diameter is left, and a ring whose hole closes is a disc.
/// `Err(budget)` when more than `budget` shapes would be made.
pub(super) fn moire(m: &Moire, budget: usize) -> Result<Vec<Shape>, usize> {
    let mut shapes = Vec::new();
    if m.ring_thickness > 0.0 {
        let pitch = 2.0 * (m.ring_thickness + m.gap);
        let mut k: u64 = 0;
        while k < m.max_rings {
            let outer = m.outer_diameter - pitch * k as f64;
            if outer <= 0.0 {
                break;
            }
            if shapes.len() >= budget {
                return Err(budget);
            }
            shapes.extend(ring(m.center, outer, outer - 2.0 * m.ring_thickness));
            k += 1;
        }
    }
    let (t, l) = (m.crosshair_thickness, m.crosshair_length);
    for bar in [
        centered_rectangle(m.center, l, t),
        centered_rectangle(m.center, t, l),
    ]
    .into_iter()
    .flatten()
    {
        if shapes.len() >= budget {
            return Err(budget);
        }
        shapes.push(bar);
    }
    Ok(shapes)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn polygon(shape: &Shape) -> &Contour {
        match shape {
            Shape::Polygon(c) => c,
            other => panic!("not a polygon: {other:?}"),
        }
    }

    #[test]
    fn vector_line_is_a_rectangle_with_square_ends() {
        // Rectangle area = width × length (analytic), here 1 × 5 for a 3-4-5 line.
        let s = vector_line(1.0, Point::new(0.0, 0.0), Point::new(3.0, 4.0)).unwrap();
        assert!((polygon(&s).signed_area() - 5.0).abs() < 1e-12);
        // The corners sit half a width either side of the end points, along the normal
        // (-4/5, 3/5) — the ends do not extend past the end points (spec §4.5.1, vector line).
        let c = polygon(&s);
        assert!(c.start.dist(Point::new(0.4, -0.3)) < 1e-12);
        assert!(c.segments[1].end().dist(Point::new(2.6, 4.3)) < 1e-12);
        assert!(vector_line(1.0, Point::new(1.0, 1.0), Point::new(1.0, 1.0)).is_none());
        assert!(vector_line(0.0, Point::new(0.0, 0.0), Point::new(1.0, 0.0)).is_none());
    }

    #[test]
    fn regular_polygon_first_vertex_on_positive_x() {
        // Spec §4.5.1, polygon: first vertex on the positive x axis through the centre.
        let s = regular_polygon(Point::new(1.0, 2.0), 4, 2.0).unwrap();
        let c = polygon(&s);
        assert_eq!(c.start, Point::new(2.0, 2.0));
        assert_eq!(c.segments[0].end(), Point::new(1.0, 3.0));
        assert_eq!(c.segments[1].end(), Point::new(0.0, 2.0));
        // Regular n-gon area (n/2)·R²·sin(2π/n) (analytic) for n = 7, R = 1.5.
        let s = regular_polygon(Point::new(0.0, 0.0), 7, 3.0).unwrap();
        let expect = 3.5 * 2.25 * (2.0 * PI / 7.0).sin();
        assert!((polygon(&s).signed_area() - expect).abs() < 1e-12);
    }

    #[test]
    fn thermal_pieces_have_the_analytic_area() {
        // Area of {x ≥ h, y ≥ h, x² + y² ≤ r²} = F(√(r²−h²)) − F(h) − h(√(r²−h²) − h) with
        // F(x) = (x√(r²−x²) + r² asin(x/r)) / 2, the antiderivative of √(r²−x²) (analytic).
        fn corner(r: f64, h: f64) -> f64 {
            if r * r <= 2.0 * h * h {
                return 0.0;
            }
            let f = |x: f64| (x * (r * r - x * x).sqrt() + r * r * (x / r).asin()) / 2.0;
            let w = (r * r - h * h).sqrt();
            f(w) - f(h) - h * (w - h)
        }
        for (outer, inner, gap) in [
            (8.0, 5.5, 1.25),
            (8.0, 1.0, 2.0),
            (4.0, 0.0, 0.0),
            (4.0, 2.0, 0.0),
        ] {
            let pieces = thermal(Point::new(0.0, 0.0), outer, inner, gap);
            assert_eq!(pieces.len(), 4);
            let area: f64 = pieces.iter().map(|p| polygon(p).signed_area()).sum();
            let expect = 4.0 * (corner(outer / 2.0, gap / 2.0) - corner(inner / 2.0, gap / 2.0));
            assert!(
                (area - expect).abs() < 1e-9,
                "{outer} {inner} {gap}: {area} vs {expect}"
            );
        }
        // With no gap the pieces make the whole ring, π(D² − d²)/4 (analytic).
        let ring_area: f64 = thermal(Point::new(0.0, 0.0), 4.0, 2.0, 0.0)
            .iter()
            .map(|p| polygon(p).signed_area())
            .sum();
        assert!((ring_area - PI * (16.0 - 4.0) / 4.0).abs() < 1e-12);
        // Spec §4.5.1, thermal requires gap < D/√2; at or beyond it nothing is left.
        assert!(thermal(Point::new(0.0, 0.0), 2.0, 0.0, 2.0_f64.sqrt()).is_empty());
    }

    #[test]
    fn moire_respects_the_budget() {
        let m = Moire {
            center: Point::new(0.0, 0.0),
            outer_diameter: 1.0,
            ring_thickness: 1e-9,
            gap: 0.0,
            max_rings: u64::MAX,
            crosshair_thickness: 0.0,
            crosshair_length: 0.0,
        };
        assert_eq!(moire(&m, 1000), Err(1000));
        let m = Moire {
            max_rings: 3,
            crosshair_thickness: 0.1,
            crosshair_length: 2.0,
            ..m
        };
        assert_eq!(moire(&m, 5).unwrap().len(), 5);
        assert_eq!(moire(&m, 4), Err(4));
    }

    #[test]
    fn ring_is_a_full_circle_stroke() {
        let r = ring(Point::new(1.0, 1.0), 4.0, 2.0).unwrap();
        // Mid radius (R + r)/2 = 1.5, width R − r = 1.
        assert_eq!(
            r,
            Shape::Stroke {
                start: Point::new(2.5, 1.0),
                end: Point::new(2.5, 1.0),
                arc: Some((Point::new(1.0, 1.0), Turn::CounterClockwise)),
                width: 1.0
            }
        );
        assert_eq!(
            ring(Point::new(0.0, 0.0), 2.0, -1.0),
            disc(Point::new(0.0, 0.0), 2.0)
        );
        assert_eq!(ring(Point::new(0.0, 0.0), 2.0, 2.0), None);
    }
}
