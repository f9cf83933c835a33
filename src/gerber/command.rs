//! The Gerber commands the parser produces, each with its source position.
//!
//! # Why our own command type
//! `gerber_types::Command` is a good vocabulary for *writing* Gerber (we use it in tests as an
//! independent writer), but it does not fit as parse output:
//! - it carries no source positions, and every error and warning we report must name the
//!   line and column;
//! - it cannot express what real files contain and the 2024.05 specification deprecates or
//!   never had: coordinate data without an operation code, `G54`/`G55` prefixes, `G70`/`G71`,
//!   `%LN`, a `%FS` without the `L`/`T` letter, coordinates with a decimal point, obsolete
//!   extended commands we only warn about;
//! - its coordinates are already scaled numbers, while the meaning of a Gerber coordinate
//!   (leading or trailing zero omission) is only known once `%FS` has been read, which may come
//!   after the apertures are defined.
//!
//! So the parser keeps coordinates as raw digit strings ([`RawNumber`]) and the interpreter
//! decodes them with the format in force. Commands borrow their text from the input, so
//! parsing allocates nothing per coordinate.

use crate::diag::Pos;
use crate::image::Polarity;
use std::borrow::Cow;

/// A coordinate number as written, before the `%FS` format gives it a meaning.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RawNumber {
    /// An integer digit string (the normal form): its value with sign and how many digits
    /// were written (needed for trailing-zero omission).
    Digits { value: i64, count: u8 },
    /// A number with an explicit decimal point (not allowed by the spec, but some programs
    /// write it); the value is in file units.
    Decimal(f64),
}

/// D01, D02, D03 (spec 2024.05 §4.7–§4.8).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Operation {
    /// D01: draw (or add a contour segment in region mode).
    Interpolate,
    /// D02: move.
    Move,
    /// D03: flash.
    Flash,
}

/// G01/G02/G03.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Interpolation {
    Linear,
    Clockwise,
    CounterClockwise,
}

/// G74/G75.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum QuadrantMode {
    Single,
    Multi,
}

/// The zero omission letter of `%FS`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ZeroOmission {
    Leading,
    Trailing,
}

/// Digits before and after the implied decimal point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct AxisFormat {
    pub integer: u8,
    pub decimal: u8,
}

/// `%FS` (spec §4.2.2).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FormatSpec {
    /// `None` when the file omitted the L/T letter.
    pub zero_omission: Option<ZeroOmission>,
    pub incremental: bool,
    pub x: AxisFormat,
    pub y: AxisFormat,
}

/// Which attribute command (spec §5).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AttributeKind {
    File,
    Aperture,
    Object,
    Delete,
}

/// The units of `%MO` or the deprecated `G70`/`G71`.
pub use super::Units;

/// One command, where it stands in the file.
#[derive(Debug, Clone, PartialEq)]
pub struct Command<'a> {
    pub pos: Pos,
    pub kind: CommandKind<'a>,
}

/// What a command says.
#[derive(Debug, Clone, PartialEq)]
pub enum CommandKind<'a> {
    // ---- function codes (spec §4.1, §4.7, §4.10, §8) ----
    /// Coordinate data with D01/D02/D03, or without an operation code (`op: None`, the
    /// deprecated modal form).
    Operation {
        x: Option<RawNumber>,
        y: Option<RawNumber>,
        i: Option<RawNumber>,
        j: Option<RawNumber>,
        op: Option<Operation>,
    },
    /// Dnn with nn >= 10.
    SelectAperture(u32),
    Interpolation(Interpolation),
    Quadrant(QuadrantMode),
    /// G36.
    RegionStart,
    /// G37.
    RegionEnd,
    /// G04 text (without the code).
    Comment(&'a str),
    /// G70/G71 (deprecated units).
    DeprecatedUnits(Units),
    /// G90 (false) / G91 (true), deprecated notation.
    DeprecatedNotation {
        incremental: bool,
    },
    /// M02, or the deprecated M00.
    EndOfFile,
    /// M01 (deprecated optional stop; no effect).
    OptionalStop,
    /// A G code this reader ignores with a warning (G54, G55 are handled silently).
    IgnoredGCode(u32),

    // ---- extended commands (spec §4.2–§4.6, §4.9–§4.11, §5, §8) ----
    Format(FormatSpec),
    Mode(Units),
    /// `%ADD<code><template>,<params>*%`.
    ApertureDefine {
        code: u32,
        template: &'a str,
        params: Vec<f64>,
    },
    /// `%AM<name>*<block>*...%`: the blocks after the name, CR/LF removed, each with the
    /// position of its first character.
    MacroDefine {
        name: &'a str,
        blocks: Vec<(Cow<'a, str>, Pos)>,
    },
    LoadPolarity(Polarity),
    LoadMirroring {
        x: bool,
        y: bool,
    },
    LoadRotation(f64),
    LoadScaling(f64),
    StepRepeatOpen {
        nx: u32,
        ny: u32,
        dx: f64,
        dy: f64,
    },
    StepRepeatClose,
    BlockOpen(u32),
    BlockClose,
    /// TF/TA/TO/TD (also from `G04 #@!` comments): name (with its leading dot) and the
    /// comma-separated values as written.
    Attribute {
        kind: AttributeKind,
        name: &'a str,
        values: Vec<&'a str>,
    },
    /// `%IPPOS*%` / `%IPNEG*%` (deprecated).
    ImagePolarity {
        negative: bool,
    },
    /// `%IN` (deprecated).
    ImageName(&'a str),
    /// `%LN` (deprecated).
    LayerName(&'a str),
    /// `%MI` (deprecated): mirror A (x) and/or B (y).
    MirrorImage {
        a: bool,
        b: bool,
    },
    /// `%SF` (deprecated).
    ScaleFactor {
        a: f64,
        b: f64,
    },
    /// `%OF` (deprecated), in file units.
    Offset {
        a: f64,
        b: f64,
    },
    /// `%IR` (deprecated), degrees counter-clockwise (0, 90, 180, 270).
    ImageRotation(u32),
    /// `%AS` (deprecated): `swapped` for AYBX.
    AxisSelect {
        swapped: bool,
    },
    /// An extended command this reader ignores with a warning.
    IgnoredExtended(&'a str),
}
