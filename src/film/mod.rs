//! A film: the artwork umbra adds (stroke font, registration targets, labels, frame marks)
//! and the composition and rendering of one film from a layer image and its recipe.

pub mod compose;
pub mod font;
pub mod marks;
