pub mod compose;
pub mod font;
pub mod marks;
