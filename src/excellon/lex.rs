//! Splits Excellon text into lines and each line into blocks of words.
//!
//! Excellon (IPC-NC-349 / the Excellon format description) is line oriented: one block per
//! line, each block a run of words `letter number` (`X1.5Y-2`, `T01C0.8`, `G85`), or a header
//! keyword line (`METRIC,LZ,000.000`, `FMAT,2`), or a `;` comment. Writers end lines with
//! LF, CRLF or a bare CR, and some mix them; all three are line ends here.

use crate::diag::Pos;

/// One physical line: its 1-based number and its text without the line end.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Line<'a> {
    pub number: u32,
    pub text: &'a str,
    /// Byte offset of the first non-ASCII byte (or the length): columns before it are
    /// byte offsets + 1, so positions cost O(1) on the (all-ASCII) command part of a line
    /// and a hostile line with millions of words stays linear.
    pub ascii_prefix: usize,
}

impl Line<'_> {
    /// The position of byte offset `offset` of this line (columns count characters).
    pub fn pos(&self, offset: usize) -> Pos {
        let offset = offset.min(self.text.len());
        if offset <= self.ascii_prefix {
            return Pos::new(self.number, offset as u32 + 1);
        }
        let column = self
            .text
            .get(..offset)
            .map(|s| s.chars().count())
            .unwrap_or(offset);
        Pos::new(self.number, column as u32 + 1)
    }
}

/// Iterates over the lines of `text`, treating `\n`, `\r\n` and a bare `\r` as line ends.
pub(crate) fn lines(text: &str) -> impl Iterator<Item = Line<'_>> {
    let bytes = text.as_bytes();
    let mut start = 0usize;
    let mut number = 0u32;
    std::iter::from_fn(move || {
        if start >= bytes.len() {
            return None;
        }
        let mut end = start;
        while end < bytes.len() && bytes[end] != b'\n' && bytes[end] != b'\r' {
            end += 1;
        }
        let line = &text[start..end];
        let mut next = end;
        if next < bytes.len() {
            next += if bytes[next] == b'\r' && bytes.get(next + 1) == Some(&b'\n') {
                2
            } else {
                1
            };
        }
        start = next;
        number = number.saturating_add(1);
        let ascii_prefix = line
            .bytes()
            .position(|b| !b.is_ascii())
            .unwrap_or(line.len());
        Some(Line {
            number,
            text: line,
            ascii_prefix,
        })
    })
}

/// A number as written: sign, the digits before the decimal point and, when a decimal point
/// is present, the digits after it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct NumText<'a> {
    pub negative: bool,
    pub whole: &'a str,
    pub fraction: Option<&'a str>,
}

impl NumText<'_> {
    /// The value when the number has a decimal point (or is read as a plain decimal number).
    pub fn decimal_value(&self) -> f64 {
        let mut s = String::with_capacity(self.whole.len() + 8);
        s.push_str(if self.whole.is_empty() {
            "0"
        } else {
            self.whole
        });
        if let Some(f) = self.fraction {
            if !f.is_empty() {
                s.push('.');
                s.push_str(f);
            }
        }
        let v: f64 = s.parse().unwrap_or(0.0);
        if self.negative {
            -v
        } else {
            v
        }
    }

    /// All digits written (for a number without a decimal point).
    pub fn digits(&self) -> &str {
        self.whole
    }

    /// The number as a plain unsigned integer, if it is one and fits.
    pub fn as_index(&self) -> Option<u64> {
        if self.negative
            || self.fraction.is_some()
            || self.whole.is_empty()
            || self.whole.len() > 18
        {
            return None;
        }
        self.whole.parse().ok()
    }
}

/// One word: an upper-cased letter and its number, with the byte offset of the letter.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Word<'a> {
    pub letter: u8,
    pub num: NumText<'a>,
    pub offset: usize,
}

/// What one line holds.
#[derive(Debug, Clone)]
pub(crate) enum Block<'a> {
    Empty,
    /// `;` comment: the text after the semicolon.
    Comment(&'a str),
    /// A line holding only `%` (end of header, or "rewind stop" elsewhere).
    Percent,
    /// A header keyword line such as `METRIC,LZ,000.000`: the upper-cased name and the
    /// comma-separated fields after it (trimmed, upper-cased).
    Keyword {
        name: String,
        fields: Vec<String>,
    },
    /// `M45,text` / `M47,text` (operator messages) and `M97,text` / `M98,text` (canned text):
    /// the code (the text after the comma is for the operator, never geometry).
    Message {
        code: u32,
    },
    /// A run of words, optionally followed by a trailing `;` comment.
    Words {
        words: Vec<Word<'a>>,
        comment: Option<&'a str>,
    },
}

/// A lexical problem: byte offset in the line and a sentence.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct LexError {
    pub offset: usize,
    pub message: String,
}

fn is_blank(b: u8) -> bool {
    b == b' ' || b == b'\t' || b == 0x0c || b == 0x0b
}

/// Splits one line into a block.
pub(crate) fn block(line: &str) -> Result<Block<'_>, LexError> {
    let bytes = line.as_bytes();
    let mut i = 0;
    while i < bytes.len() && is_blank(bytes[i]) {
        i += 1;
    }
    if i == bytes.len() {
        return Ok(Block::Empty);
    }
    if bytes[i] == b';' {
        return Ok(Block::Comment(&line[i + 1..]));
    }
    if bytes[i] == b'%' && line[i + 1..].trim().is_empty() {
        return Ok(Block::Percent);
    }
    // Two letters in a row start a header keyword (`METRIC`, `FMAT`, `ICI`, `VER` ...).
    if bytes[i].is_ascii_alphabetic() && bytes.get(i + 1).is_some_and(|b| b.is_ascii_alphabetic()) {
        let rest = line[i..].split(';').next().unwrap_or("");
        let mut parts = rest.split(',').map(|p| p.trim().to_ascii_uppercase());
        let name = parts.next().unwrap_or_default();
        return Ok(Block::Keyword {
            name,
            fields: parts.collect(),
        });
    }
    let mut words = Vec::new();
    let mut comment = None;
    while i < bytes.len() {
        let b = bytes[i];
        if is_blank(b) {
            i += 1;
            continue;
        }
        if b == b';' {
            comment = Some(&line[i + 1..]);
            break;
        }
        if !b.is_ascii_alphabetic() {
            return Err(LexError {
                offset: i,
                message: format!(
                    "unexpected character '{}' where a letter code (such as X, Y, T, G or M) should start",
                    line[i..].chars().next().unwrap_or('?')
                ),
            });
        }
        let letter = b.to_ascii_uppercase();
        let start = i;
        i += 1;
        while i < bytes.len() && is_blank(bytes[i]) {
            i += 1;
        }
        let (num, next) = number(line, i).map_err(|m| LexError {
            offset: start,
            message: format!("{} after '{}'", m, letter as char),
        })?;
        i = next;
        words.push(Word {
            letter,
            num,
            offset: start,
        });
        // `M47,text` and friends: the rest of the line is text, not words.
        if letter == b'M' && bytes.get(i) == Some(&b',') {
            let code = num.as_index().unwrap_or(u64::MAX).min(u32::MAX as u64) as u32;
            if words.len() == 1 {
                return Ok(Block::Message { code });
            }
            return Err(LexError {
                offset: i,
                message:
                    "a message (M45/M47/M97/M98 followed by a comma) must stand alone on its line"
                        .into(),
            });
        }
    }
    Ok(Block::Words { words, comment })
}

/// Reads `[+-]digits[.digits]` at byte `i`.
fn number(line: &str, mut i: usize) -> Result<(NumText<'_>, usize), String> {
    let bytes = line.as_bytes();
    let mut negative = false;
    if let Some(&s) = bytes.get(i) {
        if s == b'+' || s == b'-' {
            negative = s == b'-';
            i += 1;
        }
    }
    let whole_start = i;
    while i < bytes.len() && bytes[i].is_ascii_digit() {
        i += 1;
    }
    let whole = &line[whole_start..i];
    let mut fraction = None;
    if bytes.get(i) == Some(&b'.') {
        i += 1;
        let f_start = i;
        while i < bytes.len() && bytes[i].is_ascii_digit() {
            i += 1;
        }
        fraction = Some(&line[f_start..i]);
    }
    let digit_count = whole.len() + fraction.map_or(0, str::len);
    if digit_count == 0 {
        return Err("a number is missing".into());
    }
    if let Some(&b) = bytes.get(i) {
        if b == b'.' || b == b'+' || b == b'-' || b.is_ascii_digit() {
            return Err("a malformed number (a second sign or decimal point)".into());
        }
    }
    if digit_count > 30 {
        return Err("a number with more than 30 digits".into());
    }
    Ok((
        NumText {
            negative,
            whole,
            fraction,
        },
        i,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_ends_lf_crlf_and_bare_cr_all_split() {
        let v: Vec<_> = lines("A\r\nB\rC\nD").map(|l| (l.number, l.text)).collect();
        assert_eq!(v, vec![(1, "A"), (2, "B"), (3, "C"), (4, "D")]);
    }

    #[test]
    fn words_with_signs_and_points() {
        let Block::Words { words, .. } = block("x+0.5Y-12T01C.8").unwrap() else {
            panic!()
        };
        let letters: Vec<char> = words.iter().map(|w| w.letter as char).collect();
        assert_eq!(letters, vec!['X', 'Y', 'T', 'C']);
        assert_eq!(words[0].num.decimal_value(), 0.5);
        assert_eq!(words[1].num.decimal_value(), -12.0);
        assert_eq!(words[3].num.decimal_value(), 0.8);
        assert_eq!(words[2].offset, 9); // "x+0.5" is 5 bytes, "Y-12" 4 more
    }

    #[test]
    fn keyword_and_message_and_bad_number() {
        match block("metric, lz ,000.000").unwrap() {
            Block::Keyword { name, fields } => {
                assert_eq!(name, "METRIC");
                assert_eq!(fields, vec!["LZ", "000.000"]);
            }
            b => panic!("{b:?}"),
        }
        assert!(matches!(
            block("M47,Hello").unwrap(),
            Block::Message { code: 47 }
        ));
        let e = block("X1.2.3Y4").unwrap_err();
        assert_eq!(e.offset, 0);
        let e = block("X1Y").unwrap_err();
        assert_eq!(e.offset, 2);
        assert!(block("X1*").is_err());
    }
}
