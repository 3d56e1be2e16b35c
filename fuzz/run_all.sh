#!/usr/bin/env bash
# Runs every cargo-fuzz target for a bounded time each (default 60 s), from the repository root:
#   cargo install cargo-fuzz && rustup toolchain install nightly
#   bash fuzz/run_all.sh 60
# Each target starts from its committed corpus in fuzz/corpus/<target>/ (new inputs it finds go there too:
# minimise them into it with libFuzzer's -set_cover_merge=1 before committing, as DEVELOPERS.md says). A crash stops the run and leaves the input in
# fuzz/artifacts/<target>/; `-rss_limit_mb` makes unbounded growth a failure too. Builds into target/fuzz
# (about 40 min at load 7 the first time, 2.4 GB); `git clean -f fuzz/corpus` drops the inputs it added.
set -euo pipefail
seconds="${1:-60}"
cd "$(dirname "$0")/.."
# The targets are the files in fuzz/fuzz_targets/ (tests/cli/fuzz_corpus.rs checks them against fuzz/targets.rs).
for file in fuzz/fuzz_targets/*.rs; do
    target="$(basename "$file" .rs)"
    echo "== $target (${seconds} s)"
    cargo +nightly fuzz run --target-dir target/fuzz "$target" -- -max_total_time="$seconds" -rss_limit_mb=1024 -max_len=65536
done
