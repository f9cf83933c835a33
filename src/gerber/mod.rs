//! Gerber RS-274X / X2 / X3 reader: parser (commands with source positions) and interpreter
//! (the graphics state machine) producing a [`LayerImage`].
//!
//! Specification: The Gerber Layer Format Specification, Ucamco, revision 2024.05. What is
//! supported and how deprecated commands are handled is listed in `docs/gerber-support.md`.
//!
//! Structure: [`lexer`] splits the text into data blocks; [`parser`] (with `extended`) turns
//! blocks into [`command::Command`]s; `interpret` (with `draw` and `sink`) runs the graphics
//! state machine; [`aperture`] and [`macros`] make aperture shapes. The parser streams: no
//! list of commands is built, so memory stays proportional to the image.

use crate::diag::{InputError, Pos, Warning};
use crate::image::LayerImage;
use crate::limits::Limits;
use std::collections::BTreeMap;

pub mod aperture;
pub mod command;
mod draw;
mod extended;
pub mod geometry;
mod interpret;
pub mod lexer;
pub mod macros;
pub mod parser;
mod sink;

/// Units the file was written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub enum Units {
    Millimetres,
    Inches,
}

/// A Gerber file read into a normalized image.
#[derive(Debug, Clone)]
pub struct GerberFile {
    pub image: LayerImage,
    pub units: Option<Units>,
    /// File attributes (%TF, or `G04 #@! TF` comments), name without the dot → values.
    /// e.g. "FileFunction" → ["Copper", "L1", "Top"]. `.FilePolarity,Negative` (the image
    /// shows where material is *absent*, e.g. mask openings) is only recorded here; it does
    /// not change the objects.
    pub attributes: BTreeMap<String, Vec<String>>,
    /// Image name (%IN), if given.
    pub image_name: Option<String>,
    /// Layer names (%LN), in file order.
    pub layer_names: Vec<String>,
    /// Whether the file declared a negative image (deprecated `%IPNEG*%`, spec §8.1).
    ///
    /// The objects in `image` are kept exactly as written (the positive reading); the image
    /// must be inverted as a whole (dark ↔ clear over the film area) by whoever places it on
    /// a film. We do not add a "background rectangle" here because its extent is a film
    /// decision (margins), not a property of the file.
    pub image_negative: bool,
    pub warnings: Vec<Warning>,
}

/// Reads Gerber text. `file` names the file in messages.
///
/// # Errors
/// An [`InputError`] naming file, line and column for anything that would force a guess
/// that changes the film: unknown or malformed commands, coordinates before `%FS`/`%MO`,
/// undefined apertures or macros, impossible arcs, open region contours, exceeded limits.
/// Deprecated but clear constructs are read with a [`Warning`].
pub fn read(text: &str, file: &str, limits: &Limits) -> Result<GerberFile, InputError> {
    if text.len() as u64 > limits.max_file_bytes {
        return Err(InputError::new(
            file,
            Pos::new(1, 1),
            format!(
                "the file is {} bytes, more than the limit of {} (max_file_bytes)",
                text.len(),
                limits.max_file_bytes
            ),
        ));
    }
    let mut parser = parser::Parser::new(text, file);
    let mut interp = interpret::Interpreter::new(file, limits);
    let mut last_pos = Pos::new(1, 1);
    let mut after_end = None;
    parser.run(|cmd| {
        last_pos = cmd.pos;
        if interp.ended() {
            after_end = Some(cmd.pos);
            return Ok(false);
        }
        interp.execute(cmd)?;
        Ok(true)
    })?;
    if let Some(pos) = after_end {
        interp.warn(pos, "commands after M02 (end of file) are ignored");
    }
    // Parser and interpreter warnings, merged into file order.
    interp.warnings.append(&mut parser.warnings);
    interp
        .warnings
        .sort_by_key(|w| w.pos.map(|p| (p.line, p.column)));
    interp.finish(last_pos)
}
