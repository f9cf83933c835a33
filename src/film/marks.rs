//! The artwork umbra adds to every film: registration targets, tooling holes, the label, the
//! side indicator, the frame, cut marks and tile alignment marks.
//!
//! Everything here is made of normalized-image shapes ([`Shape`]) in board millimetres (x right,
//! y up, seen from the top of the board), exactly like the layer image itself. The film stage
//! adds these shapes to the layer image *before* the film's output mirror, so all marks travel
//! with the artwork. The geometry and the reasons behind it are written up in
//! `docs/marks-and-labels.md`.
//!
//! # Registration targets
//! Every film of a board carries the same three targets at the same board coordinates, outside
//! the board (TRADE.md, "Registration for two-sided boards"). The three centres form a triangle
//! whose sides all differ (a scalene triangle). A triangle's only symmetries are reflections
//! (when two sides are equal) and 120° turns (when all three are equal), so a scalene triangle
//! has none: no reflection and no half-turn maps the set onto itself, and a flipped or turned
//! film cannot be pinned onto the targets of another. The sides are also made to differ by a
//! visible amount (at least 10 % of the longest side), so a wrong alignment is off by
//! millimetres, not micrometres.
//!
//! # Which way the label reads
//! The label must read correctly when the film lies correctly on the board (TRADE.md,
//! "Labels"): with the printed side toward the board you look through the back of the film,
//! so on the printed sheet (seen from its printed side) the label must appear mirrored; with
//! the printed side away from the board you look at the printed side, so it must read
//! normally. The film stage mirrors the whole film (x → −x) on output when the recipe says so,
//! after the label has been drawn in board coordinates. Therefore the label must be drawn
//! mirrored in board coordinates exactly when
//!
//! `film mirrored on output` ≠ `printed side toward board`
//!
//! which [`label_mirrored_in_board`] computes. With the default placement (printed side toward
//! the board) this gives:
//!
//! | film | output mirror | `mirrored` to pass | label on the sheet | seen through the film's back |
//! |---|---|---|---|---|
//! | top (and inner, outline) | yes | `false` | mirrored | reads normally |
//! | bottom | no | `true` | mirrored | reads normally |
//!
//! and with the printed side away from the board (top: as drawn, bottom: mirrored) the label
//! reads normally on the sheet. Put differently, the label behaves like text on the layer's
//! own side of the board (text on a bottom layer is drawn mirrored in Gerber's top view), so it
//! reads correctly exactly when the board's own text on that film does.

use crate::film::font;
use crate::image::{Bounds, Contour, Point, Segment, Shape, Turn};
use std::fmt::Write as _;

/// Registration target centres never crowd each other: the box they sit on is at least this
/// many target sizes across in each direction.
const MIN_TARGET_SPAN_SIZES: f64 = 4.0;

/// Pen width of text as a fraction of the cap height: 0.13 keeps counters (the holes in
/// a, e, 8) open at 2 mm capitals on a 600 dpi printer (2 mm = 47 px, pen = 6 px).
pub const TEXT_STROKE_PER_CAP: f64 = 0.13;
/// Distance between baselines of label lines as a fraction of the cap height.
pub const LINE_PITCH_PER_CAP: f64 = 1.6;
/// Tooling hole diameter used when the caller passes an unusable one (common practice: a 3 mm
/// pin is easy to find and stiff enough to hold two films).
pub const DEFAULT_TOOLING_HOLE_MM: f64 = 3.0;

fn usable(v: f64) -> f64 {
    if v.is_finite() && v > 0.0 {
        v
    } else {
        0.0
    }
}

fn finite_bounds(b: Bounds) -> Bounds {
    let ok = [b.min_x, b.min_y, b.max_x, b.max_y]
        .iter()
        .all(|v| v.is_finite());
    if b.is_empty() || !ok {
        Bounds {
            min_x: 0.0,
            min_y: 0.0,
            max_x: 0.0,
            max_y: 0.0,
        }
    } else {
        b
    }
}

/// The smallest difference between two of the three side lengths of a triangle: zero for an
/// isosceles triangle, and the distance by which a reflected copy fails to fit otherwise.
pub fn min_side_difference(p: &[Point; 3]) -> f64 {
    let d = [p[0].dist(p[1]), p[1].dist(p[2]), p[2].dist(p[0])];
    (d[0] - d[1])
        .abs()
        .min((d[1] - d[2]).abs())
        .min((d[2] - d[0]).abs())
}

/// Three registration target centres outside `board`.
///
/// Each whole target (a circle of diameter `size_mm` about its centre) stays at least
/// `margin_mm` away from the board bounds, so each centre is at least
/// `margin_mm + size_mm / 2` outside. The centres lie on the board bounds grown by that
/// distance (widened, if needed, to four target sizes so targets never crowd): two at the ends
/// of one long side, the third on the opposite or an adjacent side, at the spot that makes the
/// three side lengths differ the most (see the module documentation for why).
///
/// An empty or non-finite board is treated as a point at the origin; a non-finite or negative
/// margin or size as zero.
pub fn registration_targets(board: Bounds, margin_mm: f64, size_mm: f64) -> [Point; 3] {
    let board = finite_bounds(board);
    let size = usable(size_mm);
    let reach = usable(margin_mm) + size / 2.0;
    let mut r = board.grown(reach);
    let min_span = MIN_TARGET_SPAN_SIZES * size;
    if r.width() < min_span {
        let extra = (min_span - r.width()) / 2.0;
        r.min_x -= extra;
        r.max_x += extra;
    }
    if r.height() < min_span {
        let extra = (min_span - r.height()) / 2.0;
        r.min_y -= extra;
        r.max_y += extra;
    }
    // Work along the longer side (length `long`), the shorter one across (`short`).
    let wide = r.width() >= r.height();
    let (long, short) = if wide {
        (r.width(), r.height())
    } else {
        (r.height(), r.width())
    };
    let to_board = |u: f64, v: f64| {
        if wide {
            Point::new(r.min_x + u, r.min_y + v)
        } else {
            Point::new(r.min_x + v, r.min_y + u)
        }
    };
    let a = to_board(0.0, 0.0);
    let b = to_board(long, 0.0);
    // Candidate spots for the third target: along the far long side, then up the far short
    // side. The first best candidate wins, so the result is deterministic.
    let along_far_side = (0..=20).map(|k| (k as f64 / 20.0 * long, short));
    let up_short_side = (6..20).map(|k| (long, k as f64 / 20.0 * short));
    let mut best = [a, b, to_board(0.0, short)];
    let mut best_score = f64::NEG_INFINITY;
    for (u, v) in along_far_side.chain(up_short_side) {
        let candidate = [a, b, to_board(u, v)];
        let score = min_side_difference(&candidate);
        if score > best_score + 1e-9 {
            best = candidate;
            best_score = score;
        }
    }
    best
}

/// A full circle of radius `r` about `c` drawn with a pen of width `w`.
fn ring(c: Point, r: f64, w: f64) -> Shape {
    let p = Point::new(c.x + r, c.y);
    Shape::Stroke {
        start: p,
        end: p,
        arc: Some((c, Turn::CounterClockwise)),
        width: w,
    }
}

fn line(a: Point, b: Point, w: f64) -> Shape {
    Shape::Stroke {
        start: a,
        end: b,
        arc: None,
        width: w,
    }
}

/// A registration target of overall size `size_mm` centred on `center`, lines `line_mm` wide.
///
/// Two rings (diameters 0.5 and 0.9 of the size) and a crosshair whose arms reach the full
/// size but stop short of the centre, leaving a small clear spot. Concentric rings are easy to
/// centre over each other by eye; the long arms show any turn; the clear spot shows the exact
/// centre for a pin or a pilot drill.
pub fn target_shapes(center: Point, size_mm: f64, line_mm: f64) -> Vec<Shape> {
    let size = usable(size_mm);
    let w = usable(line_mm);
    if size == 0.0 || w == 0.0 {
        return Vec::new();
    }
    let half = size / 2.0;
    // The clear spot is twice the pen wide, or 6 % of the size, whichever is larger, but
    // never more than a third of the inner ring.
    let gap = (2.0 * w).max(0.06 * size).min(size / 12.0).max(w);
    let (cx, cy) = (center.x, center.y);
    vec![
        ring(center, 0.25 * size, w),
        ring(center, 0.45 * size, w),
        line(Point::new(cx - half, cy), Point::new(cx - gap, cy), w),
        line(Point::new(cx + gap, cy), Point::new(cx + half, cy), w),
        line(Point::new(cx, cy - half), Point::new(cx, cy - gap), w),
        line(Point::new(cx, cy + gap), Point::new(cx, cy + half), w),
    ]
}

/// A target for laying copies of one film on top of each other (toner is often not opaque
/// enough, so two aligned copies are stacked): the registration target plus two opposite
/// filled quarters inside the inner ring. Any shift between two stacked copies shows as a
/// sliver of light along a quarter's straight edge, which is easier to see than a doubled line.
pub fn stack_target_shapes(center: Point, size_mm: f64, line_mm: f64) -> Vec<Shape> {
    let mut shapes = target_shapes(center, size_mm, line_mm);
    if shapes.is_empty() {
        return shapes;
    }
    let r = 0.2 * usable(size_mm);
    for (sx, sy) in [(1.0, 1.0), (-1.0, -1.0)] {
        let a = Point::new(center.x + sx * r, center.y);
        let b = Point::new(center.x, center.y + sy * r);
        shapes.push(Shape::Polygon(Contour {
            start: center,
            segments: vec![
                Segment::Line { to: a },
                Segment::Arc {
                    to: b,
                    center,
                    turn: Turn::CounterClockwise,
                },
                Segment::Line { to: center },
            ],
        }));
    }
    shapes
}

/// A millimetre value with 3 decimals (1 µm) and no negative zero.
fn mm3(v: f64) -> String {
    let s = format!("{v:.3}");
    if s == "-0.000" {
        "0.000".into()
    } else {
        s
    }
}

/// An Excellon drill program (IPC-NC-349 header M48 … %, METRIC, one tool) with a hole of
/// `diameter_mm` at each point: tooling holes at the registration target centres, drilled
/// first so the films can be pinned.
///
/// Coordinates carry an explicit decimal point, so no zero-suppression setting is needed to
/// read them. Non-finite points are left out; an unusable diameter becomes
/// [`DEFAULT_TOOLING_HOLE_MM`].
pub fn tooling_drill_file(points: &[Point], diameter_mm: f64) -> String {
    let d = if usable(diameter_mm) > 0.0 {
        diameter_mm
    } else {
        DEFAULT_TOOLING_HOLE_MM
    };
    let mut s = String::new();
    s.push_str("M48\n");
    s.push_str("; tooling holes at the registration target centres: drill them first, then pin the films\n");
    s.push_str("METRIC\n");
    let _ = writeln!(s, "T1C{}", mm3(d));
    s.push_str("%\nG90\nG05\nT1\n");
    for p in points.iter().filter(|p| p.x.is_finite() && p.y.is_finite()) {
        let _ = writeln!(s, "X{}Y{}", mm3(p.x), mm3(p.y));
    }
    s.push_str("M30\n");
    s
}

/// The board face a film belongs to, for the label and the side indicator.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BoardFace {
    Top,
    Bottom,
    /// Inner layers and layers of no particular side (outline, drill).
    Inner,
}

impl BoardFace {
    /// The word printed in the side indicator.
    pub fn indicator_word(self) -> &'static str {
        match self {
            BoardFace::Top => "TOP",
            BoardFace::Bottom => "BOT",
            BoardFace::Inner => "INNER",
        }
    }
    fn label_word(self) -> &'static str {
        match self {
            BoardFace::Top => "top",
            BoardFace::Bottom => "bottom",
            BoardFace::Inner => "inner",
        }
    }
}

/// What the film label says.
#[derive(Debug, Clone, PartialEq)]
pub struct LabelInfo {
    pub board: String,
    /// The layer in plain words, e.g. "copper top".
    pub layer: String,
    pub side: BoardFace,
    /// What black means on this film, e.g. "black = copper" or "black = background".
    pub polarity: String,
    /// Whether the film image is mirrored on output (the recipe's mirror).
    pub mirrored: bool,
    /// Whether the film goes printed side toward the board (the profile's placement).
    pub printed_side_toward_board: bool,
    pub edge_offset_um_requested: f64,
    pub edge_offset_um_realized: f64,
    pub scale_x: f64,
    pub scale_y: f64,
    pub dpi_x: f64,
    pub dpi_y: f64,
    /// The date as the caller wants it printed.
    pub date: String,
    /// Copy number and count when copies are stacked: (1, 2) prints "copy 1/2".
    pub copy: Option<(u32, u32)>,
    /// Tile row and column (from 1) when the film is printed in tiles.
    pub tile: Option<(u32, u32)>,
}

impl LabelInfo {
    /// The `mirrored` argument for [`label_shapes`] and [`side_indicator_shapes`] for this film.
    pub fn mirrored_in_board(&self) -> bool {
        label_mirrored_in_board(self.mirrored, self.printed_side_toward_board)
    }
}

/// Whether text must be drawn mirrored in board coordinates so that it reads correctly when
/// the film is placed correctly. See the module documentation for the reasoning and table.
pub fn label_mirrored_in_board(film_mirrored: bool, printed_side_toward_board: bool) -> bool {
    film_mirrored != printed_side_toward_board
}

fn signed_um(v: f64) -> String {
    if v.is_finite() {
        let s = format!("{v:+.1}");
        if s == "-0.0" {
            "+0.0".into()
        } else {
            s
        }
    } else {
        "?".into()
    }
}

fn plain_number(v: f64, decimals: usize) -> String {
    if v.is_finite() {
        format!("{v:.decimals$}")
    } else {
        "?".into()
    }
}

/// The label text, one string per printed line, in plain words.
pub fn label_lines(info: &LabelInfo) -> Vec<String> {
    let mut lines = vec![
        info.board.clone(),
        format!("{}, {} side", info.layer, info.side.label_word()),
        info.polarity.clone(),
    ];
    let image = if info.mirrored {
        "mirrored"
    } else {
        "as drawn"
    };
    let place = if info.printed_side_toward_board {
        "toward"
    } else {
        "away from"
    };
    lines.push(format!("image {image}, printed side {place} board"));
    lines.push(format!(
        "edge offset {} µm requested, {} µm realized",
        signed_um(info.edge_offset_um_requested),
        signed_um(info.edge_offset_um_realized)
    ));
    let resolution = if info.dpi_x == info.dpi_y {
        format!("{} dpi", plain_number(info.dpi_x, 0))
    } else {
        format!(
            "{} × {} dpi",
            plain_number(info.dpi_x, 0),
            plain_number(info.dpi_y, 0)
        )
    };
    lines.push(format!(
        "scale x {} y {}, {}",
        plain_number(info.scale_x, 4),
        plain_number(info.scale_y, 4),
        resolution
    ));
    let mut last = info.date.clone();
    if let Some((n, of)) = info.copy {
        let _ = write!(last, "  copy {n}/{of}");
    }
    if let Some((row, col)) = info.tile {
        let _ = write!(last, "  tile row {row} / col {col}");
    }
    lines.push(last.trim().to_string());
    lines
}

/// Width and height in mm of a block of text lines drawn by [`label_shapes`].
pub fn label_size_mm(lines: &[String], cap_height_mm: f64) -> (f64, f64) {
    let cap = usable(cap_height_mm);
    if lines.is_empty() || cap == 0.0 {
        return (0.0, 0.0);
    }
    let width = lines
        .iter()
        .map(|l| font::text_width_mm(l, cap))
        .fold(0.0, f64::max);
    let descent = cap * font::DESCENDER_UNITS / font::CAP_HEIGHT_UNITS;
    let height = (lines.len() - 1) as f64 * LINE_PITCH_PER_CAP * cap + cap + descent;
    (width, height)
}

/// A block of text lines as strokes in board mm.
///
/// `anchor` is the lower-left corner of the block's box in board coordinates whatever
/// `mirrored` is, so layout does not depend on it; the box is [`label_size_mm`]. The first line
/// is at the top. Unmirrored lines start at the box's left edge and run right; mirrored lines
/// start at its right edge and run left with mirror-image glyphs (pass
/// [`label_mirrored_in_board`] — see the module documentation).
pub fn label_shapes(
    lines: &[String],
    anchor: Point,
    cap_height_mm: f64,
    mirrored: bool,
) -> Vec<Shape> {
    let cap = usable(cap_height_mm);
    let (width, height) = label_size_mm(lines, cap);
    if width == 0.0 {
        return Vec::new();
    }
    let stroke = TEXT_STROKE_PER_CAP * cap;
    let start_x = if mirrored { anchor.x + width } else { anchor.x };
    let top_baseline = anchor.y + height - cap;
    let mut shapes = Vec::new();
    for (i, text) in lines.iter().enumerate() {
        let origin = Point::new(start_x, top_baseline - i as f64 * LINE_PITCH_PER_CAP * cap);
        shapes.extend(font::text_shapes(text, origin, cap, stroke, mirrored, 0.0));
    }
    shapes
}

/// Width and height in mm of the side indicator at a given cap height.
pub fn side_indicator_size_mm(face: BoardFace, cap_height_mm: f64) -> (f64, f64) {
    let cap = usable(cap_height_mm);
    let word = font::text_width_mm(face.indicator_word(), cap);
    // The boxed F: a square of 1.5 caps after a gap of half a cap.
    (word + 2.0 * cap, 1.5 * cap)
}

/// A large side word ("TOP", "BOT", "INNER") followed by an F in a square.
///
/// The F has no symmetry at all, so a flipped film shows it reversed and a turned film shows it
/// on its side or upside down, even to someone who does not read the word. `anchor` is the
/// lower-left corner of the indicator's box ([`side_indicator_size_mm`]) and `mirrored` follows
/// the same rule as the label ([`label_mirrored_in_board`]).
pub fn side_indicator_shapes(
    face: BoardFace,
    anchor: Point,
    cap_height_mm: f64,
    mirrored: bool,
) -> Vec<Shape> {
    let cap = usable(cap_height_mm);
    if cap == 0.0 || !(anchor.x.is_finite() && anchor.y.is_finite()) {
        return Vec::new();
    }
    let (width, _) = side_indicator_size_mm(face, cap);
    let stroke = TEXT_STROKE_PER_CAP * cap;
    let word = face.indicator_word();
    let word_width = font::text_width_mm(word, cap);
    // Reading position → board x: reading runs right when unmirrored, left when mirrored.
    let at = |reading_x: f64| {
        if mirrored {
            anchor.x + width - reading_x
        } else {
            anchor.x + reading_x
        }
    };
    let baseline = anchor.y + 0.25 * cap;
    let mut shapes = font::text_shapes(
        word,
        Point::new(at(0.0), baseline),
        cap,
        stroke,
        mirrored,
        0.0,
    );
    // The square around the F spans reading x from word_width + 0.5 cap to + 2 cap.
    let (x0, x1) = (at(word_width + 0.5 * cap), at(word_width + 2.0 * cap));
    let (y0, y1) = (anchor.y, anchor.y + 1.5 * cap);
    let corners = [
        Point::new(x0, y0),
        Point::new(x1, y0),
        Point::new(x1, y1),
        Point::new(x0, y1),
    ];
    for i in 0..4 {
        shapes.push(line(corners[i], corners[(i + 1) % 4], stroke));
    }
    let f_cap = 0.9 * cap;
    let f_origin = Point::new(
        at(word_width + 0.5 * cap + 0.5 * cap),
        baseline + 0.05 * cap,
    );
    shapes.extend(font::text_shapes(
        "F", f_origin, f_cap, stroke, mirrored, 0.0,
    ));
    shapes
}

/// A thin rectangle with its pen centred on the edges of `bounds`.
pub fn frame_shapes(bounds: Bounds, line_mm: f64) -> Vec<Shape> {
    let w = usable(line_mm);
    let b = finite_bounds(bounds);
    if w == 0.0 || b.width() == 0.0 || b.height() == 0.0 {
        return Vec::new();
    }
    let c = [
        Point::new(b.min_x, b.min_y),
        Point::new(b.max_x, b.min_y),
        Point::new(b.max_x, b.max_y),
        Point::new(b.min_x, b.max_y),
    ];
    (0..4).map(|i| line(c[i], c[(i + 1) % 4], w)).collect()
}

/// L-shaped cut marks at the four corners of `bounds`, entirely outside it.
///
/// Each mark is two arms of length `len_mm` pointing away from the film along the extensions
/// of its edges; the inner edge of each arm lies on the edge line of `bounds`, so cutting
/// along the inner edges of the marks cuts the film out exactly.
pub fn corner_marks(bounds: Bounds, len_mm: f64, line_mm: f64) -> Vec<Shape> {
    let w = usable(line_mm);
    let len = usable(len_mm);
    let b = finite_bounds(bounds);
    if w == 0.0 || len == 0.0 {
        return Vec::new();
    }
    let h = w / 2.0;
    let mut shapes = Vec::new();
    for (x, sx) in [(b.min_x, -1.0), (b.max_x, 1.0)] {
        for (y, sy) in [(b.min_y, -1.0), (b.max_y, 1.0)] {
            // The L's vertex sits half a pen outside the corner, diagonally.
            let v = Point::new(x + sx * h, y + sy * h);
            shapes.push(line(v, Point::new(v.x + sx * len, v.y), w));
            shapes.push(line(v, Point::new(v.x, v.y + sy * len), w));
        }
    }
    shapes
}
