//! Whether two separate pieces of a layer's copper come close enough anywhere for the film to
//! join them: a test on the drawn geometry that spares the closed-gap search nearly all its
//! pixel work.
//!
//! The closed-gap search (`joins.rs`) compares the design's pieces — objects that share a
//! pixel centre — with the film's copper. A join it reports always has two objects of
//! different pieces whose pixel centres lie within the growth's reach of each other, so the
//! drawn shapes come within that reach (plus the renderer's flattening tolerance). This
//! module looks at every pair of Dark objects that come that close:
//!
//! - A pair that *surely* shares a pixel centre is one piece: their overlap holds a disc
//!   wider than a pixel's diagonal (so a pixel centre lies in it on any grid), and no Clear
//!   object drawn between the two reaches that disc (a Clear object drawn later does not
//!   undo a shared pixel; one drawn in between may erase it).
//! - Every other close pair is *open*.
//!
//! The pieces found from sure pairs are never coarser than the pixel pieces, so two pixel
//! pieces can only come within reach where an open pair lies: the search paints a small
//! window around each open pair (and nothing when there is none). Shapes are compared as discs
//! and capsules (round pads, straight and arced tracks: exact up to the arc's flattening) or
//! as flattened outlines (polygons, macro pads); composites with a subtracted part are only
//! ever open.

use super::measure::{find, union};
use crate::image::{arc_sweep, Bounds, Object, Point, Polarity, Shape};
use crate::raster::DeviceMap;
use crate::vector::flatten::{chords_for, Flattener};

/// Sample points along a capsule's axis tried as witnesses inside a polygon, at most.
const AXIS_SAMPLES: usize = 16;
/// Most bands of a polygon's edge index.
const MAX_BANDS: usize = 4096;
/// Distances along a corner's bisector tried as witnesses (halving each time).
const CORNER_STEPS: u32 = 5;
/// Largest grid of cells for the pair search (cells per side, at most).
const MAX_CELLS_PER_SIDE: usize = 512;

/// One convex-ish part of an object: a capsule (points within `r` of the segment a–b; a disc
/// when a = b) or a flattened polygon contour (non-zero winding).
#[derive(Debug, Clone)]
enum Part {
    Capsule {
        a: Point,
        b: Point,
        /// The part surely covers points within `r_in` of the axis and nothing beyond `r_out`.
        r_in: f64,
        r_out: f64,
    },
    Poly {
        outline: Box<Outline>,
        /// How far the flattened contour may lie from the drawn one.
        tol: f64,
    },
}

/// A flattened contour with its edges indexed by horizontal bands, so that questions about
/// one place of a large pour look at the edges near it only.
#[derive(Debug, Clone)]
struct Outline {
    pts: Vec<Point>,
    bounds: Bounds,
    /// The vertices' average.
    average: Point,
    band_h: f64,
    /// Edges (by index of their first point) whose height range meets each band.
    bands: Vec<Vec<u32>>,
}

impl Outline {
    fn new(pts: Vec<Point>) -> Outline {
        let mut bounds = Bounds::EMPTY;
        for &p in &pts {
            bounds.add_point(p);
        }
        let n = pts.len();
        let count = (n / 4).clamp(1, MAX_BANDS);
        let band_h = (bounds.height() / count as f64).max(1e-9);
        let mut outline = Outline {
            average: average(&pts),
            pts,
            bounds,
            band_h,
            bands: vec![Vec::new(); count],
        };
        for i in 0..n {
            let (p, q) = outline.edge(i as u32);
            let (a, b) = (outline.band(p.y.min(q.y)), outline.band(p.y.max(q.y)));
            for band in &mut outline.bands[a..=b] {
                band.push(i as u32);
            }
        }
        outline
    }

    fn edge(&self, i: u32) -> (Point, Point) {
        let i = i as usize;
        (self.pts[i], self.pts[(i + 1) % self.pts.len()])
    }

    fn band(&self, y: f64) -> usize {
        (((y - self.bounds.min_y) / self.band_h).floor().max(0.0) as usize)
            .min(self.bands.len() - 1)
    }

    /// The edges (by index of their first point) that may come within heights `lo..=hi`
    /// (an edge may come more than once).
    fn edges_near(&self, lo: f64, hi: f64) -> impl Iterator<Item = u32> + '_ {
        let bands = if hi < self.bounds.min_y || lo > self.bounds.max_y {
            &[][..]
        } else {
            &self.bands[self.band(lo)..=self.band(hi)]
        };
        bands.iter().flatten().copied()
    }

    /// [`Self::edges_near`] as segments.
    fn near(&self, lo: f64, hi: f64) -> impl Iterator<Item = (Point, Point)> + '_ {
        self.edges_near(lo, hi).map(|i| self.edge(i))
    }

    /// Winding number about `c` (crossings of the ray to +x): the edges of `c`'s band hold
    /// every edge whose height range contains `c.y`.
    fn winding(&self, c: Point) -> i32 {
        if c.y < self.bounds.min_y || c.y > self.bounds.max_y {
            return 0;
        }
        let mut w = 0;
        for &i in &self.bands[self.band(c.y)] {
            let (p, q) = self.edge(i);
            if p.y <= c.y {
                if q.y > c.y && cross(p, q, c) > 0.0 {
                    w += 1;
                }
            } else if q.y <= c.y && cross(p, q, c) < 0.0 {
                w -= 1;
            }
        }
        w
    }

    /// When `c` is inside (non-zero winding): its distance to the contour, or `cap` when no
    /// edge is nearer.
    fn depth(&self, c: Point, cap: f64) -> Option<f64> {
        if self.winding(c) == 0 {
            return None;
        }
        let d2 = self
            .near(c.y - cap, c.y + cap)
            .map(|(p, q)| point_segment2(c, p, q))
            .fold(cap * cap, f64::min);
        Some(d2.sqrt())
    }

    /// Whether an edge comes within `limit` of the segment a–b.
    fn within(&self, a: Point, b: Point, limit: f64) -> bool {
        let l2 = limit * limit;
        self.near(a.y.min(b.y) - limit, a.y.max(b.y) + limit)
            .any(|(p, q)| seg_distance2_above(a, b, p, q, l2) <= l2)
    }
}

/// A Dark object as parts (their union), and whether the union is exactly the object.
struct Geom {
    index: u32,
    bounds: Bounds,
    parts: Vec<Part>,
    /// False for composites with a subtracted part: the parts then over-cover the object and
    /// serve for distances only.
    exact: bool,
}

/// The design's pieces as far as the drawn geometry tells, and the close pairs it leaves open.
pub(super) struct Pieces {
    /// Union-find over the objects (by index): objects in one set surely share pixels.
    parent: Vec<u32>,
    /// Close pairs of Dark objects in different sets: (earlier or later object, the other,
    /// and both objects' boxes grown by half the reach).
    pub open: Vec<(u32, u32, Bounds, Bounds)>,
}

impl Pieces {
    pub fn find(&mut self, i: u32) -> u32 {
        find(&mut self.parent, i)
    }

    pub fn union(&mut self, a: u32, b: u32) {
        union(&mut self.parent, a, b)
    }

    /// Drops the open pairs that have come to lie in one set.
    pub fn settle(&mut self) {
        let mut open = std::mem::take(&mut self.open);
        open.retain(|&(a, b, ..)| self.find(a) != self.find(b));
        self.open = open;
    }
}

/// The pieces of `objects` that surely share pixels on a film whose pixel grid is `map`'s,
/// and the pairs of pieces that come within `reach_mm` of each other without that certainty
/// (module docs). No open pair: no two pieces can be joined by the film.
pub(super) fn sure_pieces(objects: &[Object], reach_mm: f64, map: &DeviceMap) -> Pieces {
    let mm_x = 1.0 / map.px_per_mm_x();
    let mm_y = 1.0 / map.px_per_mm_y();
    // The renderer flattens polygon arcs within 1/16 pixel (raster::shapes); outlines here
    // within 1/32 pixel.
    let px = mm_x.max(mm_y);
    let render_tol = px / 16.0;
    let tol = px / 32.0;
    // A disc this wide holds a pixel centre of any grid of this pitch, with the renderer's
    // tolerance and rounding to spare.
    let need = 0.5 * mm_x.hypot(mm_y) + render_tol + 1e-6;
    let threshold = reach_mm + 2.0 * render_tol + 1e-6;

    let fl = Flattener::board_mm(tol);
    let mut dark: Vec<Geom> = Vec::new();
    let mut clear: Vec<(u32, Bounds)> = Vec::new();
    for (i, o) in objects.iter().enumerate() {
        let b = o.shape.bounds();
        if b.is_empty() || !o.shape.is_finite() {
            continue;
        }
        match o.polarity {
            Polarity::Clear => clear.push((i as u32, b)),
            Polarity::Dark => {
                let mut parts = Vec::new();
                let exact = parts_of(&o.shape, &fl, tol, &mut parts);
                if !parts.is_empty() {
                    dark.push(Geom {
                        index: i as u32,
                        bounds: b,
                        parts,
                        exact,
                    });
                }
            }
        }
    }
    if dark.len() < 2 {
        return Pieces {
            parent: (0..objects.len() as u32).collect(),
            open: Vec::new(),
        };
    }

    // A grid over the grown boxes: each pair is looked at in the one cell holding the corner
    // of their boxes' overlap.
    let grow = threshold / 2.0;
    let mut all = Bounds::EMPTY;
    for g in &dark {
        all.add_point(Point::new(g.bounds.min_x - grow, g.bounds.min_y - grow));
        all.add_point(Point::new(g.bounds.max_x + grow, g.bounds.max_y + grow));
    }
    let grid = Grid::new(&all, dark.len());
    let mut cells: Vec<Vec<u32>> = vec![Vec::new(); grid.nx * grid.ny];
    // Each object's grown box and its first cell (the cells are monotonic in x and y, so the
    // cell of two boxes' overlap corner is the larger of their first cells on each axis).
    let grown: Vec<Bounds> = dark.iter().map(|g| g.bounds.grown(grow)).collect();
    let mut first_cell: Vec<(u32, u32)> = Vec::with_capacity(dark.len());
    for (k, g) in dark.iter().enumerate() {
        let (x0, y0, x1, y1) = grid.cells_of(&g.bounds, grow);
        first_cell.push((x0 as u32, y0 as u32));
        for cy in y0..=y1 {
            for cx in x0..=x1 {
                cells[cy * grid.nx + cx].push(k as u32);
            }
        }
    }
    let mut clear_cells: Vec<Vec<u32>> = vec![Vec::new(); grid.nx * grid.ny];
    for (k, (_, b)) in clear.iter().enumerate() {
        let (x0, y0, x1, y1) = grid.cells_of(b, 0.0);
        for cy in y0..=y1 {
            for cx in x0..=x1 {
                clear_cells[cy * grid.nx + cx].push(k as u32);
            }
        }
    }
    // Whether a Clear object drawn between objects `lo` and `hi` reaches the disc.
    let cleared_between = |lo: u32, hi: u32, c: Point, r: f64| {
        let disc = Bounds {
            min_x: c.x - r,
            min_y: c.y - r,
            max_x: c.x + r,
            max_y: c.y + r,
        };
        let (x0, y0, x1, y1) = grid.cells_of(&disc, 0.0);
        (y0..=y1).any(|cy| {
            (x0..=x1).any(|cx| {
                clear_cells[cy * grid.nx + cx].iter().any(|&k| {
                    let (i, b) = &clear[k as usize];
                    lo < *i && *i < hi && b.intersects(&disc)
                })
            })
        })
    };

    let mut parent: Vec<u32> = (0..dark.len() as u32).collect();
    let mut open: Vec<(u32, u32)> = Vec::new();
    for (ci, members) in cells.iter().enumerate() {
        let (cx, cy) = ((ci % grid.nx) as u32, (ci / grid.nx) as u32);
        for (n, &ka) in members.iter().enumerate() {
            let (fa, ga) = (first_cell[ka as usize], &grown[ka as usize]);
            for &kb in &members[n + 1..] {
                // Only in the cell of the overlap's lower corner.
                let fb = first_cell[kb as usize];
                if fa.0.max(fb.0) != cx || fa.1.max(fb.1) != cy {
                    continue;
                }
                if !ga.intersects(&grown[kb as usize]) {
                    continue;
                }
                let (a, b) = (&dark[ka as usize], &dark[kb as usize]);
                // Already one piece: nothing to learn from this pair.
                if find(&mut parent, ka) == find(&mut parent, kb) {
                    continue;
                }
                let (first, later) = if a.index < b.index { (a, b) } else { (b, a) };
                if let Some((c, r)) = sure_overlap(first, later, need) {
                    if !cleared_between(first.index, later.index, c, r) {
                        union(&mut parent, ka, kb);
                        continue;
                    }
                }
                if close(a, b, threshold) {
                    open.push((ka, kb));
                }
            }
        }
    }
    let mut pieces = Pieces {
        parent: (0..objects.len() as u32).collect(),
        open: Vec::new(),
    };
    for (ka, kb) in open {
        let (a, b) = (&dark[ka as usize], &dark[kb as usize]);
        if find(&mut parent, ka) != find(&mut parent, kb) {
            pieces
                .open
                .push((a.index, b.index, a.bounds.grown(grow), b.bounds.grown(grow)));
        }
    }
    for (k, g) in dark.iter().enumerate() {
        let root = find(&mut parent, k as u32);
        pieces.union(g.index, dark[root as usize].index);
    }
    pieces
}

/// Splits `shape` into parts; returns whether their union is exactly the shape.
fn parts_of(shape: &Shape, fl: &Flattener, tol: f64, out: &mut Vec<Part>) -> bool {
    match shape {
        Shape::Disc { center, diameter } => {
            let r = diameter / 2.0;
            out.push(Part::Capsule {
                a: *center,
                b: *center,
                r_in: r,
                r_out: r,
            });
            true
        }
        Shape::Stroke {
            start,
            end,
            arc,
            width,
        } => {
            let r = width / 2.0;
            match arc {
                None => out.push(Part::Capsule {
                    a: *start,
                    b: *end,
                    r_in: r,
                    r_out: r,
                }),
                Some((center, turn)) => {
                    // The axis as chords, each within `tol` of the arc: capsules of radius
                    // r − tol lie inside the stroke, of r + tol cover it.
                    let radius = center.dist(*start);
                    let sweep = arc_sweep(*start, *end, *center, *turn);
                    let n = chords_for(radius, sweep, tol);
                    let a0 = (start.y - center.y).atan2(start.x - center.x);
                    let at = |k: usize| {
                        let t = a0 + sweep * k as f64 / n as f64;
                        Point::new(center.x + radius * t.cos(), center.y + radius * t.sin())
                    };
                    let mut prev = *start;
                    for k in 1..=n {
                        let p = if k == n && sweep.abs() < std::f64::consts::TAU {
                            *end
                        } else {
                            at(k)
                        };
                        out.push(Part::Capsule {
                            a: prev,
                            b: p,
                            r_in: (r - tol).max(0.0),
                            r_out: r + tol,
                        });
                        prev = p;
                    }
                }
            }
            true
        }
        Shape::Polygon(c) => {
            let pts = fl.contour(c);
            if pts.len() >= 3 {
                out.push(Part::Poly {
                    outline: Box::new(Outline::new(pts)),
                    tol,
                });
            }
            true
        }
        Shape::Composite(parts) => {
            let mut exact = true;
            for (add, p) in parts {
                if *add {
                    exact &= parts_of(p, fl, tol, out);
                } else {
                    exact = false;
                }
            }
            exact
        }
    }
}

/// A disc `(centre, radius)` of at least `need` radius inside both objects, if one is found.
fn sure_overlap(a: &Geom, b: &Geom, need: f64) -> Option<(Point, f64)> {
    if !a.exact || !b.exact {
        return None;
    }
    for pa in &a.parts {
        for pb in &b.parts {
            if let Some(d) = sure_part_overlap(pa, pb, need) {
                return Some(d);
            }
        }
    }
    None
}

fn sure_part_overlap(pa: &Part, pb: &Part, need: f64) -> Option<(Point, f64)> {
    match (pa, pb) {
        (
            &Part::Capsule {
                a: a0,
                b: a1,
                r_in: ra,
                ..
            },
            &Part::Capsule {
                a: b0,
                b: b1,
                r_in: rb,
                ..
            },
        ) => {
            if ra < need || rb < need {
                return None;
            }
            let (s2, p, q) = seg_distance2(a0, a1, b0, b1);
            let s = s2.sqrt();
            // Along the line from p to q, disc A covers [−ra, ra] and disc B [s − rb, s + rb]
            // (from p): the middle of the overlap with half its length as radius.
            let (lo, hi) = ((-ra).max(s - rb), ra.min(s + rb));
            let r = 0.5 * (hi - lo);
            if r < need {
                return None;
            }
            let t = 0.5 * (lo + hi);
            let c = if s > 0.0 {
                Point::new(p.x + (q.x - p.x) * t / s, p.y + (q.y - p.y) * t / s)
            } else {
                p
            };
            Some((c, r))
        }
        (Part::Capsule { a, b, r_in, .. }, Part::Poly { outline, tol })
        | (Part::Poly { outline, tol }, Part::Capsule { a, b, r_in, .. }) => {
            if *r_in < need {
                return None;
            }
            // Points of the axis within the polygon's box, evenly spread; then the polygon's
            // vertex average (a track or pad ending inside a pad).
            let (t0, t1) = clip_to_box(*a, *b, &outline.bounds)?;
            let on_axis = (0..=AXIS_SAMPLES).map(|k| {
                let t = t0 + (t1 - t0) * k as f64 / AXIS_SAMPLES as f64;
                Point::new(a.x + (b.x - a.x) * t, a.y + (b.y - a.y) * t)
            });
            // And points inside the polygon's corners that lie in the capsule: a track
            // crossing a pad's corner.
            let (lo, hi) = (a.y.min(b.y) - r_in, a.y.max(b.y) + r_in);
            let corners =
                inner_corner_points(outline, lo, hi, |v| point_segment2(v, *a, *b) < r_in * r_in);
            on_axis
                .chain([outline.average])
                .chain(corners)
                .find_map(|c| {
                    let inside_capsule = r_in - point_segment2(c, *a, *b).sqrt();
                    let r = (outline.depth(c, 2.0 * need + tol)? - tol).min(inside_capsule);
                    (r >= need).then_some((c, r))
                })
        }
        (
            Part::Poly {
                outline: pa,
                tol: ta,
            },
            Part::Poly {
                outline: pb,
                tol: tb,
            },
        ) => {
            // Each polygon's vertex average and the middle of the boxes' overlap, when deep
            // inside both.
            let (ba, bb) = (pa.bounds, pb.bounds);
            let mid = Point::new(
                0.5 * (ba.min_x.max(bb.min_x) + ba.max_x.min(bb.max_x)),
                0.5 * (ba.min_y.max(bb.min_y) + ba.max_y.min(bb.max_y)),
            );
            [pa.average, pb.average, mid].into_iter().find_map(|c| {
                let cap = 2.0 * need + ta.max(*tb);
                let r = (pa.depth(c, cap)? - ta).min(pb.depth(c, cap)? - tb);
                (r >= need).then_some((c, r))
            })
        }
    }
}

/// Points along the inner bisector of each convex corner `v` of the outline between heights
/// `lo` and `hi` with `near(v)`, at a few distances up to half the polygon's smaller side.
fn inner_corner_points<'a>(
    outline: &'a Outline,
    lo: f64,
    hi: f64,
    near: impl Fn(Point) -> bool + 'a,
) -> impl Iterator<Item = Point> + 'a {
    let b = outline.bounds;
    let reach = 0.5 * b.width().min(b.height());
    let pts = &outline.pts;
    let n = pts.len();
    outline
        .edges_near(lo, hi)
        .map(|i| i as usize)
        .filter(move |&i| near(pts[i]))
        .flat_map(move |i| {
            let v = pts[i];
            let unit = |p: Point| {
                let l = v.dist(p);
                if l > 0.0 {
                    ((p.x - v.x) / l, (p.y - v.y) / l)
                } else {
                    (0.0, 0.0)
                }
            };
            let (u, w) = (unit(pts[(i + n - 1) % n]), unit(pts[(i + 1) % n]));
            let (bx, by) = (u.0 + w.0, u.1 + w.1);
            let l = bx.hypot(by);
            (0..CORNER_STEPS).filter(move |_| l > 1e-9).map(move |k| {
                let d = reach / f64::from(1u32 << k);
                Point::new(v.x + bx / l * d, v.y + by / l * d)
            })
        })
}

/// The parameter range `[t0, t1]` of the segment a–b inside the box, if any (Liang–Barsky).
fn clip_to_box(a: Point, b: Point, bx: &Bounds) -> Option<(f64, f64)> {
    let (mut t0, mut t1) = (0.0f64, 1.0f64);
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    for (p, q) in [
        (-dx, a.x - bx.min_x),
        (dx, bx.max_x - a.x),
        (-dy, a.y - bx.min_y),
        (dy, bx.max_y - a.y),
    ] {
        if p == 0.0 {
            if q < 0.0 {
                return None;
            }
        } else {
            let r = q / p;
            if p < 0.0 {
                t0 = t0.max(r);
            } else {
                t1 = t1.min(r);
            }
        }
    }
    (t0 <= t1).then_some((t0, t1))
}

/// Whether two objects may come within `limit` of each other (surely not when false).
fn close(a: &Geom, b: &Geom, limit: f64) -> bool {
    a.parts
        .iter()
        .any(|pa| b.parts.iter().any(|pb| parts_close(pa, pb, limit)))
}

fn parts_close(pa: &Part, pb: &Part, limit: f64) -> bool {
    match (pa, pb) {
        (
            &Part::Capsule {
                a: a0,
                b: a1,
                r_out: ra,
                ..
            },
            &Part::Capsule {
                a: b0,
                b: b1,
                r_out: rb,
                ..
            },
        ) => seg_distance2(a0, a1, b0, b1).0 <= (limit + ra + rb).powi(2),
        (Part::Capsule { a, b, r_out, .. }, Part::Poly { outline, tol })
        | (Part::Poly { outline, tol }, Part::Capsule { a, b, r_out, .. }) => {
            outline.winding(*a) != 0 || outline.within(*a, *b, limit + r_out + tol)
        }
        (
            Part::Poly {
                outline: pa,
                tol: ta,
            },
            Part::Poly {
                outline: pb,
                tol: tb,
            },
        ) => {
            if pb.winding(pa.pts[0]) != 0 || pa.winding(pb.pts[0]) != 0 {
                return true;
            }
            let (small, large) = if pa.pts.len() <= pb.pts.len() {
                (pa, pb)
            } else {
                (pb, pa)
            };
            let l = limit + ta + tb;
            (0..small.pts.len() as u32).any(|i| {
                let (p, q) = small.edge(i);
                large.within(p, q, l)
            })
        }
    }
}

fn average(pts: &[Point]) -> Point {
    let n = pts.len() as f64;
    let (sx, sy) = pts.iter().fold((0.0, 0.0), |(x, y), p| (x + p.x, y + p.y));
    Point::new(sx / n, sy / n)
}

fn cross(o: Point, a: Point, b: Point) -> f64 {
    (a.x - o.x) * (b.y - o.y) - (a.y - o.y) * (b.x - o.x)
}

fn dist2(a: Point, b: Point) -> f64 {
    let (dx, dy) = (a.x - b.x, a.y - b.y);
    dx * dx + dy * dy
}

fn closest_on(p: Point, a: Point, b: Point) -> Point {
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let l2 = dx * dx + dy * dy;
    let t = if l2 > 0.0 {
        (((p.x - a.x) * dx + (p.y - a.y) * dy) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    Point::new(a.x + t * dx, a.y + t * dy)
}

/// Squared distance from `p` to the segment a–b.
fn point_segment2(p: Point, a: Point, b: Point) -> f64 {
    dist2(p, closest_on(p, a, b))
}

/// Squared distance between segments a0–a1 and b0–b1 and the points realizing it
/// (elementary geometry: 0 where they cross, else the least endpoint-to-segment distance).
pub(super) fn seg_distance2(a0: Point, a1: Point, b0: Point, b1: Point) -> (f64, Point, Point) {
    let (d1, d2) = (cross(b0, b1, a0), cross(b0, b1, a1));
    let (d3, d4) = (cross(a0, a1, b0), cross(a0, a1, b1));
    if d1 * d2 < 0.0 && d3 * d4 < 0.0 {
        // The crossing point.
        let t = d1 / (d1 - d2);
        let x = Point::new(a0.x + (a1.x - a0.x) * t, a0.y + (a1.y - a0.y) * t);
        return (0.0, x, x);
    }
    let mut best = (f64::INFINITY, a0, b0);
    for (p, s0, s1, from_a) in [
        (a0, b0, b1, true),
        (a1, b0, b1, true),
        (b0, a0, a1, false),
        (b1, a0, a1, false),
    ] {
        let q = closest_on(p, s0, s1);
        let d = dist2(p, q);
        if d < best.0 {
            best = if from_a { (d, p, q) } else { (d, q, p) };
        }
    }
    best
}

/// Squared distance between two segments, or at least `floor2` when their boxes are
/// farther apart than that.
fn seg_distance2_above(a0: Point, a1: Point, b0: Point, b1: Point, floor2: f64) -> f64 {
    let gx = (a0.x.min(a1.x) - b0.x.max(b1.x)).max(b0.x.min(b1.x) - a0.x.max(a1.x));
    let gy = (a0.y.min(a1.y) - b0.y.max(b1.y)).max(b0.y.min(b1.y) - a0.y.max(a1.y));
    let g2 = gx.max(0.0).powi(2) + gy.max(0.0).powi(2);
    if g2 >= floor2 {
        return g2;
    }
    seg_distance2(a0, a1, b0, b1).0
}

/// A uniform grid of square cells over a box.
struct Grid {
    x0: f64,
    y0: f64,
    cell: f64,
    nx: usize,
    ny: usize,
}

impl Grid {
    /// About four objects per cell (measured on the bench board: one per cell walks more
    /// pairs of cells that large objects share, sixteen more pairs of small objects that
    /// only share a cell), at most `MAX_CELLS_PER_SIDE` cells a side.
    fn new(b: &Bounds, objects: usize) -> Grid {
        let (w, h) = (b.width().max(1e-6), b.height().max(1e-6));
        let per_side = (0.5 * (objects as f64).sqrt()).clamp(1.0, MAX_CELLS_PER_SIDE as f64);
        let cell = (w.max(h) / per_side).max(1e-6);
        Grid {
            x0: b.min_x,
            y0: b.min_y,
            cell,
            nx: ((w / cell).ceil() as usize).clamp(1, 4 * MAX_CELLS_PER_SIDE),
            ny: ((h / cell).ceil() as usize).clamp(1, 4 * MAX_CELLS_PER_SIDE),
        }
    }

    fn cell_of(&self, p: Point) -> (usize, usize) {
        // Truncation is the floor for the non-negative values kept (and no libm call).
        let c = |v: f64, o: f64, n: usize| (((v - o) / self.cell).max(0.0) as usize).min(n - 1);
        (c(p.x, self.x0, self.nx), c(p.y, self.y0, self.ny))
    }

    /// Cells (x0, y0, x1, y1), inclusive, of a box grown by `grow`.
    fn cells_of(&self, b: &Bounds, grow: f64) -> (usize, usize, usize, usize) {
        let (x0, y0) = self.cell_of(Point::new(b.min_x - grow, b.min_y - grow));
        let (x1, y1) = self.cell_of(Point::new(b.max_x + grow, b.max_y + grow));
        (x0, y0, x1, y1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::image::{Contour, Turn};
    use crate::raster::design_window;

    /// Numbers in [0, 1) from a linear congruential generator (Knuth's MMIX constants), the
    /// same on every run.
    fn uniform(seed: u64) -> impl FnMut() -> f64 {
        let mut seed = seed;
        move || {
            seed = seed
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    fn rect(x: f64, y: f64, w: f64, h: f64) -> Shape {
        Shape::Polygon(Contour::from_points(&[
            Point::new(x, y),
            Point::new(x + w, y),
            Point::new(x + w, y + h),
            Point::new(x, y + h),
        ]))
    }

    /// A random layer of discs, tracks, arcs, pads, macro-like composites (some with a hole)
    /// and Clear objects, crowded into 4 × 4 mm so that many touch, overlap or nearly meet.
    fn random_layer(seed: u64) -> Vec<Object> {
        let mut u = uniform(seed);
        let mut objects = Vec::new();
        for _ in 0..40 {
            let (x, y) = (0.5 + 3.0 * u(), 0.5 + 3.0 * u());
            let shape = match (u() * 6.0) as u32 {
                0 => Shape::Disc {
                    center: Point::new(x, y),
                    diameter: 0.02 + 0.6 * u(),
                },
                1 => Shape::Stroke {
                    start: Point::new(x, y),
                    end: Point::new(x + 2.0 * u() - 1.0, y + 2.0 * u() - 1.0),
                    arc: None,
                    width: 0.01 + 0.3 * u(),
                },
                2 => {
                    let r = 0.2 + 0.6 * u();
                    let a = 6.0 * u();
                    Shape::Stroke {
                        start: Point::new(x + r * a.cos(), y + r * a.sin()),
                        end: Point::new(x + r * (a + 2.0).cos(), y + r * (a + 2.0).sin()),
                        arc: Some((Point::new(x, y), Turn::CounterClockwise)),
                        width: 0.02 + 0.2 * u(),
                    }
                }
                3 => rect(x, y, 0.05 + 0.8 * u(), 0.05 + 0.8 * u()),
                4 => Shape::Composite(vec![
                    (true, rect(x, y, 0.6, 0.3)),
                    (
                        true,
                        Shape::Disc {
                            center: Point::new(x, y + 0.15),
                            diameter: 0.3,
                        },
                    ),
                    (
                        u() < 0.5,
                        Shape::Disc {
                            center: Point::new(x + 0.3, y + 0.15),
                            diameter: 0.1,
                        },
                    ),
                ]),
                _ => rect(x, y, 0.3 * u(), 0.02 + 0.05 * u()),
            };
            let polarity = if u() < 0.15 {
                Polarity::Clear
            } else {
                Polarity::Dark
            };
            objects.push(Object { polarity, shape });
        }
        objects
    }

    #[test]
    fn sure_pieces_share_pixels_and_open_pairs_cover_every_near_miss() {
        // The reference is the painting model itself, pixel by pixel: objects share a pixel
        // when one paints over the other's pixel with no Clear in between
        // (`DesignSpans::overlaps_on_rows` over every row), and two pieces come within reach
        // where two of their pixels' centres do.
        for (seed, dpi, reach_px) in [(1, 1200.0, 2.0), (2, 600.0, 2.0), (3, 1200.0, 6.0)] {
            for k in 0..25u64 {
                let objects = random_layer(seed * 1000 + k);
                let map = DeviceMap::new(Point::new(0.0, 0.0), 260, 240, dpi, dpi * 1.1);
                let n = objects.len() as u32;
                let every: Vec<u32> = (0..n).collect();
                let spans = design_window(&objects, &every, &map, (0, map.height), (0, map.width));
                let mut pixel: Vec<u32> = (0..n).collect();
                for (a, b) in spans.overlaps_on_rows(&[(0, map.height)]) {
                    union(&mut pixel, a, b);
                }
                let mm = (25.4 / dpi, 25.4 / (dpi * 1.1));
                let reach = reach_px * mm.0.max(mm.1);
                let mut sure = sure_pieces(&objects, reach, &map);
                // Sure sets never join objects that the pixels keep apart.
                for i in 0..n {
                    let r = sure.find(i);
                    assert_eq!(find(&mut pixel, i), find(&mut pixel, r), "seed {seed} {k}");
                }
                // Pixels of different pixel pieces within reach: their objects are open.
                let rows = spans.window_runs(0, 0, map.width, map.height);
                let rr = (reach / mm.0.min(mm.1)).ceil() as usize;
                for (y, row) in rows.iter().enumerate() {
                    for &(a, b, o) in row {
                        for (ny, other) in rows.iter().enumerate().skip(y).take(rr + 1) {
                            for &(c, d, q) in other {
                                if find(&mut pixel, o) == find(&mut pixel, q) {
                                    continue;
                                }
                                let gap = if b <= c {
                                    c - (b - 1)
                                } else if d <= a {
                                    a - (d - 1)
                                } else {
                                    0
                                };
                                let dx = f64::from(gap) * mm.0;
                                let dy = (ny - y) as f64 * mm.1;
                                if dx.hypot(dy) > reach {
                                    continue;
                                }
                                let listed = sure
                                    .open
                                    .iter()
                                    .any(|&(x, z, ..)| (x, z) == (o, q) || (x, z) == (q, o));
                                assert!(listed, "seed {seed} {k}: objects {o} and {q}");
                            }
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn overlapping_round_pads_are_one_piece_and_a_near_miss_stays_open() {
        // Two 1 mm pads overlapping by 0.3 mm share pixels on any grid; a third pad 10 µm
        // from the second (a gap below a pixel at 1200 dpi, 21.2 µm) is left open, and one
        // 1 mm away is neither.
        let pad = |x: f64| Object {
            polarity: Polarity::Dark,
            shape: Shape::Disc {
                center: Point::new(x, 1.0),
                diameter: 1.0,
            },
        };
        let objects = [pad(1.0), pad(1.7), pad(2.71), pad(4.71)];
        let map = DeviceMap::new(Point::new(0.0, 0.0), 300, 120, 1200.0, 1200.0);
        let mut p = sure_pieces(&objects, 2.0 * 25.4 / 1200.0, &map);
        assert_eq!(p.find(0), p.find(1));
        assert_ne!(p.find(1), p.find(2));
        let open: Vec<(u32, u32)> = p.open.iter().map(|&(a, b, ..)| (a, b)).collect();
        assert_eq!(open.len(), 1);
        assert!(open[0] == (1, 2) || open[0] == (2, 1), "{open:?}");
    }
}
