//! cargo-fuzz target `wire_json`: the body is `targets::wire_json` (shared with the stable harness, `tests/cli/fuzz_corpus.rs`).
#![no_main]

#[path = "../targets.rs"]
mod targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| targets::wire_json(data));
