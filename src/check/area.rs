//! The checked area: the block of a film's pixels over the board, and conversions between
//! its pixels and board millimetres.

use super::BOARD_MARGIN_MM;
use crate::image::{Bounds, Point};
use crate::raster::DeviceMap;

/// The pixel grid of the checked area: the film's block over the board.
#[derive(Debug, Clone, Copy)]
pub(super) struct Area {
    pub x0: usize,
    pub y0: usize,
    pub map: DeviceMap,
    pub mm_x: f64,
    pub mm_y: f64,
}

impl Area {
    pub fn of(map: &DeviceMap, board: &Bounds) -> Area {
        let b = board.grown(BOARD_MARGIN_MM);
        let (ax, ay) = map.to_px(Point::new(b.min_x, b.min_y));
        let (bx, by) = map.to_px(Point::new(b.max_x, b.max_y));
        let clampx = |v: f64| v.clamp(0.0, map.width as f64);
        let clampy = |v: f64| v.clamp(0.0, map.height as f64);
        let x0 = clampx(ax.min(bx).floor()) as usize;
        let y0 = clampy(ay.min(by).floor()) as usize;
        Area {
            x0,
            y0,
            map: *map,
            mm_x: 1.0 / map.px_per_mm_x(),
            mm_y: 1.0 / map.px_per_mm_y(),
        }
    }

    pub fn size(&self, board: &Bounds) -> (usize, usize) {
        let b = board.grown(BOARD_MARGIN_MM);
        let (ax, ay) = self.map.to_px(Point::new(b.min_x, b.min_y));
        let (bx, by) = self.map.to_px(Point::new(b.max_x, b.max_y));
        let x1 = ax.max(bx).ceil().clamp(0.0, self.map.width as f64) as usize;
        let y1 = ay.max(by).ceil().clamp(0.0, self.map.height as f64) as usize;
        (x1.saturating_sub(self.x0), y1.saturating_sub(self.y0))
    }

    /// Crop pixel coordinates (continuous) → board mm.
    pub fn to_mm(self, x: f64, y: f64) -> Point {
        self.map.to_mm(x + self.x0 as f64, y + self.y0 as f64)
    }

    /// Board mm → crop pixel coordinates (continuous).
    pub fn to_px(self, p: Point) -> (f64, f64) {
        let (x, y) = self.map.to_px(p);
        (x - self.x0 as f64, y - self.y0 as f64)
    }

    pub fn pixel_mm(&self) -> f64 {
        self.mm_x.max(self.mm_y)
    }

    /// Crop pixels whose centres lie in the board box `b`: (x0, x1, y0, y1), half-open; at
    /// least the pixel under the box's centre.
    pub fn pixels_in(&self, b: &Bounds, w: usize, h: usize) -> (usize, usize, usize, usize) {
        let (ax, ay) = self.to_px(Point::new(b.min_x, b.min_y));
        let (bx, by) = self.to_px(Point::new(b.max_x, b.max_y));
        let first = |v: f64| (v - 0.5).ceil().max(0.0);
        let last = |v: f64| (v - 0.5).floor() + 1.0;
        let (mut x0, mut x1) = (first(ax.min(bx)), last(ax.max(bx)));
        let (mut y0, mut y1) = (first(ay.min(by)), last(ay.max(by)));
        if x0 >= x1 || y0 >= y1 {
            let c = self.to_px(Point::new(
                0.5 * (b.min_x + b.max_x),
                0.5 * (b.min_y + b.max_y),
            ));
            (x0, y0) = (c.0.floor(), c.1.floor());
            (x1, y1) = (x0 + 1.0, y0 + 1.0);
        }
        let cl = |v: f64, n: usize| v.clamp(0.0, n as f64) as usize;
        (cl(x0, w), cl(x1, w), cl(y0, h), cl(y1, h))
    }
}
