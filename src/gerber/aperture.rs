//! Apertures (spec 2024.05 §4.3–§4.4): the standard templates C, R, O, P turned into shapes,
//! plus macro and block apertures as the interpreter stores them.
//!
//! Shapes here are in *file units* about the aperture origin; the interpreter scales them to
//! millimetres and places them (with LM/LR/LS) through an [`image::Similarity`].
//!
//! [`image::Similarity`]: crate::image::Similarity

use crate::diag::{InputError, Pos, Warning};
use crate::image::{Contour, Object, Point, Shape};

/// The hole of a standard aperture: round (spec §4.4.1), or rectangular (width X height,
/// allowed by RS-274X revisions before 2013 and still written by some programs, e.g. for
/// outline frames).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Hole {
    Round(f64),
    Rectangle(f64, f64),
}

impl Hole {
    fn from_params(p: &[f64]) -> Option<Hole> {
        match *p {
            [d] => Some(Hole::Round(d)),
            [w, h] => Some(Hole::Rectangle(w, h)),
            _ => None,
        }
    }

    fn shape(&self) -> Option<Shape> {
        match *self {
            Hole::Round(d) if d > 0.0 => Some(Shape::Disc {
                center: Point::new(0.0, 0.0),
                diameter: d,
            }),
            Hole::Rectangle(w, h) if w > 0.0 && h > 0.0 => Some(Shape::Polygon(
                Contour::from_points(&rectangle_corners(w, h)),
            )),
            _ => None,
        }
    }
}

/// A defined aperture.
#[derive(Debug, Clone, PartialEq)]
pub enum Aperture {
    Circle {
        diameter: f64,
        hole: Option<Hole>,
    },
    Rectangle {
        width: f64,
        height: f64,
        hole: Option<Hole>,
    },
    Obround {
        width: f64,
        height: f64,
        hole: Option<Hole>,
    },
    Polygon {
        diameter: f64,
        vertices: u32,
        rotation_deg: f64,
        hole: Option<Hole>,
    },
    /// A macro instance, already evaluated (file units, about the origin).
    Macro {
        name: String,
        shape: Shape,
    },
    /// A block aperture (§4.11): its objects in millimetres, relative to the file origin.
    Block {
        objects: Vec<Object>,
    },
}

impl Aperture {
    /// Builds a standard aperture from `%AD` parameters, checking counts and ranges
    /// (spec §4.4.2–§4.4.5).
    pub fn standard(
        template: &str,
        params: &[f64],
        code: u32,
        file: &str,
        pos: Pos,
        warnings: &mut Vec<Warning>,
    ) -> Result<Option<Aperture>, InputError> {
        let err = |msg: String| InputError::new(file, pos, format!("aperture D{code}: {msg}"));
        let count = |min: usize, max: usize, form: &str| {
            if params.len() < min || params.len() > max {
                Err(err(format!(
                    "template {template} takes {form}, but {} parameter(s) were given",
                    params.len()
                )))
            } else {
                Ok(())
            }
        };
        if !matches!(template, "C" | "R" | "O" | "P") {
            return Ok(None); // a macro: its own checks apply
        }
        if let Some(v) = params.iter().find(|v| **v < 0.0) {
            if template != "P" || params.get(2) != Some(v) {
                return Err(err(format!("sizes cannot be negative ({v})")));
            }
        }
        let aperture = match template {
            "C" => {
                count(1, 3, "a diameter and an optional hole")?;
                Aperture::Circle {
                    diameter: params[0],
                    hole: Hole::from_params(&params[1..]),
                }
            }
            "R" => {
                count(2, 4, "width X height and an optional hole")?;
                Aperture::Rectangle {
                    width: params[0],
                    height: params[1],
                    hole: Hole::from_params(&params[2..]),
                }
            }
            "O" => {
                count(2, 4, "width X height and an optional hole")?;
                Aperture::Obround {
                    width: params[0],
                    height: params[1],
                    hole: Hole::from_params(&params[2..]),
                }
            }
            "P" => {
                count(
                    2,
                    5,
                    "outer diameter X vertices, optional rotation and hole",
                )?;
                let n = params[1];
                if n.fract() != 0.0 || !(3.0..=12.0).contains(&n) {
                    return Err(err(format!("a polygon needs 3 to 12 vertices, not {n}")));
                }
                Aperture::Polygon {
                    diameter: params[0],
                    vertices: n as u32,
                    rotation_deg: params.get(2).copied().unwrap_or(0.0),
                    hole: params.get(3..).and_then(Hole::from_params),
                }
            }
            _ => return Ok(None),
        };
        if let Some(hole) = aperture.hole() {
            if matches!(hole, Hole::Rectangle(..)) {
                warnings.push(Warning::new(
                    file,
                    Some(pos),
                    format!("aperture D{code}: rectangular holes were removed from the spec in 2013; supported"),
                ));
            }
            let (ext_w, ext_h) = aperture.extent();
            let too_big = match hole {
                Hole::Round(d) => d > 0.0 && d >= aperture.smallest_dimension(),
                Hole::Rectangle(w, h) => w > 0.0 && h > 0.0 && (w >= ext_w || h >= ext_h),
            };
            if too_big {
                warnings.push(Warning::new(
                    file,
                    Some(pos),
                    format!("aperture D{code}: the hole is not smaller than the aperture; its flashes are empty"),
                ));
            }
        }
        Ok(Some(aperture))
    }

    fn hole(&self) -> Option<Hole> {
        match *self {
            Aperture::Circle { hole, .. }
            | Aperture::Rectangle { hole, .. }
            | Aperture::Obround { hole, .. }
            | Aperture::Polygon { hole, .. } => hole,
            _ => None,
        }
    }

    /// Width and height of a standard aperture before rotation.
    fn extent(&self) -> (f64, f64) {
        match *self {
            Aperture::Circle { diameter, .. } | Aperture::Polygon { diameter, .. } => {
                (diameter, diameter)
            }
            Aperture::Rectangle { width, height, .. } | Aperture::Obround { width, height, .. } => {
                (width, height)
            }
            Aperture::Macro { .. } | Aperture::Block { .. } => (0.0, 0.0),
        }
    }

    /// The smallest extent of a standard aperture (the round pen used where the spec
    /// allows only circles, see the interpreter).
    pub fn smallest_dimension(&self) -> f64 {
        match *self {
            Aperture::Circle { diameter, .. } => diameter,
            Aperture::Rectangle { width, height, .. } | Aperture::Obround { width, height, .. } => {
                width.min(height)
            }
            Aperture::Polygon {
                diameter, vertices, ..
            } => {
                // The inscribed circle of a regular polygon: d/2 · cos(π/n) as radius.
                diameter * (std::f64::consts::PI / vertices as f64).cos()
            }
            Aperture::Macro { .. } | Aperture::Block { .. } => 0.0,
        }
    }

    /// The flash shape in file units about the origin, before LM/LR/LS; `None` when the
    /// aperture has zero size (a flash of it creates nothing) or is a block.
    pub fn flash_shape(&self) -> Option<Shape> {
        let outer = match *self {
            Aperture::Circle { diameter, .. } => {
                if diameter <= 0.0 {
                    return None;
                }
                Shape::Disc {
                    center: Point::new(0.0, 0.0),
                    diameter,
                }
            }
            Aperture::Rectangle { width, height, .. } => {
                if width <= 0.0 || height <= 0.0 {
                    return None;
                }
                Shape::Polygon(Contour::from_points(&rectangle_corners(width, height)))
            }
            Aperture::Obround { width, height, .. } => {
                if width <= 0.0 || height <= 0.0 {
                    return None;
                }
                obround(width, height)
            }
            Aperture::Polygon {
                diameter,
                vertices,
                rotation_deg,
                ..
            } => {
                if diameter <= 0.0 {
                    return None;
                }
                Shape::Polygon(Contour::from_points(&polygon_vertices(
                    diameter,
                    vertices,
                    rotation_deg,
                )))
            }
            Aperture::Macro { ref shape, .. } => return Some(shape.clone()),
            Aperture::Block { .. } => return None,
        };
        match self.hole().and_then(|h| h.shape()) {
            Some(hole) => Some(Shape::Composite(vec![(true, outer), (false, hole)])),
            None => Some(outer),
        }
    }

    /// The outline of a convex standard aperture without its hole (for sweeping it along a
    /// line), in file units; `None` for circles, obrounds, macros and blocks.
    pub fn convex_vertices(&self) -> Option<Vec<Point>> {
        match *self {
            Aperture::Rectangle { width, height, .. } => {
                Some(rectangle_corners(width, height).to_vec())
            }
            Aperture::Polygon {
                diameter,
                vertices,
                rotation_deg,
                ..
            } => Some(polygon_vertices(diameter, vertices, rotation_deg)),
            _ => None,
        }
    }
}

/// Counter-clockwise corners of a centred rectangle.
pub fn rectangle_corners(width: f64, height: f64) -> [Point; 4] {
    let (w, h) = (width / 2.0, height / 2.0);
    [
        Point::new(-w, -h),
        Point::new(w, -h),
        Point::new(w, h),
        Point::new(-w, h),
    ]
}

/// Vertices of the regular polygon aperture: the first at `rotation_deg` on the circle of
/// diameter `diameter`, counter-clockwise (spec §4.4.5).
pub fn polygon_vertices(diameter: f64, vertices: u32, rotation_deg: f64) -> Vec<Point> {
    let r = diameter / 2.0;
    (0..vertices)
        .map(|k| {
            let (s, c) =
                crate::image::rotation_sin_cos(rotation_deg + 360.0 * k as f64 / vertices as f64);
            Point::new(r * c, r * s)
        })
        .collect()
}

/// An obround (stadium) as a round-pen stroke along its long axis (spec §4.4.4): exact.
pub fn obround(width: f64, height: f64) -> Shape {
    let pen = width.min(height);
    let half = (width.max(height) - pen) / 2.0;
    if half == 0.0 {
        return Shape::Disc {
            center: Point::new(0.0, 0.0),
            diameter: pen,
        };
    }
    let (start, end) = if width > height {
        (Point::new(-half, 0.0), Point::new(half, 0.0))
    } else {
        (Point::new(0.0, -half), Point::new(0.0, half))
    };
    Shape::Stroke {
        start,
        end,
        arc: None,
        width: pen,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn std_ap(t: &str, p: &[f64]) -> Aperture {
        let mut w = Vec::new();
        Aperture::standard(t, p, 10, "t.gbr", Pos::new(1, 1), &mut w)
            .unwrap()
            .unwrap()
    }

    #[test]
    fn rectangle_area_is_width_times_height() {
        let Some(Shape::Polygon(c)) = std_ap("R", &[2.0, 0.5]).flash_shape() else {
            panic!()
        };
        assert!((c.signed_area() - 1.0).abs() < 1e-12); // w·h, analytic
    }

    #[test]
    fn hexagon_area_matches_formula() {
        // Regular n-gon of circumradius r: area = n/2 · r² · sin(2π/n) (analytic).
        let Some(Shape::Polygon(c)) = std_ap("P", &[2.0, 6.0, 30.0]).flash_shape() else {
            panic!()
        };
        let expect = 3.0 * (std::f64::consts::TAU / 6.0).sin();
        assert!((c.signed_area() - expect).abs() < 1e-12);
        // First vertex at 30° (spec §4.4.5: rotation of the first vertex).
        assert!((c.start.x - 30f64.to_radians().cos()).abs() < 1e-12);
    }

    #[test]
    fn holes_make_composites_and_zero_size_flashes_nothing() {
        let s = std_ap("C", &[1.0, 0.4]).flash_shape().unwrap();
        assert!(matches!(s, Shape::Composite(ref p) if p.len() == 2 && !p[1].0));
        assert_eq!(std_ap("C", &[0.0]).flash_shape(), None);
        assert_eq!(std_ap("R", &[0.0, 1.0]).flash_shape(), None);
    }

    #[test]
    fn parameter_errors() {
        let mut w = Vec::new();
        let e = Aperture::standard("C", &[], 10, "t.gbr", Pos::new(2, 1), &mut w).unwrap_err();
        assert!(e.to_string().contains("t.gbr:2:1: aperture D10"), "{e}");
        assert!(Aperture::standard("P", &[1.0, 2.0], 10, "f", Pos::new(1, 1), &mut w).is_err());
        assert!(Aperture::standard("R", &[-1.0, 2.0], 10, "f", Pos::new(1, 1), &mut w).is_err());
        // Negative polygon rotation is fine.
        assert!(
            Aperture::standard("P", &[1.0, 5.0, -20.0], 10, "f", Pos::new(1, 1), &mut w).is_ok()
        );
    }

    #[test]
    fn obround_is_a_stadium() {
        assert_eq!(
            obround(3.0, 1.0),
            Shape::Stroke {
                start: Point::new(-1.0, 0.0),
                end: Point::new(1.0, 0.0),
                arc: None,
                width: 1.0
            }
        );
        assert!(matches!(obround(1.0, 1.0), Shape::Disc { diameter, .. } if diameter == 1.0));
    }
}
