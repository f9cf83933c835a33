//! The 1-bit TIFF writer and the banded film-service output, read back with the `tiff` crate
//! (an independent TIFF 6.0 reader).

mod device_support;
use device_support::{read_png, read_tiff, umbra, write_board};
use std::path::PathBuf;
use tiff::decoder::{ifd::Value, Decoder};
use tiff::tags::Tag;
use umbra::output::tiff::{TiffCompression, TiffSpec, TiffWriter};
use umbra::raster::Bitmap;

fn decoder(path: &std::path::Path) -> Decoder<std::io::BufReader<std::fs::File>> {
    Decoder::new(std::io::BufReader::new(std::fs::File::open(path).unwrap())).unwrap()
}

/// A test pattern: a diagonal, a few runs and a single-pixel checker corner, so that both
/// PackBits replicate and literal runs occur and odd widths leave padding bits.
fn pattern(w: usize, h: usize) -> Bitmap {
    let mut b = Bitmap::new(w, h);
    for y in 0..h {
        b.set(y * w / h, y, true);
        if y % 7 < 3 {
            b.fill_span(y, w / 3, w / 3 + y % 50 + 1, true);
        }
        for x in 0..w.min(12) {
            b.set(x, y, (x + y) % 2 == 0);
        }
    }
    b
}

fn write(path: &std::path::Path, b: &Bitmap, dpi: (f64, f64), c: TiffCompression) {
    let f = std::fs::File::create(path).unwrap();
    let spec = TiffSpec {
        width: b.width() as u32,
        height: b.height() as u32,
        dpi_x: dpi.0,
        dpi_y: dpi.1,
        compression: c,
    };
    let mut t = TiffWriter::new(std::io::BufWriter::new(f), spec).unwrap();
    let mut row = Vec::new();
    for y in 0..b.height() {
        b.row_bytes_into(y, false, &mut row);
        t.write_row(&row).unwrap();
    }
    t.finish().unwrap();
}

#[test]
fn tags_and_pixels_read_back_as_written() {
    let dir = tempfile::tempdir().unwrap();
    // Width 1001: not a multiple of 8; 700 rows: several strips (rows_per_strip = 65536/126).
    let b = pattern(1001, 700);
    for (c, code) in [
        (TiffCompression::PackBits, 32773u16),
        (TiffCompression::None, 1),
    ] {
        let path = dir.path().join(format!("t{code}.tif"));
        write(&path, &b, (10160.0, 5080.0), c);
        let mut d = decoder(&path);
        assert_eq!(d.dimensions().unwrap(), (1001, 700));
        // TIFF 6.0 §8 field values.
        assert_eq!(d.get_tag_u32(Tag::BitsPerSample).unwrap(), 1);
        assert_eq!(d.get_tag_u32(Tag::Compression).unwrap(), code as u32);
        // PhotometricInterpretation 0 = WhiteIsZero: a 1 bit is black (opaque film).
        assert_eq!(d.get_tag_u32(Tag::PhotometricInterpretation).unwrap(), 0);
        // ResolutionUnit 2 = inch.
        assert_eq!(d.get_tag_u32(Tag::ResolutionUnit).unwrap(), 2);
        assert_eq!(
            d.get_tag(Tag::XResolution).unwrap(),
            Value::Rational(10160, 1)
        );
        assert_eq!(
            d.get_tag(Tag::YResolution).unwrap(),
            Value::Rational(5080, 1)
        );
        let strips = d.get_tag_u32_vec(Tag::StripOffsets).unwrap();
        assert!(strips.len() > 1, "several strips");
        drop(d);
        let px = read_tiff(&path);
        for y in 0..700 {
            for x in 0..1001 {
                assert_eq!(
                    px.get(x, y),
                    b.get(x, y),
                    "pixel ({x}, {y}), compression {code}"
                );
            }
        }
    }
}

#[test]
fn fractional_resolution_is_stored_as_a_close_rational() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("f.tif");
    let dpi = 25_400.0 / 47.25; // an LCD-like pitch
    write(&path, &pattern(9, 3), (dpi, dpi), TiffCompression::PackBits);
    let mut d = decoder(&path);
    let Value::Rational(n, den) = d.get_tag(Tag::YResolution).unwrap() else {
        panic!("YResolution is a RATIONAL (TIFF 6.0 §8)");
    };
    assert!((n as f64 / den as f64 - dpi).abs() < 1e-4);
}

/// The demo board's films rendered whole (`render_film`, written as PNG) and in bands
/// (`write_film_tiff` with 37-row bands) decode to the same pixels, with edge offsets that
/// grow and shrink (the bands must be grown by the offset's reach) and non-square pixels.
#[test]
fn banded_tiff_has_the_same_pixels_as_the_whole_film_png() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let board = umbra::load::load_paths(
        &[root.join("examples/wren-node")],
        &umbra::limits::Limits::default(),
    )
    .unwrap();
    let mut profile = umbra::process::Profile::default();
    profile.printer.dpi = 800.0;
    profile.printer.dpi_y = Some(600.0);
    profile.layers.copper.edge_offset_um = Some(100.0);
    profile.layers.mask.edge_offset_um = Some(-100.0);
    let plan = umbra::films::plan_films(&board, &profile, None, "wren", "2026-01-01").unwrap();
    let dir = tempfile::tempdir().unwrap();
    assert!(plan.films.len() >= 4);
    for (i, pf) in plan.films.iter().enumerate() {
        let job = plan.job(i);
        let whole = umbra::film::compose::render_film(&job, 0.15);
        assert!(
            whole.realized.y_px.abs() >= 2,
            "offset reaches over band edges"
        );
        let png = dir.path().join(format!("{i}.png"));
        umbra::output::png::write_png(&png, &whole.bitmap, 800.0, 600.0, true).unwrap();
        let tif = dir.path().join(format!("{i}.tif"));
        let (map, _) =
            umbra::device::service::write_film_tiff(&tif, &job, TiffCompression::PackBits, 37)
                .unwrap();
        assert_eq!(map, whole.map);
        let a = read_png(&png);
        let b = read_tiff(&tif);
        assert_eq!((a.width, a.height), (b.width, b.height));
        let differ = a.black.iter().zip(&b.black).filter(|(p, q)| p != q).count();
        assert_eq!(differ, 0, "{}: {differ} pixels differ", pf.selected.title);
        assert!(a.black.iter().any(|&p| p), "the film is not blank");
    }
}

#[test]
fn film_service_run_writes_one_tiff_per_film_at_the_asked_resolution() {
    let dir = tempfile::tempdir().unwrap();
    write_board(dir.path());
    std::fs::write(
        dir.path().join("p.toml"),
        "[device]\nkind = \"film-service\"\n[device.film_service]\ndpi = 4000\n",
    )
    .unwrap();
    let out = umbra(
        dir.path(),
        &[
            "films",
            "board",
            "--profile",
            "p.toml",
            "-o",
            "out",
            "-q",
            "--json",
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let summary: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let path = dir.path().join("out/copper-top.tif");
    let mut d = decoder(&path);
    assert_eq!(
        d.get_tag(Tag::XResolution).unwrap(),
        Value::Rational(4000, 1)
    );
    assert_eq!(
        d.get_tag(Tag::YResolution).unwrap(),
        Value::Rational(4000, 1)
    );
    assert_eq!(d.get_tag_u32(Tag::ResolutionUnit).unwrap(), 2);
    assert_eq!(d.get_tag_u32(Tag::BitsPerSample).unwrap(), 1);
    assert_eq!(d.get_tag_u32(Tag::PhotometricInterpretation).unwrap(), 0);
    let (w, h) = d.dimensions().unwrap();
    assert_eq!(summary["images"][0]["size_px"], serde_json::json!([w, h]));
    // The 10 mm square is 10 / 25.4 × 4000 = 1574.8 px wide (±1).
    let px = read_tiff(&path);
    let big = device_support::blobs(&px, true)
        .into_iter()
        .find(|b| b.width() > 1000)
        .expect("the 10 mm square");
    assert!(
        (big.width() as f64 - 10.0 / 25.4 * 4000.0).abs() <= 1.0,
        "{}",
        big.width()
    );
    assert!(
        (big.height() as f64 - 10.0 / 25.4 * 4000.0).abs() <= 1.0,
        "{}",
        big.height()
    );
}
