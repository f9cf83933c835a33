//! umbra's own single-stroke font, for labels and marks drawn onto films.
//!
//! Every glyph is a few polylines drawn with a round pen, designed by the project on a grid
//! of font units: baseline at y = 0, capitals and digits 8 units tall, lower case 5 units
//! (x-height), descenders down to −2.5 units. Curves are elliptical arcs flattened into
//! chords of at most 10° each, which at the largest label sizes (10 mm capitals) leaves a chord
//! error under 0.02 mm — far below a printer dot.
//!
//! Look-alike characters are told apart on purpose, since labels carry numbers and names
//! that must not be misread on a film: the zero is slashed (0 vs O), the capital I has bars
//! (I vs l vs 1), the lower-case l ends in a foot and the one has a flag.
//!
//! A character without a glyph is drawn as a crossed box, so a missing glyph is visible rather
//! than silently dropped.
//!
//! # Guarantees
//! - Every stroke lies within x ∈ [0, advance) and y ∈ [−2.5, 8] font units before the pen
//!   width is added (tested for every glyph).
//! - [`text_width_mm`] is additive: the width of `a + b` is the width of `a` plus the width of
//!   `b`, because each glyph only moves the pen by its own advance.
//! - Bad sizes (non-finite, zero or negative) give no shapes and zero width, never a panic.

use crate::image::{Point, Shape, Similarity};
use std::collections::HashMap;
use std::sync::OnceLock;

/// Height of capitals and digits, in font units.
pub const CAP_HEIGHT_UNITS: f64 = 8.0;
/// Height of lower-case letters without ascender, in font units.
pub const X_HEIGHT_UNITS: f64 = 5.0;
/// How far descenders (g, j, p, q, y, brackets) reach below the baseline, in font units.
pub const DESCENDER_UNITS: f64 = 2.5;
/// Arcs are flattened into chords spanning at most this angle.
const ARC_STEP_DEG: f64 = 10.0;

/// The glyph drawn for characters the font does not have: a crossed box.
const MISSING_GLYPH: (f64, &str) = (6.0, "M 0 0 L 4 0 L 4 8 L 0 8 L 0 0 L 4 8");

/// The glyph table: character, advance (pen movement after the glyph, font units), outline.
///
/// Outline language (font units, y up): `M x y` starts a new polyline, `L x y` draws a line
/// to the point, `A cx cy rx ry a0 a1` draws an elliptical arc about (cx, cy) from angle `a0`
/// to `a1` in degrees (counter-clockwise when a1 > a0, clockwise otherwise), joined to the
/// current polyline by a line if it does not start where the polyline ends. Dots are short
/// strokes (0.3 units) so every piece of a glyph is a stroke of non-zero length.
const GLYPHS: &[(char, f64, &str)] = &[
    (' ', 4.0, ""),
    // Capitals.
    ('A', 7.0, "M 0 0 L 2.5 8 L 5 0 M 0.9 2.8 L 4.1 2.8"),
    ('B', 7.5, "M 0 4.4 L 0 8 L 3 8 A 3 6.2 1.8 1.8 90 -90 L 0 4.4 L 0 0 L 3.2 0 A 3.2 2.2 2.2 2.2 -90 90 L 3 4.4"),
    ('C', 7.5, "A 3 4 3 4 45 315"),
    ('D', 7.0, "M 0 0 L 0 8 L 2 8 A 2 4 3 4 90 -90 L 0 0"),
    ('E', 6.5, "M 4.5 8 L 0 8 L 0 0 L 4.5 0 M 0 4.2 L 3.5 4.2"),
    ('F', 6.5, "M 4.5 8 L 0 8 L 0 0 M 0 4.2 L 3.5 4.2"),
    ('G', 8.0, "A 3 4 3 4 45 360 L 3.5 4"),
    ('H', 7.0, "M 0 0 L 0 8 M 5 0 L 5 8 M 0 4.2 L 5 4.2"),
    ('I', 5.0, "M 0 8 L 3 8 M 1.5 8 L 1.5 0 M 0 0 L 3 0"),
    ('J', 6.0, "M 4 8 L 4 2 A 2 2 2 2 0 -180"),
    ('K', 6.5, "M 0 0 L 0 8 M 4.8 8 L 0 3.2 M 1.7 4.9 L 5 0"),
    ('L', 6.0, "M 0 8 L 0 0 L 4.5 0"),
    ('M', 8.0, "M 0 0 L 0 8 L 3 2.5 L 6 8 L 6 0"),
    ('N', 7.0, "M 0 0 L 0 8 L 5 0 L 5 8"),
    ('O', 8.0, "A 3 4 3 4 0 360"),
    ('P', 7.0, "M 0 0 L 0 8 L 2.9 8 A 2.9 5.9 2.1 2.1 90 -90 L 0 3.8"),
    ('Q', 8.0, "A 3 4 3 4 0 360 M 3.7 1.9 L 6 -0.6"),
    ('R', 7.0, "M 0 0 L 0 8 L 2.9 8 A 2.9 5.9 2.1 2.1 90 -90 L 0 3.8 M 2.6 3.8 L 5 0"),
    ('S', 7.0, "A 2.5 6 2.3 2 25 270 A 2.5 2 2.5 2 90 -155"),
    ('T', 7.0, "M 0 8 L 5 8 M 2.5 8 L 2.5 0"),
    ('U', 7.0, "M 0 8 L 0 2.5 A 2.5 2.5 2.5 2.5 180 360 L 5 8"),
    ('V', 7.0, "M 0 8 L 2.5 0 L 5 8"),
    ('W', 9.0, "M 0 8 L 1.7 0 L 3.5 6 L 5.3 0 L 7 8"),
    ('X', 7.0, "M 0 8 L 5 0 M 0 0 L 5 8"),
    ('Y', 7.0, "M 0 8 L 2.5 4 L 5 8 M 2.5 4 L 2.5 0"),
    ('Z', 7.0, "M 0 8 L 5 8 L 0 0 L 5 0"),
    // Lower case.
    ('a', 6.0, "A 2 2.5 2 2.5 0 360 M 4 5 L 4 0"),
    ('b', 6.0, "M 0 8 L 0 0 M 0 2.5 A 2 2.5 2 2.5 180 540"),
    ('c', 5.5, "A 2.2 2.5 2.2 2.5 45 315"),
    ('d', 6.0, "A 2 2.5 2 2.5 0 360 M 4 8 L 4 0"),
    ('e', 6.0, "M 0 2.5 L 4 2.5 A 2 2.5 2 2.5 0 315"),
    ('f', 5.0, "M 1.2 0 L 1.2 6.6 A 2.6 6.6 1.4 1.4 180 50 M 0 5 L 3 5"),
    ('g', 6.0, "A 2 2.5 2 2.5 0 360 M 4 5 L 4 -0.5 A 2 -0.5 2 1.8 0 -160"),
    ('h', 6.0, "M 0 8 L 0 0 M 0 3 A 2 3 2 2 180 0 L 4 0"),
    ('i', 2.5, "M 0.3 5 L 0.3 0 M 0.3 6.7 L 0.3 7"),
    ('j', 4.0, "M 2 5 L 2 -1 A 1 -1 1 1.4 0 -160 M 2 6.7 L 2 7"),
    ('k', 5.5, "M 0 8 L 0 0 M 3.5 5 L 0 1.8 M 1.3 3 L 3.8 0"),
    ('l', 3.5, "M 0 8 L 0 1 A 1 1 1 1 180 270"),
    ('m', 8.5, "M 0 5 L 0 0 M 0 3.2 A 1.6 3.2 1.6 1.8 180 0 L 3.2 0 M 3.2 3.2 A 4.8 3.2 1.6 1.8 180 0 L 6.4 0"),
    ('n', 6.0, "M 0 5 L 0 0 M 0 3 A 2 3 2 2 180 0 L 4 0"),
    ('o', 6.0, "A 2 2.5 2 2.5 0 360"),
    ('p', 6.0, "M 0 5 L 0 -2.5 M 0 2.5 A 2 2.5 2 2.5 180 540"),
    ('q', 6.0, "A 2 2.5 2 2.5 0 360 M 4 5 L 4 -2.5"),
    ('r', 5.0, "M 0 5 L 0 0 M 0 2.8 A 2.2 2.8 2.2 2.2 180 65"),
    ('s', 5.5, "A 2 3.75 1.8 1.25 25 270 A 2 1.25 2 1.25 90 -155"),
    ('t', 4.5, "M 1.2 7 L 1.2 1 A 2.2 1 1 1 180 300 M 0 5 L 3 5"),
    ('u', 6.0, "M 0 5 L 0 2 A 2 2 2 2 180 360 M 4 5 L 4 0"),
    ('v', 6.0, "M 0 5 L 2 0 L 4 5"),
    ('w', 8.0, "M 0 5 L 1.4 0 L 3 4 L 4.6 0 L 6 5"),
    ('x', 6.0, "M 0 5 L 4 0 M 0 0 L 4 5"),
    ('y', 6.0, "M 0 5 L 2.1 0.25 M 4 5 L 1 -2.5 L 0.2 -2.5"),
    ('z', 6.0, "M 0 5 L 4 5 L 0 0 L 4 0"),
    // Digits: all the same advance so columns of numbers line up.
    ('0', 7.0, "A 2.5 4 2.5 4 0 360 M 0.9 1.3 L 4.1 6.7"),
    ('1', 7.0, "M 0.9 6.4 L 2.5 8 L 2.5 0 M 0.8 0 L 4.2 0"),
    ('2', 7.0, "A 2.5 5.6 2.4 2.4 160 -40 L 0 0 L 5 0"),
    ('3', 7.0, "A 2.5 6.1 2.1 1.9 150 -90 A 2.5 2.1 2.5 2.1 90 -155 M 1.4 4.2 L 2.5 4.2"),
    ('4', 7.0, "M 3.8 0 L 3.8 8 L 0 2.2 L 5 2.2"),
    ('5', 7.0, "M 4.6 8 L 0.8 8 L 0.7 4.6 A 2.4 2.6 2.6 2.6 130 -150"),
    ('6', 7.0, "A 2.5 4 2.5 4 60 180 L 0 2.5 A 2.5 2.5 2.5 2.5 180 540"),
    ('7', 7.0, "M 0 8 L 5 8 L 1.8 0"),
    ('8', 7.0, "A 2.5 6 2.1 2 270 630 A 2.5 2 2.5 2 90 450"),
    ('9', 7.0, "A 2.5 4 2.5 4 240 360 L 5 5.5 A 2.5 5.5 2.5 2.5 0 360"),
    // Punctuation and signs used in labels.
    ('.', 2.5, "M 0.5 0.2 L 0.5 0.5"),
    (',', 2.5, "M 0.7 0.5 L 0.7 0.2 L 0.1 -1.3"),
    (':', 2.5, "M 0.5 0.2 L 0.5 0.5 M 0.5 4.5 L 0.5 4.8"),
    (';', 2.5, "M 0.7 0.5 L 0.7 0.2 L 0.1 -1.3 M 0.7 4.5 L 0.7 4.8"),
    ('-', 5.0, "M 0 3.5 L 3 3.5"),
    ('+', 6.0, "M 0 3.5 L 4 3.5 M 2 1.5 L 2 5.5"),
    ('_', 6.5, "M 0 -1 L 4.5 -1"),
    ('/', 6.0, "M 0 0 L 4 8"),
    ('\\', 6.0, "M 0 8 L 4 0"),
    ('(', 3.8, "A 3.5 3.25 3.5 5.48 120 240"),
    (')', 3.8, "A -1.75 3.25 3.5 5.48 60 -60"),
    ('[', 4.0, "M 2 8 L 0 8 L 0 -1.5 L 2 -1.5"),
    (']', 4.0, "M 0 8 L 2 8 L 2 -1.5 L 0 -1.5"),
    ('#', 7.5, "M 1.4 0.5 L 2.4 7.5 M 3.6 0.5 L 4.6 7.5 M 0.5 5.2 L 5.5 5.2 M 0 2.8 L 5 2.8"),
    ('%', 7.0, "M 0 0 L 5 8 M 2.2 6.6 A 1.1 6.6 1.1 1.4 0 360 M 5 1.4 A 3.9 1.4 1.1 1.4 0 360"),
    ('°', 4.0, "M 2.4 6.8 A 1.2 6.8 1.2 1.2 0 360"),
    ('µ', 6.0, "M 0 -2.5 L 0 5 M 0 2 A 2 2 2 2 180 360 M 4 5 L 4 0"),
    ('×', 6.0, "M 0.6 1.9 L 3.8 5.1 M 0.6 5.1 L 3.8 1.9"),
    ('=', 6.0, "M 0 2.4 L 4 2.4 M 0 4.6 L 4 4.6"),
    ('\'', 2.5, "M 0.5 8 L 0.5 5.8"),
    ('"', 4.0, "M 0.3 8 L 0.3 5.8 M 1.9 8 L 1.9 5.8"),
    ('!', 2.5, "M 0.5 8 L 0.5 2.4 M 0.5 0.2 L 0.5 0.5"),
    ('?', 6.5, "A 2.2 5.8 2.2 2.2 160 -90 L 2.2 2.4 M 2.2 0.2 L 2.2 0.5"),
    ('<', 6.0, "M 4 6 L 0 3.5 L 4 1"),
    ('>', 6.0, "M 0 6 L 4 3.5 L 0 1"),
    ('&', 7.5, "M 5.2 0 L 1.1 5.2 A 2 6.4 1.4 1.6 229.4 -40 L 0.47 2.7 A 2.2 1.8 2 1.8 150 330 L 5 3.5"),
    ('*', 6.0, "M 2 7.5 L 2 3.5 M 0.27 6.5 L 3.73 4.5 M 0.27 4.5 L 3.73 6.5"),
    ('|', 2.5, "M 0.5 8 L 0.5 -1.5"),
];

/// One glyph in font units.
#[derive(Debug, Clone, PartialEq)]
pub struct Glyph {
    /// How far the pen moves after this glyph.
    pub advance: f64,
    /// Polylines drawn with the round pen.
    pub strokes: Vec<Vec<Point>>,
}

struct Font {
    glyphs: HashMap<char, Glyph>,
    missing: Glyph,
}

fn font() -> &'static Font {
    static FONT: OnceLock<Font> = OnceLock::new();
    FONT.get_or_init(|| {
        let missing = Glyph {
            advance: MISSING_GLYPH.0,
            strokes: parse_outline(MISSING_GLYPH.1).unwrap_or_default(),
        };
        let glyphs = GLYPHS
            .iter()
            .map(|&(c, advance, outline)| {
                // The table is ours and checked by a unit test; a bad entry falls back to the
                // missing-glyph box rather than failing at run time.
                let glyph = match parse_outline(outline) {
                    Ok(strokes) => Glyph { advance, strokes },
                    Err(_) => missing.clone(),
                };
                (c, glyph)
            })
            .collect();
        Font { glyphs, missing }
    })
}

/// Characters that are drawn with another character's glyph.
fn canonical(c: char) -> char {
    match c {
        '\u{03BC}' => '\u{00B5}', // Greek small mu → micro sign
        '\u{00BA}' => '\u{00B0}', // masculine ordinal → degree sign
        '\u{2212}' | '\u{2010}' | '\u{2011}' | '\u{2013}' => '-', // minus, hyphens, en dash
        '\t' => ' ',
        other => other,
    }
}

/// Whether the font has a glyph of its own for `c` (otherwise the crossed box is drawn).
pub fn has_glyph(c: char) -> bool {
    font().glyphs.contains_key(&canonical(c))
}

/// The glyph drawn for `c`, in font units (the crossed box for unknown characters).
pub fn glyph(c: char) -> &'static Glyph {
    let f = font();
    f.glyphs.get(&canonical(c)).unwrap_or(&f.missing)
}

/// Millimetres per font unit for a cap height, or `None` for an unusable size.
fn mm_per_unit(cap_height_mm: f64) -> Option<f64> {
    (cap_height_mm.is_finite() && cap_height_mm > 0.0).then(|| cap_height_mm / CAP_HEIGHT_UNITS)
}

/// The advance width of `text` in millimetres at the given cap height: how far the pen moves
/// from the first glyph's origin to the point after the last glyph.
pub fn text_width_mm(text: &str, cap_height_mm: f64) -> f64 {
    match mm_per_unit(cap_height_mm) {
        Some(s) => text.chars().map(|c| glyph(c).advance).sum::<f64>() * s,
        None => 0.0,
    }
}

/// `text` as round-pen strokes in board millimetres.
///
/// `origin` is where the baseline of the first glyph starts. The text runs along +x from
/// there, then is turned counter-clockwise by `rotation_deg` about `origin`. With `mirrored`
/// the text is flipped left-right about the line through `origin` perpendicular to its
/// baseline (before turning), so it runs towards −x with mirror-image glyphs: it reads
/// correctly when the sheet is seen from its other side.
///
/// Stroke width is `stroke_mm`; a sensible value is 0.12 to 0.15 of the cap height.
pub fn text_shapes(
    text: &str,
    origin: Point,
    cap_height_mm: f64,
    stroke_mm: f64,
    mirrored: bool,
    rotation_deg: f64,
) -> Vec<Shape> {
    let Some(scale) = mm_per_unit(cap_height_mm) else {
        return Vec::new();
    };
    let finite = origin.x.is_finite() && origin.y.is_finite() && rotation_deg.is_finite();
    if !finite || !stroke_mm.is_finite() || stroke_mm <= 0.0 {
        return Vec::new();
    }
    let to_board = Similarity {
        mirror_x: mirrored,
        mirror_y: false,
        rotation_deg,
        scale,
        offset: origin,
    };
    let mut shapes = Vec::new();
    let mut pen_x = 0.0;
    for c in text.chars() {
        let g = glyph(c);
        for line in &g.strokes {
            for pair in line.windows(2) {
                let a = to_board.apply(Point::new(pen_x + pair[0].x, pair[0].y));
                let b = to_board.apply(Point::new(pen_x + pair[1].x, pair[1].y));
                shapes.push(Shape::Stroke {
                    start: a,
                    end: b,
                    arc: None,
                    width: stroke_mm,
                });
            }
        }
        pen_x += g.advance;
    }
    shapes
}

/// Parses the outline language described at [`GLYPHS`].
fn parse_outline(outline: &str) -> Result<Vec<Vec<Point>>, String> {
    let tokens: Vec<&str> = outline.split_whitespace().collect();
    let mut lines: Vec<Vec<Point>> = Vec::new();
    let mut i = 0;
    let number = |i: usize| -> Result<f64, String> {
        let t = tokens
            .get(i)
            .ok_or_else(|| format!("outline ends early: {outline}"))?;
        t.parse::<f64>()
            .map_err(|_| format!("not a number: {t} in {outline}"))
    };
    while i < tokens.len() {
        match tokens[i] {
            "M" => {
                lines.push(vec![Point::new(number(i + 1)?, number(i + 2)?)]);
                i += 3;
            }
            "L" => {
                let p = Point::new(number(i + 1)?, number(i + 2)?);
                match lines.last_mut() {
                    Some(line) => line.push(p),
                    None => return Err(format!("L before M in {outline}")),
                }
                i += 3;
            }
            "A" => {
                let (cx, cy) = (number(i + 1)?, number(i + 2)?);
                let (rx, ry) = (number(i + 3)?, number(i + 4)?);
                let (a0, a1) = (number(i + 5)?, number(i + 6)?);
                let steps = ((a1 - a0).abs() / ARC_STEP_DEG).ceil().max(1.0) as usize;
                let arc = (0..=steps).map(|k| {
                    let a = (a0 + (a1 - a0) * k as f64 / steps as f64).to_radians();
                    Point::new(cx + rx * a.cos(), cy + ry * a.sin())
                });
                match lines.last_mut() {
                    Some(line) => {
                        for p in arc {
                            if line.last().is_some_and(|q| q.dist(p) < 1e-6) {
                                continue;
                            }
                            line.push(p);
                        }
                    }
                    None => lines.push(arc.collect()),
                }
                i += 7;
            }
            other => return Err(format!("unknown outline command {other} in {outline}")),
        }
    }
    Ok(lines)
}

/// The characters the font promises (the label alphabet), for tests and documentation.
pub const LABEL_ALPHABET: &str = concat!(
    "ABCDEFGHIJKLMNOPQRSTUVWXYZ",
    "abcdefghijklmnopqrstuvwxyz",
    "0123456789",
    " .,:;-+_/\\()[]#%°µ×='\"!?<>&*"
);

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_table_entry_parses_and_is_unique() {
        let mut seen = std::collections::HashSet::new();
        for &(c, advance, outline) in GLYPHS {
            assert!(seen.insert(c), "glyph {c:?} defined twice");
            assert!(advance > 0.0, "{c:?}");
            let strokes = parse_outline(outline).unwrap_or_else(|e| panic!("{c:?}: {e}"));
            if c != ' ' {
                assert!(!strokes.is_empty(), "{c:?} has no strokes");
            }
            for line in &strokes {
                assert!(line.len() >= 2, "{c:?} has a one-point polyline");
            }
        }
        assert!(parse_outline(MISSING_GLYPH.1).is_ok());
    }

    #[test]
    fn outline_language_rejects_bad_input() {
        assert!(parse_outline("L 1 2").is_err());
        assert!(parse_outline("M 1").is_err());
        assert!(parse_outline("M 1 x").is_err());
        assert!(parse_outline("Q 1 2").is_err());
    }

    #[test]
    fn arc_command_reaches_its_end_angle() {
        // A quarter circle of radius 2 from 0° to 90° ends at (0, 2) (unit-circle definition).
        let lines = parse_outline("A 0 0 2 2 0 90").unwrap();
        let last = *lines[0].last().unwrap();
        assert!(last.dist(Point::new(0.0, 2.0)) < 1e-12);
        assert_eq!(lines[0].len(), 10); // 90° / 10° = 9 chords, 10 points
    }
}
