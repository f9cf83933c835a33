//! PDF output: exact page sizes, actual-size printing, and the page rasterized by poppler's
//! `pdftoppm` (Debian poppler-utils, an independent PDF renderer) compared pixel for pixel.

mod poppler;
use poppler::{poppler_tool, read_pbm};
use std::fs;
use std::process::Command;
use umbra::output::pdf::{mm_to_pt, pdf_bytes, write_pdf, LineArt, PageSize, PdfPage, PlacedImage};
use umbra::raster::Bitmap;

/// The numbers of every `/MediaBox [ … ]` in the file, in page order.
fn media_boxes(pdf: &[u8]) -> Vec<Vec<f64>> {
    let text = String::from_utf8_lossy(pdf);
    text.match_indices("/MediaBox [")
        .map(|(i, m)| {
            let rest = &text[i + m.len()..];
            let end = rest.find(']').unwrap();
            rest[..end]
                .split_whitespace()
                .map(|v| v.parse().unwrap())
                .collect()
        })
        .collect()
}

#[test]
fn page_sizes_are_exact_in_points() {
    // ISO 216 A4 = 210 × 297 mm; 1 pt = 1/72 in (ISO 32000-1 §8.3.2.1):
    // 210 / 25.4 × 72 = 595.276 pt, 297 / 25.4 × 72 = 841.890 pt. US Letter 8.5 × 11 in =
    // 612 × 792 pt (ANSI/ASME Y14.1).
    assert!((PageSize::A4.width_pt - 595.2756).abs() < 1e-3);
    assert!((PageSize::A4.height_pt - 841.8898).abs() < 1e-3);
    assert!((mm_to_pt(25.4) - 72.0).abs() < 1e-12);
    let bmp = Bitmap::new(10, 10);
    let mut a4 = PdfPage::new(PageSize::A4);
    a4.images.push(PlacedImage::at_resolution(
        &bmp, true, 10.0, 10.0, 600.0, 600.0,
    ));
    let letter = PdfPage::new(PageSize::LETTER);
    let bytes = pdf_bytes(&[a4, letter]).unwrap();
    let boxes = media_boxes(&bytes);
    assert_eq!(boxes.len(), 2);
    for (b, want) in boxes.iter().zip([[595.276, 841.89], [612.0, 792.0]]) {
        assert_eq!(&b[..2], &[0.0, 0.0]);
        assert!(
            (b[2] - want[0]).abs() < 0.001 && (b[3] - want[1]).abs() < 0.001,
            "{b:?}"
        );
    }
    // Viewer preference: print at actual size (ISO 32000-1 §12.2, table 150).
    let text = String::from_utf8_lossy(&bytes);
    assert!(text.contains("/PrintScaling /None"), "{text}");
    assert!(pdf_bytes(&[]).is_err());

    // pdfinfo (poppler-utils) reads the same page sizes.
    if !poppler_tool("pdfinfo") {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("sizes.pdf");
    fs::write(&path, &bytes).unwrap();
    let out = Command::new("pdfinfo")
        .args(["-f", "1", "-l", "2"])
        .arg(&path)
        .output()
        .unwrap();
    let info = String::from_utf8_lossy(&out.stdout);
    assert!(info.contains("595.276 x 841.89 pts (A4)"), "{info}");
    assert!(info.contains("612 x 792 pts (letter)"), "{info}");
}

fn pbm_black(pbm: &(usize, usize, Vec<bool>), x: usize, y: usize) -> bool {
    pbm.2[y * pbm.0 + x]
}

/// A film with shapes of every slope (a disc ring, diagonals, a checker corner).
fn film(w: usize, h: usize) -> Bitmap {
    let mut b = Bitmap::new(w, h);
    for y in 0..h {
        for x in 0..w {
            let (dx, dy) = (x as f64 - w as f64 / 2.0, y as f64 - h as f64 / 2.0);
            let r = dx.hypot(dy);
            let ring = (40.0..60.0).contains(&r);
            let diag = (x + 2 * y) % 37 < 3;
            let checker = x < 40 && y < 40 && (x / 4 + y / 4) % 2 == 0;
            b.set(x, y, ring || diag || checker);
        }
    }
    b
}

#[test]
fn poppler_rasterizes_the_page_like_our_bitmap() {
    if !poppler_tool("pdftoppm") {
        return;
    }
    let dpi = 300.0;
    let square = film(300, 225); // drawn at 300 × 300 dpi
    let tall = film(150, 120); // drawn at 300 × 150 dpi (non-square pixels)
    let mut page = PdfPage::new(PageSize::LETTER);
    // Whole-pixel positions: 72 pt = 300 px at 300 dpi, 144 pt = 600 px (300 px at 150 dpi).
    // Poppler's Splash rasterizer rounds an image's far edges up to floor(x) + 1 device
    // pixels, so an image ending exactly on a pixel boundary would grow by one pixel and be
    // resampled. Pulling the right and bottom edges in by 1/100 pixel keeps its rounding
    // exact; the images stay at their true scale to 1 part in 10⁴. (Poppler also smooths any
    // image it has to resample, so each image is compared at its own resolution.)
    let placed = |b, x, y, dpi_y: f64| {
        let mut p = PlacedImage::at_resolution(b, true, x, y, dpi, dpi_y);
        p.width_pt -= 0.01 * 72.0 / dpi;
        p.y_pt += 0.01 * 72.0 / dpi_y;
        p.height_pt -= 0.01 * 72.0 / dpi_y;
        p
    };
    page.images.push(placed(&square, 72.0, 144.0, 300.0));
    page.images.push(placed(&tall, 288.0, 144.0, 150.0));
    // Line art: a black square of 36 pt (150 px at 300 dpi) at (36 pt, 36 pt).
    page.art.push(LineArt::Fill(vec![
        (36.0, 36.0),
        (72.0, 36.0),
        (72.0, 72.0),
        (36.0, 72.0),
    ]));
    let dir = tempfile::tempdir().unwrap();
    let pdf = dir.path().join("sheet.pdf");
    write_pdf(&pdf, &[page]).unwrap();
    let rasterize = |rx: u32, ry: u32| {
        let prefix = dir.path().join(format!("page{rx}x{ry}"));
        let status = Command::new("pdftoppm")
            .args([
                "-rx",
                &rx.to_string(),
                "-ry",
                &ry.to_string(),
                "-mono",
                "-singlefile",
            ])
            .arg(&pdf)
            .arg(&prefix)
            .status()
            .unwrap();
        assert!(status.success());
        read_pbm(&fs::read(prefix.with_extension("pbm")).unwrap())
    };

    // Compare an image with the page pixels it covers. Allowed differences: only in the
    // outermost pixel ring of the image (where the viewer's rounding of the placement
    // rectangle decides), at most one ring's worth; none inside.
    let check = |pbm: &(usize, usize, Vec<bool>), bmp: &Bitmap, left: usize, bottom: usize| {
        let top = pbm.1 - bottom - bmp.height();
        let (w, h) = (bmp.width(), bmp.height());
        let mut edge_diffs = 0;
        for y in 0..h {
            for x in 0..w {
                if bmp.get(x, y) != pbm_black(pbm, left + x, top + y) {
                    let edge = x == 0 || y == 0 || x == w - 1 || y == h - 1;
                    assert!(edge, "pixel ({x},{y}) of a {w}×{h} image differs inside");
                    edge_diffs += 1;
                }
            }
        }
        assert!(edge_diffs <= 2 * (w + h), "{edge_diffs} edge differences");
        // Just outside the image the page is white.
        for x in left..left + w {
            assert!(!pbm_black(pbm, x, top - 2) && !pbm_black(pbm, x, top + h + 1));
        }
        for y in top..top + h {
            assert!(!pbm_black(pbm, left - 2, y) && !pbm_black(pbm, left + w + 1, y));
        }
    };
    assert!(square.count_ones() > 5_000 && tall.count_ones() > 1_000);

    let page300 = rasterize(300, 300);
    // Letter at 300 dpi: 8.5 × 300 = 2550 by 11 × 300 = 3300 pixels.
    assert_eq!((page300.0, page300.1), (2550, 3300));
    check(&page300, &square, 300, 600);
    // The line-art square: pixels 150..300 from the left and from the bottom, all black
    // inside its one-pixel edge ring, white just outside.
    for y in 3300 - 299..3300 - 151 {
        for x in 151..299 {
            assert!(pbm_black(&page300, x, y), "art pixel ({x},{y})");
        }
    }
    assert!(!pbm_black(&page300, 148, 3300 - 200) && !pbm_black(&page300, 302, 3300 - 200));

    let page150 = rasterize(300, 150);
    assert_eq!((page150.0, page150.1), (2550, 1650));
    // 288 pt = 1200 px across at 300 dpi; 144 pt = 300 px up at 150 dpi.
    check(&page150, &tall, 1200, 300);
}
