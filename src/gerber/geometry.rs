//! Plane geometry the interpreter needs: arc centres from I/J (spec 2024.05 §4.7.2–§4.7.3,
//! §8.3 for single quadrant), the sweep of a convex aperture along a segment, and the
//! deprecated image transform (§8.1).

use crate::image::{arc_sweep, Contour, Point, Shape, Turn};

/// The convex hull of `points`, counter-clockwise, without collinear points (Andrew's
/// monotone chain).
pub fn convex_hull(points: &[Point]) -> Vec<Point> {
    let mut p: Vec<Point> = points.to_vec();
    p.sort_by(|a, b| a.x.total_cmp(&b.x).then(a.y.total_cmp(&b.y)));
    p.dedup();
    if p.len() < 3 {
        return p;
    }
    let cross =
        |o: Point, a: Point, b: Point| (a.x - o.x) * (b.y - o.y) - (a.y - o.y) * (b.x - o.x);
    let mut hull: Vec<Point> = Vec::with_capacity(p.len() * 2);
    for pass in 0..2 {
        let start = hull.len();
        let iter: Box<dyn Iterator<Item = &Point>> = if pass == 0 {
            Box::new(p.iter())
        } else {
            Box::new(p.iter().rev())
        };
        for &q in iter {
            while hull.len() >= start + 2
                && cross(hull[hull.len() - 2], hull[hull.len() - 1], q) <= 0.0
            {
                hull.pop();
            }
            hull.push(q);
        }
        hull.pop();
    }
    hull
}

/// The area swept by the convex polygon `outline` (offsets about the pen position) moving
/// from `a` to `b`: the convex hull of the outline at both ends (Minkowski sum of a convex
/// set and a segment).
pub fn convex_sweep(outline: &[Point], a: Point, b: Point) -> Shape {
    let mut pts = Vec::with_capacity(outline.len() * 2);
    for o in outline {
        pts.push(Point::new(a.x + o.x, a.y + o.y));
        pts.push(Point::new(b.x + o.x, b.y + o.y));
    }
    Shape::Polygon(Contour::from_points(&convex_hull(&pts)))
}

/// The sweep of any convex `shape` (given at the origin) from `a` to `b`, where the shape's
/// support points across the motion are `support`: the shape at both ends plus the band
/// between its two extreme points perpendicular to the motion. For a convex shape this union
/// equals the Minkowski sum exactly.
pub fn convex_shape_sweep(shape: &Shape, support: (Point, Point), a: Point, b: Point) -> Shape {
    let at = |p: Point| shape.transformed(&crate::image::Similarity::translate(p.x, p.y));
    let (s1, s2) = support;
    let band = Contour::from_points(&[
        Point::new(a.x + s1.x, a.y + s1.y),
        Point::new(b.x + s1.x, b.y + s1.y),
        Point::new(b.x + s2.x, b.y + s2.y),
        Point::new(a.x + s2.x, a.y + s2.y),
    ]);
    Shape::Composite(vec![
        (true, at(a)),
        (true, at(b)),
        (true, Shape::Polygon(band)),
    ])
}

/// How well an arc's end point fits the circle through its start point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ArcFit {
    pub center: Point,
    /// |r_start − r_end| before correction, in the same units as the points.
    pub radius_error: f64,
    pub radius: f64,
}

/// The centre for a multi-quadrant arc (G75): start + (I, J), signed.
pub fn multi_quadrant_center(start: Point, i: f64, j: f64) -> Point {
    Point::new(start.x + i, start.y + j)
}

/// The centre for a single-quadrant arc (G74): I and J are unsigned; of the four candidate
/// centres take the one giving an arc of at most 90° in the given direction whose start and
/// end radii agree best (spec 2024.05 §8.3, "single quadrant mode"). `angle_slack` (radians)
/// admits arcs a rounding error over 90°. Returns `None` if no candidate gives an arc of at
/// most 90°.
pub fn single_quadrant_center(
    start: Point,
    end: Point,
    i: f64,
    j: f64,
    turn: Turn,
    angle_slack: f64,
) -> Option<Point> {
    let (i, j) = (i.abs(), j.abs());
    let mut best: Option<(f64, Point)> = None;
    for (sx, sy) in [(1.0, 1.0), (-1.0, 1.0), (1.0, -1.0), (-1.0, -1.0)] {
        let c = Point::new(start.x + sx * i, start.y + sy * j);
        let sweep = arc_sweep(start, end, c, turn).abs();
        if sweep > std::f64::consts::FRAC_PI_2 + angle_slack {
            continue;
        }
        let err = (c.dist(start) - c.dist(end)).abs();
        if best.is_none_or(|(e, _)| err < e) {
            best = Some((err, c));
        }
    }
    best.map(|(_, c)| c)
}

/// Moves `center` onto the perpendicular bisector of start–end (the nearest point there),
/// so that both radii agree exactly; reports the original disagreement.
pub fn fit_center(start: Point, end: Point, center: Point) -> ArcFit {
    let radius_error = (center.dist(start) - center.dist(end)).abs();
    let (dx, dy) = (end.x - start.x, end.y - start.y);
    let len2 = dx * dx + dy * dy;
    let fitted = if len2 == 0.0 {
        center
    } else {
        let mid = Point::new((start.x + end.x) / 2.0, (start.y + end.y) / 2.0);
        // Remove the component of (center − mid) along the chord.
        let t = ((center.x - mid.x) * dx + (center.y - mid.y) * dy) / len2;
        Point::new(center.x - t * dx, center.y - t * dy)
    };
    ArcFit {
        center: fitted,
        radius_error,
        radius: fitted.dist(start),
    }
}

/// The deprecated image transform of `%MI`, `%SF`, `%OF`, `%IR`, `%AS`, applied to
/// coordinates in the order MI → SF → OF → IR → AS (spec 2024.05 §8.1).
///
/// Design choice (from memory of older revisions, where the spec is silent): MI, SF and AS
/// act on coordinates only (MI "mirrors coordinates, not apertures" per §8.1); IR rotates the
/// whole image, so it also rotates aperture shapes.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImageTransform {
    pub mirror_a: bool,
    pub mirror_b: bool,
    pub scale_a: f64,
    pub scale_b: f64,
    pub offset_a: f64,
    pub offset_b: f64,
    pub rotation_deg: u32,
    pub swap_axes: bool,
}

impl Default for ImageTransform {
    fn default() -> Self {
        ImageTransform {
            mirror_a: false,
            mirror_b: false,
            scale_a: 1.0,
            scale_b: 1.0,
            offset_a: 0.0,
            offset_b: 0.0,
            rotation_deg: 0,
            swap_axes: false,
        }
    }
}

impl ImageTransform {
    pub fn is_identity(&self) -> bool {
        *self == ImageTransform::default()
    }

    /// Applies the linear part (no offset) to a vector; `with_mirror` false leaves MI out
    /// (step-and-repeat distances are not mirrored, §8.1).
    pub fn vector(&self, x: f64, y: f64, with_mirror: bool) -> Point {
        let mut x = if with_mirror && self.mirror_a { -x } else { x };
        let mut y = if with_mirror && self.mirror_b { -y } else { y };
        x *= self.scale_a;
        y *= self.scale_b;
        let (s, c) = crate::image::rotation_sin_cos(self.rotation_deg as f64);
        let (rx, ry) = (x * c - y * s, x * s + y * c);
        if self.swap_axes {
            Point::new(ry, rx)
        } else {
            Point::new(rx, ry)
        }
    }

    /// Applies the full transform to a point (file units in, file units out).
    pub fn point(&self, x: f64, y: f64) -> Point {
        let mut x = if self.mirror_a { -x } else { x };
        let mut y = if self.mirror_b { -y } else { y };
        x = x * self.scale_a + self.offset_a;
        y = y * self.scale_b + self.offset_b;
        let (s, c) = crate::image::rotation_sin_cos(self.rotation_deg as f64);
        let (rx, ry) = (x * c - y * s, x * s + y * c);
        if self.swap_axes {
            Point::new(ry, rx)
        } else {
            Point::new(rx, ry)
        }
    }

    /// Whether the transform reverses orientation (arcs change direction).
    pub fn reverses(&self) -> bool {
        self.mirror_a ^ self.mirror_b ^ self.swap_axes
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hull_of_rectangle_sweep_is_a_hexagon() {
        // A 2×1 rectangle moved by (3,3): Minkowski sum area = rect area + |d × extents|.
        // Analytic: area = w·h + |dx|·h + |dy|·w = 2 + 3 + 6 = 11.
        let rect = crate::gerber::aperture::rectangle_corners(2.0, 1.0);
        let Shape::Polygon(c) = convex_sweep(&rect, Point::new(0.0, 0.0), Point::new(3.0, 3.0))
        else {
            panic!()
        };
        assert_eq!(c.segments.len(), 6);
        assert!((c.signed_area() - 11.0).abs() < 1e-12);
    }

    #[test]
    fn single_quadrant_picks_the_quarter_arc() {
        // Quarter circle from (1,0) to (0,1) counter-clockwise about the origin; I=1, J=0
        // unsigned: the centre must be (0,0) (spec §8.3).
        let c = single_quadrant_center(
            Point::new(1.0, 0.0),
            Point::new(0.0, 1.0),
            1.0,
            0.0,
            Turn::CounterClockwise,
            1e-9,
        )
        .unwrap();
        assert!(c.dist(Point::new(0.0, 0.0)) < 1e-12);
        // The same chord clockwise is the other quarter: centre (1,1), I=0, J=1.
        let c = single_quadrant_center(
            Point::new(1.0, 0.0),
            Point::new(0.0, 1.0),
            0.0,
            1.0,
            Turn::Clockwise,
            1e-9,
        )
        .unwrap();
        assert!(c.dist(Point::new(1.0, 1.0)) < 1e-12);
    }

    #[test]
    fn fitted_center_equalizes_radii() {
        let f = fit_center(
            Point::new(1.0, 0.0),
            Point::new(-1.0, 0.0),
            Point::new(0.01, 0.2),
        );
        assert!(
            (f.center.dist(Point::new(1.0, 0.0)) - f.center.dist(Point::new(-1.0, 0.0))).abs()
                < 1e-12
        );
        assert!(f.radius_error > 0.0);
    }

    #[test]
    fn image_transform_order() {
        // MI then SF then OF then IR then AS (spec §8.1): (1,2) → (−1,2) → (−2,2) → (−1,2)
        // → rotated 90° ccw (−2,−1) → swapped (−1,−2).
        let t = ImageTransform {
            mirror_a: true,
            scale_a: 2.0,
            offset_a: 1.0,
            rotation_deg: 90,
            swap_axes: true,
            ..ImageTransform::default()
        };
        assert_eq!(t.point(1.0, 2.0), Point::new(-1.0, -2.0));
        assert!(!t.reverses());
    }
}
