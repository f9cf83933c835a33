//! 1-bit grayscale PNG with the physical pixel size (pHYs) so that image programs print it
//! at the film's true size.
//!
//! PNG specification (W3C, second edition) references: §11.2.2 IHDR (greyscale, bit depth 1),
//! §7.2 (pixels packed MSB-first, rows padded to whole bytes), §11.3.5.3 pHYs (pixels per
//! unit, unit 1 = metre). In greyscale 0 is black, so opaque film pixels are written as 0.

use super::atomic::write_atomically;
use super::OutputError;
use crate::raster::Bitmap;
use std::io::Write;
use std::path::Path;

/// Pixels per metre for a resolution in dots per inch, as stored in pHYs:
/// `round(dpi / 0.0254)` (1 in = 0.0254 m exactly). 600 dpi → 23,622.
pub fn pixels_per_metre(dpi: f64) -> u32 {
    let v = (dpi / 0.0254).round();
    if v.is_finite() && v > 0.0 {
        v.min(u32::MAX as f64) as u32
    } else {
        0
    }
}

/// Writes `bitmap` as a 1-bit greyscale PNG at `path`, atomically.
///
/// `black_is_one`: a set bit in `bitmap` is black (opaque on the film). Pass `false` when
/// set bits mean clear. Either way black is written as greyscale 0.
/// Rows are streamed to the encoder one at a time; no 8-bit copy of the image exists.
pub fn write_png(
    path: &Path,
    bitmap: &Bitmap,
    dpi_x: f64,
    dpi_y: f64,
    black_is_one: bool,
) -> Result<(), OutputError> {
    let (w, h) = (bitmap.width(), bitmap.height());
    // IHDR: width and height are 1 ..= 2³¹ − 1 (PNG spec §11.2.2).
    let limit = (1usize << 31) - 1;
    if w == 0 || h == 0 || w > limit || h > limit {
        return Err(OutputError::Invalid {
            path: path.to_path_buf(),
            message: format!(
                "a PNG must be 1 to 2147483647 pixels each way, this film is {w} × {h}"
            ),
        });
    }
    write_atomically(path, |out| {
        let png_err = |e: png::EncodingError| match e {
            png::EncodingError::IoError(source) => OutputError::Io {
                path: path.to_path_buf(),
                source,
            },
            other => OutputError::Png {
                path: path.to_path_buf(),
                message: other.to_string(),
            },
        };
        let mut enc = png::Encoder::new(out, w as u32, h as u32);
        enc.set_color(png::ColorType::Grayscale);
        enc.set_depth(png::BitDepth::One);
        // Films are large runs of one value; the fast deflate with the Up filter (rows repeat
        // their neighbours) keeps files small without slowing the render pipeline down.
        enc.set_compression(png::Compression::Fast);
        enc.set_filter(png::Filter::Up);
        enc.set_pixel_dims(Some(png::PixelDimensions {
            xppu: pixels_per_metre(dpi_x),
            yppu: pixels_per_metre(dpi_y),
            unit: png::Unit::Meter,
        }));
        let mut writer = enc.write_header().map_err(png_err)?;
        let mut stream = writer.stream_writer().map_err(png_err)?;
        let mut row = Vec::with_capacity(w.div_ceil(8) + 8);
        for y in 0..h {
            // Greyscale 0 is black: invert when set bits mean black.
            bitmap.row_bytes_into(y, black_is_one, &mut row);
            stream.write_all(&row).map_err(|source| OutputError::Io {
                path: path.to_path_buf(),
                source,
            })?;
        }
        stream.finish().map_err(png_err)?;
        writer.finish().map_err(png_err)
    })
}
