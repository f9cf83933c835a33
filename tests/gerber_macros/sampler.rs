//! An area oracle for shapes, independent of the code under test: a point-in-shape test
//! (arcs flattened finely, non-zero winding, composites folded in order) and jittered
//! sampling over the shape's bounds.

use std::f64::consts::PI;
use umbra::image::{Point, Segment, Shape, Turn};

/// A shape prepared for point tests: arcs flattened into 512 chords per full turn (area
/// error about (2π/512)²/6 ≈ 2.5e-5, relative).
enum Test {
    Disc(Point, f64),
    Ring(Point, f64, f64),
    /// Vertices and their bounding box (min x, min y, max x, max y).
    Poly(Vec<Point>, [f64; 4]),
    Union(Vec<(bool, Test)>),
}

fn prepare(s: &Shape) -> Test {
    match s {
        Shape::Disc { center, diameter } => Test::Disc(*center, diameter / 2.0),
        Shape::Stroke {
            start,
            end,
            arc: Some((c, _)),
            width,
        } if start == end => Test::Ring(*c, c.dist(*start), width / 2.0),
        Shape::Stroke { .. } => panic!("macros make no open strokes: {s:?}"),
        Shape::Polygon(c) => {
            let mut pts = vec![c.start];
            let mut cur = c.start;
            for seg in &c.segments {
                match *seg {
                    Segment::Line { to } => pts.push(to),
                    Segment::Arc { to, center, turn } => {
                        let r = center.dist(cur);
                        let a0 = (cur.y - center.y).atan2(cur.x - center.x);
                        let a1 = (to.y - center.y).atan2(to.x - center.x);
                        let mut sweep = match turn {
                            Turn::CounterClockwise => (a1 - a0).rem_euclid(2.0 * PI),
                            Turn::Clockwise => -(a0 - a1).rem_euclid(2.0 * PI),
                        };
                        if cur.dist(to) < 1e-12 {
                            sweep = if turn == Turn::Clockwise {
                                -2.0 * PI
                            } else {
                                2.0 * PI
                            };
                        }
                        let n = ((sweep.abs() / (2.0 * PI) * 512.0).ceil() as usize).max(1);
                        for k in 1..=n {
                            let a = a0 + sweep * k as f64 / n as f64;
                            pts.push(Point::new(center.x + r * a.cos(), center.y + r * a.sin()));
                        }
                    }
                }
                cur = seg.end();
            }
            let bbox = pts
                .iter()
                .fold([f64::MAX, f64::MAX, f64::MIN, f64::MIN], |b, p| {
                    [b[0].min(p.x), b[1].min(p.y), b[2].max(p.x), b[3].max(p.y)]
                });
            Test::Poly(pts, bbox)
        }
        Shape::Composite(parts) => {
            Test::Union(parts.iter().map(|(a, p)| (*a, prepare(p))).collect())
        }
    }
}

/// Non-zero winding number test.
fn winding(pts: &[Point], p: Point) -> i32 {
    let mut w = 0;
    for i in 0..pts.len() {
        let (a, b) = (pts[i], pts[(i + 1) % pts.len()]);
        let cross = (b.x - a.x) * (p.y - a.y) - (p.x - a.x) * (b.y - a.y);
        if a.y <= p.y && b.y > p.y && cross > 0.0 {
            w += 1;
        } else if a.y > p.y && b.y <= p.y && cross < 0.0 {
            w -= 1;
        }
    }
    w
}

fn inside(t: &Test, p: Point) -> bool {
    match t {
        Test::Disc(c, r) => c.dist(p) <= *r,
        Test::Ring(c, r, hw) => (c.dist(p) - r).abs() <= *hw,
        Test::Poly(pts, b) => {
            p.x >= b[0] && p.y >= b[1] && p.x <= b[2] && p.y <= b[3] && winding(pts, p) != 0
        }
        Test::Union(parts) => parts.iter().fold(false, |acc, (add, part)| {
            if *add {
                acc || inside(part, p)
            } else {
                acc && !inside(part, p)
            }
        }),
    }
}

/// Area by jittered sampling: one point at a pseudo-random place in each cell of an n × n
/// grid over the shape's bounds. Unbiased (each cell counts with the probability that it
/// is covered), so thin bars are measured without grid-alignment bias.
pub fn sampled_area(s: &Shape, n: usize) -> f64 {
    let b = s.bounds().grown(1e-6);
    let t = prepare(s);
    let (dx, dy) = (b.width() / n as f64, b.height() / n as f64);
    let mut seed: u64 = 0x9E37_79B9_7F4A_7C15;
    let mut unit = move || {
        // xorshift64 (Marsaglia), mapped to [0, 1).
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        (seed >> 11) as f64 / (1u64 << 53) as f64
    };
    let mut count = 0usize;
    for j in 0..n {
        for i in 0..n {
            let p = Point::new(
                b.min_x + (i as f64 + unit()) * dx,
                b.min_y + (j as f64 + unit()) * dy,
            );
            count += inside(&t, p) as usize;
        }
    }
    count as f64 * dx * dy
}
