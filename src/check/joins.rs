//! Gaps that close entirely: copper pieces that are separate in the design but one piece on
//! the film.
//!
//! A gap narrower than a film pixel, or one that the edge growth fills, leaves no clear pixel,
//! so the closing of the film's copper sees nothing. Instead the design's connectivity is
//! compared with the film's:
//!
//! 1. **Design pieces.** Two objects belong to one piece when they share a pixel centre of
//!    the film's grid (a Clear object drawn between them may erase it): a point inside both
//!    shapes, so they overlap in the design. Objects that only come within a pixel of each
//!    other stay separate, whichever way the grid falls — that is what finds sub-pixel gaps.
//!    The drawn geometry settles most pairs (`pieces.rs`); the pairs it leaves open are
//!    painted at the film's pixels in the window where their boxes meet: the renderer's spans
//!    there only (`crate::raster::design_window`), painted in order into runs that remember
//!    which object painted each pixel last.
//! 2. **Contacts.** Two pieces can only be joined by the film where they come within the
//!    growth's reach, which is where a pair left open lies: there, the nearest pair of their
//!    pixels.
//! 3. **Joins.** Where the film is copper all the way across between those two pixels, the
//!    pieces are one on the film; that is the place reported.
//! 4. **Design gap.** The exact distance between the drawn shapes of the two pieces near that
//!    place, from their outlines (arcs as chords within 0.1 µm). Pieces that touch or overlap
//!    in the design (distance 0, pixels adjacent) are joined on purpose and not reported;
//!    when the outlines overlap but clear pixels separated the pieces, a Clear object cut
//!    them apart and the pixel distance stands in for the gap.
//!
//! A piece that a Clear object cuts in two counts as one piece here (its halves share their
//! object): a clearance that closes is the "clearance lost" check's business.

use super::area::Area;
use super::pieces::{seg_distance2, sure_pieces};
use super::{finding, FilmInput, Finding, FindingKind};
use crate::image::{Bounds, LayerImage, Point, Polarity};
use crate::raster::{design_window, Bitmap, DeviceMap};
use crate::vector::flatten::Flattener;
use crate::vector::Pt;
use rayon::prelude::*;
use std::collections::HashMap;

/// Pairs of joined pieces examined at most per film (the nearest first).
const MAX_PAIRS: usize = 2_000;
/// Design distances below this are touching, mm.
const TOUCHING_MM: f64 = 0.001;
/// Arc tolerance of the outlines used for the exact design gap, mm.
const OUTLINE_TOLERANCE_MM: f64 = 1e-4;

/// The nearest pixels of two joined pieces: squared distance (mm²) and both pixels.
type Contact = (f64, (u32, u32), (u32, u32));

/// Gaps between separately drawn copper that the film closes entirely (`material`: the film's
/// copper, crop pixels).
pub(super) fn closed_gaps(
    input: &FilmInput<'_>,
    material: &Bitmap,
    area: &Area,
    min_gap_mm: f64,
) -> Vec<Finding> {
    let Some(image) = input.image else {
        return Vec::new();
    };
    if !input.recipe.dark_is_material || image.objects.is_empty() {
        return Vec::new();
    }
    let (w, h) = (material.width(), material.height());
    // The growth's reach: a gap up to twice the growth plus a pixel can close.
    let growth_mm = if input.recipe.black_is_material {
        input.recipe.edge_offset_um
    } else {
        -input.recipe.edge_offset_um
    } / 1000.0;
    let px = area.pixel_mm();
    let reach_mm = 2.0 * growth_mm.max(0.0) + 2.0 * px;

    // 1. Design pieces. What the drawn geometry settles: pieces that surely share pixels,
    // and the close pairs of pieces left open (`pieces.rs`). No open pair: nothing can be
    // joined.
    let mut sure = sure_pieces(&image.objects, reach_mm, input.map);
    if sure.open.is_empty() {
        return Vec::new();
    }
    // Open pairs that share a pixel after all: paint the window where their boxes meet,
    // with the objects reaching it. Every pair painted there shares a pixel, so the sets
    // stay within the design's pieces.
    let bounds: Vec<Bounds> = image.objects.iter().map(|o| o.shape.bounds()).collect();
    let pairs: Vec<(u32, u32)> = sure
        .open
        .par_iter()
        .flat_map_iter(|(_, _, ga, gb)| {
            let ((y0, y1), (x0, x1)) = window_px(input.map, &meet(ga, gb), 1);
            let near = near_objects(&bounds, input.map, (y0, y1), (x0, x1));
            let spans = design_window(&image.objects, &near, input.map, (y0, y1), (x0, x1));
            spans.overlaps_on_rows(&[(y0, y1)])
        })
        .collect();
    for (a, b) in pairs {
        sure.union(a, b);
    }
    sure.settle();
    if sure.open.is_empty() {
        return Vec::new();
    }
    // The sets are now the design's pieces: every pair of objects that shares a pixel is in
    // one set (surely, or painted above), and two pieces come within reach of each other
    // only where an open pair does.
    let n = image.objects.len() as u32;
    let piece: Vec<u32> = (0..n).map(|i| sure.find(i)).collect();

    // 2.–3. The nearest pixels of every two pieces left open, within reach: the runs of a
    // window around each open pair, painted with their objects.
    let r = (reach_mm / area.mm_x.min(area.mm_y)).ceil() as i64;
    let reach2 = reach_mm * reach_mm;
    let crop = (area.x0 as i64, area.y0 as i64, w as i64, h as i64);
    let found: Vec<((u32, u32), Contact)> = sure
        .open
        .par_iter()
        .filter_map(|(a, b, ga, gb)| {
            let (pa, pb) = (piece[*a as usize], piece[*b as usize]);
            let window = (input.map, &meet(ga, gb), r, crop);
            nearest_pixels(image, &bounds, window, &piece, (pa, pb), area)
                .filter(|c| c.0 <= reach2)
                .map(|c| ((pa.min(pb), pa.max(pb)), c))
        })
        .collect();
    let mut contacts: HashMap<(u32, u32), Contact> = HashMap::new();
    for (k, c) in found {
        let e = contacts.entry(k).or_insert(c);
        if c.0 < e.0 || (c.0 == e.0 && (c.1, c.2) < (e.1, e.2)) {
            *e = c;
        }
    }
    let mut contacts: Vec<((u32, u32), Contact)> = contacts.into_iter().collect();
    contacts.sort_by(|a, b| a.1 .0.total_cmp(&b.1 .0).then(a.0.cmp(&b.0)));
    contacts.truncate(MAX_PAIRS);

    // 4. The design gap at each contact where the film is copper all the way across.
    let fl = Flattener::board_mm(OUTLINE_TOLERANCE_MM);
    let mut objects_of: HashMap<u32, Vec<usize>> = HashMap::new();
    for &((pa, pb), _) in &contacts {
        objects_of.entry(pa).or_default();
        objects_of.entry(pb).or_default();
    }
    for (i, o) in image.objects.iter().enumerate() {
        if o.polarity == Polarity::Dark {
            if let Some(v) = objects_of.get_mut(&piece[i]) {
                v.push(i);
            }
        }
    }
    let found: Vec<Finding> = contacts
        .par_iter()
        .filter_map(|&((pa, pb), (d2, p1, p2))| {
            if !bridged(material, p1, p2) {
                return None;
            }
            let c = |p: (u32, u32)| area.to_mm(p.0 as f64 + 0.5, p.1 as f64 + 0.5);
            let (m1, m2) = (c(p1), c(p2));
            let mid = Point::new(0.5 * (m1.x + m2.x), 0.5 * (m1.y + m2.y));
            let near = Bounds {
                min_x: mid.x - reach_mm - px,
                min_y: mid.y - reach_mm - px,
                max_x: mid.x + reach_mm + px,
                max_y: mid.y + reach_mm + px,
            };
            let outline = |want: u32| -> Vec<[Pt; 2]> {
                let mut edges = Vec::new();
                for &i in objects_of.get(&want).map_or(&[][..], |v| &v[..]) {
                    if !bounds[i].intersects(&near) {
                        continue;
                    }
                    for ring in fl.rings(&image.objects[i].shape) {
                        for k in 0..ring.len() {
                            let e = [ring[k], ring[(k + 1) % ring.len()]];
                            if edge_near(&e, &near) {
                                edges.push(e);
                            }
                        }
                    }
                }
                edges
            };
            let (ea, eb) = (outline(pa), outline(pb));
            let exact = nearest(&ea, &eb);
            let pixels_apart = d2.sqrt() > 1.5 * px;
            let (gap, at) = match exact {
                Some((g, a, b)) if g >= TOUCHING_MM => {
                    (g, Point::new(0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])))
                }
                // Outlines overlap, yet clear pixels lay between: a Clear object cut them.
                _ if pixels_apart => ((d2.sqrt() - px).max(0.0), mid),
                _ => return None,
            };
            let e = gap.max(px);
            let mut f = finding(
                input,
                FindingKind::CopperJoined,
                at,
                gap,
                min_gap_mm,
                [e, e],
                Some(gap),
            );
            f.drawn_mm = Some(gap);
            Some(f)
        })
        .collect();
    found
}

/// The objects (by index, in drawing order) whose boxes (`bounds`) come within a pixel of
/// the film window (rows, columns).
fn near_objects(
    bounds: &[Bounds],
    map: &DeviceMap,
    rows: (usize, usize),
    cols: (usize, usize),
) -> Vec<u32> {
    let a = map.to_mm(cols.0 as f64 - 1.0, rows.0 as f64 - 1.0);
    let b = map.to_mm(cols.1 as f64 + 1.0, rows.1 as f64 + 1.0);
    let window = Bounds {
        min_x: a.x.min(b.x),
        min_y: a.y.min(b.y),
        max_x: a.x.max(b.x),
        max_y: a.y.max(b.y),
    };
    (0..bounds.len() as u32)
        .filter(|&i| bounds[i as usize].intersects(&window))
        .collect()
}

/// Where two boxes overlap.
fn meet(a: &Bounds, b: &Bounds) -> Bounds {
    Bounds {
        min_x: a.min_x.max(b.min_x),
        min_y: a.min_y.max(b.min_y),
        max_x: a.max_x.min(b.max_x),
        max_y: a.max_y.min(b.max_y),
    }
}

/// The film pixels (rows, columns; half-open, within the film) of the box `b`, `grow` more
/// each way.
fn window_px(map: &DeviceMap, b: &Bounds, grow: i64) -> ((usize, usize), (usize, usize)) {
    let (ax, ay) = map.to_px(Point::new(b.min_x, b.min_y));
    let (bx, by) = map.to_px(Point::new(b.max_x, b.max_y));
    let clamp = |v: i64, hi: usize| v.clamp(0, hi as i64) as usize;
    let x0 = clamp(ax.min(bx).floor() as i64 - grow, map.width);
    let x1 = clamp(ax.max(bx).ceil() as i64 + grow + 1, map.width);
    let y0 = clamp(ay.min(by).floor() as i64 - grow, map.height);
    let y1 = clamp(ay.max(by).ceil() as i64 + grow + 1, map.height);
    ((y0, y1), (x0, x1))
}

/// The nearest pixels of pieces `pa` and `pb` (`piece` maps objects to pieces) around `meet`
/// (board mm, the two objects' grown boxes' overlap), `r` pixels beyond it, within the
/// checked area `crop` (film pixels: x0, y0, width, height): the squared distance in mm and
/// the two pixels in crop coordinates, the lower-numbered piece's first. `bounds` are the
/// objects' boxes.
fn nearest_pixels(
    image: &LayerImage,
    bounds: &[Bounds],
    (map, meet, r, crop): (&DeviceMap, &Bounds, i64, (i64, i64, i64, i64)),
    piece: &[u32],
    (pa, pb): (u32, u32),
    area: &Area,
) -> Option<Contact> {
    let (ax, ay) = map.to_px(Point::new(meet.min_x, meet.min_y));
    let (bx, by) = map.to_px(Point::new(meet.max_x, meet.max_y));
    let x0 = (ax.min(bx).floor() as i64 - r - 1).max(crop.0);
    let x1 = (ax.max(bx).ceil() as i64 + r + 1).min(crop.0 + crop.2);
    let y0 = (ay.min(by).floor() as i64 - r - 1).max(crop.1);
    let y1 = (ay.max(by).ceil() as i64 + r + 1).min(crop.1 + crop.3);
    if x0 >= x1 || y0 >= y1 {
        return None;
    }
    let (rows_px, cols_px) = ((y0 as usize, y1 as usize), (x0 as usize, x1 as usize));
    let near = near_objects(bounds, map, rows_px, cols_px);
    let spans = design_window(&image.objects, &near, map, rows_px, cols_px);
    let rows = spans.window_runs(
        x0 as usize,
        y0 as usize,
        (x1 - x0) as usize,
        (y1 - y0) as usize,
    );
    let (lo, hi) = (pa.min(pb), pa.max(pb));
    let of = |row: &[(u32, u32, u32)], want: u32| -> Vec<(u32, u32)> {
        row.iter()
            .filter(|q| piece[q.2 as usize] == want)
            .map(|q| (q.0, q.1))
            .collect()
    };
    let lows: Vec<Vec<(u32, u32)>> = rows.iter().map(|row| of(row, lo)).collect();
    let highs: Vec<Vec<(u32, u32)>> = rows.iter().map(|row| of(row, hi)).collect();
    let mut best: Option<Contact> = None;
    for (y, row) in lows.iter().enumerate() {
        for &(a, b) in row {
            let ys = y.saturating_sub(r as usize)..(y + r as usize + 1).min(highs.len());
            for (ny, other) in highs[ys.clone()]
                .iter()
                .enumerate()
                .map(|(k, o)| (ys.start + k, o))
            {
                let dy = (ny as f64 - y as f64) * area.mm_y;
                for &(c, d) in other {
                    // The nearest columns of [a, b) and [c, d).
                    let (px, qx) = if b <= c {
                        (b - 1, c)
                    } else if d <= a {
                        (a, d - 1)
                    } else {
                        let x = a.max(c);
                        (x, x)
                    };
                    let dx = (f64::from(qx) - f64::from(px)) * area.mm_x;
                    let d2 = dx * dx + dy * dy;
                    let at = |x: u32, y: usize| {
                        (
                            (x as i64 + x0 - crop.0) as u32,
                            (y as i64 + y0 - crop.1) as u32,
                        )
                    };
                    let c = (d2, at(px, y), at(qx, ny));
                    if best.is_none_or(|e| c.0 < e.0 || (c.0 == e.0 && (c.1, c.2) < (e.1, e.2))) {
                        best = Some(c);
                    }
                }
            }
        }
    }
    best
}

/// Whether the film is copper along the segment between the centres of two pixels.
fn bridged(material: &Bitmap, p: (u32, u32), q: (u32, u32)) -> bool {
    let (dx, dy) = (q.0 as f64 - p.0 as f64, q.1 as f64 - p.1 as f64);
    let steps = (2.0 * dx.abs().max(dy.abs())).ceil().max(1.0) as usize;
    (0..=steps).all(|i| {
        let t = i as f64 / steps as f64;
        let x = (p.0 as f64 + 0.5 + t * dx).floor() as usize;
        let y = (p.1 as f64 + 0.5 + t * dy).floor() as usize;
        x < material.width() && y < material.height() && material.get(x, y)
    })
}

fn edge_near(e: &[Pt; 2], b: &Bounds) -> bool {
    let (x0, x1) = (e[0][0].min(e[1][0]), e[0][0].max(e[1][0]));
    let (y0, y1) = (e[0][1].min(e[1][1]), e[0][1].max(e[1][1]));
    x0 <= b.max_x && b.min_x <= x1 && y0 <= b.max_y && b.min_y <= y1
}

/// The nearest points of two edge sets and their distance (0 when edges cross).
fn nearest(a: &[[Pt; 2]], b: &[[Pt; 2]]) -> Option<(f64, Pt, Pt)> {
    let mut best: Option<(f64, Pt, Pt)> = None;
    for ea in a {
        for eb in b {
            let (d, p, q) = segment_distance(ea, eb);
            if best.is_none_or(|x| d < x.0) {
                best = Some((d, p, q));
            }
        }
    }
    best
}

/// Distance between two edges and the points realizing it (0 where they cross).
fn segment_distance(a: &[Pt; 2], b: &[Pt; 2]) -> (f64, Pt, Pt) {
    let pt = |p: Pt| Point::new(p[0], p[1]);
    let (d2, p, q) = seg_distance2(pt(a[0]), pt(a[1]), pt(b[0]), pt(b[1]));
    (d2.sqrt(), [p.x, p.y], [q.x, q.y])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn segment_distances() {
        // Parallel unit segments 0.3 apart; crossing segments; a T at distance 0.5.
        let a = [[0.0, 0.0], [1.0, 0.0]];
        assert!((segment_distance(&a, &[[0.0, 0.3], [1.0, 0.3]]).0 - 0.3).abs() < 1e-12);
        assert_eq!(segment_distance(&a, &[[0.5, -1.0], [0.5, 1.0]]).0, 0.0);
        let (d, p, q) = segment_distance(&a, &[[0.5, 0.5], [0.5, 2.0]]);
        assert!((d - 0.5).abs() < 1e-12 && p == [0.5, 0.0] && q == [0.5, 0.5]);
    }
}
