//! The band rasterizer: objects in order → one 1-bit film.
//!
//! The film is cut into horizontal bands of `band_rows` rows. Each object is prepared once
//! (shared by all bands) and listed, in drawing order, under every band its bounding box
//! touches. Bands are then painted independently — in parallel with rayon, or one after the
//! other — straight into their rows of the output bitmap. A band's result depends only on its
//! own rows and the ordered object list, so parallel and serial runs are bit-identical.
//!
//! Memory: the 1-bit output, the prepared objects, the band lists and a few span vectors per
//! band. No 8-bit or RGBA canvas ever exists.

use super::bitmap::{fill_row_span, Bitmap};
use super::device::DeviceMap;
use super::shapes::{self, Node, Scratch};
use super::spans::Span;
use crate::image::{Object, Polarity};
use rayon::prelude::*;

/// How to run the rasterizer. Results never depend on these settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RenderOptions {
    /// Rows per band (at least 1). 128 rows of an A4 film at 2400 dpi is 1.3 MB of bitmap.
    pub band_rows: usize,
    /// Paint bands on rayon's thread pool (true) or on the calling thread (false).
    pub parallel: bool,
}

impl Default for RenderOptions {
    fn default() -> Self {
        RenderOptions {
            band_rows: 128,
            parallel: true,
        }
    }
}

impl RenderOptions {
    /// Single-threaded, for tests and for callers that parallelize across films instead.
    pub fn serial() -> RenderOptions {
        RenderOptions {
            parallel: false,
            ..RenderOptions::default()
        }
    }
}

struct Prepared {
    dark: bool,
    node: Node,
    /// Rows `first..end` that may contain pixels of the object.
    rows: (usize, usize),
}

/// Renders `objects` in order (Dark sets, Clear clears) onto a clear film described by
/// `map`. A pixel is dark when its centre is inside the shape; see `docs/rendering.md`.
///
/// # Guarantees
/// Never panics on any object: non-finite objects are skipped, everything is clipped to the
/// film, zero-width strokes and zero-diameter discs paint nothing.
pub fn render(objects: &[Object], map: &DeviceMap) -> Bitmap {
    render_with(objects, map, &RenderOptions::default())
}

/// [`render`] with explicit band size and threading.
pub fn render_with(objects: &[Object], map: &DeviceMap, opts: &RenderOptions) -> Bitmap {
    let mut bitmap = Bitmap::new(map.width, map.height);
    if map.width == 0 || map.height == 0 {
        return bitmap;
    }
    // At least one row, at most the film (also keeps `words_per_row × band_rows` small).
    let band_rows = opts.band_rows.clamp(1, map.height);
    let prepare_one = |o: &Object| prepare_object(o, map);
    let prepared: Vec<Prepared> = if opts.parallel {
        objects.par_iter().filter_map(prepare_one).collect()
    } else {
        objects.iter().filter_map(prepare_one).collect()
    };

    let nbands = map.height.div_ceil(band_rows);
    let mut bands: Vec<Vec<u32>> = vec![Vec::new(); nbands];
    for (i, p) in prepared.iter().enumerate() {
        for band in &mut bands[p.rows.0 / band_rows..=(p.rows.1 - 1) / band_rows] {
            band.push(i as u32);
        }
    }

    let wpr = bitmap.words_per_row();
    let paint = |(b, chunk): (usize, &mut [u64])| {
        paint_band(chunk, b * band_rows, wpr, &bands[b], &prepared, map);
    };
    let words = bitmap.words_mut();
    if opts.parallel {
        words
            .par_chunks_mut(wpr * band_rows)
            .enumerate()
            .for_each(paint);
    } else {
        words
            .chunks_mut(wpr * band_rows)
            .enumerate()
            .for_each(paint);
    }
    bitmap
}

fn prepare_object(o: &Object, map: &DeviceMap) -> Option<Prepared> {
    if !o.shape.is_finite() {
        return None;
    }
    let b = o.shape.bounds();
    if b.is_empty() {
        return None;
    }
    // A tiny margin so rounding in the bounds never drops a boundary pixel.
    let eps = 1e-9;
    let rows = map.rows_touching(b.min_y - eps, b.max_y + eps)?;
    let (c0, c1) = map.columns(b.min_x - eps, b.max_x + eps);
    if c0 >= c1 {
        return None;
    }
    let node = shapes::prepare(&o.shape, map)?;
    Some(Prepared {
        dark: o.polarity == Polarity::Dark,
        node,
        rows,
    })
}

fn paint_band(
    chunk: &mut [u64],
    first_row: usize,
    wpr: usize,
    list: &[u32],
    prepared: &[Prepared],
    map: &DeviceMap,
) {
    let rows_here = chunk.len() / wpr;
    let end_row = first_row + rows_here;
    let mut scratch = Scratch::default();
    let mut spans: Vec<Span> = Vec::new();
    let grid = map.grid();
    for &i in list {
        let p = &prepared[i as usize];
        for row in p.rows.0.max(first_row)..p.rows.1.min(end_row) {
            let y = grid.row_center_y(row);
            shapes::node_spans(&p.node, &grid, row, y, &mut scratch, &mut spans);
            let words = &mut chunk[(row - first_row) * wpr..(row - first_row + 1) * wpr];
            for &(x0, x1) in &spans {
                // Mirroring maps unmirrored column i to width − 1 − i, so span [x0, x1)
                // becomes [width − x1, width − x0): the mirrored film is exactly the
                // unmirrored one flipped.
                let (a, b) = if map.mirror {
                    (map.width - x1, map.width - x0)
                } else {
                    (x0, x1)
                };
                fill_row_span(words, a, b, p.dark);
            }
        }
    }
}

/// Objects prepared for row queries one at a time: each object's own pixel spans, not the
/// painted film. For the process check, which compares the drawn pieces of a layer with the
/// film (`crate::check`); it needs the pixels every object covers under the same pixel-centre
/// rule as [`render`], without a bitmap per object.
pub(crate) struct ObjectRows {
    grid: super::device::Grid,
    /// Per object (drawing order); `None` when it can paint nothing on the map.
    prepared: Vec<Option<Prepared>>,
}

/// Reusable working memory of [`ObjectRows::spans`] (one per thread).
#[derive(Default)]
pub(crate) struct SpanScratch(Scratch);

impl ObjectRows {
    /// Prepares every object for `map` (in parallel).
    pub(crate) fn new(objects: &[Object], map: &DeviceMap) -> ObjectRows {
        ObjectRows {
            grid: map.grid(),
            prepared: objects.par_iter().map(|o| prepare_object(o, map)).collect(),
        }
    }

    /// Rows `first..end` of the map that may hold pixels of object `i`, and whether it is
    /// dark; `None` when it paints nothing.
    pub(crate) fn rows(&self, i: usize) -> Option<((usize, usize), bool)> {
        self.prepared.get(i)?.as_ref().map(|p| (p.rows, p.dark))
    }

    /// The spans `[x0, x1)` of object `i` on `row`, in the map's *unmirrored* columns
    /// (sorted, disjoint, within the map). Empty outside [`Self::rows`].
    pub(crate) fn spans(&self, i: usize, row: usize, work: &mut SpanScratch, out: &mut Vec<Span>) {
        out.clear();
        let Some(Some(p)) = self.prepared.get(i) else {
            return;
        };
        if row < p.rows.0 || row >= p.rows.1 {
            return;
        }
        let y = self.grid.row_center_y(row);
        shapes::node_spans(&p.node, &self.grid, row, y, &mut work.0, out);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::image::{Point, Shape};

    #[test]
    fn object_spans_are_the_pixel_centres_inside_the_disc() {
        // A disc of radius 1 mm on a 254 dpi grid (0.1 mm pixels, origin at 0): pixel (i, j)
        // is dark when its centre lies strictly inside, (x − cx)² + (y − cy)² < r² (the
        // circle's equation, elementary geometry); the film rendered by `render` agrees.
        let map = DeviceMap::new(Point::new(0.0, 0.0), 40, 30, 254.0, 254.0);
        let disc = Object {
            polarity: Polarity::Dark,
            shape: Shape::Disc {
                center: Point::new(2.03, 1.47),
                diameter: 2.0,
            },
        };
        let rows = ObjectRows::new(std::slice::from_ref(&disc), &map);
        let film = render_with(std::slice::from_ref(&disc), &map, &RenderOptions::serial());
        let (mut work, mut spans) = (SpanScratch::default(), Vec::new());
        let mut dark = 0;
        for j in 0..map.height {
            rows.spans(0, j, &mut work, &mut spans);
            let y = 0.1 * (map.height as f64 - j as f64 - 0.5);
            for i in 0..map.width {
                let x = 0.1 * (i as f64 + 0.5);
                let inside = (x - 2.03).powi(2) + (y - 1.47).powi(2) < 1.0;
                let in_spans = spans.iter().any(|&(a, b)| a <= i && i < b);
                assert_eq!(in_spans, inside, "pixel ({i}, {j})");
                assert_eq!(film.get(i, j), inside, "film pixel ({i}, {j})");
                dark += inside as usize;
            }
        }
        // About π r² / (0.1 mm)² = 314 pixels.
        assert!((290..340).contains(&dark), "{dark}");
        assert_eq!(rows.rows(0).map(|r| r.1), Some(true));
        assert!(rows.rows(1).is_none());
    }
}
