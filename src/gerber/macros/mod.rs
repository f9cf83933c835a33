//! Aperture macros (%AM): definitions, arithmetic expressions and primitives.
//!
//! Gerber Layer Format Specification rev 2024.05, §4.5. A definition is parsed once into
//! statements (primitives and `$n=` assignments, with expressions compiled); each aperture
//! definition (%AD) that uses the macro instantiates it with its parameters into one
//! [`Shape`] in file units about the macro origin. The behaviour is summarised in
//! `docs/aperture-macros.md`.
//!
//! # Guarantees
//! - Neither `parse` nor `instantiate` panics or loops without bound on any input; the work
//!   done is bounded by the text length and `Limits::max_macro_primitives`.
//! - Every coordinate and size in the returned shape is finite, and diameters are >= 0.
//! - Exposure-off primitives only cut what the macro itself drew before them (spec §4.5.1):
//!   the result is a `Shape::Composite` whose subtract parts never reach the image.
//! - Composites are flat: no part of the returned shape is itself a composite. Rings are
//!   full-circle strokes, thermal pieces are contours of lines and arcs.

mod expr;
mod geometry;
mod primitives;

use crate::diag::{InputError, Pos, Warning};
use crate::image::Shape;
use crate::limits::Limits;
use expr::{EvalError, Expr, Located, SyntaxError, Variables};
use primitives::{Modifiers, PrimitiveCode};
use std::collections::BTreeSet;
use std::sync::atomic::{AtomicBool, Ordering};

/// A parsed aperture macro template.
#[derive(Debug, Clone, PartialEq)]
pub struct MacroDef {
    pub name: String,
    statements: Vec<Statement>,
    /// Warnings about the definition itself (revoked primitive codes, ignored modifiers),
    /// reported with the first instantiation only, so a macro used by many apertures is
    /// reported once.
    definition_notes: Vec<(Pos, String)>,
    notes_reported: ReportedFlag,
}

#[derive(Debug, Clone, PartialEq)]
enum Statement {
    /// `$n=expression` (spec §4.5, variables). Reassigning a variable is accepted: older
    /// revisions of the spec allowed it and the meaning is unambiguous.
    Assign { variable: u32, expr: Expr },
    Primitive {
        code: PrimitiveCode,
        pos: Pos,
        modifiers: Vec<Expr>,
    },
}

/// Whether the definition notes were reported. Bookkeeping, not part of the macro's
/// meaning: two definitions compare equal whatever their flags say. Atomic so that a
/// `MacroDef` stays `Sync`.
#[derive(Debug, Default)]
struct ReportedFlag(AtomicBool);

impl ReportedFlag {
    /// True the first time only.
    fn first_time(&self) -> bool {
        !self.0.swap(true, Ordering::Relaxed)
    }
}

impl Clone for ReportedFlag {
    fn clone(&self) -> Self {
        ReportedFlag(AtomicBool::new(self.0.load(Ordering::Relaxed)))
    }
}

impl PartialEq for ReportedFlag {
    fn eq(&self, _: &Self) -> bool {
        true
    }
}

/// The characters of `raw` with their positions, `start` being the first one's.
fn locate(raw: &str, start: Pos) -> Vec<(char, Pos)> {
    let mut pos = start;
    raw.chars()
        .map(|c| {
            let here = pos;
            if c == '\n' {
                pos = Pos::new(pos.line.saturating_add(1), 1);
            } else {
                pos.column = pos.column.saturating_add(1);
            }
            (c, here)
        })
        .collect()
}

/// Spec §4.5.1 (comment): a block whose primitive code is 0 is a comment; the rest of the
/// block is free text (it may contain commas and digits, so this is decided on the raw text
/// before whitespace is removed).
fn is_comment(raw: &str) -> bool {
    let t = raw.trim_start();
    let digits = t.bytes().take_while(u8::is_ascii_digit).count();
    digits > 0 && t.as_bytes()[..digits].iter().all(|&b| b == b'0')
}

fn text_of(chars: &Located) -> String {
    chars.iter().map(|&(c, _)| c).collect()
}

fn after(chars: &Located, fallback: Pos) -> Pos {
    chars
        .last()
        .map(|&(_, p)| Pos::new(p.line, p.column.saturating_add(1)))
        .unwrap_or(fallback)
}

impl MacroDef {
    /// Parses the data blocks of `%AMname*block*block*...%`. `blocks` are the blocks after the
    /// name, each without its terminating `*`, with the position of its first character.
    ///
    /// Whitespace and line breaks inside a block are ignored (except in comments). Empty
    /// blocks are skipped. Syntax errors are reported here; problems that depend on the
    /// parameters (too few modifiers, negative sizes, division by zero) when instantiated.
    pub fn parse(name: &str, blocks: &[(&str, Pos)], file: &str) -> Result<MacroDef, InputError> {
        let mut def = MacroDef {
            name: name.to_string(),
            statements: Vec::new(),
            definition_notes: Vec::new(),
            notes_reported: ReportedFlag::default(),
        };
        let mut deprecations_noted = BTreeSet::new();
        for &(raw, start) in blocks {
            if is_comment(raw) {
                continue;
            }
            let chars: Vec<(char, Pos)> = locate(raw, start)
                .into_iter()
                .filter(|(c, _)| !c.is_whitespace())
                .collect();
            let Some(&(first, first_pos)) = chars.first() else {
                continue;
            };
            let end = after(&chars, start);
            let syntax = |e: SyntaxError| syntax_error(name, file, e);
            if first == '$' {
                let statement = parse_assignment(&chars, end).map_err(syntax)?;
                def.statements.push(statement);
                continue;
            }
            let (code, modifiers, notes) = parse_primitive(&chars, end).map_err(syntax)?;
            if let Some(note) = code.deprecation() {
                if deprecations_noted.insert(code.label()) {
                    def.definition_notes.push((first_pos, note.to_string()));
                }
            }
            def.definition_notes.extend(notes);
            if let Some(max) = code.max_modifiers() {
                if modifiers.len() > max {
                    def.definition_notes.push((
                        modifiers[max].pos,
                        format!(
                            "{}: {} extra modifiers after the {} are ignored",
                            code.label(),
                            modifiers.len() - max,
                            code.modifier_names()[max - 1]
                        ),
                    ));
                }
            }
            def.statements.push(Statement::Primitive {
                code,
                pos: first_pos,
                modifiers,
            });
        }
        Ok(def)
    }

    /// Evaluates the macro for the AD parameters `params` ($1, $2, ...) into one shape in
    /// file units, about the macro origin. `pos` is where the AD command stands.
    ///
    /// A single exposure-on primitive is returned as is; anything else is a
    /// `Shape::Composite` of (add, part) in primitive order, exposure-off parts subtracting
    /// from the parts before them (spec §4.5.1). A macro that draws nothing returns an empty
    /// composite.
    pub fn instantiate(
        &self,
        params: &[f64],
        file: &str,
        pos: Pos,
        limits: &Limits,
        warnings: &mut Vec<Warning>,
    ) -> Result<Shape, InputError> {
        if self.notes_reported.first_time() {
            for (at, note) in &self.definition_notes {
                warnings.push(Warning::new(
                    file,
                    Some(*at),
                    format!("aperture macro '{}': {note}", self.name),
                ));
            }
        }
        let mut run = Run {
            def: self,
            file,
            aperture_pos: pos,
            warnings,
            vars: Variables::from_params(params),
            params: params.len(),
            unset_reported: BTreeSet::new(),
        };
        let max = limits.max_macro_primitives;
        let mut parts: Vec<(bool, Shape)> = Vec::new();
        let mut counted = 0usize;
        for statement in &self.statements {
            match statement {
                Statement::Assign { variable, expr } => {
                    let what = format!("the assignment to ${variable}");
                    let value = run.evaluate(expr, &what)?;
                    run.vars.set(*variable, value);
                }
                Statement::Primitive {
                    code,
                    pos: at,
                    modifiers,
                } => {
                    if counted >= max {
                        return Err(run.too_many(*at, max));
                    }
                    let mut ctx = PrimitiveContext {
                        run: &mut run,
                        code: *code,
                        pos: *at,
                        modifiers,
                    };
                    let built = primitives::build(*code, &mut ctx, max - counted)?;
                    if !built.shapes.iter().all(is_finite) {
                        // Finite modifiers can still overflow (e.g. a rotation of coordinates
                        // near the largest f64).
                        return Err(
                            ctx.error("its coordinates are too large to compute with".to_string())
                        );
                    }
                    // Each primitive counts once, a moiré once per ring and bar.
                    counted += if *code == PrimitiveCode::Moire {
                        built.shapes.len().max(1)
                    } else {
                        1
                    };
                    if built.exposure_on {
                        parts.extend(built.shapes.into_iter().map(|s| (true, s)));
                    } else if parts.iter().any(|&(add, _)| add) {
                        // Cutting before anything was drawn cuts nothing, so it is dropped.
                        parts.extend(built.shapes.into_iter().map(|s| (false, s)));
                    }
                }
            }
        }
        if parts.len() == 1 && parts[0].0 {
            if let Some((_, shape)) = parts.pop() {
                return Ok(shape);
            }
        }
        Ok(Shape::Composite(parts))
    }
}

fn syntax_error(name: &str, file: &str, e: SyntaxError) -> InputError {
    InputError::new(
        file,
        e.pos,
        format!("aperture macro '{name}': {}", e.message),
    )
}

fn is_finite(shape: &Shape) -> bool {
    let point = |p: &crate::image::Point| p.x.is_finite() && p.y.is_finite();
    match shape {
        Shape::Disc { center, diameter } => point(center) && diameter.is_finite(),
        Shape::Stroke {
            start,
            end,
            arc,
            width,
        } => point(start) && point(end) && arc.is_none_or(|(c, _)| point(&c)) && width.is_finite(),
        Shape::Polygon(c) => {
            point(&c.start)
                && c.segments.iter().all(|s| match s {
                    crate::image::Segment::Line { to } => point(to),
                    crate::image::Segment::Arc { to, center, .. } => point(to) && point(center),
                })
        }
        Shape::Composite(parts) => parts.iter().all(|(_, s)| is_finite(s)),
    }
}

/// `$n=expression`.
fn parse_assignment(chars: &Located, end: Pos) -> Result<Statement, SyntaxError> {
    let Some(eq) = chars.iter().position(|&(c, _)| c == '=') else {
        return Err(SyntaxError {
            pos: chars[0].1,
            message: format!(
                "'{}' is neither a primitive nor an assignment like $4=$1x2",
                text_of(chars)
            ),
        });
    };
    let variable = expr::variable_number(&text_of(&chars[1..eq]), chars[0].1)?;
    let expr = Expr::parse(&chars[eq + 1..], end)?;
    Ok(Statement::Assign { variable, expr })
}

type ParsedPrimitive = (PrimitiveCode, Vec<Expr>, Vec<(Pos, String)>);

/// `code,modifier,modifier,...`.
fn parse_primitive(chars: &Located, end: Pos) -> Result<ParsedPrimitive, SyntaxError> {
    // Each field with the position just after it (its comma, or the block's end).
    let mut fields: Vec<(&Located, Pos)> = Vec::new();
    let mut field_start = 0;
    for (i, &(c, p)) in chars.iter().enumerate() {
        if c == ',' {
            fields.push((&chars[field_start..i], p));
            field_start = i + 1;
        }
    }
    fields.push((&chars[field_start..], end));
    let code_text = text_of(fields[0].0);
    let start = chars[0].1;
    if code_text.is_empty() || !code_text.bytes().all(|b| b.is_ascii_digit()) {
        return Err(SyntaxError {
            pos: start,
            message: format!(
                "'{}' is not a primitive: a macro block is a primitive code followed by \
                 modifiers (like 1,1,$1,0,0), a $n= assignment or a 0 comment",
                text_of(chars)
            ),
        });
    }
    let code = code_text
        .parse::<u32>()
        .ok()
        .and_then(PrimitiveCode::from_code)
        .ok_or_else(|| SyntaxError {
            pos: start,
            message: format!(
                "unknown primitive code {code_text}; the codes are 0 (comment), 1 (circle), \
                 20 (vector line), 21 (centre line), 4 (outline), 5 (polygon), 6 (moiré), \
                 7 (thermal) and the revoked 2 and 22"
            ),
        })?;
    let mut modifiers = Vec::new();
    let mut notes = Vec::new();
    let count = fields.len() - 1;
    for (i, &(field, field_end)) in fields.iter().enumerate().skip(1) {
        if field.is_empty() {
            if i == count && count > 1 {
                notes.push((
                    field_end,
                    format!("{}: a trailing comma is ignored", code.label()),
                ));
                continue;
            }
            return Err(SyntaxError {
                pos: field_end,
                message: format!("{}: modifier {i} is empty", code.label()),
            });
        }
        modifiers.push(Expr::parse(field, field_end)?);
    }
    Ok((code, modifiers, notes))
}

/// State of one instantiation.
struct Run<'a> {
    def: &'a MacroDef,
    file: &'a str,
    aperture_pos: Pos,
    warnings: &'a mut Vec<Warning>,
    vars: Variables,
    params: usize,
    unset_reported: BTreeSet<u32>,
}

impl Run<'_> {
    /// Evaluates `expr`; `what` says where it stands, for messages.
    fn evaluate(&mut self, expr: &Expr, what: &str) -> Result<f64, InputError> {
        let mut unset = Vec::new();
        let result = expr.eval(&self.vars, &mut unset);
        for (n, at) in unset {
            // Spec rev 2024.05 does not define the value of a variable that neither the
            // aperture definition nor an assignment sets (from memory); reading it as 0 is
            // long-standing practice, so it is done with a warning.
            if self.unset_reported.insert(n) {
                self.warnings.push(Warning::new(
                    self.file,
                    Some(at),
                    format!(
                        "aperture macro '{}': variable ${n} has no value (the aperture \
                         definition at {} gives {} parameters and no assignment sets it); \
                         it is read as 0",
                        self.def.name, self.aperture_pos, self.params
                    ),
                ));
            }
        }
        match result {
            Ok(v) if v.is_finite() => Ok(v),
            Ok(_) => Err(InputError::new(
                self.file,
                expr.pos,
                format!(
                    "aperture macro '{}': the value of `{}` ({what}) is too large to be a \
                     number, with the parameters of the aperture defined at {}",
                    self.def.name, expr.text, self.aperture_pos
                ),
            )),
            Err(EvalError::DivisionByZero(at)) => Err(InputError::new(
                self.file,
                at,
                format!(
                    "aperture macro '{}': division by zero in `{}` ({what}), with the \
                     parameters of the aperture defined at {}",
                    self.def.name, expr.text, self.aperture_pos
                ),
            )),
        }
    }

    fn too_many(&self, at: Pos, max: usize) -> InputError {
        InputError::new(
            self.file,
            at,
            format!(
                "aperture macro '{}' draws more than {max} primitives (the limit \
                 max_macro_primitives) for the aperture defined at {}",
                self.def.name, self.aperture_pos
            ),
        )
    }
}

/// One primitive statement being built.
struct PrimitiveContext<'r, 'a> {
    run: &'r mut Run<'a>,
    code: PrimitiveCode,
    pos: Pos,
    modifiers: &'r [Expr],
}

impl PrimitiveContext<'_, '_> {
    fn modifier_name(&self, index: usize) -> String {
        match self.code.modifier_names().get(index) {
            Some(name) if self.code != PrimitiveCode::Outline || index < 2 => {
                format!("modifier {} ({name})", index + 1)
            }
            _ => format!("modifier {}", index + 1),
        }
    }

    fn prefix(&self) -> String {
        format!(
            "aperture macro '{}', {}",
            self.run.def.name,
            self.code.label()
        )
    }
}

impl Modifiers for PrimitiveContext<'_, '_> {
    fn len(&self) -> usize {
        self.modifiers.len()
    }

    fn value(&mut self, index: usize) -> Result<f64, InputError> {
        let Some(expr) = self.modifiers.get(index) else {
            let message = format!("{} is missing", self.modifier_name(index));
            return Err(self.error(message));
        };
        let what = format!("{} of {}", self.modifier_name(index), self.code.label());
        self.run.evaluate(expr, &what)
    }

    fn error(&self, message: String) -> InputError {
        InputError::new(
            self.run.file,
            self.pos,
            format!(
                "{}: {message} (for the aperture defined at {})",
                self.prefix(),
                self.run.aperture_pos
            ),
        )
    }

    fn error_at(&self, index: usize, message: String) -> InputError {
        let at = self.modifiers.get(index).map(|e| e.pos).unwrap_or(self.pos);
        InputError::new(
            self.run.file,
            at,
            format!(
                "{}: {message} in {} (for the aperture defined at {})",
                self.prefix(),
                self.modifier_name(index),
                self.run.aperture_pos
            ),
        )
    }

    fn warn(&mut self, message: String) {
        let message = format!("{}: {message}", self.prefix());
        self.run
            .warnings
            .push(Warning::new(self.run.file, Some(self.pos), message));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn comments_are_recognised_on_the_raw_text() {
        // Spec §4.5.1 (comment): code 0, then free text.
        assert!(is_comment("0 pad for the Larkspur badge, rev 2"));
        assert!(is_comment("\n0"));
        assert!(is_comment("0 1 2"));
        assert!(!is_comment("01,1,1,0,0"));
        assert!(!is_comment("1,1,0,0,0"));
        assert!(!is_comment("$1=0"));
    }

    #[test]
    fn positions_follow_line_breaks() {
        let l = locate("a\nbc", Pos::new(3, 5));
        assert_eq!(l[0], ('a', Pos::new(3, 5)));
        assert_eq!(l[1], ('\n', Pos::new(3, 6)));
        assert_eq!(l[3], ('c', Pos::new(4, 2)));
    }

    #[test]
    fn overflowing_geometry_is_an_error() {
        let def = MacroDef::parse("BIG", &[("20,1,1,-$1,0,$1,0,45", Pos::new(1, 1))], "f").unwrap();
        let mut w = Vec::new();
        let r = def.instantiate(&[1.7e308], "f", Pos::new(9, 1), &Limits::default(), &mut w);
        assert!(r.unwrap_err().message.contains("too large to compute with"));
    }
}
