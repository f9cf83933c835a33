//! Synthetic fabrication data: the demo board (our own invented "Wren soil-moisture node")
//! and a deterministic bench board for performance measurements, plus the small Gerber and
//! Excellon writers both use.

pub mod bench;
pub mod demo;
mod demo_files;
pub mod font;
pub mod gerber_writer;

pub use bench::{bench_board, BenchBoard};
pub use demo::{wren_node, WrenNode};
pub use demo_files::demo_files;
