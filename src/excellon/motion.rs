//! Coordinates, holes, slots, repeats and routed paths: the geometry half of the
//! interpreter in `program.rs`.

use super::format::{resolve, CoordinateFormat, DigitStats, Units};
use super::lex::{self, Block, Line, Word};
use super::program::{Coords, Motion, Reader, R};
use super::route;
use super::{Hole, Slot};
use crate::diag::Pos;
use crate::image::{Point, Turn};

impl Reader<'_> {
    // ---- coordinates -----------------------------------------------------------------

    pub(super) fn units_now(&mut self, pos: Pos) -> R<Units> {
        if let Some(u) = self.units {
            return Ok(u);
        }
        let from = self.commented.units.or(self.external.units);
        match from {
            Some(u) => {
                self.units = Some(u);
                Ok(u)
            }
            None => Err(self.err(
                pos,
                "a coordinate comes before the file says its units (no INCH/METRIC, M71/M72 or format comment); it cannot be placed",
            )),
        }
    }

    pub(super) fn digit_stats(&mut self) -> DigitStats {
        if let Some(s) = self.stats {
            return s;
        }
        let mut st = DigitStats::default();
        for line in lex::lines(self.text) {
            if let Ok(Block::Words { words, .. }) = lex::block(line.text) {
                let dwell = words
                    .iter()
                    .any(|w| w.letter == b'G' && w.num.as_index() == Some(4));
                if dwell {
                    continue;
                }
                for w in words
                    .iter()
                    .filter(|w| matches!(w.letter, b'X' | b'Y' | b'I' | b'J' | b'A'))
                {
                    st.add(&w.num);
                }
            }
        }
        self.stats = Some(st);
        st
    }

    pub(super) fn number_format(&mut self, units: Units, pos: Pos) -> CoordinateFormat {
        if let Some(f) = self.format {
            return f;
        }
        let stated = self.stated.or(self.commented).or(self.external);
        let stats = self.digit_stats();
        let (f, note) = resolve(units, &stated, &stats);
        if let Some(note) = note {
            self.warn_once("format-inferred", Some(pos), note);
        }
        self.format = Some(f);
        f
    }

    /// A coordinate word's value in mm (before origin and incremental handling).
    pub(super) fn value_mm(&mut self, w: &Word, line: &Line) -> R<f64> {
        let pos = line.pos(w.offset);
        let units = self.units_now(pos)?;
        if self.first_units.is_none() {
            self.first_units = Some(units);
        }
        let v = if w.num.fraction.is_some() {
            w.num.decimal_value()
        } else {
            let f = self.number_format(units, pos);
            self.used_format = Some(f);
            f.value(&w.num)
        };
        let mm = v * units.mm_per_unit();
        if !mm.is_finite() || mm.abs() > 1.0e7 {
            return Err(self.err(pos, "a coordinate is out of range (over 10 km)"));
        }
        Ok(mm)
    }

    pub(super) fn coord_opt(&mut self, w: Option<Word>, line: &Line) -> R<Option<f64>> {
        w.map(|w| self.value_mm(&w, line)).transpose()
    }

    /// The point a group of coordinates names, from `base` (missing axes keep the base).
    pub(super) fn target(
        &mut self,
        c: &Coords,
        base: (Option<f64>, Option<f64>),
        line: &Line,
        pos: Pos,
    ) -> R<Point> {
        let x = self.axis(c.x, base.0, self.origin.x, 'X', line, pos)?;
        let y = self.axis(c.y, base.1, self.origin.y, 'Y', line, pos)?;
        Ok(Point::new(x, y))
    }

    pub(super) fn axis(
        &mut self,
        w: Option<Word>,
        base: Option<f64>,
        origin: f64,
        name: char,
        line: &Line,
        pos: Pos,
    ) -> R<f64> {
        match (w, self.incremental) {
            (Some(w), false) => Ok(origin + self.value_mm(&w, line)?),
            (Some(w), true) => Ok(base.unwrap_or(origin) + self.value_mm(&w, line)?),
            (None, true) => Ok(base.unwrap_or(origin)),
            (None, false) => base.ok_or_else(|| {
                self.err(pos, format!("{name} is missing and has no earlier value to keep; the position is unknown"))
            }),
        }
    }

    pub(super) fn count_objects(&mut self, n: usize, pos: Pos) -> R<()> {
        self.objects = self.objects.saturating_add(n);
        if self.objects > self.limits.max_objects {
            return Err(self.err(
                pos,
                format!(
                    "the file has more than {} holes and path points (the limit max_objects)",
                    self.limits.max_objects
                ),
            ));
        }
        Ok(())
    }

    pub(super) fn add_hole(&mut self, tool: usize, at: Point, pos: Pos) -> R<()> {
        self.count_objects(1, pos)?;
        self.holes.push(Hole { tool, at });
        self.last_hole = Some(at);
        Ok(())
    }

    pub(super) fn motion_block(&mut self, c: &Coords, line: &Line, pos: Pos) -> R<()> {
        let start = (self.x, self.y);
        let to = self.target(c, start, line, pos)?;
        match self.motion {
            Motion::Drill => {
                if c.i.is_some() || c.j.is_some() || c.a.is_some() {
                    self.warn(Some(pos), "arc words (I, J, A) in drill mode are ignored");
                }
                let tool = self.require_tool(pos)?;
                self.add_hole(tool, to, pos)?;
            }
            Motion::Rapid => {}
            Motion::Linear | Motion::Arc(_) if !self.router_down => {
                self.warn_once(
                    "cut-up",
                    Some(pos),
                    "a cutting move (G01/G02/G03) with the router up (no M15) cuts nothing; read as a plain move",
                );
            }
            Motion::Linear => {
                self.count_objects(1, pos)?;
                self.path.push(to);
            }
            Motion::Arc(turn) => {
                let from = self.path.last().copied().unwrap_or(to);
                self.arc(from, to, turn, c, line, pos)?;
            }
        }
        self.x = Some(to.x);
        self.y = Some(to.y);
        Ok(())
    }

    pub(super) fn arc(
        &mut self,
        from: Point,
        to: Point,
        turn: Turn,
        c: &Coords,
        line: &Line,
        pos: Pos,
    ) -> R<()> {
        let centre = if let Some(a) = c.a {
            let r = self.value_mm(&a, line)?;
            route::centre_from_radius(from, to, r, turn, route::FLATTEN_TOLERANCE_MM).ok_or_else(|| {
                self.err(
                    pos,
                    "no arc of this radius (A) joins these points (the radius is shorter than half the distance, or the points coincide)",
                )
            })?
        } else if c.i.is_some() || c.j.is_some() {
            // I and J give the centre relative to the arc's start (from memory).
            let i = self.coord_opt(c.i, line)?.unwrap_or(0.0);
            let j = self.coord_opt(c.j, line)?.unwrap_or(0.0);
            let centre = Point::new(from.x + i, from.y + j);
            let (r0, r1) = route::radii(from, to, centre);
            if (r0 - r1).abs() > 0.005_f64.max(1e-3 * r0) {
                self.warn(
                    Some(pos),
                    format!("arc end is {:.4} mm off the circle of its start; the radius is blended along the arc", (r0 - r1).abs()),
                );
            }
            centre
        } else {
            return Err(self.err(
                pos,
                "an arc (G02/G03) needs a radius (A) or a centre (I, J)",
            ));
        };
        let r = centre.dist(from).max(centre.dist(to));
        let sweep = crate::image::arc_sweep(from, to, centre, turn);
        let n = route::chord_count(r, sweep);
        let budget = self.limits.max_objects.saturating_sub(self.objects) as u64;
        if n > budget {
            return Err(self.err(
                pos,
                "this arc needs more path points than the limit max_objects allows",
            ));
        }
        self.count_objects(n as usize, pos)?;
        self.path.extend(route::flatten(from, to, centre, turn, n));
        Ok(())
    }

    pub(super) fn slot(&mut self, a: &Coords, b: &Coords, line: &Line, pos: Pos) -> R<()> {
        let tool = self.require_tool(pos)?;
        // Without start coordinates the slot starts at the current position.
        let start = self.target(a, (self.x, self.y), line, pos)?;
        let end = self.target(b, (Some(start.x), Some(start.y)), line, pos)?;
        if start.dist(end) <= 1e-9 {
            // A slot of zero length is a round hole of the tool (EasyEDA writes these).
            self.add_hole(tool, start, pos)?;
        } else {
            self.count_objects(2, pos)?;
            self.slots.push(Slot {
                tool,
                path: vec![start, end],
            });
            self.last_hole = None;
        }
        self.x = Some(end.x);
        self.y = Some(end.y);
        Ok(())
    }

    pub(super) fn repeat(&mut self, r: &Word, step: &Coords, line: &Line) -> R<()> {
        let pos = line.pos(r.offset);
        let count = r
            .num
            .as_index()
            .ok_or_else(|| self.err(pos, "R must be followed by a whole repeat count"))?;
        if count > self.limits.max_step_repeat {
            return Err(self.err(
                pos,
                format!(
                    "repeat count {count} is over the limit of {} (max_step_repeat)",
                    self.limits.max_step_repeat
                ),
            ));
        }
        let mut at = self.last_hole.ok_or_else(|| {
            self.err(
                pos,
                "R repeats the last drilled hole, but no hole comes before it with this tool",
            )
        })?;
        // The step is always an increment from the previous hole (from memory).
        let dx = self.coord_opt(step.x, line)?.unwrap_or(0.0);
        let dy = self.coord_opt(step.y, line)?.unwrap_or(0.0);
        let tool = self.require_tool(pos)?;
        if (count as usize).saturating_add(self.objects) > self.limits.max_objects {
            return Err(self.err(
                pos,
                format!(
                    "the repeat would make more than {} holes (the limit max_objects)",
                    self.limits.max_objects
                ),
            ));
        }
        for _ in 0..count {
            at = Point::new(at.x + dx, at.y + dy);
            self.add_hole(tool, at, pos)?;
        }
        self.x = Some(at.x);
        self.y = Some(at.y);
        Ok(())
    }

    // ---- routing ---------------------------------------------------------------------

    pub(super) fn plunge(&mut self, pos: Pos) -> R<()> {
        if self.motion == Motion::Drill {
            self.warn(Some(pos), "M15 (router down) outside rout mode is ignored");
            return Ok(());
        }
        if self.router_down {
            return Ok(());
        }
        let (Some(x), Some(y)) = (self.x, self.y) else {
            return Err(self.err(pos, "M15 (router down) before any position is known"));
        };
        self.path_tool = self.require_tool(pos)?;
        self.count_objects(1, pos)?;
        self.path = vec![Point::new(x, y)];
        self.router_down = true;
        Ok(())
    }

    pub(super) fn end_path(&mut self) {
        if !self.router_down {
            return;
        }
        self.router_down = false;
        let path = std::mem::take(&mut self.path);
        if path.len() >= 2 {
            self.slots.push(Slot {
                tool: self.path_tool,
                path,
            });
            self.last_hole = None;
        } else if let Some(&p) = path.first() {
            // A plunge without a move drills one hole.
            self.holes.push(Hole {
                tool: self.path_tool,
                at: p,
            });
        }
    }

    pub(super) fn end_path_if_down(&mut self, pos: Pos, why: &str) {
        if self.router_down {
            self.warn(
                Some(pos),
                format!(
                    "{why} with the router down (no M16/M17 before it); the routed path ends here"
                ),
            );
            self.end_path();
        }
    }
}
