//! The proof picture: a small colour PNG of the board as the films will make it, seen from the
//! top, with the process check's findings circled and numbered as in the table.
//!
//! # Colours
//! From the Okabe–Ito palette, chosen to stay apart for the common forms of colour blindness;
//! nothing depends on red against green. Layers also differ in lightness, and every colour is
//! named in the legend:
//!
//! | what | colour |
//! |---|---|
//! | top copper | orange #E69F00 |
//! | bottom copper | blue #0072B2 |
//! | copper on both sides | bluish green #009E73 |
//! | drill holes | white with a black rim |
//! | board outline | dark grey #404040 |
//! | registration targets | reddish purple #CC79A7 |
//! | findings | vermillion ring #D55E00 on a white halo, black number on white |
//!
//! Copper is drawn from the *films* (after compensation and drill marks), by sampling each
//! film a few times per picture pixel and mixing the colours by coverage (in quarters), so a
//! track thinner than a picture pixel still shows. The picture is indexed colour: a third of
//! the bytes of RGB, which keeps writing it fast.
//!
//! PNG specification (W3C, second edition): §11.2.2 IHDR colour type 3 (indexed), bit depth
//! 8; §11.2.3 PLTE; §11.3.5.3 pHYs, unit metre.

use crate::check::{CheckReport, Finding};
use crate::excellon::DrillFile;
use crate::film::font::{text_shapes, text_width_mm};
use crate::image::{Bounds, Contour, LayerImage, Object, Point, Polarity, Shape, Turn};
use crate::output::{write_atomically, OutputError};
use crate::raster::{render, Affine, Bitmap, DeviceMap};
use rayon::prelude::*;
use serde::Serialize;
use std::path::Path;

type Rgb = [u8; 3];
pub const WHITE: Rgb = [255, 255, 255];
pub const SUBSTRATE: Rgb = [236, 234, 224];
pub const TOP: Rgb = [0xE6, 0x9F, 0x00];
pub const BOTTOM: Rgb = [0x00, 0x72, 0xB2];
pub const BOTH: Rgb = [0x00, 0x9E, 0x73];
pub const OUTLINE: Rgb = [0x40, 0x40, 0x40];
pub const TARGET: Rgb = [0xCC, 0x79, 0xA7];
pub const MARKER: Rgb = [0xD5, 0x5E, 0x00];
pub const BLACK: Rgb = [0, 0, 0];

/// The named colours, palette entries 0 to 8; copper blends follow from `BLEND0`.
const NAMED: [Rgb; 9] = [
    WHITE, SUBSTRATE, TOP, BOTTOM, BOTH, OUTLINE, TARGET, MARKER, BLACK,
];
/// Copper coverage is shown in quarters: 0, ¼, ½, ¾, 1 of a picture pixel.
const LEVELS: usize = 5;
const BLEND0: usize = 16;

fn named(c: Rgb) -> u8 {
    NAMED.iter().position(|&n| n == c).unwrap_or(0) as u8
}

/// The picture's palette: the named colours, then the mix of top coverage `t` and bottom
/// coverage `b` (in quarters) over the substrate at `BLEND0 + t·LEVELS + b`.
fn palette() -> Vec<Rgb> {
    let mut p = NAMED.to_vec();
    p.resize(BLEND0, WHITE);
    for t in 0..LEVELS {
        for b in 0..LEVELS {
            let (ft, fb) = (t as f64 / 4.0, b as f64 / 4.0);
            let mut c = SUBSTRATE;
            c = mix(c, TOP, ft * (1.0 - fb));
            c = mix(c, BOTTOM, fb * (1.0 - ft));
            c = mix(c, BOTH, ft * fb);
            p.push(c);
        }
    }
    p
}

/// Largest side of the picture in pixels; larger boards get fewer pixels per mm.
const MAX_SIDE_PX: f64 = 12_000.0;
const LEGEND_CAP_MM: f64 = 2.0;
const MARGIN_MM: f64 = 2.0;

/// Where a finding's marker is on the picture.
#[derive(Debug, Clone, Serialize)]
pub struct ProofMarker {
    pub number: usize,
    /// Centre, picture pixels (x right, y down, pixel centres at +0.5).
    pub center_px: [f64; 2],
    pub radius_px: f64,
}

/// What was written.
#[derive(Debug, Clone, Serialize)]
pub struct ProofInfo {
    pub file: String,
    pub size_px: [usize; 2],
    pub px_per_mm: f64,
    /// Board mm → picture pixels.
    pub board_to_px: Affine,
    pub markers: Vec<ProofMarker>,
}

/// One copper film as the proof needs it.
#[derive(Debug, Clone, Copy)]
pub struct CopperFilm<'a> {
    pub film: &'a Bitmap,
    pub map: &'a DeviceMap,
    pub black_is_material: bool,
}

/// Everything drawn on the proof.
#[derive(Debug, Clone)]
pub struct ProofInput<'a> {
    pub title: String,
    pub board: Bounds,
    pub top: Option<CopperFilm<'a>>,
    pub bottom: Option<CopperFilm<'a>>,
    pub outline: Option<&'a LayerImage>,
    pub drills: &'a [&'a DrillFile],
    pub targets: Option<[Point; 3]>,
    pub target_size_mm: f64,
    pub findings: &'a [Finding],
    pub px_per_mm: f64,
}

/// A drawn proof: one palette index per pixel, rows top to bottom.
#[derive(Debug, Clone)]
pub struct Proof {
    pub width: usize,
    pub height: usize,
    pub pixels: Vec<u8>,
    pub palette: Vec<Rgb>,
    pub info: ProofInfo,
}

impl Proof {
    /// The colour of pixel (x, y).
    pub fn pixel(&self, x: usize, y: usize) -> Option<Rgb> {
        (x < self.width && y < self.height)
            .then(|| self.palette[self.pixels[y * self.width + x] as usize])
    }
}

fn objects(shapes: Vec<Shape>) -> Vec<Object> {
    shapes
        .into_iter()
        .map(|shape| Object {
            polarity: Polarity::Dark,
            shape,
        })
        .collect()
}

fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Shape {
    Shape::Polygon(Contour::from_points(&[
        Point::new(x0, y0),
        Point::new(x1, y0),
        Point::new(x1, y1),
        Point::new(x0, y1),
    ]))
}

fn ring(center: Point, r: f64, width: f64) -> Shape {
    let start = Point::new(center.x + r, center.y);
    Shape::Stroke {
        start,
        end: start,
        arc: Some((center, Turn::CounterClockwise)),
        width,
    }
}

fn legend_entries() -> [(&'static str, Rgb); 7] {
    [
        ("top copper", TOP),
        ("bottom copper", BOTTOM),
        ("copper on both sides", BOTH),
        ("drill hole", WHITE),
        ("board outline", OUTLINE),
        ("registration target", TARGET),
        ("finding (number as in the table)", MARKER),
    ]
}

/// The picture canvas.
struct Canvas {
    map: DeviceMap,
    pixels: Vec<u8>,
}

impl Canvas {
    /// Paints `shapes` in `colour`: rendered on a window of the canvas around them (a
    /// finding's ring is a few hundred pixels, the canvas millions).
    fn paint(&mut self, shapes: Vec<Shape>, colour: Rgb) {
        if shapes.is_empty() {
            return;
        }
        let mut b = Bounds::EMPTY;
        for s in &shapes {
            b.union(&s.bounds());
        }
        let m = &self.map;
        let (px0, py0) = m.to_px(Point::new(b.min_x, b.max_y));
        let (px1, py1) = m.to_px(Point::new(b.max_x, b.min_y));
        let clamp = |v: f64, hi: usize| {
            if v.is_finite() {
                v.clamp(0.0, hi as f64) as usize
            } else {
                0
            }
        };
        // One pixel more each way, so that rounding never drops an edge pixel.
        let (x0, y0) = (clamp(px0 - 1.0, m.width), clamp(py0 - 1.0, m.height));
        let (x1, y1) = (clamp(px1 + 2.0, m.width), clamp(py1 + 2.0, m.height));
        if x0 >= x1 || y0 >= y1 {
            return;
        }
        // The window's pixels are the canvas's own: its origin is the window's lower left.
        let window = DeviceMap::new(
            Point::new(
                m.origin.x + x0 as f64 / m.px_per_mm_x(),
                m.origin.y + (m.height - y1) as f64 / m.px_per_mm_y(),
            ),
            x1 - x0,
            y1 - y0,
            m.dpi_x,
            m.dpi_y,
        );
        let mask = render(&objects(shapes), &window);
        let (w, index) = (m.width, named(colour));
        for y in 0..mask.height() {
            for (wi, &word) in mask.row(y).iter().enumerate() {
                if word == u64::MAX {
                    // A whole word inside the window (the mask's padding bits are clear).
                    let at = (y0 + y) * w + x0 + wi * 64;
                    self.pixels[at..at + 64].fill(index);
                    continue;
                }
                let mut bits = word;
                while bits != 0 {
                    let x = wi * 64 + bits.leading_zeros() as usize;
                    bits &= !(1u64 << (63 - (x % 64)));
                    self.pixels[(y0 + y) * w + x0 + x] = index;
                }
            }
        }
    }
}

fn mix(a: Rgb, b: Rgb, t: f64) -> Rgb {
    // Rounded by adding one half before the truncating cast (values stay in 0 ..= 255).
    let f = |x: u8, y: u8| (x as f64 + (y as f64 - x as f64) * t + 0.5) as u8;
    [f(a[0], b[0]), f(a[1], b[1]), f(a[2], b[2])]
}

/// Where the sub-samples of picture pixels fall on one film: for each picture column, `n`
/// film columns as (word index, bit shift, 1), or (0, 0, 0) when off the film or outside the
/// board (the read stays in the row and counts nothing); for each picture row, `n` film rows,
/// `usize::MAX` when off. The maps are axis-aligned, so film x depends on board x only and
/// film y on board y only.
struct Samples {
    n: usize,
    cols: Vec<(u32, u32, u64)>,
    rows: Vec<usize>,
}

impl Samples {
    fn new(film: &CopperFilm<'_>, map: &DeviceMap, keep: &Bounds, n: usize) -> Samples {
        let (w, h) = (map.width, map.height);
        let mut cols = Vec::with_capacity(w * n);
        for x in 0..w {
            for i in 0..n {
                let p = map.to_mm(x as f64 + (i as f64 + 0.5) / n as f64, 0.0);
                let (fx, _) = film.map.to_px(Point::new(p.x, film.map.origin.y));
                let ok = p.x >= keep.min_x && p.x <= keep.max_x && fx >= 0.0;
                let fx = fx as usize;
                cols.push(if ok && fx < film.film.width() {
                    ((fx / 64) as u32, (63 - fx % 64) as u32, 1)
                } else {
                    (0, 0, 0)
                });
            }
        }
        let mut rows = Vec::with_capacity(h * n);
        for y in 0..h {
            for j in 0..n {
                let p = map.to_mm(0.0, y as f64 + (j as f64 + 0.5) / n as f64);
                let (_, fy) = film.map.to_px(Point::new(film.map.origin.x, p.y));
                let ok = p.y >= keep.min_y && p.y <= keep.max_y && fy >= 0.0;
                let fy = fy as usize;
                rows.push(if ok && fy < film.film.height() {
                    fy
                } else {
                    usize::MAX
                });
            }
        }
        Samples { n, cols, rows }
    }

    /// Adds to `hits[x]` the samples of picture row `y` that fall on material, for every
    /// picture column `x` in `x0..x1`.
    fn add_row(&self, film: &CopperFilm<'_>, y: usize, (x0, x1): (usize, usize), hits: &mut [u8]) {
        let n = self.n;
        for &fy in &self.rows[y * n..(y + 1) * n] {
            if fy == usize::MAX {
                continue;
            }
            let row = film.film.row(fy);
            for (x, h) in hits.iter_mut().enumerate().take(x1).skip(x0) {
                let mut set = 0;
                let mut valid = 0;
                for &(wi, sh, ok) in &self.cols[x * n..(x + 1) * n] {
                    set += (row[wi as usize] >> sh) & ok;
                    valid += ok;
                }
                // Material is black or clear on the film.
                *h += if film.black_is_material {
                    set
                } else {
                    valid - set
                } as u8;
            }
        }
    }
}

/// Draws the proof picture.
pub fn draw_proof(input: &ProofInput<'_>) -> Proof {
    finish_proof(draw_proof_base(input), input.findings)
}

/// A proof drawn up to the findings: the board, copper, outline, holes and targets. It does
/// not depend on the findings, so the films job draws it while the check runs.
pub struct ProofBase {
    canvas: Canvas,
    title: String,
    area: Bounds,
    ppm: f64,
}

/// The part of [`draw_proof`] that does not need the findings (`input.findings` is not
/// read). The legend's width comes from its entries and title: the findings line ("N
/// finding(s), circled") is narrower than the entry for findings for any count below 10¹⁰.
pub fn draw_proof_base(input: &ProofInput<'_>) -> ProofBase {
    let b = input.board;
    let mut area = b.grown(MARGIN_MM);
    if let Some(t) = &input.targets {
        for p in t {
            area.add_circle(*p, input.target_size_mm / 2.0 + 1.0);
        }
    }
    let entries = legend_entries();
    let cap = LEGEND_CAP_MM;
    let lines = legend_lines(&input.title, None);
    let text_w = entries
        .iter()
        .map(|e| text_width_mm(e.0, cap) + 8.0)
        .chain(lines.iter().map(|l| text_width_mm(l, cap)))
        .fold(0.0f64, f64::max);
    let legend_w = text_w + 2.0 * MARGIN_MM;
    let legend_h = (lines.len() + 1 + entries.len()) as f64 * cap * 2.2 + 3.0 * MARGIN_MM;
    let total_w = area.width() + legend_w;
    let total_h = area.height().max(legend_h);
    let mut ppm = input.px_per_mm;
    if total_w.max(total_h) * ppm > MAX_SIDE_PX {
        ppm = MAX_SIDE_PX / total_w.max(total_h);
    }
    let (w, h) = (
        (total_w * ppm).ceil().max(1.0) as usize,
        (total_h * ppm).ceil().max(1.0) as usize,
    );
    let origin = Point::new(area.min_x, area.max_y - h as f64 / ppm);
    let map = DeviceMap::new(origin, w, h, ppm * 25.4, ppm * 25.4);
    let mut canvas = Canvas {
        map,
        pixels: vec![named(WHITE); w * h],
    };
    canvas.paint(vec![rect(b.min_x, b.min_y, b.max_x, b.max_y)], SUBSTRATE);

    // Copper, by coverage.
    let keep = b.grown(0.5);
    let samples = |f: CopperFilm<'_>| {
        let n = (f.map.px_per_mm_x() / ppm).round().clamp(1.0, 4.0) as usize;
        Samples::new(&f, &map, &keep, n)
    };
    let top = input.top.map(|f| (f, samples(f)));
    let bottom = input.bottom.map(|f| (f, samples(f)));
    // The colour level of each count of samples on material (of n² per pixel): the fraction
    // in quarters, rounded; top levels step by LEVELS.
    let levels = |s: Option<&Samples>, step: usize| -> Vec<usize> {
        (0..=16usize)
            .map(|hits| {
                let f = s.map_or(0.0, |s| hits as f64 / (s.n * s.n) as f64);
                (f * 4.0 + 0.5) as usize * step
            })
            .collect()
    };
    let level_top = levels(top.as_ref().map(|t| &t.1), LEVELS);
    let level_bottom = levels(bottom.as_ref().map(|b| &b.1), 1);
    let (ky0, ky1) = {
        let (_, a) = map.to_px(Point::new(0.0, keep.max_y));
        let (_, c) = map.to_px(Point::new(0.0, keep.min_y));
        (
            a.floor().max(0.0) as usize,
            (c.ceil().max(0.0) as usize).min(h),
        )
    };
    let (kx0, kx1) = {
        let (a, _) = map.to_px(Point::new(keep.min_x, 0.0));
        let (c, _) = map.to_px(Point::new(keep.max_x, 0.0));
        (
            a.floor().max(0.0) as usize,
            (c.ceil().max(0.0) as usize).min(w),
        )
    };
    canvas
        .pixels
        .par_chunks_mut(w)
        .enumerate()
        .filter(|(y, _)| (ky0..ky1).contains(y))
        .for_each_init(
            || (vec![0u8; w], vec![0u8; w]),
            |(ht, hb), (y, row)| {
                // Samples on material per picture pixel, top and bottom.
                ht.fill(0);
                hb.fill(0);
                if let Some((f, s)) = &top {
                    s.add_row(f, y, (kx0, kx1), ht);
                }
                if let Some((f, s)) = &bottom {
                    s.add_row(f, y, (kx0, kx1), hb);
                }
                for x in kx0..kx1 {
                    if ht[x] == 0 && hb[x] == 0 {
                        continue;
                    }
                    row[x] =
                        (BLEND0 + level_top[ht[x] as usize] + level_bottom[hb[x] as usize]) as u8;
                }
            },
        );

    // Outline, holes, targets.
    let line = (1.5 / ppm).max(0.1);
    match input.outline {
        Some(img) => canvas.paint(
            img.objects
                .iter()
                .filter(|o| o.polarity == Polarity::Dark)
                .map(|o| match &o.shape {
                    Shape::Stroke {
                        start,
                        end,
                        arc,
                        width,
                    } => Shape::Stroke {
                        start: *start,
                        end: *end,
                        arc: *arc,
                        width: width.max(line),
                    },
                    s => s.clone(),
                })
                .collect(),
            OUTLINE,
        ),
        None => {
            let (x0, y0, x1, y1) = (b.min_x, b.min_y, b.max_x, b.max_y);
            let seg = |a: Point, c: Point| Shape::Stroke {
                start: a,
                end: c,
                arc: None,
                width: line,
            };
            let (p00, p10, p11, p01) = (
                Point::new(x0, y0),
                Point::new(x1, y0),
                Point::new(x1, y1),
                Point::new(x0, y1),
            );
            canvas.paint(
                vec![seg(p00, p10), seg(p10, p11), seg(p11, p01), seg(p01, p00)],
                OUTLINE,
            );
        }
    }
    let mut holes = Vec::new();
    let mut rims = Vec::new();
    for d in input.drills {
        for hole in &d.holes {
            if let Some(t) = d.tools.get(hole.tool) {
                let r = t.diameter_mm / 2.0;
                holes.push(Shape::Disc {
                    center: hole.at,
                    diameter: 2.0 * r,
                });
                rims.push(ring(hole.at, r, line));
            }
        }
        for s in &d.slots {
            if let Some(t) = d.tools.get(s.tool) {
                for pair in s.path.windows(2) {
                    holes.push(Shape::Stroke {
                        start: pair[0],
                        end: pair[1],
                        arc: None,
                        width: t.diameter_mm,
                    });
                }
            }
        }
    }
    canvas.paint(rims, BLACK);
    canvas.paint(holes, WHITE);
    if let Some(t) = &input.targets {
        let shapes = t
            .iter()
            .flat_map(|p| {
                crate::film::marks::target_shapes(*p, input.target_size_mm, line.max(0.2))
            })
            .collect();
        canvas.paint(shapes, TARGET);
    }
    ProofBase {
        canvas,
        title: input.title.clone(),
        area,
        ppm,
    }
}

/// The legend's lines above its entries: the title, what the picture shows and, with the
/// number of findings, how many are circled.
fn legend_lines(title: &str, findings: Option<usize>) -> Vec<String> {
    let mut lines = vec![
        title.to_string(),
        "as the films will make it, seen from the top".to_string(),
    ];
    if let Some(n) = findings {
        lines.push(match n {
            0 => "no findings".to_string(),
            n => format!("{n} finding(s), circled"),
        });
    }
    lines
}

/// Draws the findings and the legend on a proof from [`draw_proof_base`].
pub fn finish_proof(base: ProofBase, findings: &[Finding]) -> Proof {
    let ProofBase {
        mut canvas,
        title,
        area,
        ppm,
    } = base;
    let map = canvas.map;
    let (w, h) = (map.width, map.height);
    let entries = legend_entries();
    let cap = LEGEND_CAP_MM;
    let lines = legend_lines(&title, Some(findings.len()));
    let line = (1.5 / ppm).max(0.1);

    // Findings: a vermillion ring on a white halo, and the number on a white box.
    let mut markers = Vec::new();
    let (mut halos, mut rings, mut boxes, mut numbers) = (vec![], vec![], vec![], vec![]);
    let num_cap = 1.0f64.max(14.0 / ppm);
    for f in findings {
        // Small and alike: the circle marks a place, the table says how large the area is.
        let r = (f.extent_mm[0].max(f.extent_mm[1]) / 2.0 + 0.4).clamp(0.6, 1.2);
        let rw = (0.12f64).max(2.0 / ppm);
        halos.push(ring(f.at_mm, r, rw + 4.0 / ppm));
        rings.push(ring(f.at_mm, r, rw));
        let text = f.number.to_string();
        let at = Point::new(f.at_mm.x + r * 0.8, f.at_mm.y + r * 0.8);
        let tw = text_width_mm(&text, num_cap);
        boxes.push(rect(
            at.x - 0.3,
            at.y - 0.4,
            at.x + tw + 0.3,
            at.y + num_cap + 0.4,
        ));
        numbers.extend(text_shapes(&text, at, num_cap, num_cap * 0.16, false, 0.0));
        let (cx, cy) = map.to_px(f.at_mm);
        markers.push(ProofMarker {
            number: f.number,
            center_px: [cx, cy],
            radius_px: r * ppm,
        });
    }
    canvas.paint(halos, WHITE);
    canvas.paint(rings, MARKER);
    canvas.paint(boxes, WHITE);
    canvas.paint(numbers, BLACK);

    // Legend, right of the board.
    let lx = area.max_x + MARGIN_MM;
    let mut y = area.max_y - MARGIN_MM - cap;
    let mut text = Vec::new();
    for l in &lines {
        text.extend(text_shapes(
            l,
            Point::new(lx, y),
            cap,
            cap * 0.14,
            false,
            0.0,
        ));
        y -= cap * 2.2;
    }
    y -= cap;
    for (label, colour) in entries {
        let (sx0, sx1) = (lx, lx + 6.0);
        let (sy0, sy1) = (y - 0.2, y + cap + 0.2);
        let mid = Point::new(0.5 * (sx0 + sx1), 0.5 * (sy0 + sy1));
        match label {
            "drill hole" => {
                canvas.paint(vec![ring(mid, 1.0, line.max(0.15))], BLACK);
                canvas.paint(
                    vec![Shape::Disc {
                        center: mid,
                        diameter: 2.0,
                    }],
                    WHITE,
                );
            }
            "board outline" => canvas.paint(
                vec![Shape::Stroke {
                    start: Point::new(sx0, mid.y),
                    end: Point::new(sx1, mid.y),
                    arc: None,
                    width: 0.3,
                }],
                OUTLINE,
            ),
            "registration target" => {
                canvas.paint(crate::film::marks::target_shapes(mid, 2.6, 0.2), TARGET)
            }
            "finding (number as in the table)" => {
                canvas.paint(vec![ring(mid, 1.1, 0.9)], WHITE);
                canvas.paint(vec![ring(mid, 1.1, 0.3)], MARKER);
            }
            _ => canvas.paint(vec![rect(sx0, sy0, sx1, sy1)], colour),
        }
        text.extend(text_shapes(
            label,
            Point::new(lx + 8.0, y),
            cap,
            cap * 0.14,
            false,
            0.0,
        ));
        y -= cap * 2.2;
    }
    canvas.paint(text, BLACK);

    Proof {
        width: w,
        height: h,
        pixels: canvas.pixels,
        palette: palette(),
        info: ProofInfo {
            file: String::new(),
            size_px: [w, h],
            px_per_mm: ppm,
            board_to_px: map.affine(),
            markers,
        },
    }
}

/// Writes the proof as an 8-bit indexed-colour PNG (PNG spec §11.2.2 colour type 3, with a
/// PLTE chunk §11.2.3) with its resolution in pHYs, atomically.
pub fn write_proof(path: &Path, proof: &Proof) -> Result<(), OutputError> {
    write_atomically(path, |out| {
        let err = |e: png::EncodingError| match e {
            png::EncodingError::IoError(source) => OutputError::Io {
                path: path.to_path_buf(),
                source,
            },
            other => OutputError::Png {
                path: path.to_path_buf(),
                message: other.to_string(),
            },
        };
        let mut enc = png::Encoder::new(out, proof.width as u32, proof.height as u32);
        enc.set_color(png::ColorType::Indexed);
        enc.set_palette(proof.palette.iter().flatten().copied().collect::<Vec<u8>>());
        enc.set_depth(png::BitDepth::Eight);
        enc.set_compression(png::Compression::Fast);
        // Large flat areas: each row mostly repeats the one above.
        enc.set_filter(png::Filter::Up);
        let ppm = (proof.info.px_per_mm * 1000.0).round() as u32;
        enc.set_pixel_dims(Some(png::PixelDimensions {
            xppu: ppm,
            yppu: ppm,
            unit: png::Unit::Meter,
        }));
        let mut writer = enc.write_header().map_err(err)?;
        writer.write_image_data(&proof.pixels).map_err(err)?;
        writer.finish().map_err(err)
    })
}

/// Draws and writes the proof of a board whose films were made by
/// [`crate::films::make_films`]; records it in `report.proof`.
#[allow(clippy::too_many_arguments)]
/// The proof of a board made by [`crate::films::make_films`] up to the findings
/// ([`draw_proof_base`]): the copper films, the outline layer, the drill files and the
/// registration targets.
pub fn board_proof_base(
    title: &str,
    films: &[crate::films::MadeFilm],
    board: &crate::load::Board,
    frame: &crate::film::compose::BoardFrame,
    target_size_mm: f64,
    px_per_mm: f64,
) -> ProofBase {
    use crate::layers::{LayerFunction, Side};
    let copper = |side: Side| {
        films
            .iter()
            .find(|f| f.id.function == LayerFunction::Copper && f.id.side == side)
            .map(|f| CopperFilm {
                film: &f.rendered.bitmap,
                map: &f.rendered.map,
                black_is_material: f.recipe.black_is_material,
            })
    };
    let outline = board.files.iter().find_map(|f| match (&f.content, f.id) {
        (crate::load::Content::Gerber(g), Some(id)) if id.function == LayerFunction::Outline => {
            Some(&g.image)
        }
        _ => None,
    });
    let drills = crate::films::drill_files(board);
    draw_proof_base(&ProofInput {
        title: title.to_string(),
        board: frame.board,
        top: copper(Side::Top),
        bottom: copper(Side::Bottom),
        outline,
        drills: &drills,
        targets: frame.targets,
        target_size_mm,
        findings: &[],
        px_per_mm,
    })
}

/// Finishes `base` with the report's findings, writes it to `path` and notes it in the
/// report (as `file_name`).
pub fn write_finished_proof(
    path: &Path,
    file_name: &str,
    base: ProofBase,
    report: &mut CheckReport,
) -> Result<(), OutputError> {
    let mut proof = finish_proof(base, &report.findings);
    proof.info.file = file_name.to_string();
    write_proof(path, &proof)?;
    report.proof = Some(proof.info);
    Ok(())
}

/// Checks the films of a board made by [`crate::films::make_films`] and writes the proof to
/// `path`: the proof's picture is drawn while the check runs, the findings after it.
#[allow(clippy::too_many_arguments)]
pub fn check_with_proof(
    path: &Path,
    file_name: &str,
    title: &str,
    films: &[crate::films::MadeFilm],
    board: &crate::load::Board,
    frame: &crate::film::compose::BoardFrame,
    target_size_mm: f64,
    limits: &crate::check::ProcessLimits,
) -> Result<CheckReport, OutputError> {
    let (mut report, base) = rayon::join(
        || crate::check::check_films(films, board, &frame.board, limits),
        || {
            board_proof_base(
                title,
                films,
                board,
                frame,
                target_size_mm,
                limits.proof_px_per_mm,
            )
        },
    );
    write_finished_proof(path, file_name, base, &mut report)?;
    Ok(report)
}
