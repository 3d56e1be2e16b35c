//! The fuzz targets on stable Rust, in `cargo test`: every target of `fuzz/` (`fuzz/targets.rs`) runs over
//! its committed corpus (`fuzz/corpus/<target>/`) and then over seeded mutations of it (bit flips, byte
//! changes, inserted and deleted runs, truncations, splices of two seeds, boundary numbers written into
//! the text). Deterministic: the same seed gives the same inputs, so a failure here is reproducible, and the
//! input that failed is written to `target/fuzz-failures/` to be added to the corpus.
//!
//! `SAYSO_FUZZ_MUTATIONS` sets the mutations per target (default 400; e.g. 20000 for a longer run). The
//! cargo-fuzz targets (nightly, coverage-guided) run the same bodies: `DEVELOPERS.md` has the command.

use crate::paths;
use crate::targets;

use std::path::PathBuf;

use sayso_core::random::SplitMix64;

/// Seeded edits of corpus inputs, drawn from the workspace's one generator (`sayso_core::random`).
struct Mutator(SplitMix64);

impl Mutator {
    fn new(seed: u64) -> Mutator {
        Mutator(SplitMix64::new(seed))
    }

    fn next(&mut self) -> u64 {
        self.0.next_u64()
    }

    fn below(&mut self, bound: usize) -> usize {
        (self.next() % bound.max(1) as u64) as usize
    }

    /// One to four edits of `seed` (with `other` for splices).
    fn mutate(&mut self, seed: &[u8], other: &[u8]) -> Vec<u8> {
        const BOUNDARIES: [&[u8]; 8] = [
            b"0",
            b"-1",
            b"4294967295",
            b"18446744073709551616",
            b"1e308",
            b"NaN",
            b"\xff\xff\xff\xff",
            b"\x00\x00\x00\x00",
        ];
        let mut data = seed.to_vec();
        for _ in 0..1 + self.below(4) {
            let at = self.below(data.len() + 1);
            match self.below(8) {
                0 if !data.is_empty() => {
                    let index = at.min(data.len() - 1);
                    data[index] ^= 1 << self.below(8);
                }
                1 if !data.is_empty() => {
                    let index = at.min(data.len() - 1);
                    data[index] = self.next() as u8;
                }
                2 => {
                    let run: Vec<u8> = (0..1 + self.below(16)).map(|_| self.next() as u8).collect();
                    data.splice(at..at, run);
                }
                3 => {
                    let end = (at + 1 + self.below(32)).min(data.len());
                    data.drain(at.min(end)..end);
                }
                4 => data.truncate(at),
                5 => {
                    let from = self.below(other.len() + 1);
                    data.truncate(at);
                    data.extend_from_slice(&other[from..]);
                }
                6 => {
                    let boundary = BOUNDARIES[self.below(BOUNDARIES.len())];
                    data.splice(at..at, boundary.iter().copied());
                }
                _ => {
                    // Repeat a run: grows lengths, counts and nesting.
                    let end = (at + 1 + self.below(64)).min(data.len());
                    let run = data[at.min(end)..end].to_vec();
                    for _ in 0..1 + self.below(8) {
                        data.splice(at..at, run.iter().copied());
                    }
                }
            }
        }
        data
    }
}

fn corpus(target: &str) -> Vec<(PathBuf, Vec<u8>)> {
    let folder = paths::repo().join("fuzz/corpus").join(target);
    let mut files: Vec<PathBuf> = std::fs::read_dir(&folder)
        .unwrap_or_else(|error| panic!("{}: {error}", folder.display()))
        .map(|entry| entry.unwrap().path())
        .collect();
    files.sort();
    files
        .into_iter()
        .map(|path| {
            let bytes = std::fs::read(&path).unwrap();
            (path, bytes)
        })
        .collect()
}

/// Runs `body` on `input`; on a panic, writes the input where it can be added to the corpus and fails.
fn run_one(target: &str, body: fn(&[u8]), input: &[u8], label: &str) {
    let outcome = std::panic::catch_unwind(|| body(input));
    if outcome.is_err() {
        let folder = paths::repo().join("target/fuzz-failures");
        let _ = std::fs::create_dir_all(&folder);
        let path = folder.join(format!("{target}-{label}"));
        let _ = std::fs::write(&path, input);
        panic!(
            "fuzz target {target} panicked on {label} (input written to {})",
            path.display()
        );
    }
}

#[test]
fn every_fuzz_target_survives_its_corpus_and_seeded_mutations() {
    let mutations: usize = std::env::var("SAYSO_FUZZ_MUTATIONS")
        .ok()
        .and_then(|text| text.parse().ok())
        .unwrap_or(400);
    for (index, (target, body)) in targets::TARGETS.iter().enumerate() {
        let seeds = corpus(target);
        assert!(!seeds.is_empty(), "fuzz/corpus/{target} holds no seed");
        for (path, bytes) in &seeds {
            let name = path.file_name().unwrap().to_string_lossy().to_string();
            run_one(target, *body, bytes, &name);
        }
        run_one(target, *body, b"", "empty");
        let mut mutator = Mutator::new(0x5A15_0024 + index as u64);
        for round in 0..mutations {
            let seed = &seeds[mutator.below(seeds.len())].1;
            let other = &seeds[mutator.below(seeds.len())].1;
            let input = mutator.mutate(seed, other);
            run_one(target, *body, &input, &format!("mutation-{round}"));
        }
    }
}

#[test]
fn the_mutator_is_deterministic_and_changes_its_input() {
    let seed = b"there are four books on the shelf".to_vec();
    let first: Vec<Vec<u8>> = {
        let mut mutator = Mutator::new(7);
        (0..50).map(|_| mutator.mutate(&seed, b"{}")).collect()
    };
    let again: Vec<Vec<u8>> = {
        let mut mutator = Mutator::new(7);
        (0..50).map(|_| mutator.mutate(&seed, b"{}")).collect()
    };
    assert_eq!(first, again);
    assert!(first.iter().filter(|input| **input != seed).count() >= 45);
}

/// Every cargo-fuzz target is a wrapper that calls its body here and nothing else, and every body here has
/// its cargo-fuzz target: the list in `targets::TARGETS`, the files in `fuzz/fuzz_targets/` and the
/// manifest's `[[bin]]` entries name the same targets.
#[test]
fn every_fuzz_target_is_one_body_in_targets_rs() {
    let fuzz = paths::repo().join("fuzz");
    let mut files: Vec<String> = std::fs::read_dir(fuzz.join("fuzz_targets"))
        .unwrap()
        .map(|entry| entry.unwrap().path())
        .filter(|path| path.extension().is_some_and(|extension| extension == "rs"))
        .map(|path| path.file_stem().unwrap().to_string_lossy().to_string())
        .collect();
    files.sort();
    let mut listed: Vec<String> = targets::TARGETS
        .iter()
        .map(|(name, _)| name.to_string())
        .collect();
    listed.sort();
    assert_eq!(files, listed, "fuzz/fuzz_targets/ against targets::TARGETS");
    let manifest = std::fs::read_to_string(fuzz.join("Cargo.toml")).unwrap();
    for name in &listed {
        assert!(
            manifest.contains(&format!(
                "name = \"{name}\"\npath = \"fuzz_targets/{name}.rs\""
            )),
            "fuzz/Cargo.toml has no [[bin]] for {name}"
        );
        let wrapper =
            std::fs::read_to_string(fuzz.join(format!("fuzz_targets/{name}.rs"))).unwrap();
        let code: Vec<&str> = wrapper
            .lines()
            .filter(|line| !line.starts_with("//") && !line.trim().is_empty())
            .collect();
        assert_eq!(
            code,
            [
                "#![no_main]",
                "#[path = \"../targets.rs\"]",
                "mod targets;",
                &format!("libfuzzer_sys::fuzz_target!(|data: &[u8]| targets::{name}(data));"),
            ],
            "fuzz/fuzz_targets/{name}.rs"
        );
    }
}
