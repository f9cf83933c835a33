//! Vector films: the same films as the raster path, as exact polygons instead of pixels.
//!
//! A film is composed in *film space*: millimetres on the film, origin at the film's
//! lower-left corner, y up, after the recipe's stretch correction and mirror (the
//! `DeviceMap` formula of `raster::device`, divided by the pixel pitch). Every shape of the
//! normalized layer image is flattened into polygons there ([`flatten`]), the objects are
//! combined in order with boolean operations ([`compose`]), the edge offset is applied
//! geometrically with round joins, and the result is written as PDF pages laid out exactly
//! like the raster sheets ([`page`]) and as one SVG per film ([`svg`]).
//!
//! The booleans and offsets are done by the `i_overlay` crate (see `docs/vector.md` for why
//! it was chosen over `clipper2`); [`ops`] is the only module that knows it.

pub mod chain;
pub mod compose;
pub mod flatten;
pub mod ops;
pub mod page;
pub mod svg;

pub use compose::{compose_film, VectorFilm};
pub use page::{vector_pages, write_vector_outputs};

/// A point in film millimetres (x, y), y up.
pub type Pt = [f64; 2];
/// A closed ring of points; the closing edge from the last point to the first is implied.
pub type Ring = Vec<Pt>;
/// One polygon with holes: the outer ring (counter-clockwise) followed by its holes
/// (clockwise).
pub type Polygon = Vec<Ring>;
/// A region: polygons that do not overlap each other.
pub type Region = Vec<Polygon>;

/// Settings of the vector path.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct VectorOptions {
    /// Largest distance between a true arc or circle and the chords that replace it, mm.
    /// `None`: [`DEFAULT_DOT_FRACTION`] of the film's device dot (finer axis).
    pub arc_tolerance_mm: Option<f64>,
}

/// Default arc tolerance as a fraction of the device dot: 1/8 dot is 2.6 µm at 1200 dpi,
/// well below what any printer resolves, and keeps the bench board's films to a few
/// hundred thousand vertices.
pub const DEFAULT_DOT_FRACTION: f64 = 1.0 / 8.0;

/// Smallest arc tolerance accepted, mm (10 nm): finer tolerances only multiply vertices.
pub const MIN_ARC_TOLERANCE_MM: f64 = 1e-5;

/// Largest arc tolerance a profile may ask for, µm: coarser chords would visibly flatten
/// pads and track ends.
pub const MAX_ARC_TOLERANCE_UM: f64 = 100.0;

/// Checks an arc tolerance in µm given by `key` (the profile key
/// `device.vector_arc_tolerance_um` or a command-line option): 0 (the default tolerance) or
/// a positive number up to [`MAX_ARC_TOLERANCE_UM`].
pub fn validate_arc_tolerance_um(um: f64, key: &str) -> Result<(), String> {
    if um.is_finite() && (0.0..=MAX_ARC_TOLERANCE_UM).contains(&um) {
        Ok(())
    } else {
        Err(format!(
            "{key} = {um} must be between 0 and {MAX_ARC_TOLERANCE_UM} µm \
             (0 means the default, 1/8 of a printer dot)"
        ))
    }
}

impl VectorOptions {
    /// The options a profile asks for (`[device] vector_arc_tolerance_um`; 0 = default).
    pub fn from_profile(profile: &crate::process::Profile) -> VectorOptions {
        let um = profile.device.vector_arc_tolerance_um;
        VectorOptions {
            arc_tolerance_mm: (um.is_finite() && um > 0.0).then_some(um / 1000.0),
        }
    }

    /// The arc tolerance for a device of `dpi_x` × `dpi_y`, mm.
    pub fn tolerance_mm(&self, dpi_x: f64, dpi_y: f64) -> f64 {
        let t = match self.arc_tolerance_mm {
            Some(t) if t.is_finite() && t > 0.0 => t,
            _ => 25.4 / dpi_x.max(dpi_y) * DEFAULT_DOT_FRACTION,
        };
        if t.is_finite() {
            t.max(MIN_ARC_TOLERANCE_MM)
        } else {
            MIN_ARC_TOLERANCE_MM.max(25.4 / 1200.0 * DEFAULT_DOT_FRACTION)
        }
    }
}

/// Signed area of a ring (shoelace formula), positive when counter-clockwise.
pub fn ring_area(r: &[Pt]) -> f64 {
    let n = r.len();
    let mut a = 0.0;
    for i in 0..n {
        let p = r[i];
        let q = r[(i + 1) % n];
        a += p[0] * q[1] - q[0] * p[1];
    }
    0.5 * a
}

/// Area of a region: outer rings count positive, holes negative (by their orientation).
pub fn region_area(region: &Region) -> f64 {
    region.iter().flatten().map(|r| ring_area(r)).sum()
}

/// Bounding box of a set of rings: (min x, min y, max x, max y); `None` when empty.
pub fn rings_bounds<'a>(rings: impl IntoIterator<Item = &'a Ring>) -> Option<[f64; 4]> {
    let mut b = [
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    let mut any = false;
    for r in rings {
        for p in r {
            any = true;
            b[0] = b[0].min(p[0]);
            b[1] = b[1].min(p[1]);
            b[2] = b[2].max(p[0]);
            b[3] = b[3].max(p[1]);
        }
    }
    any.then_some(b)
}
