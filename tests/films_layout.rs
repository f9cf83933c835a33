//! Sheets made by `umbra films`: page sizes, where the films go, captions, copies and tiles,
//! checked on the manifest, the PDF bytes and the decoded sheet PNGs.

mod films_support;

use films_support::*;
use serde_json::Value;
use std::path::Path;
use umbra::film::font;
use umbra::image::Point;

/// Caption drawing of src/films/sheets.rs (no outside source: the caption is umbra's own): 1.6 mm
/// capitals, pen 0.16 mm, baseline 1 mm above the piece starting half a pen in from its left
/// edge, text
/// "<film> - <mirrored|as drawn>[ - copy k/n][ - tile row r col c of RxC]".
const CAPTION_CAP_MM: f64 = 1.6;
const CAPTION_PEN_MM: f64 = 0.16;

fn caption_text(film: &Value, p: &Value, copies: u32) -> String {
    let mut s = format!(
        "{} - {}",
        film["title"].as_str().unwrap(),
        if film["mirrored"].as_bool().unwrap() {
            "mirrored"
        } else {
            "as drawn"
        }
    );
    if copies > 1 {
        s.push_str(&format!(" - copy {}/{copies}", p["copy"]));
    }
    if let Some(t) = p["tile"].as_array() {
        s.push_str(&format!(
            " - tile row {} col {} of {}x{}",
            t[0], t[1], t[2], t[3]
        ));
    }
    s
}

/// The caption's box in sheet mm [x0, y0, x1, y1] (descenders 2.5/8 of the cap height,
/// docs/marks-and-labels.md "The stroke font"; half a pen all round).
fn caption_box(p: &Value, text: &str) -> [f64; 4] {
    let Point { x, y: base } = caption_origin(p);
    let pen = CAPTION_PEN_MM / 2.0;
    [
        x - pen,
        base - CAPTION_CAP_MM * 2.5 / 8.0 - pen,
        x + font::text_width_mm(text, CAPTION_CAP_MM) + pen,
        base + CAPTION_CAP_MM + pen,
    ]
}

fn caption_origin(p: &Value) -> Point {
    Point::new(
        f(&p["x_mm"]) + CAPTION_PEN_MM / 2.0,
        f(&p["y_mm"]) + f(&p["height_mm"]) + 1.0,
    )
}

fn rect_of(p: &Value) -> [f64; 4] {
    let (x, y) = (f(&p["x_mm"]), f(&p["y_mm"]));
    [x, y, x + f(&p["width_mm"]), y + f(&p["height_mm"])]
}

fn overlap(a: &[f64; 4], b: &[f64; 4]) -> bool {
    a[0] < b[2] && b[0] < a[2] && a[1] < b[3] && b[1] < a[3]
}

fn inside(r: &[f64; 4], area: &[f64; 4], tol: f64) -> bool {
    r[0] >= area[0] - tol && r[1] >= area[1] - tol && r[2] <= area[2] + tol && r[3] <= area[3] + tol
}

struct SheetRules {
    /// Margins with the sheet held in portrait: top, right, bottom, left (mm).
    margins: (f64, f64, f64, f64),
    gap_mm: f64,
    dpi: f64,
    copies: u32,
}

/// Everything that must hold on every sheet of a run; returns the number of pieces seen.
fn check_sheets(out: &Path, m: &Value, rules: &SheetRules) -> usize {
    let films = m["films"].as_array().unwrap();
    let pdf = std::fs::read(out.join("films.pdf")).unwrap();
    let boxes = media_boxes(&pdf);
    let sheets = m["sheets"].as_array().unwrap();
    assert_eq!(boxes.len(), sheets.len(), "one PDF page per sheet");
    let s = rules.dpi / MM_PER_INCH;
    let mut pieces_seen = 0;
    for (si, sh) in sheets.iter().enumerate() {
        let number = si + 1;
        let size = (f(&sh["size_mm"][0]), f(&sh["size_mm"][1]));
        // PDF user space unit 1/72 in (ISO 32000-1 §8.3.2.1): the page is the sheet.
        let mb = boxes[si];
        assert!(
            (mb[2] - mb[0] - size.0 / MM_PER_INCH * 72.0).abs() < 0.01
                && (mb[3] - mb[1] - size.1 / MM_PER_INCH * 72.0).abs() < 0.01,
            "sheet {number}: MediaBox {mb:?} for {size:?} mm"
        );
        let sheet = Sheet::load(&out.join(sh["png"].as_str().unwrap()));
        assert_eq!(sheet.width, (size.0 * s).round() as usize);
        assert_eq!(sheet.height, (size.1 * s).round() as usize);
        // PNG pHYs: pixels per metre, round(dpi / 0.0254) (PNG spec §11.3.5.3).
        let ppm = (rules.dpi / 0.0254).round() as u32;
        assert_eq!(sheet.ppm, Some((ppm, ppm)), "sheet {number}: pHYs");

        let (t, r, b, l) = rules.margins;
        let printable = printable_mm(size, t, r, b, l);
        let mut rects = Vec::new();
        let mut captions = Vec::new();
        for film in films {
            for p in film["placements"].as_array().unwrap() {
                if p["sheet"].as_u64().unwrap() as usize != number {
                    continue;
                }
                let rect = rect_of(p);
                assert!(
                    inside(&rect, &printable, 1e-6),
                    "sheet {number}: {} at {rect:?} leaves the printable area {printable:?}",
                    film["key"]
                );
                let text = caption_text(film, p, rules.copies);
                // The caption's box errs on the large side (half a pen all round), so whether
                // the caption stays printable is checked on the pixels below.
                let cap = caption_box(p, &text);
                assert!(
                    cap[2] <= rect[2] + 0.1,
                    "sheet {number}: caption \"{text}\" is wider than its piece {rect:?}"
                );
                // The caption says what the piece is (compared with the text drawn by the
                // stroke font at the caption's place).
                let to_px =
                    |x: f64, y: f64| ((x * s).floor() as i64, ((size.1 - y) * s).floor() as i64);
                let (i0, j1) = to_px(cap[0] - 0.3, cap[1] - 0.3);
                let (i1, j0) = to_px(cap[2] + 0.3, cap[3] + 0.3);
                let shapes = font::text_shapes(
                    &text,
                    caption_origin(p),
                    CAPTION_CAP_MM,
                    CAPTION_PEN_MM,
                    false,
                    0.0,
                );
                let (diff, ink) =
                    text_difference(&sheet, rules.dpi, shapes, (i0, j0, i1 + 1, j1 + 1), 1);
                assert!(
                    diff * 5 < ink,
                    "sheet {number}: caption \"{text}\" not found ({diff} of {ink} pixels differ)"
                );
                // The frame's position on the sheet equals the manifest's placement rect: a
                // registration target is found, from pixels, where the rect and the film's
                // own map put it (within one pixel).
                if p["tile"].is_null() {
                    let fa = Affine::of(&film["board_to_film_px"]);
                    let (left, top) =
                        placement_top_left_px(p, sheet.height as f64 / s, (rules.dpi, rules.dpi));
                    for (tx, ty) in manifest_targets(m) {
                        let (u, v) = fa.apply(tx, ty);
                        let predicted = (left + u, top + v);
                        let got = mark_centre(&sheet, predicted, 0.55 * 5.0 * s);
                        assert!(
                            (got.0 - predicted.0).abs() <= 1.0 && (got.1 - predicted.1).abs() <= 1.0,
                            "sheet {number}: {} target ({tx}, {ty}) at {got:?}, placement says {predicted:?}",
                            film["key"]
                        );
                    }
                }
                rects.push((film["key"].as_str().unwrap().to_string(), rect));
                captions.push((text, cap));
                pieces_seen += 1;
            }
        }
        // docs/sheets.md "Nesting": any two placements are at least gap_mm apart along x or
        // y, so they never overlap; no caption overlaps another piece or caption.
        for i in 0..rects.len() {
            for j in i + 1..rects.len() {
                let (a, b) = (&rects[i].1, &rects[j].1);
                let dx = (b[0] - a[2]).max(a[0] - b[2]);
                let dy = (b[1] - a[3]).max(a[1] - b[3]);
                assert!(
                    dx >= rules.gap_mm - 1e-6 || dy >= rules.gap_mm - 1e-6,
                    "sheet {number}: {} and {} are closer than {} mm",
                    rects[i].0,
                    rects[j].0,
                    rules.gap_mm
                );
                assert!(!overlap(&captions[i].1, &captions[j].1), "captions overlap");
            }
            for (j, (_, r)) in rects.iter().enumerate() {
                assert!(
                    i == j || !overlap(&captions[i].1, r),
                    "caption \"{}\" overlaps the piece {}",
                    captions[i].0,
                    rects[j].0
                );
            }
        }
        // From the pixels: nothing is printed in the unprintable margins, and every black
        // pixel belongs to a piece or a caption.
        let tol = 0.5 / s;
        sheet.for_each_black(|x, y| {
            let (cx, cy) = ((x as f64 + 0.5) / s, (sheet.height as f64 - y as f64 - 0.5) / s);
            let at = [cx, cy, cx, cy];
            assert!(
                inside(&at, &printable, tol),
                "sheet {number}: black pixel ({x}, {y}) = ({cx:.2}, {cy:.2}) mm lies in the unprintable margin {printable:?}"
            );
            let in_piece = rects.iter().any(|(_, r)| inside(&at, r, tol));
            let in_caption = captions.iter().any(|(_, c)| inside(&at, c, tol));
            assert!(
                in_piece || in_caption,
                "sheet {number}: black pixel ({cx:.2}, {cy:.2}) mm is neither a piece nor a caption"
            );
        });
    }
    pieces_seen
}

fn demo_run(dir: &Path, profile: &str) -> Value {
    write_profile(dir, "p.toml", profile);
    films_ok(
        dir,
        &[
            demo_dir().to_str().unwrap(),
            "-o",
            "out",
            "--profile",
            "p.toml",
        ],
    );
    manifest(&dir.join("out"))
}

fn default_rules(dpi: f64) -> SheetRules {
    // Default margins 5 mm each and gap 5 mm (docs/sheets.md, src/default-profile.toml).
    SheetRules {
        margins: (5.0, 5.0, 5.0, 5.0),
        gap_mm: 5.0,
        dpi,
        copies: 1,
    }
}

#[test]
fn a4_default_sheet_holds_the_demo_films_in_place() {
    let dir = tempfile::tempdir().unwrap();
    films_ok(dir.path(), &[demo_dir().to_str().unwrap(), "-o", "out"]);
    let out = dir.path().join("out");
    let m = manifest(&out);
    // Copper and mask films of both sides (default [films]: copper and mask).
    assert_eq!(m["films"].as_array().unwrap().len(), 4);
    // ISO 216 A4 = 210 × 297 mm = 595.276 × 841.890 pt (1 pt = 1/72 in, ISO 32000-1 §8.3.2.1).
    let boxes = media_boxes(&std::fs::read(out.join("films.pdf")).unwrap());
    assert_eq!(boxes.len(), 1);
    assert!((boxes[0][2] - 595.276).abs() < 0.001 && (boxes[0][3] - 841.890).abs() < 0.001);
    if have_tool("pdfinfo") {
        let o = std::process::Command::new("pdfinfo")
            .arg(out.join("films.pdf"))
            .output()
            .unwrap();
        let text = String::from_utf8_lossy(&o.stdout);
        assert!(
            text.contains("595.276 x 841.89 pts (A4)"),
            "pdfinfo (poppler-utils) says: {text}"
        );
    } else {
        eprintln!("pdfinfo not installed; the MediaBox was read from the PDF bytes only");
    }
    assert_eq!(check_sheets(&out, &m, &default_rules(1200.0)), 4);
}

#[test]
fn letter_and_legal_sheets_have_their_sizes_in_points() {
    // US Letter 8.5 × 11 in = 612 × 792 pt, Legal 8.5 × 14 in = 612 × 1008 pt (ANSI/ASME Y14.1;
    // 72 pt per inch, ISO 32000-1 §8.3.2.1).
    for (size, w, h) in [("letter", 612.0, 792.0), ("legal", 612.0, 1008.0)] {
        let dir = tempfile::tempdir().unwrap();
        let m = demo_run(
            dir.path(),
            &format!(
                "[printer]\ndpi = 300\n\n[sheet]\nsize = \"{size}\"\norientation = \"portrait\"\n"
            ),
        );
        let out = dir.path().join("out");
        let boxes = media_boxes(&std::fs::read(out.join("films.pdf")).unwrap());
        assert!(!boxes.is_empty());
        for b in &boxes {
            assert!(
                (b[2] - b[0] - w).abs() < 0.001 && (b[3] - b[1] - h).abs() < 0.001,
                "{size}: MediaBox {b:?}, expected {w} × {h} pt"
            );
        }
        check_sheets(&out, &m, &default_rules(300.0));
    }
}

#[test]
fn unequal_margins_are_kept_clear() {
    let dir = tempfile::tempdir().unwrap();
    let m = demo_run(
        dir.path(),
        "[printer]\ndpi = 300\n\n[sheet]\ngap_mm = 7.0\n\n[sheet.margins]\ntop_mm = 12.0\nright_mm = 6.0\nbottom_mm = 10.0\nleft_mm = 8.0\n",
    );
    let rules = SheetRules {
        margins: (12.0, 6.0, 10.0, 8.0),
        gap_mm: 7.0,
        dpi: 300.0,
        copies: 1,
    };
    assert_eq!(check_sheets(&dir.path().join("out"), &m, &rules), 4);
}

#[test]
fn two_copies_give_two_captioned_placements_per_film() {
    let dir = tempfile::tempdir().unwrap();
    let m = demo_run(dir.path(), "[printer]\ndpi = 300\n\n[films]\ncopies = 2\n");
    let out = dir.path().join("out");
    let rules = SheetRules {
        copies: 2,
        ..default_rules(300.0)
    };
    assert_eq!(check_sheets(&out, &m, &rules), 8);
    let s = 300.0 / MM_PER_INCH;
    for film in m["films"].as_array().unwrap() {
        let ps = film["placements"].as_array().unwrap();
        assert_eq!(ps.len(), 2, "{}: two copies", film["key"]);
        let mut copies: Vec<u64> = ps.iter().map(|p| p["copy"].as_u64().unwrap()).collect();
        copies.sort();
        assert_eq!(copies, vec![1, 2]);
        // The caption of copy k says "copy k/2", and matches that text better than the other
        // copy's: the check above would also pass for a caption one glyph off.
        for p in ps {
            let n = p["sheet"].as_u64().unwrap() as usize;
            let sheet = Sheet::load(&out.join(m["sheets"][n - 1]["png"].as_str().unwrap()));
            let size_h = f(&m["sheets"][n - 1]["size_mm"][1]);
            let own = caption_text(film, p, 2);
            let k = p["copy"].as_u64().unwrap();
            let other = own.replace(&format!("copy {k}/2"), &format!("copy {}/2", 3 - k));
            assert!(own.ends_with(&format!("copy {k}/2")));
            let cap = caption_box(p, &own);
            let region = (
                (cap[0] * s).floor() as i64 - 2,
                ((size_h - cap[3]) * s).floor() as i64 - 2,
                (cap[2] * s).ceil() as i64 + 2,
                ((size_h - cap[1]) * s).ceil() as i64 + 2,
            );
            let draw = |t: &str| {
                font::text_shapes(
                    t,
                    caption_origin(p),
                    CAPTION_CAP_MM,
                    CAPTION_PEN_MM,
                    false,
                    0.0,
                )
            };
            let (d_own, _) = text_difference(&sheet, 300.0, draw(&own), region, 1);
            let (d_other, _) = text_difference(&sheet, 300.0, draw(&other), region, 1);
            assert!(
                d_own < d_other,
                "{}: caption of copy {k} matches \"{other}\" ({d_other}) no worse than \"{own}\" ({d_own})",
                film["key"]
            );
        }
    }
}

#[test]
fn long_board_tiles_cover_the_film_with_the_configured_overlap() {
    let Some(root) = corpus() else { return };
    let board = root.join("03-organ-pedal-sensor-strip-970mm");
    let dir = tempfile::tempdir().unwrap();
    write_profile(dir.path(), "p.toml", "[printer]\ndpi = 300\n");
    films_ok(
        dir.path(),
        &[board.to_str().unwrap(), "-o", "out", "--profile", "p.toml"],
    );
    let out = dir.path().join("out");
    let m = manifest(&out);
    check_sheets(&out, &m, &default_rules(300.0));
    let dpi = 300.0;
    let s = dpi / MM_PER_INCH;
    let overlap_mm = 10.0; // default tile_overlap_mm (docs/sheets.md)
    let mut sheets: Vec<Option<Sheet>> = (0..m["sheets"].as_array().unwrap().len())
        .map(|_| None)
        .collect();
    for film in m["films"].as_array().unwrap() {
        let key = film["key"].as_str().unwrap();
        let length = f(&film["size_mm"][0]);
        // The corpus README: the board is 970 mm long, far longer than any sheet.
        assert!(length > 970.0, "{key}: {length} mm");
        let mut tiles: Vec<&Value> = film["placements"].as_array().unwrap().iter().collect();
        assert!(
            tiles.iter().all(|p| p["tile"].is_array()),
            "{key} must be tiled"
        );
        tiles.sort_by_key(|p| p["tile"][1].as_u64().unwrap());
        let n = tiles.len();
        assert!(n >= 2);
        // docs/sheets.md "Tiling": n equal pieces of length t overlapping by o span
        // n·t − (n−1)·o = L.
        let t = f(&tiles[0]["width_mm"]);
        for p in &tiles {
            assert!(
                (f(&p["width_mm"]) - t).abs() < 1e-9,
                "{key}: tiles of equal length"
            );
            assert_eq!(p["tile"][3].as_u64().unwrap() as usize, n);
            assert!((f(&p["height_mm"]) - f(&film["size_mm"][1])).abs() < 1e-9);
        }
        assert!(
            (n as f64 * t - (n as f64 - 1.0) * overlap_mm - length).abs() < 1e-6,
            "{key}: {n} tiles of {t} mm with {overlap_mm} mm overlap do not span {length} mm"
        );
        // In pixels: each tile's first film column, from its affine (sheet px = film px +
        // placement offset).
        let fa = Affine::of(&film["board_to_film_px"]);
        let width_px = f(&film["size_px"][0]);
        let height_px = film["size_px"][1].as_u64().unwrap() as i64;
        let starts: Vec<(f64, i64, i64)> = tiles
            .iter()
            .map(|p| {
                let a = Affine::of(&p["board_to_sheet_px"]);
                let left = (f(&p["x_mm"]) * s).round();
                let dx = (a.c - fa.c).round() as i64;
                let dy = (a.f - fa.f).round() as i64;
                (left - (a.c - fa.c), dx, dy)
            })
            .collect();
        let tile_px = t * s;
        assert!(
            starts[0].0.abs() <= 1.0,
            "{key}: first tile starts at film column {}",
            starts[0].0
        );
        assert!(
            (starts[n - 1].0 + tile_px - width_px).abs() <= 1.0,
            "{key}: last tile ends at {} of {width_px}",
            starts[n - 1].0 + tile_px
        );
        for k in 0..n - 1 {
            let ov = starts[k].0 + tile_px - starts[k + 1].0;
            assert!(
                (ov - overlap_mm * s).abs() <= 1.0,
                "{key}: tiles {} and {} overlap by {ov} px, not {} px",
                k + 1,
                k + 2,
                overlap_mm * s
            );
            // The overlap strip shows the same film pixels on both tiles.
            let (sa, sb) = (
                tiles[k]["sheet"].as_u64().unwrap() as usize - 1,
                tiles[k + 1]["sheet"].as_u64().unwrap() as usize - 1,
            );
            for i in [sa, sb] {
                if sheets[i].is_none() {
                    sheets[i] = Some(Sheet::load(
                        &out.join(m["sheets"][i]["png"].as_str().unwrap()),
                    ));
                }
            }
            let (pa, pb) = (sheets[sa].as_ref().unwrap(), sheets[sb].as_ref().unwrap());
            let u0 = starts[k + 1].0.ceil() as i64 + 1;
            let u1 = (starts[k].0 + tile_px).floor() as i64 - 1;
            let (mut same_black, mut differ) = (0u64, 0u64);
            for v in 0..height_px {
                for u in u0..u1 {
                    let a = pa.black(u + starts[k].1, v + starts[k].2);
                    let b = pb.black(u + starts[k + 1].1, v + starts[k + 1].2);
                    if a != b {
                        differ += 1;
                    } else if a {
                        same_black += 1;
                    }
                }
            }
            assert!(
                same_black > 0,
                "{key}: the overlap strip is blank, nothing compared"
            );
            assert_eq!(
                differ,
                0,
                "{key}: tiles {} and {} differ in their overlap",
                k + 1,
                k + 2
            );
        }
    }
}

#[test]
fn every_real_board_sheet_keeps_pieces_and_captions_in_place() {
    let Some(root) = corpus() else { return };
    let dir = tempfile::tempdir().unwrap();
    write_profile(dir.path(), "p.toml", "[printer]\ndpi = 300\n");
    for (i, board) in corpus_boards(&root).iter().enumerate() {
        let out = format!("out-{i:02}");
        films_ok(
            dir.path(),
            &[board.to_str().unwrap(), "-o", &out, "--profile", "p.toml"],
        );
        let out = dir.path().join(out);
        let m = manifest(&out);
        let pieces: usize = m["films"]
            .as_array()
            .unwrap()
            .iter()
            .map(|f| f["placements"].as_array().unwrap().len())
            .sum();
        assert_eq!(
            check_sheets(&out, &m, &default_rules(300.0)),
            pieces,
            "{}",
            board.display()
        );
    }
}

/// A PGM (P5, netpbm) image with 8-bit samples: width, height, samples.
fn read_pgm(bytes: &[u8]) -> (usize, usize, Vec<u8>) {
    let mut fields = Vec::new();
    let mut i = 0;
    while fields.len() < 4 {
        while bytes[i].is_ascii_whitespace() {
            i += 1;
        }
        if bytes[i] == b'#' {
            while bytes[i] != b'\n' {
                i += 1;
            }
            continue;
        }
        let start = i;
        while !bytes[i].is_ascii_whitespace() {
            i += 1;
        }
        fields.push(String::from_utf8_lossy(&bytes[start..i]).to_string());
    }
    assert_eq!(fields[0], "P5");
    assert_eq!(fields[3], "255");
    (
        fields[1].parse().unwrap(),
        fields[2].parse().unwrap(),
        bytes[i + 1..].to_vec(),
    )
}

#[test]
fn pdf_page_prints_the_films_at_actual_size() {
    // Rasterize the PDF page with poppler's pdftoppm (Debian poppler-utils) at the sheet's own
    // resolution: if the page image is placed at 100 % (1 px = 1/dpi in; ISO 32000-1 §8.3.2.1)
    // every registration target lands where the manifest puts it on the sheet, within a pixel.
    if !have_tool("pdftoppm") {
        eprintln!("skipping: pdftoppm (poppler-utils) is not installed");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let m = demo_run(dir.path(), "[printer]\ndpi = 300\n");
    let out = dir.path().join("out");
    let st = std::process::Command::new("pdftoppm")
        .args(["-r", "300", "-gray", "-f", "1", "-l", "1"])
        .arg(out.join("films.pdf"))
        .arg(dir.path().join("page"))
        .status()
        .unwrap();
    assert!(st.success());
    let pgm = names_starting(dir.path(), "page");
    assert_eq!(pgm.len(), 1, "{pgm:?}");
    let (w, h, gray) = read_pgm(&std::fs::read(dir.path().join(&pgm[0])).unwrap());
    let page = Sheet::from_gray(w, h, &gray);
    let sheet = Sheet::load(&out.join("sheet-01.png"));
    // pdftoppm rounds the page's pixel size up (210 mm at 300 dpi is 2480.3 px).
    assert!(w.abs_diff(sheet.width) <= 1 && h.abs_diff(sheet.height) <= 1);
    let s = 300.0 / MM_PER_INCH;
    let mut found = 0;
    for film in m["films"].as_array().unwrap() {
        let a = Affine::of(&film["placements"][0]["board_to_sheet_px"]);
        for (tx, ty) in manifest_targets(&m) {
            let want = a.apply(tx, ty);
            let got = mark_centre(&page, want, 0.55 * 5.0 * s);
            assert!(
                (got.0 - want.0).abs() <= 1.0 && (got.1 - want.1).abs() <= 1.0,
                "{}: target ({tx}, {ty}) on the PDF page at {got:?}, on the sheet at {want:?}",
                film["key"]
            );
            found += 1;
        }
    }
    assert_eq!(found, 12);
}
