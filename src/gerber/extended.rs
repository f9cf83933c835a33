//! Extended commands (the blocks between `%`), except `%AM`, whose blocks the parser collects
//! for the macro module.
//!
//! The small parameter grammars (decimals, `X`-separated lists, `A…B…` pairs) are nom
//! parsers; each command turns a failed parse into one error sentence naming the command
//! and the position of the block.

use super::command::{AttributeKind, AxisFormat, CommandKind, FormatSpec, ZeroOmission};
use super::lexer::Block;
use super::parser::attribute_kind;
use super::Units;
use crate::diag::{InputError, Pos, Warning};
use crate::image::Polarity;
use nom::branch::alt;
use nom::character::complete::{char, digit1, one_of};
use nom::combinator::{all_consuming, map_res, opt, recognize};
use nom::multi::separated_list1;
use nom::sequence::{pair, preceded};
use nom::{IResult, Parser as _};

/// A Gerber decimal: optional sign, digits with an optional point, or a point and digits
/// (spec §3.6.2 allows `.024` style numbers; no exponent).
pub fn decimal(input: &str) -> IResult<&str, f64> {
    map_res(
        recognize((
            opt(one_of("+-")),
            alt((
                recognize(pair(digit1, opt(pair(char('.'), opt(digit1))))),
                recognize(pair(char('.'), digit1)),
            )),
        )),
        str::parse::<f64>,
    )
    .parse(input)
}

/// Parses all of `s` as one decimal.
pub fn whole_decimal(s: &str) -> Option<f64> {
    all_consuming(decimal).parse(s.trim()).ok().map(|(_, v)| v)
}

/// `X`-separated decimals, as in aperture parameters `0.5X0.25`.
pub fn decimal_list(s: &str) -> Option<Vec<f64>> {
    all_consuming(separated_list1(
        one_of("Xx"),
        preceded(opt(char(' ')), decimal),
    ))
    .parse(s.trim())
    .ok()
    .map(|(_, v)| v)
}

/// `A<decimal>B<decimal>` with either part optional (MI, SF, OF).
fn a_b(s: &str) -> Option<(Option<f64>, Option<f64>)> {
    all_consuming((
        opt(preceded(one_of("Aa"), decimal)),
        opt(preceded(one_of("Bb"), decimal)),
    ))
    .parse(s.trim())
    .ok()
    .map(|(_, v)| v)
}

/// Parses one extended command block (not `%AM`).
pub fn parse<'a>(
    block: &Block<'a>,
    file: &str,
    warnings: &mut Vec<Warning>,
) -> Result<CommandKind<'a>, InputError> {
    let text: &str = &block.text;
    let err = |msg: String| InputError::new(file, block.pos, msg);
    let code = text
        .get(..2)
        .map(|c| c.to_ascii_uppercase())
        .unwrap_or_default();
    // Parameters borrow from the input when the block was not rewritten (CR/LF inside it).
    let rest: &'a str = match &block.text {
        std::borrow::Cow::Borrowed(t) => t.get(2..).unwrap_or(""),
        std::borrow::Cow::Owned(_) => "",
    };
    let rest_owned = text.get(2..).unwrap_or("");
    let params = rest_owned.trim();
    match code.as_str() {
        "FS" => format_spec(params, block.pos, file, warnings).map(CommandKind::Format),
        "MO" => match params.to_ascii_uppercase().as_str() {
            "MM" => Ok(CommandKind::Mode(Units::Millimetres)),
            "IN" => Ok(CommandKind::Mode(Units::Inches)),
            _ => Err(err(format!("%MO must be MM or IN, not '{params}'"))),
        },
        "AD" => aperture_define(rest, params, block.pos, file),
        "LP" => match params.to_ascii_uppercase().as_str() {
            "D" => Ok(CommandKind::LoadPolarity(Polarity::Dark)),
            "C" => Ok(CommandKind::LoadPolarity(Polarity::Clear)),
            _ => Err(err(format!(
                "%LP must be D (dark) or C (clear), not '{params}'"
            ))),
        },
        "LM" => match params.to_ascii_uppercase().as_str() {
            "N" => Ok(CommandKind::LoadMirroring { x: false, y: false }),
            "X" => Ok(CommandKind::LoadMirroring { x: true, y: false }),
            "Y" => Ok(CommandKind::LoadMirroring { x: false, y: true }),
            "XY" => Ok(CommandKind::LoadMirroring { x: true, y: true }),
            _ => Err(err(format!("%LM must be N, X, Y or XY, not '{params}'"))),
        },
        "LR" => whole_decimal(params)
            .map(CommandKind::LoadRotation)
            .ok_or_else(|| err(format!("%LR needs a rotation in degrees, not '{params}'"))),
        "LS" => match whole_decimal(params) {
            Some(s) if s > 0.0 => Ok(CommandKind::LoadScaling(s)),
            _ => Err(err(format!(
                "%LS needs a positive scale factor, not '{params}'"
            ))),
        },
        "SR" => step_repeat(params).ok_or_else(|| {
            err(format!(
                "%SR must be like SRX3Y2I5.0J4.0 (counts X, Y and distances I, J), not '{params}'"
            ))
        }),
        "AB" => {
            if params.is_empty() {
                return Ok(CommandKind::BlockClose);
            }
            // `%ABD10*%`; some writers leave out the D, whose intent is still clear.
            let digits = params.strip_prefix(['D', 'd']);
            if digits.is_none() {
                warnings.push(Warning::new(
                    file,
                    Some(block.pos),
                    format!("%AB{params}: the aperture number needs a D (ABD{params}); read as D{params}"),
                ));
            }
            match digits.unwrap_or(params).parse::<u32>() {
                Ok(code) if code >= 10 => Ok(CommandKind::BlockOpen(code)),
                _ => Err(err(format!(
                    "%AB must name an aperture number D10 or higher, not '{params}'"
                ))),
            }
        }
        "TF" | "TA" | "TO" | "TD" => {
            let body: &'a str = match &block.text {
                std::borrow::Cow::Borrowed(t) => t,
                std::borrow::Cow::Owned(_) => "",
            };
            Ok(attribute(body, block.pos, file, warnings)
                .unwrap_or(CommandKind::IgnoredExtended("T")))
        }
        "IP" => match params.to_ascii_uppercase().as_str() {
            "POS" => Ok(CommandKind::ImagePolarity { negative: false }),
            "NEG" => Ok(CommandKind::ImagePolarity { negative: true }),
            _ => Err(err(format!("%IP must be POS or NEG, not '{params}'"))),
        },
        "IN" => Ok(CommandKind::ImageName(rest.trim())),
        "LN" => Ok(CommandKind::LayerName(rest.trim())),
        "MI" => match a_b(params) {
            Some((a, b))
                if [a, b]
                    .iter()
                    .all(|v| matches!(v, None | Some(0.0) | Some(1.0))) =>
            {
                Ok(CommandKind::MirrorImage {
                    a: a == Some(1.0),
                    b: b == Some(1.0),
                })
            }
            _ => Err(err(format!(
                "%MI must be like MIA0B1 (0 or 1 per axis), not '{params}'"
            ))),
        },
        "SF" => match a_b(params) {
            Some((a, b)) if a.unwrap_or(1.0) > 0.0 && b.unwrap_or(1.0) > 0.0 => {
                Ok(CommandKind::ScaleFactor {
                    a: a.unwrap_or(1.0),
                    b: b.unwrap_or(1.0),
                })
            }
            _ => Err(err(format!(
                "%SF must be like SFA1.0B1.0 (positive factors), not '{params}'"
            ))),
        },
        "OF" => match a_b(params) {
            Some((a, b)) => Ok(CommandKind::Offset {
                a: a.unwrap_or(0.0),
                b: b.unwrap_or(0.0),
            }),
            None => Err(err(format!("%OF must be like OFA0B0, not '{params}'"))),
        },
        "IR" => match params.parse::<u32>() {
            Ok(d @ (0 | 90 | 180 | 270)) => Ok(CommandKind::ImageRotation(d)),
            _ => Err(err(format!(
                "%IR must be 0, 90, 180 or 270, not '{params}'"
            ))),
        },
        "AS" => match params.to_ascii_uppercase().as_str() {
            "AXBY" => Ok(CommandKind::AxisSelect { swapped: false }),
            "AYBX" => Ok(CommandKind::AxisSelect { swapped: true }),
            _ => Err(err(format!("%AS must be AXBY or AYBX, not '{params}'"))),
        },
        _ => {
            let shown: String = text.chars().take(20).collect();
            warnings.push(Warning::new(
                file,
                Some(block.pos),
                format!("unknown extended command '%{shown}…' ignored"),
            ));
            Ok(CommandKind::IgnoredExtended(match &block.text {
                std::borrow::Cow::Borrowed(t) => t,
                std::borrow::Cow::Owned(_) => "",
            }))
        }
    }
}

/// `%FS[L|T][A|I]X<i><d>Y<i><d>` with leniency for a missing L/T letter and for the
/// obsolete `N`, `G`, `D`, `M` digit counts of RS-274-D era writers.
fn format_spec(
    params: &str,
    pos: Pos,
    file: &str,
    warnings: &mut Vec<Warning>,
) -> Result<FormatSpec, InputError> {
    let err = || {
        InputError::new(
            file,
            pos,
            format!("%FS must be like FSLAX26Y26 (zero omission L, notation A, X and Y digit counts), not 'FS{params}'"),
        )
    };
    let b = params.as_bytes();
    let mut zero = None;
    let mut incremental = None;
    let mut x = None;
    let mut y = None;
    let mut k = 0;
    let axis = |k: usize| -> Option<AxisFormat> {
        let i = *b.get(k + 1)?;
        let d = *b.get(k + 2)?;
        if !(i.is_ascii_digit() && d.is_ascii_digit()) {
            return None;
        }
        Some(AxisFormat {
            integer: i - b'0',
            decimal: d - b'0',
        })
    };
    while k < b.len() {
        match b[k].to_ascii_uppercase() {
            b'L' if zero.is_none() => zero = Some(ZeroOmission::Leading),
            b'T' if zero.is_none() => zero = Some(ZeroOmission::Trailing),
            b'D' if zero.is_none() && incremental.is_none() => {} // "no omission": same as L
            b'A' if incremental.is_none() => incremental = Some(false),
            b'I' if incremental.is_none() => incremental = Some(true),
            b'X' => {
                x = Some(axis(k).ok_or_else(err)?);
                k += 2;
            }
            b'Y' => {
                y = Some(axis(k).ok_or_else(err)?);
                k += 2;
            }
            b'N' | b'G' | b'D' | b'M' if k + 1 < b.len() && b[k + 1].is_ascii_digit() => k += 1,
            b' ' => {}
            _ => return Err(err()),
        }
        k += 1;
    }
    let (Some(x), Some(y)) = (x, y) else {
        return Err(err());
    };
    if zero.is_none() && !params.to_ascii_uppercase().starts_with('D') {
        warnings.push(Warning::new(
            file,
            Some(pos),
            "%FS has no zero omission letter (L or T); assuming leading zeros are omitted (spec §4.2.2: L is the only allowed value)",
        ));
    }
    if incremental.is_none() {
        warnings.push(Warning::new(
            file,
            Some(pos),
            "%FS has no notation letter (A or I); assuming absolute coordinates",
        ));
    }
    Ok(FormatSpec {
        zero_omission: zero,
        incremental: incremental.unwrap_or(false),
        x,
        y,
    })
}

/// `%ADD<code><template>[,<p>X<p>…]`.
fn aperture_define<'a>(
    rest: &'a str,
    params: &str,
    pos: Pos,
    file: &str,
) -> Result<CommandKind<'a>, InputError> {
    let err = |msg: String| InputError::new(file, pos, msg);
    let body = rest.trim();
    let Some(after_d) = body.strip_prefix(['D', 'd']) else {
        return Err(err(format!(
            "%AD must start with a D code, like ADD10C,0.5 — not 'AD{params}'"
        )));
    };
    let digits_end = after_d
        .find(|c: char| !c.is_ascii_digit())
        .unwrap_or(after_d.len());
    let code: u32 = after_d[..digits_end].parse().map_err(|_| {
        err(format!(
            "%AD needs an aperture number after D, in 'AD{params}'"
        ))
    })?;
    if code < 10 {
        return Err(err(format!(
            "aperture numbers start at D10 (D00–D09 are reserved); 'D{code}' cannot be defined"
        )));
    }
    let def = &after_d[digits_end..];
    let (template, numbers) = match def.find(',') {
        Some(c) => (def[..c].trim(), Some(&def[c + 1..])),
        None => (def.trim(), None),
    };
    if template.is_empty() {
        return Err(err(format!(
            "%AD D{code} has no aperture template (C, R, O, P or a macro name)"
        )));
    }
    let params = match numbers {
        None => Vec::new(),
        Some(n) if n.trim().is_empty() => Vec::new(),
        Some(n) => decimal_list(n).ok_or_else(|| {
            err(format!(
                "the parameters of aperture D{code} must be decimals separated by X, not '{n}'"
            ))
        })?,
    };
    Ok(CommandKind::ApertureDefine {
        code,
        template,
        params,
    })
}

/// `SR` alone closes; `SRX<n>Y<n>I<d>J<d>` opens (missing parts default to 1, 1, 0, 0).
fn step_repeat<'a>(params: &str) -> Option<CommandKind<'a>> {
    if params.is_empty() {
        return Some(CommandKind::StepRepeatClose);
    }
    let count = |s| map_res(digit1, str::parse::<u32>).parse(s);
    let (_, (nx, ny, dx, dy)) = all_consuming((
        opt(preceded(one_of("Xx"), count)),
        opt(preceded(one_of("Yy"), count)),
        opt(preceded(one_of("Ii"), decimal)),
        opt(preceded(one_of("Jj"), decimal)),
    ))
    .parse(params)
    .ok()?;
    Some(CommandKind::StepRepeatOpen {
        nx: nx.unwrap_or(1),
        ny: ny.unwrap_or(1),
        dx: dx.unwrap_or(0.0),
        dy: dy.unwrap_or(0.0),
    })
}

/// `TF.Name,v1,v2` (the `T` and kind letter included) → an attribute command. `None` when
/// it is not an attribute after all (then the caller keeps it as a comment).
pub fn attribute<'a>(
    text: &'a str,
    pos: Pos,
    file: &str,
    warnings: &mut Vec<Warning>,
) -> Option<CommandKind<'a>> {
    let b = text.as_bytes();
    if b.len() < 3 || !b[0].eq_ignore_ascii_case(&b'T') {
        return None;
    }
    let kind = attribute_kind(b[1])?;
    let body = text[2..].trim();
    let mut parts = body.split(',');
    let name = parts.next().unwrap_or("").trim();
    if name.is_empty() && kind != AttributeKind::Delete {
        warnings.push(Warning::new(
            file,
            Some(pos),
            "attribute without a name ignored",
        ));
        return None;
    }
    Some(CommandKind::Attribute {
        kind,
        name,
        values: parts.collect(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::borrow::Cow;

    fn ext(text: &str) -> Result<CommandKind<'_>, InputError> {
        let b = Block {
            text: Cow::Borrowed(text),
            pos: Pos::new(1, 2),
            extended: true,
            first_in_group: true,
        };
        let mut w = Vec::new();
        parse(&b, "t.gbr", &mut w)
    }

    #[test]
    fn decimals_like_the_spec_writes_them() {
        // Spec 2024.05 §3.6.2: decimals may omit the integer part (".024").
        assert_eq!(whole_decimal(".024"), Some(0.024));
        assert_eq!(whole_decimal("+1."), Some(1.0));
        assert_eq!(whole_decimal("-2.5"), Some(-2.5));
        assert_eq!(whole_decimal("1e5"), None);
        assert_eq!(whole_decimal("nan"), None);
        assert_eq!(decimal_list("0.5X.25"), Some(vec![0.5, 0.25]));
        assert_eq!(decimal_list("0.5X"), None);
    }

    #[test]
    fn format_statements() {
        let CommandKind::Format(f) = ext("FSLAX26Y36").unwrap() else {
            panic!()
        };
        assert_eq!(f.zero_omission, Some(ZeroOmission::Leading));
        assert_eq!(
            (f.x.integer, f.x.decimal, f.y.integer, f.y.decimal),
            (2, 6, 3, 6)
        );
        let CommandKind::Format(f) = ext("FSAX35Y35").unwrap() else {
            panic!()
        };
        assert_eq!(f.zero_omission, None);
        let CommandKind::Format(f) = ext("FSTIX24Y24").unwrap() else {
            panic!()
        };
        assert_eq!(
            (f.zero_omission, f.incremental),
            (Some(ZeroOmission::Trailing), true)
        );
        assert!(ext("FSLAX2Y24").is_err());
    }

    #[test]
    fn aperture_definitions() {
        assert_eq!(
            ext("ADD12C,.024").unwrap(),
            CommandKind::ApertureDefine {
                code: 12,
                template: "C",
                params: vec![0.024]
            }
        );
        assert_eq!(
            ext("ADD11FreePoly0,90.000000").unwrap(),
            CommandKind::ApertureDefine {
                code: 11,
                template: "FreePoly0",
                params: vec![90.0]
            }
        );
        assert_eq!(
            ext("ADD20OC8").unwrap(),
            CommandKind::ApertureDefine {
                code: 20,
                template: "OC8",
                params: vec![]
            }
        );
        assert!(ext("ADD05C,1").unwrap_err().message.contains("D10"));
        assert!(ext("ADD10C,1X").is_err());
    }

    #[test]
    fn step_repeat_and_blocks() {
        assert_eq!(
            ext("SRX3Y2I5.0J4").unwrap(),
            CommandKind::StepRepeatOpen {
                nx: 3,
                ny: 2,
                dx: 5.0,
                dy: 4.0
            }
        );
        assert_eq!(ext("SR").unwrap(), CommandKind::StepRepeatClose);
        assert_eq!(ext("ABD12").unwrap(), CommandKind::BlockOpen(12));
        assert_eq!(ext("AB").unwrap(), CommandKind::BlockClose);
    }

    #[test]
    fn deprecated_image_commands() {
        assert_eq!(
            ext("MIA0B1").unwrap(),
            CommandKind::MirrorImage { a: false, b: true }
        );
        assert_eq!(
            ext("SFA1.0B1.0").unwrap(),
            CommandKind::ScaleFactor { a: 1.0, b: 1.0 }
        );
        assert_eq!(
            ext("OFA0.00000B0.00000").unwrap(),
            CommandKind::Offset { a: 0.0, b: 0.0 }
        );
        assert_eq!(ext("IR90").unwrap(), CommandKind::ImageRotation(90));
        assert_eq!(
            ext("ASAYBX").unwrap(),
            CommandKind::AxisSelect { swapped: true }
        );
        assert_eq!(
            ext("IPNEG").unwrap(),
            CommandKind::ImagePolarity { negative: true }
        );
        assert_eq!(
            ext("LN bottom copper ").unwrap(),
            CommandKind::LayerName("bottom copper")
        );
    }
}
