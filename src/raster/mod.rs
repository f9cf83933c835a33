//! Band rasterizer of the normalized layer image into 1-bit device bitmaps, and exact
//! Euclidean morphology (edge offset). See `docs/rendering.md`.
//!
//! - [`Bitmap`]: 1 bit per pixel, rows of `u64` words, MSB-first.
//! - [`DeviceMap`]: board mm → device pixels of one film (separate x and y resolution,
//!   mirror, stretch correction), serializable as an explicit affine.
//! - [`render`]: objects in order → bitmap, by pixel centres, in parallel bands.
//! - [`design_window`]: the spans [`render`] paints in a window ([`DesignSpans`]), which
//!   paint into which object each pixel shows.
//! - [`morphology`]: grow/shrink the composed film by a disc, opening and closing.

mod bitmap;
mod design;
mod device;
pub mod morphology;
mod render;
mod shapes;
pub(crate) mod shift;
mod spans;

pub(crate) use bitmap::fill_row_span;
pub use bitmap::Bitmap;
pub use design::{DesignSpans, Run};
pub use device::{Affine, DeviceMap, FilmTooLarge, MM_PER_INCH};
pub use render::{design_window, render, render_with, RenderOptions};
