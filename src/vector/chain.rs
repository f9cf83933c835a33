//! Chains of straight strokes drawn end to end with the same round pen, joined into one
//! outline.
//!
//! A track is usually drawn as several straight strokes in a row, each starting where the
//! previous one ended (Gerber spec rev 2024.05, 4.7: D01 plots from the current point).
//! Flattened one by one, every stroke is a capsule, and at each joint two caps lie on the
//! same circle: the union then has to resolve many overlapping, nearly coincident chords.
//! A chain of such strokes is composed instead as one ring, built directly without any
//! boolean operation:
//!
//! * the start cap (half circle about the first point),
//! * along the right-hand side: at each joint either the arc of the pen's circle on the
//!   outer side of the turn, or, on the inner side, the offset point, the joint itself and
//!   the next offset point,
//! * the end cap, then the left-hand side back in the same way.
//!
//! As a chain of edges this ring is the sum of positively oriented pieces: one rectangle
//! per stroke (its pen-wide band, ending across its end points), one pie slice per joint
//! (the outer wedge of the pen's circle between the two strokes' normals) and the two end
//! half discs. Its winding number is therefore the number of pieces covering a point:
//! never negative, and positive exactly on their union, so it is a valid cover (see
//! [`super::flatten`]) even where the track turns back over itself.
//!
//! That union is the union of the capsules: a capsule is its rectangle plus the pen's disc
//! at both ends, and the disc at a joint is covered by the half of the previous stroke's
//! band behind the joint, the half of the next stroke's band ahead of it, and the outer
//! wedge between them — provided both strokes are at least the pen's radius long. Where a
//! stroke is shorter, the pen's disc at its ends is added as a separate ring.
//!
//! Arc vertices sit at the circle's fixed angles (`Flattener::locked_arc`), exactly like
//! the capsules' and discs', so every flattened chain lies inside the true one by at most
//! the arc tolerance.
//!
//! Only strokes that follow each other directly in the layer image are joined: any object
//! between them could cut the earlier stroke and not the later one (objects paint in
//! order), so a chain never spans one.

use super::flatten::Flattener;
use super::Ring;
use crate::image::{Object, Point, Shape};
use std::f64::consts::{FRAC_PI_2, PI};
use std::ops::Range;

/// Most strokes joined into one chain: a longer track is split, so that one piece's box
/// (which decides which Clear objects cut it and which leaf of the union it joins) stays
/// local.
pub const MAX_CHAIN_STROKES: usize = 64;

/// A straight stroke's end points and width, when `o` is one that can join a chain.
fn straight(o: &Object) -> Option<(Point, Point, f64)> {
    match o.shape {
        Shape::Stroke {
            start,
            end,
            arc: None,
            width,
        } if o.shape.is_finite() && width > 0.0 && start != end => Some((start, end, width)),
        _ => None,
    }
}

/// The objects of a layer image grouped in order: every range holds either one object, or
/// a chain of straight strokes of the same polarity and the same width where each starts
/// exactly where the previous one ended (at most [`MAX_CHAIN_STROKES`]). The ranges cover
/// all objects, in order.
pub fn runs(objects: &[Object]) -> Vec<Range<usize>> {
    let mut out: Vec<Range<usize>> = Vec::new();
    for (i, o) in objects.iter().enumerate() {
        let joins = match out.last() {
            Some(last) if last.end == i && last.len() < MAX_CHAIN_STROKES => {
                let prev = &objects[i - 1];
                match (straight(prev), straight(o)) {
                    (Some((_, prev_end, w0)), Some((start, _, w1))) => {
                        prev.polarity == o.polarity && w0 == w1 && prev_end == start
                    }
                    _ => false,
                }
            }
            _ => false,
        };
        match out.last_mut() {
            Some(last) if joins => last.end = i + 1,
            _ => out.push(i..i + 1),
        }
    }
    out
}

impl Flattener {
    /// The cover of a chain of straight strokes (a range of [`runs`]): one ring for the
    /// whole chain (module docs), plus the pen's disc at the ends of strokes shorter than
    /// the pen's radius. Objects that are not straight strokes are ignored.
    pub fn chain(&self, objects: &[Object]) -> Vec<Ring> {
        let strokes: Vec<(Point, Point, f64)> = objects.iter().filter_map(straight).collect();
        let Some(&(first, _, width)) = strokes.first() else {
            return Vec::new();
        };
        let mut pts = vec![first];
        pts.extend(strokes.iter().map(|s| s.1));
        self.polyline_outline(&pts, width / 2.0)
    }

    /// The cover of the points within `h` of the polyline `pts` (consecutive points
    /// distinct), as described in the module docs.
    pub fn polyline_outline(&self, pts: &[Point], h: f64) -> Vec<Ring> {
        if pts.len() < 2 || h.is_nan() || h <= 0.0 {
            return Vec::new();
        }
        if pts.len() == 2 {
            return self.capsule(pts[0], pts[1], h);
        }
        let m = pts.len() - 1;
        // Direction angle and unit vector of every stroke.
        let dirs: Vec<(f64, f64, f64)> = pts
            .windows(2)
            .map(|w| {
                let (dx, dy) = (w[1].x - w[0].x, w[1].y - w[0].y);
                let len = dx.hypot(dy);
                (dy.atan2(dx), dx / len, dy / len)
            })
            .collect();
        // The turn at joint k (between strokes k − 1 and k), in (−π, π]: positive to the left.
        let turn = |k: usize| {
            let (_, ux, uy) = dirs[k - 1];
            let (_, vx, vy) = dirs[k];
            (ux * vy - uy * vx).atan2(ux * vx + uy * vy)
        };
        let at = |c: Point, a: f64| Point::new(c.x + h * a.cos(), c.y + h * a.sin());
        // Turns smaller than this are straight on: the offset points coincide to ~1e-12 h.
        const STRAIGHT: f64 = 1e-12;

        let mut ring: Vec<Point> = Vec::new();
        // Start cap: from the left-hand side round to the right-hand side.
        self.locked_arc(pts[0], h, dirs[0].0 + FRAC_PI_2, PI, &mut ring);
        // Right-hand side, forward.
        for k in 1..m {
            let (p, a_prev, a_next, t) = (pts[k], dirs[k - 1].0, dirs[k].0, turn(k));
            if t.abs() < STRAIGHT {
                ring.push(at(p, a_prev - FRAC_PI_2));
            } else if t > 0.0 {
                // A left turn: the right-hand side is outside, round it with the pen.
                self.locked_arc(p, h, a_prev - FRAC_PI_2, t, &mut ring);
            } else {
                ring.extend([at(p, a_prev - FRAC_PI_2), p, at(p, a_next - FRAC_PI_2)]);
            }
        }
        // End cap: from the right-hand side round to the left-hand side.
        self.locked_arc(pts[m], h, dirs[m - 1].0 - FRAC_PI_2, PI, &mut ring);
        // Left-hand side, backward.
        for k in (1..m).rev() {
            let (p, a_prev, a_next, t) = (pts[k], dirs[k - 1].0, dirs[k].0, turn(k));
            if t.abs() < STRAIGHT {
                ring.push(at(p, a_next + FRAC_PI_2));
            } else if t < 0.0 {
                // A right turn: the left-hand side is outside.
                self.locked_arc(p, h, a_next + FRAC_PI_2, -t, &mut ring);
            } else {
                ring.extend([at(p, a_next + FRAC_PI_2), p, at(p, a_prev + FRAC_PI_2)]);
            }
        }
        // The start cap's first point closes the ring; drop a repeat of it.
        if ring.len() > 1 && ring.last() == ring.first() {
            ring.pop();
        }
        let mut out = vec![self.ring(&ring)];
        // The pen's disc at the ends of strokes shorter than its radius (module docs).
        let mut short_end = vec![false; pts.len()];
        for (k, w) in pts.windows(2).enumerate() {
            if w[0].dist(w[1]) < h {
                short_end[k] = true;
                short_end[k + 1] = true;
            }
        }
        for (k, p) in pts.iter().enumerate() {
            if short_end[k] {
                out.extend(self.disc(*p, h));
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::image::Polarity;

    fn stroke(a: (f64, f64), b: (f64, f64), w: f64, polarity: Polarity) -> Object {
        Object {
            polarity,
            shape: Shape::Stroke {
                start: Point::new(a.0, a.1),
                end: Point::new(b.0, b.1),
                arc: None,
                width: w,
            },
        }
    }

    #[test]
    fn runs_join_only_consecutive_matching_strokes() {
        let d = Polarity::Dark;
        let objects = vec![
            stroke((0.0, 0.0), (1.0, 0.0), 0.2, d),
            stroke((1.0, 0.0), (1.0, 1.0), 0.2, d),
            // Another width: a new run.
            stroke((1.0, 1.0), (2.0, 1.0), 0.3, d),
            // Does not start where the previous ended.
            stroke((2.0, 1.5), (3.0, 1.0), 0.3, d),
            stroke((3.0, 1.0), (3.0, 2.0), 0.3, Polarity::Clear),
        ];
        assert_eq!(runs(&objects), vec![0..2, 2..3, 3..4, 4..5]);
    }

    #[test]
    fn long_tracks_are_split() {
        let objects: Vec<Object> = (0..MAX_CHAIN_STROKES + 3)
            .map(|i| stroke((i as f64, 0.0), (i as f64 + 1.0, 0.0), 0.2, Polarity::Dark))
            .collect();
        assert_eq!(
            runs(&objects),
            vec![
                0..MAX_CHAIN_STROKES,
                MAX_CHAIN_STROKES..MAX_CHAIN_STROKES + 3
            ]
        );
    }
}
