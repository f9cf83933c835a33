//! Aperture macros (%AM): definitions, arithmetic expressions and primitives.
//!
//! Gerber Layer Format Specification 2024.05, §4.5.

use crate::diag::{InputError, Pos, Warning};
use crate::image::Shape;
use crate::limits::Limits;

/// A parsed aperture macro template.
#[derive(Debug, Clone, PartialEq)]
pub struct MacroDef {
    pub name: String,
}

impl MacroDef {
    /// Parses the data blocks of `%AMname*block*block*...%`. `blocks` are the blocks after the
    /// name, each without its terminating `*`, with the position of its first character.
    pub fn parse(name: &str, blocks: &[(&str, Pos)], file: &str) -> Result<MacroDef, InputError> {
        let _ = blocks;
        Err(InputError::new(
            file,
            Pos::new(1, 1),
            format!("macro {name}: not written yet"),
        ))
    }

    /// Evaluates the macro for the AD parameters `params` ($1, $2, ...) into one shape in
    /// file units, about the macro origin. `pos` is where the AD command stands.
    pub fn instantiate(
        &self,
        params: &[f64],
        file: &str,
        pos: Pos,
        limits: &Limits,
        warnings: &mut Vec<Warning>,
    ) -> Result<Shape, InputError> {
        let _ = (params, limits, warnings);
        Err(InputError::new(file, pos, "not written yet"))
    }
}
