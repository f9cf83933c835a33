//! Tiny writers for Gerber (RS-274X with X2 attributes) and Excellon text, used by the demo
//! board and the synthetic bench board generators.
//!
//! Output is always millimetres, coordinate format 4.6 with leading zeros omitted
//! (`%FSLAX46Y46*%`, `%MOMM*%`, Gerber spec rev 2024.05 §4.2), absolute coordinates, and
//! multi-quadrant arcs (`G75`, §4.7.2) declared once in the header. Numbers are formatted
//! deterministically so that the same drawing always gives the same bytes.

use crate::image::{Point, Turn};
use std::fmt::Write as _;

/// A Gerber coordinate in format 4.6: millimetres × 10⁶, rounded to the nearest integer.
pub fn coord(mm: f64) -> i64 {
    (mm * 1e6).round() as i64
}

/// A decimal number for aperture parameters and drill files: up to 6 decimals, trailing zeros
/// dropped ("0.25", "1", "-0.5").
pub fn num(v: f64) -> String {
    let mut s = format!("{:.6}", v);
    if s.contains('.') {
        while s.ends_with('0') {
            s.pop();
        }
        if s.ends_with('.') {
            s.pop();
        }
    }
    if s == "-0" {
        s = "0".to_string();
    }
    s
}

/// A defined aperture (its D code).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Aperture(pub u32);

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Interpolation {
    Linear,
    Clockwise,
    CounterClockwise,
}

/// Writes one Gerber file.
#[derive(Debug, Clone)]
pub struct GerberWriter {
    out: String,
    next_aperture: u32,
    current_aperture: Option<Aperture>,
    interpolation: Option<Interpolation>,
    position: Option<(i64, i64)>,
    dark: bool,
    /// Counts of D03 flashes and D01 draws written, for tests and statistics.
    pub flashes: usize,
    pub draws: usize,
}

impl GerberWriter {
    /// Starts a file: X2 header attributes (`.GenerationSoftware`, `.FileFunction`,
    /// `.FilePolarity`, §5.6), format, units, multi-quadrant mode and dark polarity.
    /// `file_function` is the comma-separated value, e.g. "Copper,L1,Top".
    pub fn new(software: &str, file_function: &str, file_polarity: &str) -> GerberWriter {
        let mut w = GerberWriter {
            out: String::with_capacity(4096),
            next_aperture: 10,
            current_aperture: None,
            interpolation: None,
            position: None,
            dark: true,
            flashes: 0,
            draws: 0,
        };
        let _ = writeln!(w.out, "%TF.GenerationSoftware,{software}*%");
        let _ = writeln!(w.out, "%TF.FileFunction,{file_function}*%");
        let _ = writeln!(w.out, "%TF.FilePolarity,{file_polarity}*%");
        w.out.push_str("%FSLAX46Y46*%\n%MOMM*%\n%LPD*%\nG75*\n");
        w
    }

    /// A `G04` comment. `*` and `%` are not allowed in comments and are replaced.
    pub fn comment(&mut self, text: &str) {
        let clean: String = text
            .chars()
            .map(|c| if c == '*' || c == '%' { '_' } else { c })
            .collect();
        let _ = writeln!(self.out, "G04 {clean}*");
    }

    /// A file attribute `%TF.<name>,<values>*%`.
    pub fn file_attribute(&mut self, name: &str, values: &[&str]) {
        let _ = writeln!(self.out, "%TF.{name},{}*%", values.join(","));
    }

    /// Sets the `.AperFunction` attribute for the apertures defined next (§5.6.10).
    pub fn aperture_function(&mut self, value: &str) {
        let _ = writeln!(self.out, "%TA.AperFunction,{value}*%");
    }

    /// Clears the aperture attributes (`%TD*%`).
    pub fn clear_aperture_attributes(&mut self) {
        self.out.push_str("%TD*%\n");
    }

    /// Defines an aperture macro: `%AM<name>*` then one primitive per entry (without `*`).
    pub fn aperture_macro(&mut self, name: &str, primitives: &[&str]) {
        let _ = writeln!(self.out, "%AM{name}*");
        for p in primitives {
            let _ = writeln!(self.out, "{p}*");
        }
        self.out.push_str("%\n");
    }

    fn define(&mut self, template: &str, params: &[f64]) -> Aperture {
        let d = Aperture(self.next_aperture);
        self.next_aperture += 1;
        let params: Vec<String> = params.iter().map(|&p| num(p)).collect();
        let _ = write!(self.out, "%ADD{}{}", d.0, template);
        if !params.is_empty() {
            let _ = write!(self.out, ",{}", params.join("X"));
        }
        self.out.push_str("*%\n");
        d
    }

    /// Standard circle aperture `C` (§4.4.2).
    pub fn circle(&mut self, diameter: f64) -> Aperture {
        self.define("C", &[diameter])
    }

    /// Standard rectangle aperture `R` (§4.4.3).
    pub fn rect(&mut self, width: f64, height: f64) -> Aperture {
        self.define("R", &[width, height])
    }

    /// Standard obround aperture `O` (§4.4.4).
    pub fn obround(&mut self, width: f64, height: f64) -> Aperture {
        self.define("O", &[width, height])
    }

    /// Standard regular polygon aperture `P` (§4.4.5): outer diameter, vertices, rotation.
    pub fn polygon(&mut self, diameter: f64, vertices: u32, rotation_deg: f64) -> Aperture {
        self.define("P", &[diameter, vertices as f64, rotation_deg])
    }

    /// An aperture from a macro defined with [`GerberWriter::aperture_macro`].
    pub fn macro_aperture(&mut self, name: &str, params: &[f64]) -> Aperture {
        self.define(name, params)
    }

    pub fn select(&mut self, a: Aperture) {
        if self.current_aperture != Some(a) {
            let _ = writeln!(self.out, "D{}*", a.0);
            self.current_aperture = Some(a);
        }
    }

    /// Dark polarity (`%LPD*%`, §4.9.2).
    pub fn dark(&mut self) {
        if !self.dark {
            self.out.push_str("%LPD*%\n");
            self.dark = true;
        }
    }

    /// Clear polarity (`%LPC*%`, §4.9.2).
    pub fn clear(&mut self) {
        if self.dark {
            self.out.push_str("%LPC*%\n");
            self.dark = false;
        }
    }

    fn set_interpolation(&mut self, i: Interpolation) {
        if self.interpolation != Some(i) {
            self.out.push_str(match i {
                Interpolation::Linear => "G01*\n",
                Interpolation::Clockwise => "G02*\n",
                Interpolation::CounterClockwise => "G03*\n",
            });
            self.interpolation = Some(i);
        }
    }

    fn xy(&mut self, p: Point) {
        let (x, y) = (coord(p.x), coord(p.y));
        let _ = write!(self.out, "X{x}Y{y}");
        self.position = Some((x, y));
    }

    /// Moves without drawing (`D02`).
    pub fn move_to(&mut self, p: Point) {
        if self.position == Some((coord(p.x), coord(p.y))) {
            return;
        }
        self.xy(p);
        self.out.push_str("D02*\n");
    }

    /// Draws a straight line from the current point (`G01` … `D01`).
    pub fn line_to(&mut self, p: Point) {
        self.set_interpolation(Interpolation::Linear);
        self.xy(p);
        self.out.push_str("D01*\n");
        self.draws += 1;
    }

    /// Draws a circular arc from the current point about `center` (`G02`/`G03`, I/J are the
    /// offsets of the centre from the start point, §4.7.2).
    pub fn arc_to(&mut self, p: Point, center: Point, turn: Turn) {
        let (sx, sy) = self.position.unwrap_or((0, 0));
        self.set_interpolation(match turn {
            Turn::Clockwise => Interpolation::Clockwise,
            Turn::CounterClockwise => Interpolation::CounterClockwise,
        });
        let (i, j) = (coord(center.x) - sx, coord(center.y) - sy);
        self.xy(p);
        let _ = writeln!(self.out, "I{i}J{j}D01*");
        self.draws += 1;
    }

    /// Flashes the current aperture at `p` (`D03`).
    pub fn flash(&mut self, p: Point) {
        self.xy(p);
        self.out.push_str("D03*\n");
        self.flashes += 1;
    }

    /// Draws a polyline with the current aperture.
    pub fn polyline(&mut self, points: &[Point]) {
        if let Some((&first, rest)) = points.split_first() {
            self.move_to(first);
            for &p in rest {
                self.line_to(p);
            }
        }
    }

    /// Starts a region (`G36`, §4.10); draw its contour with `move_to`/`line_to`/`arc_to`.
    pub fn begin_region(&mut self) {
        self.out.push_str("G36*\n");
        // Always start the contour with an explicit D02, even at the current point.
        self.position = None;
    }

    /// Ends a region (`G37`).
    pub fn end_region(&mut self) {
        self.out.push_str("G37*\n");
    }

    /// Ends the file (`M02`, §4.13) and returns its text.
    pub fn finish(mut self) -> String {
        self.out.push_str("M02*\n");
        self.out
    }
}

/// Writes one Excellon drill file in millimetres with decimal coordinates (common practice
/// of current writers; IPC-NC-349 header `M48` … `%`, `METRIC`, tools `T<n>C<diameter>`,
/// `G85` slots, `M30` end).
#[derive(Debug, Clone)]
pub struct DrillWriter {
    header: String,
    body: String,
    current_tool: Option<u32>,
    pub holes: usize,
    pub slots: usize,
}

impl DrillWriter {
    /// Starts the header with comment lines (each written as `; …`).
    pub fn new(comments: &[&str]) -> DrillWriter {
        let mut header = String::from("M48\n");
        for c in comments {
            let _ = writeln!(header, "; {c}");
        }
        header.push_str("METRIC,TZ\n");
        DrillWriter {
            header,
            body: String::new(),
            current_tool: None,
            holes: 0,
            slots: 0,
        }
    }

    /// Declares tool `number` with `diameter` mm; `comment` (if any) precedes it as `; …`.
    pub fn tool(&mut self, number: u32, diameter: f64, comment: Option<&str>) {
        if let Some(c) = comment {
            let _ = writeln!(self.header, "; {c}");
        }
        let _ = writeln!(self.header, "T{number}C{}", fixed3(diameter));
    }

    fn select(&mut self, tool: u32) {
        if self.current_tool != Some(tool) {
            let _ = writeln!(self.body, "T{tool}");
            self.current_tool = Some(tool);
        }
    }

    pub fn hole(&mut self, tool: u32, at: Point) {
        self.select(tool);
        let _ = writeln!(self.body, "X{}Y{}", fixed3(at.x), fixed3(at.y));
        self.holes += 1;
    }

    /// A straight slot from `from` to `to` (`G85`).
    pub fn slot(&mut self, tool: u32, from: Point, to: Point) {
        self.select(tool);
        let _ = writeln!(
            self.body,
            "X{}Y{}G85X{}Y{}",
            fixed3(from.x),
            fixed3(from.y),
            fixed3(to.x),
            fixed3(to.y)
        );
        self.slots += 1;
    }

    pub fn finish(self) -> String {
        format!("{}%\nG90\nG05\n{}M30\n", self.header, self.body)
    }
}

/// Millimetres with exactly three decimals (1 µm), as drill programs are commonly written.
fn fixed3(v: f64) -> String {
    let s = format!("{:.3}", v);
    if s == "-0.000" {
        "0.000".to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_short_and_exact() {
        assert_eq!(num(0.25), "0.25");
        assert_eq!(num(1.0), "1");
        assert_eq!(num(-0.0), "0");
        assert_eq!(coord(12.3456789), 12_345_679);
        assert_eq!(coord(-0.0000004), 0);
        assert_eq!(fixed3(-0.0001), "0.000");
    }

    #[test]
    fn arcs_write_center_offsets_from_the_start() {
        let mut w = GerberWriter::new("t", "Other,x", "Positive");
        let d = w.circle(0.2);
        w.select(d);
        w.move_to(Point::new(1.0, 0.0));
        w.arc_to(
            Point::new(0.0, 1.0),
            Point::new(0.0, 0.0),
            Turn::CounterClockwise,
        );
        let text = w.finish();
        // Gerber spec 2024.05 §4.7.2: I/J are the centre minus the start point.
        assert!(text.contains("G03*\nX0Y1000000I-1000000J0D01*\n"), "{text}");
    }
}
