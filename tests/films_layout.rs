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
        f(&p["y_mm"]) + f(&p["height_mm"]) + bands_of(p)[2] + 1.0,
    )
}

/// Tile mark bands of docs/sheets.md "Tile alignment marks" (umbra's own rule, no outside
/// source): 3 mm beside the film block, on the top and bottom edges of the tiles of a film
/// with several columns and on the left and right edges of those of a film with several rows;
/// none for a whole film. [left, right, top, bottom] in mm.
const TILE_BAND_MM: f64 = 3.0;

fn bands_of(p: &Value) -> [f64; 4] {
    let Some(t) = p["tile"].as_array() else {
        return [0.0; 4];
    };
    let (rows, cols) = (t[2].as_u64().unwrap(), t[3].as_u64().unwrap());
    let along = if rows > 1 { TILE_BAND_MM } else { 0.0 };
    let across = if cols > 1 { TILE_BAND_MM } else { 0.0 };
    [along, along, across, across]
}

/// The piece with its mark bands, sheet mm [x0, y0, x1, y1].
fn reserved_rect_of(p: &Value) -> [f64; 4] {
    let r = rect_of(p);
    let b = bands_of(p);
    [r[0] - b[0], r[1] - b[3], r[2] + b[1], r[3] + b[2]]
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
                // The piece and its mark bands stay printable (docs/sheets.md).
                let reserved = reserved_rect_of(p);
                assert!(
                    inside(&reserved, &printable, 1e-6),
                    "sheet {number}: {} at {reserved:?} (with mark bands) leaves the printable area {printable:?}",
                    film["key"]
                );
                if p["tile"].is_null() {
                    // A whole film has no alignment marks (docs/sheets.md).
                    assert!(p["tile_marks"].as_array().unwrap().is_empty());
                }
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
                rects.push((film["key"].as_str().unwrap().to_string(), reserved));
                captions.push((text, cap));
                pieces_seen += 1;
            }
        }
        // docs/sheets.md "Nesting": any two placements (with their mark bands) are at least
        // gap_mm apart along x or y, so they never overlap; no caption overlaps another piece
        // or caption.
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
        // pixel belongs to a piece (with its mark bands, if tiled) or a caption. A whole film
        // has no bands, so an untiled sheet gains no black pixel from the marks.
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
    // One row of tiles: each join has 2 ends in 2 bands (above and below the strip).
    let joins: usize = m["films"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["placements"].as_array().unwrap().len() - 1)
        .sum();
    assert_eq!(check_tile_marks(&out, &m, 300.0), joins * 4);
    let dpi = 300.0;
    let s = dpi / MM_PER_INCH;
    let overlap_mm = 10.0; // default tile_overlap_mm (docs/sheets.md)
    let mut sheets: Vec<Option<Sheet>> = (0..m["sheets"].as_array().unwrap().len())
        .map(|_| None)
        .collect();
    for film in m["films"].as_array().unwrap() {
        // Black pixels compared in all the film's overlap strips: a strip may be blank where
        // the board has no copper, but not all of them.
        let mut compared_black = 0u64;
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
            compared_black += same_black;
            assert_eq!(
                differ,
                0,
                "{key}: tiles {} and {} differ in their overlap",
                k + 1,
                k + 2
            );
        }
        assert!(
            compared_black > 0,
            "{key}: the overlap strips are blank, nothing compared"
        );
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

/// How a tile mark looks (docs/sheets.md "Tile alignment marks"; umbra's own design, no
/// outside source): a tick across its band, 1 mm either side of the band's centre line, with
/// an arm along the band pointing into the overlap strip, from the mark's point.
const MARK_HALF_TICK_MM: f64 = 1.0;
const MARK_CLEAR_MM: f64 = 0.5;

/// Where a tile mark is drawn, found from the pixels near `predicted` (sheet px): the centre
/// of the tick (across the band) and of the arm (along it), as sheet px coordinates.
fn detect_mark(
    sheet: &Sheet,
    predicted: (f64, f64),
    across_x: bool,
    dir: f64,
    s: f64,
) -> (f64, f64) {
    // In band-aligned coordinates: `a` along the band, `c` across it.
    let (pa, pc) = if across_x {
        (predicted.1, predicted.0)
    } else {
        (predicted.0, predicted.1)
    };
    let black = |a: i64, c: i64| {
        if across_x {
            sheet.black(c, a)
        } else {
            sheet.black(a, c)
        }
    };
    let centre = |counts: &[(i64, u64)]| -> f64 {
        let most = counts.iter().map(|c| c.1).max().unwrap_or(0);
        assert!(most > 0, "no mark near {predicted:?}");
        let on: Vec<f64> = counts
            .iter()
            .filter(|c| c.1 * 2 >= most)
            .map(|c| c.0 as f64 + 0.5)
            .collect();
        on.iter().sum::<f64>() / on.len() as f64
    };
    // The tick: the line across the band with the most ink, within 1 mm along.
    let half_c = ((MARK_HALF_TICK_MM - 0.1) * s) as i64;
    let ticks: Vec<(i64, u64)> = ((pa - s) as i64..=(pa + s) as i64)
        .map(|a| {
            let n = (pc as i64 - half_c..=pc as i64 + half_c)
                .filter(|&c| black(a, c))
                .count();
            (a, n as u64)
        })
        .collect();
    // The arm: the line along the band with the most ink on the arm's side of the tick.
    let arm_span = if dir > 0.0 {
        (pa + 0.3 * s) as i64..=(pa + s) as i64
    } else {
        (pa - s) as i64..=(pa - 0.3 * s) as i64
    };
    let arms: Vec<(i64, u64)> = ((pc - 0.5 * s) as i64..=(pc + 0.5 * s) as i64)
        .map(|c| {
            let n = arm_span.clone().filter(|&a| black(a, c)).count();
            (c, n as u64)
        })
        .collect();
    let (a, c) = (centre(&ticks), centre(&arms));
    if across_x {
        (c, a)
    } else {
        (a, c)
    }
}

/// Checks the alignment marks of every tile against the pixels, and that the two tiles of
/// every join carry them at the same film coordinates. Returns the number of mark pairs.
///
/// Film pixel → sheet pixel for a piece is the difference of its placement's board → sheet
/// transform and the film's board → film transform (both in the manifest); a film-local mm
/// point (u, v) is film pixel (u·dpi/25.4, height_px − v·dpi/25.4): 1 in = 25.4 mm by
/// definition, and pixel rows count down from the top row as PNG scanlines do (from memory
/// of the PNG spec) while film-local y is up (docs/sheets.md).
fn check_tile_marks(out: &Path, m: &Value, dpi: f64) -> usize {
    check_tile_marks_on(m, dpi, |number| {
        Sheet::load(&out.join(m["sheets"][number - 1]["png"].as_str().unwrap()))
    })
}

/// [`check_tile_marks`] on the sheets `load` gives by 1-based number.
fn check_tile_marks_on(m: &Value, dpi: f64, load: impl Fn(usize) -> Sheet) -> usize {
    use std::collections::BTreeMap;
    let s = dpi / MM_PER_INCH;
    let mut sheets: BTreeMap<usize, Sheet> = BTreeMap::new();
    // (film, copy, tile pair, edge, end) → the mark's detected film pixel on each tile.
    type Key = (String, u64, [u64; 4], String, String);
    let mut found: BTreeMap<Key, Vec<(f64, f64)>> = BTreeMap::new();
    for film in m["films"].as_array().unwrap() {
        let key = film["key"].as_str().unwrap();
        let fa = Affine::of(&film["board_to_film_px"]);
        let fh = f(&film["size_px"][1]);
        for p in film["placements"].as_array().unwrap() {
            let Some(t) = p["tile"].as_array() else {
                continue;
            };
            let (row, col) = (t[0].as_u64().unwrap() - 1, t[1].as_u64().unwrap() - 1);
            let number = p["sheet"].as_u64().unwrap() as usize;
            let sheet = sheets.entry(number).or_insert_with(|| load(number));
            let sheet_h_mm = f(&m["sheets"][number - 1]["size_mm"][1]);
            let a = Affine::of(&p["board_to_sheet_px"]);
            let off = (a.c - fa.c, a.f - fa.f);
            let block = rect_of(p);
            let marks = p["tile_marks"].as_array().unwrap();
            // Every neighbour gets both ends of its strip in both bands across the strip.
            let neighbours = [
                (row > 0, [row - row.min(1), col]),
                (row + 1 < t[2].as_u64().unwrap(), [row + 1, col]),
                (col > 0, [row, col - col.min(1)]),
                (col + 1 < t[3].as_u64().unwrap(), [row, col + 1]),
            ];
            let expected: usize = neighbours.iter().filter(|n| n.0).count() * 4;
            assert_eq!(marks.len(), expected, "{key} tile {t:?}: marks {marks:?}");
            for mk in marks {
                let (u, v) = (f(&mk["at"]["x"]), f(&mk["at"]["y"]));
                let edge = mk["edge"].as_str().unwrap().to_string();
                let end = mk["end"].as_str().unwrap().to_string();
                let nb = [
                    mk["neighbour"][0].as_u64().unwrap(),
                    mk["neighbour"][1].as_u64().unwrap(),
                ];
                assert!(
                    neighbours.iter().any(|n| n.0 && n.1 == nb),
                    "{key}: mark for {nb:?}"
                );
                let predicted = (u * s + off.0, fh - v * s + off.1);
                let across_x = edge == "left" || edge == "right";
                // The arm points into the strip: +film coordinate at its start. Film y is up,
                // pixel rows down.
                let dir = if end == "start" { 1.0 } else { -1.0 };
                let dir = if across_x { -dir } else { dir };
                let got = detect_mark(sheet, predicted, across_x, dir, s);
                assert!(
                    (got.0 - predicted.0).abs() <= 1.0 && (got.1 - predicted.1).abs() <= 1.0,
                    "{key} tile {t:?}: {edge} {end} mark drawn at {got:?}, manifest says {predicted:?}"
                );
                // The mark lies in its band, outside the film block: its point is at least
                // the tick's half length and the clear space away from the block's edge.
                let (x_mm, y_mm) = (got.0 / s, sheet_h_mm - got.1 / s);
                let away = match edge.as_str() {
                    "top" => y_mm - block[3],
                    "bottom" => block[1] - y_mm,
                    "left" => block[0] - x_mm,
                    _ => x_mm - block[2],
                };
                assert!(
                    away >= MARK_HALF_TICK_MM + MARK_CLEAR_MM - 1.0 / s,
                    "{key} tile {t:?}: {edge} mark {away} mm from the film block"
                );
                let pair = if (row, col) < (nb[0], nb[1]) {
                    [row, col, nb[0], nb[1]]
                } else {
                    [nb[0], nb[1], row, col]
                };
                let film_px = (got.0 - off.0, got.1 - off.1);
                found
                    .entry((
                        key.to_string(),
                        p["copy"].as_u64().unwrap(),
                        pair,
                        edge,
                        end,
                    ))
                    .or_default()
                    .push(film_px);
            }
        }
    }
    // Laid over each other in register, the two tiles' marks coincide: the same film pixel
    // within one pixel.
    for (k, at) in &found {
        assert_eq!(
            at.len(),
            2,
            "{k:?}: the mark is on {} tiles, not 2",
            at.len()
        );
        assert!(
            (at[0].0 - at[1].0).abs() <= 1.0 && (at[0].1 - at[1].1).abs() <= 1.0,
            "{k:?}: the two tiles' marks are at film pixels {:?} and {:?}",
            at[0],
            at[1]
        );
    }
    found.len()
}

#[test]
fn tiles_in_a_grid_show_the_whole_film_and_share_their_marks() {
    // The demo board's films (about 70 × 73 mm) on a 78 × 84 mm sheet: printable 68 × 70.5
    // mm less the caption strip (3.5 mm), so each film is cut into 2 × 2 tiles. The large
    // overlap keeps each tile wider than its caption.
    let overlap_mm = 50.0;
    let dir = tempfile::tempdir().unwrap();
    let m = demo_run(
        dir.path(),
        &format!(
            "[printer]\ndpi = 300\n\n[sheet]\nsize = \"78x84mm\"\norientation = \"portrait\"\ntile_overlap_mm = {overlap_mm}\n"
        ),
    );
    let out = dir.path().join("out");
    let pieces = check_sheets(&out, &m, &default_rules(300.0));
    assert_eq!(pieces, 16, "4 films of 2 × 2 tiles");
    // 4 joins per film, each with 2 ends in 2 bands: 16 pairs per film.
    assert_eq!(check_tile_marks(&out, &m, 300.0), 4 * 16);
    // The same films whole on A4: the reference for every tile's pixels.
    let ref_dir = tempfile::tempdir().unwrap();
    let whole = demo_run(ref_dir.path(), "[printer]\ndpi = 300\n");
    let ref_out = ref_dir.path().join("out");
    let s = 300.0 / MM_PER_INCH;
    let ref_sheet = Sheet::load(&ref_out.join("sheet-01.png"));
    for film in m["films"].as_array().unwrap() {
        let key = film["key"].as_str().unwrap();
        let reference = films_support::film(&whole, key);
        let rp = &reference["placements"][0];
        assert!(
            rp["tile"].is_null() && rp["sheet"] == 1,
            "{key} is whole on A4"
        );
        let fa = Affine::of(&film["board_to_film_px"]);
        let ra = Affine::of(&rp["board_to_sheet_px"]);
        let (fw, fh) = (
            film["size_px"][0].as_u64().unwrap() as i64,
            film["size_px"][1].as_u64().unwrap() as i64,
        );
        let ref_off = ((ra.c - fa.c).round() as i64, (ra.f - fa.f).round() as i64);
        let mut covered = vec![false; (fw * fh) as usize];
        let tiles = film["placements"].as_array().unwrap();
        let mut spans = Vec::new();
        for p in tiles {
            let n = p["sheet"].as_u64().unwrap() as usize;
            let sheet = Sheet::load(&out.join(m["sheets"][n - 1]["png"].as_str().unwrap()));
            let a = Affine::of(&p["board_to_sheet_px"]);
            let off = ((a.c - fa.c).round() as i64, (a.f - fa.f).round() as i64);
            // The block in sheet pixels, one pixel in from the rounded rect.
            let r = rect_of(p);
            let sheet_h = sheet.height as f64;
            let (x0, x1) = ((r[0] * s).round() as i64 + 1, (r[2] * s).round() as i64 - 1);
            let (y0, y1) = (
                (sheet_h - r[3] * s).round() as i64 + 1,
                (sheet_h - r[1] * s).round() as i64 - 1,
            );
            spans.push(((x0 - off.0, x1 - off.0), (y0 - off.1, y1 - off.1)));
            let mut differ = 0u64;
            for y in y0..y1 {
                for x in x0..x1 {
                    let (u, v) = (x - off.0, y - off.1);
                    assert!(
                        u >= 0 && v >= 0 && u < fw && v < fh,
                        "{key}: block beyond the film"
                    );
                    covered[(v * fw + u) as usize] = true;
                    if sheet.black(x, y) != ref_sheet.black(u + ref_off.0, v + ref_off.1) {
                        differ += 1;
                    }
                }
            }
            // Nothing but the film inside a tile's block: no mark, no caption.
            assert_eq!(
                differ, 0,
                "{key} tile {}: block differs from the whole film",
                p["tile"]
            );
        }
        // Together the tiles show every film pixel (but the outermost two, which the one
        // pixel left out above and the rounding of the rect to pixels may leave out).
        let missing: Vec<(i64, i64)> = (2..fh - 2)
            .flat_map(|v| (2..fw - 2).map(move |u| (u, v)))
            .filter(|&(u, v)| !covered[(v * fw + u) as usize])
            .collect();
        assert!(
            missing.is_empty(),
            "{key}: {} film pixels on no tile, first {:?}, last {:?}",
            missing.len(),
            missing.first(),
            missing.last()
        );
        // Neighbours overlap by the configured overlap (docs/sheets.md "Tiling"), within a
        // pixel and the one pixel left out at each block edge.
        let mut xs: Vec<_> = spans.iter().map(|s| s.0).collect();
        xs.sort_unstable();
        xs.dedup();
        let mut ys: Vec<_> = spans.iter().map(|s| s.1).collect();
        ys.sort_unstable();
        ys.dedup();
        for spans_1d in [xs, ys] {
            assert_eq!(spans_1d.len(), 2, "{key}: {spans_1d:?}");
            let ov = (spans_1d[0].1 + 1 - (spans_1d[1].0 - 1)) as f64;
            assert!(
                (ov - overlap_mm * s).abs() <= 1.0,
                "{key}: overlap {ov} px, not {} px",
                overlap_mm * s
            );
        }
    }
}

#[test]
fn vector_pages_carry_the_same_tile_marks() {
    // The grid of the test above with --vector: poppler's pdftoppm (Debian poppler-utils)
    // rasterizes films-vector.pdf at the sheets' resolution, 1 px = 1/300 in (ISO 32000-1
    // §8.3.2.1), and every mark must be found where the manifest puts it on the raster sheet.
    if !have_tool("pdftoppm") {
        assert_ne!(
            std::env::var("CI").as_deref(),
            Ok("true"),
            "pdftoppm is required under CI"
        );
        eprintln!("skipping: pdftoppm (poppler-utils) is not installed");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    write_profile(
        dir.path(),
        "p.toml",
        "[printer]\ndpi = 300\n\n[sheet]\nsize = \"78x84mm\"\norientation = \"portrait\"\ntile_overlap_mm = 50\n",
    );
    films_ok(
        dir.path(),
        &[
            demo_dir().to_str().unwrap(),
            "-o",
            "out",
            "--profile",
            "p.toml",
            "--vector",
        ],
    );
    let out = dir.path().join("out");
    let m = manifest(&out);
    let st = std::process::Command::new("pdftoppm")
        .args(["-r", "300", "-gray"])
        .arg(out.join("films-vector.pdf"))
        .arg(dir.path().join("page"))
        .status()
        .unwrap();
    assert!(st.success());
    let mut pages = names_starting(dir.path(), "page");
    pages.sort(); // page-01, page-02, …: zero-padded to one width
    assert_eq!(
        pages.len(),
        m["sheets"].as_array().unwrap().len(),
        "{pages:?}"
    );
    let pairs = check_tile_marks_on(&m, 300.0, |number| {
        let (w, h, gray) = read_pgm(&std::fs::read(dir.path().join(&pages[number - 1])).unwrap());
        Sheet::from_gray(w, h, &gray)
    });
    assert_eq!(pairs, 4 * 16);
}
