//! Writes the Wren node design (`demo.rs`) as Gerber X2 and Excellon files.

use super::demo::{CopperLayer, PadShape, Stadium, WrenNode, BOARD_NAME, GND, MAKER_LAB, SOFTWARE};
use super::font;
use super::gerber_writer::{Aperture, DrillWriter, GerberWriter};
use crate::image::{Point, Turn};

/// Clearance between the ground pour and other copper (≥ 0.25 mm design rule).
const POUR_CLEARANCE: f64 = 0.3;
/// The pour stops this far inside the board edge.
const POUR_EDGE_INSET: f64 = 0.6;
/// Solder-mask openings are this much larger than the pad on every side (common practice).
const MASK_EXPANSION: f64 = 0.1;
/// Width of the thermal relief spokes and gaps.
const THERMAL_GAP: f64 = 0.4;

/// Aperture macros (Gerber spec 2024.05 §4.5). RoundRect: $1 width, $2 height, $3 corner
/// radius, built from two centre-line rectangles (primitive 21) and four corner circles
/// (primitive 1). Thermal: primitive 7 with $1 outer and $2 inner diameter and $3 gap,
/// turned 45° so that the spokes run diagonally.
const ROUND_RECT: &[&str] = &[
    "0 Rectangle with rounded corners: width $1, height $2, corner radius $3",
    "21,1,$1,$2-$3-$3,0,0,0",
    "21,1,$1-$3-$3,$2,0,0,0",
    "1,1,$3+$3,$1/2-$3,$2/2-$3",
    "1,1,$3+$3,-$1/2+$3,$2/2-$3",
    "1,1,$3+$3,-$1/2+$3,-$2/2+$3",
    "1,1,$3+$3,$1/2-$3,-$2/2+$3",
];
const THERMAL: &[&str] = &[
    "0 Thermal relief: outer diameter $1, inner diameter $2, gap $3",
    "7,0,0,$1,$2,$3,45",
];

/// Apertures defined on first use, each with its `.AperFunction` (§5.6.10).
struct Apertures {
    defined: Vec<(String, Aperture)>,
    /// The `.AperFunction` in force for the next definition (None: cleared or never set).
    function_in_force: Option<String>,
}

impl Apertures {
    fn new() -> Apertures {
        Apertures {
            defined: Vec::new(),
            function_in_force: None,
        }
    }

    /// Sets (or clears) the `.AperFunction` for what is defined next, writing only changes.
    fn set_function(&mut self, w: &mut GerberWriter, function: Option<&str>) {
        let wanted = function.map(str::to_string);
        if wanted != self.function_in_force {
            match function {
                Some(f) => w.aperture_function(f),
                None => w.clear_aperture_attributes(),
            }
            self.function_in_force = wanted;
        }
    }

    fn get(&mut self, w: &mut GerberWriter, shape: PadShape, function: Option<&str>) -> Aperture {
        let key = format!("{shape:?}/{function:?}");
        if let Some((_, a)) = self.defined.iter().find(|(k, _)| *k == key) {
            return *a;
        }
        self.set_function(w, function);
        let a = match shape {
            PadShape::Circle(d) => w.circle(d),
            PadShape::Rect(x, y) => w.rect(x, y),
            PadShape::Obround(x, y) => w.obround(x, y),
            PadShape::RoundRect(x, y, r) => w.macro_aperture("RoundRect", &[x, y, r]),
            PadShape::Octagon(d) => w.polygon(d, 8, 22.5),
        };
        self.defined.push((key, a));
        a
    }

    fn flash(&mut self, w: &mut GerberWriter, shape: PadShape, function: Option<&str>, at: Point) {
        let a = self.get(w, shape, function);
        w.select(a);
        w.flash(at);
    }

    fn stroke(&mut self, w: &mut GerberWriter, width: f64, function: Option<&str>, path: &[Point]) {
        let a = self.get(w, PadShape::Circle(width), function);
        w.select(a);
        w.polyline(path);
    }
}

/// Draws a closed rounded rectangle inset `inset` from the board edge (corners are arcs
/// about the board's corner centres), as the current contour.
fn rounded_board_contour(w: &mut GerberWriter, b: &WrenNode, inset: f64) {
    let r = b.corner_radius;
    let (x0, y0, x1, y1) = (inset, inset, b.width - inset, b.height - inset);
    let rr = r - inset;
    let ccw = Turn::CounterClockwise;
    w.move_to(Point::new(x0 + rr, y0));
    w.line_to(Point::new(x1 - rr, y0));
    w.arc_to(Point::new(x1, y0 + rr), Point::new(b.width - r, r), ccw);
    w.line_to(Point::new(x1, y1 - rr));
    w.arc_to(
        Point::new(x1 - rr, y1),
        Point::new(b.width - r, b.height - r),
        ccw,
    );
    w.line_to(Point::new(x0 + rr, y1));
    w.arc_to(Point::new(x0, y1 - rr), Point::new(r, b.height - r), ccw);
    w.line_to(Point::new(x0, y0 + rr));
    w.arc_to(Point::new(x0 + rr, y0), Point::new(r, r), ccw);
}

/// A vertical stadium grown by `grow`, as a region contour with clockwise end arcs.
fn stadium_region(w: &mut GerberWriter, s: Stadium, grow: f64) {
    let r = s.radius + grow;
    let cw = Turn::Clockwise;
    w.begin_region();
    w.move_to(Point::new(s.low.x - r, s.low.y));
    w.line_to(Point::new(s.high.x - r, s.high.y));
    w.arc_to(Point::new(s.high.x + r, s.high.y), s.high, cw);
    w.line_to(Point::new(s.low.x + r, s.low.y));
    w.arc_to(Point::new(s.low.x - r, s.low.y), s.low, cw);
    w.end_region();
}

fn pad_function(pad: &super::demo::Pad) -> &'static str {
    if pad.via {
        "ViaPad"
    } else if pad.is_through() {
        "ComponentPad"
    } else {
        "SMDPad,CuDef"
    }
}

fn draw_tracks(
    w: &mut GerberWriter,
    aps: &mut Apertures,
    b: &WrenNode,
    layer: CopperLayer,
    grow: f64,
    function: Option<&str>,
) {
    for t in b.tracks.iter().filter(|t| t.layer == layer) {
        match t.arc {
            None => aps.stroke(w, t.width + 2.0 * grow, function, &t.path),
            Some((c, turn)) => {
                let a = aps.get(w, PadShape::Circle(t.width + 2.0 * grow), function);
                w.select(a);
                w.move_to(t.path[0]);
                w.arc_to(t.path[1], c, turn);
            }
        }
    }
}

fn top_copper(b: &WrenNode) -> String {
    let mut w = GerberWriter::new(SOFTWARE, "Copper,L1,Top", "Positive");
    w.file_attribute("Part", &["Single"]);
    w.comment(&format!("{BOARD_NAME}, top copper"));
    w.aperture_macro("RoundRect", ROUND_RECT);
    let mut aps = Apertures::new();
    // The electrode is a region; the current aperture attributes apply to it (§5.6.10).
    aps.set_function(&mut w, Some("Conductor"));
    stadium_region(&mut w, b.electrode, 0.0);
    draw_tracks(
        &mut w,
        &mut aps,
        b,
        CopperLayer::Top,
        0.0,
        Some("Conductor"),
    );
    for pad in &b.pads {
        aps.flash(&mut w, pad.shape, Some(pad_function(pad)), pad.at);
    }
    w.finish()
}

fn bottom_copper(b: &WrenNode) -> String {
    let mut w = GerberWriter::new(SOFTWARE, "Copper,L2,Bot", "Positive");
    w.file_attribute("Part", &["Single"]);
    w.comment(&format!("{BOARD_NAME}, bottom copper with ground pour"));
    w.aperture_macro("Thermal", THERMAL);
    let mut aps = Apertures::new();
    // 1. The ground pour: the board shape inset from the edge.
    aps.set_function(&mut w, Some("Conductor"));
    w.begin_region();
    rounded_board_contour(&mut w, b, POUR_EDGE_INSET);
    w.end_region();
    // 2. Clear cut-outs: around other nets, under the probe electrode and around the
    //    mounting holes; thermal reliefs around ground pads.
    w.clear();
    aps.set_function(&mut w, None);
    stadium_region(&mut w, b.electrode, 1.0);
    for &(at, d) in &b.mounting_holes {
        aps.flash(&mut w, PadShape::Circle(d + 1.0), None, at);
    }
    draw_tracks(
        &mut w,
        &mut aps,
        b,
        CopperLayer::Bottom,
        POUR_CLEARANCE,
        None,
    );
    // Ground vias join the pour solidly; every other through pad is cut free or relieved.
    for pad in b
        .pads
        .iter()
        .filter(|p| p.is_through() && !(p.via && p.net == GND))
    {
        let cut = pad.shape.grown(POUR_CLEARANCE);
        match (pad.net == GND, pad.shape) {
            (false, _) => aps.flash(&mut w, cut, None, pad.at),
            (true, PadShape::Circle(d)) => {
                let outer = d + 2.0 * POUR_CLEARANCE;
                let a = w.macro_aperture("Thermal", &[outer, d, THERMAL_GAP]);
                w.select(a);
                w.flash(pad.at);
            }
            // Non-round ground pads: a clear cut-out now, spokes drawn as tracks below.
            (true, _) => aps.flash(&mut w, cut, None, pad.at),
        }
    }
    // 3. Dark: pads, spokes and the supply tracks.
    w.dark();
    for pad in b.pads.iter().filter(|p| p.is_through()) {
        if pad.net == GND && !pad.via && !matches!(pad.shape, PadShape::Circle(_)) {
            let reach = match pad.shape.grown(POUR_CLEARANCE + 0.3) {
                PadShape::Rect(_, h) | PadShape::Obround(_, h) | PadShape::RoundRect(_, h, _) => {
                    h / 2.0
                }
                PadShape::Circle(d) | PadShape::Octagon(d) => d / 2.0,
            };
            let spoke = [
                Point::new(pad.at.x, pad.at.y - reach),
                Point::new(pad.at.x, pad.at.y + reach),
            ];
            aps.stroke(&mut w, THERMAL_GAP, Some("Conductor"), &spoke);
        }
        aps.flash(&mut w, pad.shape, Some(pad_function(pad)), pad.at);
    }
    draw_tracks(
        &mut w,
        &mut aps,
        b,
        CopperLayer::Bottom,
        0.0,
        Some("Conductor"),
    );
    w.finish()
}

fn solder_mask(b: &WrenNode, layer: CopperLayer) -> String {
    let (function, side) = match layer {
        CopperLayer::Top => ("Soldermask,Top", "top"),
        CopperLayer::Bottom => ("Soldermask,Bot", "bottom"),
    };
    // Negative: the image shows the openings (the usual way masks are written, §5.6.4).
    let mut w = GerberWriter::new(SOFTWARE, function, "Negative");
    w.file_attribute("Part", &["Single"]);
    w.comment(&format!("{BOARD_NAME}, {side} solder mask openings"));
    w.aperture_macro("RoundRect", ROUND_RECT);
    let mut aps = Apertures::new();
    for pad in b.pads.iter().filter(|p| p.on(layer) && !p.via) {
        let f = if pad.is_through() {
            "ComponentPad"
        } else {
            "SMDPad,CuDef"
        };
        aps.flash(&mut w, pad.shape.grown(MASK_EXPANSION), Some(f), pad.at);
    }
    for &(at, d) in &b.mounting_holes {
        aps.flash(
            &mut w,
            PadShape::Circle(d + 0.4),
            Some("Other,MountingHole"),
            at,
        );
    }
    w.finish()
}

fn top_legend() -> String {
    let mut w = GerberWriter::new(SOFTWARE, "Legend,Top", "Positive");
    w.file_attribute("Part", &["Single"]);
    w.comment(&format!("{BOARD_NAME}, top legend"));
    let mut aps = Apertures::new();
    let line = 0.2;
    let a = aps.get(&mut w, PadShape::Circle(line), Some("Other,Legend"));
    w.select(a);
    let pts = |v: &[(f64, f64)]| v.iter().map(|&(x, y)| Point::new(x, y)).collect::<Vec<_>>();
    // U1 body with the pin-1 notch.
    w.polyline(&pts(&[
        (19.5, 22.9),
        (18.6, 22.9),
        (18.6, 17.1),
        (21.4, 17.1),
        (21.4, 22.9),
        (20.5, 22.9),
    ]));
    w.arc_to(
        Point::new(19.5, 22.9),
        Point::new(20.0, 22.9),
        Turn::Clockwise,
    );
    // J1 frame and Q1's flat-faced body.
    w.polyline(&pts(&[
        (2.7, 12.6),
        (5.3, 12.6),
        (5.3, 23.0),
        (2.7, 23.0),
        (2.7, 12.6),
    ]));
    w.polyline(&pts(&[(28.01, 27.0), (31.99, 27.0)]));
    w.arc_to(
        Point::new(28.01, 27.0),
        Point::new(30.0, 30.0),
        Turn::CounterClockwise,
    );
    // J2 frame.
    w.polyline(&pts(&[
        (8.2, 31.4),
        (17.2, 31.4),
        (17.2, 36.6),
        (8.2, 36.6),
        (8.2, 31.4),
    ]));
    // Text.
    font::draw_text(&mut w, "WREN B", Point::new(12.0, 3.0), 0.4);
    // Pin-1 marks.
    let dot = aps.get(&mut w, PadShape::Circle(0.5), Some("Other,Legend"));
    w.select(dot);
    w.flash(Point::new(15.7, 22.9));
    w.flash(Point::new(2.0, 14.0));
    w.finish()
}

fn outline(b: &WrenNode) -> String {
    let mut w = GerberWriter::new(SOFTWARE, "Profile,NP", "Positive");
    w.file_attribute("Part", &["Single"]);
    w.comment(&format!(
        "{BOARD_NAME}, board edge, {} x {} mm",
        b.width, b.height
    ));
    let mut aps = Apertures::new();
    let a = aps.get(&mut w, PadShape::Circle(0.1), Some("Profile"));
    w.select(a);
    rounded_board_contour(&mut w, b, 0.0);
    w.finish()
}

fn drill(b: &WrenNode) -> String {
    let mut d = DrillWriter::new(&[
        &format!("{BOARD_NAME}, drill and slot program, {MAKER_LAB}"),
        &format!("#@! TF.GenerationSoftware,{SOFTWARE}"),
        "Tools 1 and 2 are plated through holes; tool 3 is non-plated (mounting holes)",
    ]);
    d.tool(1, 0.8, Some("#@! TA.AperFunction,Plated,PTH,ViaDrill"));
    d.tool(
        2,
        1.0,
        Some("#@! TA.AperFunction,Plated,PTH,ComponentDrill"),
    );
    d.tool(
        3,
        3.2,
        Some("#@! TA.AperFunction,NonPlated,NPTH,MechanicalDrill"),
    );
    for (tool, dia) in [(1, 0.8), (2, 1.0)] {
        for pad in &b.pads {
            let Some(h) = pad.hole else { continue };
            if (h.diameter - dia).abs() > 1e-9 {
                continue;
            }
            match h.slot {
                None => d.hole(tool, pad.at),
                Some((from, to)) => d.slot(tool, from, to),
            }
        }
    }
    for &(at, _) in &b.mounting_holes {
        d.hole(3, at);
    }
    d.finish()
}

fn job_file(b: &WrenNode, names: &[(&str, &str)]) -> String {
    let mut s = String::new();
    s.push_str("# Job description of the demo board (fictional scenario).\n");
    s.push_str(&format!("board = \"{BOARD_NAME}\"\n"));
    s.push_str(&format!("maker_lab = \"{MAKER_LAB}\"\n"));
    s.push_str(&format!("size_mm = [{}, {}]\n", b.width, b.height));
    s.push_str("copper_layers = 2\n\n");
    for (name, what) in names {
        s.push_str(&format!(
            "[[files]]\nname = \"{name}\"\nlayer = \"{what}\"\n\n"
        ));
    }
    s.pop();
    s
}

/// The files of the demo board: (file name, text), in a fixed order.
pub fn demo_files(b: &WrenNode) -> Vec<(String, String)> {
    let layers: Vec<(&str, &str, String)> = vec![
        ("wren-node.top-copper.gbr", "copper top", top_copper(b)),
        (
            "wren-node.bottom-copper.gbr",
            "copper bottom",
            bottom_copper(b),
        ),
        (
            "wren-node.top-mask.gbr",
            "solder mask top",
            solder_mask(b, CopperLayer::Top),
        ),
        (
            "wren-node.bottom-mask.gbr",
            "solder mask bottom",
            solder_mask(b, CopperLayer::Bottom),
        ),
        ("wren-node.top-legend.gbr", "legend top", top_legend()),
        ("wren-node.outline.gbr", "outline", outline(b)),
        ("wren-node.drill.xln", "drill", drill(b)),
    ];
    let names: Vec<(&str, &str)> = layers.iter().map(|(n, w, _)| (*n, *w)).collect();
    let mut files: Vec<(String, String)> = layers
        .into_iter()
        .map(|(n, _, t)| (n.to_string(), t))
        .collect();
    files.push(("wren-node.umbra-job.toml".to_string(), job_file(b, &names)));
    files
}
