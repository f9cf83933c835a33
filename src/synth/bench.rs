//! A deterministic synthetic board for benchmarks: two layers, 100 × 160 mm, about 50,000
//! objects (tracks at 0/45/90°, arcs, round/rectangular pads, RoundRect macro pads, poured
//! regions with clear cut-outs on both copper layers; both masks; an outline; ~2000 holes).
//!
//! Randomness comes from a small xorshift64* generator seeded by the caller, so a seed always
//! gives the same bytes on every machine (only integer arithmetic and exact decimal steps
//! decide the geometry).

use super::gerber_writer::{Aperture, DrillWriter, GerberWriter};
use crate::image::{Point, Turn};

/// Board size in millimetres.
pub const WIDTH: f64 = 100.0;
pub const HEIGHT: f64 = 160.0;
/// Per copper layer.
pub const TRACK_POLYLINES: usize = 2000;
pub const SEGMENTS_PER_POLYLINE: usize = 5;
pub const ARCS: usize = 800;
/// Pads that are only on one copper layer (SMD), per layer.
pub const SMD_PADS: usize = 2000;
pub const MACRO_PADS: usize = 1500;
pub const REGIONS: usize = 40;
/// Segments in each region contour (4 straight sides and 4 corner arcs).
pub const REGION_SEGMENTS: usize = 8;
pub const CUTOUTS_PER_REGION: usize = 10;
/// Through-hole pads (on both copper layers, both masks, and drilled).
pub const THROUGH_PADS: usize = 2000;

const SOFTWARE: &str = "Larkspur Community Workshop,umbra bench generator,1";

/// The files of a synthetic board: (file name, text).
#[derive(Debug, Clone, PartialEq)]
pub struct BenchBoard {
    pub files: Vec<(String, String)>,
}

impl BenchBoard {
    pub fn total_bytes(&self) -> usize {
        self.files.iter().map(|(_, t)| t.len()).sum()
    }
    pub fn file(&self, name: &str) -> Option<&str> {
        self.files
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, t)| t.as_str())
    }
}

/// xorshift64* (Marsaglia 2003; Vigna 2014): small, fast and fully deterministic.
struct Rng(u64);

impl Rng {
    fn new(seed: u64) -> Rng {
        // Avoid the all-zero state, which xorshift never leaves.
        Rng((seed ^ 0x9E37_79B9_7F4A_7C15) | 1)
    }
    fn next(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// A whole number in 0..n.
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n.max(1)
    }
    /// A point on a 0.05 mm grid, `margin` mm inside the board.
    fn point(&mut self, margin: f64) -> Point {
        let steps_x = ((WIDTH - 2.0 * margin) / 0.05) as u64;
        let steps_y = ((HEIGHT - 2.0 * margin) / 0.05) as u64;
        Point::new(
            margin + self.below(steps_x + 1) as f64 * 0.05,
            margin + self.below(steps_y + 1) as f64 * 0.05,
        )
    }
}

fn clamp_inside(p: Point, margin: f64) -> Point {
    Point::new(
        p.x.clamp(margin, WIDTH - margin),
        p.y.clamp(margin, HEIGHT - margin),
    )
}

const ROUND_RECT: &[&str] = &[
    "0 Rectangle with rounded corners: width $1, height $2, corner radius $3",
    "21,1,$1,$2-$3-$3,0,0,0",
    "21,1,$1-$3-$3,$2,0,0,0",
    "1,1,$3+$3,$1/2-$3,$2/2-$3",
    "1,1,$3+$3,-$1/2+$3,$2/2-$3",
    "1,1,$3+$3,-$1/2+$3,-$2/2+$3",
    "1,1,$3+$3,$1/2-$3,-$2/2+$3",
];

/// Pad sizes: (circle?, width, height).
const SMD_SIZES: [(bool, f64, f64); 6] = [
    (true, 0.6, 0.6),
    (true, 1.0, 1.0),
    (false, 0.6, 0.9),
    (false, 1.0, 1.3),
    (false, 1.5, 0.6),
    (false, 2.0, 2.0),
];
const MACRO_SIZES: [(f64, f64, f64); 4] = [
    (1.55, 0.6, 0.15),
    (0.6, 1.55, 0.15),
    (1.2, 1.4, 0.3),
    (2.0, 1.0, 0.25),
];
const TRACK_WIDTHS: [f64; 5] = [0.2, 0.25, 0.3, 0.4, 0.5];
/// Through-hole pads: (pad diameter, drill diameter).
const THROUGH_SIZES: [(f64, f64); 4] = [(0.6, 0.3), (1.4, 0.8), (1.7, 1.0), (5.0, 3.0)];

#[derive(Clone, Copy)]
enum Placed {
    Smd(usize),
    Macro(usize),
    Through(usize),
}

/// Where every pad of one layer is, decided before writing so masks can reuse it.
struct PadPlan {
    top: Vec<(Placed, Point)>,
    bottom: Vec<(Placed, Point)>,
    through: Vec<(usize, Point)>,
}

fn plan_pads(rng: &mut Rng) -> PadPlan {
    let through: Vec<(usize, Point)> = (0..THROUGH_PADS)
        .map(|_| {
            (
                rng.below(THROUGH_SIZES.len() as u64) as usize,
                rng.point(4.0),
            )
        })
        .collect();
    let side = |rng: &mut Rng| {
        let mut v: Vec<(Placed, Point)> = Vec::new();
        for _ in 0..SMD_PADS {
            v.push((
                Placed::Smd(rng.below(SMD_SIZES.len() as u64) as usize),
                rng.point(2.0),
            ));
        }
        for _ in 0..MACRO_PADS {
            v.push((
                Placed::Macro(rng.below(MACRO_SIZES.len() as u64) as usize),
                rng.point(2.0),
            ));
        }
        v.extend(through.iter().map(|&(k, p)| (Placed::Through(k), p)));
        v
    };
    let top = side(rng);
    let bottom = side(rng);
    PadPlan {
        top,
        bottom,
        through,
    }
}

/// Defines the pad apertures (optionally grown for mask openings) and returns a lookup.
struct PadApertures {
    smd: Vec<Aperture>,
    macros: Vec<Aperture>,
    through: Vec<Aperture>,
}

impl PadApertures {
    fn define(w: &mut GerberWriter, grow: f64) -> PadApertures {
        w.aperture_macro("RoundRect", ROUND_RECT);
        w.aperture_function("SMDPad,CuDef");
        let smd = SMD_SIZES
            .iter()
            .map(|&(round, x, y)| {
                if round {
                    w.circle(x + 2.0 * grow)
                } else {
                    w.rect(x + 2.0 * grow, y + 2.0 * grow)
                }
            })
            .collect();
        let macros = MACRO_SIZES
            .iter()
            .map(|&(x, y, r)| {
                w.macro_aperture("RoundRect", &[x + 2.0 * grow, y + 2.0 * grow, r + grow])
            })
            .collect();
        w.aperture_function("ComponentPad");
        let through = THROUGH_SIZES
            .iter()
            .map(|&(d, _)| w.circle(d + 2.0 * grow))
            .collect();
        w.clear_aperture_attributes();
        PadApertures {
            smd,
            macros,
            through,
        }
    }

    fn get(&self, p: Placed) -> Aperture {
        match p {
            Placed::Smd(k) => self.smd[k],
            Placed::Macro(k) => self.macros[k],
            Placed::Through(k) => self.through[k],
        }
    }
}

fn flash_pads(w: &mut GerberWriter, aps: &PadApertures, pads: &[(Placed, Point)]) {
    for &(kind, at) in pads {
        w.select(aps.get(kind));
        w.flash(at);
    }
}

fn copper(rng: &mut Rng, function: &str, pads: &[(Placed, Point)]) -> String {
    let mut w = GerberWriter::new(SOFTWARE, function, "Positive");
    w.file_attribute("Part", &["Single"]);
    let pad_aps = PadApertures::define(&mut w, 0.0);
    w.aperture_function("Conductor");
    let tracks: Vec<Aperture> = TRACK_WIDTHS.iter().map(|&t| w.circle(t)).collect();
    w.clear_aperture_attributes();
    let cutout = w.circle(1.5);
    // Poured regions with rounded corners, then clear cut-outs inside them.
    for _ in 0..REGIONS {
        let c = rng.point(12.0);
        let (hw, hh) = (4.0 + rng.below(5) as f64, 3.0 + rng.below(5) as f64);
        let r = 1.0;
        let (x0, y0, x1, y1) = (c.x - hw, c.y - hh, c.x + hw, c.y + hh);
        let ccw = Turn::CounterClockwise;
        w.begin_region();
        w.move_to(Point::new(x0 + r, y0));
        w.line_to(Point::new(x1 - r, y0));
        w.arc_to(Point::new(x1, y0 + r), Point::new(x1 - r, y0 + r), ccw);
        w.line_to(Point::new(x1, y1 - r));
        w.arc_to(Point::new(x1 - r, y1), Point::new(x1 - r, y1 - r), ccw);
        w.line_to(Point::new(x0 + r, y1));
        w.arc_to(Point::new(x0, y1 - r), Point::new(x0 + r, y1 - r), ccw);
        w.line_to(Point::new(x0, y0 + r));
        w.arc_to(Point::new(x0 + r, y0), Point::new(x0 + r, y0 + r), ccw);
        w.end_region();
        w.clear();
        w.select(cutout);
        for _ in 0..CUTOUTS_PER_REGION {
            let dx = (rng.below(((2.0 * hw - 2.0) / 0.05) as u64) as f64) * 0.05 - (hw - 1.0);
            let dy = (rng.below(((2.0 * hh - 2.0) / 0.05) as u64) as f64) * 0.05 - (hh - 1.0);
            w.flash(Point::new(c.x + dx, c.y + dy));
        }
        w.dark();
    }
    // Tracks: polylines with 0/45/90° segments.
    for _ in 0..TRACK_POLYLINES {
        w.select(tracks[rng.below(TRACK_WIDTHS.len() as u64) as usize]);
        let mut at = rng.point(1.0);
        w.move_to(at);
        for _ in 0..SEGMENTS_PER_POLYLINE {
            let len = 0.5 + rng.below(16) as f64 * 0.5;
            let (dx, dy) = match rng.below(8) {
                0 => (1.0, 0.0),
                1 => (-1.0, 0.0),
                2 => (0.0, 1.0),
                3 => (0.0, -1.0),
                4 => (1.0, 1.0),
                5 => (-1.0, 1.0),
                6 => (1.0, -1.0),
                _ => (-1.0, -1.0),
            };
            let mut next = clamp_inside(Point::new(at.x + dx * len, at.y + dy * len), 1.0);
            if next == at {
                // Clamped into the same corner: step back inward so every draw has length.
                next = clamp_inside(Point::new(at.x - dx * len, at.y - dy * len), 1.0);
            }
            w.line_to(next);
            at = next;
        }
    }
    // Arcs: quarter and half circles about grid centres.
    for _ in 0..ARCS {
        w.select(tracks[rng.below(TRACK_WIDTHS.len() as u64) as usize]);
        let c = rng.point(8.0);
        let r = 1.0 + rng.below(9) as f64 * 0.5;
        let a0 = rng.below(4) as f64 * 90.0;
        let sweep = if rng.below(2) == 0 { 90.0 } else { 180.0 };
        let turn = if rng.below(2) == 0 {
            Turn::CounterClockwise
        } else {
            Turn::Clockwise
        };
        let signed = if turn == Turn::CounterClockwise {
            sweep
        } else {
            -sweep
        };
        let on = |deg: f64| {
            let (s, co) = crate::image::rotation_sin_cos(deg);
            Point::new(c.x + r * co, c.y + r * s)
        };
        w.move_to(on(a0));
        w.arc_to(on(a0 + signed), c, turn);
    }
    flash_pads(&mut w, &pad_aps, pads);
    w.finish()
}

fn mask(function: &str, pads: &[(Placed, Point)]) -> String {
    let mut w = GerberWriter::new(SOFTWARE, function, "Negative");
    w.file_attribute("Part", &["Single"]);
    let aps = PadApertures::define(&mut w, 0.05);
    flash_pads(&mut w, &aps, pads);
    w.finish()
}

fn outline() -> String {
    let mut w = GerberWriter::new(SOFTWARE, "Profile,NP", "Positive");
    w.aperture_function("Profile");
    let a = w.circle(0.1);
    w.select(a);
    let r = 3.0;
    let ccw = Turn::CounterClockwise;
    w.move_to(Point::new(r, 0.0));
    w.line_to(Point::new(WIDTH - r, 0.0));
    w.arc_to(Point::new(WIDTH, r), Point::new(WIDTH - r, r), ccw);
    w.line_to(Point::new(WIDTH, HEIGHT - r));
    w.arc_to(
        Point::new(WIDTH - r, HEIGHT),
        Point::new(WIDTH - r, HEIGHT - r),
        ccw,
    );
    w.line_to(Point::new(r, HEIGHT));
    w.arc_to(Point::new(0.0, HEIGHT - r), Point::new(r, HEIGHT - r), ccw);
    w.line_to(Point::new(0.0, r));
    w.arc_to(Point::new(r, 0.0), Point::new(r, r), ccw);
    w.finish()
}

fn drill(through: &[(usize, Point)]) -> String {
    let mut d = DrillWriter::new(&["synthetic bench board"]);
    for (k, &(_, dia)) in THROUGH_SIZES.iter().enumerate() {
        let f = if k == 3 {
            "#@! TA.AperFunction,NonPlated,NPTH,MechanicalDrill"
        } else {
            "#@! TA.AperFunction,Plated,PTH,ComponentDrill"
        };
        d.tool(k as u32 + 1, dia, Some(f));
    }
    for k in 0..THROUGH_SIZES.len() {
        for &(_, at) in through.iter().filter(|(kind, _)| *kind == k) {
            d.hole(k as u32 + 1, at);
        }
    }
    d.finish()
}

/// The synthetic bench board for `seed`. Same seed, same bytes.
pub fn bench_board(seed: u64) -> BenchBoard {
    let mut rng = Rng::new(seed);
    let plan = plan_pads(&mut rng);
    let files = vec![
        (
            "bench.top-copper.gbr".to_string(),
            copper(&mut rng, "Copper,L1,Top", &plan.top),
        ),
        (
            "bench.bottom-copper.gbr".to_string(),
            copper(&mut rng, "Copper,L2,Bot", &plan.bottom),
        ),
        (
            "bench.top-mask.gbr".to_string(),
            mask("Soldermask,Top", &plan.top),
        ),
        (
            "bench.bottom-mask.gbr".to_string(),
            mask("Soldermask,Bot", &plan.bottom),
        ),
        ("bench.outline.gbr".to_string(), outline()),
        ("bench.drill.xln".to_string(), drill(&plan.through)),
    ];
    BenchBoard { files }
}
