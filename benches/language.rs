//! Benchmark: utterances per second through the language parser over the whole corpus, single thread,
//! with the ratio to spaCy's blank English tokenizer plus a rule Matcher on the same corpus, timed in the
//! same run by tests/fixtures/language/time_spacy.py --print-only (Python named by SAYSO_PYTHON, else
//! python3) when Python and spaCy are present; otherwise no ratio is printed, never a stored figure.
//! Goal: at least 50,000 utterances per second.

use std::hint::black_box;
use std::time::Instant;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use sayso_core::language::Grammar;

#[path = "../tests/paths.rs"]
mod paths;

fn corpus() -> Vec<String> {
    let text = std::fs::read_to_string(paths::repo().join("tests/language/corpus.jsonl"))
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

/// spaCy's rate on the same corpus, measured now by the committed script; `Err` says why there is none.
fn spacy_rate() -> Result<(f64, String), String> {
    let python = std::env::var("SAYSO_PYTHON").unwrap_or_else(|_| "python3".to_string());
    let output = std::process::Command::new(&python)
        .arg("tests/fixtures/language/time_spacy.py")
        .arg("--print-only")
        .current_dir(paths::repo())
        .output()
        .map_err(|error| format!("{python} did not start: {error}"))?;
    if !output.status.success() {
        let stderr = String::from_utf8_lossy(&output.stderr);
        let last = stderr.lines().last().unwrap_or("no message").to_string();
        return Err(format!("{python} time_spacy.py failed: {last}"));
    }
    let stdout = String::from_utf8_lossy(&output.stdout);
    let value: serde_json::Value = stdout
        .lines()
        .last()
        .and_then(|line| serde_json::from_str(line).ok())
        .ok_or("time_spacy.py printed no JSON")?;
    let rate = value
        .get("utterances_per_second")
        .and_then(serde_json::Value::as_f64)
        .ok_or("time_spacy.py printed no rate")?;
    let version = value
        .get("spacy_version")
        .and_then(serde_json::Value::as_str)
        .unwrap_or("?")
        .to_string();
    Ok((rate, version))
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
        Ok((spacy, version)) => println!(
            "reference spaCy {version} blank English tokenizer + Matcher, same run: {spacy:.0} utterances/s; ratio {:.1}x",
            rate / spacy
        ),
        Err(reason) => println!("no spaCy figure in this run ({reason})"),
    }
}

criterion_group!(benches, bench_language);
criterion_main!(benches);
