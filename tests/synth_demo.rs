//! The demo board ("Wren soil-moisture node" rev B): design rules, file contents, and that
//! the committed files in examples/wren-node/ are what the generator writes.

use gerber_types::{
    Command, CoordinateFormat, CoordinateMode, Coordinates, ExtendedCode, FileAttribute,
    FileFunction, FilePolarity, GerberCode, Operation, Position, Profile, Unit, ZeroOmission,
};
use std::collections::BTreeMap;
use std::path::PathBuf;
use umbra::image::Point;
use umbra::layers::{self, LayerFunction as F, Side};
use umbra::synth::demo::{Capsule, CopperLayer, PadShape};
use umbra::synth::{demo_files, wren_node};

/// Home-etching design rules the demo keeps (see the module docs): common practice.
const MIN_TRACK: f64 = 0.25;
const MIN_GAP: f64 = 0.25;
const MIN_RING: f64 = 0.3;
const MIN_EDGE: f64 = 0.5;

/// Distance between segments a–b and c–d (closest points of two segments in the plane: zero
/// if they cross, else the least of the four point-to-segment distances).
fn segment_distance(a: Point, b: Point, c: Point, d: Point) -> f64 {
    fn point_segment(p: Point, a: Point, b: Point) -> f64 {
        let (dx, dy) = (b.x - a.x, b.y - a.y);
        let len2 = dx * dx + dy * dy;
        let t = if len2 == 0.0 {
            0.0
        } else {
            (((p.x - a.x) * dx + (p.y - a.y) * dy) / len2).clamp(0.0, 1.0)
        };
        p.dist(Point::new(a.x + t * dx, a.y + t * dy))
    }
    let cross =
        |o: Point, p: Point, q: Point| (p.x - o.x) * (q.y - o.y) - (p.y - o.y) * (q.x - o.x);
    let (d1, d2) = (cross(a, b, c), cross(a, b, d));
    let (d3, d4) = (cross(c, d, a), cross(c, d, b));
    if d1 * d2 < 0.0 && d3 * d4 < 0.0 {
        return 0.0;
    }
    point_segment(a, c, d)
        .min(point_segment(b, c, d))
        .min(point_segment(c, a, b))
        .min(point_segment(d, a, b))
}

fn capsule_gap(p: &Capsule, q: &Capsule) -> f64 {
    segment_distance(p.a, p.b, q.a, q.b) - p.radius - q.radius
}

#[test]
fn copper_of_different_nets_keeps_the_minimum_gap() {
    let board = wren_node();
    let features = board.copper_features();
    let mut worst = f64::INFINITY;
    let mut problems = Vec::new();
    for (i, f) in features.iter().enumerate() {
        for g in &features[i + 1..] {
            if f.layer != g.layer || f.net == g.net {
                continue;
            }
            for p in &f.capsules {
                for q in &g.capsules {
                    let gap = capsule_gap(p, q);
                    worst = worst.min(gap);
                    if gap < MIN_GAP {
                        problems.push(format!(
                            "{:?}: {} ({}) and {} ({}): {gap:.3} mm",
                            f.layer, f.what, f.net, g.what, g.net
                        ));
                    }
                }
            }
        }
    }
    println!("smallest gap between nets (capsule bound): {worst:.3} mm");
    assert!(problems.is_empty(), "\n{}", problems.join("\n"));
}

#[test]
fn tracks_rings_and_edges_keep_the_rules() {
    let board = wren_node();
    for t in &board.tracks {
        assert!(t.width >= MIN_TRACK, "{} track of {} mm", t.net, t.width);
    }
    for pad in &board.pads {
        let Some(h) = pad.hole else { continue };
        // Annular ring = (pad width − hole width) / 2 across the narrowest direction.
        let ring = (pad.shape.narrowest() - h.diameter) / 2.0;
        assert!(ring >= MIN_RING - 1e-9, "{}: ring {ring}", pad.name);
        if let (Some((a, b)), PadShape::Obround(w, hgt)) = (h.slot, pad.shape) {
            // Along the slot: pad length minus slot length (path + tool diameter).
            let along = (w.max(hgt) - (a.dist(b) + h.diameter)) / 2.0;
            assert!(
                along >= MIN_RING - 1e-9,
                "{}: ring along the slot {along}",
                pad.name
            );
        }
    }
    // Copper stays MIN_EDGE inside the board edge and away from the mounting holes.
    for f in board.copper_features() {
        for c in &f.capsules {
            for p in [c.a, c.b] {
                let inside = (p.x - c.radius)
                    .min(p.y - c.radius)
                    .min(board.width - p.x - c.radius)
                    .min(board.height - p.y - c.radius);
                assert!(
                    inside >= MIN_EDGE,
                    "{} is {inside:.3} mm from the edge",
                    f.what
                );
            }
            for &(at, d) in &board.mounting_holes {
                let hole = Capsule {
                    a: at,
                    b: at,
                    radius: d / 2.0,
                };
                assert!(
                    capsule_gap(c, &hole) >= MIN_EDGE,
                    "{} near a mounting hole",
                    f.what
                );
            }
        }
    }
}

fn files() -> BTreeMap<String, String> {
    demo_files(&wren_node()).into_iter().collect()
}

#[test]
fn the_committed_demo_files_are_current() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node");
    for (name, text) in files() {
        let committed = std::fs::read_to_string(dir.join(&name))
            .unwrap_or_else(|e| panic!("{name}: {e}; run `cargo run --example make_demo_board`"));
        assert!(
            committed == text,
            "{name} differs; run `cargo run --example make_demo_board`"
        );
    }
}

#[test]
fn generation_is_deterministic() {
    assert_eq!(files(), files());
}

#[test]
fn every_file_identifies_by_name_and_by_attributes() {
    let expected = [
        ("wren-node.top-copper.gbr", F::Copper, Side::Top),
        ("wren-node.bottom-copper.gbr", F::Copper, Side::Bottom),
        ("wren-node.top-mask.gbr", F::SolderMask, Side::Top),
        ("wren-node.bottom-mask.gbr", F::SolderMask, Side::Bottom),
        ("wren-node.top-legend.gbr", F::Legend, Side::Top),
        ("wren-node.outline.gbr", F::Outline, Side::Both),
        ("wren-node.drill.xln", F::Drill, Side::Both),
    ];
    let files = files();
    assert_eq!(
        files.len(),
        expected.len() + 1,
        "seven layers and the job file"
    );
    for (name, function, side) in expected {
        let text = &files[name];
        let by_name = layers::from_file_name(name).unwrap();
        assert_eq!((by_name.function, by_name.side), (function, side), "{name}");
        let id = layers::identify(name, &BTreeMap::new(), text).unwrap();
        assert_eq!((id.function, id.side), (function, side), "{name}");
        if name.ends_with(".gbr") {
            assert_eq!(
                id.source,
                layers::IdSource::Attribute,
                "{name} states its function"
            );
        }
    }
    assert!(layers::identify("wren-node.umbra-job.toml", &BTreeMap::new(), "").is_none());
}

fn gerber_types_line(c: impl Into<Command>) -> String {
    let mut out = Vec::new();
    c.into().serialize(&mut out).unwrap();
    String::from_utf8(out).unwrap()
}

#[test]
fn headers_and_coordinates_match_an_independent_writer() {
    let files = files();
    let top = &files["wren-node.top-copper.gbr"];
    let fmt = CoordinateFormat::new(ZeroOmission::Leading, CoordinateMode::Absolute, 4, 6);
    // gerber-types 0.7 writes the same format, unit and attribute lines (spec §4.2, §5.6).
    for line in [
        gerber_types_line(ExtendedCode::CoordinateFormat(fmt)),
        gerber_types_line(ExtendedCode::Unit(Unit::Millimeters)),
        gerber_types_line(FileAttribute::FileFunction(FileFunction::Copper {
            layer: 1,
            pos: gerber_types::ExtendedPosition::Top,
            copper_type: None,
        })),
        gerber_types_line(FileAttribute::FilePolarity(FilePolarity::Positive)),
        // J1 pin 1 is flashed at (4, 14) mm.
        {
            let mut out = Vec::new();
            Operation::Flash(Some(Coordinates::new(4, 14, fmt)))
                .serialize(&mut out)
                .unwrap();
            String::from_utf8(out).unwrap()
        },
    ] {
        assert!(top.contains(&line), "top copper lacks {line:?}");
    }
    let mask = &files["wren-node.bottom-mask.gbr"];
    for line in [
        gerber_types_line(FileAttribute::FileFunction(FileFunction::SolderMask {
            pos: Position::Bottom,
            index: None,
        })),
        gerber_types_line(FileAttribute::FilePolarity(FilePolarity::Negative)),
    ] {
        assert!(mask.contains(&line), "bottom mask lacks {line:?}");
    }
    let outline = &files["wren-node.outline.gbr"];
    let profile = gerber_types_line(FileAttribute::FileFunction(FileFunction::Profile(Some(
        Profile::NonPlated,
    ))));
    assert!(outline.contains(&profile), "outline lacks {profile:?}");
}

#[test]
fn the_demo_uses_the_promised_gerber_features() {
    let files = files();
    let top = &files["wren-node.top-copper.gbr"];
    let bottom = &files["wren-node.bottom-copper.gbr"];
    let legend = &files["wren-node.top-legend.gbr"];
    let outline = &files["wren-node.outline.gbr"];
    // Gerber spec 2024.05: G75 multi-quadrant (§4.7.2), G02/G03 arcs, G36/G37 regions
    // (§4.10), %LPC% clear polarity (§4.9.2), macro primitives 1, 21 and 7 (§4.5.1),
    // standard apertures C, R, O, P (§4.4).
    for (what, text, needles) in [
        (
            "top copper",
            top,
            &[
                "G75*",
                "G02*",
                "G36*",
                "G37*",
                "%AMRoundRect*",
                "\n21,1,",
                "\n1,1,",
                "C,",
                "R,",
                "O,",
                "P,",
                "%TA.AperFunction,SMDPad,CuDef*%",
                "%TA.AperFunction,Conductor*%",
            ][..],
        ),
        (
            "bottom copper",
            bottom,
            &[
                "G36*",
                "%LPC*%",
                "%LPD*%",
                "%AMThermal*",
                "\n7,0,0,$1,$2,$3,45*",
                "G03*",
                "G02*",
            ][..],
        ),
        (
            "legend",
            legend,
            &["%TF.FileFunction,Legend,Top*%", "G02*", "G03*"][..],
        ),
        (
            "outline",
            outline,
            &["%TA.AperFunction,Profile*%", "G03*"][..],
        ),
    ] {
        for n in needles {
            assert!(text.contains(n), "{what} lacks {n:?}");
        }
    }
    // Every file ends with M02 (§4.13).
    for (name, text) in &files {
        if name.ends_with(".gbr") {
            assert!(text.ends_with("M02*\n"), "{name}");
        }
    }
}

#[test]
fn the_drill_file_lists_every_hole() {
    let board = wren_node();
    let files = files();
    let drill = &files["wren-node.drill.xln"];
    // Excellon (IPC-NC-349): M48 header, METRIC, T<n>C<diameter>, G85 slot, M30 end.
    assert!(drill.starts_with("M48\n"));
    for n in [
        "METRIC",
        "T1C0.800",
        "T2C1.000",
        "T3C3.200",
        "G85",
        "Plated,PTH",
        "NonPlated,NPTH",
    ] {
        assert!(drill.contains(n), "drill lacks {n}");
    }
    assert!(drill.ends_with("M30\n"));
    let holes = board
        .pads
        .iter()
        .filter(|p| p.hole.is_some_and(|h| h.slot.is_none()))
        .count()
        + board.mounting_holes.len();
    let lines = drill
        .lines()
        .filter(|l| l.starts_with('X') && !l.contains("G85"))
        .count();
    assert_eq!(lines, holes);
    assert_eq!(drill.matches("G85").count(), 1);
    let vias = board.pads.iter().filter(|p| p.via).count();
    assert!(vias >= 3, "the board has vias");
    assert!(
        board
            .pads
            .iter()
            .any(|p| p.net == "GND" && p.hole.is_some() && matches!(p.shape, PadShape::Circle(_))),
        "a thermal-relieved pad"
    );
    let _ = CopperLayer::Top;
}
