//! The Excellon program interpreter: header, tool table, drilling, slots and routing.
//!
//! Codes follow IPC-NC-349 and the Excellon format description (from memory; the
//! trade-rule table in TRADE.md cites them): `M48` … `%`/`M95` header, `INCH`/`METRIC`
//! (`M72`/`M71`), `T..C..` tools, `G05`/`G81` drill mode, `G85` slots, `G00` rout mode
//! with `M15` plunge, `G01`/`G02`/`G03` cuts and `M16`/`M17` retract, `G90`/`G91`,
//! `R` repeat, `M30`/`M00` end.
//!
//! Strictness: anything whose guess would move or add holes on the film is an error with
//! file, line and column; anything harmless is a warning.

use super::comments::{read_comment, CommentFact};
use super::format::{CoordinateFormat, DigitStats, FormatHint, Units, Zeros};
use super::lex::{self, Block, Line, Word};
use super::{DrillFile, Hole, Slot, Tool};
use crate::diag::{InputError, Pos, Warning};
use crate::image::{Point, Turn};
use crate::limits::Limits;
use std::collections::{HashMap, HashSet};

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Section {
    /// Before `M48` (comments and a leading `%` are usual there).
    Preamble,
    Header,
    Body,
    /// After `M30`/`M00`.
    Ended,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Motion {
    /// Drill mode (`G05`/`G81`, the default): a coordinate is a hole.
    Drill,
    /// Rout mode, rapid positioning (`G00`).
    Rapid,
    /// Rout mode, linear cut (`G01`).
    Linear,
    /// Rout mode, circular cut (`G02` clockwise, `G03` counter-clockwise).
    Arc(Turn),
}

#[derive(Debug, Clone)]
pub(super) struct ToolEntry {
    pub(super) number: u32,
    /// Diameter in the units named by `units`.
    pub(super) size: f64,
    /// Units in force when the tool was defined; `None` when none were known yet.
    pub(super) units: Option<Units>,
    pub(super) plated: Option<bool>,
    pub(super) pos: Pos,
}

#[derive(Debug, Clone, Copy)]
pub(super) struct Selected {
    pub(super) number: u32,
    pub(super) pos: Pos,
}

/// The coordinate words of one group (before or after `G85`).
#[derive(Debug, Clone, Copy, Default)]
pub(super) struct Coords<'a> {
    pub(super) x: Option<Word<'a>>,
    pub(super) y: Option<Word<'a>>,
    pub(super) i: Option<Word<'a>>,
    pub(super) j: Option<Word<'a>>,
    pub(super) a: Option<Word<'a>>,
}

impl Coords<'_> {
    pub(super) fn any_xy(&self) -> bool {
        self.x.is_some() || self.y.is_some()
    }
    pub(super) fn any(&self) -> bool {
        self.any_xy() || self.i.is_some() || self.j.is_some() || self.a.is_some()
    }
}

/// Header keywords that set machine behaviour (feeds, checks, tool changers, messages)
/// but never where a hole goes; read and ignored.
const HARMLESS_KEYWORDS: &[&str] = &[
    "VER", "DETECT", "ATC", "AFS", "BLKD", "CCW", "CP", "DN", "DTMDIST", "FSB", "HBCK", "HPCK",
    "NCSL", "OM48", "OSTOP", "OTCLMP", "PCKPARAM", "PF", "PPR", "PVS", "RC", "RCP", "RD", "RH",
    "RHH", "RPS", "RSB", "SBK", "SG", "SI", "TCST", "UP", "AXIS", "TCSTON", "TCSTOFF", "LZ", "TZ",
];

/// Warnings kept per file; a hostile file could otherwise make one per word. The rest are
/// counted and reported in one closing warning.
const MAX_WARNINGS: usize = 1000;

pub(crate) struct Reader<'a> {
    pub(super) file: &'a str,
    pub(super) text: &'a str,
    pub(super) limits: &'a Limits,
    pub(super) external: FormatHint,
    pub(super) warnings: Vec<Warning>,
    pub(super) warned_once: HashSet<&'static str>,
    pub(super) section: Section,
    pub(super) saw_header: bool,
    pub(super) saw_end: bool,
    /// Format facts stated by commands (`INCH,LZ,00.0000`, `M71`).
    pub(super) stated: FormatHint,
    /// Format facts stated in comments (`;FILE_FORMAT=2:4`, KiCad's `;FORMAT={…}`).
    pub(super) commented: FormatHint,
    /// Units in force for coordinates (set by commands, or once from comments/hint).
    pub(super) units: Option<Units>,
    /// Units in force at the first coordinate: the file's units for reporting and for
    /// tool sizes defined before any units statement.
    pub(super) first_units: Option<Units>,
    pub(super) format: Option<CoordinateFormat>,
    pub(super) used_format: Option<CoordinateFormat>,
    pub(super) stats: Option<DigitStats>,
    pub(super) incremental: bool,
    pub(super) origin: Point,
    pub(super) x: Option<f64>,
    pub(super) y: Option<f64>,
    pub(super) motion: Motion,
    pub(super) router_down: bool,
    pub(super) path: Vec<Point>,
    pub(super) path_tool: usize,
    pub(super) tools: Vec<ToolEntry>,
    pub(super) by_number: HashMap<u32, usize>,
    pub(super) selected: Option<Selected>,
    pub(super) last_hole: Option<Point>,
    pub(super) holes: Vec<Hole>,
    pub(super) slots: Vec<Slot>,
    pub(super) objects: usize,
    pub(super) plating_here: Option<bool>,
    pub(super) next_tool_plating: Option<bool>,
    pub(super) file_plating: Option<Option<bool>>,
    pub(super) tool_plating_notes: Vec<(u32, bool)>,
    pub(super) plating_ranges: Vec<(u32, bool)>,
    pub(super) suppressed_warnings: usize,
}

pub(super) type R<T> = Result<T, InputError>;

impl<'a> Reader<'a> {
    pub(crate) fn new(
        text: &'a str,
        file: &'a str,
        limits: &'a Limits,
        external: FormatHint,
    ) -> Self {
        Reader {
            file,
            text,
            limits,
            external,
            warnings: Vec::new(),
            warned_once: HashSet::new(),
            section: Section::Preamble,
            saw_header: false,
            saw_end: false,
            stated: FormatHint::default(),
            commented: FormatHint::default(),
            units: None,
            first_units: None,
            format: None,
            used_format: None,
            stats: None,
            incremental: false,
            origin: Point::new(0.0, 0.0),
            x: None,
            y: None,
            motion: Motion::Drill,
            router_down: false,
            path: Vec::new(),
            path_tool: 0,
            tools: Vec::new(),
            by_number: HashMap::new(),
            selected: None,
            last_hole: None,
            holes: Vec::new(),
            slots: Vec::new(),
            objects: 0,
            plating_here: None,
            next_tool_plating: None,
            file_plating: None,
            tool_plating_notes: Vec::new(),
            plating_ranges: Vec::new(),
            suppressed_warnings: 0,
        }
    }

    pub(super) fn err(&self, pos: Pos, message: impl Into<String>) -> InputError {
        InputError::new(self.file, pos, message)
    }

    pub(super) fn warn(&mut self, pos: Option<Pos>, message: impl Into<String>) {
        if self.warnings.len() < MAX_WARNINGS {
            self.warnings.push(Warning::new(self.file, pos, message));
        } else {
            self.suppressed_warnings += 1;
        }
    }

    /// Warns once per `key` for the whole file (repeated harmless oddities).
    pub(super) fn warn_once(
        &mut self,
        key: &'static str,
        pos: Option<Pos>,
        message: impl Into<String>,
    ) {
        if self.warned_once.insert(key) {
            self.warn(pos, message);
        }
    }

    pub(crate) fn run(mut self) -> R<DrillFile> {
        let text = self.text;
        for line in lex::lines(text) {
            let block =
                lex::block(line.text).map_err(|e| self.err(line.pos(e.offset), e.message))?;
            if self.section == Section::Ended {
                if !matches!(block, Block::Empty | Block::Comment(_) | Block::Percent) {
                    self.warn_once(
                        "after-end",
                        Some(line.pos(0)),
                        "text after the end of the program (M30/M00) is ignored",
                    );
                }
                continue;
            }
            match block {
                Block::Empty => {}
                Block::Comment(c) => self.comment(c),
                Block::Percent => {
                    if self.section == Section::Header {
                        self.section = Section::Body;
                    }
                }
                Block::Keyword { name, fields } => self.keyword(&name, &fields, &line)?,
                Block::Message { code } => self.message(code, &line)?,
                Block::Words { words, comment } => {
                    self.words(&words, &line)?;
                    if let Some(c) = comment {
                        self.comment(c);
                    }
                }
            }
        }
        self.finish()
    }

    // ---- comments and keywords -------------------------------------------------------

    fn comment(&mut self, text: &str) {
        match read_comment(text) {
            Some(CommentFact::FilePlating(p)) => self.file_plating = Some(p),
            Some(CommentFact::NextToolPlating(p)) => self.next_tool_plating = Some(p),
            Some(CommentFact::PlatingFromHere(p)) => self.plating_here = Some(p),
            Some(CommentFact::Format(h)) => {
                self.commented = h.or(self.commented);
                self.format = None;
            }
            Some(CommentFact::ToolPlating(n, p)) => self.tool_plating_notes.push((n, p)),
            Some(CommentFact::PlatingRange { first, plated }) => {
                self.plating_ranges.push((first, plated))
            }
            Some(CommentFact::DeleteAttributes) => self.next_tool_plating = None,
            None => {}
        }
    }

    fn enter_body_from_preamble(&mut self, pos: Pos) {
        if self.section == Section::Preamble {
            self.warn_once(
                "no-m48",
                Some(pos),
                "the file has no M48 header start; reading it as a program without a header",
            );
            self.section = Section::Body;
        }
    }

    fn keyword(&mut self, name: &str, fields: &[String], line: &Line) -> R<()> {
        let pos = line.pos(0);
        if self.section == Section::Preamble {
            self.enter_body_from_preamble(pos);
        }
        match name {
            "METRIC" | "INCH" => {
                let units = if name == "METRIC" {
                    Units::Millimetres
                } else {
                    Units::Inches
                };
                self.set_units(units);
                for f in fields {
                    match f.as_str() {
                        "" => {}
                        "LZ" => self.stated.zeros = Some(Zeros::LeadingKept),
                        "TZ" => self.stated.zeros = Some(Zeros::TrailingKept),
                        spec if !spec.is_empty() && spec.chars().all(|c| c == '0' || c == '.') => {
                            // `000.000`: zeros before the point are integer digits.
                            let (i, d) = spec.split_once('.').unwrap_or((spec, ""));
                            self.stated.integer_digits = Some(i.len().min(20) as u8);
                            self.stated.decimal_digits = Some(d.len().min(20) as u8);
                        }
                        other => self.warn(
                            Some(pos),
                            format!("unknown field '{other}' in the {name} statement is ignored"),
                        ),
                    }
                }
                self.format = None;
            }
            "FMAT" => match fields.first().map(String::as_str) {
                Some("2") | None => {}
                Some("1") => self.warn_once(
                    "fmat1",
                    Some(pos),
                    "FMAT,1 (the older Excellon command set) is read with the format 2 meaning of each code used here",
                ),
                Some(other) => self.warn(Some(pos), format!("unknown FMAT value '{other}' is ignored")),
            },
            "ICI" => {
                self.incremental = !matches!(fields.first().map(String::as_str), Some("OFF"));
            }
            // Allegro's and others' header-only comments without `;` would land here too.
            n if HARMLESS_KEYWORDS.contains(&n) => {}
            other => self.warn(
                Some(pos),
                format!("unknown header statement '{other}' is ignored (it does not look like a coordinate or tool command)"),
            ),
        }
        Ok(())
    }

    fn set_units(&mut self, units: Units) {
        if self.units != Some(units) {
            self.format = None;
        }
        self.units = Some(units);
        self.stated.units = Some(units);
    }

    fn message(&mut self, code: u32, line: &Line) -> R<()> {
        match code {
            45 | 47 => Ok(()),
            97 | 98 => Err(self.err(
                line.pos(0),
                "canned text (M97/M98) drills letters as holes; umbra cannot draw it, so the film would miss holes",
            )),
            _ => {
                self.warn(Some(line.pos(0)), format!("unknown message code M{code} is ignored"));
                Ok(())
            }
        }
    }

    // ---- words -----------------------------------------------------------------------

    fn words(&mut self, words: &[Word], line: &Line) -> R<()> {
        if words.is_empty() {
            return Ok(());
        }
        let first_pos = line.pos(words[0].offset);
        let mut groups = [Coords::default(), Coords::default()];
        let mut group = 0usize;
        let mut slot = false;
        let mut zero_set = false;
        let mut dwell = false;
        let mut repeat: Option<Word> = None;
        let mut tool: Option<Word> = None;
        let mut tool_params: Vec<Word> = Vec::new();
        let mut after: Vec<(u32, Pos)> = Vec::new();

        for w in words {
            let pos = line.pos(w.offset);
            if tool.is_some() && matches!(w.letter, b'C' | b'F' | b'S' | b'B' | b'H' | b'Z' | b'N')
            {
                tool_params.push(*w);
                continue;
            }
            match w.letter {
                b'X' | b'Y' | b'I' | b'J' | b'A' => {
                    let g = &mut groups[group];
                    let slot_ref = match w.letter {
                        b'X' => &mut g.x,
                        b'Y' => &mut g.y,
                        b'I' => &mut g.i,
                        b'J' => &mut g.j,
                        _ => &mut g.a,
                    };
                    if slot_ref.is_some() {
                        return Err(self.err(
                            pos,
                            format!(
                                "'{}' appears twice in one block; which value is meant is unclear",
                                w.letter as char
                            ),
                        ));
                    }
                    *slot_ref = Some(*w);
                }
                b'G' => {
                    let code = self.code(w, pos)?;
                    match code {
                        0 => {
                            self.end_path_if_down(pos, "a G00 rapid move");
                            self.motion = Motion::Rapid;
                        }
                        1 => self.motion = Motion::Linear,
                        2 => self.motion = Motion::Arc(Turn::Clockwise),
                        3 => self.motion = Motion::Arc(Turn::CounterClockwise),
                        4 => dwell = true,
                        5 | 81 => {
                            self.end_path_if_down(pos, "a return to drill mode");
                            self.motion = Motion::Drill;
                        }
                        85 => {
                            if slot {
                                return Err(self.err(pos, "two G85 in one block"));
                            }
                            slot = true;
                            group = 1;
                        }
                        90 => self.incremental = false,
                        91 => self.incremental = true,
                        93 => zero_set = true,
                        7 | 40 | 34 | 35 | 36 | 37 | 38 | 39 => {}
                        32 | 33 | 82 | 83 | 84 | 87 => {
                            return Err(self.err(
                                pos,
                                format!("G{code:02} is a canned drilling or routing cycle that umbra does not draw; the film would miss its holes"),
                            ))
                        }
                        41 | 42 => {
                            return Err(self.err(
                                pos,
                                format!("G{code} (cutter compensation) shifts the routed path by the tool radius; umbra does not apply it, so the film would be wrong"),
                            ))
                        }
                        _ => self.warn(Some(pos), format!("unknown code G{code:02} is ignored")),
                    }
                }
                b'M' => {
                    let code = self.code(w, pos)?;
                    match code {
                        48 => {
                            self.section = Section::Header;
                            self.saw_header = true;
                        }
                        95 => {
                            if self.section == Section::Header {
                                self.section = Section::Body;
                            }
                        }
                        71 => self.set_units(Units::Millimetres),
                        72 => self.set_units(Units::Inches),
                        15 | 16 | 17 | 30 | 0 => after.push((code, pos)),
                        6 | 9 | 18 | 50 | 51 | 52 => {}
                        1 | 2 | 8 | 25 | 70 | 80 | 90 | 99 => {
                            return Err(self.err(
                                pos,
                                format!("M{code:02} (patterns, step-and-repeat, mirroring or axis swap) moves holes in ways umbra does not apply; the film would be wrong"),
                            ))
                        }
                        _ => self.warn(Some(pos), format!("unknown code M{code:02} is ignored")),
                    }
                }
                b'T' => {
                    if tool.is_some() {
                        return Err(self.err(pos, "two tool codes in one block"));
                    }
                    tool = Some(*w);
                }
                b'R' => repeat = Some(*w),
                b'F' | b'S' => {} // feed and speed on motion blocks
                b'N' => {}        // block numbers
                other => self.warn(
                    Some(pos),
                    format!("unknown code '{}' is ignored", other as char),
                ),
            }
        }

        if self.section == Section::Preamble {
            self.enter_body_from_preamble(first_pos);
        }
        if let Some(t) = tool {
            self.tool_word(&t, &tool_params, line)?;
        }
        if self.section == Section::Header && (groups[0].any() || repeat.is_some()) {
            self.warn(
                Some(first_pos),
                "coordinates inside the header; the header is taken to end here",
            );
            self.section = Section::Body;
        }

        if dwell {
            // `G04 X…` waits; its number is a time, not a coordinate.
        } else if zero_set {
            let x = self.coord_opt(groups[0].x, line)?;
            let y = self.coord_opt(groups[0].y, line)?;
            self.origin = Point::new(x.unwrap_or(self.origin.x), y.unwrap_or(self.origin.y));
        } else if let Some(r) = repeat {
            self.repeat(&r, &groups[0], line)?;
        } else if slot {
            self.slot(&groups[0], &groups[1], line, first_pos)?;
        } else if groups[0].any() {
            self.motion_block(&groups[0], line, first_pos)?;
        }

        for (code, pos) in after {
            match code {
                15 => self.plunge(pos)?,
                16 | 17 => self.end_path(),
                _ => {
                    if self.router_down {
                        self.warn(
                            Some(pos),
                            "the program ends with the router down; the routed path is closed here",
                        );
                        self.end_path();
                    }
                    self.saw_end = true;
                    self.section = Section::Ended;
                }
            }
        }
        Ok(())
    }

    fn code(&self, w: &Word, pos: Pos) -> R<u32> {
        w.num
            .as_index()
            .filter(|&c| c < 1000)
            .map(|c| c as u32)
            .ok_or_else(|| {
                self.err(
                    pos,
                    format!(
                        "'{}' must be followed by a whole code number",
                        w.letter as char
                    ),
                )
            })
    }

    // ---- tools -----------------------------------------------------------------------

    fn tool_word(&mut self, t: &Word, params: &[Word], line: &Line) -> R<()> {
        let pos = line.pos(t.offset);
        let number = t
            .num
            .as_index()
            .filter(|&n| n <= u32::MAX as u64)
            .ok_or_else(|| self.err(pos, "a tool number must be a whole number (like T01)"))?
            as u32;
        let size = params.iter().find(|w| w.letter == b'C');
        if let Some(c) = size {
            let d = c.num.decimal_value();
            if c.num.negative || !d.is_finite() {
                return Err(self.err(
                    line.pos(c.offset),
                    format!("tool T{number:02} has a negative size"),
                ));
            }
            if d == 0.0 {
                self.warn(
                    Some(line.pos(c.offset)),
                    format!("tool T{number:02} has a size of 0"),
                );
            }
            if let Some(&old) = self.by_number.get(&number) {
                if self.tools[old].size != d {
                    self.warn(
                        Some(pos),
                        format!("tool T{number:02} is defined again with another size; holes after this use the new size"),
                    );
                }
            }
            let plated = self.next_tool_plating.take().or(self.plating_here);
            self.tools.push(ToolEntry {
                number,
                size: d,
                units: self.units,
                plated,
                pos,
            });
            self.by_number.insert(number, self.tools.len() - 1);
        } else if self.section == Section::Header && number != 0 {
            self.warn(
                Some(pos),
                format!("tool T{number:02} in the header has no size (C); it is not defined by this line"),
            );
        }
        if self.section != Section::Header {
            self.end_path_if_down(pos, "a tool change");
            self.selected = if number == 0 {
                None
            } else {
                Some(self.resolve_selection(number, t, pos))
            };
            self.last_hole = None;
        }
        Ok(())
    }

    /// Some writers append a two-digit offset number to the tool (`T0101` = tool 1,
    /// offset 1); when `T0101` is not defined but `T01` is, that is the tool meant.
    fn resolve_selection(&mut self, number: u32, t: &Word, pos: Pos) -> Selected {
        if !self.by_number.contains_key(&number) && t.num.whole.len() == 4 {
            let tool = number / 100;
            if self.by_number.contains_key(&tool) {
                self.warn(
                    Some(pos),
                    format!(
                        "T{} is read as tool T{:02} with offset {:02}",
                        t.num.whole,
                        tool,
                        number % 100
                    ),
                );
                return Selected { number: tool, pos };
            }
        }
        Selected { number, pos }
    }

    pub(super) fn require_tool(&self, pos: Pos) -> R<usize> {
        match self.selected {
            None => Err(self.err(pos, "a hole or path comes before any tool is selected (no T code)")),
            Some(sel) => self.by_number.get(&sel.number).copied().ok_or_else(|| {
                self.err(
                    pos,
                    format!(
                        "tool T{:02} (selected on line {}) is used but the tool table does not define its size (no T{:02}C… line)",
                        sel.number, sel.pos.line, sel.number
                    ),
                )
            }),
        }
    }

    // ---- end -------------------------------------------------------------------------

    fn finish(mut self) -> R<DrillFile> {
        if self.router_down {
            self.warn(
                None,
                "the file ends with the router down; the routed path is closed at its last point",
            );
            self.end_path();
        }
        if !self.saw_end {
            self.warn(
                None,
                "the file has no end code (M30 or M00); it may be cut short",
            );
        }
        if !self.saw_header && (!self.holes.is_empty() || !self.slots.is_empty()) {
            self.warn_once("no-m48", None, "the file has no M48 header start");
        }
        let file_units = self
            .first_units
            .or(self.units)
            .or(self.commented.units)
            .or(self.external.units);
        // Plating from notes after the table, tool ranges, then the file function.
        // (Maps and a sorted list keep this linear-ish for hostile files with many tools.)
        let notes: HashMap<u32, bool> = self.tool_plating_notes.iter().copied().collect();
        let mut ranges = self.plating_ranges.clone();
        ranges.sort_by_key(|r| r.0);
        ranges.dedup_by_key(|r| r.0);
        let mut tools = Vec::with_capacity(self.tools.len());
        for t in &self.tools {
            let units = match t.units.or(file_units) {
                Some(u) => u,
                None => {
                    return Err(self.err(
                        t.pos,
                        format!("the size of tool T{:02} cannot be read: the file never says whether it is in inches or millimetres", t.number),
                    ))
                }
            };
            let note = notes.get(&t.number).copied();
            let below = ranges.partition_point(|r| r.0 <= t.number);
            let range = below.checked_sub(1).map(|i| ranges[i].1);
            let plated = t.plated.or(note).or(range).or(self.file_plating.flatten());
            tools.push(Tool {
                number: t.number,
                diameter_mm: t.size * units.mm_per_unit(),
                plated,
            });
        }
        let plated = match self.file_plating {
            Some(p) => p,
            None => {
                let mut states = tools.iter().map(|t| t.plated);
                match states.next() {
                    Some(first) if states.all(|s| s == first) => first,
                    _ => None,
                }
            }
        };
        let mut bounds = crate::image::Bounds::EMPTY;
        for h in &self.holes {
            bounds.add_point(h.at);
        }
        for s in &self.slots {
            for &p in &s.path {
                bounds.add_point(p);
            }
        }
        if bounds.width().max(bounds.height()) > 2000.0 {
            self.warn(
                None,
                format!(
                    "the holes span {:.0} × {:.0} mm, more than any usual board; check the units and number format",
                    bounds.width(),
                    bounds.height()
                ),
            );
        }
        if self.suppressed_warnings > 0 {
            let n = self.suppressed_warnings;
            self.warnings.push(Warning::new(
                self.file,
                None,
                format!("{n} more warnings were not listed"),
            ));
        }
        Ok(DrillFile {
            tools,
            holes: self.holes,
            slots: self.slots,
            plated,
            inches: file_units == Some(Units::Inches),
            units: file_units,
            format: self.used_format,
            warnings: self.warnings,
        })
    }
}
