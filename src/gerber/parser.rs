//! Data blocks → [`Command`]s: function-code words (hand-written, allocation free, because
//! coordinate blocks are nearly all of a file) and the dispatch of extended commands (see
//! `extended.rs`).
//!
//! Lenient where real files disagree with the spec but the intent is clear (spec 2024.05
//! §8 lists the deprecated forms): lower-case letters, `D1`/`D2`/`D3`, `G1`…`G4`, `G54`/`G55`
//! prefixes, sequence numbers `N…`, several commands in one block (`G01X…Y…D01`,
//! `G54D10`), `+` signs and decimal points in coordinates.

use super::command::{
    AttributeKind, Command, CommandKind, Interpolation, Operation, QuadrantMode, RawNumber,
};
use super::extended;
use super::lexer::{Block, Lexer, Token};
use super::Units;
use crate::diag::{InputError, Pos, Warning};
use std::borrow::Cow;

/// An `%AM` group being collected: name, position, data blocks.
type PendingMacro<'a> = (&'a str, Pos, Vec<(Cow<'a, str>, Pos)>);

/// Reads commands and hands each to a sink as soon as it is parsed (no command list is
/// built, and a command is constructed where the sink receives it).
pub struct Parser<'a> {
    lexer: Lexer<'a>,
    file: &'a str,
    /// Warnings found while parsing, in file order.
    pub warnings: Vec<Warning>,
    macro_def: Option<PendingMacro<'a>>,
    /// Coordinates with a decimal point are reported once per file.
    decimal_point_warned: bool,
    /// The sink asked to stop (end of file reached).
    stopped: bool,
}

impl<'a> Parser<'a> {
    pub fn new(text: &'a str, file: &'a str) -> Parser<'a> {
        Parser {
            lexer: Lexer::new(text, file),
            file,
            warnings: Vec::new(),
            macro_def: None,
            decimal_point_warned: false,
            stopped: false,
        }
    }

    /// Parses the whole text, calling `sink` with each command in order. The sink returns
    /// `Ok(false)` to stop reading (after `M02`).
    pub fn run<F>(&mut self, mut sink: F) -> Result<(), InputError>
    where
        F: FnMut(Command<'a>) -> Result<bool, InputError>,
    {
        while !self.stopped {
            let Some(token) = self.lexer.next_token(&mut self.warnings)? else {
                break;
            };
            match token {
                Token::GroupEnd => {
                    if let Some((name, pos, blocks)) = self.macro_def.take() {
                        self.emit(&mut sink, pos, CommandKind::MacroDefine { name, blocks })?;
                    }
                }
                Token::Block(block) => {
                    if block.extended {
                        self.extended_block(block, &mut sink)?;
                    } else {
                        self.function_block(&block, &mut sink)?;
                    }
                }
            }
        }
        Ok(())
    }

    #[inline]
    fn emit<F>(&mut self, sink: &mut F, pos: Pos, kind: CommandKind<'a>) -> Result<(), InputError>
    where
        F: FnMut(Command<'a>) -> Result<bool, InputError>,
    {
        if !self.stopped && !sink(Command { pos, kind })? {
            self.stopped = true;
        }
        Ok(())
    }

    fn extended_block<F>(&mut self, block: Block<'a>, sink: &mut F) -> Result<(), InputError>
    where
        F: FnMut(Command<'a>) -> Result<bool, InputError>,
    {
        if let Some((_, _, blocks)) = &mut self.macro_def {
            blocks.push((block.text, block.pos));
            return Ok(());
        }
        if block.text.is_empty() {
            return Ok(()); // `%*%` or a stray `*`: nothing to do
        }
        let head = block.text.get(..2).unwrap_or("");
        if head.eq_ignore_ascii_case("AM") {
            // The macro name ends its block; the primitives follow as separate blocks.
            let name = match block.text {
                Cow::Borrowed(t) => t[2..].trim(),
                Cow::Owned(_) => {
                    return Err(InputError::new(
                        self.file,
                        block.pos,
                        "an aperture macro name must not be split over lines",
                    ))
                }
            };
            if name.is_empty() {
                return Err(InputError::new(
                    self.file,
                    block.pos,
                    "%AM needs a macro name",
                ));
            }
            self.macro_def = Some((name, block.pos, Vec::new()));
            return Ok(());
        }
        let kind = extended::parse(&block, self.file, &mut self.warnings)?;
        self.emit(sink, block.pos, kind)
    }

    fn function_block<F>(&mut self, block: &Block<'a>, sink: &mut F) -> Result<(), InputError>
    where
        F: FnMut(Command<'a>) -> Result<bool, InputError>,
    {
        let text: &str = &block.text;
        let b = text.as_bytes();
        let mut k = 0;
        let mut coords: [Option<RawNumber>; 4] = [None; 4];
        let mut coords_pos: Option<Pos> = None;
        while k < b.len() {
            let letter = b[k].to_ascii_uppercase();
            let word_pos = block.pos_at(k);
            match letter {
                b' ' | b'\t' => k += 1,
                b'X' | b'Y' | b'I' | b'J' => {
                    let (n, next) = self.coordinate(block, k + 1)?;
                    let slot = match letter {
                        b'X' => 0,
                        b'Y' => 1,
                        b'I' => 2,
                        _ => 3,
                    };
                    coords[slot] = Some(n);
                    coords_pos.get_or_insert(word_pos);
                    k = next;
                }
                b'D' => {
                    let (code, next) = self.code_number(block, k + 1, 'D')?;
                    k = next;
                    let op = match code {
                        1 => Operation::Interpolate,
                        2 => Operation::Move,
                        3 => Operation::Flash,
                        10.. => {
                            self.flush_coords(sink, &mut coords, &mut coords_pos, None)?;
                            self.emit(sink, word_pos, CommandKind::SelectAperture(code))?;
                            continue;
                        }
                        _ => {
                            return Err(InputError::new(
                                self.file,
                                word_pos,
                                format!(
                                    "D{code:02} is neither an operation (D01, D02, D03) nor an aperture number (D10 and up)"
                                ),
                            ))
                        }
                    };
                    let pos = coords_pos.unwrap_or(word_pos);
                    coords_pos = Some(pos);
                    self.flush_coords(sink, &mut coords, &mut coords_pos, Some(op))?;
                }
                b'G' => {
                    let (code, next) = self.code_number(block, k + 1, 'G')?;
                    k = next;
                    if code == 4 {
                        // Comments borrow from the input; one wrapped over lines (rare) is
                        // kept without its text.
                        let comment = match &block.text {
                            Cow::Borrowed(t) => t[k..].trim(),
                            Cow::Owned(_) => "",
                        };
                        return self.comment(sink, comment, word_pos);
                    }
                    let kind = match code {
                        1 => CommandKind::Interpolation(Interpolation::Linear),
                        2 => CommandKind::Interpolation(Interpolation::Clockwise),
                        3 => CommandKind::Interpolation(Interpolation::CounterClockwise),
                        36 => CommandKind::RegionStart,
                        37 => CommandKind::RegionEnd,
                        74 => CommandKind::Quadrant(QuadrantMode::Single),
                        75 => CommandKind::Quadrant(QuadrantMode::Multi),
                        70 => CommandKind::DeprecatedUnits(Units::Inches),
                        71 => CommandKind::DeprecatedUnits(Units::Millimetres),
                        90 => CommandKind::DeprecatedNotation { incremental: false },
                        91 => CommandKind::DeprecatedNotation { incremental: true },
                        // G54 (select aperture) and G55 (prepare flash) are deprecated
                        // prefixes with no effect of their own (spec §8.2).
                        54 | 55 => continue,
                        10..=12 => {
                            return Err(InputError::new(
                                self.file,
                                word_pos,
                                format!(
                                    "G{code} (scaled linear interpolation of old plotters) is not supported: it would change the drawn size"
                                ),
                            ))
                        }
                        _ => CommandKind::IgnoredGCode(code),
                    };
                    self.emit(sink, word_pos, kind)?;
                }
                b'M' => {
                    let (code, next) = self.code_number(block, k + 1, 'M')?;
                    k = next;
                    let kind = match code {
                        0 | 2 => CommandKind::EndOfFile,
                        1 => CommandKind::OptionalStop,
                        _ => {
                            return Err(InputError::new(
                                self.file,
                                word_pos,
                                format!(
                                    "M{code:02} is not a Gerber command (only M02 ends a file)"
                                ),
                            ))
                        }
                    };
                    self.flush_coords(sink, &mut coords, &mut coords_pos, None)?;
                    self.emit(sink, word_pos, kind)?;
                }
                b'N' => {
                    // Sequence numbers of old NC-style files: no meaning for the image.
                    let (_, next) = self.code_number(block, k + 1, 'N')?;
                    k = next;
                }
                _ => {
                    let c = text[k..].chars().next().unwrap_or('?');
                    return Err(InputError::new(
                        self.file,
                        word_pos,
                        format!("unexpected '{}' in a command; expected a code like G01, D10, X…, Y… or M02", c.escape_default()),
                    ));
                }
            }
        }
        self.flush_coords(sink, &mut coords, &mut coords_pos, None)
    }

    /// Emits pending coordinates as one operation (`op: None` when the block had no D01–D03).
    fn flush_coords<F>(
        &mut self,
        sink: &mut F,
        coords: &mut [Option<RawNumber>; 4],
        pos: &mut Option<Pos>,
        op: Option<Operation>,
    ) -> Result<(), InputError>
    where
        F: FnMut(Command<'a>) -> Result<bool, InputError>,
    {
        match pos.take() {
            Some(p) => {
                let [x, y, i, j] = std::mem::take(coords);
                self.emit(sink, p, CommandKind::Operation { x, y, i, j, op })
            }
            None => Ok(()),
        }
    }

    fn comment<F>(&mut self, sink: &mut F, text: &'a str, pos: Pos) -> Result<(), InputError>
    where
        F: FnMut(Command<'a>) -> Result<bool, InputError>,
    {
        // X2 attributes written as comments: `G04 #@! TF.FileFunction,Copper,L1,Top*`
        // (spec §5.1: "standard comments").
        if let Some(rest) = text.strip_prefix("#@!") {
            let rest = rest.trim_start();
            if let Some(kind) = extended::attribute(rest, pos, self.file, &mut self.warnings) {
                return self.emit(sink, pos, kind);
            }
        }
        self.emit(sink, pos, CommandKind::Comment(text))
    }

    /// An unsigned code number after G, D, M or N.
    fn code_number(
        &self,
        block: &Block,
        k: usize,
        letter: char,
    ) -> Result<(u32, usize), InputError> {
        let b = block.text.as_bytes();
        let mut end = k;
        let mut v: u32 = 0;
        while end < b.len() && b[end].is_ascii_digit() {
            v = v.saturating_mul(10).saturating_add((b[end] - b'0') as u32);
            end += 1;
        }
        if end == k {
            return Err(InputError::new(
                self.file,
                block.pos_at(k.saturating_sub(1)),
                format!("'{letter}' must be followed by a number"),
            ));
        }
        Ok((v, end))
    }

    /// A coordinate number after X, Y, I or J: optional sign, digits, optional decimal point.
    fn coordinate(&mut self, block: &Block, k: usize) -> Result<(RawNumber, usize), InputError> {
        let b = block.text.as_bytes();
        let mut end = k;
        let mut negative = false;
        if end < b.len() && (b[end] == b'+' || b[end] == b'-') {
            negative = b[end] == b'-';
            end += 1;
        }
        let digits_start = end;
        let mut value: i64 = 0;
        while end < b.len() && b[end].is_ascii_digit() {
            value = value.wrapping_mul(10).wrapping_add((b[end] - b'0') as i64);
            end += 1;
        }
        let count = end - digits_start;
        if end < b.len() && b[end] == b'.' {
            end += 1;
            while end < b.len() && b[end].is_ascii_digit() {
                end += 1;
            }
            let s = &block.text[k..end];
            let v: f64 = s.parse().map_err(|_| {
                InputError::new(self.file, block.pos_at(k), format!("'{s}' is not a number"))
            })?;
            if !self.decimal_point_warned {
                self.decimal_point_warned = true;
                self.warnings.push(Warning::new(
                    self.file,
                    Some(block.pos_at(k)),
                    "coordinates with a decimal point are not allowed by the Gerber spec (§4.2.2); read as a value in file units (not reported again)",
                ));
            }
            return Ok((RawNumber::Decimal(v), end));
        }
        if count == 0 {
            return Err(InputError::new(
                self.file,
                block.pos_at(k.saturating_sub(1)),
                format!(
                    "'{}' must be followed by a coordinate number",
                    b[k - 1].to_ascii_uppercase() as char
                ),
            ));
        }
        if count > 18 {
            return Err(InputError::new(
                self.file,
                block.pos_at(k),
                format!("a coordinate with {count} digits is too long (at most 18)"),
            ));
        }
        let value = if negative { -value } else { value };
        Ok((
            RawNumber::Digits {
                value,
                count: count as u8,
            },
            end,
        ))
    }
}

/// Whether an attribute command kind letter is known.
pub(super) fn attribute_kind(letter: u8) -> Option<AttributeKind> {
    match letter.to_ascii_uppercase() {
        b'F' => Some(AttributeKind::File),
        b'A' => Some(AttributeKind::Aperture),
        b'O' => Some(AttributeKind::Object),
        b'D' => Some(AttributeKind::Delete),
        _ => None,
    }
}

/// Parses the whole text into a list of commands (for tests and tools; the reader itself
/// streams).
pub fn parse_all<'a>(
    text: &'a str,
    file: &'a str,
    warnings: &mut Vec<Warning>,
) -> Result<Vec<Command<'a>>, InputError> {
    let mut p = Parser::new(text, file);
    let mut out = Vec::new();
    let result = p.run(|c| {
        out.push(c);
        Ok(true)
    });
    warnings.append(&mut p.warnings);
    result.map(|()| out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(text: &str) -> Vec<CommandKind<'_>> {
        let mut w = Vec::new();
        parse_all(text, "t.gbr", &mut w)
            .unwrap()
            .into_iter()
            .map(|c| c.kind)
            .collect()
    }

    fn digits(value: i64, count: u8) -> Option<RawNumber> {
        Some(RawNumber::Digits { value, count })
    }

    #[test]
    fn several_commands_in_one_block() {
        // Spec 2024.05 §8.2 (deprecated G54 prefix) and the `G01X..Y..D01` combined form.
        let k = kinds("G54D10*G01X100Y-200D01*");
        assert_eq!(k[0], CommandKind::SelectAperture(10));
        assert_eq!(k[1], CommandKind::Interpolation(Interpolation::Linear));
        assert_eq!(
            k[2],
            CommandKind::Operation {
                x: digits(100, 3),
                y: digits(-200, 3),
                i: None,
                j: None,
                op: Some(Operation::Interpolate)
            }
        );
        assert_eq!(k.len(), 3);
    }

    #[test]
    fn short_and_lower_case_codes_and_plus_signs() {
        let k = kinds("d1*x+05y7d2*G1*g3*");
        assert_eq!(
            k[0],
            CommandKind::Operation {
                x: None,
                y: None,
                i: None,
                j: None,
                op: Some(Operation::Interpolate)
            }
        );
        assert_eq!(
            k[1],
            CommandKind::Operation {
                x: digits(5, 2),
                y: digits(7, 1),
                i: None,
                j: None,
                op: Some(Operation::Move)
            }
        );
        assert_eq!(k[2], CommandKind::Interpolation(Interpolation::Linear));
        assert_eq!(
            k[3],
            CommandKind::Interpolation(Interpolation::CounterClockwise)
        );
    }

    #[test]
    fn coordinates_without_operation_are_kept_as_modal() {
        let k = kinds("X10Y20*");
        assert!(matches!(k[0], CommandKind::Operation { op: None, .. }));
    }

    #[test]
    fn x2_comment_becomes_an_attribute() {
        let k = kinds("G04 #@! TF.FileFunction,Copper,L1,Top*G04 plain words*");
        assert_eq!(
            k[0],
            CommandKind::Attribute {
                kind: AttributeKind::File,
                name: ".FileFunction",
                values: vec!["Copper", "L1", "Top"]
            }
        );
        assert_eq!(k[1], CommandKind::Comment("plain words"));
    }

    #[test]
    fn macro_blocks_are_collected_with_positions() {
        let mut w = Vec::new();
        let cmds = parse_all(
            "%AMBOX*\n21,1,$1,$2,0,0,0*\n1,0,0.1,\n0,0*%",
            "t.gbr",
            &mut w,
        )
        .unwrap();
        let CommandKind::MacroDefine { name, blocks } = &cmds[0].kind else {
            panic!("{cmds:?}")
        };
        assert_eq!(*name, "BOX");
        assert_eq!(
            blocks[0],
            (Cow::Borrowed("21,1,$1,$2,0,0,0"), Pos::new(2, 1))
        );
        assert_eq!(blocks[1].0, "1,0,0.1,0,0");
        assert_eq!(blocks[1].1, Pos::new(3, 1));
    }

    #[test]
    fn errors_name_line_and_column() {
        let mut w = Vec::new();
        let e = parse_all("D10*\nX1Y2D01*\nX1Q2D01*", "t.gbr", &mut w).unwrap_err();
        assert_eq!(e.pos, Pos::new(3, 3));
        assert!(
            e.to_string().starts_with("t.gbr:3:3: unexpected 'Q'"),
            "{e}"
        );
        let e = parse_all("D07*", "t.gbr", &mut w).unwrap_err();
        assert!(e.message.contains("D07"), "{e}");
        let e = parse_all("XY1D01*", "t.gbr", &mut w).unwrap_err();
        assert_eq!(e.pos, Pos::new(1, 1));
    }
}
