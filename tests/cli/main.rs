//! The command line's tests in one test binary: the built `sayso` binary as a user runs it, the fuzz targets
//! over their corpus, and the workspace's house rules (tidy).
//!
//! Owns: the module list and the helpers these modules share. Must not: hold tests of its own.

#[path = "../paths.rs"]
mod paths;
#[path = "../../fuzz/targets.rs"]
mod targets;

mod cli_demo;
mod cli_fix;
mod cli_pipes;
mod cli_unaries;
mod fuzz_corpus;
mod tidy;
