//! The check on the demo board (no findings, copper area against geo) and the proof picture.

mod check_support;

use check_support::*;
use geo::{Area, BooleanOps};
use std::path::PathBuf;
use umbra::check::{check_films, FindingKind, ProcessLimits};
use umbra::image::{Contour, Point, Polarity, Segment, Shape, Turn};
use umbra::process::{DrillMarkStyle, Profile};
use umbra::proof::{draw_proof, write_proof, CopperFilm, ProofInput, MARKER, TOP};

fn demo() -> umbra::load::Board {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node");
    umbra::load::load_paths(&[dir], &umbra::limits::Limits::default()).unwrap()
}

#[test]
fn the_clean_demo_board_has_no_findings_at_1200_dpi() {
    let board = demo();
    let profile = Profile::default();
    assert_eq!(profile.printer.dpi, 1200.0);
    let (films, frame, _) =
        umbra::films::make_films(&board, &profile, None, "Wren", "2026-01-01").unwrap();
    let report = check_films(&films, &board, &frame.board, &profile.limits);
    assert!(report.findings.is_empty(), "{:#?}", report.findings);
    // Its narrowest copper is 0.3 mm and its gaps at least 0.25 mm (synth::demo's rules).
    let top = report
        .films
        .iter()
        .find(|f| f.film == "copper-top")
        .unwrap();
    assert!(top.smallest_width_mm.is_none_or(|w| w >= 0.25), "{top:?}");
    assert!(top.smallest_gap_mm.is_none_or(|w| w >= 0.2), "{top:?}");
}

/// A circle as a polygon of `n` vertices (area error 1 − sin(2π/n)·n/(2π) ≈ 1e-4 for n = 256).
fn circle(c: Point, r: f64, n: usize) -> Vec<(f64, f64)> {
    (0..n)
        .map(|i| {
            let a = i as f64 / n as f64 * std::f64::consts::TAU;
            (c.x + r * a.cos(), c.y + r * a.sin())
        })
        .collect()
}

fn poly(points: Vec<(f64, f64)>) -> geo::MultiPolygon<f64> {
    geo::MultiPolygon::new(vec![geo::Polygon::new(
        geo::LineString::from(points),
        vec![],
    )])
}

/// Points along an arc from `a` about `c` (sweep from image::arc_sweep), `n` steps.
fn arc_points(a: Point, b: Point, c: Point, turn: Turn, n: usize) -> Vec<Point> {
    let sweep = umbra::image::arc_sweep(a, b, c, turn);
    let r = c.dist(a);
    let a0 = (a.y - c.y).atan2(a.x - c.x);
    (1..=n)
        .map(|k| {
            let t = a0 + sweep * k as f64 / n as f64;
            Point::new(c.x + r * t.cos(), c.y + r * t.sin())
        })
        .collect()
}

/// A round-pen stroke along a line: the union of the two end discs and the rectangle.
fn capsule(a: Point, b: Point, w: f64) -> geo::MultiPolygon<f64> {
    let r = w / 2.0;
    let (dx, dy) = (b.x - a.x, b.y - a.y);
    let len = dx.hypot(dy);
    let mut m = poly(circle(a, r, 128)).union(&poly(circle(b, r, 128)));
    if len > 0.0 {
        let (nx, ny) = (-dy / len * r, dx / len * r);
        m = m.union(&poly(vec![
            (a.x + nx, a.y + ny),
            (b.x + nx, b.y + ny),
            (b.x - nx, b.y - ny),
            (a.x - nx, a.y - ny),
        ]));
    }
    m
}

/// An image shape as geo polygons (arcs flattened finely).
fn shape_geo(s: &Shape) -> geo::MultiPolygon<f64> {
    match s {
        Shape::Disc { center, diameter } => poly(circle(*center, diameter / 2.0, 256)),
        Shape::Stroke {
            start,
            end,
            arc: None,
            width,
        } => capsule(*start, *end, *width),
        Shape::Stroke {
            start,
            end,
            arc: Some((c, turn)),
            width,
        } => {
            let mut pts = vec![*start];
            pts.extend(arc_points(*start, *end, *c, *turn, 128));
            let mut m = geo::MultiPolygon::new(vec![]);
            for w in pts.windows(2) {
                m = m.union(&capsule(w[0], w[1], *width));
            }
            m
        }
        Shape::Polygon(Contour { start, segments }) => {
            let mut pts = vec![(start.x, start.y)];
            let mut cur = *start;
            for s in segments {
                match *s {
                    Segment::Line { to } => pts.push((to.x, to.y)),
                    Segment::Arc { to, center, turn } => {
                        pts.extend(
                            arc_points(cur, to, center, turn, 128)
                                .iter()
                                .map(|p| (p.x, p.y)),
                        );
                    }
                }
                cur = s.end();
            }
            poly(pts)
        }
        Shape::Composite(parts) => {
            let mut m = geo::MultiPolygon::new(vec![]);
            for (add, part) in parts {
                let g = shape_geo(part);
                m = if *add { m.union(&g) } else { m.difference(&g) };
            }
            m
        }
    }
}

#[test]
fn demo_top_copper_area_matches_geo_within_half_a_percent() {
    let board = demo();
    let profile = Profile::default();
    let (films, frame, _) =
        umbra::films::make_films(&board, &profile, None, "Wren", "2026-01-01").unwrap();
    let report = check_films(&films, &board, &frame.board, &profile.limits);
    let measured = report
        .films
        .iter()
        .find(|f| f.film == "copper-top")
        .unwrap()
        .copper_area_mm2
        .unwrap();

    // Independent area: the top copper objects as polygons, united by geo, minus the 0.4 mm
    // pilot dots the film puts at every hole centre and slot end (process default).
    let image = board
        .files
        .iter()
        .find_map(|f| match &f.content {
            umbra::load::Content::Gerber(g) if f.name.ends_with("top-copper.gbr") => Some(&g.image),
            _ => None,
        })
        .unwrap();
    let mut copper = geo::MultiPolygon::new(vec![]);
    for o in &image.objects {
        let g = shape_geo(&o.shape);
        copper = match o.polarity {
            Polarity::Dark => copper.union(&g),
            Polarity::Clear => copper.difference(&g),
        };
    }
    assert_eq!(profile.drill_marks.style, DrillMarkStyle::Pilot);
    let pilot = profile.drill_marks.pilot_diameter_mm / 2.0;
    for d in umbra::films::drill_files(&board) {
        let mut centres: Vec<Point> = d.holes.iter().map(|h| h.at).collect();
        for s in &d.slots {
            centres.extend(s.path.first());
            centres.extend(s.path.last());
        }
        for c in centres {
            copper = copper.difference(&poly(circle(c, pilot, 256)));
        }
    }
    let expected = copper.unsigned_area();
    let rel = (measured - expected).abs() / expected;
    assert!(
        rel < 0.005,
        "film {measured:.3} mm², geo {expected:.3} mm², {:.3} %",
        rel * 100.0
    );
}

#[test]
fn the_proof_has_its_declared_size_and_circles_the_findings() {
    // Pads 3 mm square at x = 2.5 and 9.5 joined by a 0.08 mm track; its middle is (6, 10).
    let img = image(vec![
        rect(2.5, 10.0, 3.0, 3.0),
        rect(9.5, 10.0, 3.0, 3.0),
        track(p(2.5, 10.0), p(9.5, 10.0), 0.08),
    ]);
    let r = recipe(1200.0, DrillMarkStyle::None, true, 0.0);
    let c = check_copper(&img, None, board(12.0, 20.0), &r, &ProcessLimits::default());
    let mut findings = c.findings.clone();
    assert_eq!(findings.len(), 1);
    assert_eq!(findings[0].kind, FindingKind::ThinCopper);
    findings[0].number = 1;
    let input = ProofInput {
        title: "proof test".into(),
        board: c.board,
        top: Some(CopperFilm {
            film: &c.film.bitmap,
            map: &c.film.map,
            black_is_material: true,
        }),
        bottom: None,
        outline: None,
        drills: &[],
        targets: None,
        target_size_mm: 5.0,
        findings: &findings,
        px_per_mm: 20.0,
    };
    let proof = draw_proof(&input);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("proof.png");
    write_proof(&path, &proof).unwrap();

    // Read back with the png crate: the size is the declared one.
    let mut decoder =
        png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&path).unwrap()));
    // Expand the palette to RGB (PNG spec §11.2.3: each index names a PLTE entry).
    decoder.set_transformations(png::Transformations::EXPAND);
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!(
        [info.width as usize, info.height as usize],
        proof.info.size_px
    );
    assert_eq!(info.color_type, png::ColorType::Rgb);
    let pixel = |x: f64, y: f64| {
        let (x, y) = (x.floor() as usize, y.floor() as usize);
        let i = (y * info.width as usize + x) * 3;
        let rgb = [buf[i], buf[i + 1], buf[i + 2]];
        assert_eq!(Some(rgb), proof.pixel(x, y), "file and memory agree");
        rgb
    };
    // The marker ring of finding 1 passes through its centre ± its radius.
    let m = &proof.info.markers[0];
    assert_eq!(m.number, 1);
    let (cx, cy) = (m.center_px[0], m.center_px[1]);
    for (dx, dy) in [(1.0, 0.0), (-1.0, 0.0), (0.0, 1.0), (0.0, -1.0)] {
        assert_eq!(pixel(cx + dx * m.radius_px, cy + dy * m.radius_px), MARKER);
    }
    // The marker sits where the finding is, through the picture's map, and that is (6, 10).
    assert!(findings[0].at_mm.dist(Point::new(6.0, 10.0)) <= 25.4 / 1200.0);
    let a = proof.info.board_to_px;
    let at = findings[0].at_mm;
    assert!((a.a * at.x + a.c - cx).abs() < 1e-9 && (a.e * at.y + a.f - cy).abs() < 1e-9);
    // Top copper shows in its colour on the left pad (near its lower-left corner, clear of the
    // marker), seen from the top although the film is mirrored.
    let pad = Point::new(1.5, 9.0);
    let (px, py) = (a.a * pad.x + a.c, a.e * pad.y + a.f);
    assert!(
        (px - cx).hypot(py - cy) > m.radius_px + 20.0,
        "clear of the marker"
    );
    assert_eq!(pixel(px, py), TOP);
}
