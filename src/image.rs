//! The normalized layer image: what every Gerber file becomes.
//!
//! A `LayerImage` is an ordered list of [`Object`]s, each a [`Shape`] painted Dark or Clear,
//! in millimetres, board coordinates (x right, y up), viewed from the top of the board.
//! Later objects paint over earlier ones (Gerber Layer Format Specification 2024.05, §4.9:
//! "the image is built by superimposing objects in the order they are created").
//!
//! Everything Gerber-specific (units, zero suppression, apertures, macros, step-repeat, block
//! apertures, LM/LR/LS, deprecated image transforms) is resolved by the interpreter; nothing
//! downstream of this module knows Gerber exists. The format is specified in
//! `docs/layer-image.md`; [`LayerImage::dump`] writes it as text for tests.
//!
//! # Guarantees
//! - Coordinates and sizes are finite; diameters are >= 0.
//! - A `Stroke` is always drawn with a round pen (rectangle-aperture strokes are converted to
//!   their exact convex outline, a `Polygon`, by the interpreter).
//! - A `Polygon` contour is closed: its last segment ends at `start`. It is filled with the
//!   non-zero winding rule.
//! - A `Composite` is painted as one unit: its parts are combined first (add = union,
//!   subtract = difference, in order) and the result is then painted with the object's
//!   polarity. This is how aperture holes and macro primitives with exposure off behave: they
//!   cut the flash itself, never the image underneath (Gerber spec §4.4.6, §4.5.1).

use std::fmt::Write as _;

/// A point in millimetres, board coordinates, y up.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct Point {
    pub x: f64,
    pub y: f64,
}

impl Point {
    pub const fn new(x: f64, y: f64) -> Self {
        Point { x, y }
    }
    pub fn dist(self, o: Point) -> f64 {
        (self.x - o.x).hypot(self.y - o.y)
    }
}

/// Whether an object adds material (Dark) or removes it (Clear), Gerber's LPD/LPC.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
pub enum Polarity {
    Dark,
    Clear,
}

impl Polarity {
    pub fn flipped(self) -> Polarity {
        match self {
            Polarity::Dark => Polarity::Clear,
            Polarity::Clear => Polarity::Dark,
        }
    }
}

/// Rotation sense of an arc, as seen with y up.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Turn {
    Clockwise,
    CounterClockwise,
}

impl Turn {
    pub fn flipped(self) -> Turn {
        match self {
            Turn::Clockwise => Turn::CounterClockwise,
            Turn::CounterClockwise => Turn::Clockwise,
        }
    }
}

/// One piece of a path: from the previous point to `to`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Segment {
    Line {
        to: Point,
    },
    /// A circular arc about `center`. When `to` equals the start point the arc is a full
    /// circle. The radius is the distance from `center` to the start point; the interpreter
    /// guarantees the end point lies on the same circle within tolerance.
    Arc {
        to: Point,
        center: Point,
        turn: Turn,
    },
}

impl Segment {
    pub fn end(&self) -> Point {
        match *self {
            Segment::Line { to } | Segment::Arc { to, .. } => to,
        }
    }
}

/// A closed contour: starts at `start`, follows `segments`, ends back at `start`.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Contour {
    pub start: Point,
    pub segments: Vec<Segment>,
}

impl Contour {
    /// A contour through the given vertices (closed automatically).
    pub fn from_points(points: &[Point]) -> Contour {
        let start = points.first().copied().unwrap_or_default();
        let mut segments: Vec<Segment> = points[1.min(points.len())..]
            .iter()
            .map(|&to| Segment::Line { to })
            .collect();
        if points.len() > 1 && points.last() != Some(&start) {
            segments.push(Segment::Line { to: start });
        }
        Contour { start, segments }
    }
}

/// A shape, before polarity.
#[derive(Debug, Clone, PartialEq)]
pub enum Shape {
    /// A filled circle.
    Disc { center: Point, diameter: f64 },
    /// A round pen of `width` swept from `start` along a line (`arc: None`) or an arc.
    /// With `arc` and `end == start` it is a full circle (a ring).
    Stroke {
        start: Point,
        end: Point,
        arc: Option<(Point, Turn)>,
        width: f64,
    },
    /// A filled contour (non-zero winding).
    Polygon(Contour),
    /// Parts combined in order (true = add, false = subtract), then painted as one.
    Composite(Vec<(bool, Shape)>),
}

/// One painted object.
#[derive(Debug, Clone, PartialEq)]
pub struct Object {
    pub polarity: Polarity,
    pub shape: Shape,
}

/// An axis-aligned box in millimetres.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Bounds {
    pub min_x: f64,
    pub min_y: f64,
    pub max_x: f64,
    pub max_y: f64,
}

impl Bounds {
    pub const EMPTY: Bounds = Bounds {
        min_x: f64::INFINITY,
        min_y: f64::INFINITY,
        max_x: f64::NEG_INFINITY,
        max_y: f64::NEG_INFINITY,
    };
    pub fn is_empty(&self) -> bool {
        self.min_x > self.max_x || self.min_y > self.max_y
    }
    pub fn width(&self) -> f64 {
        if self.is_empty() {
            0.0
        } else {
            self.max_x - self.min_x
        }
    }
    pub fn height(&self) -> f64 {
        if self.is_empty() {
            0.0
        } else {
            self.max_y - self.min_y
        }
    }
    pub fn add_point(&mut self, p: Point) {
        self.min_x = self.min_x.min(p.x);
        self.min_y = self.min_y.min(p.y);
        self.max_x = self.max_x.max(p.x);
        self.max_y = self.max_y.max(p.y);
    }
    /// Adds a circle of radius `r` about `c`.
    pub fn add_circle(&mut self, c: Point, r: f64) {
        self.add_point(Point::new(c.x - r, c.y - r));
        self.add_point(Point::new(c.x + r, c.y + r));
    }
    pub fn union(&mut self, o: &Bounds) {
        if !o.is_empty() {
            self.add_point(Point::new(o.min_x, o.min_y));
            self.add_point(Point::new(o.max_x, o.max_y));
        }
    }
    pub fn grown(&self, d: f64) -> Bounds {
        if self.is_empty() {
            return *self;
        }
        Bounds {
            min_x: self.min_x - d,
            min_y: self.min_y - d,
            max_x: self.max_x + d,
            max_y: self.max_y + d,
        }
    }
    pub fn contains(&self, o: &Bounds) -> bool {
        o.is_empty()
            || (self.min_x <= o.min_x
                && self.min_y <= o.min_y
                && self.max_x >= o.max_x
                && self.max_y >= o.max_y)
    }
    pub fn intersects(&self, o: &Bounds) -> bool {
        !(self.is_empty()
            || o.is_empty()
            || o.min_x > self.max_x
            || o.max_x < self.min_x
            || o.min_y > self.max_y
            || o.max_y < self.min_y)
    }
}

/// Angle of `p` about `c`, radians in (-pi, pi].
fn angle(c: Point, p: Point) -> f64 {
    (p.y - c.y).atan2(p.x - c.x)
}

/// The counter-clockwise sweep from `a0` to `a1` for `turn`, in radians: positive for CCW,
/// negative for CW, with a full circle (equal angles) giving ±2π.
pub fn arc_sweep(start: Point, end: Point, center: Point, turn: Turn) -> f64 {
    let a0 = angle(center, start);
    let a1 = angle(center, end);
    let tau = std::f64::consts::TAU;
    let same = start.dist(end) <= 1e-9 * (1.0 + start.dist(center));
    match turn {
        Turn::CounterClockwise => {
            if same {
                tau
            } else {
                (a1 - a0).rem_euclid(tau)
            }
        }
        Turn::Clockwise => {
            if same {
                -tau
            } else {
                -((a0 - a1).rem_euclid(tau))
            }
        }
    }
}

/// Adds the bounding box of the arc (start→end about center) to `b`, grown by `pad`.
fn add_arc_bounds(b: &mut Bounds, start: Point, end: Point, center: Point, turn: Turn, pad: f64) {
    let r = center.dist(start);
    b.add_circle(start, pad);
    b.add_circle(end, pad);
    let a0 = angle(center, start);
    let sweep = arc_sweep(start, end, center, turn);
    // Include each axis extreme (0, 90, 180, 270 degrees) that the sweep passes.
    for k in 0..4 {
        let ak = k as f64 * std::f64::consts::FRAC_PI_2;
        let rel = if sweep >= 0.0 {
            (ak - a0).rem_euclid(std::f64::consts::TAU)
        } else {
            (a0 - ak).rem_euclid(std::f64::consts::TAU)
        };
        if rel <= sweep.abs() {
            let p = Point::new(center.x + r * ak.cos(), center.y + r * ak.sin());
            b.add_circle(p, pad);
        }
    }
}

impl Contour {
    pub fn bounds(&self) -> Bounds {
        let mut b = Bounds::EMPTY;
        b.add_point(self.start);
        let mut cur = self.start;
        for s in &self.segments {
            match *s {
                Segment::Line { to } => b.add_point(to),
                Segment::Arc { to, center, turn } => {
                    add_arc_bounds(&mut b, cur, to, center, turn, 0.0)
                }
            }
            cur = s.end();
        }
        b
    }

    /// Signed area (positive when counter-clockwise), exact for arcs.
    pub fn signed_area(&self) -> f64 {
        let mut a = 0.0;
        let mut cur = self.start;
        for s in &self.segments {
            let to = s.end();
            // Shoelace term of the chord.
            a += 0.5 * (cur.x * to.y - to.x * cur.y);
            if let Segment::Arc { center, turn, .. } = *s {
                // Plus the circular segment between chord and arc (signed by sweep).
                let r = center.dist(cur);
                let sweep = arc_sweep(cur, to, center, turn);
                a += 0.5 * r * r * (sweep - sweep.sin());
            }
            cur = to;
        }
        a
    }
}

impl Shape {
    /// Whether every number in the shape is finite. Renderers skip shapes that are not (the
    /// interpreter never makes them; hand-built images might).
    pub fn is_finite(&self) -> bool {
        let pf = |p: &Point| p.x.is_finite() && p.y.is_finite();
        match self {
            Shape::Disc { center, diameter } => pf(center) && diameter.is_finite(),
            Shape::Stroke {
                start,
                end,
                arc,
                width,
            } => pf(start) && pf(end) && width.is_finite() && arc.is_none_or(|(c, _)| pf(&c)),
            Shape::Polygon(c) => {
                pf(&c.start)
                    && c.segments.iter().all(|s| match s {
                        Segment::Line { to } => pf(to),
                        Segment::Arc { to, center, .. } => pf(to) && pf(center),
                    })
            }
            Shape::Composite(parts) => parts.iter().all(|(_, s)| s.is_finite()),
        }
    }

    pub fn bounds(&self) -> Bounds {
        let mut b = Bounds::EMPTY;
        match self {
            Shape::Disc { center, diameter } => b.add_circle(*center, diameter / 2.0),
            Shape::Stroke {
                start,
                end,
                arc,
                width,
            } => match arc {
                None => {
                    b.add_circle(*start, width / 2.0);
                    b.add_circle(*end, width / 2.0);
                }
                Some((c, turn)) => add_arc_bounds(&mut b, *start, *end, *c, *turn, width / 2.0),
            },
            Shape::Polygon(c) => b = c.bounds(),
            Shape::Composite(parts) => {
                for (add, s) in parts {
                    if *add {
                        b.union(&s.bounds());
                    }
                }
            }
        }
        b
    }

    /// Applies `t` to every coordinate and size.
    pub fn transformed(&self, t: &Similarity) -> Shape {
        match self {
            Shape::Disc { center, diameter } => Shape::Disc {
                center: t.apply(*center),
                diameter: diameter * t.scale,
            },
            Shape::Stroke {
                start,
                end,
                arc,
                width,
            } => Shape::Stroke {
                start: t.apply(*start),
                end: t.apply(*end),
                arc: arc.map(|(c, turn)| (t.apply(c), t.turn(turn))),
                width: width * t.scale,
            },
            Shape::Polygon(c) => Shape::Polygon(c.transformed(t)),
            Shape::Composite(parts) => Shape::Composite(
                parts
                    .iter()
                    .map(|(add, s)| (*add, s.transformed(t)))
                    .collect(),
            ),
        }
    }
}

impl Contour {
    pub fn transformed(&self, t: &Similarity) -> Contour {
        Contour {
            start: t.apply(self.start),
            segments: self
                .segments
                .iter()
                .map(|s| match *s {
                    Segment::Line { to } => Segment::Line { to: t.apply(to) },
                    Segment::Arc { to, center, turn } => Segment::Arc {
                        to: t.apply(to),
                        center: t.apply(center),
                        turn: t.turn(turn),
                    },
                })
                .collect(),
        }
    }
}

/// A similarity transform: optional mirror, then rotation, then uniform scale, then
/// translation. These are the only transforms Gerber allows on objects (LM/LR/LS, AB, SR).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Similarity {
    /// Mirror x (x → −x) before rotating.
    pub mirror_x: bool,
    /// Mirror y (y → −y) before rotating.
    pub mirror_y: bool,
    /// Counter-clockwise rotation in degrees.
    pub rotation_deg: f64,
    pub scale: f64,
    pub offset: Point,
}

impl Default for Similarity {
    fn default() -> Self {
        Similarity::IDENTITY
    }
}

impl Similarity {
    pub const IDENTITY: Similarity = Similarity {
        mirror_x: false,
        mirror_y: false,
        rotation_deg: 0.0,
        scale: 1.0,
        offset: Point { x: 0.0, y: 0.0 },
    };

    pub fn translate(dx: f64, dy: f64) -> Similarity {
        Similarity {
            offset: Point::new(dx, dy),
            ..Similarity::IDENTITY
        }
    }

    /// Whether the transform reverses orientation (one mirror).
    pub fn reverses(&self) -> bool {
        self.mirror_x != self.mirror_y
    }

    fn turn(&self, t: Turn) -> Turn {
        if self.reverses() {
            t.flipped()
        } else {
            t
        }
    }

    pub fn apply(&self, p: Point) -> Point {
        let mut x = if self.mirror_x { -p.x } else { p.x };
        let mut y = if self.mirror_y { -p.y } else { p.y };
        if self.rotation_deg != 0.0 {
            let (s, c) = rotation_sin_cos(self.rotation_deg);
            let (rx, ry) = (x * c - y * s, x * s + y * c);
            x = rx;
            y = ry;
        }
        Point::new(
            x * self.scale + self.offset.x,
            y * self.scale + self.offset.y,
        )
    }

    /// `self` applied after `inner`: p ↦ self(inner(p)).
    pub fn then(&self, outer: &Similarity) -> Similarity {
        // Compose by pushing basis vectors through both maps.
        let o = outer.apply(self.apply(Point::new(0.0, 0.0)));
        let ex = outer.apply(self.apply(Point::new(1.0, 0.0)));
        let ey = outer.apply(self.apply(Point::new(0.0, 1.0)));
        let (ax, ay) = (ex.x - o.x, ex.y - o.y);
        let (bx, by) = (ey.x - o.x, ey.y - o.y);
        let scale = ax.hypot(ay);
        let det = ax * by - ay * bx;
        let reverses = det < 0.0;
        // Represent as: mirror_y (if reverses) then rotate by the angle of the x basis image.
        let rotation_deg = ay.atan2(ax).to_degrees();
        Similarity {
            mirror_x: false,
            mirror_y: reverses,
            rotation_deg: snap_angle(rotation_deg),
            scale,
            offset: o,
        }
    }
}

/// Angles that are whole multiples of 90° are snapped so that rotations of axis-aligned
/// geometry stay exact.
fn snap_angle(a: f64) -> f64 {
    let q = (a / 90.0).round();
    if (a - q * 90.0).abs() < 1e-9 {
        (q * 90.0).rem_euclid(360.0)
    } else {
        a.rem_euclid(360.0)
    }
}

/// sin and cos of an angle in degrees, exact for multiples of 90°.
pub fn rotation_sin_cos(deg: f64) -> (f64, f64) {
    let d = deg.rem_euclid(360.0);
    if d == 0.0 {
        (0.0, 1.0)
    } else if d == 90.0 {
        (1.0, 0.0)
    } else if d == 180.0 {
        (0.0, -1.0)
    } else if d == 270.0 {
        (-1.0, 0.0)
    } else {
        d.to_radians().sin_cos()
    }
}

/// Counts of what a file contained, for `umbra inspect`.
#[derive(Debug, Clone, Default, PartialEq, Eq, serde::Serialize)]
pub struct ImageStats {
    pub apertures: usize,
    pub flashes: usize,
    pub strokes: usize,
    pub arcs: usize,
    pub regions: usize,
    pub clear_objects: usize,
}

/// The normalized image of one Gerber file.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct LayerImage {
    pub objects: Vec<Object>,
    pub stats: ImageStats,
}

impl LayerImage {
    pub fn bounds(&self) -> Bounds {
        let mut b = Bounds::EMPTY;
        for o in &self.objects {
            if o.polarity == Polarity::Dark {
                b.union(&o.shape.bounds());
            }
        }
        b
    }

    pub fn push(&mut self, polarity: Polarity, shape: Shape) {
        self.objects.push(Object { polarity, shape });
    }

    /// The image as text, one object per line, coordinates in mm with 6 decimals
    /// (1 nm). The format is documented in `docs/layer-image.md`.
    pub fn dump(&self) -> String {
        let mut s = String::new();
        for o in &self.objects {
            s.push_str(match o.polarity {
                Polarity::Dark => "dark ",
                Polarity::Clear => "clear ",
            });
            dump_shape(&mut s, &o.shape);
            s.push('\n');
        }
        s
    }
}

fn fmt_num(v: f64) -> String {
    let r = format!("{:.6}", v);
    if r == "-0.000000" {
        "0.000000".to_string()
    } else {
        r
    }
}

fn fmt_pt(p: Point) -> String {
    format!("{},{}", fmt_num(p.x), fmt_num(p.y))
}

fn turn_word(t: Turn) -> &'static str {
    match t {
        Turn::Clockwise => "cw",
        Turn::CounterClockwise => "ccw",
    }
}

fn dump_shape(s: &mut String, shape: &Shape) {
    match shape {
        Shape::Disc { center, diameter } => {
            let _ = write!(s, "disc {} d={}", fmt_pt(*center), fmt_num(*diameter));
        }
        Shape::Stroke {
            start,
            end,
            arc,
            width,
        } => {
            let _ = write!(s, "stroke w={} {}", fmt_num(*width), fmt_pt(*start));
            match arc {
                None => {
                    let _ = write!(s, " line {}", fmt_pt(*end));
                }
                Some((c, t)) => {
                    let _ = write!(
                        s,
                        " arc {} {} c={}",
                        turn_word(*t),
                        fmt_pt(*end),
                        fmt_pt(*c)
                    );
                }
            }
        }
        Shape::Polygon(c) => {
            let _ = write!(s, "polygon {}", fmt_pt(c.start));
            for seg in &c.segments {
                match *seg {
                    Segment::Line { to } => {
                        let _ = write!(s, " line {}", fmt_pt(to));
                    }
                    Segment::Arc { to, center, turn } => {
                        let _ = write!(
                            s,
                            " arc {} {} c={}",
                            turn_word(turn),
                            fmt_pt(to),
                            fmt_pt(center)
                        );
                    }
                }
            }
        }
        Shape::Composite(parts) => {
            s.push_str("composite {");
            for (add, p) in parts {
                s.push_str(if *add { " + " } else { " - " });
                dump_shape(s, p);
                s.push(';');
            }
            s.push_str(" }");
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn arc_contour_area_is_a_half_disc() {
        // Half disc of radius 2: area = π r² / 2 (analytic).
        let c = Contour {
            start: Point::new(2.0, 0.0),
            segments: vec![
                Segment::Arc {
                    to: Point::new(-2.0, 0.0),
                    center: Point::new(0.0, 0.0),
                    turn: Turn::CounterClockwise,
                },
                Segment::Line {
                    to: Point::new(2.0, 0.0),
                },
            ],
        };
        let a = c.signed_area();
        assert!((a - std::f64::consts::PI * 2.0).abs() < 1e-12, "{a}");
        let b = c.bounds();
        assert_eq!((b.min_x, b.max_x, b.min_y), (-2.0, 2.0, 0.0));
        assert!((b.max_y - 2.0).abs() < 1e-12);
    }

    #[test]
    fn full_circle_sweep() {
        let p = Point::new(1.0, 0.0);
        let c = Point::new(0.0, 0.0);
        assert_eq!(arc_sweep(p, p, c, Turn::Clockwise), -std::f64::consts::TAU);
        assert_eq!(
            arc_sweep(p, p, c, Turn::CounterClockwise),
            std::f64::consts::TAU
        );
    }

    #[test]
    fn similarity_composition_matches_sequential_application() {
        let a = Similarity {
            mirror_x: true,
            mirror_y: false,
            rotation_deg: 30.0,
            scale: 2.0,
            offset: Point::new(1.0, -3.0),
        };
        let b = Similarity {
            mirror_x: false,
            mirror_y: false,
            rotation_deg: 90.0,
            scale: 0.5,
            offset: Point::new(-2.0, 5.0),
        };
        let ab = a.then(&b);
        for p in [Point::new(0.3, 0.7), Point::new(-4.0, 2.5)] {
            let q1 = b.apply(a.apply(p));
            let q2 = ab.apply(p);
            assert!(q1.dist(q2) < 1e-12, "{q1:?} {q2:?}");
        }
        assert!(ab.reverses());
    }
}
