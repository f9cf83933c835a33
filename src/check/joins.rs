//! Gaps that close entirely: copper pieces that are separate in the design but one piece on
//! the film.
//!
//! A gap narrower than a film pixel, or one that the edge growth fills, leaves no clear pixel,
//! so the closing of the film's copper sees nothing. Instead the design's connectivity is
//! compared with the film's:
//!
//! 1. **Design pieces.** The layer's objects painted in order at the film's pixel grid into
//!    runs that remember which object painted each pixel last (Clear objects erase;
//!    `crate::raster::DesignRuns`, from the spans recorded while the film was rendered).
//!    Two objects belong to one piece when they share a pixel centre: a point inside both
//!    shapes, so they overlap in the design. Objects that only come within a pixel of each
//!    other stay separate, whichever way the grid falls — that is what finds sub-pixel gaps.
//! 2. **Film pieces.** The film's copper components (union-find over pixel runs).
//! 3. **Joins.** Design pieces whose pixels fall into one film component are joined on the
//!    film. Where two of them come closest (the nearest pair of their pixels within the
//!    growth's reach) the film must be copper all the way across; that is the place reported.
//! 4. **Design gap.** The exact distance between the drawn shapes of the two pieces near that
//!    place, from their outlines (arcs as chords within 0.1 µm). Pieces that touch or overlap
//!    in the design (distance 0, pixels adjacent) are joined on purpose and not reported;
//!    when the outlines overlap but clear pixels separated the pieces, a Clear object cut
//!    them apart and the pixel distance stands in for the gap.
//!
//! A piece that a Clear object cuts in two counts as one piece here (its halves share their
//! object): a clearance that closes is the "clearance lost" check's business.

use super::area::Area;
use super::measure::Labels;
use super::{finding, FilmInput, Finding, FindingKind};
use crate::image::{Bounds, Point, Polarity};
use crate::raster::{render_with_design, Bitmap, DeviceMap, RenderOptions};
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

struct Uf(Vec<u32>);

impl Uf {
    fn find(&mut self, mut i: u32) -> u32 {
        while self.0[i as usize] != i {
            let g = self.0[self.0[i as usize] as usize];
            self.0[i as usize] = g;
            i = g;
        }
        i
    }
    fn union(&mut self, a: u32, b: u32) {
        let (ra, rb) = (self.find(a), self.find(b));
        if ra != rb {
            self.0[ra.max(rb) as usize] = ra.min(rb);
        }
    }
}

/// Appends to `out` the parts of `[x0, x1)` not covered by runs of `row` whose object's piece
/// is `want`.
fn uncovered(
    row: &[(u32, u32, u32)],
    piece: &[u32],
    want: u32,
    x0: u32,
    x1: u32,
    out: &mut Vec<u32>,
) {
    let mut x = x0;
    let start = row.partition_point(|r| r.1 <= x0);
    for &(a, b, o) in &row[start..] {
        if b <= x || piece[o as usize] != want {
            continue;
        }
        if a >= x1 {
            break;
        }
        if a > x {
            out.extend(x..a.min(x1));
        }
        x = x.max(b);
        if x >= x1 {
            break;
        }
    }
    if x < x1 {
        out.extend(x..x1);
    }
}

/// The nearest pixels of two joined pieces: squared distance (mm²) and both pixels.
type Contact = (f64, (u32, u32), (u32, u32));

/// Gaps between separately drawn copper that the film closes entirely. `labels` are the
/// film copper's components (`material`, crop pixels).
pub(super) fn closed_gaps(
    input: &FilmInput<'_>,
    material: &Bitmap,
    labels: &Labels,
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

    // 1. Design pieces: objects painted in order, joined where they share a pixel. The films
    // job keeps the layer's spans from rendering the film; otherwise they are rendered
    // again. Only the checked area's runs are kept, in crop columns.
    let rendered;
    let spans = match input.design {
        Some(spans) => spans,
        None => {
            rendered = render_with_design(&image.objects, input.map, &RenderOptions::default()).1;
            &rendered
        }
    };
    let rows = spans.runs_in(area.x0, area.y0, w, h);
    let n = image.objects.len() as u32;
    let mut uf = Uf((0..n).collect());
    for &(a, b) in &rows.overlaps {
        uf.union(a, b);
    }
    let piece: Vec<u32> = (0..n).map(|i| uf.find(i)).collect();

    // 2.–3. Which film components each piece's pixels fall into (indexed by piece root).
    let mut film_of: Vec<Vec<u32>> = vec![Vec::new(); n as usize];
    for y in 0..h {
        let row = rows.row(y);
        for &(a, b, o) in row {
            if let Some(l) = labels.first_in(y, a as usize, b as usize) {
                let v = &mut film_of[piece[o as usize] as usize];
                if !v.contains(&l) {
                    v.push(l);
                }
            }
        }
    }
    // Only pieces sharing a film component with another piece can be joined.
    let mut pieces_in: HashMap<u32, Vec<u32>> = HashMap::new();
    for (p, ls) in film_of.iter().enumerate() {
        for &l in ls {
            pieces_in.entry(l).or_default().push(p as u32);
        }
    }
    pieces_in.retain(|_, v| v.len() >= 2);
    if pieces_in.is_empty() {
        return Vec::new();
    }
    // The nearest pixels of two pieces are found from either side: search from the piece
    // with fewer runs (a pour joined to one track is never walked along). `rank` orders
    // the pieces by size; a piece searches for joined pieces of higher rank.
    let mut run_count = vec![0u32; n as usize];
    for y in 0..h {
        let row = rows.row(y);
        for &(_, _, o) in row {
            run_count[piece[o as usize] as usize] += 1;
        }
    }
    let rank = |p: u32| (run_count[p as usize], p);
    let mut joined = vec![false; n as usize];
    let mut searches = vec![false; n as usize];
    for ps in pieces_in.values() {
        let top = ps.iter().copied().max_by_key(|&p| rank(p));
        for &p in ps {
            joined[p as usize] = true;
            searches[p as usize] |= Some(p) != top;
        }
    }
    let shares = |a: u32, b: u32| {
        let y = &film_of[b as usize];
        film_of[a as usize].iter().any(|l| y.contains(l))
    };

    // The growth's reach: a gap up to twice the growth plus a pixel can close.
    let growth_mm = if input.recipe.black_is_material {
        input.recipe.edge_offset_um
    } else {
        -input.recipe.edge_offset_um
    } / 1000.0;
    let px = area.pixel_mm();
    let reach_mm = 2.0 * growth_mm.max(0.0) + 2.0 * px;
    let r = (reach_mm / area.mm_x.min(area.mm_y)).ceil() as i64;
    let reach2 = reach_mm * reach_mm;

    // The nearest pixel pair of every two joined pieces.
    let contacts: HashMap<(u32, u32), Contact> = (0..h)
        .into_par_iter()
        .fold(
            || (HashMap::new(), Vec::new()),
            |(mut best, mut edge): (HashMap<(u32, u32), Contact>, Vec<u32>), y| {
                for &(a, b, o) in rows.row(y) {
                    let pa = piece[o as usize];
                    if !searches[pa as usize] {
                        continue;
                    }
                    // Most runs of a joined piece have no other joined piece within reach:
                    // skip them before looking at their pixels one by one.
                    let (lo, hi) = (a as i64 - r, b as i64 - 1 + r);
                    let other_near = ((y as i64 - r).max(0)..=(y as i64 + r).min(h as i64 - 1))
                        .any(|ny| {
                            let near = rows.row(ny as usize);
                            let start = near.partition_point(|q| (q.1 as i64) <= lo);
                            near[start..]
                                .iter()
                                .take_while(|q| q.0 as i64 <= hi)
                                .any(|q| {
                                    let pb = piece[q.2 as usize];
                                    joined[pb as usize] && rank(pb) > rank(pa)
                                })
                        });
                    if !other_near {
                        continue;
                    }
                    // The piece's edge pixels in this run: its ends, and what no run of the
                    // same piece covers above or below.
                    edge.clear();
                    edge.extend([a, b - 1]);
                    if y > 0 {
                        uncovered(rows.row(y - 1), &piece, pa, a, b, &mut edge);
                    }
                    if y + 1 < h {
                        uncovered(rows.row(y + 1), &piece, pa, a, b, &mut edge);
                    }
                    edge.sort_unstable();
                    edge.dedup();
                    for &x in &edge {
                        for ny in (y as i64 - r).max(0)..=(y as i64 + r).min(h as i64 - 1) {
                            let dy = (ny - y as i64) as f64 * area.mm_y;
                            let near = rows.row(ny as usize);
                            let start = near.partition_point(|q| (q.1 as i64) <= x as i64 - r);
                            for &(c, d, q) in &near[start..] {
                                if c as i64 > x as i64 + r {
                                    break;
                                }
                                let pb = piece[q as usize];
                                if !joined[pb as usize] || rank(pb) <= rank(pa) || !shares(pa, pb) {
                                    continue;
                                }
                                let qx = (x.clamp(c, d - 1)) as i64;
                                let dx = (qx - x as i64) as f64 * area.mm_x;
                                let d2 = dx * dx + dy * dy;
                                if d2 > reach2 {
                                    continue;
                                }
                                let key = (pa.min(pb), pa.max(pb));
                                let (p1, p2) = if pa < pb {
                                    ((x, y as u32), (qx as u32, ny as u32))
                                } else {
                                    ((qx as u32, ny as u32), (x, y as u32))
                                };
                                let e = best.entry(key).or_insert((f64::INFINITY, p1, p2));
                                if d2 < e.0 {
                                    *e = (d2, p1, p2);
                                }
                            }
                        }
                    }
                }
                (best, edge)
            },
        )
        .map(|(best, _)| best)
        .reduce(HashMap::new, |mut a, b| {
            for (k, v) in b {
                let e = a.entry(k).or_insert(v);
                if v.0 < e.0 {
                    *e = v;
                }
            }
            a
        });
    let mut contacts: Vec<((u32, u32), Contact)> = contacts.into_iter().collect();
    contacts.sort_by(|a, b| a.1 .0.total_cmp(&b.1 .0).then(a.0.cmp(&b.0)));
    contacts.truncate(MAX_PAIRS);

    // 4. The design gap at each contact where the film is copper all the way across.
    let fl = Flattener::new(
        &DeviceMap::new(Point::new(0.0, 0.0), 0, 0, 25.4, 25.4),
        OUTLINE_TOLERANCE_MM,
    );
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
    let bounds: Vec<Bounds> = image.objects.iter().map(|o| o.shape.bounds()).collect();
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
                    if !overlaps(&bounds[i], &near) {
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

fn overlaps(a: &Bounds, b: &Bounds) -> bool {
    a.min_x <= b.max_x && b.min_x <= a.max_x && a.min_y <= b.max_y && b.min_y <= a.max_y
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

/// Closest point of segment `s` to point `p`.
fn closest_on(s: &[Pt; 2], p: Pt) -> Pt {
    let (dx, dy) = (s[1][0] - s[0][0], s[1][1] - s[0][1]);
    let l2 = dx * dx + dy * dy;
    let t = if l2 > 0.0 {
        (((p[0] - s[0][0]) * dx + (p[1] - s[0][1]) * dy) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    [s[0][0] + t * dx, s[0][1] + t * dy]
}

fn cross(o: Pt, a: Pt, b: Pt) -> f64 {
    (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])
}

/// Distance between two segments (elementary geometry: 0 when they cross, else the least of
/// the four endpoint-to-segment distances) and the points realizing it.
fn segment_distance(a: &[Pt; 2], b: &[Pt; 2]) -> (f64, Pt, Pt) {
    let (d1, d2) = (cross(b[0], b[1], a[0]), cross(b[0], b[1], a[1]));
    let (d3, d4) = (cross(a[0], a[1], b[0]), cross(a[0], a[1], b[1]));
    if d1 * d2 < 0.0 && d3 * d4 < 0.0 {
        return (0.0, a[0], a[0]);
    }
    let mut best = (f64::INFINITY, a[0], b[0]);
    for (p, s, from_a) in [
        (a[0], b, true),
        (a[1], b, true),
        (b[0], a, false),
        (b[1], a, false),
    ] {
        let q = closest_on(s, p);
        let d = (p[0] - q[0]).hypot(p[1] - q[1]);
        if d < best.0 {
            best = if from_a { (d, p, q) } else { (d, q, p) };
        }
    }
    best
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
