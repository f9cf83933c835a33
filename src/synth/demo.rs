//! The demo board: "Wren soil-moisture node", revision B, of the (fictional) Larkspur
//! Community Workshop maker lab. A two-layer board of 50 × 40 mm with a soil probe electrode,
//! an 8-pin SOIC controller, a TO-92 transistor, a 4-pin header, a slotted power pad, two
//! mounting holes and a poured ground plane on the bottom.
//!
//! This file holds the design as data (pads, tracks, the electrode); `demo_files.rs` writes
//! it as Gerber and Excellon. The design rules it keeps (checked by tests): tracks ≥ 0.25 mm,
//! gaps ≥ 0.25 mm, annular rings ≥ 0.3 mm — within the home-etching limits of 0.2 mm track
//! and gap and 0.15 mm annular ring (common practice).

use crate::image::{Point, Turn};

/// The copper layer an item is on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CopperLayer {
    Top,
    Bottom,
}

/// A pad outline (before any solder mask or clearance growth).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PadShape {
    Circle(f64),
    /// Width (x) and height (y).
    Rect(f64, f64),
    Obround(f64, f64),
    /// Width, height and corner radius.
    RoundRect(f64, f64, f64),
    /// Regular octagon with this circumscribed diameter.
    Octagon(f64),
}

impl PadShape {
    /// The shape grown by `d` on every side.
    pub fn grown(self, d: f64) -> PadShape {
        match self {
            PadShape::Circle(x) => PadShape::Circle(x + 2.0 * d),
            PadShape::Rect(w, h) => PadShape::Rect(w + 2.0 * d, h + 2.0 * d),
            PadShape::Obround(w, h) => PadShape::Obround(w + 2.0 * d, h + 2.0 * d),
            PadShape::RoundRect(w, h, r) => PadShape::RoundRect(w + 2.0 * d, h + 2.0 * d, r + d),
            PadShape::Octagon(x) => PadShape::Octagon(x + 2.0 * d),
        }
    }

    /// The smallest width across the shape (for annular rings).
    pub fn narrowest(self) -> f64 {
        match self {
            PadShape::Circle(d) => d,
            PadShape::Rect(w, h) | PadShape::Obround(w, h) | PadShape::RoundRect(w, h, _) => {
                w.min(h)
            }
            // Across flats of a regular octagon: d · cos(22.5°).
            PadShape::Octagon(d) => d * (std::f64::consts::PI / 8.0).cos(),
        }
    }
}

/// A drilled hole in a pad, or a milled slot between two points.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Hole {
    pub diameter: f64,
    pub plated: bool,
    /// For a slot: the other end of the tool path (the pad centre is one end's midpoint).
    pub slot: Option<(Point, Point)>,
}

/// A pad: an SMD pad on the top layer or a through-hole pad on both layers.
#[derive(Debug, Clone, PartialEq)]
pub struct Pad {
    pub name: &'static str,
    pub net: &'static str,
    pub at: Point,
    pub shape: PadShape,
    pub hole: Option<Hole>,
    /// Vias are tented (no solder-mask opening) and connect solidly to the ground pour.
    pub via: bool,
}

impl Pad {
    pub fn is_through(&self) -> bool {
        self.hole.is_some()
    }
    pub fn on(&self, layer: CopperLayer) -> bool {
        self.is_through() || layer == CopperLayer::Top
    }
}

/// A track: a polyline of straight segments, or one circular arc.
#[derive(Debug, Clone, PartialEq)]
pub struct Track {
    pub layer: CopperLayer,
    pub net: &'static str,
    pub width: f64,
    pub path: Vec<Point>,
    /// When set, the track is the arc from `path[0]` to `path[1]` about this centre.
    pub arc: Option<(Point, Turn)>,
}

/// The soil probe electrode on the top copper: a stadium (a rectangle with semicircular
/// ends), drawn as a region with arcs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stadium {
    /// Centres of the two end semicircles (vertical stadium: `low` below `high`).
    pub low: Point,
    pub high: Point,
    pub radius: f64,
}

/// A mounting hole (non-plated, no copper).
pub type MountingHole = (Point, f64);

/// The whole design.
#[derive(Debug, Clone, PartialEq)]
pub struct WrenNode {
    pub width: f64,
    pub height: f64,
    pub corner_radius: f64,
    pub pads: Vec<Pad>,
    pub tracks: Vec<Track>,
    pub electrode: Stadium,
    pub electrode_net: &'static str,
    pub mounting_holes: Vec<MountingHole>,
}

/// Name written into `%TF.GenerationSoftware`.
pub const SOFTWARE: &str = "Larkspur Community Workshop,umbra demo generator,1";
/// Board name as people say it.
pub const BOARD_NAME: &str = "Wren soil-moisture node rev B";
pub const MAKER_LAB: &str = "Larkspur Community Workshop";

/// Net names.
pub const VCC: &str = "VCC";
pub const GND: &str = "GND";

fn p(x: f64, y: f64) -> Point {
    Point::new(x, y)
}

fn pad(name: &'static str, net: &'static str, at: Point, shape: PadShape) -> Pad {
    Pad {
        name,
        net,
        at,
        shape,
        hole: None,
        via: false,
    }
}

fn tht(name: &'static str, net: &'static str, at: Point, shape: PadShape, drill: f64) -> Pad {
    Pad {
        hole: Some(Hole {
            diameter: drill,
            plated: true,
            slot: None,
        }),
        ..pad(name, net, at, shape)
    }
}

fn via(name: &'static str, net: &'static str, at: Point) -> Pad {
    Pad {
        via: true,
        ..tht(name, net, at, PadShape::Circle(1.4), 0.8)
    }
}

fn track(layer: CopperLayer, net: &'static str, width: f64, path: &[(f64, f64)]) -> Track {
    Track {
        layer,
        net,
        width,
        path: path.iter().map(|&(x, y)| p(x, y)).collect(),
        arc: None,
    }
}

/// The SOIC-8 footprint: pads 1.55 × 0.6 mm with 0.15 mm corners, pitch 1.27 mm, rows 5.4 mm
/// apart; pin 1 top left, counting counter-clockwise seen from the top.
fn soic8(center: Point, nets: [&'static str; 8]) -> Vec<Pad> {
    const NAMES: [&str; 8] = [
        "U1-1", "U1-2", "U1-3", "U1-4", "U1-5", "U1-6", "U1-7", "U1-8",
    ];
    let shape = PadShape::RoundRect(1.55, 0.6, 0.15);
    (0..8)
        .map(|i| {
            let (x, row) = if i < 4 {
                (center.x - 2.7, i as f64)
            } else {
                (center.x + 2.7, (7 - i) as f64)
            };
            let y = center.y + 1.905 - 1.27 * row;
            pad(NAMES[i], nets[i], p(x, y), shape)
        })
        .collect()
}

/// The design of the Wren node, rev B. All coordinates in mm, origin at the lower left
/// corner of the board, viewed from the top.
pub fn wren_node() -> WrenNode {
    use CopperLayer::{Bottom, Top};
    let smd0805 = PadShape::Rect(1.0, 1.3);
    let smd0805_vertical = PadShape::Rect(1.3, 1.0);
    let to92 = PadShape::Obround(1.4, 2.0);
    let mut pads = vec![
        // J1: 4-pin header, 2.54 mm pitch, pin 1 square. Pins: VCC, GND, DATA, ENABLE.
        tht("J1-1", VCC, p(4.0, 14.0), PadShape::Rect(1.6, 1.6), 1.0),
        tht("J1-2", GND, p(4.0, 16.54), PadShape::Circle(1.6), 1.0),
        tht("J1-3", "DATA", p(4.0, 19.08), PadShape::Circle(1.6), 1.0),
        tht("J1-4", "ENABLE", p(4.0, 21.62), PadShape::Circle(1.6), 1.0),
        // J2: battery input; pin 1 has a 1.0 mm wide slot for a flat tab.
        Pad {
            hole: Some(Hole {
                diameter: 1.0,
                plated: true,
                slot: Some((p(10.0, 33.2), p(10.0, 34.8))),
            }),
            ..pad("J2-1", VCC, p(10.0, 34.0), PadShape::Obround(2.0, 3.8))
        },
        tht("J2-2", GND, p(15.0, 34.0), PadShape::Circle(2.0), 1.0),
        // Q1: TO-92 probe driver (E, B, C).
        tht("Q1-E", GND, p(27.46, 30.0), to92, 0.8),
        tht("Q1-B", "BASE", p(30.0, 30.0), to92, 0.8),
        tht("Q1-C", "PROBE", p(32.54, 30.0), to92, 0.8),
        // Passives (0805).
        pad("R1-1", "BASE_DRV", p(27.0, 24.05), smd0805_vertical),
        pad("R1-2", "BASE", p(27.0, 25.95), smd0805_vertical),
        pad("R2-1", "SENSE", p(33.05, 19.365), smd0805),
        pad("R2-2", "PROBE", p(34.95, 19.365), smd0805),
        pad("C1-1", VCC, p(24.5, 24.05), smd0805_vertical),
        pad("C1-2", GND, p(24.5, 25.95), smd0805_vertical),
        pad("D1-A", "LED", p(29.05, 14.0), smd0805),
        pad("D1-K", GND, p(30.95, 14.0), smd0805),
        // TP1: probe test point.
        pad("TP1", "PROBE", p(37.5, 16.5), PadShape::Octagon(1.6)),
        // Vias.
        via("V1", GND, p(15.5, 16.3)),
        via("V4", VCC, p(22.7, 26.3)),
        via("V5", GND, p(33.0, 14.0)),
        via("V6", GND, p(24.5, 27.9)),
    ];
    pads.extend(soic8(
        p(20.0, 20.0),
        ["ENABLE", "DATA", "NC", GND, "LED", "SENSE", "BASE_DRV", VCC],
    ));
    let tracks = vec![
        // Top: signals at 0.3 mm, power at 0.5 mm; 45° bends.
        track(
            Top,
            "DATA",
            0.3,
            &[
                (4.0, 19.08),
                (12.0, 19.08),
                (13.555, 20.635),
                (17.3, 20.635),
            ],
        ),
        track(
            Top,
            "ENABLE",
            0.3,
            &[
                (4.0, 21.62),
                (8.0, 21.62),
                (10.0, 23.62),
                (15.5, 23.62),
                (17.215, 21.905),
            ],
        ),
        track(
            Top,
            GND,
            0.4,
            &[(17.3, 18.095), (15.5, 18.095), (15.5, 16.3)],
        ),
        track(Top, VCC, 0.5, &[(22.7, 21.905), (22.7, 26.3)]),
        track(Top, VCC, 0.5, &[(22.7, 24.05), (24.5, 24.05)]),
        track(Top, GND, 0.4, &[(24.5, 25.95), (24.5, 27.9)]),
        track(
            Top,
            "BASE_DRV",
            0.3,
            &[
                (22.7, 20.635),
                (25.5, 20.635),
                (27.0, 22.135),
                (27.0, 24.05),
            ],
        ),
        track(
            Top,
            "BASE",
            0.3,
            &[(27.0, 25.95), (27.0, 26.5), (30.0, 29.5)],
        ),
        track(Top, "SENSE", 0.3, &[(22.7, 19.365), (33.05, 19.365)]),
        track(Top, "PROBE", 0.3, &[(34.95, 19.365), (40.5, 19.365)]),
        track(Top, "PROBE", 0.3, &[(37.5, 16.5), (40.5, 16.5)]),
        track(
            Top,
            "LED",
            0.3,
            &[
                (22.7, 18.095),
                (24.0, 18.095),
                (28.095, 14.0),
                (29.05, 14.0),
            ],
        ),
        track(Top, GND, 0.4, &[(30.95, 14.0), (33.0, 14.0)]),
        // The probe drive: a curved track from Q1's collector into the electrode.
        track(Top, "PROBE", 0.4, &[(32.54, 30.0), (36.0, 30.0)]),
        Track {
            layer: Top,
            net: "PROBE",
            width: 0.4,
            path: vec![p(36.0, 30.0), p(39.2, 26.8)],
            arc: Some((p(36.0, 26.8), Turn::Clockwise)),
        },
        track(Top, "PROBE", 0.4, &[(39.2, 26.8), (41.0, 25.0)]),
        // Bottom: the supply, cut through the ground pour.
        track(
            Bottom,
            VCC,
            0.5,
            &[(4.0, 14.0), (7.0, 14.0), (7.0, 31.0), (10.0, 34.0)],
        ),
        track(Bottom, VCC, 0.5, &[(7.0, 26.3), (22.7, 26.3)]),
    ];
    WrenNode {
        width: 50.0,
        height: 40.0,
        corner_radius: 2.0,
        pads,
        tracks,
        electrode: Stadium {
            low: p(43.0, 14.0),
            high: p(43.0, 24.0),
            radius: 3.0,
        },
        electrode_net: "PROBE",
        mounting_holes: vec![(p(5.0, 5.0), 3.2), (p(45.0, 35.0), 3.2)],
    }
}

/// A segment swept by a disc: every point within `radius` of the segment a–b.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Capsule {
    pub a: Point,
    pub b: Point,
    pub radius: f64,
}

/// One piece of copper for clearance checks, covered by capsules that contain it.
#[derive(Debug, Clone, PartialEq)]
pub struct CopperFeature {
    pub layer: CopperLayer,
    pub net: &'static str,
    pub what: String,
    pub capsules: Vec<Capsule>,
}

/// Capsules that contain a pad shape (exact for circles and obrounds; rectangles are
/// covered by a capsule along the long side whose radius reaches the corners).
pub fn pad_capsules(at: Point, shape: PadShape) -> Vec<Capsule> {
    let along = |long_x: bool, long: f64, short: f64, radius: f64| {
        let h = (long - short).max(0.0) / 2.0;
        let (dx, dy) = if long_x { (h, 0.0) } else { (0.0, h) };
        vec![Capsule {
            a: Point::new(at.x - dx, at.y - dy),
            b: Point::new(at.x + dx, at.y + dy),
            radius,
        }]
    };
    match shape {
        PadShape::Circle(d) | PadShape::Octagon(d) => along(true, d, d, d / 2.0),
        PadShape::Obround(w, h) => along(w >= h, w.max(h), w.min(h), w.min(h) / 2.0),
        PadShape::Rect(w, h) | PadShape::RoundRect(w, h, _) => along(
            w >= h,
            w.max(h),
            w.min(h),
            w.min(h) / std::f64::consts::SQRT_2,
        ),
    }
}

impl WrenNode {
    /// Every piece of copper as capsules, for clearance checks. Arcs are covered by chords
    /// whose radius is grown by the chord's sagitta.
    pub fn copper_features(&self) -> Vec<CopperFeature> {
        let mut out = Vec::new();
        for layer in [CopperLayer::Top, CopperLayer::Bottom] {
            for pad in self.pads.iter().filter(|p| p.on(layer)) {
                out.push(CopperFeature {
                    layer,
                    net: pad.net,
                    what: pad.name.to_string(),
                    capsules: pad_capsules(pad.at, pad.shape),
                });
            }
        }
        for t in &self.tracks {
            let mut capsules = Vec::new();
            match t.arc {
                None => {
                    for w in t.path.windows(2) {
                        capsules.push(Capsule {
                            a: w[0],
                            b: w[1],
                            radius: t.width / 2.0,
                        });
                    }
                }
                Some((c, turn)) => {
                    let (s, e) = (t.path[0], t.path[1]);
                    let sweep = crate::image::arc_sweep(s, e, c, turn);
                    let r = c.dist(s);
                    let a0 = (s.y - c.y).atan2(s.x - c.x);
                    const STEPS: usize = 32;
                    let step = sweep / STEPS as f64;
                    let sagitta = r * (1.0 - (step / 2.0).cos());
                    let at = |k: usize| {
                        let a = a0 + step * k as f64;
                        Point::new(c.x + r * a.cos(), c.y + r * a.sin())
                    };
                    for k in 0..STEPS {
                        capsules.push(Capsule {
                            a: at(k),
                            b: at(k + 1),
                            radius: t.width / 2.0 + sagitta,
                        });
                    }
                }
            }
            out.push(CopperFeature {
                layer: t.layer,
                net: t.net,
                what: format!("{} track from {:?}", t.net, t.path[0]),
                capsules,
            });
        }
        out.push(CopperFeature {
            layer: CopperLayer::Top,
            net: self.electrode_net,
            what: "probe electrode".into(),
            capsules: vec![Capsule {
                a: self.electrode.low,
                b: self.electrode.high,
                radius: self.electrode.radius,
            }],
        });
        out
    }
}
