//! A drawing surface for the calibration sheet: shapes in nominal sheet millimetres, plus
//! helpers that place rectangles exactly on the device's dot grid.
//!
//! The sheet is one normalized image (`image.rs`) rendered by `raster::render`, whose rule is
//! "a pixel is dark when its centre is inside the shape" (docs/rendering.md). A rectangle
//! whose edges lie on pixel *boundaries* therefore covers exactly the pixels between them:
//! no centre lies on an edge, so floating-point noise in the millimetre coordinates cannot
//! add or drop a pixel. [`Canvas::rect_px`] builds such rectangles from whole pixel edges,
//! which is how the ladders get widths of exactly n dots even with a scale correction.

use crate::film::font;
use crate::image::{Contour, Object, Point, Polarity, Shape, Similarity};
use crate::raster::DeviceMap;

/// Shapes in nominal sheet mm (origin at the sheet's lower-left corner, y up) and the map
/// that turns them into sheet pixels (with the profile's scale correction).
pub(crate) struct Canvas {
    pub map: DeviceMap,
    pub objects: Vec<Object>,
}

/// Horizontal placement of a text relative to its anchor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Align {
    Left,
    Center,
    Right,
}

impl Canvas {
    pub fn new(map: DeviceMap) -> Canvas {
        Canvas {
            map,
            objects: Vec::new(),
        }
    }

    pub fn push(&mut self, dark: bool, shape: Shape) {
        self.objects.push(Object {
            polarity: if dark {
                Polarity::Dark
            } else {
                Polarity::Clear
            },
            shape,
        });
    }

    /// A rectangle in millimetres.
    pub fn rect_mm(&mut self, x0: f64, y0: f64, x1: f64, y1: f64, dark: bool) {
        self.push(dark, rect_shape(x0, y0, x1, y1));
    }

    /// A rectangle between pixel edges: columns `px0..px1`, rows `py0..py1` (y down).
    pub fn rect_px(&mut self, px0: i64, py0: i64, px1: i64, py1: i64, dark: bool) {
        let a = self.map.to_mm(px0 as f64, py1 as f64);
        let b = self.map.to_mm(px1 as f64, py0 as f64);
        self.push(dark, rect_shape(a.x, a.y, b.x, b.y));
    }

    /// Pixel x coordinate (continuous) of sheet x in mm.
    pub fn px_x(&self, x_mm: f64) -> f64 {
        self.map.to_px(Point::new(x_mm, 0.0)).0
    }

    /// Pixel y coordinate (continuous, y down) of sheet y in mm.
    pub fn px_y(&self, y_mm: f64) -> f64 {
        self.map.to_px(Point::new(0.0, y_mm)).1
    }

    /// Text with its baseline at `y`, anchored at `x` as `align` says.
    pub fn text(&mut self, s: &str, x: f64, y: f64, cap_mm: f64, align: Align) {
        let w = font::text_width_mm(s, cap_mm);
        let x0 = match align {
            Align::Left => x,
            Align::Center => x - w / 2.0,
            Align::Right => x - w,
        };
        for shape in font::text_shapes(s, Point::new(x0, y), cap_mm, stroke_for(cap_mm), false, 0.0)
        {
            self.push(true, shape);
        }
    }

    /// A vertical line (black) of `dots` device dots centred as near `x_mm` as the dot grid
    /// allows (within half a dot), from `y0` to `y1` mm. Returns its pixel columns.
    pub fn vline_px(&mut self, x_mm: f64, y0: f64, y1: f64, dots: i64, dark: bool) -> (i64, i64) {
        let c = self.px_x(x_mm);
        let left = (c - dots as f64 / 2.0).round() as i64;
        let (t, b) = self.rows_of(y0, y1);
        self.rect_px(left, t, left + dots, b, dark);
        (left, left + dots)
    }

    /// A horizontal line of `dots` dots centred as near `y_mm` as the grid allows, from `x0`
    /// to `x1` mm. Returns its pixel rows (top, bottom).
    pub fn hline_px(&mut self, y_mm: f64, x0: f64, x1: f64, dots: i64, dark: bool) -> (i64, i64) {
        let c = self.px_y(y_mm);
        let top = (c - dots as f64 / 2.0).round() as i64;
        let (l, r) = self.cols_of(x0, x1);
        self.rect_px(l, top, r, top + dots, dark);
        (top, top + dots)
    }

    /// Whole pixel columns nearest `x0..x1` mm.
    pub fn cols_of(&self, x0: f64, x1: f64) -> (i64, i64) {
        (self.px_x(x0).round() as i64, self.px_x(x1).round() as i64)
    }

    /// Whole pixel rows nearest `y0..y1` mm (top row first, since pixel y runs down).
    pub fn rows_of(&self, y0: f64, y1: f64) -> (i64, i64) {
        (self.px_y(y1).round() as i64, self.px_y(y0).round() as i64)
    }

    /// Mirrors the objects from index `from` on left-right about the pixel boundary nearest
    /// `axis_x_mm`, so that shapes on the dot grid stay on it.
    pub fn mirror_from(&mut self, from: usize, axis_x_mm: f64) {
        let edge = self.px_x(axis_x_mm).round();
        let axis = self.map.to_mm(edge, 0.0).x;
        let t = Similarity {
            mirror_x: true,
            offset: Point::new(2.0 * axis, 0.0),
            ..Similarity::IDENTITY
        };
        for o in &mut self.objects[from..] {
            o.shape = o.shape.transformed(&t);
        }
    }
}

/// Stroke width for text of a cap height: the films' label pen (marks.rs), which keeps the
/// counters of small letters open at 600 dpi.
pub(crate) fn stroke_for(cap_mm: f64) -> f64 {
    crate::film::marks::TEXT_STROKE_PER_CAP * cap_mm
}

/// A closed axis-aligned rectangle.
pub(crate) fn rect_shape(x0: f64, y0: f64, x1: f64, y1: f64) -> Shape {
    Shape::Polygon(Contour::from_points(&[
        Point::new(x0, y0),
        Point::new(x1, y0),
        Point::new(x1, y1),
        Point::new(x0, y1),
    ]))
}
