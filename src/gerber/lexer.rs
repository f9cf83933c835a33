//! Splits Gerber text into data blocks.
//!
//! A Gerber file is a stream of data blocks, each ended by `*`; extended commands are one or
//! more data blocks enclosed in `%` (spec 2024.05 §3.3–§3.5). Line separators (CR, LF) carry no
//! meaning and may appear between blocks; we also remove them inside a block, because some
//! writers wrap long macro primitives over several lines. Spaces are kept inside a block
//! (comments and names may contain them).
//!
//! The lexer visits every byte once and tracks line and column as it goes, so positions cost
//! nothing extra and a file on one enormous line stays linear. A bare CR counts as a line
//! break, like a CRLF pair, so positions match what an editor shows for mixed line endings.

use crate::diag::{InputError, Pos, Warning};
use std::borrow::Cow;

/// One data block, or the end of a `%…%` group.
#[derive(Debug, Clone, PartialEq)]
pub enum Token<'a> {
    Block(Block<'a>),
    /// The `%` that closes an extended command group.
    GroupEnd,
}

/// A data block without its `*`, trimmed of surrounding white space, CR/LF removed.
#[derive(Debug, Clone, PartialEq)]
pub struct Block<'a> {
    pub text: Cow<'a, str>,
    /// Position of the block's first character.
    pub pos: Pos,
    /// Inside `%…%`.
    pub extended: bool,
    /// The first block after the opening `%` (it names the extended command).
    pub first_in_group: bool,
}

impl Block<'_> {
    /// The position of byte `offset` in the block text. Exact when the block is on one line
    /// and ASCII up to `offset` (always true for coordinate data); otherwise it points into
    /// the block's first line, which is close enough to find the problem.
    pub fn pos_at(&self, offset: usize) -> Pos {
        Pos::new(self.pos.line, self.pos.column + offset as u32)
    }
}

/// Byte classes the block scanner stops at.
const fn special_table() -> [bool; 256] {
    let mut t = [false; 256];
    t[b'*' as usize] = true;
    t[b'%' as usize] = true;
    t[b'\n' as usize] = true;
    t[b'\r' as usize] = true;
    let mut b = 0x80;
    while b < 0xC0 {
        t[b] = true; // UTF-8 continuation bytes: columns count characters, not bytes
        b += 1;
    }
    t
}
static SPECIAL: [bool; 256] = special_table();

pub struct Lexer<'a> {
    text: &'a str,
    bytes: &'a [u8],
    file: &'a str,
    i: usize,
    line: u32,
    line_start: usize,
    /// UTF-8 continuation bytes seen since `line_start`.
    continuation: usize,
    in_group: bool,
    group_pos: Pos,
    first_in_group: bool,
}

impl<'a> Lexer<'a> {
    pub fn new(text: &'a str, file: &'a str) -> Lexer<'a> {
        Lexer {
            text,
            bytes: text.as_bytes(),
            file,
            i: 0,
            line: 1,
            line_start: 0,
            continuation: 0,
            in_group: false,
            group_pos: Pos::new(1, 1),
            first_in_group: false,
        }
    }

    fn pos(&self) -> Pos {
        Pos::new(
            self.line,
            (self.i - self.line_start - self.continuation) as u32 + 1,
        )
    }

    /// Steps over the byte at `self.i`, keeping line and column up to date.
    #[inline]
    fn bump(&mut self) {
        let b = self.bytes[self.i];
        self.i += 1;
        match b {
            b'\n' => self.new_line(),
            b'\r' if self.bytes.get(self.i) != Some(&b'\n') => self.new_line(),
            0x80..=0xBF => self.continuation += 1,
            _ => {}
        }
    }

    fn new_line(&mut self) {
        self.line += 1;
        self.line_start = self.i;
        self.continuation = 0;
    }

    /// The next token, or `None` at the end of the text.
    pub fn next_token(
        &mut self,
        warnings: &mut Vec<Warning>,
    ) -> Result<Option<Token<'a>>, InputError> {
        loop {
            while self.i < self.bytes.len()
                && matches!(self.bytes[self.i], b' ' | b'\t' | b'\r' | b'\n')
            {
                self.bump();
            }
            if self.i >= self.bytes.len() {
                if self.in_group {
                    return Err(self.unclosed_group());
                }
                return Ok(None);
            }
            if self.bytes[self.i] == b'%' {
                let pos = self.pos();
                self.bump();
                if self.in_group {
                    self.in_group = false;
                    return Ok(Some(Token::GroupEnd));
                }
                self.in_group = true;
                self.first_in_group = true;
                self.group_pos = pos;
                continue;
            }
            return self.block(warnings).map(Some);
        }
    }

    fn unclosed_group(&self) -> InputError {
        InputError::new(
            self.file,
            self.group_pos,
            "the file ends inside an extended command: the '%' opened here is never closed (is the file truncated?)",
        )
    }

    fn block(&mut self, warnings: &mut Vec<Warning>) -> Result<Token<'a>, InputError> {
        let start = self.i;
        let pos = self.pos();
        let mut has_line_break = false;
        let mut end = None;
        while self.i < self.bytes.len() {
            let b = self.bytes[self.i];
            if !SPECIAL[b as usize] {
                self.i += 1;
                continue;
            }
            match b {
                b'*' => {
                    end = Some(self.i);
                    self.i += 1;
                    break;
                }
                b'%' => break,
                b'\r' | b'\n' => has_line_break = true,
                _ => {}
            }
            self.bump();
        }
        let stop = end.unwrap_or(self.i);
        if end.is_none() && stop > start {
            let at_end = self.i >= self.bytes.len();
            let body = self.text[start..stop].trim().to_ascii_uppercase();
            if at_end && self.in_group {
                return Err(self.unclosed_group());
            }
            if at_end && !matches!(body.as_str(), "M02" | "M2" | "M00" | "M0") {
                // A cut-off command could be a cut-off coordinate: reading it would put
                // an object in the wrong place.
                return Err(InputError::new(
                    self.file,
                    pos,
                    "the file ends in the middle of a command (no closing '*'); is the file truncated?",
                ));
            }
            let what = if at_end {
                "the file ends"
            } else {
                "a '%' follows"
            };
            warnings.push(Warning::new(
                self.file,
                Some(pos),
                format!("this data block has no closing '*' ({what}); read as if it had one"),
            ));
        }
        let mut trimmed_end = stop;
        while trimmed_end > start
            && matches!(self.bytes[trimmed_end - 1], b' ' | b'\t' | b'\r' | b'\n')
        {
            trimmed_end -= 1;
        }
        let trimmed = &self.text[start..trimmed_end];
        let text = if has_line_break && trimmed.contains(['\r', '\n']) {
            Cow::Owned(
                trimmed
                    .chars()
                    .filter(|c| *c != '\r' && *c != '\n')
                    .collect(),
            )
        } else {
            Cow::Borrowed(trimmed)
        };
        let first = self.first_in_group;
        self.first_in_group = false;
        Ok(Token::Block(Block {
            text,
            pos,
            extended: self.in_group,
            first_in_group: first && self.in_group,
        }))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn tokens(text: &str) -> Vec<(String, Pos, bool, bool)> {
        let mut lx = Lexer::new(text, "t.gbr");
        let mut w = Vec::new();
        let mut out = Vec::new();
        while let Some(t) = lx.next_token(&mut w).unwrap() {
            match t {
                Token::Block(b) => {
                    out.push((b.text.into_owned(), b.pos, b.extended, b.first_in_group))
                }
                Token::GroupEnd => out.push(("%".into(), Pos::default(), false, false)),
            }
        }
        out
    }

    #[test]
    fn splits_blocks_and_groups_with_positions() {
        // Spec 2024.05 §3.4: `%FSLAX25Y25*MOIN*%` is one group of two extended commands.
        let t = tokens("G04 hi*\r\n%FSLAX25Y25*MOIN*%\nX1Y2D01*");
        assert_eq!(t[0], ("G04 hi".into(), Pos::new(1, 1), false, false));
        assert_eq!(t[1], ("FSLAX25Y25".into(), Pos::new(2, 2), true, true));
        assert_eq!(t[2], ("MOIN".into(), Pos::new(2, 13), true, false));
        assert_eq!(t[3].0, "%");
        assert_eq!(t[4], ("X1Y2D01".into(), Pos::new(3, 1), false, false));
    }

    #[test]
    fn bare_cr_is_a_line_break_and_wrapped_blocks_are_joined() {
        let t = tokens("D10*\rX1\r\nY2D01*");
        assert_eq!(t[1], ("X1Y2D01".into(), Pos::new(2, 1), false, false));
    }

    #[test]
    fn columns_count_characters() {
        let t = tokens("G04 é*D10*");
        assert_eq!(t[1].1, Pos::new(1, 7));
    }

    #[test]
    fn unclosed_group_is_an_error_with_its_position() {
        let mut lx = Lexer::new("D10*\n%FSLAX25Y25*", "t.gbr");
        let mut w = Vec::new();
        let e = loop {
            match lx.next_token(&mut w) {
                Ok(Some(_)) => continue,
                Ok(None) => panic!("expected an error"),
                Err(e) => break e,
            }
        };
        assert_eq!(e.pos, Pos::new(2, 1));
    }
}
