//! The `umbra render` command run as a user runs it, on the demo board (examples/wren-node),
//! with its output read back by independent decoders: the png crate, and poppler's
//! `pdftocairo`, `pdftoppm` and `pdfinfo` (Debian package poppler-utils) for the PDF. Plus
//! the shared board-to-pixel mapping of the top and bottom copper films
//! (docs/film-rules.md, "Mirroring": films laid printed side to printed side have their
//! marks coincide).

mod poppler;
use poppler::{poppler_tool, read_pbm};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use umbra::films::make_films;
use umbra::image::Point;
use umbra::layers::{LayerFunction, Side};
use umbra::limits::Limits;
use umbra::process::Profile;
use umbra::raster::Bitmap;

fn demo_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node")
}

fn top_copper() -> PathBuf {
    demo_dir().join("wren-node.top-copper.gbr")
}

fn umbra(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_umbra"))
        .current_dir(dir)
        .args(args)
        .output()
        .expect("the umbra binary runs")
}

fn ok(out: &Output) {
    assert!(
        out.status.success(),
        "umbra failed: {}\n{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}

/// A decoded 1-bit PNG: size, pHYs, and black pixels (greyscale 0 is black).
struct Png {
    width: usize,
    height: usize,
    bit_depth: png::BitDepth,
    dims: Option<png::PixelDimensions>,
    black: Vec<bool>,
}

fn read_png(path: &Path) -> Png {
    let file = std::io::BufReader::new(std::fs::File::open(path).unwrap());
    let mut reader = png::Decoder::new(file).read_info().unwrap();
    let dims = reader.info().pixel_dims;
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!(info.color_type, png::ColorType::Grayscale);
    let (w, h) = (info.width as usize, info.height as usize);
    let mut black = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            // Rows packed MSB-first (PNG spec §7.2); greyscale 0 = black.
            let byte = buf[y * info.line_size + x / 8];
            black.push((byte >> (7 - x % 8)) & 1 == 0);
        }
    }
    Png {
        width: w,
        height: h,
        bit_depth: info.bit_depth,
        dims,
        black,
    }
}

#[test]
fn png_at_600_and_1200_dpi_carries_phys_bit_depth_one_and_a_manifest() {
    let dir = tempfile::tempdir().unwrap();
    let src = top_copper();
    let drill = demo_dir().join("wren-node.drill.xln");
    let holes = umbra::excellon::read(
        &std::fs::read_to_string(&drill).unwrap(),
        "wren-node.drill.xln",
        &Limits::default(),
    )
    .unwrap()
    .holes;
    let mut sizes = Vec::new();
    for dpi in [600u32, 1200] {
        let name = format!("x{dpi}.png");
        let out = umbra(
            dir.path(),
            &[
                "render",
                src.to_str().unwrap(),
                "-o",
                &name,
                "--dpi",
                &dpi.to_string(),
                "--drill",
                drill.to_str().unwrap(),
            ],
        );
        ok(&out);
        let png = read_png(&dir.path().join(&name));
        // IHDR bit depth 1 (PNG spec §11.2.2).
        assert_eq!(png.bit_depth, png::BitDepth::One);
        // pHYs: pixels per metre = round(dpi / 0.0254), unit metre (PNG spec §11.3.5.3;
        // TRADE.md: 600 dpi = 23,622 px/m).
        let ppm = (dpi as f64 / 0.0254).round() as u32;
        let d = png.dims.expect("pHYs present");
        assert_eq!((d.xppu, d.yppu, d.unit), (ppm, ppm, png::Unit::Meter));
        if dpi == 600 {
            assert_eq!(ppm, 23_622);
        }
        // Some copper is drawn, and not everything is black.
        let ones = png.black.iter().filter(|&&b| b).count();
        assert!(ones > 0 && ones < png.black.len());

        // The manifest beside it: the affine px = a·x + b·y + c, py = d·x + e·y + f.
        let manifest: serde_json::Value = serde_json::from_str(
            &std::fs::read_to_string(dir.path().join(format!("{name}.json"))).unwrap(),
        )
        .unwrap();
        let a = &manifest["board_to_film_px"];
        let k = dpi as f64 / 25.4;
        // The top copper film is mirrored by default (printed side toward the board,
        // docs/film-rules.md "Mirroring"), so a = −dpi/25.4; y is down: e = −dpi/25.4.
        assert!((a["a"].as_f64().unwrap() + k).abs() < 1e-9, "{a}");
        assert!((a["e"].as_f64().unwrap() + k).abs() < 1e-9, "{a}");
        assert_eq!(a["b"].as_f64(), Some(0.0));
        assert_eq!(a["d"].as_f64(), Some(0.0));
        assert_eq!(
            manifest["size_px"],
            serde_json::json!([png.width, png.height])
        );
        // The affine maps board mm onto this image: each drill centre on the film (the film
        // covers the layer's own extents, so mounting holes in the bare corners may fall
        // outside) lands on its pilot dot, clear (docs/film-rules.md "Drill-centre marks"),
        // and the copper around most of them, 0.3 mm to the side, is black.
        let f = |k: &str| a[k].as_f64().unwrap();
        let px = |x: f64, y: f64| {
            let u = f("a") * x + f("b") * y + f("c");
            let v = f("d") * x + f("e") * y + f("f");
            let inside = u >= 0.0 && v >= 0.0 && u < png.width as f64 && v < png.height as f64;
            inside.then(|| png.black[v.floor() as usize * png.width + u.floor() as usize])
        };
        let (mut on_film, mut ringed) = (0, 0);
        for h in &holes {
            if let Some(black) = px(h.at.x, h.at.y) {
                assert!(!black, "{dpi} dpi: hole centre {:?} is black", h.at);
                on_film += 1;
                ringed += (px(h.at.x + 0.3, h.at.y) == Some(true)) as usize;
            }
        }
        assert!(
            on_film * 4 > holes.len() * 3,
            "{on_film} of {} holes",
            holes.len()
        );
        assert!(ringed * 2 > on_film, "{ringed} of {on_film}");
        sizes.push((png.width, png.height));
    }
    // Twice the resolution, twice the pixels each way (±1 for rounding up the film size).
    let (w6, h6) = sizes[0];
    let (w12, h12) = sizes[1];
    assert!((w12 as i64 - 2 * w6 as i64).abs() <= 1, "{sizes:?}");
    assert!((h12 as i64 - 2 * h6 as i64).abs() <= 1, "{sizes:?}");
}

#[test]
fn pdf_rasterized_by_poppler_equals_the_png() {
    if !poppler_tool("pdftoppm") || !poppler_tool("pdftocairo") || !poppler_tool("pdfinfo") {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let src = top_copper();
    let dpi = "300";
    for name in ["f.png", "f.pdf"] {
        ok(&umbra(
            dir.path(),
            &["render", src.to_str().unwrap(), "-o", name, "--dpi", dpi],
        ));
    }
    let png = read_png(&dir.path().join("f.png"));

    // The page is the film's size: width px / dpi inches × 72 pt (PDF user space unit
    // 1/72 in, ISO 32000-1 §8.3.2.1). pdfinfo prints "Page size: W x H pts".
    let info = Command::new("pdfinfo")
        .arg("f.pdf")
        .current_dir(dir.path())
        .output()
        .unwrap();
    let text = String::from_utf8_lossy(&info.stdout);
    let line = text
        .lines()
        .find(|l| l.starts_with("Page size:"))
        .expect("pdfinfo page size");
    let nums: Vec<f64> = line
        .split_whitespace()
        .filter_map(|t| t.parse().ok())
        .collect();
    let (w_pt, h_pt) = (
        png.width as f64 / 300.0 * 72.0,
        png.height as f64 / 300.0 * 72.0,
    );
    // pdfinfo prints at most a few decimals.
    assert!((nums[0] - w_pt).abs() < 0.01, "{line} vs {w_pt}");
    assert!((nums[1] - h_pt).abs() < 0.01, "{line} vs {h_pt}");

    // 1. poppler's cairo back end at the film's own resolution, 1 bit: pixel for pixel the
    //    PNG. Only the outermost ring of pixels may differ (a viewer's rounding of the page
    //    edge may drop or repeat a column); the film's 2 mm border is clear, so in practice
    //    nothing differs.
    let r = Command::new("pdftocairo")
        .args(["-r", dpi, "-mono", "-png", "-singlefile", "f.pdf", "cairo"])
        .current_dir(dir.path())
        .output()
        .unwrap();
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let cairo = read_png(&dir.path().join("cairo.png"));
    assert_eq!((cairo.width, cairo.height), (png.width, png.height));
    let (w, h) = (png.width, png.height);
    let on_image_edge = |x: usize, y: usize| x == 0 || y == 0 || x == w - 1 || y == h - 1;
    let mut inner = 0;
    for y in 0..h {
        for x in 0..w {
            if cairo.black[y * w + x] != png.black[y * w + x] && !on_image_edge(x, y) {
                inner += 1;
            }
        }
    }
    assert_eq!(
        inner, 0,
        "pixels differing inside the outermost ring (pdftocairo)"
    );

    // 2. `pdftoppm -mono` (poppler's Splash back end). Splash resamples images even at 1:1
    //    scale (measured: grey values along every edge with -gray, at 72 dpi on a 72 dpi
    //    film too, with -aa no), moving edges by a fraction of a pixel; the cairo back end
    //    and Ghostscript render the same file pixel-exact. So here the bounded band is the
    //    one-pixel band along every edge of the artwork: a pixel may differ only where the
    //    PNG has both colours in its 3 × 3 neighbourhood.
    let r = Command::new("pdftoppm")
        .args(["-r", dpi, "-mono", "-singlefile", "f.pdf", "page"])
        .current_dir(dir.path())
        .output()
        .unwrap();
    assert!(r.status.success(), "{}", String::from_utf8_lossy(&r.stderr));
    let (pw, ph, black) = read_pbm(&std::fs::read(dir.path().join("page.pbm")).unwrap());
    // The raster is the film's size exactly (the page is a whole number of film pixels).
    assert_eq!((pw, ph), (w, h));
    let at = |x: usize, y: usize| png.black[y * w + x];
    let in_edge_band = |x: usize, y: usize| {
        let v = at(x, y);
        (y.saturating_sub(1)..(y + 2).min(h))
            .any(|yy| (x.saturating_sub(1)..(x + 2).min(w)).any(|xx| at(xx, yy) != v))
    };
    let (mut band, mut differ, mut outside) = (0, 0, 0);
    for y in 0..h {
        for x in 0..w {
            let edge = in_edge_band(x, y);
            band += edge as usize;
            if black[y * w + x] != at(x, y) {
                differ += 1;
                if !edge && !on_image_edge(x, y) {
                    outside += 1;
                }
            }
        }
    }
    assert_eq!(outside, 0, "pdftoppm pixels differing away from any edge");
    // A fraction-of-a-pixel shift changes at most one side of each edge's band.
    assert!(
        differ * 2 < band,
        "{differ} of {band} edge-band pixels differ"
    );
}

#[test]
fn mirror_and_no_mirror_are_exact_left_right_flips() {
    let dir = tempfile::tempdir().unwrap();
    let src = top_copper();
    for (name, flag) in [("m.png", "--mirror"), ("n.png", "--no-mirror")] {
        ok(&umbra(
            dir.path(),
            &[
                "render",
                src.to_str().unwrap(),
                "-o",
                name,
                "--dpi",
                "600",
                flag,
            ],
        ));
    }
    let m = read_png(&dir.path().join("m.png"));
    let n = read_png(&dir.path().join("n.png"));
    assert_eq!((m.width, m.height), (n.width, n.height));
    let w = m.width;
    let mut diff = 0;
    for y in 0..m.height {
        for x in 0..w {
            // Pixel (x, y) of one is pixel (w − 1 − x, y) of the other.
            if m.black[y * w + x] != n.black[y * w + (w - 1 - x)] {
                diff += 1;
            }
        }
    }
    assert_eq!(diff, 0, "pixels that are not mirror images");
    // The board is not left-right symmetric, so the flip is not the identity.
    assert_ne!(m.black, n.black);
}

/// The film's pixel at board point `p` (bit 1 = black).
fn black_at(bitmap: &Bitmap, px: (f64, f64)) -> bool {
    bitmap.get(px.0.floor() as usize, px.1.floor() as usize)
}

#[test]
fn top_and_bottom_copper_share_the_board_mapping_up_to_the_mirror() {
    let board = umbra::load::load_paths(&[demo_dir()], &Limits::default()).unwrap();
    let profile = Profile::default();
    let (films, frame, _) = make_films(&board, &profile, None, "wren", "2026-01-01").unwrap();
    let film_of = |side| {
        films
            .iter()
            .find(|f| f.id.function == LayerFunction::Copper && f.id.side == side)
            .expect("copper film")
    };
    let (top, bottom) = (film_of(Side::Top), film_of(Side::Bottom));
    // Printed side toward the board: top mirrored, bottom as drawn (docs/film-rules.md).
    assert!(top.recipe.mirror && !bottom.recipe.mirror);
    let (tm, bm) = (&top.rendered.map, &bottom.rendered.map);
    assert_eq!((tm.width, tm.height), (bm.width, bm.height));
    let width = tm.width as f64;

    let targets = frame.targets.expect("registration targets on by default");
    let drills = umbra::films::drill_files(&board);
    let holes: Vec<Point> = drills
        .iter()
        .flat_map(|d| d.holes.iter().map(|h| h.at))
        .collect();
    assert!(holes.len() >= 10, "the demo board has holes");

    for p in targets.iter().chain(&holes) {
        let (xt, yt) = tm.to_px(*p);
        let (xb, yb) = bm.to_px(*p);
        // Laid printed side to printed side, the top film is turned over left-right: the same
        // board point must land at x_top = width − x_bottom, same y (within half a pixel).
        assert!(
            (xt - (width - xb)).abs() <= 0.5,
            "{p:?}: {xt} vs {width} − {xb}"
        );
        assert!((yt - yb).abs() <= 0.5, "{p:?}: {yt} vs {yb}");
    }
    // Drill centres: the pilot dot (non-copper colour, docs/film-rules.md "Drill-centre
    // marks") is clear on both positive copper films, at the same board place.
    for h in &holes {
        assert!(
            !black_at(&top.rendered.bitmap, tm.to_px(*h)),
            "top, hole {h:?}"
        );
        assert!(
            !black_at(&bottom.rendered.bitmap, bm.to_px(*h)),
            "bottom, hole {h:?}"
        );
    }
    // Targets: the clear centre spot and the black inner ring coincide on both films.
    let ring_r = 0.25 * profile.artwork.target_size_mm / 2.0;
    for t in &targets {
        for (p, black) in [(*t, false), (Point::new(t.x + ring_r, t.y), true)] {
            assert_eq!(
                black_at(&top.rendered.bitmap, tm.to_px(p)),
                black,
                "top {p:?}"
            );
            assert_eq!(
                black_at(&bottom.rendered.bitmap, bm.to_px(p)),
                black,
                "bottom {p:?}"
            );
        }
    }
    // And the drill pilot dots sit in copper on most holes: around each dot the copper
    // (black) ring shows on both films, at the same board place.
    let ringed = holes
        .iter()
        .filter(|h| {
            let q = Point::new(h.x + 0.3, h.y);
            black_at(&top.rendered.bitmap, tm.to_px(q))
                && black_at(&bottom.rendered.bitmap, bm.to_px(q))
        })
        .count();
    assert!(ringed * 2 > holes.len(), "{ringed} of {}", holes.len());
}

#[test]
fn bad_input_exits_non_zero_with_a_message_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let src = top_copper();
    let src = src.to_str().unwrap();
    let check_failed = |out: &Output, needle: &str| {
        assert!(!out.status.success());
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(needle), "stderr: {err}");
    };

    // A file that does not exist.
    let out = umbra(d, &["render", "no-such-file.gbr", "-o", "a.png"]);
    check_failed(&out, "no-such-file.gbr");
    assert!(!d.join("a.png").exists() && !d.join("a.png.json").exists());

    // An output that is neither .png nor .pdf.
    let out = umbra(d, &["render", src, "-o", "b.jpg"]);
    check_failed(&out, ".png or .pdf");
    assert!(!d.join("b.jpg").exists() && !d.join("b.jpg.json").exists());

    // An existing output without --force: refused, left as it was, no manifest written.
    std::fs::write(d.join("c.png"), b"keep me").unwrap();
    let out = umbra(d, &["render", src, "-o", "c.png", "--dpi", "300"]);
    check_failed(&out, "--force");
    assert_eq!(std::fs::read(d.join("c.png")).unwrap(), b"keep me");
    assert!(!d.join("c.png.json").exists());
    // With --force it is replaced (so the refusal above was about the existing file).
    ok(&umbra(
        d,
        &["render", src, "-o", "c.png", "--dpi", "300", "--force"],
    ));
    assert_ne!(std::fs::read(d.join("c.png")).unwrap(), b"keep me");

    // Nothing else was left behind (no temporary files).
    let mut names: Vec<String> = std::fs::read_dir(d)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .collect();
    names.sort();
    assert_eq!(names, ["c.png", "c.png.json"]);
}
