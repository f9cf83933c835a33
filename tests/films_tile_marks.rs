//! Tile alignment marks of `umbra films` (docs/sheets.md "Tile alignment marks"): a board cut
//! into a grid of tiles, checked against the same board's whole films, on the raster sheets
//! and on the vector pages.

mod films_layout_support;
mod films_support;
mod poppler;

use films_layout_support::*;
use films_support::*;

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
