//! Benchmark: utterances per second through the language parser over the whole corpus, single thread,
//! with the ratio to spaCy's blank English tokenizer plus a rule Matcher on the same corpus (timed by
//! tests/fixtures/language/time_spacy.py, figure in tests/fixtures/language/spacy_timing.json).
//! Goal: at least 50,000 utterances per second.

use std::hint::black_box;
use std::time::Instant;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use sayso_core::language::Grammar;

fn corpus() -> Vec<String> {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/language/corpus.jsonl"
    ))
    .expect("corpus file");
    text.lines()
        .filter(|line| !line.trim().is_empty())
        .map(|line| {
            let value: serde_json::Value = serde_json::from_str(line).expect("corpus line");
            match (value.get("u"), value.get("repeat")) {
                (Some(text), _) => text.as_str().unwrap_or_default().to_string(),
                (None, Some(repeat)) => {
                    let text = repeat[0].as_str().unwrap_or_default();
                    text.repeat(repeat[1].as_u64().unwrap_or(1) as usize)
                }
                _ => String::new(),
            }
        })
        .collect()
}

fn spacy_rate() -> Option<f64> {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/language/spacy_timing.json"
    ))
    .ok()?;
    let value: serde_json::Value = serde_json::from_str(&text).ok()?;
    value.get("utterances_per_second")?.as_f64()
}

fn bench_language(criterion: &mut Criterion) {
    let grammar = Grammar::embedded().expect("embedded grammar");
    let texts = corpus();
    let mut group = criterion.benchmark_group("language");
    group.throughput(Throughput::Elements(texts.len() as u64));
    group.bench_function("parse_corpus", |bencher| {
        bencher.iter(|| {
            for text in &texts {
                let _ = black_box(grammar.parse(black_box(text), None));
            }
        })
    });
    group.finish();

    // The headline figure: best of several timed passes over the corpus.
    let mut best = f64::INFINITY;
    for _ in 0..20 {
        let start = Instant::now();
        for text in &texts {
            let _ = black_box(grammar.parse(black_box(text), None));
        }
        best = best.min(start.elapsed().as_secs_f64());
    }
    let rate = texts.len() as f64 / best;
    println!(
        "language parse: {rate:.0} utterances/s single thread over {} corpus utterances (goal 50000/s)",
        texts.len()
    );
    match spacy_rate() {
        Some(spacy) => println!(
            "reference spaCy blank English tokenizer + Matcher: {spacy:.0} utterances/s; ratio {:.1}x",
            rate / spacy
        ),
        None => println!("reference spaCy figure missing (run tests/fixtures/language/time_spacy.py)"),
    }
}

criterion_group!(benches, bench_language);
criterion_main!(benches);
