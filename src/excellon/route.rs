//! Geometry of routed arcs: centre from a radius (`A`), and flattening to chords.

use crate::image::{arc_sweep, Point, Turn};

/// Largest distance between an arc and its chords: 1 µm, well below any film resolution
/// (25 400 dpi is 1 µm per pixel).
pub(crate) const FLATTEN_TOLERANCE_MM: f64 = 0.001;

/// The centre of the arc of radius `radius` from `start` to `end` turning `turn`.
///
/// A positive radius takes the arc of at most 180°, a negative one the larger arc (the
/// usual convention of radius-programmed arcs in NC code — from memory). `None` when the
/// chord is longer than the diameter by more than `slack` (no such arc exists), or when
/// the points coincide (the circle is not determined).
pub(crate) fn centre_from_radius(
    start: Point,
    end: Point,
    radius: f64,
    turn: Turn,
    slack: f64,
) -> Option<Point> {
    let r = radius.abs();
    let (dx, dy) = (end.x - start.x, end.y - start.y);
    let d = dx.hypot(dy);
    if d <= 1e-12 || !r.is_finite() || d > 2.0 * r + slack {
        return None;
    }
    let h = (r * r - d * d / 4.0).max(0.0).sqrt();
    let mid = Point::new((start.x + end.x) / 2.0, (start.y + end.y) / 2.0);
    // Unit normal to the left of the chord direction.
    let (nx, ny) = (-dy / d, dx / d);
    // A minor counter-clockwise arc has its centre left of the chord; clockwise, right.
    let left = (turn == Turn::CounterClockwise) == (radius >= 0.0);
    let s = if left { h } else { -h };
    Some(Point::new(mid.x + s * nx, mid.y + s * ny))
}

/// How many chords flatten an arc of radius `r` sweeping `sweep` radians within
/// [`FLATTEN_TOLERANCE_MM`]: a chord subtending angle θ deviates r(1 − cos(θ/2)) from the
/// arc (sagitta formula), so θ = 2·acos(1 − tol / r).
pub(crate) fn chord_count(r: f64, sweep: f64) -> u64 {
    if !(r.is_finite() && sweep.is_finite()) || r <= FLATTEN_TOLERANCE_MM {
        return 1;
    }
    let step = 2.0 * (1.0 - FLATTEN_TOLERANCE_MM / r).acos();
    ((sweep.abs() / step).ceil() as u64).max(1)
}

/// The points after `start` of the arc from `start` to `end` about `centre`, ending exactly
/// at `end`. When the end radius differs from the start radius the radius changes evenly
/// along the sweep, so the path stays continuous. `count` comes from [`chord_count`].
pub(crate) fn flatten(
    start: Point,
    end: Point,
    centre: Point,
    turn: Turn,
    count: u64,
) -> Vec<Point> {
    let sweep = arc_sweep(start, end, centre, turn);
    let r0 = centre.dist(start);
    let r1 = centre.dist(end);
    let a0 = (start.y - centre.y).atan2(start.x - centre.x);
    let n = count.max(1);
    let mut pts = Vec::with_capacity(n as usize);
    for k in 1..n {
        let t = k as f64 / n as f64;
        let a = a0 + sweep * t;
        let r = r0 + (r1 - r0) * t;
        pts.push(Point::new(centre.x + r * a.cos(), centre.y + r * a.sin()));
    }
    pts.push(end);
    pts
}

/// Both radii of an arc given by its centre.
pub(crate) fn radii(start: Point, end: Point, centre: Point) -> (f64, f64) {
    (centre.dist(start), centre.dist(end))
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    #[test]
    fn radius_centre_picks_the_minor_arc() {
        // Quarter circle of radius 1 about the origin from (1,0) to (0,1): CCW minor arc
        // has centre (0,0); the CW minor arc between the same points has centre (1,1).
        let (s, e) = (Point::new(1.0, 0.0), Point::new(0.0, 1.0));
        let c = centre_from_radius(s, e, 1.0, Turn::CounterClockwise, 0.0).unwrap();
        assert!(c.dist(Point::new(0.0, 0.0)) < 1e-12, "{c:?}");
        let c = centre_from_radius(s, e, 1.0, Turn::Clockwise, 0.0).unwrap();
        assert!(c.dist(Point::new(1.0, 1.0)) < 1e-12, "{c:?}");
        // Negative radius: the major arc, so the other centre.
        let c = centre_from_radius(s, e, -1.0, Turn::CounterClockwise, 0.0).unwrap();
        assert!(c.dist(Point::new(1.0, 1.0)) < 1e-12, "{c:?}");
        assert!(centre_from_radius(s, e, 0.5, Turn::Clockwise, 0.0).is_none());
    }

    #[test]
    fn flattened_arc_stays_within_tolerance() {
        let (s, e, c) = (
            Point::new(5.0, 0.0),
            Point::new(-5.0, 0.0),
            Point::new(0.0, 0.0),
        );
        let n = chord_count(5.0, PI);
        let pts = flatten(s, e, c, Turn::CounterClockwise, n);
        assert_eq!(pts.len() as u64, n);
        assert_eq!(*pts.last().unwrap(), e);
        let mut prev = s;
        for p in pts {
            // Sagitta of each chord (distance from arc to chord midpoint) within 1 µm.
            let mid = Point::new((prev.x + p.x) / 2.0, (prev.y + p.y) / 2.0);
            assert!(5.0 - mid.dist(c) <= FLATTEN_TOLERANCE_MM + 1e-12);
            assert!((p.dist(c) - 5.0).abs() < 1e-9);
            prev = p;
        }
    }
}
