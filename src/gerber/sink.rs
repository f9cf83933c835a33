//! Where objects go: the layer image, or an open block aperture (`%AB`, spec 2024.05 §4.11.2)
//! or step-and-repeat (`%SR`, §4.11.1) being collected, nested in a stack.
//!
//! Every object created counts against `Limits::max_objects`, including copies made by
//! step-and-repeat and block flashes, so hostile nesting cannot blow up memory or time.

use super::aperture::Aperture;
use super::interpret::Interpreter;
use crate::diag::{InputError, Pos, Warning};
use crate::image::{ImageStats, Object, Point, Similarity};

#[derive(Debug)]
pub(super) enum FrameKind {
    Block {
        code: u32,
        pos: Pos,
    },
    StepRepeat {
        nx: u32,
        ny: u32,
        step: Point,
        pos: Pos,
    },
}

#[derive(Debug)]
pub(super) struct Frame {
    kind: FrameKind,
    objects: Vec<Object>,
}

/// The image plus the stack of open blocks and step-and-repeats.
#[derive(Debug, Default)]
pub(super) struct Sinks {
    image: Vec<Object>,
    stack: Vec<Frame>,
    total: usize,
    pub stats: ImageStats,
}

impl Sinks {
    pub fn new() -> Sinks {
        Sinks::default()
    }

    /// Objects created so far (all sinks, all copies).
    pub fn total_objects(&self) -> usize {
        self.total
    }

    fn block_depth(&self) -> usize {
        self.stack
            .iter()
            .filter(|f| matches!(f.kind, FrameKind::Block { .. }))
            .count()
    }

    fn target(&mut self) -> &mut Vec<Object> {
        match self.stack.last_mut() {
            Some(f) => &mut f.objects,
            None => &mut self.image,
        }
    }

    /// Counts `n` new objects against the limit.
    pub fn reserve(
        &mut self,
        n: usize,
        max: usize,
        file: &str,
        pos: Pos,
    ) -> Result<(), InputError> {
        self.total = self.total.saturating_add(n);
        if self.total > max {
            return Err(InputError::new(
                file,
                pos,
                format!(
                    "the image would have more than {max} objects (limit max_objects); step-and-repeat or block apertures multiply too much"
                ),
            ));
        }
        Ok(())
    }

    pub fn push(
        &mut self,
        obj: Object,
        max: usize,
        file: &str,
        pos: Pos,
    ) -> Result<(), InputError> {
        self.reserve(1, max, file, pos)?;
        self.target().push(obj);
        Ok(())
    }

    /// Adds already counted objects.
    fn extend(&mut self, objs: impl IntoIterator<Item = Object>) {
        self.target().extend(objs);
    }

    /// Closes what is still open at the end of the file.
    pub fn finish(
        &mut self,
        file: &str,
        pos: Pos,
        warnings: &mut Vec<Warning>,
    ) -> Result<(), InputError> {
        while let Some(top) = self.stack.last() {
            match top.kind {
                FrameKind::Block { code, pos: open } => {
                    return Err(InputError::new(
                        file,
                        open,
                        format!("block aperture D{code} opened here is never closed with %AB*%"),
                    ));
                }
                FrameKind::StepRepeat { pos: open, .. } => {
                    warnings.push(Warning::new(
                        file,
                        Some(open),
                        "the step-and-repeat opened here is not closed with %SR*%; closed at the end of the file",
                    ));
                    let frame = self.stack.pop().expect("checked");
                    self.replicate(frame);
                }
            }
        }
        let _ = pos;
        Ok(())
    }

    pub fn take_image(&mut self) -> Vec<Object> {
        std::mem::take(&mut self.image)
    }

    /// Places the copies of a closed step-and-repeat into the parent sink. Copies are made
    /// row by row (Y outer, X inner), each copy's objects in their original order, so clear
    /// objects of a later copy clear earlier copies (spec §4.11.1; the copy order is from
    /// memory).
    fn replicate(&mut self, frame: Frame) {
        let FrameKind::StepRepeat { nx, ny, step, .. } = frame.kind else {
            return;
        };
        let mut out = Vec::with_capacity(frame.objects.len() * (nx as usize) * (ny as usize));
        for iy in 0..ny {
            for ix in 0..nx {
                let t = Similarity::translate(step.x * ix as f64, step.y * iy as f64);
                if ix == 0 && iy == 0 {
                    out.extend(frame.objects.iter().cloned());
                } else {
                    out.extend(frame.objects.iter().map(|o| Object {
                        polarity: o.polarity,
                        shape: o.shape.transformed(&t),
                    }));
                }
            }
        }
        self.extend(out);
    }
}

impl Interpreter<'_> {
    pub(super) fn step_repeat_open(
        &mut self,
        pos: Pos,
        nx: u32,
        ny: u32,
        dx: f64,
        dy: f64,
    ) -> Result<(), InputError> {
        if matches!(
            self.sinks.stack.last(),
            Some(Frame {
                kind: FrameKind::StepRepeat { .. },
                ..
            })
        ) {
            self.warn(pos, "a new %SR opens before the previous one was closed with %SR*%; the previous one is closed here");
            self.step_repeat_close(pos)?;
        }
        if nx == 0 || ny == 0 {
            return Err(self.error(pos, "%SR repeat counts must be at least 1"));
        }
        let copies = nx as u64 * ny as u64;
        if copies > self.limits.max_step_repeat {
            return Err(self.error(
                pos,
                format!(
                    "%SR asks for {nx} × {ny} = {copies} copies, more than the limit of {} (max_step_repeat)",
                    self.limits.max_step_repeat
                ),
            ));
        }
        if self.region.is_some() {
            return Err(self.error(pos, "%SR inside a region (G36…G37) is not allowed"));
        }
        let k = self.unit_factor(pos)?;
        let v = self.image_transform.vector(dx, dy, false);
        let step = Point::new(v.x * k, v.y * k);
        self.sinks.stack.push(Frame {
            kind: FrameKind::StepRepeat { nx, ny, step, pos },
            objects: Vec::new(),
        });
        Ok(())
    }

    pub(super) fn step_repeat_close(&mut self, pos: Pos) -> Result<(), InputError> {
        match self.sinks.stack.last() {
            Some(Frame {
                kind: FrameKind::StepRepeat { nx, ny, .. },
                objects,
            }) => {
                let extra = objects
                    .len()
                    .saturating_mul((*nx as usize * *ny as usize).saturating_sub(1));
                self.sinks
                    .reserve(extra, self.limits.max_objects, self.file, pos)?;
                let frame = self.sinks.stack.pop().expect("checked");
                self.sinks.replicate(frame);
                Ok(())
            }
            _ => {
                self.warn(
                    pos,
                    "%SR*% closes a step-and-repeat that is not open; ignored",
                );
                Ok(())
            }
        }
    }

    pub(super) fn block_open(&mut self, pos: Pos, code: u32) -> Result<(), InputError> {
        if self.region.is_some() {
            return Err(self.error(pos, "%AB inside a region (G36…G37) is not allowed"));
        }
        if self.sinks.block_depth() >= self.limits.max_block_depth {
            return Err(self.error(
                pos,
                format!(
                    "block apertures are nested more than {} deep (limit max_block_depth)",
                    self.limits.max_block_depth
                ),
            ));
        }
        self.sinks.stack.push(Frame {
            kind: FrameKind::Block { code, pos },
            objects: Vec::new(),
        });
        Ok(())
    }

    pub(super) fn block_close(&mut self, pos: Pos) -> Result<(), InputError> {
        match self.sinks.stack.last() {
            Some(Frame {
                kind: FrameKind::Block { .. },
                ..
            }) => {}
            Some(Frame {
                kind: FrameKind::StepRepeat { .. },
                ..
            }) => {
                return Err(self.error(
                    pos,
                    "%AB*% closes a block while a step-and-repeat inside it is still open",
                ));
            }
            None => return Err(self.error(pos, "%AB*% without an open block aperture")),
        }
        if let Some(mut region) = self.region.take() {
            self.warn(
                pos,
                "a region is still open when the block aperture closes; it is closed",
            );
            self.close_contour(&mut region, pos)?;
        }
        let frame = self.sinks.stack.pop().expect("checked");
        let FrameKind::Block { code, .. } = frame.kind else {
            unreachable!()
        };
        // Block contents are relative to the file origin (§4.11.2); store them relative to
        // where the origin lands in millimetres.
        let k = self.unit_factor(pos).unwrap_or(1.0);
        let origin = self.to_mm(Point::new(0.0, 0.0), k);
        let objects = if origin == Point::new(0.0, 0.0) {
            frame.objects
        } else {
            let t = Similarity::translate(-origin.x, -origin.y);
            frame
                .objects
                .into_iter()
                .map(|o| Object {
                    polarity: o.polarity,
                    shape: o.shape.transformed(&t),
                })
                .collect()
        };
        self.insert_aperture(code, Aperture::Block { objects }, pos);
        Ok(())
    }
}
