//! A deliberately naive rasterizer for film-mark tests: a pixel is dark when its centre lies
//! within half the pen width of a stroke (the pixel-centre rule of docs/architecture.md), or
//! inside a polygon (non-zero winding, arcs flattened). It is independent of the real
//! rasterizer on purpose and only as fast as small test images need.

#![allow(dead_code)]

use umbra::image::{arc_sweep, Point, Segment, Shape};

/// A 1-bit image, row 0 at the top; `true` is dark.
pub struct Bitmap {
    pub width: usize,
    pub height: usize,
    pub dark: Vec<bool>,
    /// Board mm of the top-left corner of the image, and mm per pixel.
    pub origin_x: f64,
    pub top_y: f64,
    pub pixel_mm: f64,
}

impl Bitmap {
    pub fn get(&self, col: usize, row: usize) -> bool {
        self.dark[row * self.width + col]
    }
    fn centre(&self, col: usize, row: usize) -> Point {
        Point::new(
            self.origin_x + (col as f64 + 0.5) * self.pixel_mm,
            self.top_y - (row as f64 + 0.5) * self.pixel_mm,
        )
    }
    /// Number of light regions not connected to the image border (holes, counters),
    /// using 4-connectivity for light pixels.
    pub fn enclosed_light_regions(&self) -> usize {
        let mut seen = vec![false; self.dark.len()];
        let mut holes = 0;
        for start in 0..self.dark.len() {
            if self.dark[start] || seen[start] {
                continue;
            }
            let mut touches_border = false;
            let mut stack = vec![start];
            seen[start] = true;
            while let Some(i) = stack.pop() {
                let (c, r) = (i % self.width, i / self.width);
                if c == 0 || r == 0 || c + 1 == self.width || r + 1 == self.height {
                    touches_border = true;
                }
                let mut push = |j: usize| {
                    if !self.dark[j] && !seen[j] {
                        seen[j] = true;
                        stack.push(j);
                    }
                };
                if c > 0 {
                    push(i - 1);
                }
                if c + 1 < self.width {
                    push(i + 1);
                }
                if r > 0 {
                    push(i - self.width);
                }
                if r + 1 < self.height {
                    push(i + self.width);
                }
            }
            if !touches_border {
                holes += 1;
            }
        }
        holes
    }

    /// Number of dark regions (8-connected): separate marks on the film.
    pub fn dark_regions(&self) -> usize {
        let mut seen = vec![false; self.dark.len()];
        let mut regions = 0;
        for start in 0..self.dark.len() {
            if !self.dark[start] || seen[start] {
                continue;
            }
            regions += 1;
            let mut stack = vec![start];
            seen[start] = true;
            while let Some(i) = stack.pop() {
                let (c, r) = ((i % self.width) as i64, (i / self.width) as i64);
                for (dc, dr) in [
                    (-1, -1),
                    (0, -1),
                    (1, -1),
                    (-1, 0),
                    (1, 0),
                    (-1, 1),
                    (0, 1),
                    (1, 1),
                ] {
                    let (nc, nr) = (c + dc, r + dr);
                    if nc < 0 || nr < 0 || nc >= self.width as i64 || nr >= self.height as i64 {
                        continue;
                    }
                    let j = nr as usize * self.width + nc as usize;
                    if self.dark[j] && !seen[j] {
                        seen[j] = true;
                        stack.push(j);
                    }
                }
            }
        }
        regions
    }

    pub fn write_png(&self, path: &std::path::Path) {
        let file = std::fs::File::create(path).expect("create png");
        let mut enc = png::Encoder::new(
            std::io::BufWriter::new(file),
            self.width as u32,
            self.height as u32,
        );
        enc.set_color(png::ColorType::Grayscale);
        enc.set_depth(png::BitDepth::Eight);
        let mut w = enc.write_header().expect("png header");
        let data: Vec<u8> = self.dark.iter().map(|&d| if d { 0 } else { 255 }).collect();
        w.write_image_data(&data).expect("png data");
    }
}

fn dist_to_segment(p: Point, a: Point, b: Point) -> f64 {
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let len2 = dx * dx + dy * dy;
    let t = if len2 == 0.0 {
        0.0
    } else {
        (((p.x - a.x) * dx + (p.y - a.y) * dy) / len2).clamp(0.0, 1.0)
    };
    p.dist(Point::new(a.x + t * dx, a.y + t * dy))
}

/// Points along an arc, every 2 degrees.
fn flatten_arc(from: Point, to: Point, center: Point, turn: umbra::image::Turn) -> Vec<Point> {
    let sweep = arc_sweep(from, to, center, turn);
    let r = center.dist(from);
    let a0 = (from.y - center.y).atan2(from.x - center.x);
    let n = (sweep.abs().to_degrees() / 2.0).ceil().max(1.0) as usize;
    (1..=n)
        .map(|k| {
            let a = a0 + sweep * k as f64 / n as f64;
            Point::new(center.x + r * a.cos(), center.y + r * a.sin())
        })
        .collect()
}

fn winding(p: Point, poly: &[Point]) -> i32 {
    let mut w = 0;
    for i in 0..poly.len() {
        let (a, b) = (poly[i], poly[(i + 1) % poly.len()]);
        let cross = (b.x - a.x) * (p.y - a.y) - (p.x - a.x) * (b.y - a.y);
        if a.y <= p.y && b.y > p.y && cross > 0.0 {
            w += 1;
        } else if a.y > p.y && b.y <= p.y && cross < 0.0 {
            w -= 1;
        }
    }
    w
}

/// Whether the pixel centre `p` is inside `shape`.
fn covers(shape: &Shape, p: Point) -> bool {
    match shape {
        Shape::Disc { center, diameter } => p.dist(*center) <= diameter / 2.0,
        Shape::Stroke {
            start,
            end,
            arc,
            width,
        } => match arc {
            None => dist_to_segment(p, *start, *end) <= width / 2.0,
            Some((c, turn)) => {
                let mut prev = *start;
                flatten_arc(*start, *end, *c, *turn).into_iter().any(|q| {
                    let hit = dist_to_segment(p, prev, q) <= width / 2.0;
                    prev = q;
                    hit
                })
            }
        },
        Shape::Polygon(contour) => {
            let mut pts = vec![contour.start];
            let mut cur = contour.start;
            for s in &contour.segments {
                match *s {
                    Segment::Line { to } => pts.push(to),
                    Segment::Arc { to, center, turn } => {
                        pts.extend(flatten_arc(cur, to, center, turn))
                    }
                }
                cur = s.end();
            }
            winding(p, &pts) != 0
        }
        Shape::Composite(parts) => {
            let mut inside = false;
            for (add, s) in parts {
                if covers(s, p) {
                    inside = *add;
                }
            }
            inside
        }
    }
}

/// Rasterizes dark `shapes` at `dpi`, over their bounds plus `pad_mm`.
pub fn rasterize(shapes: &[Shape], dpi: f64, pad_mm: f64) -> Bitmap {
    let mut b = umbra::image::Bounds::EMPTY;
    for s in shapes {
        b.union(&s.bounds());
    }
    let b = b.grown(pad_mm);
    let pixel_mm = 25.4 / dpi;
    let width = (b.width() / pixel_mm).ceil() as usize;
    let height = (b.height() / pixel_mm).ceil() as usize;
    let mut bm = Bitmap {
        width,
        height,
        dark: vec![false; width * height],
        origin_x: b.min_x,
        top_y: b.max_y,
        pixel_mm,
    };
    for s in shapes {
        let sb = s.bounds();
        let c0 = (((sb.min_x - bm.origin_x) / pixel_mm).floor().max(0.0)) as usize;
        let c1 = ((((sb.max_x - bm.origin_x) / pixel_mm).ceil()) as usize).min(width);
        let r0 = (((bm.top_y - sb.max_y) / pixel_mm).floor().max(0.0)) as usize;
        let r1 = ((((bm.top_y - sb.min_y) / pixel_mm).ceil()) as usize).min(height);
        for r in r0..r1 {
            for c in c0..c1 {
                if !bm.dark[r * width + c] && covers(s, bm.centre(c, r)) {
                    bm.dark[r * width + c] = true;
                }
            }
        }
    }
    bm
}
