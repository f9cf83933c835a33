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
use super::design::{DesignSpans, PaintOp};
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
    /// Position in the object list.
    index: u32,
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
    let prepare_one = |(i, o): (usize, &Object)| prepare_object(o, map, i as u32);
    let prepared: Vec<Prepared> = if opts.parallel {
        objects
            .par_iter()
            .enumerate()
            .filter_map(prepare_one)
            .collect()
    } else {
        objects.iter().enumerate().filter_map(prepare_one).collect()
    };

    let nbands = map.height.div_ceil(band_rows);
    let mut bands: Vec<Vec<u32>> = vec![Vec::new(); nbands];
    for (i, p) in prepared.iter().enumerate() {
        for band in &mut bands[p.rows.0 / band_rows..=(p.rows.1 - 1) / band_rows] {
            band.push(i as u32);
        }
    }

    let wpr = bitmap.words_per_row();
    let paint = |work: &mut BandWork, (b, chunk): (usize, &mut [u64])| {
        paint_band(chunk, b * band_rows, wpr, &bands[b], &prepared, map, work)
    };
    let words = bitmap.words_mut();
    if opts.parallel {
        words
            .par_chunks_mut(wpr * band_rows)
            .enumerate()
            .for_each_init(BandWork::default, paint);
    } else {
        let mut work = BandWork::default();
        words
            .chunks_mut(wpr * band_rows)
            .enumerate()
            .for_each(|band| paint(&mut work, band));
    }
    bitmap
}

/// The spans [`render`] paints for the layer, per row in drawing order ([`DesignSpans`]:
/// which object each dark pixel shows, once painted into runs), in one window of the film:
/// rows `rows.0..rows.1`, spans cut to columns `cols.0..cols.1`; every other row is empty.
/// `candidates` (indices into `objects`, in drawing order) must hold every object reaching
/// the window; only those that do are prepared and painted, so a small window of a large
/// layer costs little.
pub fn design_window(
    objects: &[Object],
    candidates: &[u32],
    map: &DeviceMap,
    rows: (usize, usize),
    cols: (usize, usize),
) -> DesignSpans {
    let (r0, r1) = (rows.0.min(map.height), rows.1.min(map.height));
    let (c0, c1) = cols;
    let prepared: Vec<Prepared> = candidates
        .par_iter()
        .filter_map(|&i| {
            let o = &objects[i as usize];
            let b = o.shape.bounds();
            let (o0, o1) = map.rows_touching(b.min_y - 1e-9, b.max_y + 1e-9)?;
            // The object's columns, a column more each way (mirrored like its spans).
            let (x0, x1) = map.columns(b.min_x - 1e-9, b.max_x + 1e-9);
            let (x0, x1) = if map.mirror {
                (map.width.saturating_sub(x1), map.width.saturating_sub(x0))
            } else {
                (x0, x1)
            };
            if o1 <= r0 || o0 >= r1 || x1 + 1 < c0 || x0 > c1 + 1 {
                return None;
            }
            prepare_object(o, map, i)
        })
        .collect();
    let mut scratch = Scratch::default();
    let mut spans = Vec::new();
    let mut ops = Vec::new();
    let grid = map.grid();
    let mut design = DesignSpans::default();
    for row in 0..map.height {
        ops.clear();
        if (r0..r1).contains(&row) {
            let y = grid.row_center_y(row);
            for p in prepared
                .iter()
                .filter(|p| p.rows.0 <= row && row < p.rows.1)
            {
                shapes::node_spans(&p.node, &grid, row, y, &mut scratch, &mut spans);
                for &(x0, x1) in spans.iter() {
                    let (a, b) = if map.mirror {
                        (map.width - x1, map.width - x0)
                    } else {
                        (x0, x1)
                    };
                    let (a, b) = (a.max(c0), b.min(c1));
                    if a < b {
                        ops.push(PaintOp::new(a as u32, b as u32, p.index, p.dark));
                    }
                }
            }
        }
        design.push_row(&ops);
    }
    design
}

fn prepare_object(o: &Object, map: &DeviceMap, index: u32) -> Option<Prepared> {
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
        index,
        dark: o.polarity == Polarity::Dark,
        node,
        rows,
    })
}

/// Working memory of one thread's bands, kept from band to band.
#[derive(Default)]
struct BandWork {
    scratch: Scratch,
    spans: Vec<Span>,
}

/// Paints one band's rows.
fn paint_band(
    chunk: &mut [u64],
    first_row: usize,
    wpr: usize,
    list: &[u32],
    prepared: &[Prepared],
    map: &DeviceMap,
    work: &mut BandWork,
) {
    let rows_here = chunk.len() / wpr;
    let end_row = first_row + rows_here;
    let BandWork { scratch, spans } = work;
    let grid = map.grid();
    for &i in list {
        let p = &prepared[i as usize];
        for row in p.rows.0.max(first_row)..p.rows.1.min(end_row) {
            let y = grid.row_center_y(row);
            shapes::node_spans(&p.node, &grid, row, y, scratch, spans);
            let words = &mut chunk[(row - first_row) * wpr..(row - first_row + 1) * wpr];
            for &(x0, x1) in spans.iter() {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::image::{Contour, Point, Shape};

    #[test]
    fn design_runs_are_the_pixel_centres_inside_each_object() {
        // A disc of radius 1 mm on a 254 dpi grid (0.1 mm pixels, origin at 0): pixel (i, j)
        // is dark when its centre lies strictly inside, (x − cx)² + (y − cy)² < r² (the
        // circle's equation, elementary geometry). A square pad drawn after it over its right
        // part takes those pixels (x in [2.5, 3.5], y in [1.0, 2.0]); a clear square erases
        // x in [0.5, 1.2]. The bitmap and the runs agree with that, mirrored or not.
        let disc = Object {
            polarity: Polarity::Dark,
            shape: Shape::Disc {
                center: Point::new(2.03, 1.47),
                diameter: 2.0,
            },
        };
        let square = |x0: f64, x1: f64, y0: f64, y1: f64, polarity| Object {
            polarity,
            shape: Shape::Polygon(Contour::from_points(&[
                Point::new(x0, y0),
                Point::new(x1, y0),
                Point::new(x1, y1),
                Point::new(x0, y1),
            ])),
        };
        let objects = [
            disc,
            square(2.5, 3.5, 1.0, 2.0, Polarity::Dark),
            square(0.5, 1.2, 0.0, 3.0, Polarity::Clear),
        ];
        for mirror in [false, true] {
            let mut map = DeviceMap::new(Point::new(0.0, 0.0), 40, 30, 254.0, 254.0);
            map.mirror = mirror;
            let film = render_with(&objects, &map, &RenderOptions::serial());
            let every: Vec<u32> = (0..objects.len() as u32).collect();
            let spans = design_window(&objects, &every, &map, (0, map.height), (0, map.width));
            // Rows reaching beyond the film: those on it the same, every other row empty.
            let some = design_window(&objects, &every, &map, (20, 40), (0, map.width));
            assert_eq!(some.height(), map.height);
            for j in 0..map.height {
                let want: &[_] = if j >= 20 { spans.row(j) } else { &[] };
                assert_eq!(some.row(j), want, "row {j}");
            }
            // A window: its rows, each span cut to its columns, nothing elsewhere.
            let win = design_window(&objects, &every, &map, (5, 20), (10, 30));
            for j in 0..map.height {
                let want: Vec<PaintOp> = if (5..20).contains(&j) {
                    spans
                        .row(j)
                        .iter()
                        .filter(|op| op.x1 > 10 && op.x0 < 30)
                        .map(|op| {
                            PaintOp::new(op.x0.max(10), op.x1.min(30), op.object(), op.dark())
                        })
                        .collect()
                } else {
                    Vec::new()
                };
                assert_eq!(win.row(j), &want[..], "window row {j}");
            }
            let design = spans.window_runs(0, 0, map.width, map.height);
            assert_eq!(film, render_with(&objects, &map, &RenderOptions::default()));
            assert_eq!(design.len(), map.height);
            let mut dark = 0;
            for (j, row) in design.iter().enumerate() {
                let y = 0.1 * (map.height as f64 - j as f64 - 0.5);
                for c in 0..map.width {
                    let i = if mirror { map.width - 1 - c } else { c };
                    let x = 0.1 * (i as f64 + 0.5);
                    let in_disc = (x - 2.03).powi(2) + (y - 1.47).powi(2) < 1.0;
                    let in_pad = (2.5..=3.5).contains(&x) && (1.0..=2.0).contains(&y);
                    let erased = (0.5..=1.2).contains(&x);
                    let want = if erased {
                        None
                    } else if in_pad {
                        Some(1)
                    } else if in_disc {
                        Some(0)
                    } else {
                        None
                    };
                    let run = row.iter().find(|r| r.0 as usize <= c && c < r.1 as usize);
                    assert_eq!(run.map(|r| r.2), want, "pixel ({c}, {j}), mirror {mirror}");
                    assert_eq!(film.get(c, j), want.is_some(), "film pixel ({c}, {j})");
                    dark += want.is_some() as usize;
                }
            }
            // About π r² / (0.1 mm)² = 314 pixels, less the erased sliver (x 1.03–1.2, about
            // 9 pixels), plus the part of the 100-pixel pad beyond the disc (about 50).
            assert!((330..380).contains(&dark), "{dark}");
            // The pad shares pixels with the disc; the clear square joins nothing.
            let mut pairs = spans.overlaps_on_rows(&[(0, map.height)]);
            pairs.sort_unstable();
            pairs.dedup();
            assert_eq!(pairs, vec![(1, 0)]);
        }
    }
}
