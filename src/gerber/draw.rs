//! The operations D01 (stroke, arc, contour segment) and D03 (flash), spec 2024.05
//! §4.7–§4.8 and §4.10, turning the graphics state into objects.
//!
//! # Tolerances (file units; `res` is one unit of the last coordinate digit, 10^-decimals)
//! - Arc radius: start and end radius may disagree by `2.5·res + 0.1 % of r` silently (the
//!   rounding of three written numbers); up to `max(10·res, 2 % of r)` with a warning;
//!   beyond that the arc is an error, because no single circle fits and guessing would
//!   change the film. Accepted arcs have their centre moved onto the perpendicular bisector
//!   of the chord, so both radii agree exactly.
//! - Region contours must end where they start (§4.10.3). A gap of at most half a unit is
//!   closed silently (rounding). A larger gap is closed with a straight line and a warning:
//!   several writers (seen in the real-world corpus) leave the closing segment implied, and
//!   every reading of such a file closes it the same way.
//!
//! # Strokes with non-circular apertures
//! The spec draws only with circles (and, for lines, rectangles). Rectangles give their exact
//! convex sweep polygon. Lines with obround or polygon apertures are drawn as their exact
//! convex sweep too, with a warning. Arcs with rectangles, obrounds or polygons use a round
//! pen of the aperture's smallest dimension, with a warning. Strokes with macro or block
//! apertures are errors: their shape need not be convex, so no sweep can be guessed.

use super::aperture::Aperture;
use super::command::{Interpolation, QuadrantMode};
use super::geometry::{
    convex_shape_sweep, convex_sweep, fit_center, multi_quadrant_center, single_quadrant_center,
};
use super::interpret::{Interpreter, RegionState};
use crate::diag::{InputError, Pos};
use crate::image::{Contour, Object, Point, Polarity, Segment, Shape, Similarity, Turn};

/// An arc resolved in file units.
struct ArcSpec {
    center: Point,
    turn: Turn,
}

impl Interpreter<'_> {
    /// One unit of the last written digit, in file units.
    fn resolution(&self) -> f64 {
        let d = self
            .format
            .map(|f| f.x.decimal.max(f.y.decimal))
            .unwrap_or(6);
        10f64.powi(-(d as i32))
    }

    /// The aperture similarity: LM, then LR (plus the deprecated IR), then LS and units,
    /// then the placement (spec §4.9.3–§4.9.5).
    fn aperture_similarity(&self, k: f64, at: Point) -> Similarity {
        Similarity {
            mirror_x: self.mirror.0,
            mirror_y: self.mirror.1,
            rotation_deg: self.rotation_deg + self.image_transform.rotation_deg as f64,
            scale: self.scale * k,
            offset: at,
        }
    }

    pub(super) fn emit(
        &mut self,
        pos: Pos,
        polarity: Polarity,
        shape: Shape,
    ) -> Result<(), InputError> {
        self.sinks.push(
            Object { polarity, shape },
            self.limits.max_objects,
            self.file,
            pos,
        )
    }

    pub(super) fn interpolate(
        &mut self,
        pos: Pos,
        to: Point,
        offset: (f64, f64),
        _has_ij: bool,
    ) -> Result<(), InputError> {
        let k = self.unit_factor(pos)?;
        let from = match self.current {
            Some(p) => p,
            None => {
                self.warn_once(
                    "no-start",
                    pos,
                    "D01 before any point was set; drawing from the origin",
                );
                Point::default()
            }
        };
        let mode = match self.interpolation {
            Some(m) => m,
            None => {
                self.warn_once(
                    "no-G01",
                    pos,
                    "D01 before any G01/G02/G03; linear interpolation assumed",
                );
                self.interpolation = Some(Interpolation::Linear);
                Interpolation::Linear
            }
        };
        let arc = match mode {
            Interpolation::Linear => None,
            Interpolation::Clockwise => self.arc(pos, from, to, offset, Turn::Clockwise)?,
            Interpolation::CounterClockwise => {
                self.arc(pos, from, to, offset, Turn::CounterClockwise)?
            }
        };
        let a = self.to_mm(from, k);
        let b = self.to_mm(to, k);
        let arc_mm = arc.map(|s| {
            let turn = if self.image_transform.reverses() {
                s.turn.flipped()
            } else {
                s.turn
            };
            (self.to_mm(s.center, k), turn)
        });
        if let Some(region) = &mut self.region {
            if region.contour.is_none() {
                region.contour = Some(Contour {
                    start: a,
                    segments: Vec::new(),
                });
                region.start_file = from;
                region.start_pos = pos;
            }
            let contour = region.contour.as_mut().expect("just set");
            match arc_mm {
                Some((center, turn)) => contour.segments.push(Segment::Arc {
                    to: b,
                    center,
                    turn,
                }),
                None if mode == Interpolation::Linear && a != b => {
                    contour.segments.push(Segment::Line { to: b })
                }
                None => {}
            }
            return Ok(());
        }
        let Some(code) = self.aperture else {
            return Err(self.error(
                pos,
                "D01 draws with the current aperture, but no aperture was selected (Dnn)",
            ));
        };
        let ap = self.apertures.get(&code).expect("selected apertures exist");
        let drawn = match (ap, mode) {
            (_, Interpolation::Linear) => {
                line_shape(ap, a, b, self.aperture_similarity(k, Point::default()))
            }
            (Aperture::Circle { diameter, .. }, _) => {
                Drawn::Allowed(arc_or_point(a, b, arc_mm, diameter * self.scale * k))
            }
            (
                Aperture::Rectangle { .. } | Aperture::Obround { .. } | Aperture::Polygon { .. },
                _,
            ) => Drawn::Tolerated(arc_or_point(
                a,
                b,
                arc_mm,
                ap.smallest_dimension() * self.scale * k,
            )),
            (Aperture::Macro { .. } | Aperture::Block { .. }, _) => Drawn::Impossible,
        };
        let shape = match drawn {
            Drawn::Allowed(s) => s,
            Drawn::Tolerated(s) if mode == Interpolation::Linear => {
                self.warn_once(
                    "sweep",
                    pos,
                    "lines with obround or polygon apertures are not allowed by the spec (§4.7); drawn as the exact sweep of the aperture",
                );
                s
            }
            Drawn::Tolerated(s) => {
                self.warn_once(
                    "arc-pen",
                    pos,
                    "arcs are drawn with circular apertures only (spec §4.7); a round pen of the aperture's smallest dimension is used",
                );
                s
            }
            Drawn::Impossible => {
                return Err(self.error(
                    pos,
                    format!("D{code} is a macro or block aperture; drawing (D01) with it is not allowed (spec §4.7), only flashing (D03)"),
                ))
            }
        };
        if mode == Interpolation::Linear {
            self.sinks.stats.strokes += 1;
        } else {
            self.sinks.stats.arcs += 1;
        }
        if let Some(shape) = shape {
            self.emit(pos, self.polarity, shape)?;
        }
        Ok(())
    }

    /// Resolves an arc's centre; `None` for a zero-length single-quadrant arc.
    fn arc(
        &mut self,
        pos: Pos,
        from: Point,
        to: Point,
        (i, j): (f64, f64),
        turn: Turn,
    ) -> Result<Option<ArcSpec>, InputError> {
        let res = self.resolution();
        let same = from.dist(to) <= res * 1e-3;
        let quadrant = self.quadrant;
        let center = match quadrant {
            Some(QuadrantMode::Multi) => multi_quadrant_center(from, i, j),
            Some(QuadrantMode::Single) => {
                if same {
                    return Ok(None);
                }
                match single_quadrant_center(from, to, i, j, turn, 1e-6 + 3.0 * res / (i.hypot(j) + res)) {
                    Some(c) => c,
                    None => {
                        return Err(self.error(
                            pos,
                            "in single quadrant mode (G74) an arc spans at most 90°, but no centre from I/J gives such an arc",
                        ))
                    }
                }
            }
            None => {
                self.warn_once(
                    "no-quadrant",
                    pos,
                    "arc before any G74/G75: read as single quadrant (the old default) where that fits, else as multi quadrant; files should set G75",
                );
                let single = if same || i < 0.0 || j < 0.0 {
                    None
                } else {
                    single_quadrant_center(
                        from,
                        to,
                        i,
                        j,
                        turn,
                        1e-6 + 3.0 * res / (i.hypot(j) + res),
                    )
                };
                single.unwrap_or_else(|| multi_quadrant_center(from, i, j))
            }
        };
        if same {
            if center.dist(from) == 0.0 {
                return Ok(None);
            }
            return Ok(Some(ArcSpec { center, turn }));
        }
        let fit = fit_center(from, to, center);
        let r = fit.radius;
        let err = fit.radius_error;
        if err > 2.5 * res + 1e-3 * r {
            if err <= (10.0 * res).max(0.02 * r) {
                self.warn_once(
                    "arc-radius",
                    pos,
                    format!("arc start and end radius differ by {err:.6} file units; the centre is adjusted"),
                );
            } else {
                return Err(self.error(
                    pos,
                    format!(
                        "this arc's start radius ({:.6}) and end radius ({:.6}) differ too much: no circle fits (check I/J and G74/G75)",
                        center.dist(from),
                        center.dist(to)
                    ),
                ));
            }
        }
        Ok(Some(ArcSpec {
            center: fit.center,
            turn,
        }))
    }

    pub(super) fn flash(&mut self, pos: Pos, at: Point) -> Result<(), InputError> {
        if self.region.is_some() {
            return Err(self.error(
                pos,
                "D03 (flash) is not allowed inside a region (G36…G37, spec §4.10)",
            ));
        }
        let Some(code) = self.aperture else {
            return Err(self.error(
                pos,
                "D03 flashes the current aperture, but no aperture was selected (Dnn)",
            ));
        };
        let k = self.unit_factor(pos)?;
        let p = self.to_mm(at, k);
        self.sinks.stats.flashes += 1;
        let ap = self.apertures.get(&code).expect("selected apertures exist");
        match ap {
            Aperture::Circle {
                diameter,
                hole: None,
            } => {
                let d = diameter * self.scale * k;
                if d > 0.0 {
                    self.emit(
                        pos,
                        self.polarity,
                        Shape::Disc {
                            center: p,
                            diameter: d,
                        },
                    )?;
                }
            }
            Aperture::Block { objects } => {
                // A block flash places its objects transformed by LM/LR/LS; under clear
                // polarity every object's polarity is toggled (spec §4.11.2).
                let sim = Similarity {
                    scale: self.scale,
                    ..self.aperture_similarity(1.0, p)
                };
                let toggle = self.polarity == Polarity::Clear;
                let placed: Vec<Object> = objects
                    .iter()
                    .map(|o| Object {
                        polarity: if toggle {
                            o.polarity.flipped()
                        } else {
                            o.polarity
                        },
                        shape: o.shape.transformed(&sim),
                    })
                    .collect();
                for o in placed {
                    self.sinks
                        .push(o, self.limits.max_objects, self.file, pos)?;
                }
            }
            _ => {
                if let Some(shape) = ap.flash_shape() {
                    let shape = place(shape, &self.aperture_similarity(k, p));
                    self.emit(pos, self.polarity, shape)?;
                }
            }
        }
        Ok(())
    }

    /// Ends the contour being built in `region` (D02 or G37) and emits it as one object.
    pub(super) fn close_contour(
        &mut self,
        region: &mut RegionState,
        pos: Pos,
    ) -> Result<(), InputError> {
        let Some(mut contour) = region.contour.take() else {
            return Ok(());
        };
        if contour.segments.is_empty() {
            return Ok(());
        }
        let last = self.current.unwrap_or_default();
        let gap = last.dist(region.start_file);
        let k = self.unit_factor(pos)?;
        if gap > 0.5 * self.resolution() {
            // Spec §4.10.3 requires closed contours, but several writers rely on an implied
            // closing segment; the intent is clear, so it is added with a warning.
            let gap_mm = gap * k;
            self.warn_once(
                "open-contour",
                region.start_pos,
                format!("a region contour ends {gap_mm:.4} mm from its start (spec §4.10.3 requires it to be closed); closed with a straight line"),
            );
        }
        let end = contour
            .segments
            .last()
            .map(|s| s.end())
            .unwrap_or(contour.start);
        if end != contour.start {
            contour.segments.push(Segment::Line { to: contour.start });
        }
        self.sinks.stats.regions += 1;
        self.emit(pos, self.polarity, Shape::Polygon(contour))
    }
}

/// `shape.transformed(sim)`, reusing the shape's storage for polygons (the common
/// rectangle pad), which saves an allocation per flash.
fn place(shape: Shape, sim: &Similarity) -> Shape {
    match shape {
        Shape::Polygon(mut c) => {
            c.start = sim.apply(c.start);
            for seg in &mut c.segments {
                match seg {
                    Segment::Line { to } => *to = sim.apply(*to),
                    Segment::Arc { to, center, turn } => {
                        *to = sim.apply(*to);
                        *center = sim.apply(*center);
                        if sim.reverses() {
                            *turn = turn.flipped();
                        }
                    }
                }
            }
            Shape::Polygon(c)
        }
        other => other.transformed(sim),
    }
}

/// A round-pen arc, or a disc when it has no length.
fn arc_or_point(a: Point, b: Point, arc: Option<(Point, Turn)>, width: f64) -> Option<Shape> {
    match arc {
        Some((center, turn)) => Some(Shape::Stroke {
            start: a,
            end: b,
            arc: Some((center, turn)),
            width,
        }),
        None if width > 0.0 => Some(Shape::Disc {
            center: a,
            diameter: width,
        }),
        None => None,
    }
}

/// What a D01 with a given aperture gives.
enum Drawn {
    /// Allowed by the spec.
    Allowed(Option<Shape>),
    /// Not allowed by the spec, but the intent is clear: drawn, with a warning.
    Tolerated(Option<Shape>),
    /// Not drawable (macro or block aperture).
    Impossible,
}

/// The shape of a linear D01 from `a` to `b` (mm) with aperture `ap` oriented by `orient`
/// (offset zero).
fn line_shape(ap: &Aperture, a: Point, b: Point, orient: Similarity) -> Drawn {
    let at = |p: Point| Similarity {
        offset: p,
        ..orient
    };
    if a == b {
        // A zero-length draw paints the aperture once, like a flash (without its hole).
        return match ap {
            Aperture::Circle { diameter, .. } => {
                Drawn::Allowed((*diameter > 0.0).then(|| Shape::Disc {
                    center: a,
                    diameter: diameter * orient.scale,
                }))
            }
            Aperture::Macro { .. } | Aperture::Block { .. } => Drawn::Impossible,
            _ => Drawn::Allowed(
                without_hole(ap)
                    .flash_shape()
                    .map(|s| s.transformed(&at(a))),
            ),
        };
    }
    match ap {
        Aperture::Circle { diameter, .. } => Drawn::Allowed(Some(Shape::Stroke {
            start: a,
            end: b,
            arc: None,
            width: diameter * orient.scale,
        })),
        Aperture::Rectangle { .. } | Aperture::Polygon { .. } => {
            let outline: Vec<Point> = ap
                .convex_vertices()
                .expect("rectangles and polygons have vertices")
                .into_iter()
                .map(|v| orient.apply(v))
                .collect();
            let s = Some(convex_sweep(&outline, a, b));
            if matches!(ap, Aperture::Rectangle { .. }) {
                Drawn::Allowed(s)
            } else {
                Drawn::Tolerated(s)
            }
        }
        Aperture::Obround { width, height, .. } => {
            if *width <= 0.0 || *height <= 0.0 {
                return Drawn::Tolerated(None);
            }
            let shape = super::aperture::obround(*width, *height).transformed(&orient);
            let (dx, dy) = (b.x - a.x, b.y - a.y);
            let len = dx.hypot(dy);
            let support = obround_support(&shape, (-dy / len, dx / len));
            Drawn::Tolerated(Some(convex_shape_sweep(&shape, support, a, b)))
        }
        Aperture::Macro { .. } | Aperture::Block { .. } => Drawn::Impossible,
    }
}

/// The aperture without its hole (holes do not apply to draws).
fn without_hole(ap: &Aperture) -> Aperture {
    let mut a = ap.clone();
    match &mut a {
        Aperture::Circle { hole, .. }
        | Aperture::Rectangle { hole, .. }
        | Aperture::Obround { hole, .. }
        | Aperture::Polygon { hole, .. } => *hole = None,
        _ => {}
    }
    a
}

/// The two extreme points of an obround (given as a round-pen stroke or disc at the origin)
/// along the unit normal `n`.
fn obround_support(shape: &Shape, n: (f64, f64)) -> (Point, Point) {
    let (ends, r) = match *shape {
        Shape::Stroke {
            start, end, width, ..
        } => ([start, end], width / 2.0),
        Shape::Disc { center, diameter } => ([center, center], diameter / 2.0),
        _ => ([Point::default(); 2], 0.0),
    };
    let dot = |p: Point| p.x * n.0 + p.y * n.1;
    let (hi, lo) = if dot(ends[0]) >= dot(ends[1]) {
        (ends[0], ends[1])
    } else {
        (ends[1], ends[0])
    };
    (
        Point::new(hi.x + r * n.0, hi.y + r * n.1),
        Point::new(lo.x - r * n.0, lo.y - r * n.1),
    )
}
