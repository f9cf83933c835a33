//! Sheets made by `umbra films`: page sizes, where the films go, captions, copies and tiles,
//! checked on the manifest, the PDF bytes and the decoded sheet PNGs.

mod films_layout_support;
mod films_support;
mod poppler;

use films_layout_support::*;
use films_support::*;
use serde_json::Value;
use umbra::film::font;

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
