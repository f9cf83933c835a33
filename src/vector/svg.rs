//! One film as an SVG document (SVG 1.1, W3C Recommendation 2011): the black region as one
//! path filled with the even-odd rule, in film millimetres at true size.
//!
//! The document is `width_mm × height_mm` with `viewBox` in millimetres (SVG 1.1 §7.7), so
//! one user unit is one film millimetre. SVG's y axis points down (§7.3), so film y (up) is
//! written as `height − y`. Clear areas are left unpainted (transparent).

use super::VectorFilm;
use std::fmt::Write as _;

/// Decimals written for SVG coordinates: 1e-5 mm = 10 nm.
pub const SVG_DECIMALS: usize = 5;

fn fixed(out: &mut String, v: f64) {
    let v = if v.is_finite() { v } else { 0.0 };
    let start = out.len();
    let _ = write!(out, "{v:.SVG_DECIMALS$}");
    while out.ends_with('0') {
        out.pop();
    }
    if out.ends_with('.') {
        out.pop();
    }
    if &out[start..] == "-0" || out.len() == start {
        out.truncate(start);
        out.push('0');
    }
}

/// Escapes text for an XML character-data or attribute context (XML 1.0 §2.4).
fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// The SVG text of a film; `title` goes into the document's `<title>`.
pub fn svg_text(film: &VectorFilm, title: &str) -> String {
    let w = film.space.width_mm;
    let h = film.space.height_mm;
    let mut s = String::new();
    s.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let mut dims = String::new();
    fixed(&mut dims, w);
    let mut hs = String::new();
    fixed(&mut hs, h);
    let _ = writeln!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{dims}mm\" height=\"{hs}mm\" viewBox=\"0 0 {dims} {hs}\">"
    );
    let _ = writeln!(s, "<title>{}</title>", escape(title));
    s.push_str("<path fill=\"#000\" fill-rule=\"evenodd\" d=\"");
    for ring in film.black.iter().flatten().filter(|r| r.len() >= 3) {
        for (i, p) in ring.iter().enumerate() {
            s.push(if i == 0 { 'M' } else { 'L' });
            fixed(&mut s, p[0]);
            s.push(' ');
            fixed(&mut s, h - p[1]);
        }
        s.push_str("Z\n");
    }
    s.push_str("\"/>\n</svg>\n");
    s
}
