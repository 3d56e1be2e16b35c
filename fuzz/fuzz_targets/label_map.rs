//! cargo-fuzz target `label_map`: the body is `targets::label_map` (shared with the stable harness, `tests/cli/fuzz_corpus.rs`).
#![no_main]

#[path = "../targets.rs"]
mod targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| targets::label_map(data));
