//! PDF sheets: pages of an exact physical size carrying 1-bit film images and simple black
//! line art (marks, labels), printed at actual size.
//!
//! References (ISO 32000-1:2008): §8.3.2.1 default user space unit is 1/72 in, so a length
//! of `mm` millimetres is `mm / 25.4 × 72` points; §7.7.3.3 MediaBox; §8.9.5 image
//! dictionaries (Width, Height, ColorSpace DeviceGray, BitsPerComponent 1); §8.9.3 sample
//! rows start on byte boundaries, MSB-first; §8.9.4 the unit square is mapped onto the
//! page by the current matrix and the image's first row is drawn at the *top*; §7.4.4
//! FlateDecode; §12.2 table 150 viewer preference `/PrintScaling /None` (PDF 1.6) so print
//! dialogs default to actual size instead of shrinking to fit.

use super::atomic::write_atomically;
use super::OutputError;
use crate::raster::Bitmap;
use miniz_oxide::deflate::core::{
    compress, create_comp_flags_from_zip_params, CompressorOxide, TDEFLFlush, TDEFLStatus,
};
use pdf_writer::{Filter, Finish, Name, Pdf, Rect, Ref};
use std::fmt::Write as _;
use std::io::Write;
use std::path::Path;

/// Points per millimetre: 72 pt per inch, 25.4 mm per inch (ISO 32000-1 §8.3.2.1).
pub const PT_PER_MM: f64 = 72.0 / 25.4;

/// Millimetres to PDF points.
pub fn mm_to_pt(mm: f64) -> f64 {
    mm * PT_PER_MM
}

/// A page size in points.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PageSize {
    pub width_pt: f64,
    pub height_pt: f64,
}

impl PageSize {
    /// ISO 216 A4, 210 × 297 mm.
    pub const A4: PageSize = PageSize::from_mm(210.0, 297.0);
    /// ISO 216 A3, 297 × 420 mm.
    pub const A3: PageSize = PageSize::from_mm(297.0, 420.0);
    /// US Letter, 8.5 × 11 in.
    pub const LETTER: PageSize = PageSize {
        width_pt: 8.5 * 72.0,
        height_pt: 11.0 * 72.0,
    };
    /// US Legal, 8.5 × 14 in.
    pub const LEGAL: PageSize = PageSize {
        width_pt: 8.5 * 72.0,
        height_pt: 14.0 * 72.0,
    };

    pub const fn from_mm(width_mm: f64, height_mm: f64) -> PageSize {
        PageSize {
            width_pt: width_mm * PT_PER_MM,
            height_pt: height_mm * PT_PER_MM,
        }
    }
}

/// A 1-bit image placed on a page: its lower-left corner at (`x_pt`, `y_pt`) from the
/// page's lower-left corner, stretched to `width_pt` × `height_pt`.
#[derive(Debug, Clone, Copy)]
pub struct PlacedImage<'a> {
    pub bitmap: &'a Bitmap,
    /// A set bit is black (opaque). `false` when set bits mean clear.
    pub black_is_one: bool,
    pub x_pt: f64,
    pub y_pt: f64,
    pub width_pt: f64,
    pub height_pt: f64,
}

impl<'a> PlacedImage<'a> {
    /// The image at its true size for a device of `dpi_x` × `dpi_y`.
    pub fn at_resolution(
        bitmap: &'a Bitmap,
        black_is_one: bool,
        x_pt: f64,
        y_pt: f64,
        dpi_x: f64,
        dpi_y: f64,
    ) -> PlacedImage<'a> {
        PlacedImage {
            bitmap,
            black_is_one,
            x_pt,
            y_pt,
            width_pt: bitmap.width() as f64 / dpi_x * 72.0,
            height_pt: bitmap.height() as f64 / dpi_y * 72.0,
        }
    }
}

/// Black vector line art in page points (origin at the lower-left corner, y up).
#[derive(Debug, Clone, PartialEq)]
pub enum LineArt {
    /// A closed polygon filled black (non-zero winding).
    Fill(Vec<(f64, f64)>),
    /// A straight black line of the given width, butt ends.
    Line {
        from: (f64, f64),
        to: (f64, f64),
        width_pt: f64,
    },
    /// Black filled area with holes: every ring is one closed subpath of a single path
    /// (ISO 32000-1 §8.5.2.1), filled with the even-odd rule (`f*`) or the non-zero rule
    /// (`f`), §8.5.3.3. Ring coordinates are in the path's own units, mapped onto the page
    /// by `matrix` (`cm`, §8.3.4: `x' = a·x + c·y + e`, `y' = b·x + d·y + f`), and written
    /// with `decimals` digits after the point. With `clip_pt` (x0, y0, x1, y1, page points)
    /// only the part inside that rectangle is painted (clipping path, §8.5.4).
    Area {
        rings: Vec<Vec<(f64, f64)>>,
        matrix: [f64; 6],
        even_odd: bool,
        decimals: usize,
        clip_pt: Option<[f64; 4]>,
    },
}

/// One page of a sheet.
#[derive(Debug, Clone)]
pub struct PdfPage<'a> {
    pub size: PageSize,
    /// Drawn first, in order.
    pub images: Vec<PlacedImage<'a>>,
    /// Drawn over the images, in order.
    pub art: Vec<LineArt>,
}

impl<'a> PdfPage<'a> {
    pub fn new(size: PageSize) -> PdfPage<'a> {
        PdfPage {
            size,
            images: Vec::new(),
            art: Vec::new(),
        }
    }
}

/// Writes `pages` as a PDF at `path`, atomically.
pub fn write_pdf(path: &Path, pages: &[PdfPage<'_>]) -> Result<(), OutputError> {
    let bytes = pdf_bytes(pages).map_err(|message| OutputError::Invalid {
        path: path.to_path_buf(),
        message,
    })?;
    write_atomically(path, |w| {
        w.write_all(&bytes).map_err(|source| OutputError::Io {
            path: path.to_path_buf(),
            source,
        })
    })
}

/// The PDF file for `pages`. Errors (as a sentence) for a document that cannot be valid:
/// no pages, a non-positive or non-finite page size, or an image too large for PDF.
pub fn pdf_bytes(pages: &[PdfPage<'_>]) -> Result<Vec<u8>, String> {
    if pages.is_empty() {
        return Err("a PDF needs at least one page".into());
    }
    let mut ids = (1..).map(Ref::new);
    let mut next = || ids.next().expect("unbounded id sequence");
    let catalog_id = next();
    let tree_id = next();
    let mut pdf = Pdf::new();
    // /PrintScaling is PDF 1.6 (ISO 32000-1 table 150).
    pdf.set_version(1, 6);

    let mut page_ids = Vec::with_capacity(pages.len());
    for (pi, page) in pages.iter().enumerate() {
        let (w, h) = (page.size.width_pt, page.size.height_pt);
        if !(w.is_finite() && h.is_finite() && w > 0.0 && h > 0.0) {
            return Err(format!("page {} has an invalid size {w} × {h} pt", pi + 1));
        }
        let page_id = next();
        let content_id = next();
        page_ids.push(page_id);

        let mut content = String::new();
        let mut image_refs = Vec::new();
        for (ii, img) in page.images.iter().enumerate() {
            let (bw, bh) = (img.bitmap.width(), img.bitmap.height());
            if bw == 0 || bh == 0 {
                continue; // an empty film draws nothing
            }
            if bw > i32::MAX as usize || bh > i32::MAX as usize {
                return Err(format!(
                    "image {} on page {} is too large for PDF",
                    ii + 1,
                    pi + 1
                ));
            }
            let id = next();
            let name = format!("Im{}", ii + 1);
            let data = deflate_bitmap(img.bitmap, img.black_is_one);
            let mut x = pdf.image_xobject(id, &data);
            x.filter(Filter::FlateDecode);
            x.width(bw as i32);
            x.height(bh as i32);
            x.color_space().device_gray();
            x.bits_per_component(1);
            x.interpolate(false);
            x.finish();
            // Maps the unit square onto the placement rectangle (ISO 32000-1 §8.9.4).
            let _ = writeln!(
                content,
                "q {} 0 0 {} {} {} cm /{name} Do Q",
                num(img.width_pt),
                num(img.height_pt),
                num(img.x_pt),
                num(img.y_pt)
            );
            image_refs.push((name, id));
        }
        if !page.art.is_empty() {
            // Black fill and stroke (DeviceGray 0), ISO 32000-1 §8.6.8 operators g and G.
            content.push_str("q 0 g 0 G\n");
            for art in &page.art {
                match art {
                    LineArt::Fill(points) => {
                        let mut it = points.iter();
                        if let Some(&(x, y)) = it.next() {
                            let _ = write!(content, "{} {} m", num(x), num(y));
                            for &(x, y) in it {
                                let _ = write!(content, " {} {} l", num(x), num(y));
                            }
                            // Close and fill with the non-zero rule (§8.5.3.3.2).
                            content.push_str(" h f\n");
                        }
                    }
                    LineArt::Area {
                        rings,
                        matrix,
                        even_odd,
                        decimals,
                        clip_pt,
                    } => write_area(&mut content, rings, matrix, *even_odd, *decimals, clip_pt),
                    LineArt::Line { from, to, width_pt } => {
                        let _ = writeln!(
                            content,
                            "{} w {} {} m {} {} l S",
                            num(*width_pt),
                            num(from.0),
                            num(from.1),
                            num(to.0),
                            num(to.1)
                        );
                    }
                }
            }
            content.push_str("Q\n");
        }
        let packed = miniz_oxide::deflate::compress_to_vec_zlib(content.as_bytes(), 6);
        pdf.stream(content_id, &packed).filter(Filter::FlateDecode);

        let mut p = pdf.page(page_id);
        p.parent(tree_id);
        p.media_box(Rect::new(0.0, 0.0, w as f32, h as f32));
        p.contents(content_id);
        let mut resources = p.resources();
        let mut xobjects = resources.x_objects();
        for (name, id) in &image_refs {
            xobjects.pair(Name(name.as_bytes()), *id);
        }
        xobjects.finish();
        resources.finish();
        p.finish();
    }

    pdf.pages(tree_id)
        .kids(page_ids.iter().copied())
        .count(page_ids.len() as i32);
    let mut catalog = pdf.catalog(catalog_id);
    catalog.pages(tree_id);
    catalog
        .viewer_preferences()
        .pair(Name(b"PrintScaling"), Name(b"None"));
    catalog.finish();
    Ok(pdf.finish())
}

/// A PDF real (ISO 32000-1 §7.3.3: no exponent) with up to 6 decimals, from the f64 value,
/// so placements are exact to 1e-6 pt (pdf-writer's own operators take f32, whose rounding
/// makes an image of 301 pixels at 300 dpi 300.99998 device pixels wide, and viewers then
/// drop or repeat pixel columns). Non-finite values are written as 0.
fn num(v: f64) -> String {
    if !v.is_finite() {
        return "0".into();
    }
    let s = format!("{v:.6}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" || s.is_empty() {
        "0".into()
    } else {
        s.to_string()
    }
}

/// Content-stream operators for [`LineArt::Area`], in their own graphics state (q … Q).
fn write_area(
    content: &mut String,
    rings: &[Vec<(f64, f64)>],
    m: &[f64; 6],
    even_odd: bool,
    decimals: usize,
    clip: &Option<[f64; 4]>,
) {
    if rings.iter().all(|r| r.len() < 3) {
        return;
    }
    content.push_str("q\n");
    if let Some([x0, y0, x1, y1]) = clip {
        // A rectangle clipping path: re, W, n (§8.5.4, table 60).
        let _ = writeln!(
            content,
            "{} {} {} {} re W n",
            num(*x0),
            num(*y0),
            num(x1 - x0),
            num(y1 - y0)
        );
    }
    let _ = writeln!(
        content,
        "{} {} {} {} {} {} cm",
        num(m[0]),
        num(m[1]),
        num(m[2]),
        num(m[3]),
        num(m[4]),
        num(m[5])
    );
    let d = decimals.min(9);
    for ring in rings.iter().filter(|r| r.len() >= 3) {
        for (i, &(x, y)) in ring.iter().enumerate() {
            push_fixed(content, x, d);
            content.push(' ');
            push_fixed(content, y, d);
            content.push_str(if i == 0 { " m\n" } else { " l\n" });
        }
        content.push_str("h\n");
    }
    content.push_str(if even_odd { "f*\nQ\n" } else { "f\nQ\n" });
}

/// A PDF real with `d` decimals, trailing zeros dropped (no exponent, §7.3.3).
fn push_fixed(out: &mut String, v: f64, d: usize) {
    let v = if v.is_finite() { v } else { 0.0 };
    let start = out.len();
    let _ = write!(out, "{v:.d$}");
    if d > 0 {
        while out.ends_with('0') {
            out.pop();
        }
        if out.ends_with('.') {
            out.pop();
        }
    }
    if &out[start..] == "-0" || out.len() == start {
        out.truncate(start);
        out.push('0');
    }
}

/// The bitmap's rows, packed MSB-first with 0 = black (DeviceGray), zlib-compressed row by
/// row: the only full-size buffer is the compressed output.
fn deflate_bitmap(bitmap: &Bitmap, black_is_one: bool) -> Vec<u8> {
    // Level 1 with the zlib header (window bits > 0), default strategy. Films are long runs
    // of one value: on an A4 sheet at 1200 dpi (17 MB of rows) level 1 takes about 80 ms and
    // level 6 about 600 ms, for a file only about 1.5 times larger (1.7 vs 1.2 MB), and the
    // PDF was the slowest stage of the whole films job (benches/films.rs).
    let flags = create_comp_flags_from_zip_params(1, 15, 0);
    let mut comp = CompressorOxide::new(flags);
    let mut out = Vec::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut row = Vec::new();
    let mut feed = |input: &[u8], flush: TDEFLFlush, out: &mut Vec<u8>| {
        let mut input = input;
        loop {
            let (status, used, written) = compress(&mut comp, input, &mut buf, flush);
            out.extend_from_slice(&buf[..written]);
            input = &input[used..];
            match status {
                TDEFLStatus::Done => return,
                TDEFLStatus::Okay if flush == TDEFLFlush::None && input.is_empty() => return,
                // Progress is guaranteed while the compressor is healthy; stop rather than
                // spin if it ever reports none.
                TDEFLStatus::Okay if used > 0 || written > 0 => {}
                _ => return,
            }
        }
    };
    for y in 0..bitmap.height() {
        bitmap.row_bytes_into(y, black_is_one, &mut row);
        feed(&row, TDEFLFlush::None, &mut out);
    }
    feed(&[], TDEFLFlush::Finish, &mut out);
    out
}
