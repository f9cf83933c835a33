//! Writes the demo board, "Wren soil-moisture node" rev B of the (fictional) Larkspur
//! Community Workshop, into `examples/wren-node/`:
//!
//! ```text
//! cargo run --example make_demo_board
//! ```
//!
//! The design lives in the library (`umbra::synth::demo`) so that tests can check its design
//! rules and that the committed files match what this program writes.

use std::path::PathBuf;

fn main() -> std::io::Result<()> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/wren-node");
    std::fs::create_dir_all(&dir)?;
    let board = umbra::synth::wren_node();
    for (name, text) in umbra::synth::demo_files(&board) {
        let path = dir.join(&name);
        // Write to a temporary file first so an interrupted run leaves no half file.
        let tmp = dir.join(format!(".{name}.tmp"));
        std::fs::write(&tmp, text.as_bytes())?;
        std::fs::rename(&tmp, &path)?;
        println!("wrote {} ({} bytes)", path.display(), text.len());
    }
    Ok(())
}
