//! cargo-fuzz target `image`: the body is `targets::image` (shared with the stable harness, `tests/cli/fuzz_corpus.rs`).
#![no_main]

#[path = "../targets.rs"]
mod targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| targets::image(data));
