pub mod font;
pub mod marks;
