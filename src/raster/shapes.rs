//! Shapes prepared for scanning, and their exact row intersections.
//!
//! Each object is prepared once (in board mm) into a form that answers one question fast:
//! which pixel centres of row `j` lie inside? Discs, straight round-pen strokes (capsules)
//! and arc strokes are answered analytically (exact up to floating point); polygon contours
//! are flattened (arcs to chords within 1/16 pixel) and scanned with the non-zero winding
//! rule. The answer is a list of pixel spans of the *unmirrored* film (mirroring is applied
//! when painting).

use super::device::{DeviceMap, Grid};
use super::spans::{self, Span};
use crate::image::{arc_sweep, Point, Segment, Shape};

/// Rows per bucket of a polygon's edge index.
const EDGE_BUCKET_ROWS: usize = 16;

/// Most chords one arc of a polygon contour is flattened into. At 2400 dpi and 1/16 pixel
/// tolerance a full circle of 1 m radius needs about 2,700; the cap only stops absurd radii
/// from exhausting memory (the shape is then drawn coarser, never wrong in topology).
const MAX_ARC_CHORDS: usize = 65_536;

/// One straight polygon edge, in board mm, not horizontal.
#[derive(Debug, Clone, Copy)]
struct Edge {
    x0: f64,
    y0: f64,
    /// dx/dy along the edge.
    slope: f64,
    y_min: f64,
    y_max: f64,
    /// +1 when the edge goes up (y increasing), −1 when down.
    winding: i32,
}

/// A polygon ready for scanning: edges plus an index of which edges touch which rows.
#[derive(Debug, Clone)]
pub(crate) struct PolygonScan {
    edges: Vec<Edge>,
    first_row: usize,
    /// `buckets[k]` lists the edges touching rows `first_row + k·EDGE_BUCKET_ROWS ..` (+16).
    buckets: Vec<Vec<u32>>,
}

/// A primitive ready for row queries. Coordinates in board mm.
#[derive(Debug, Clone)]
pub(crate) enum Prim {
    Disc {
        c: Point,
        r: f64,
    },
    /// Points within `h` of the segment a–b (a round pen swept along a line).
    Capsule {
        a: Point,
        b: Point,
        h: f64,
        /// Unit direction a→b and length.
        ux: f64,
        uy: f64,
        len: f64,
    },
    /// Points within `h` of a circular arc: the ring sector between the arc's end rays
    /// plus a disc at each end (round caps).
    Arc {
        c: Point,
        r: f64,
        h: f64,
        /// Unit directions of the counter-clockwise start and end rays.
        d0: (f64, f64),
        d1: (f64, f64),
        /// Sweep ≤ π: the sector is the intersection of two half-planes, else their union.
        convex: bool,
        /// A full ring: no sector limits, no caps.
        full: bool,
        p0: Point,
        p1: Point,
    },
    Polygon(PolygonScan),
}

/// A prepared shape: a primitive or a composite of parts (true = add, false = subtract).
#[derive(Debug, Clone)]
pub(crate) enum Node {
    Prim(Prim),
    Group(Vec<(bool, Node)>),
}

/// Reusable per-band working memory.
#[derive(Default)]
pub(crate) struct Scratch {
    mm: Vec<(f64, f64)>,
    crossings: Vec<(f64, i32)>,
    pool: Vec<Vec<Span>>,
}

impl Scratch {
    fn take(&mut self) -> Vec<Span> {
        let mut v = self.pool.pop().unwrap_or_default();
        v.clear();
        v
    }
    fn give(&mut self, v: Vec<Span>) {
        self.pool.push(v);
    }
}

fn unit(dx: f64, dy: f64) -> (f64, f64) {
    let l = dx.hypot(dy);
    if l > 0.0 {
        (dx / l, dy / l)
    } else {
        (1.0, 0.0)
    }
}

/// Prepares a shape for `map`. `None` when it can paint nothing (zero width or diameter:
/// under the pixel-centre rule a zero-area shape covers no centre).
pub(crate) fn prepare(shape: &Shape, map: &DeviceMap) -> Option<Node> {
    match shape {
        Shape::Disc { center, diameter } => (*diameter > 0.0).then(|| {
            Node::Prim(Prim::Disc {
                c: *center,
                r: diameter / 2.0,
            })
        }),
        Shape::Stroke {
            start,
            end,
            arc,
            width,
        } => {
            let h = width / 2.0;
            if h <= 0.0 {
                return None;
            }
            Some(Node::Prim(match arc {
                None => capsule(*start, *end, h),
                Some((c, turn)) => {
                    let r = c.dist(*start);
                    if r < 1e-9 {
                        capsule(*start, *end, h)
                    } else {
                        let sweep = arc_sweep(*start, *end, *c, *turn);
                        // Describe every arc counter-clockwise: a clockwise arc from s to e
                        // covers the same points as a counter-clockwise one from e to s.
                        let (p0, p1, s) = if sweep >= 0.0 {
                            (*start, *end, sweep)
                        } else {
                            (*end, *start, -sweep)
                        };
                        Prim::Arc {
                            c: *c,
                            r,
                            h,
                            d0: unit(p0.x - c.x, p0.y - c.y),
                            d1: unit(p1.x - c.x, p1.y - c.y),
                            convex: s <= std::f64::consts::PI,
                            full: s >= std::f64::consts::TAU - 1e-12,
                            p0,
                            p1,
                        }
                    }
                }
            }))
        }
        Shape::Polygon(contour) => {
            let pts = flatten(contour.start, &contour.segments, map);
            polygon_scan(&pts, map).map(|p| Node::Prim(Prim::Polygon(p)))
        }
        Shape::Composite(parts) => {
            let nodes: Vec<(bool, Node)> = parts
                .iter()
                .filter_map(|(add, s)| prepare(s, map).map(|n| (*add, n)))
                .collect();
            nodes
                .iter()
                .any(|(add, _)| *add)
                .then_some(Node::Group(nodes))
        }
    }
}

fn capsule(a: Point, b: Point, h: f64) -> Prim {
    let len = a.dist(b);
    if len < 1e-12 {
        return Prim::Disc { c: a, r: h };
    }
    let (ux, uy) = ((b.x - a.x) / len, (b.y - a.y) / len);
    Prim::Capsule {
        a,
        b,
        h,
        ux,
        uy,
        len,
    }
}

/// The contour as a closed vertex list, arcs replaced by chords that stay within 1/16 of
/// the smaller pixel pitch of the true arc. Interior chord vertices sit half a sagitta
/// outside the circle so the chords straddle the arc and the area error averages out.
fn flatten(start: Point, segments: &[Segment], map: &DeviceMap) -> Vec<Point> {
    let tol = (1.0 / map.px_per_mm_x()).min(1.0 / map.px_per_mm_y()) / 16.0;
    let mut pts = vec![start];
    let mut cur = start;
    for seg in segments {
        match *seg {
            Segment::Line { to } => pts.push(to),
            Segment::Arc { to, center, turn } => {
                let r = center.dist(cur);
                let sweep = arc_sweep(cur, to, center, turn);
                let max_step = if tol < r {
                    2.0 * (1.0 - tol / r).acos()
                } else {
                    std::f64::consts::FRAC_PI_2
                };
                let n = ((sweep.abs() / max_step).ceil() as usize).clamp(1, MAX_ARC_CHORDS);
                let step = sweep / n as f64;
                let sagitta = r * (1.0 - (step / 2.0).cos());
                let rv = r + sagitta / 2.0;
                let a0 = (cur.y - center.y).atan2(cur.x - center.x);
                for k in 1..n {
                    let a = a0 + step * k as f64;
                    pts.push(Point::new(center.x + rv * a.cos(), center.y + rv * a.sin()));
                }
                pts.push(to);
            }
        }
        cur = seg.end();
    }
    pts
}

fn polygon_scan(pts: &[Point], map: &DeviceMap) -> Option<PolygonScan> {
    let mut edges = Vec::with_capacity(pts.len());
    let n = pts.len();
    for i in 0..n {
        let (p, q) = (pts[i], pts[(i + 1) % n]);
        if p.y == q.y {
            continue; // horizontal edges never cross a row's centre line
        }
        let (lo, hi) = if p.y < q.y { (p, q) } else { (q, p) };
        edges.push(Edge {
            x0: lo.x,
            y0: lo.y,
            slope: (hi.x - lo.x) / (hi.y - lo.y),
            y_min: lo.y,
            y_max: hi.y,
            winding: if q.y > p.y { 1 } else { -1 },
        });
    }
    if edges.is_empty() {
        return None;
    }
    let y_min = edges.iter().map(|e| e.y_min).fold(f64::INFINITY, f64::min);
    let y_max = edges
        .iter()
        .map(|e| e.y_max)
        .fold(f64::NEG_INFINITY, f64::max);
    let (first_row, end_row) = map.rows_touching(y_min, y_max)?;
    let nb = (end_row - first_row).div_ceil(EDGE_BUCKET_ROWS);
    let mut buckets = vec![Vec::new(); nb];
    for (i, e) in edges.iter().enumerate() {
        if let Some((r0, r1)) = map.rows_touching(e.y_min, e.y_max) {
            let b0 = (r0.max(first_row) - first_row) / EDGE_BUCKET_ROWS;
            let b1 = (r1.min(end_row).max(first_row + 1) - 1 - first_row) / EDGE_BUCKET_ROWS;
            let b1 = b1.min(nb - 1);
            if b0 <= b1 {
                for b in &mut buckets[b0..=b1] {
                    b.push(i as u32);
                }
            }
        }
    }
    Some(PolygonScan {
        edges,
        first_row,
        buckets,
    })
}

/// Restricts `[lo, hi]` to the x where `alpha·x <= beta` (one half-plane on a row).
#[inline]
fn clip_half_plane(lo: &mut f64, hi: &mut f64, alpha: f64, beta: f64) {
    if alpha > 0.0 {
        *hi = hi.min(beta / alpha);
    } else if alpha < 0.0 {
        *lo = lo.max(beta / alpha);
    } else if beta < 0.0 {
        *lo = f64::INFINITY;
    }
}

/// The x-interval of a disc on the line y = `y` (open; empty when the line misses it).
#[inline]
fn disc_row(c: Point, r: f64, y: f64) -> Option<(f64, f64)> {
    let dy = y - c.y;
    let q = r * r - dy * dy;
    (q > 0.0).then(|| {
        let h = q.sqrt();
        (c.x - h, c.x + h)
    })
}

impl Prim {
    /// Appends the board-x intervals of this primitive on the line y = `y` (may overlap).
    fn row_intervals(
        &self,
        y: f64,
        out: &mut Vec<(f64, f64)>,
        crossings: &mut Vec<(f64, i32)>,
        row: usize,
    ) {
        match self {
            Prim::Disc { c, r } => out.extend(disc_row(*c, *r, y)),
            Prim::Capsule {
                a,
                b,
                h,
                ux,
                uy,
                len,
            } => {
                // Convex, so the union of its three convex pieces on a row is their hull.
                let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
                for (l, r) in disc_row(*a, *h, y).into_iter().chain(disc_row(*b, *h, y)) {
                    lo = lo.min(l);
                    hi = hi.max(r);
                }
                let dy = y - a.y;
                let (mut rl, mut rh) = (f64::NEG_INFINITY, f64::INFINITY);
                clip_half_plane(&mut rl, &mut rh, -ux, uy * dy - ux * a.x);
                clip_half_plane(&mut rl, &mut rh, *ux, len - uy * dy + ux * a.x);
                clip_half_plane(&mut rl, &mut rh, -uy, h - ux * dy - uy * a.x);
                clip_half_plane(&mut rl, &mut rh, *uy, h + ux * dy + uy * a.x);
                if rl < rh {
                    lo = lo.min(rl);
                    hi = hi.max(rh);
                }
                if lo < hi {
                    out.push((lo, hi));
                }
            }
            Prim::Arc {
                c,
                r,
                h,
                d0,
                d1,
                convex,
                full,
                p0,
                p1,
            } => arc_row(*c, *r, *h, *d0, *d1, *convex, *full, (*p0, *p1), y, out),
            Prim::Polygon(scan) => polygon_row(scan, y, row, out, crossings),
        }
    }
}

#[allow(clippy::too_many_arguments)]
fn arc_row(
    c: Point,
    r: f64,
    h: f64,
    d0: (f64, f64),
    d1: (f64, f64),
    convex: bool,
    full: bool,
    caps: (Point, Point),
    y: f64,
    out: &mut Vec<(f64, f64)>,
) {
    // A point is within h of the arc iff it lies in the sector and its distance from the
    // centre is within h of r, or it is within h of an end point: outside the sector the
    // nearest arc point is an end point (distance to a circle point grows with the angle).
    let Some((ol, oh)) = disc_row(c, r + h, y) else {
        return;
    };
    let mut ring = [(ol, oh), (0.0, 0.0)];
    let mut nring = 1;
    if r > h {
        if let Some((il, ih)) = disc_row(c, r - h, y) {
            ring = [(ol, il), (ih, oh)];
            nring = 2;
        }
    }
    if full {
        out.extend_from_slice(&ring[..nring]);
        return;
    }
    let dy = y - c.y;
    // Half-plane "left of the start ray": cross(d0, p − c) >= 0  ⇔  d0y·x <= d0x·dy + d0y·cx.
    let h0 = (d0.1, d0.0 * dy + d0.1 * c.x);
    // Half-plane "right of the end ray": cross(d1, p − c) <= 0  ⇔  −d1y·x <= −d1x·dy − d1y·cx.
    let h1 = (-d1.1, -d1.0 * dy - d1.1 * c.x);
    let half = |(alpha, beta): (f64, f64)| {
        let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
        clip_half_plane(&mut lo, &mut hi, alpha, beta);
        (lo, hi)
    };
    let mut sector = [(0.0, 0.0); 2];
    let nsector = if convex {
        let (a, b) = (half(h0), half(h1));
        sector[0] = (a.0.max(b.0), a.1.min(b.1));
        1
    } else {
        sector = [half(h0), half(h1)];
        2
    };
    for &(rl, rh) in &ring[..nring] {
        for &(sl, sh) in &sector[..nsector] {
            let (lo, hi) = (rl.max(sl), rh.min(sh));
            if lo < hi {
                out.push((lo, hi));
            }
        }
    }
    out.extend(disc_row(caps.0, h, y));
    out.extend(disc_row(caps.1, h, y));
}

fn polygon_row(
    scan: &PolygonScan,
    y: f64,
    row: usize,
    out: &mut Vec<(f64, f64)>,
    crossings: &mut Vec<(f64, i32)>,
) {
    if row < scan.first_row {
        return;
    }
    let Some(bucket) = scan.buckets.get((row - scan.first_row) / EDGE_BUCKET_ROWS) else {
        return;
    };
    crossings.clear();
    for &i in bucket {
        let e = &scan.edges[i as usize];
        // Half-open in y so a vertex shared by two edges is counted once.
        if e.y_min <= y && y < e.y_max {
            let x = e.x0 + (y - e.y0) * e.slope;
            if !x.is_nan() {
                crossings.push((x, e.winding));
            }
        }
    }
    crossings.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
    let mut winding = 0;
    let mut span_start = 0.0;
    for &(x, w) in crossings.iter() {
        let before = winding;
        winding += w;
        if before == 0 && winding != 0 {
            span_start = x;
        } else if before != 0 && winding == 0 {
            out.push((span_start, x));
        }
    }
}

/// The pixel spans (unmirrored columns, normalized) of `node` on row `row`.
pub(crate) fn node_spans(
    node: &Node,
    grid: &Grid,
    row: usize,
    y: f64,
    scratch: &mut Scratch,
    out: &mut Vec<Span>,
) {
    out.clear();
    match node {
        Node::Prim(p) => {
            let mut mm = std::mem::take(&mut scratch.mm);
            mm.clear();
            p.row_intervals(y, &mut mm, &mut scratch.crossings, row);
            for &(lo, hi) in &mm {
                let (x0, x1) = grid.columns(lo, hi);
                if x0 < x1 {
                    out.push((x0, x1));
                }
            }
            scratch.mm = mm;
            if out.len() > 1 {
                spans::normalize(out);
            }
        }
        Node::Group(parts) => {
            let mut part = scratch.take();
            let mut tmp = scratch.take();
            for (add, n) in parts {
                node_spans(n, grid, row, y, scratch, &mut part);
                if *add {
                    spans::union(out, &part, &mut tmp);
                } else {
                    spans::difference(out, &part, &mut tmp);
                }
                std::mem::swap(out, &mut tmp);
            }
            scratch.give(part);
            scratch.give(tmp);
        }
    }
}
