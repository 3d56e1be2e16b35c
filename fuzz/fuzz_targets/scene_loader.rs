//! cargo-fuzz target `scene_loader`: the body is `targets::scene_loader` (shared with the stable harness, `tests/cli/fuzz_corpus.rs`).
#![no_main]

#[path = "../targets.rs"]
mod targets;

libfuzzer_sys::fuzz_target!(|data: &[u8]| targets::scene_loader(data));
