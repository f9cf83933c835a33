//! A tiny stroke font for legend text: just the letters the demo board needs.
//!
//! Glyphs live on a 4 × 6 unit grid (x right, y up, baseline at y = 0) and are drawn with the
//! current aperture as polylines and circular arcs; the advance is 5 units.

use super::gerber_writer::GerberWriter;
use crate::image::{Point, Turn};

enum Stroke {
    Poly(&'static [(f64, f64)]),
    /// From `start` to `end` about `center`, clockwise.
    ArcCw {
        start: (f64, f64),
        end: (f64, f64),
        center: (f64, f64),
    },
}

use Stroke::{ArcCw, Poly};

const W: &[Stroke] = &[Poly(&[
    (0.0, 6.0),
    (1.0, 0.0),
    (2.0, 3.0),
    (3.0, 0.0),
    (4.0, 6.0),
])];
const R: &[Stroke] = &[
    Poly(&[(0.0, 0.0), (0.0, 6.0), (2.5, 6.0)]),
    ArcCw {
        start: (2.5, 6.0),
        end: (2.5, 3.0),
        center: (2.5, 4.5),
    },
    Poly(&[(2.5, 3.0), (0.0, 3.0)]),
    Poly(&[(2.0, 3.0), (4.0, 0.0)]),
];
const E: &[Stroke] = &[
    Poly(&[(4.0, 6.0), (0.0, 6.0), (0.0, 0.0), (4.0, 0.0)]),
    Poly(&[(0.0, 3.0), (3.0, 3.0)]),
];
const N: &[Stroke] = &[Poly(&[(0.0, 0.0), (0.0, 6.0), (4.0, 0.0), (4.0, 6.0)])];
const B: &[Stroke] = &[
    Poly(&[(2.5, 3.0), (0.0, 3.0), (0.0, 6.0), (2.5, 6.0)]),
    ArcCw {
        start: (2.5, 6.0),
        end: (2.5, 3.0),
        center: (2.5, 4.5),
    },
    ArcCw {
        start: (2.5, 3.0),
        end: (2.5, 0.0),
        center: (2.5, 1.5),
    },
    Poly(&[(2.5, 0.0), (0.0, 0.0), (0.0, 3.0)]),
];

/// Units from one glyph's origin to the next.
pub const ADVANCE: f64 = 5.0;

fn glyph(c: char) -> Option<&'static [Stroke]> {
    match c.to_ascii_uppercase() {
        'W' => Some(W),
        'R' => Some(R),
        'E' => Some(E),
        'N' => Some(N),
        'B' => Some(B),
        _ => None,
    }
}

/// Whether the font can draw `c` (a space always can).
pub fn has_glyph(c: char) -> bool {
    c == ' ' || glyph(c).is_some()
}

/// Draws `text` with its baseline starting at `origin`, one unit = `scale` mm, using the
/// writer's current aperture. Characters without a glyph are skipped (left blank).
pub fn draw_text(w: &mut GerberWriter, text: &str, origin: Point, scale: f64) {
    for (i, c) in text.chars().enumerate() {
        let Some(strokes) = glyph(c) else { continue };
        let ox = origin.x + i as f64 * ADVANCE * scale;
        let at = |(x, y): (f64, f64)| Point::new(ox + x * scale, origin.y + y * scale);
        for s in strokes {
            match s {
                Poly(points) => {
                    let pts: Vec<Point> = points.iter().map(|&q| at(q)).collect();
                    w.polyline(&pts);
                }
                ArcCw { start, end, center } => {
                    w.move_to(at(*start));
                    w.arc_to(at(*end), at(*center), Turn::Clockwise);
                }
            }
        }
    }
}
