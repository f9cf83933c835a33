//! Positions, warnings and the error shape shared by every stage.
//!
//! Every problem a user sees names the file, the line and the column (1-based) and says in
//! a sentence what is wrong. Errors stop the stage; warnings are collected and printed in
//! the summary, never lost.

use std::fmt;

/// A place in an input file: 1-based line and column (columns count characters).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
pub struct Pos {
    pub line: u32,
    pub column: u32,
}

impl Pos {
    pub const fn new(line: u32, column: u32) -> Pos {
        Pos { line, column }
    }

    /// The position of byte offset `offset` in `text`.
    pub fn of_offset(text: &str, offset: usize) -> Pos {
        let offset = offset.min(text.len());
        let before = &text.as_bytes()[..offset];
        let line = before.iter().filter(|&&b| b == b'\n').count() as u32 + 1;
        let line_start = before
            .iter()
            .rposition(|&b| b == b'\n')
            .map(|i| i + 1)
            .unwrap_or(0);
        let column = String::from_utf8_lossy(&before[line_start..])
            .chars()
            .count() as u32
            + 1;
        Pos { line, column }
    }
}

impl fmt::Display for Pos {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}:{}", self.line, self.column)
    }
}

/// A non-fatal problem: the intent was clear, so reading went on.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct Warning {
    pub file: String,
    pub pos: Option<Pos>,
    pub message: String,
}

impl Warning {
    pub fn new(file: &str, pos: Option<Pos>, message: impl Into<String>) -> Warning {
        Warning {
            file: file.to_string(),
            pos,
            message: message.into(),
        }
    }
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.pos {
            Some(p) => write!(f, "{}:{}: warning: {}", self.file, p, self.message),
            None => write!(f, "{}: warning: {}", self.file, self.message),
        }
    }
}

/// A fatal problem in an input file.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{file}:{pos}: {message}")]
pub struct InputError {
    pub file: String,
    pub pos: Pos,
    pub message: String,
}

impl InputError {
    pub fn new(file: &str, pos: Pos, message: impl Into<String>) -> InputError {
        InputError {
            file: file.to_string(),
            pos,
            message: message.into(),
        }
    }
}
