//! The macro primitives: their codes, modifier layouts and validation (Gerber spec rev
//! 2024.05, §4.5.1). Geometry lives in `geometry.rs`; parsing, variables and message
//! context live in `mod.rs` behind the [`Modifiers`] trait.

use super::geometry::{self, rotated_about_origin, Moire};
use crate::diag::InputError;
use crate::image::{Point, Shape};

/// The primitive codes of spec §4.5.1, plus the revoked 2 and 22 (spec §8, deprecated
/// features). Code 0 (comment) never becomes a statement.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum PrimitiveCode {
    Circle,
    /// Code 20.
    VectorLine,
    /// Code 2: the revoked synonym of 20.
    LegacyVectorLine,
    /// Code 21.
    CenterLine,
    /// Code 22: revoked; a rectangle given by its lower-left corner.
    LowerLeftLine,
    Outline,
    Polygon,
    /// Code 6: deprecated.
    Moire,
    Thermal,
}

impl PrimitiveCode {
    pub fn from_code(code: u32) -> Option<PrimitiveCode> {
        Some(match code {
            1 => PrimitiveCode::Circle,
            2 => PrimitiveCode::LegacyVectorLine,
            20 => PrimitiveCode::VectorLine,
            21 => PrimitiveCode::CenterLine,
            22 => PrimitiveCode::LowerLeftLine,
            4 => PrimitiveCode::Outline,
            5 => PrimitiveCode::Polygon,
            6 => PrimitiveCode::Moire,
            7 => PrimitiveCode::Thermal,
            _ => return None,
        })
    }

    /// How messages name the primitive, e.g. "primitive 21 (centre line)".
    pub fn label(self) -> &'static str {
        match self {
            PrimitiveCode::Circle => "primitive 1 (circle)",
            PrimitiveCode::VectorLine => "primitive 20 (vector line)",
            PrimitiveCode::LegacyVectorLine => "primitive 2 (vector line, revoked code)",
            PrimitiveCode::CenterLine => "primitive 21 (centre line)",
            PrimitiveCode::LowerLeftLine => "primitive 22 (lower-left line, revoked code)",
            PrimitiveCode::Outline => "primitive 4 (outline)",
            PrimitiveCode::Polygon => "primitive 5 (polygon)",
            PrimitiveCode::Moire => "primitive 6 (moiré)",
            PrimitiveCode::Thermal => "primitive 7 (thermal)",
        }
    }

    /// The note given once per macro for codes the spec no longer allows.
    pub fn deprecation(self) -> Option<&'static str> {
        match self {
            PrimitiveCode::LegacyVectorLine => Some(
                "primitive code 2 was revoked from the Gerber specification; it is read as \
                 code 20 (vector line)",
            ),
            PrimitiveCode::LowerLeftLine => Some(
                "primitive code 22 (lower-left line) was revoked from the Gerber \
                 specification; it is read as a rectangle from its lower-left corner",
            ),
            PrimitiveCode::Moire => Some(
                "primitive code 6 (moiré) is deprecated in the Gerber specification; it is \
                 drawn as its rings and crosshair",
            ),
            _ => None,
        }
    }

    /// Names of the modifiers in order. The outline's list depends on its vertex count and
    /// is built by [`outline_modifier_name`].
    pub fn modifier_names(self) -> &'static [&'static str] {
        match self {
            PrimitiveCode::Circle => &["exposure", "diameter", "centre x", "centre y", "rotation"],
            PrimitiveCode::VectorLine | PrimitiveCode::LegacyVectorLine => &[
                "exposure", "width", "start x", "start y", "end x", "end y", "rotation",
            ],
            PrimitiveCode::CenterLine => &[
                "exposure", "width", "height", "centre x", "centre y", "rotation",
            ],
            PrimitiveCode::LowerLeftLine => &[
                "exposure",
                "width",
                "height",
                "lower-left x",
                "lower-left y",
                "rotation",
            ],
            PrimitiveCode::Outline => &["exposure", "number of vertices"],
            PrimitiveCode::Polygon => &[
                "exposure",
                "number of vertices",
                "centre x",
                "centre y",
                "diameter",
                "rotation",
            ],
            PrimitiveCode::Moire => &[
                "centre x",
                "centre y",
                "outer diameter",
                "ring thickness",
                "gap",
                "maximum number of rings",
                "crosshair thickness",
                "crosshair length",
                "rotation",
            ],
            PrimitiveCode::Thermal => &[
                "centre x",
                "centre y",
                "outer diameter",
                "inner diameter",
                "gap",
                "rotation",
            ],
        }
    }

    /// Fewest modifiers accepted (the circle's rotation is optional, spec §4.5.1, circle).
    pub fn min_modifiers(self) -> usize {
        match self {
            PrimitiveCode::Circle => 4,
            PrimitiveCode::Outline => 2,
            other => other.modifier_names().len(),
        }
    }

    /// Most modifiers used, when known before evaluation.
    pub fn max_modifiers(self) -> Option<usize> {
        match self {
            PrimitiveCode::Outline => None,
            other => Some(other.modifier_names().len()),
        }
    }
}

/// The name of modifier `index` (0-based) of an outline with `vertices` vertices.
fn outline_modifier_name(index: usize, vertices: usize) -> String {
    match index {
        0 => "exposure".into(),
        1 => "number of vertices".into(),
        i if i < 2 + 2 * (vertices + 1) => {
            let point = (i - 2) / 2;
            let axis = if (i - 2) % 2 == 0 { "x" } else { "y" };
            format!("point {} {axis}", point + 1)
        }
        _ => "rotation".into(),
    }
}

/// Access to the evaluated modifiers of one primitive statement, with message context.
pub(super) trait Modifiers {
    /// How many modifiers the statement has.
    fn len(&self) -> usize;
    /// Evaluates modifier `index` (0-based); always finite.
    fn value(&mut self, index: usize) -> Result<f64, InputError>;
    /// An error about this primitive (the context names the macro and the primitive).
    fn error(&self, message: String) -> InputError;
    /// An error about modifier `index` (0-based), pointing at its text.
    fn error_at(&self, index: usize, message: String) -> InputError;
    /// A warning about this primitive.
    fn warn(&mut self, message: String);
}

/// What one primitive statement contributes.
#[derive(Debug)]
pub(super) struct Built {
    /// false: the shapes are subtracted from what the macro drew before (exposure off).
    pub exposure_on: bool,
    /// Parts in order; empty when the primitive has no area.
    pub shapes: Vec<Shape>,
}

/// Evaluates and checks the modifiers of one primitive and builds its shapes, rotated about
/// the macro origin. `budget` is how many more shapes the macro may make.
pub(super) fn build(
    code: PrimitiveCode,
    m: &mut dyn Modifiers,
    budget: usize,
) -> Result<Built, InputError> {
    if m.len() < code.min_modifiers() {
        return Err(too_few(code, m));
    }
    let one = |shape: Option<Shape>| shape.into_iter().collect::<Vec<_>>();
    let (exposure_on, shapes, rotation) = match code {
        PrimitiveCode::Circle => {
            let exposure = exposure(m, 0)?;
            let diameter = size(m, 1, "diameter")?;
            let center = point(m, 2)?;
            // Rotation is optional for the circle; it moves the centre about the origin.
            let rotation = if m.len() > 4 { m.value(4)? } else { 0.0 };
            (exposure, one(geometry::disc(center, diameter)), rotation)
        }
        PrimitiveCode::VectorLine | PrimitiveCode::LegacyVectorLine => {
            let exposure = exposure(m, 0)?;
            let width = size(m, 1, "width")?;
            let (start, end) = (point(m, 2)?, point(m, 4)?);
            (
                exposure,
                one(geometry::vector_line(width, start, end)),
                m.value(6)?,
            )
        }
        PrimitiveCode::CenterLine => {
            let exposure = exposure(m, 0)?;
            let (width, height) = (size(m, 1, "width")?, size(m, 2, "height")?);
            let center = point(m, 3)?;
            let shape = geometry::centered_rectangle(center, width, height);
            (exposure, one(shape), m.value(5)?)
        }
        PrimitiveCode::LowerLeftLine => {
            let exposure = exposure(m, 0)?;
            let (width, height) = (size(m, 1, "width")?, size(m, 2, "height")?);
            let corner = point(m, 3)?;
            (
                exposure,
                one(geometry::rectangle(corner, width, height)),
                m.value(5)?,
            )
        }
        PrimitiveCode::Outline => return outline(m),
        PrimitiveCode::Polygon => {
            let exposure = exposure(m, 0)?;
            let vertices = whole_number(m, 1, "number of vertices")?;
            // Spec §4.5.1 (polygon): 3 to 12 vertices. More is an unambiguous wish for a
            // finer polygon, so it is drawn with a warning; the cap bounds the work.
            if vertices < 3 {
                return Err(m.error(format!(
                    "a polygon needs at least 3 vertices, found {vertices}"
                )));
            }
            if vertices > MAX_POLYGON_VERTICES {
                return Err(m.error(format!(
                    "a polygon may have at most 12 vertices (this reader accepts up to \
                     {MAX_POLYGON_VERTICES}), found {vertices}"
                )));
            }
            if vertices > 12 {
                m.warn(format!(
                    "a polygon may have at most 12 vertices per the specification; drawing \
                     {vertices}"
                ));
            }
            let center = point(m, 2)?;
            let diameter = size(m, 4, "diameter")?;
            let shape = geometry::regular_polygon(center, vertices as u32, diameter);
            (exposure, one(shape), m.value(5)?)
        }
        PrimitiveCode::Moire => {
            let center = point(m, 0)?;
            let spec = Moire {
                center,
                outer_diameter: size(m, 2, "outer diameter")?,
                ring_thickness: size(m, 3, "ring thickness")?,
                gap: size(m, 4, "gap")?,
                max_rings: whole_number(m, 5, "maximum number of rings")?,
                crosshair_thickness: size(m, 6, "crosshair thickness")?,
                crosshair_length: size(m, 7, "crosshair length")?,
            };
            let rotation = m.value(8)?;
            let shapes = geometry::moire(&spec, budget).map_err(|limit| {
                m.error(format!(
                    "the moiré would draw more than {limit} rings and bars, the limit on \
                     shapes per macro (max_macro_primitives)"
                ))
            })?;
            (true, shapes, rotation)
        }
        PrimitiveCode::Thermal => {
            let center = point(m, 0)?;
            let outer = size(m, 2, "outer diameter")?;
            let inner = size(m, 3, "inner diameter")?;
            let gap = size(m, 4, "gap")?;
            let rotation = m.value(5)?;
            // Spec §4.5.1 (thermal): outer > inner and gap < outer/√2. Outside that range
            // the shape is empty, which is drawn as such (no guess is involved).
            if outer <= inner {
                m.warn(format!(
                    "the outer diameter {outer} is not larger than the inner diameter \
                     {inner}, so the thermal draws nothing"
                ));
            } else if gap * gap >= outer * outer / 2.0 {
                m.warn(format!(
                    "the gap {gap} is not smaller than the outer diameter / √2, so the \
                     thermal draws nothing"
                ));
            }
            (true, geometry::thermal(center, outer, inner, gap), rotation)
        }
    };
    Ok(Built {
        exposure_on,
        shapes: rotate_all(shapes, rotation),
    })
}

/// More vertices than a film can show; keeps a hostile count from allocating much.
const MAX_POLYGON_VERTICES: u64 = 10_000;

fn rotate_all(shapes: Vec<Shape>, rotation: f64) -> Vec<Shape> {
    shapes
        .into_iter()
        .map(|s| rotated_about_origin(s, rotation))
        .collect()
}

/// Primitive 4 (spec §4.5.1, outline): exposure, n, n + 1 points with the last equal to the
/// first, rotation.
fn outline(m: &mut dyn Modifiers) -> Result<Built, InputError> {
    let exposure = exposure(m, 0)?;
    let vertices = whole_number(m, 1, "number of vertices")?;
    // 2 modifiers, n + 1 points, rotation. Checked against the real count before anything
    // is allocated, so a huge n costs nothing.
    let needed = usize::try_from(vertices)
        .ok()
        .and_then(|n| n.checked_add(1)?.checked_mul(2)?.checked_add(3))
        .unwrap_or(usize::MAX);
    if m.len() < needed {
        let n = usize::try_from(vertices).unwrap_or(usize::MAX);
        let names: Vec<String> = (m.len()..needed.min(m.len() + 3))
            .map(|i| outline_modifier_name(i, n))
            .collect();
        return Err(m.error(format!(
            "an outline with {vertices} vertices needs {} modifiers (exposure, number of \
             vertices, {} points, rotation), found {}; missing: {}{}",
            if needed == usize::MAX {
                "too many".to_string()
            } else {
                needed.to_string()
            },
            vertices.saturating_add(1),
            m.len(),
            names.join(", "),
            if needed > m.len() + 3 { ", ..." } else { "" },
        )));
    }
    if vertices < 3 {
        // Spec: at least 3 vertices. Fewer encloses no area, so nothing is drawn.
        m.warn(format!(
            "an outline needs at least 3 vertices, found {vertices}; it draws nothing"
        ));
    }
    if m.len() > needed {
        m.warn(format!(
            "{} extra modifiers after the rotation are ignored",
            m.len() - needed
        ));
    }
    let count = needed.saturating_sub(3) / 2;
    let mut points = Vec::with_capacity(count);
    for k in 0..count {
        points.push(point(m, 2 + 2 * k)?);
    }
    let rotation = m.value(needed - 1)?;
    if vertices < 3 {
        return Ok(Built {
            exposure_on: exposure,
            shapes: Vec::new(),
        });
    }
    if points.first() != points.last() {
        // Spec §4.5.1 (outline): the last point must equal the first. Closing the contour is
        // the only sensible reading.
        m.warn(
            "the last point of the outline differs from the first; the outline is closed \
             with a straight edge back to the first point"
                .to_string(),
        );
    }
    let shape = Shape::Polygon(crate::image::Contour::from_points(&points));
    Ok(Built {
        exposure_on: exposure,
        shapes: rotate_all(vec![shape], rotation),
    })
}

fn too_few(code: PrimitiveCode, m: &dyn Modifiers) -> InputError {
    let names = code.modifier_names();
    let needed = code.min_modifiers();
    m.error(format!(
        "needs {needed} modifiers ({}), found {}; missing: {}",
        names[..needed.min(names.len())].join(", "),
        m.len(),
        names[m.len().min(needed)..needed.min(names.len())].join(", ")
    ))
}

/// The exposure modifier (spec §4.5.1, exposure): 0 off, 1 on. Any other value is an error:
/// some pre-2013 texts are remembered to have used 2 for "toggle", but rev 2024.05 has no
/// such value and guessing would change the film.
fn exposure(m: &mut dyn Modifiers, index: usize) -> Result<bool, InputError> {
    let v = m.value(index)?;
    if (v - 1.0).abs() < 1e-9 {
        Ok(true)
    } else if v.abs() < 1e-9 {
        Ok(false)
    } else {
        Err(m.error_at(
            index,
            format!("the exposure must be 0 (off) or 1 (on), found {v}"),
        ))
    }
}

/// A diameter, width or similar: zero draws nothing, negative is an error.
fn size(m: &mut dyn Modifiers, index: usize, what: &str) -> Result<f64, InputError> {
    let v = m.value(index)?;
    if v < 0.0 {
        return Err(m.error_at(index, format!("the {what} must not be negative, found {v}")));
    }
    Ok(v)
}

fn point(m: &mut dyn Modifiers, index: usize) -> Result<Point, InputError> {
    Ok(Point::new(m.value(index)?, m.value(index + 1)?))
}

/// A count such as a number of vertices: a whole number >= 0 (within rounding of an
/// expression result).
fn whole_number(m: &mut dyn Modifiers, index: usize, what: &str) -> Result<u64, InputError> {
    let v = m.value(index)?;
    let r = v.round();
    if (v - r).abs() > 1e-6 || r < 0.0 {
        return Err(m.error_at(
            index,
            format!("the {what} must be a whole number >= 0, found {v}"),
        ));
    }
    // Saturates for absurd values; every caller bounds the count before using it.
    Ok(if r >= u64::MAX as f64 {
        u64::MAX
    } else {
        r as u64
    })
}
