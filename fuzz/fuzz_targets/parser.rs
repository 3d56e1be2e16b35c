//! cargo-fuzz target `parser`: the body is `targets::parser` (shared with the stable harness, `tests/cli/fuzz_corpus.rs`).
#![no_main]

#[path = "../targets.rs"]
mod targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| targets::parser(data));
