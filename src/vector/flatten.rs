//! Shapes of the normalized layer image → polygons in film space, arcs replaced by chords.
//!
//! Every arc and circle becomes chords whose vertices lie on the true curve, so a flattened
//! shape lies inside the true one by at most the tolerance `t` (the sagitta of a chord
//! subtending the angle θ on radius r is `r·(1 − cos(θ/2))`, elementary geometry; θ is
//! chosen so that it is ≤ t).
//!
//! The output of [`Flattener::rings`] is a *cover*: rings whose winding numbers add up to a
//! value ≥ 0 everywhere and > 0 exactly on the shape. Covers of many objects can therefore
//! be united in one non-zero-winding overlay without one object's orientation cancelling
//! another's.

use super::{ops, Pt, Ring};
use crate::image::{arc_sweep, Bounds, Contour, Point, Segment, Shape, Turn};
use crate::raster::DeviceMap;
use std::f64::consts::{PI, TAU};

/// Most chords one arc or circle is flattened into (the same cap as the raster path): at
/// 1/8 of a 2400 dpi dot a circle of 1 m radius needs about 4,000.
pub const MAX_ARC_CHORDS: usize = 65_536;

/// The axis-aligned map from board mm to film mm: `u = ax·x + cx`, `v = ay·y + cy`.
///
/// Derived from the film's [`DeviceMap`] (see its module docs): device pixel coordinates
/// times the pixel pitch, with the y axis turned up again. The film is
/// `width_mm × height_mm`, exactly the raster film's size in pixels times the pitch.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FilmSpace {
    pub ax: f64,
    pub cx: f64,
    pub ay: f64,
    pub cy: f64,
    pub width_mm: f64,
    pub height_mm: f64,
}

impl FilmSpace {
    /// The film space of a raster film's map: `u = px · 25.4/dpi_x`,
    /// `v = (height − py) · 25.4/dpi_y`.
    pub fn from_map(map: &DeviceMap) -> FilmSpace {
        let a = map.affine();
        let kx = 25.4 / map.dpi_x;
        let ky = 25.4 / map.dpi_y;
        FilmSpace {
            ax: a.a * kx,
            cx: a.c * kx,
            ay: -a.e * ky,
            cy: (map.height as f64 - a.f) * ky,
            width_mm: map.width as f64 * kx,
            height_mm: map.height as f64 * ky,
        }
    }

    /// Board mm → film mm.
    pub fn apply(&self, p: Point) -> Pt {
        [self.ax * p.x + self.cx, self.ay * p.y + self.cy]
    }

    /// Whether the map reverses orientation (the film is mirrored).
    pub fn reverses(&self) -> bool {
        (self.ax < 0.0) != (self.ay < 0.0)
    }

    /// The film's own rectangle, counter-clockwise.
    pub fn frame(&self) -> Ring {
        rect_ring(0.0, 0.0, self.width_mm, self.height_mm)
    }

    /// A board rectangle in film space, counter-clockwise; `None` when empty or not finite.
    pub fn rect(&self, b: &Bounds) -> Option<Ring> {
        let finite = [b.min_x, b.min_y, b.max_x, b.max_y]
            .iter()
            .all(|v| v.is_finite());
        if b.is_empty() || !finite {
            return None;
        }
        let p = self.apply(Point::new(b.min_x, b.min_y));
        let q = self.apply(Point::new(b.max_x, b.max_y));
        Some(rect_ring(
            p[0].min(q[0]),
            p[1].min(q[1]),
            p[0].max(q[0]),
            p[1].max(q[1]),
        ))
    }
}

/// An axis-aligned rectangle, counter-clockwise.
pub fn rect_ring(x0: f64, y0: f64, x1: f64, y1: f64) -> Ring {
    vec![[x0, y0], [x1, y0], [x1, y1], [x0, y1]]
}

/// Turns board shapes into film-space covers (see the module docs).
#[derive(Debug, Clone, Copy)]
pub struct Flattener {
    pub space: FilmSpace,
    /// Arc tolerance, board mm.
    pub tolerance_mm: f64,
}

/// Number of chords for `sweep` radians on radius `r` so that each chord's sagitta is at
/// most `tol`: `r·(1 − cos(θ/2)) ≤ tol` ⇔ `θ ≤ 2·acos(1 − tol/r)`.
pub fn chords_for(r: f64, sweep: f64, tol: f64) -> usize {
    let sweep = sweep.abs();
    if r.is_nan() || r <= 0.0 || !sweep.is_finite() || sweep == 0.0 {
        return 1;
    }
    let max_step = if tol >= r {
        PI
    } else {
        2.0 * (1.0 - tol / r).acos()
    };
    let n = (sweep / max_step.max(1e-12)).ceil();
    // A full circle needs at least a triangle; an arc at least one chord.
    let min = if sweep >= TAU - 1e-12 { 3.0 } else { 1.0 };
    n.max(min).min(MAX_ARC_CHORDS as f64) as usize
}

impl Flattener {
    /// A flattener for the film of `map` with arc tolerance `tolerance_mm`.
    pub fn new(map: &DeviceMap, tolerance_mm: f64) -> Flattener {
        Flattener {
            space: FilmSpace::from_map(map),
            tolerance_mm,
        }
    }

    /// A flattener whose output is in board millimetres (one unit per mm, y up, no mirror):
    /// for geometry on the drawn shapes rather than on a film.
    pub fn board_mm(tolerance_mm: f64) -> Flattener {
        Flattener::new(
            &DeviceMap::new(Point::new(0.0, 0.0), 0, 0, 25.4, 25.4),
            tolerance_mm,
        )
    }

    /// The grid of the boolean operations for this flattener's tolerance.
    pub fn grid(&self) -> ops::Grid {
        ops::Grid::for_tolerance(self.tolerance_mm)
    }

    fn map(&self, p: Point) -> Pt {
        self.space.apply(p)
    }

    /// Points of a circle about `c` of radius `r`, counter-clockwise in board space.
    fn circle_board(&self, c: Point, r: f64) -> Vec<Point> {
        let n = chords_for(r, TAU, self.tolerance_mm);
        (0..n)
            .map(|k| {
                let a = k as f64 / n as f64 * TAU;
                Point::new(c.x + r * a.cos(), c.y + r * a.sin())
            })
            .collect()
    }

    /// Points along the arc from `start` (excluded) to `end` (included) about `center`,
    /// sweeping `sweep` radians (positive counter-clockwise), on radius `r`.
    fn arc_board(
        &self,
        start: Point,
        end: Point,
        center: Point,
        r: f64,
        sweep: f64,
        out: &mut Vec<Point>,
    ) {
        let n = chords_for(r, sweep, self.tolerance_mm);
        let a0 = (start.y - center.y).atan2(start.x - center.x);
        for k in 1..n {
            let a = a0 + sweep * k as f64 / n as f64;
            out.push(Point::new(center.x + r * a.cos(), center.y + r * a.sin()));
        }
        out.push(end);
    }

    /// Points on the circle about `c` of radius `r` from angle `t0` sweeping `sweep > 0`
    /// counter-clockwise, both ends included. Between the ends the vertices sit at the
    /// circle's fixed angles `k·2π/n` (as in [`Flattener::disc`]), so the caps of tracks
    /// meeting at one point, and the pads under them, share vertices instead of crossing
    /// each other's chords at grazing angles: such near-coincident chords multiply the
    /// intersections an overlay must resolve.
    pub(super) fn locked_arc(&self, c: Point, r: f64, t0: f64, sweep: f64, out: &mut Vec<Point>) {
        let n = chords_for(r, TAU, self.tolerance_mm);
        let step = TAU / n as f64;
        let at = |a: f64| Point::new(c.x + r * a.cos(), c.y + r * a.sin());
        out.push(at(t0));
        let first = (t0 / step).floor() as i64 + 1;
        let end = t0 + sweep;
        let mut k = first;
        // Skip grid angles within a hair of the ends (they would make a degenerate chord).
        let eps = step * 1e-3;
        while (k as f64) * step < end - eps {
            let a = k as f64 * step;
            if a > t0 + eps {
                out.push(at(a));
            }
            k += 1;
        }
        out.push(at(end));
    }

    /// Maps board points to a film-space ring, counter-clockwise in film space.
    pub(super) fn ring(&self, pts: &[Point]) -> Ring {
        let mut r: Ring = pts.iter().map(|p| self.map(*p)).collect();
        if self.space.reverses() {
            r.reverse();
        }
        r
    }

    /// A filled circle.
    pub fn disc(&self, c: Point, r: f64) -> Vec<Ring> {
        if r.is_nan() || r <= 0.0 {
            return Vec::new();
        }
        vec![self.ring(&self.circle_board(c, r))]
    }

    /// Points within `h` of the segment a–b: a capsule (two half circles joined).
    pub fn capsule(&self, a: Point, b: Point, h: f64) -> Vec<Ring> {
        if h.is_nan() || h <= 0.0 {
            return Vec::new();
        }
        let len = a.dist(b);
        if len <= 1e-12 {
            return self.disc(a, h);
        }
        let dir = (b.y - a.y).atan2(b.x - a.x);
        // Each half circle: from dir − 90° to dir + 90° about its end, counter-clockwise.
        let mut pts = Vec::new();
        self.locked_arc(b, h, dir - PI / 2.0, PI, &mut pts);
        self.locked_arc(a, h, dir + PI / 2.0, PI, &mut pts);
        vec![self.ring(&pts)]
    }

    /// Points within `h` of a circular arc (round pen swept along it): for a pen narrower
    /// than the radius, the annular sector between radii r − h and r + h; otherwise the
    /// full sector of radius r + h; plus a disc of radius h at each end.
    pub fn arc_stroke(
        &self,
        start: Point,
        end: Point,
        center: Point,
        turn: Turn,
        h: f64,
    ) -> Vec<Ring> {
        if h.is_nan() || h <= 0.0 {
            return Vec::new();
        }
        let r = center.dist(start);
        if r < 1e-9 {
            return self.capsule(start, end, h);
        }
        let sweep = arc_sweep(start, end, center, turn);
        // Describe it counter-clockwise: a clockwise arc s→e covers what e→s CCW covers.
        let (p0, s) = if sweep >= 0.0 {
            (start, sweep)
        } else {
            (end, -sweep)
        };
        let a0 = (p0.y - center.y).atan2(p0.x - center.x);
        let at = |rad: f64, a: f64| Point::new(center.x + rad * a.cos(), center.y + rad * a.sin());
        let p1 = at(r, a0 + s);
        let mut out = Vec::new();
        let ro = r + h;
        let ri = r - h;
        if s >= TAU - 1e-12 {
            // A full ring: two half annuli (or a disc), so no ring has negative winding.
            if ri <= 0.0 {
                out.push(self.ring(&self.circle_board(center, ro)));
            } else {
                for k in 0..2 {
                    let b0 = a0 + PI * k as f64;
                    out.push(self.ring(&annular_sector(self, center, ri, ro, b0, PI)));
                }
            }
            return out;
        }
        if ri > 0.0 {
            out.push(self.ring(&annular_sector(self, center, ri, ro, a0, s)));
        } else {
            let mut pts = vec![center];
            self.locked_arc(center, ro, a0, s, &mut pts);
            out.push(self.ring(&pts));
        }
        out.extend(self.disc(p0, h));
        out.extend(self.disc(p1, h));
        out
    }

    /// A closed contour (arcs flattened), as given: its orientation and any
    /// self-intersections are resolved by [`Flattener::rings`].
    pub fn contour(&self, c: &Contour) -> Vec<Point> {
        let mut pts = vec![c.start];
        let mut cur = c.start;
        for s in &c.segments {
            match *s {
                Segment::Line { to } => pts.push(to),
                Segment::Arc { to, center, turn } => {
                    let r = center.dist(cur);
                    let sweep = arc_sweep(cur, to, center, turn);
                    self.arc_board(cur, to, center, r, sweep, &mut pts);
                }
            }
            cur = s.end();
        }
        // The closing point repeats the start.
        if pts.len() > 1 && pts.last().is_some_and(|p| p.dist(c.start) <= 1e-12) {
            pts.pop();
        }
        pts
    }

    /// The cover of `shape` (module docs). Non-finite shapes and shapes without area give
    /// nothing.
    pub fn rings(&self, shape: &Shape) -> Vec<Ring> {
        if !shape.is_finite() {
            return Vec::new();
        }
        match shape {
            Shape::Disc { center, diameter } => self.disc(*center, diameter / 2.0),
            Shape::Stroke {
                start,
                end,
                arc,
                width,
            } => match arc {
                None => self.capsule(*start, *end, width / 2.0),
                Some((c, turn)) => self.arc_stroke(*start, *end, *c, *turn, width / 2.0),
            },
            Shape::Polygon(c) => {
                let ring = self.ring(&self.contour(c));
                if ring.len() < 3 {
                    return Vec::new();
                }
                if is_convex_ccw(&ring) {
                    vec![ring]
                } else if is_convex_ccw(&reversed(&ring)) {
                    vec![reversed(&ring)]
                } else {
                    // Self-intersecting or concave: let the overlay resolve the non-zero
                    // winding rule into simple polygons with holes.
                    ops::simplify(&[ring], self.grid())
                        .into_iter()
                        .flatten()
                        .collect()
                }
            }
            Shape::Composite(parts) => {
                // Parts combine in order: add = union, subtract = difference (image.rs).
                let mut acc: Vec<Ring> = Vec::new();
                for (add, part) in parts {
                    let p = self.rings(part);
                    if p.is_empty() {
                        continue;
                    }
                    acc = if *add {
                        acc.extend(p);
                        ops::simplify(&acc, self.grid())
                            .into_iter()
                            .flatten()
                            .collect()
                    } else if acc.is_empty() {
                        acc
                    } else {
                        ops::difference(&acc, &p, self.grid())
                            .into_iter()
                            .flatten()
                            .collect()
                    };
                }
                acc
            }
        }
    }
}

/// The ring of an annular sector between radii `ri` and `ro` from angle `a0` sweeping `s`
/// counter-clockwise, in board points.
fn annular_sector(f: &Flattener, c: Point, ri: f64, ro: f64, a0: f64, s: f64) -> Vec<Point> {
    let mut pts = Vec::new();
    f.locked_arc(c, ro, a0, s, &mut pts);
    let mut inner = Vec::new();
    f.locked_arc(c, ri, a0, s, &mut inner);
    pts.extend(inner.into_iter().rev());
    pts
}

fn reversed(r: &Ring) -> Ring {
    r.iter().rev().copied().collect()
}

/// Whether the ring is a convex polygon traversed counter-clockwise (every turn left or
/// straight, turning once in total); such a ring needs no overlay to be a valid cover.
fn is_convex_ccw(r: &Ring) -> bool {
    let n = r.len();
    if n < 3 {
        return false;
    }
    let mut turning = 0.0;
    for i in 0..n {
        let a = r[i];
        let b = r[(i + 1) % n];
        let c = r[(i + 2) % n];
        let (ux, uy) = (b[0] - a[0], b[1] - a[1]);
        let (vx, vy) = (c[0] - b[0], c[1] - b[1]);
        let cross = ux * vy - uy * vx;
        if cross < 0.0 {
            return false;
        }
        if (ux != 0.0 || uy != 0.0) && (vx != 0.0 || vy != 0.0) {
            turning += cross.atan2(ux * vx + uy * vy);
        }
    }
    (turning - TAU).abs() < 1e-6
}

#[cfg(test)]
mod tests {
    use super::*;

    fn unit_space() -> FilmSpace {
        FilmSpace {
            ax: 1.0,
            cx: 0.0,
            ay: 1.0,
            cy: 0.0,
            width_mm: 100.0,
            height_mm: 100.0,
        }
    }

    #[test]
    fn chord_count_keeps_the_sagitta_within_tolerance() {
        // Sagitta of a chord of angle θ on radius r: r(1 − cos(θ/2)) (elementary geometry).
        for (r, tol) in [(1.0, 0.001), (0.1, 0.0026), (50.0, 0.0026), (0.001, 0.0026)] {
            let n = chords_for(r, TAU, tol);
            let theta = TAU / n as f64;
            assert!(
                r * (1.0 - (theta / 2.0).cos()) <= tol * (1.0 + 1e-9),
                "{r} {tol} {n}"
            );
        }
    }

    #[test]
    fn convexity_test_accepts_squares_and_rejects_stars() {
        let sq = rect_ring(0.0, 0.0, 1.0, 1.0);
        assert!(is_convex_ccw(&sq));
        assert!(!is_convex_ccw(&reversed(&sq)));
        let bow = vec![[0.0, 0.0], [1.0, 1.0], [1.0, 0.0], [0.0, 1.0]];
        assert!(!is_convex_ccw(&bow));
    }

    #[test]
    fn mirrored_space_still_gives_counter_clockwise_rings() {
        let f = Flattener {
            space: FilmSpace {
                ax: -1.0,
                cx: 10.0,
                ..unit_space()
            },
            tolerance_mm: 0.001,
        };
        let r = f.disc(Point::new(2.0, 2.0), 1.0);
        assert!(super::super::ring_area(&r[0]) > 0.0);
    }
}
