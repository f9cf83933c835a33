//! Which way the film labels read on the printed sheet, checked from the sheet's pixels.
//!
//! TRADE.md "Labels": the label reads correctly when the film lies correctly. With the printed
//! side toward the board you look through the back of the film, so on the printed sheet the
//! label of *every* film (top: mirrored film, bottom: film as drawn) appears mirrored; with the
//! printed side away from the board every label reads normally (docs/marks-and-labels.md,
//! "Which way the label reads", table). The label region of the sheet PNG made by the real
//! binary is compared with the expected text drawn by the stroke font both ways; the better
//! match (fewest differing pixels) must be the expected one, by a wide margin.

mod films_support;

use films_support::*;
use std::path::Path;
use umbra::film::{font, marks};
use umbra::image::{Object, Point, Polarity};
use umbra::raster::{render, DeviceMap};

const DPI: f64 = 600.0;
/// Default label capital height (profile [artwork] label_cap_mm).
const CAP_MM: f64 = 1.5;

/// The label lines the docs promise (docs/marks-and-labels.md "The label": board, layer and
/// side, polarity, image and printed side, edge offset, scale and resolution, date).
fn expected_lines(side: &str, mirrored: bool, toward: bool) -> Vec<String> {
    vec![
        "Wren soil-moisture node rev B".into(),
        format!("copper, {side} side"),
        "black = copper".into(),
        format!(
            "image {}, printed side {} board",
            if mirrored { "mirrored" } else { "as drawn" },
            if toward { "toward" } else { "away from" }
        ),
        "edge offset +0.0 µm requested, +0.0 µm realized".into(),
        format!("scale x 1.0000 y 1.0000, {DPI} dpi"),
        "2025-01-01".into(),
    ]
}

/// Pixel differences between the sheet and the text drawn reading normally and mirrored at
/// the label's box on the sheet, and the text's own black pixel count.
struct Reading {
    normal: u64,
    mirrored: u64,
    ink: u64,
}

fn read_label(sheet: &Sheet, to_sheet: Affine, anchor: Point, lines: &[String]) -> Reading {
    let (w, h) = marks::label_size_mm(lines, CAP_MM);
    let s = DPI / MM_PER_INCH;
    // The label box on the sheet (pixels): the mirror moves it but keeps it a box.
    let (ax, ay) = to_sheet.apply(anchor.x, anchor.y);
    let (bx, by) = to_sheet.apply(anchor.x + w, anchor.y + h);
    let (bx0, bx1, by0) = (ax.min(bx), ax.max(bx), ay.min(by));
    let grow = s; // 1 mm around the box
    let rx0 = (bx0 - grow).floor() as i64;
    let ry0 = (by0 - grow).floor() as i64;
    let rw = ((bx1 - bx0) + 2.0 * grow).ceil() as usize;
    let rh = ((ay.max(by) - by0) + 2.0 * grow).ceil() as usize;
    // A view of the sheet as seen from its printed side, in mm, y up; pixel (0, 0) of `map` is
    // sheet pixel (rx0, ry0).
    let sheet_h = sheet.height as f64;
    let map = DeviceMap::new(
        Point::new(rx0 as f64 / s, (sheet_h - ry0 as f64 - rh as f64) / s),
        rw,
        rh,
        DPI,
        DPI,
    );
    let (left, right, top) = (bx0 / s, bx1 / s, (sheet_h - by0) / s);
    let stroke = marks::TEXT_STROKE_PER_CAP * CAP_MM;
    let draw = |mirrored: bool| {
        let mut objs = Vec::new();
        for (i, line) in lines.iter().enumerate() {
            let baseline = top - CAP_MM - i as f64 * marks::LINE_PITCH_PER_CAP * CAP_MM;
            // Reading normally the text starts at the box's left edge; mirrored it starts at
            // the right edge and runs left (font::text_shapes, `mirrored`).
            let origin = Point::new(if mirrored { right } else { left }, baseline);
            for shape in font::text_shapes(line, origin, CAP_MM, stroke, mirrored, 0.0) {
                objs.push(Object {
                    polarity: Polarity::Dark,
                    shape,
                });
            }
        }
        render(&objs, &map)
    };
    let xor = |candidate: &umbra::raster::Bitmap| {
        let mut best = u64::MAX;
        // Allow for rounding of the film's position on the sheet.
        for dy in -2..=2 {
            for dx in -2..=2 {
                let mut n = 0;
                for y in 0..rh {
                    for x in 0..rw {
                        let on_sheet = sheet.black(rx0 + x as i64 + dx, ry0 + y as i64 + dy);
                        n += u64::from(on_sheet != candidate.get(x, y));
                    }
                }
                best = best.min(n);
            }
        }
        best
    };
    let (normal, mirrored) = (draw(false), draw(true));
    Reading {
        normal: xor(&normal),
        mirrored: xor(&mirrored),
        ink: normal.count_ones(),
    }
}

/// Makes the demo films with `printed_side` and checks how each copper label reads.
fn check(printed_side: &str, toward: bool) {
    let dir = tempfile::tempdir().unwrap();
    let profile_text =
        format!("[printer]\ndpi = {DPI}\n\n[process]\nprinted_side = \"{printed_side}\"\n");
    write_profile(dir.path(), "p.toml", &profile_text);
    films_ok(
        dir.path(),
        &[
            demo_dir().to_str().unwrap(),
            "-o",
            "out",
            "--profile",
            "p.toml",
        ],
    );
    let m = manifest(&dir.path().join("out"));

    // Where the label sits on every film: the library's frame for the same board and profile.
    let profile = umbra::process::Profile::from_toml(&profile_text, "p.toml").unwrap();
    let board = umbra::load::load_paths(&[demo_dir()], &Default::default()).unwrap();
    let job_path = demo_dir().join("wren-node.umbra-job.toml");
    let job =
        umbra::job::Job::from_toml(&std::fs::read_to_string(&job_path).unwrap(), "job").unwrap();
    let (_, frame, _) = umbra::films::make_films(
        &board,
        &profile,
        Some(&job),
        "Wren soil-moisture node rev B",
        "2025-01-01",
    )
    .unwrap();
    // The library's frame is the run's frame: same targets as the manifest.
    let t = manifest_targets(&m);
    let ft = frame.targets.expect("targets");
    for (a, b) in t.iter().zip(ft.iter()) {
        assert!((a.0 - b.x).abs() < 1e-9 && (a.1 - b.y).abs() < 1e-9);
    }

    for (key, side) in [("copper-top", "top"), ("copper-bottom", "bottom")] {
        let fm = film(&m, key);
        let film_mirrored = fm["mirrored"].as_bool().unwrap();
        // docs/marks-and-labels.md table: top mirrored exactly when printed side toward board,
        // bottom the other way round.
        assert_eq!(
            film_mirrored,
            toward == (side == "top"),
            "{key} {printed_side}"
        );
        let lines = expected_lines(side, film_mirrored, toward);
        let p = &fm["placements"][0];
        let n = p["sheet"].as_u64().unwrap() as usize;
        let sheet = Sheet::load(
            &dir.path()
                .join("out")
                .join(m["sheets"][n - 1]["png"].as_str().unwrap()),
        );
        let r = read_label(
            &sheet,
            Affine::of(&p["board_to_sheet_px"]),
            frame.label_anchor,
            &lines,
        );
        let (right, wrong) = if toward {
            (r.mirrored, r.normal)
        } else {
            (r.normal, r.mirrored)
        };
        let want = if toward { "mirrored" } else { "normally" };
        assert!(
            right * 4 < wrong && right * 5 < r.ink,
            "{key}, printed side {printed_side}: the label should read {want} on the sheet; \
             differing pixels: normal {}, mirrored {}, text ink {}",
            r.normal,
            r.mirrored,
            r.ink
        );
    }
}

#[test]
fn printed_side_toward_board_both_labels_appear_mirrored_on_the_sheet() {
    check("toward-board", true);
}

#[test]
fn printed_side_away_from_board_both_labels_read_normally_on_the_sheet() {
    check("away-from-board", false);
}

#[test]
fn label_check_tells_the_two_readings_apart() {
    // Control for read_label: a sheet whose label region is blank matches neither reading
    // well (each differs by all of the text's ink), so a passing check above needs real text.
    let dir = tempfile::tempdir().unwrap();
    let blank = dir.path().join("blank.png");
    let bm = umbra::raster::Bitmap::new(600, 600);
    umbra::output::png::write_png(&blank, &bm, DPI, DPI, true).unwrap();
    let sheet = Sheet::load(Path::new(&blank));
    let s = DPI / MM_PER_INCH;
    let to_sheet = Affine {
        a: s,
        b: 0.0,
        c: 20.0,
        d: 0.0,
        e: -s,
        f: 500.0,
    };
    let lines = expected_lines("top", true, true);
    let r = read_label(&sheet, to_sheet, Point::new(0.0, 0.0), &lines);
    assert!(r.ink > 0);
    assert!(r.normal * 5 >= r.ink && r.mirrored * 5 >= r.ink);
}
