//! What EDA programs say in `;` comments that matters for reading the file.
//!
//! Comments carry no commands in Excellon, but several writers put facts there that the
//! commands leave out:
//! - X2-style attributes, `; #@! TF.FileFunction,Plated,1,2,PTH` and
//!   `; #@! TA.AperFunction,Plated,PTH,ComponentDrill` before a tool (attribute names as in
//!   the Gerber Layer Format Specification 2024.05, §5.6.3 and §5.6.10).
//! - `;TYPE=PLATED` / `;TYPE=NON_PLATED`: the plating of the tools defined after it.
//! - `;FILE_FORMAT=4:4`: integer and decimal digits of the coordinates.
//! - `;FORMAT={3:3/ absolute / metric / suppress trailing zeros}`: digits, units and zeros
//!   (`decimal` means every coordinate has a decimal point).
//! - `;T01 Holesize 1. = 13.0 Tolerance = … PLATED MILS Quantity = 102`: per-tool plating
//!   after the tool table.
//! - `; THROUGH (PLATED) HOLES START AT T100`: tool number ranges by plating.

use super::format::{FormatHint, Units, Zeros};

/// One fact read from a comment.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum CommentFact {
    /// File-level plating: Some(true) plated, Some(false) non-plated, None mixed.
    FilePlating(Option<bool>),
    /// Plating of the next tool defined (an aperture attribute).
    NextToolPlating(bool),
    /// Plating of every tool defined from here on.
    PlatingFromHere(bool),
    /// Format facts.
    Format(FormatHint),
    /// Plating of one tool by number (stated after the table).
    ToolPlating(u32, bool),
    /// Tools numbered from `first` up (until the next such range) have this plating.
    PlatingRange { first: u32, plated: bool },
    /// An attribute deletion (`TD`): forget pending aperture attributes.
    DeleteAttributes,
}

fn plating_word(w: &str) -> Option<bool> {
    match w.trim().to_ascii_uppercase().as_str() {
        "PLATED" | "PTH" => Some(true),
        "NONPLATED" | "NON_PLATED" | "NON-PLATED" | "NPTH" => Some(false),
        _ => None,
    }
}

/// Reads `text` (after the `;`) and returns the fact it states, if any.
pub(crate) fn read_comment(text: &str) -> Option<CommentFact> {
    let t = text.trim();
    if let Some(attr) = t.strip_prefix("#@!") {
        return attribute(attr.trim());
    }
    let upper = t.to_ascii_uppercase();
    if let Some(v) = upper.strip_prefix("TYPE=") {
        return plating_word(v).map(CommentFact::PlatingFromHere);
    }
    if let Some(v) = upper.strip_prefix("FILE_FORMAT=") {
        let (i, d) = v.trim().split_once(':')?;
        return Some(CommentFact::Format(FormatHint {
            integer_digits: i.trim().parse().ok(),
            decimal_digits: d.trim().parse().ok(),
            ..FormatHint::default()
        }));
    }
    if let Some(v) = upper.strip_prefix("FORMAT=") {
        return format_braces(v.trim()).map(CommentFact::Format);
    }
    if upper.contains("HOLESIZE") {
        return hole_size_line(&upper);
    }
    if let Some(at) = upper.find("HOLES START AT T") {
        let first: u32 = upper[at + 16..]
            .trim()
            .split(|c: char| !c.is_ascii_digit())
            .next()?
            .parse()
            .ok()?;
        let plated = !(upper.contains("NON-PLATED")
            || upper.contains("NON PLATED")
            || upper.contains("NON_PLATED"));
        return Some(CommentFact::PlatingRange { first, plated });
    }
    None
}

/// `TF.FileFunction,…`, `TA.AperFunction,…`, `TD`.
fn attribute(attr: &str) -> Option<CommentFact> {
    let mut fields = attr.split(',');
    let name = fields.next()?.trim();
    match name {
        "TF.FileFunction" => {
            let kind = fields.next()?.trim();
            match kind {
                "Plated" => Some(CommentFact::FilePlating(Some(true))),
                "NonPlated" => Some(CommentFact::FilePlating(Some(false))),
                "MixedPlating" => Some(CommentFact::FilePlating(None)),
                _ => None,
            }
        }
        "TA.AperFunction" => match fields.next()?.trim() {
            "Plated" => Some(CommentFact::NextToolPlating(true)),
            "NonPlated" => Some(CommentFact::NextToolPlating(false)),
            _ => None,
        },
        n if n == "TD" || n.starts_with("TD.") => Some(CommentFact::DeleteAttributes),
        _ => None,
    }
}

/// `{3:3/ absolute / metric / suppress trailing zeros}` or `{-:-/ absolute / inch / decimal}`.
fn format_braces(v: &str) -> Option<FormatHint> {
    let inner = v.strip_prefix('{')?.split('}').next()?;
    let mut parts = inner.split('/');
    let digits = parts.next()?.trim();
    let mut hint = FormatHint::default();
    if let Some((i, d)) = digits.split_once(':') {
        hint.integer_digits = i.trim().parse().ok();
        hint.decimal_digits = d.trim().parse().ok();
    }
    for p in parts {
        match p.trim() {
            "INCH" => hint.units = Some(Units::Inches),
            "METRIC" => hint.units = Some(Units::Millimetres),
            // Trailing zeros suppressed → leading zeros kept (LZ), and the reverse.
            "SUPPRESS TRAILING ZEROS" => hint.zeros = Some(Zeros::LeadingKept),
            "SUPPRESS LEADING ZEROS" => hint.zeros = Some(Zeros::TrailingKept),
            // All digits written: reading from the left is exact.
            "KEEP ZEROS" => hint.zeros = Some(Zeros::LeadingKept),
            _ => {}
        }
    }
    Some(hint)
}

/// `T01 HOLESIZE 1. = 13.000000 TOLERANCE = +0.0/-0.0 PLATED MILS QUANTITY = 102`.
fn hole_size_line(upper: &str) -> Option<CommentFact> {
    let rest = upper.trim().strip_prefix('T')?;
    let number: u32 = rest
        .split(|c: char| !c.is_ascii_digit())
        .next()?
        .parse()
        .ok()?;
    let plated = upper.split_whitespace().find_map(plating_word)?;
    Some(CommentFact::ToolPlating(number, plated))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn recognised_comments() {
        assert_eq!(
            read_comment(" #@! TF.FileFunction,NonPlated,1,2,NPTH"),
            Some(CommentFact::FilePlating(Some(false)))
        );
        assert_eq!(
            read_comment(" #@! TA.AperFunction,Plated,PTH,ViaDrill"),
            Some(CommentFact::NextToolPlating(true))
        );
        assert_eq!(
            read_comment("TYPE=NON_PLATED"),
            Some(CommentFact::PlatingFromHere(false))
        );
        assert_eq!(
            read_comment("FILE_FORMAT=2:4"),
            Some(CommentFact::Format(FormatHint {
                integer_digits: Some(2),
                decimal_digits: Some(4),
                ..FormatHint::default()
            }))
        );
        let Some(CommentFact::Format(h)) =
            read_comment("FORMAT={3:3/ absolute / metric / suppress trailing zeros}")
        else {
            panic!()
        };
        assert_eq!(h.units, Some(Units::Millimetres));
        assert_eq!(h.zeros, Some(Zeros::LeadingKept));
        assert_eq!(
            read_comment("T12 Holesize 12. = 127.950000 Tolerance = +0.000000/-0.000000 NON_PLATED MILS Quantity = 14"),
            Some(CommentFact::ToolPlating(12, false))
        );
        assert_eq!(
            read_comment(" THROUGH (PLATED) HOLES START AT T100"),
            Some(CommentFact::PlatingRange {
                first: 100,
                plated: true
            })
        );
        assert_eq!(
            read_comment(" NON-PLATED HOLES START AT T1"),
            Some(CommentFact::PlatingRange {
                first: 1,
                plated: false
            })
        );
        assert_eq!(read_comment("Layer: Drill PTH"), None);
    }
}
