//! PNG output read back with the png crate (an independent decoder of the same format).

use std::fs;
use std::path::Path;
use umbra::output::png::{pixels_per_metre, write_png};
use umbra::output::{write_atomically, OutputError};
use umbra::raster::Bitmap;

fn pattern(w: usize, h: usize) -> Bitmap {
    let mut b = Bitmap::new(w, h);
    for y in 0..h {
        for x in 0..w {
            if (x * 7 + y * 3) % 11 < 4 || x == y {
                b.set(x, y, true);
            }
        }
    }
    b
}

fn decode(path: &Path) -> (png::OutputInfo, Option<png::PixelDimensions>, Vec<u8>) {
    let decoder = png::Decoder::new(std::io::BufReader::new(fs::File::open(path).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let dims = reader.info().pixel_dims;
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    (info, dims, buf)
}

#[test]
fn one_bit_png_with_phys_reads_back() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("film.png");
    let bmp = pattern(203, 57);
    write_png(&path, &bmp, 1200.0, 600.0, true).unwrap();
    let (info, dims, data) = decode(&path);
    // IHDR: greyscale, bit depth 1 (PNG spec §11.2.2).
    assert_eq!(info.bit_depth, png::BitDepth::One);
    assert_eq!(info.color_type, png::ColorType::Grayscale);
    assert_eq!((info.width, info.height), (203, 57));
    // pHYs in pixels per metre, unit metre (PNG spec §11.3.5.3): round(dpi / 0.0254);
    // TRADE.md: 600 dpi = 23,622 px/m; 1200 dpi = 47,244.09 → 47,244.
    let dims = dims.expect("pHYs chunk present");
    assert_eq!(dims.unit, png::Unit::Meter);
    assert_eq!((dims.xppu, dims.yppu), (47_244, 23_622));
    assert_eq!(pixels_per_metre(600.0), 23_622);
    // Black (set) pixels are greyscale 0; rows are packed MSB-first (PNG spec §7.2).
    for y in 0..57 {
        for x in 0..203 {
            let byte = data[y * info.line_size + x / 8];
            let white = (byte >> (7 - x % 8)) & 1 == 1;
            assert_eq!(white, !bmp.get(x, y), "pixel ({x},{y})");
        }
    }
    // With black_is_one = false the set bits are written white.
    write_png(&path, &bmp, 300.0, 300.0, false).unwrap();
    let (info, _, data) = decode(&path);
    for (y, x) in [(5usize, 5usize), (0, 0), (56, 202), (13, 100)] {
        let byte = data[info.line_size * y + x / 8];
        assert_eq!(
            (byte >> (7 - x % 8)) & 1 == 1,
            bmp.get(x, y),
            "pixel ({x},{y})"
        );
    }
    // Nothing but the output is left in the folder (the temporary file was renamed).
    assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[test]
fn failed_writes_leave_no_file_and_keep_the_old_one() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("no-such-folder").join("film.png");
    let err = write_png(&missing, &pattern(10, 10), 600.0, 600.0, true).unwrap_err();
    assert!(err.to_string().contains("film.png"), "{err}");
    assert!(!missing.exists());

    let path = dir.path().join("film.png");
    fs::write(&path, b"old").unwrap();
    // An empty film cannot be a PNG (IHDR needs width and height >= 1, PNG spec §11.2.2).
    assert!(write_png(&path, &Bitmap::new(0, 5), 600.0, 600.0, true).is_err());
    // A writer failing half way leaves the previous file untouched and no temporary behind.
    let r = write_atomically(&path, |w| {
        use std::io::Write;
        w.write_all(b"partial").unwrap();
        Err(OutputError::Invalid {
            path: path.clone(),
            message: "simulated failure".into(),
        })
    });
    assert!(r.is_err());
    assert_eq!(fs::read(&path).unwrap(), b"old");
    assert_eq!(fs::read_dir(dir.path()).unwrap().count(), 1);
}
