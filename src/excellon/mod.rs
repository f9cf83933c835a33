//! Excellon (IPC-NC-349) drill and route reader.
//!
//! [`read`] turns the text of a drill file into a [`DrillFile`]: tools with diameters in
//! millimetres, holes and milled paths (G85 slots and routed G00/M15/G01/G02/G03/M16
//! paths, arcs flattened to chords within 1 µm) in board coordinates (mm, y up). What the
//! reader supports, what it infers and how it treats each writer's quirks is documented
//! in `docs/excellon-support.md`.
//!
//! # Guarantees
//! - Never panics and always terminates; work is bounded by the input length and by
//!   `Limits::max_objects` (holes plus path points) and `Limits::max_step_repeat` (one `R`
//!   repeat count).
//! - Every `Hole::tool` and `Slot::tool` is a valid index into `DrillFile::tools`.
//! - Every `Slot::path` has at least two points; coordinates and diameters are finite.
//! - Errors name file, line and column; a guess that could move or add a hole is an error,
//!   a harmless oddity is a warning in `DrillFile::warnings`.

use crate::diag::{InputError, Warning};
use crate::image::Point;
use crate::limits::Limits;

mod comments;
mod detect;
mod format;
mod lex;
mod motion;
mod program;
mod route;

pub use detect::looks_like_drill;
pub use format::{CoordinateFormat, FormatHint, Units, Zeros};

/// One drill tool.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Tool {
    /// The tool number as written (T01 → 1).
    pub number: u32,
    pub diameter_mm: f64,
    /// Plated (true), non-plated (false) or not stated.
    pub plated: Option<bool>,
}

/// A drilled hole.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Hole {
    /// Index into `DrillFile::tools`.
    pub tool: usize,
    pub at: Point,
}

/// A milled path of one tool: a G85 slot or a routed path (G00 … M15 … M16/M17).
/// Arcs of routed paths are flattened to chords within 1 µm.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Slot {
    pub tool: usize,
    pub path: Vec<Point>,
}

/// A drill file read into millimetres and board coordinates.
#[derive(Debug, Clone, Default)]
pub struct DrillFile {
    /// Tools in the order the file defines them (a tool defined twice with different
    /// sizes appears twice; holes refer to the definition in force when drilled).
    pub tools: Vec<Tool>,
    pub holes: Vec<Hole>,
    pub slots: Vec<Slot>,
    /// Whether the file (its header comments or attributes) says plated (`Some(true)`),
    /// non-plated (`Some(false)`); `None` when it says both (mixed) or nothing.
    pub plated: Option<bool>,
    /// The file's units were inches (all output is in mm regardless).
    pub inches: bool,
    /// The file's units, when known.
    pub units: Option<Units>,
    /// How coordinates without a decimal point were read; `None` when the file had none.
    pub format: Option<CoordinateFormat>,
    pub warnings: Vec<Warning>,
}

/// Reads Excellon text. `file` names the file in messages.
pub fn read(text: &str, file: &str, limits: &Limits) -> Result<DrillFile, InputError> {
    program::Reader::new(text, file, limits, FormatHint::default()).run()
}

/// Reads Excellon text whose number format is (partly) stated elsewhere, such as in the
/// CAM program's parameter file next to it (see [`FormatHint::from_info_file`]). What the
/// drill file itself states wins; the hint fills what it leaves open, before any guess.
pub fn read_with_format_hint(
    text: &str,
    file: &str,
    limits: &Limits,
    hint: &FormatHint,
) -> Result<DrillFile, InputError> {
    program::Reader::new(text, file, limits, *hint).run()
}

impl FormatHint {
    /// Reads the drill format from a CAM info file written beside a drill file, if it
    /// states one. Two kinds are known:
    /// - NC parameter files (`nc_param.txt`): `INTEGER-PLACES 3`, `DECIMAL-PLACES 5`,
    ///   `OUTPUT-UNITS ENGLISH|METRIC`, `SUPPRESS-LEAD-ZEROES YES|NO`,
    ///   `SUPPRESS-TRAIL-ZEROES YES|NO`;
    /// - drill station info files (`.dri`): `coordinate format 2.4 inch`.
    ///
    /// Returns `None` when the text states none of these.
    pub fn from_info_file(text: &str) -> Option<FormatHint> {
        let mut h = FormatHint::default();
        let (mut lead, mut trail) = (None, None);
        for line in text.lines() {
            let mut parts = line.split_whitespace();
            let key = parts.next().unwrap_or("").to_ascii_uppercase();
            let value = parts.next().unwrap_or("").to_ascii_uppercase();
            match key.as_str() {
                "INTEGER-PLACES" => h.integer_digits = value.parse().ok(),
                "DECIMAL-PLACES" => h.decimal_digits = value.parse().ok(),
                "OUTPUT-UNITS" => {
                    h.units = match value.as_str() {
                        "ENGLISH" | "INCH" | "INCHES" => Some(Units::Inches),
                        "METRIC" | "MM" | "MILLIMETERS" => Some(Units::Millimetres),
                        _ => h.units,
                    }
                }
                "SUPPRESS-LEAD-ZEROES" => lead = Some(value == "YES"),
                "SUPPRESS-TRAIL-ZEROES" => trail = Some(value == "YES"),
                _ => {}
            }
            let lower = line.to_ascii_lowercase();
            if let Some(at) = lower.find("coordinate format") {
                let rest = lower[at + 17..].trim();
                let mut it = rest.split_whitespace();
                if let Some((i, d)) = it.next().and_then(|f| f.split_once('.')) {
                    h.integer_digits = i.parse().ok();
                    h.decimal_digits = d.parse().ok();
                }
                match it.next() {
                    Some(u) if u.starts_with("inch") => h.units = Some(Units::Inches),
                    Some(u) if u.starts_with("mm") || u.starts_with("metric") => {
                        h.units = Some(Units::Millimetres)
                    }
                    _ => {}
                }
            }
        }
        h.zeros = match (lead, trail) {
            (Some(true), _) => Some(Zeros::TrailingKept),
            (_, Some(true)) => Some(Zeros::LeadingKept),
            // Neither suppressed: every digit is written, so reading from the left is exact.
            (Some(false), Some(false)) => Some(Zeros::LeadingKept),
            _ => None,
        };
        (!h.is_empty()).then_some(h)
    }
}
