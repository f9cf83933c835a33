//! The `umbra` command line (being assembled: the readers land first).
fn main() {
    eprintln!("umbra: the command line is being assembled");
    std::process::exit(2);
}
