//! Paper sizes: the ISO 216 A and B series, the common US sizes and custom sizes.
//!
//! A size is written and read as one short string (`"A4"`, `"Letter"`, `"300x450mm"`,
//! `"8.5x11in"`), which is also how it appears in TOML profiles.

use std::fmt;
use std::str::FromStr;

/// Millimetres per inch, exact by definition (international inch, 1959).
pub const MM_PER_INCH: f64 = 25.4;

/// PDF points per inch: the default user space unit is 1/72 in (ISO 32000-1 §8.3.2.1).
pub const POINTS_PER_INCH: f64 = 72.0;

/// The largest side a custom sheet may have. Roll plotters reach a few metres; anything
/// beyond 10 m is a typing mistake (a missing decimal point), not paper.
pub const MAX_SHEET_SIDE_MM: f64 = 10_000.0;

/// Converts millimetres to PDF points (1/72 in, ISO 32000-1 §8.3.2.1).
pub fn mm_to_pt(mm: f64) -> f64 {
    mm / MM_PER_INCH * POINTS_PER_INCH
}

/// A sheet of paper or film, as the printer is fed it.
///
/// # Guarantees
/// - `width_mm` and `height_mm` are finite, positive and at most [`MAX_SHEET_SIDE_MM`].
/// - `name.parse::<SheetSize>()` gives back the same size (names round-trip).
/// - Named sizes are stored in portrait (width ≤ height); custom sizes keep the order the
///   user wrote. Either way the layout's orientation setting decides which way up it is used.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(try_from = "String", into = "String")]
pub struct SheetSize {
    /// Canonical name: `A4`, `B5`, `Letter`, `Legal`, `Tabloid`, or a custom `300x450mm` /
    /// `8.5x11in`.
    pub name: String,
    pub width_mm: f64,
    pub height_mm: f64,
}

/// Why a sheet size could not be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct SheetSizeError(pub String);

/// ISO 216 starting sizes: A0 is 841 × 1189 mm (area 1 m²), B0 is 1000 × 1414 mm.
const ISO_216_A0: (u32, u32) = (841, 1189);
const ISO_216_B0: (u32, u32) = (1000, 1414);

/// Size number `n` of an ISO 216 series starting at `zero`, in whole millimetres, portrait.
///
/// ISO 216: each next size halves the longer side of the previous one, rounded down to the
/// millimetre; the shorter side of size n becomes the longer side of size n + 1.
pub fn iso_216(zero: (u32, u32), n: u32) -> (u32, u32) {
    let (mut short, mut long) = zero;
    for _ in 0..n {
        let half = long / 2; // integer division rounds down, as ISO 216 does
        long = short;
        short = half;
    }
    (short, long)
}

/// US sizes in inches, portrait (ANSI/ASME Y14.1: Letter = size A, Tabloid = size B).
const US_SIZES: &[(&str, &[&str], f64, f64)] = &[
    (
        "Letter",
        &["letter", "us-letter", "usletter", "ansi-a"],
        8.5,
        11.0,
    ),
    ("Legal", &["legal", "us-legal", "uslegal"], 8.5, 14.0),
    ("Tabloid", &["tabloid", "ansi-b"], 11.0, 17.0),
];

impl SheetSize {
    /// ISO 216 A series, `n` from 0 to 10.
    pub fn iso_a(n: u32) -> Option<SheetSize> {
        (n <= 10).then(|| {
            let (w, h) = iso_216(ISO_216_A0, n);
            SheetSize::named(format!("A{n}"), w as f64, h as f64)
        })
    }

    /// ISO 216 B series, `n` from 0 to 10.
    pub fn iso_b(n: u32) -> Option<SheetSize> {
        (n <= 10).then(|| {
            let (w, h) = iso_216(ISO_216_B0, n);
            SheetSize::named(format!("B{n}"), w as f64, h as f64)
        })
    }

    /// ISO A4, 210 × 297 mm: the default sheet.
    pub fn a4() -> SheetSize {
        SheetSize::named("A4".into(), 210.0, 297.0)
    }

    /// US Letter, 8.5 × 11 in = 215.9 × 279.4 mm.
    pub fn letter() -> SheetSize {
        SheetSize::named("Letter".into(), 8.5 * MM_PER_INCH, 11.0 * MM_PER_INCH)
    }

    fn named(name: String, width_mm: f64, height_mm: f64) -> SheetSize {
        SheetSize {
            name,
            width_mm,
            height_mm,
        }
    }

    /// Width in PDF points (1/72 in, ISO 32000-1 §8.3.2.1).
    pub fn width_pt(&self) -> f64 {
        mm_to_pt(self.width_mm)
    }

    /// Height in PDF points (1/72 in, ISO 32000-1 §8.3.2.1).
    pub fn height_pt(&self) -> f64 {
        mm_to_pt(self.height_mm)
    }

    /// The shorter and the longer side, in mm.
    pub fn short_long_mm(&self) -> (f64, f64) {
        (
            self.width_mm.min(self.height_mm),
            self.width_mm.max(self.height_mm),
        )
    }

    /// The names this program accepts, for help texts and error messages.
    pub fn known_names() -> String {
        "A0–A10, B0–B10, Letter (us-letter), Legal (us-legal), Tabloid, or WIDTHxHEIGHT with mm \
         or in, e.g. 300x450mm or 8.5x11in"
            .to_string()
    }
}

impl Default for SheetSize {
    fn default() -> Self {
        SheetSize::a4()
    }
}

impl fmt::Display for SheetSize {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.name)
    }
}

impl FromStr for SheetSize {
    type Err = SheetSizeError;

    /// Reads a size name case-insensitively, ignoring surrounding blanks.
    fn from_str(text: &str) -> Result<SheetSize, SheetSizeError> {
        let key = text.trim().to_ascii_lowercase();
        if key.is_empty() {
            return Err(SheetSizeError(format!(
                "The sheet size is empty; use one of {}.",
                SheetSize::known_names()
            )));
        }
        if let Some(size) = parse_iso(&key) {
            return Ok(size);
        }
        for &(name, aliases, w_in, h_in) in US_SIZES {
            if aliases.contains(&key.as_str()) {
                return Ok(SheetSize::named(
                    name.into(),
                    w_in * MM_PER_INCH,
                    h_in * MM_PER_INCH,
                ));
            }
        }
        if key.contains('x') || key.contains('×') {
            return parse_custom(text.trim(), &key);
        }
        Err(SheetSizeError(format!(
            "\"{}\" is not a sheet size umbra knows; use one of {}.",
            text.trim(),
            SheetSize::known_names()
        )))
    }
}

impl TryFrom<String> for SheetSize {
    type Error = SheetSizeError;
    fn try_from(text: String) -> Result<SheetSize, SheetSizeError> {
        text.parse()
    }
}

impl From<SheetSize> for String {
    fn from(size: SheetSize) -> String {
        size.name
    }
}

/// `a4`, `b5`: the ISO 216 series letter and a size number 0–10.
fn parse_iso(key: &str) -> Option<SheetSize> {
    let (series, number) = key.split_at_checked(1)?;
    if number.is_empty() || number.len() > 2 || !number.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let n: u32 = number.parse().ok()?;
    match series {
        "a" => SheetSize::iso_a(n),
        "b" => SheetSize::iso_b(n),
        _ => None,
    }
}

/// `300x450mm`, `8.5 x 11 in`: width, `x`, height and a unit. The unit is required: a bare
/// `8.5x11` could be either unit, and guessing wrong would print the film at the wrong size.
fn parse_custom(original: &str, key: &str) -> Result<SheetSize, SheetSizeError> {
    let (numbers, unit_mm, unit) = if let Some(rest) = key.strip_suffix("mm") {
        (rest, 1.0, "mm")
    } else if let Some(rest) = key.strip_suffix("in") {
        (rest, MM_PER_INCH, "in")
    } else {
        return Err(SheetSizeError(format!(
            "The custom sheet size \"{original}\" has no unit; write it as WIDTHxHEIGHT followed \
             by mm or in, e.g. 300x450mm or 8.5x11in."
        )));
    };
    let numbers = numbers.replace('×', "x");
    let parts: Vec<&str> = numbers.split('x').map(str::trim).collect();
    let [w_text, h_text] = parts[..] else {
        return Err(SheetSizeError(format!(
            "The custom sheet size \"{original}\" should be two numbers joined by x, e.g. \
             300x450mm."
        )));
    };
    let side = |t: &str| -> Result<f64, SheetSizeError> {
        let value: f64 = t.parse().map_err(|_| {
            SheetSizeError(format!(
                "\"{t}\" in the sheet size \"{original}\" is not a number."
            ))
        })?;
        let mm = value * unit_mm;
        if !mm.is_finite() || mm <= 0.0 {
            return Err(SheetSizeError(format!(
                "The sheet size \"{original}\" has a side of {t} {unit}; sides must be greater \
                 than zero."
            )));
        }
        if mm > MAX_SHEET_SIDE_MM {
            return Err(SheetSizeError(format!(
                "The sheet size \"{original}\" has a side of {t} {unit}, longer than the \
                 {MAX_SHEET_SIDE_MM} mm umbra accepts; is a decimal point missing?"
            )));
        }
        Ok(value)
    };
    let (w, h) = (side(w_text)?, side(h_text)?);
    // The canonical name writes each number in its shortest exact form, so it parses back to
    // the same size.
    Ok(SheetSize::named(
        format!("{w}x{h}{unit}"),
        w * unit_mm,
        h * unit_mm,
    ))
}
