//! The calibration sheet: ladder widths in device dots, ruler tick positions, the rendered
//! windows, and the files the CLI writes.
//!
//! Oracles: the inch is 25.4 mm exactly (international inch, 1959), so one dot at `dpi` is
//! 25400/dpi µm and sheet x mm lands at pixel x × scale × dpi / 25.4; ISO 216 A4 is
//! 210 × 297 mm; PDF points are 1/72 in (ISO 32000-1 §8.3.2.1); PNG pHYs in pixels per metre
//! (PNG spec §11.3.5.3: 600 dpi = 23,622 px/m).

use umbra::calibrate::sheet::{self, Axis, RungKind, SheetOptions, SheetPlan};
use umbra::process::Profile;
use umbra::raster::Bitmap;

fn profile(dpi: f64, dpi_y: Option<f64>, scale: (f64, f64)) -> Profile {
    let mut p = Profile::default();
    p.printer.dpi = dpi;
    p.printer.dpi_y = dpi_y;
    p.printer.scale_x = scale.0;
    p.printer.scale_y = scale.1;
    p
}

fn plan(p: &Profile) -> SheetPlan {
    sheet::plan(
        p,
        &SheetOptions {
            date: "2026-12-02".into(),
        },
    )
    .expect("the sheet lays out")
}

/// Runs of equal pixels along a line of the bitmap: (start, end, dark).
fn runs(values: &[bool]) -> Vec<(usize, usize, bool)> {
    let mut out: Vec<(usize, usize, bool)> = Vec::new();
    for (i, &v) in values.iter().enumerate() {
        match out.last_mut() {
            Some(r) if r.2 == v => r.1 = i + 1,
            _ => out.push((i, i + 1, v)),
        }
    }
    out
}

fn row(b: &Bitmap, y: usize) -> Vec<bool> {
    (0..b.width()).map(|x| b.get(x, y)).collect()
}

fn column(b: &Bitmap, x: usize) -> Vec<bool> {
    (0..b.height()).map(|y| b.get(x, y)).collect()
}

/// Every ladder element, rendered, is exactly as many pixels wide as its label says, and the
/// µm label is dots × 25400 / dpi.
fn check_ladders(p: &Profile) {
    let pl = plan(p);
    let (dx, dy) = (p.dpi_x(), p.dpi_y());
    let n_x = sheet::rung_count(dx);
    let n_y = sheet::rung_count(dy);
    for (axis, kind, n) in [
        (Axis::X, RungKind::Line, n_x),
        (Axis::X, RungKind::Gap, n_x),
        (Axis::Y, RungKind::Line, n_y),
        (Axis::Y, RungKind::Gap, n_y),
    ] {
        let mut dots: Vec<u32> = pl
            .rungs
            .iter()
            .filter(|r| r.axis == axis && r.kind == kind)
            .map(|r| r.dots)
            .collect();
        dots.sort();
        assert_eq!(dots, (1..=n).collect::<Vec<_>>(), "{axis:?} {kind:?}");
    }
    const PAD: i64 = 6;
    for r in &pl.rungs {
        let [l, t, rr, b] = r.px;
        let win = pl.render_window(
            (l - PAD) as usize,
            (t - PAD) as usize,
            (rr + PAD) as usize,
            (b + PAD) as usize,
        );
        // The line across the rung's middle, perpendicular to its length.
        let line = match r.axis {
            Axis::X => row(&win, ((b - t) / 2 + PAD) as usize),
            Axis::Y => column(&win, ((rr - l) / 2 + PAD) as usize),
        };
        let want_dark = r.kind == RungKind::Line;
        let found: Vec<_> = runs(&line)
            .into_iter()
            .filter(|run| run.2 == want_dark)
            .collect();
        assert_eq!(
            found.len(),
            1,
            "{:?} {:?} {} dots at {dx}x{dy} dpi: one element expected in {line:?}",
            r.axis,
            r.kind,
            r.dots
        );
        let width = found[0].1 - found[0].0;
        let label: usize = r.dots_label.parse().unwrap();
        assert_eq!(
            width, label,
            "{:?} {:?} labelled {label} dots is {width} px at {dx}x{dy} dpi",
            r.axis, r.kind
        );
        // µm label: dots × 25400 / dpi (the inch is 25.4 mm exactly), whole µm.
        let dpi = if r.axis == Axis::X { dx } else { dy };
        // Halves round up (3 dots at 1200 dpi = 63.5 µm → "64").
        let um = r.dots as f64 * 25400.0 / dpi;
        assert_eq!(r.um_label, format!("{:.0}", um.round()));
    }
}

#[test]
fn ladder_widths_equal_their_labels_at_600_1200_2400_dpi() {
    for dpi in [600.0, 1200.0, 2400.0] {
        check_ladders(&profile(dpi, None, (1.0, 1.0)));
    }
}

#[test]
fn ladder_widths_stay_exact_with_scale_correction_and_unequal_dots() {
    // A scale correction stretches positions but must not change a ladder's dot count.
    check_ladders(&profile(600.0, Some(1200.0), (1.0123, 0.9877)));
}

#[test]
fn ladder_lengths_reach_200_um() {
    // 600 dpi: 42.33 µm per dot, 5 dots reach 200 µm but at least 8 rungs are drawn;
    // 1200 dpi: 21.17 µm, 10 dots (211.7 µm); 2400 dpi: 10.58 µm, 19 → capped at 16.
    assert_eq!(sheet::rung_count(600.0), 8);
    assert_eq!(sheet::rung_count(1200.0), 10);
    assert_eq!(sheet::rung_count(2400.0), 16);
}

/// Centres (pixel coordinates, edges at integers) of the dark runs of `line`.
fn dark_centres(line: &[bool], offset: usize) -> Vec<f64> {
    runs(line)
        .into_iter()
        .filter(|r| r.2)
        .map(|r| offset as f64 + (r.0 + r.1) as f64 / 2.0)
        .collect()
}

fn check_ruler_ticks(p: &Profile) {
    let pl = plan(p);
    let (sx, sy) = (p.printer.scale_x, p.printer.scale_y);
    let (dx, dy) = (p.dpi_x(), p.dpi_y());
    let h = pl.map.height as f64;
    // X ruler: a row 1.0 mm above the baseline crosses every tick (shortest 1.5 mm long)
    // and nothing else (numbers start above the 4 mm ticks).
    let rx = pl.ruler_x;
    let y_mm = rx.zero_mm.y + 1.0;
    // Expected pixel x of sheet x mm: x × scale × dpi / 25.4 (map origin at the sheet's
    // lower-left corner); pixel y = height − y × scale × dpi / 25.4.
    let py = (h - y_mm * sy * dy / 25.4).floor() as usize;
    let x0 = ((rx.zero_mm.x - 1.0) * sx * dx / 25.4) as usize;
    let x1 = ((rx.zero_mm.x + rx.length_mm + 1.0) * sx * dx / 25.4) as usize;
    let win = pl.render_window(x0, py, x1, py + 1);
    let centres = dark_centres(&row(&win, 0), x0);
    let n = rx.length_mm.round() as usize;
    assert_eq!(centres.len(), n + 1, "X ticks at {dx} dpi");
    for (k, c) in centres.iter().enumerate() {
        let want = (rx.zero_mm.x + k as f64) * sx * dx / 25.4;
        assert!(
            (c - want).abs() <= 0.5 + 1e-9,
            "X tick {k} mm at {c} px, expected {want} ± 0.5 ({dx} dpi, scale {sx})"
        );
    }
    // Y ruler: a column 1.0 mm left of the baseline, above the "Y mm" caption.
    let ry = pl.ruler_y;
    let x_mm = ry.zero_mm.x - 1.0;
    let px = (x_mm * sx * dx / 25.4).floor() as usize;
    let top = (h - (ry.zero_mm.y + ry.length_mm + 1.0) * sy * dy / 25.4) as usize;
    let bot = (h - (ry.zero_mm.y - 1.0) * sy * dy / 25.4) as usize;
    let win = pl.render_window(px, top, px + 1, bot);
    let mut centres = dark_centres(&column(&win, 0), top);
    centres.reverse(); // pixel rows run down, the ruler counts up
    let n = ry.length_mm.round() as usize;
    assert_eq!(centres.len(), n + 1, "Y ticks at {dy} dpi");
    for (k, c) in centres.iter().enumerate() {
        let want = h - (ry.zero_mm.y + k as f64) * sy * dy / 25.4;
        assert!(
            (c - want).abs() <= 0.5 + 1e-9,
            "Y tick {k} mm at row {c}, expected {want} ± 0.5 ({dy} dpi, scale {sy})"
        );
    }
}

#[test]
fn ruler_ticks_land_on_the_right_pixels() {
    check_ruler_ticks(&profile(600.0, None, (1.0, 1.0)));
    check_ruler_ticks(&profile(1200.0, None, (1.003009, 0.9975)));
    check_ruler_ticks(&profile(600.0, Some(1200.0), (0.9931, 1.0207)));
}

#[test]
fn rulers_are_as_long_as_the_printable_area_allows() {
    // A4 portrait with 5 mm margins: 200 × 287 mm printable (ISO 216). The X ruler keeps
    // 2 mm at each end and the Y ruler starts above the X ruler's 13 mm zone, so the longest
    // whole-centimetre rulers are 190 mm and 270 mm.
    let p = Profile::default();
    let (rx, ry) = sheet::rulers(&p).unwrap();
    assert_eq!((rx.length_mm, ry.length_mm), (190.0, 270.0));
    // Letter (8.5 × 11 in = 215.9 × 279.4 mm, ANSI/ASME Y14.1): 205.9 mm wide printable →
    // 200 mm; 269.4 mm high → 250 mm.
    let mut l = Profile::default();
    l.sheet.size = "Letter".parse().unwrap();
    let (rx, ry) = sheet::rulers(&l).unwrap();
    assert_eq!((rx.length_mm, ry.length_mm), (200.0, 250.0));
    // With a scale correction the scaled ruler must still lie inside the printable area.
    for s in [0.97, 1.03] {
        let mut q = Profile::default();
        q.printer.scale_x = s;
        q.printer.scale_y = s;
        let (rx, ry) = sheet::rulers(&q).unwrap();
        assert!(rx.zero_mm.x * s >= 5.0 && (rx.zero_mm.x + rx.length_mm) * s <= 205.0);
        assert!(ry.zero_mm.y * s >= 5.0 && (ry.zero_mm.y + ry.length_mm) * s <= 292.0);
        assert!(ry.zero_mm.x * s <= 205.0);
    }
}

#[test]
fn windows_match_the_whole_sheet() {
    let p = profile(300.0, None, (1.004, 0.996));
    let pl = plan(&p);
    let whole = pl.render();
    assert_eq!(
        (whole.width(), whole.height()),
        // A4 at 300 dpi: 210/25.4×300 = 2480.3 → 2480, 297/25.4×300 = 3507.9 → 3508.
        (2480, 3508)
    );
    for &(x0, y0, x1, y1) in &[
        (0, 0, 700, 500),
        (1000, 1500, 1777, 2222),
        (2000, 3300, 2480, 3508),
    ] {
        let w = pl.render_window(x0, y0, x1, y1);
        for y in y0..y1 {
            for x in x0..x1 {
                assert_eq!(w.get(x - x0, y - y0), whole.get(x, y), "pixel {x},{y}");
            }
        }
    }
    // The sheet is not blank, nor black: a few per cent of its pixels are toner.
    let share = whole.count_ones() as f64 / (2480.0 * 3508.0);
    assert!((0.01..0.2).contains(&share), "{share}");
}

#[test]
fn exposure_strip_segments_follow_the_schedule() {
    let p = Profile::default();
    let pl = plan(&p);
    let times: Vec<f64> = pl.segments.iter().map(|s| s.total_s).collect();
    assert_eq!(times, p.exposure.segment_times().unwrap());
    // Printed side toward the board (default): the strip is mirrored, so segment 1 is the
    // rightmost on the sheet.
    let first = pl.segments[0].rect_mm;
    let last = pl.segments.last().unwrap().rect_mm;
    assert!(first.min_x > last.min_x);
    let mut q = Profile::default();
    q.process.printed_side = umbra::process::PrintedSide::AwayFromBoard;
    let ql = plan(&q);
    assert!(ql.segments[0].rect_mm.min_x < ql.segments.last().unwrap().rect_mm.min_x);
}

#[test]
fn small_sheets_and_landscape() {
    // Landscape A4 and Letter fit, also at 2400 dpi (the widest ladders) with a 2 % scale.
    for (size, orientation) in [
        ("A4", "landscape"),
        ("Letter", "portrait"),
        ("Letter", "landscape"),
        ("A3", "auto"),
    ] {
        for dpi in [600.0, 2400.0] {
            let mut p = profile(dpi, None, (1.02, 1.02));
            p.sheet.size = size.parse().unwrap();
            p.sheet.orientation = orientation.parse().unwrap();
            plan(&p);
        }
    }
    // A5 (148 × 210 mm) still fits at 1200 dpi; A6 (105 × 148 mm, ISO 216) is refused
    // with a reason that names the sheet.
    let mut p = Profile::default();
    p.sheet.size = "A5".parse().unwrap();
    plan(&p);
    p.sheet.size = "A6".parse().unwrap();
    let opts = SheetOptions {
        date: "2026-12-02".into(),
    };
    match sheet::plan(&p, &opts) {
        Ok(_) => panic!("A6 should not fit"),
        Err(e) => assert!(e.to_string().contains("A6"), "{e}"),
    }
}

fn bin() -> std::process::Command {
    std::process::Command::new(env!("CARGO_BIN_EXE_umbra"))
}

#[test]
fn cli_writes_a_pdf_of_the_exact_page_and_a_png_beside_it() {
    let dir = tempfile::tempdir().unwrap();
    let prof = dir.path().join("p.toml");
    std::fs::write(&prof, "[printer]\ndpi = 600\n").unwrap();
    let out = dir.path().join("cal.pdf");
    let run = || {
        bin()
            .args(["calibrate", "sheet", "--date", "2026-12-02", "--profile"])
            .arg(&prof)
            .arg("-o")
            .arg(&out)
            .output()
            .unwrap()
    };
    let o = run();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let pdf = std::fs::read(&out).unwrap();
    let text = String::from_utf8_lossy(&pdf);
    // A4 in points: 210/25.4×72 = 595.2756, 297/25.4×72 = 841.8898 (ISO 32000-1 §8.3.2.1).
    assert!(
        text.contains("/MediaBox [0 0 595.2756 841.8898]"),
        "MediaBox"
    );
    assert!(text.contains("/PrintScaling /None"));
    let png = dir.path().join("cal.png");
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&png).unwrap()));
    let reader = decoder.read_info().unwrap();
    let info = reader.info();
    // 600 dpi A4: 210/25.4×600 = 4960.6 → 4961 px, 297/25.4×600 = 7015.7 → 7016 px.
    assert_eq!((info.width, info.height), (4961, 7016));
    assert_eq!(info.pixel_dims.unwrap().xppu, 23_622);
    // A second run refuses to overwrite.
    let o = run();
    assert!(!o.status.success());
    assert!(String::from_utf8_lossy(&o.stderr).contains("--force"));
}
