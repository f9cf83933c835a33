//! Units and the number format of coordinates written without a decimal point.
//!
//! Excellon (IPC-NC-349 / the Excellon format description, from memory) writes coordinates
//! either with a decimal point (`X1.25`, read as written) or as bare digits whose decimal
//! point is implied by the *format* (integer and decimal digit counts, e.g. 2.4) and by
//! which zeros the writer kept:
//!
//! - `LZ` — leading zeros are kept, trailing zeros may be dropped: the digits are aligned
//!   from the left, the first `integer_digits` of them are the whole part. With 2.4,
//!   `X0302` = 03.02 = 3.02.
//! - `TZ` — trailing zeros are kept, leading zeros may be dropped: the digits are aligned
//!   from the right, the last `decimal_digits` of them are the fraction. With 2.4,
//!   `X0302` = 0.0302.
//!
//! Note that these keywords name the zeros that are *kept* — the opposite of Gerber's
//! `%FSL…` (which names the zeros *omitted*).

use super::lex::NumText;

/// Units of a drill file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Units {
    Millimetres,
    Inches,
}

impl Units {
    /// Millimetres per unit; 1 in = 25.4 mm exactly (international inch, 1959).
    pub fn mm_per_unit(self) -> f64 {
        match self {
            Units::Millimetres => 1.0,
            Units::Inches => 25.4,
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            Units::Millimetres => "METRIC (mm)",
            Units::Inches => "INCH",
        }
    }
}

/// Which zeros the writer kept in coordinates without a decimal point.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Zeros {
    /// `LZ`: leading zeros kept, trailing zeros may be omitted; digits align from the left.
    LeadingKept,
    /// `TZ`: trailing zeros kept, leading zeros may be omitted; digits align from the right.
    TrailingKept,
}

/// How coordinates without a decimal point were read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct CoordinateFormat {
    pub zeros: Zeros,
    pub integer_digits: u8,
    pub decimal_digits: u8,
}

impl CoordinateFormat {
    /// The value of `num` in file units. Numbers with a decimal point are read as written,
    /// whatever the format says (the decimal point overrides zero suppression).
    pub(crate) fn value(&self, num: &NumText) -> f64 {
        if num.fraction.is_some() {
            return num.decimal_value();
        }
        let digits = num.digits();
        let n = digits.len() as i32;
        // At most 30 digits (the lexer's cap), so the parse into f64 cannot fail; it may
        // round beyond 15 significant digits, far below a nanometre for any real number.
        let as_integer: f64 = digits.parse().unwrap_or(0.0);
        let exponent = match self.zeros {
            // Left-aligned: the first `integer_digits` digits are the whole part.
            Zeros::LeadingKept => n - self.integer_digits as i32,
            // Right-aligned: the last `decimal_digits` digits are the fraction.
            Zeros::TrailingKept => self.decimal_digits as i32,
        };
        let v = as_integer / 10f64.powi(exponent);
        if num.negative {
            -v
        } else {
            v
        }
    }

    pub fn describe(&self) -> String {
        format!(
            "{}.{} with {}",
            self.integer_digits,
            self.decimal_digits,
            match self.zeros {
                Zeros::LeadingKept => "leading zeros kept (LZ)",
                Zeros::TrailingKept => "trailing zeros kept (TZ)",
            }
        )
    }
}

/// What some source (an explicit command, a comment, an info file) says about the format.
/// Every field is optional; sources are layered, the most authoritative first.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct FormatHint {
    pub units: Option<Units>,
    pub zeros: Option<Zeros>,
    pub integer_digits: Option<u8>,
    pub decimal_digits: Option<u8>,
}

impl FormatHint {
    /// Fills what `self` leaves open from `other`.
    pub fn or(self, other: FormatHint) -> FormatHint {
        FormatHint {
            units: self.units.or(other.units),
            zeros: self.zeros.or(other.zeros),
            integer_digits: self.integer_digits.or(other.integer_digits),
            decimal_digits: self.decimal_digits.or(other.decimal_digits),
        }
    }

    pub fn is_empty(&self) -> bool {
        *self == FormatHint::default()
    }
}

/// Digit statistics of all coordinates without a decimal point, used to infer a format the
/// file does not state.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub(crate) struct DigitStats {
    pub count: usize,
    pub min_len: usize,
    pub max_len: usize,
    /// Some number of two or more digits starts with 0 (so leading zeros are written).
    pub leading_zero: bool,
    /// Some number of two or more digits ends with 0 (so trailing zeros are written).
    pub trailing_zero: bool,
}

impl DigitStats {
    pub fn add(&mut self, num: &NumText) {
        if num.fraction.is_some() {
            return;
        }
        let d = num.digits();
        if self.count == 0 {
            self.min_len = d.len();
            self.max_len = d.len();
        } else {
            self.min_len = self.min_len.min(d.len());
            self.max_len = self.max_len.max(d.len());
        }
        self.count += 1;
        if d.len() >= 2 {
            self.leading_zero |= d.starts_with('0');
            self.trailing_zero |= d.ends_with('0');
        }
    }

    /// Every number has the same digit count and zeros show at the front: the writer pads
    /// to a fixed width, so no zeros are suppressed at all.
    pub fn fixed_width(&self) -> Option<usize> {
        (self.count > 0 && self.min_len == self.max_len && self.leading_zero)
            .then_some(self.max_len)
    }
}

/// Resolves the coordinate format from what was stated (`stated`, layered already) and, for
/// what is missing, from the digits themselves. Returns the format and, when anything was
/// inferred, a sentence saying what and why (for a warning).
///
/// Defaults when nothing is stated (from memory / common practice of EDA writers):
/// inch 2.4, metric 3.3; leading zeros suppressed (TZ) unless the numbers show leading
/// zeros without trailing ones. Fixed-width numbers (every number the same length, leading
/// zeros written) read the same under LZ and TZ; their integer digits default to 2 for
/// inch up to 6 digits (2.4) and 3 beyond (Allegro's 3.5), and to 3 for metric.
pub(crate) fn resolve(
    units: Units,
    stated: &FormatHint,
    stats: &DigitStats,
) -> (CoordinateFormat, Option<String>) {
    let mut guessed: Vec<&str> = Vec::new();
    let fixed = stats.fixed_width();
    let zeros = match stated.zeros {
        Some(z) => z,
        None => {
            if fixed.is_some() || (stats.leading_zero && !stats.trailing_zero) {
                guessed.push("zeros: leading zeros are written, so digits align from the left");
                Zeros::LeadingKept
            } else if stats.trailing_zero && !stats.leading_zero {
                guessed.push("zeros: trailing zeros are written, so digits align from the right");
                Zeros::TrailingKept
            } else {
                guessed.push("zeros: leading zeros taken as suppressed (TZ), the usual default");
                Zeros::TrailingKept
            }
        }
    };
    let int = match (stated.integer_digits, stated.decimal_digits, fixed) {
        (Some(i), _, _) => i,
        (None, Some(d), Some(n)) => (n as u8).saturating_sub(d),
        (None, _, Some(n)) if units == Units::Inches && n > 6 => 3,
        (None, _, _) if units == Units::Inches => 2,
        (None, _, _) => 3,
    };
    let dec = match (stated.decimal_digits, fixed) {
        (Some(d), _) => d,
        (None, Some(n)) => (n as u8).saturating_sub(int),
        (None, None) if units == Units::Inches => 4,
        (None, None) => 3,
    };
    // Only one count matters for each zero mode; say so when that one was not stated.
    match zeros {
        Zeros::LeadingKept if stated.integer_digits.is_none() => guessed.push("integer digits"),
        Zeros::TrailingKept if stated.decimal_digits.is_none() => guessed.push("decimal digits"),
        _ => {}
    }
    let format = CoordinateFormat {
        zeros,
        integer_digits: int,
        decimal_digits: dec,
    };
    let note = (!guessed.is_empty()).then(|| {
        format!(
            "the file does not fully state its number format; coordinates without a decimal point are read as {} {} (inferred: {})",
            units.name(),
            format.describe(),
            guessed.join("; ")
        )
    });
    (format, note)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn num(s: &str) -> NumText<'_> {
        let (negative, rest) = match s.strip_prefix('-') {
            Some(r) => (true, r),
            None => (false, s),
        };
        match rest.split_once('.') {
            Some((w, f)) => NumText {
                negative,
                whole: w,
                fraction: Some(f),
            },
            None => NumText {
                negative,
                whole: rest,
                fraction: None,
            },
        }
    }

    #[test]
    fn lz_and_tz_alignment() {
        // Excellon format description (from memory): LZ aligns digits from the left,
        // TZ from the right. 2.4: LZ "0302" = 03.02 = 3.02; TZ "0302" = 0.0302.
        let lz = CoordinateFormat {
            zeros: Zeros::LeadingKept,
            integer_digits: 2,
            decimal_digits: 4,
        };
        let tz = CoordinateFormat {
            zeros: Zeros::TrailingKept,
            ..lz
        };
        assert!((lz.value(&num("0302")) - 3.02).abs() < 1e-12);
        assert!((tz.value(&num("0302")) - 0.0302).abs() < 1e-12);
        // LZ "028" = 02.8; a decimal point overrides both: "-1.5" = -1.5.
        assert!((lz.value(&num("028")) - 2.8).abs() < 1e-12);
        assert_eq!(tz.value(&num("-1.5")), -1.5);
        assert_eq!(lz.value(&num("-0302")), -3.02);
    }

    #[test]
    fn fixed_width_inch_eight_digits_is_three_five() {
        let mut st = DigitStats::default();
        for s in ["00119000", "00058000", "00294000"] {
            st.add(&num(s));
        }
        let hint = FormatHint::default();
        let (f, note) = resolve(Units::Inches, &hint, &st);
        assert_eq!((f.integer_digits, f.decimal_digits), (3, 5));
        assert!(note.is_some());
        // "00119000" with 3.5 = 001.19000 = 1.19 in.
        assert!((f.value(&num("00119000")) - 1.19).abs() < 1e-12);
    }

    #[test]
    fn suppressed_leading_zeros_default_to_tz() {
        let mut st = DigitStats::default();
        for s in ["4219", "22355", "8553"] {
            st.add(&num(s));
        }
        let (f, _) = resolve(Units::Inches, &FormatHint::default(), &st);
        assert_eq!(f.zeros, Zeros::TrailingKept);
        assert_eq!(f.decimal_digits, 4);
        // TZ 2.4: "22355" = 2.2355 in.
        assert!((f.value(&num("22355")) - 2.2355).abs() < 1e-12);
    }
}
