//! The map from board millimetres to the device pixels of one film.
//!
//! Board space is millimetres with y up (`image.rs`); device space is pixels with y down,
//! pixel (i, j) covering `[i, i+1) × [j, j+1)` so its centre is `(i + 0.5, j + 0.5)`.
//! The map is axis-aligned with its own scale per axis, because film printers and masked LCD
//! screens can have different x and y pitch, and because a printer's stretch along and across
//! the paper feed is corrected per axis (the `scale_x`, `scale_y` factors).
//!
//! # The affine
//! ```text
//! sx = dpi_x / 25.4 × scale_x      (device pixels per board mm)
//! sy = dpi_y / 25.4 × scale_y
//! unmirrored:  px = (x − origin.x)·sx          py = height − (y − origin.y)·sy
//! mirrored:    px = width − (x − origin.x)·sx  py as above
//! ```
//! `origin` is the board point at the *lower-left corner of the film area as drawn* (before
//! mirroring): the area covered is `origin.x ..= origin.x + width/sx` by
//! `origin.y ..= origin.y + height/sy`. Unmirrored, `origin` lands on the pixel grid's
//! bottom-left corner (0, height); mirrored, on its bottom-right corner (width, height).
//! [`DeviceMap::affine`] gives the same map as `px = a·x + b·y + c`, `py = d·x + e·y + f`.

use crate::image::{Bounds, Point};

/// One film's board-to-pixel map. See the module docs for the exact formula.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(into = "DeviceMapRecord", from = "DeviceMapRecord")]
pub struct DeviceMap {
    /// Device resolution along x, pixels per inch of film.
    pub dpi_x: f64,
    /// Device resolution along y, pixels per inch of film.
    pub dpi_y: f64,
    /// Flip left-right (the film is the mirror image of the board view).
    pub mirror: bool,
    /// Board point (mm) at the lower-left corner of the film area, before mirroring.
    pub origin: Point,
    /// Film width in pixels.
    pub width: usize,
    /// Film height in pixels.
    pub height: usize,
    /// Film length per board length along x (printer stretch correction); 1 = none.
    pub scale_x: f64,
    /// Film length per board length along y; 1 = none.
    pub scale_y: f64,
}

/// `px = a·x + b·y + c`, `py = d·x + e·y + f`, x and y in board mm, px and py in pixels.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Affine {
    pub a: f64,
    pub b: f64,
    pub c: f64,
    pub d: f64,
    pub e: f64,
    pub f: f64,
}

/// The serialized form: the map's parameters plus the explicit affine, so a manifest reader
/// needs no formula.
#[derive(serde::Serialize, serde::Deserialize)]
struct DeviceMapRecord {
    dpi_x: f64,
    dpi_y: f64,
    mirror: bool,
    origin_mm: Point,
    width_px: usize,
    height_px: usize,
    #[serde(default = "one")]
    scale_x: f64,
    #[serde(default = "one")]
    scale_y: f64,
    /// Derived; ignored when reading.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    affine: Option<Affine>,
}

fn one() -> f64 {
    1.0
}

impl From<DeviceMap> for DeviceMapRecord {
    fn from(m: DeviceMap) -> Self {
        DeviceMapRecord {
            dpi_x: m.dpi_x,
            dpi_y: m.dpi_y,
            mirror: m.mirror,
            origin_mm: m.origin,
            width_px: m.width,
            height_px: m.height,
            scale_x: m.scale_x,
            scale_y: m.scale_y,
            affine: Some(m.affine()),
        }
    }
}

impl From<DeviceMapRecord> for DeviceMap {
    fn from(r: DeviceMapRecord) -> Self {
        DeviceMap {
            dpi_x: r.dpi_x,
            dpi_y: r.dpi_y,
            mirror: r.mirror,
            origin: r.origin_mm,
            width: r.width_px,
            height: r.height_px,
            scale_x: r.scale_x,
            scale_y: r.scale_y,
        }
    }
}

/// A film larger than the configured pixel limit.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error(
    "the film would be {width} × {height} pixels, more than the limit of {limit} pixels; \
     use a lower resolution or a smaller film, or raise max_film_pixels"
)]
pub struct FilmTooLarge {
    pub width: usize,
    pub height: usize,
    pub limit: u64,
}

/// Millimetres per inch (exact by definition of the inch).
pub const MM_PER_INCH: f64 = 25.4;

impl DeviceMap {
    /// A map of `width × height` pixels whose lower-left corner is board point `origin`.
    pub fn new(origin: Point, width: usize, height: usize, dpi_x: f64, dpi_y: f64) -> DeviceMap {
        DeviceMap {
            dpi_x,
            dpi_y,
            mirror: false,
            origin,
            width,
            height,
            scale_x: 1.0,
            scale_y: 1.0,
        }
    }

    /// The smallest map at the given resolution that covers `bounds` grown by `margin_mm` on
    /// every side. Non-finite or empty bounds give a 0 × 0 map.
    pub fn covering(bounds: &Bounds, margin_mm: f64, dpi_x: f64, dpi_y: f64) -> DeviceMap {
        let b = bounds.grown(margin_mm);
        let finite = [b.min_x, b.min_y, b.max_x, b.max_y]
            .iter()
            .all(|v| v.is_finite());
        if b.is_empty() || !finite {
            return DeviceMap::new(Point::default(), 0, 0, dpi_x, dpi_y);
        }
        let w = (b.width() * dpi_x / MM_PER_INCH).ceil();
        let h = (b.height() * dpi_y / MM_PER_INCH).ceil();
        // `as usize` saturates; absurd sizes are caught by the caller's pixel limit.
        DeviceMap::new(
            Point::new(b.min_x, b.min_y),
            w.max(0.0) as usize,
            h.max(0.0) as usize,
            dpi_x,
            dpi_y,
        )
    }

    /// The same map, flipped left-right (or not).
    pub fn with_mirror(mut self, mirror: bool) -> DeviceMap {
        self.mirror = mirror;
        self
    }

    /// Pixels per board mm along x (film resolution times stretch correction).
    pub fn px_per_mm_x(&self) -> f64 {
        self.dpi_x / MM_PER_INCH * self.scale_x
    }

    /// Pixels per board mm along y.
    pub fn px_per_mm_y(&self) -> f64 {
        self.dpi_y / MM_PER_INCH * self.scale_y
    }

    /// Pixel pitch along x on the film, µm (what edge offsets are measured in).
    pub fn pitch_x_um(&self) -> f64 {
        MM_PER_INCH * 1000.0 / self.dpi_x
    }

    /// Pixel pitch along y on the film, µm.
    pub fn pitch_y_um(&self) -> f64 {
        MM_PER_INCH * 1000.0 / self.dpi_y
    }

    /// Both pitches, for the morphology functions.
    pub fn pitch(&self) -> super::morphology::Pitch {
        super::morphology::Pitch::from_dpi(self.dpi_x, self.dpi_y)
    }

    /// Number of pixels (width × height), for checking `Limits::max_film_pixels`.
    pub fn pixel_count(&self) -> u64 {
        self.width as u64 * self.height as u64
    }

    /// The map as an explicit affine (see the module docs).
    pub fn affine(&self) -> Affine {
        let (sx, sy) = (self.px_per_mm_x(), self.px_per_mm_y());
        let (a, c) = if self.mirror {
            (-sx, self.width as f64 + self.origin.x * sx)
        } else {
            (sx, -self.origin.x * sx)
        };
        Affine {
            a,
            b: 0.0,
            c,
            d: 0.0,
            e: -sy,
            f: self.height as f64 + self.origin.y * sy,
        }
    }

    /// Board mm → device pixel coordinates (continuous; pixel centres are at +0.5).
    pub fn to_px(&self, p: Point) -> (f64, f64) {
        let u = (p.x - self.origin.x) * self.px_per_mm_x();
        let px = if self.mirror {
            self.width as f64 - u
        } else {
            u
        };
        let py = self.height as f64 - (p.y - self.origin.y) * self.px_per_mm_y();
        (px, py)
    }

    /// Device pixel coordinates → board mm (inverse of [`DeviceMap::to_px`]).
    pub fn to_mm(&self, px: f64, py: f64) -> Point {
        let u = if self.mirror {
            self.width as f64 - px
        } else {
            px
        };
        Point::new(
            self.origin.x + u / self.px_per_mm_x(),
            self.origin.y + (self.height as f64 - py) / self.px_per_mm_y(),
        )
    }

    /// Checks the film against `Limits::max_film_pixels` before anything is allocated.
    pub fn check_size(&self, limits: &crate::limits::Limits) -> Result<(), FilmTooLarge> {
        let pixels = self.width as u128 * self.height as u128;
        // Rows are stored as whole u64 words; the word count must also fit in memory.
        let words = (self.width as u128).div_ceil(64) * self.height as u128;
        if pixels > limits.max_film_pixels as u128 || words > (isize::MAX as u128) / 8 {
            return Err(FilmTooLarge {
                width: self.width,
                height: self.height,
                limit: limits.max_film_pixels,
            });
        }
        Ok(())
    }

    /// Rows whose centres may lie in board `y_min ..= y_max`, conservatively widened by one
    /// row each way (exact membership is decided per row in mm). `None` when no row can.
    pub(crate) fn rows_touching(&self, y_min: f64, y_max: f64) -> Option<(usize, usize)> {
        let sy = self.px_per_mm_y();
        let h = self.height as f64;
        let top = (h - 0.5 - (y_max - self.origin.y) * sy).floor() - 1.0;
        let bottom = (h - 0.5 - (y_min - self.origin.y) * sy).ceil() + 1.0;
        // NaN bounds fail `top <= bottom` and give None.
        let valid = top <= bottom;
        if !valid || bottom < 0.0 || top >= h {
            return None;
        }
        let first = top.max(0.0) as usize;
        let last = (bottom.min(h - 1.0)) as usize;
        Some((first, last + 1))
    }

    /// Unmirrored pixel columns whose centres lie in board `x_lo <= x < x_hi`.
    pub(crate) fn columns(&self, x_lo: f64, x_hi: f64) -> (usize, usize) {
        self.grid().columns(x_lo, x_hi)
    }

    /// The per-row constants of the map, precomputed for the scan loops.
    pub(crate) fn grid(&self) -> Grid {
        Grid {
            origin_x: self.origin.x,
            origin_y: self.origin.y,
            px_per_mm_x: self.px_per_mm_x(),
            mm_per_px_y: 1.0 / self.px_per_mm_y(),
            width: self.width,
            height: self.height,
        }
    }
}

/// The unmirrored pixel grid of a map with its constants precomputed: what the scan loops
/// need per row, without divisions.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Grid {
    origin_x: f64,
    origin_y: f64,
    px_per_mm_x: f64,
    mm_per_px_y: f64,
    width: usize,
    height: usize,
}

impl Grid {
    /// Board y (mm) of the centre of pixel row `j`.
    #[inline]
    pub(crate) fn row_center_y(&self, j: usize) -> f64 {
        self.origin_y + (self.height as f64 - (j as f64 + 0.5)) * self.mm_per_px_y
    }

    /// Unmirrored pixel columns whose centres lie in board `x_lo <= x < x_hi`, clipped to
    /// the film. Pixel i's centre is at `origin.x + (i + 0.5)/sx`, so i is in when
    /// `ceil(u_lo − 0.5) <= i < ceil(u_hi − 0.5)` with `u = (x − origin.x)·sx`.
    #[inline]
    pub(crate) fn columns(&self, x_lo: f64, x_hi: f64) -> (usize, usize) {
        (self.column(x_lo), self.column(x_hi))
    }

    #[inline]
    fn column(&self, x: f64) -> usize {
        let v = (x - self.origin_x) * self.px_per_mm_x - 0.5;
        // NaN lands on 0 (an empty span), never a panic.
        if v.is_nan() || v <= 0.0 {
            0
        } else if v >= self.width as f64 {
            self.width
        } else {
            // ceil for 0 < v < width, without a libm call.
            let t = v as usize;
            t + ((t as f64) < v) as usize
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn affine_agrees_with_to_px_and_inverts() {
        for mirror in [false, true] {
            let mut m = DeviceMap::new(Point::new(-3.0, 7.5), 500, 300, 1200.0, 600.0);
            m.mirror = mirror;
            m.scale_x = 1.002;
            let a = m.affine();
            for p in [
                Point::new(0.0, 10.0),
                Point::new(-3.0, 7.5),
                Point::new(4.2, 9.9),
            ] {
                let (px, py) = m.to_px(p);
                assert!((px - (a.a * p.x + a.b * p.y + a.c)).abs() < 1e-9);
                assert!((py - (a.d * p.x + a.e * p.y + a.f)).abs() < 1e-9);
                let q = m.to_mm(px, py);
                assert!(q.dist(p) < 1e-12);
            }
            // The origin lands on the grid's bottom corner (module docs).
            let (px, py) = m.to_px(m.origin);
            assert_eq!(py, 300.0);
            assert_eq!(px, if mirror { 500.0 } else { 0.0 });
        }
    }

    #[test]
    fn size_check_uses_the_pixel_limit() {
        let limits = crate::limits::Limits {
            max_film_pixels: 1000,
            ..Default::default()
        };
        assert!(DeviceMap::new(Point::default(), 10, 100, 600.0, 600.0)
            .check_size(&limits)
            .is_ok());
        let e = DeviceMap::new(Point::default(), 11, 100, 600.0, 600.0)
            .check_size(&limits)
            .unwrap_err();
        assert!(e.to_string().contains("11 × 100"), "{e}");
    }

    #[test]
    fn serializes_with_explicit_affine() {
        let m = DeviceMap::new(Point::new(1.0, 2.0), 10, 20, 1200.0, 1200.0).with_mirror(true);
        let s = serde_json::to_string(&m).unwrap();
        assert!(s.contains("\"affine\""), "{s}");
        let back: DeviceMap = serde_json::from_str(&s).unwrap();
        assert_eq!(back, m);
    }
}
