//! Where the joint solve gains or loses correct pixels on the demo scenes, for finding what to improve next:
//! `cargo run --release --example demo_pixels -- [scene names...]`. Per scene: pixel accuracy of the
//! classifier alone, of the joint solve with no note, and after the first two notes, with the seconds each
//! stage took; then the classes whose correct-pixel count moved most between the classifier and the final
//! labels.
//!
//! Owns: nothing the crate uses. Must not: tune anything on what it prints (the demo scenes are for the demo
//! and its evaluation only).
use std::time::Instant;

use sayso_core::demo::{demo_directory, list_demo_scenes};
use sayso_core::scenegraph::label_map;
use sayso_core::taxonomy::Taxonomy;
use sayso_perception::pipeline::*;

fn correct_by_class(truth: &[u16], predicted: &[u16], classes: usize) -> (Vec<i64>, i64, i64) {
    let mut per_class = vec![0i64; classes];
    let (mut right, mut total) = (0, 0);
    for (&t, &p) in truth.iter().zip(predicted) {
        if t as usize >= classes {
            continue;
        }
        total += 1;
        if t == p {
            right += 1;
            per_class[t as usize] += 1;
        }
    }
    (per_class, right, total)
}

fn main() -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy)?;
    let mut settings = CorrectionSettings::embedded()?;
    // For diagnosis only: SAYSO_TRY_WEIGHTS="agreement=1.5,fine_coarse=0.3" overrides committed weights.
    if let Ok(spec) = std::env::var("SAYSO_TRY_WEIGHTS") {
        let mut value = serde_json::to_value(&settings.weights)?;
        for pair in spec.split(',').filter(|p| !p.is_empty()) {
            let (key, number) = pair
                .split_once('=')
                .ok_or_else(|| anyhow::anyhow!("{pair}"))?;
            value[key] = serde_json::json!(number.parse::<f64>()?);
        }
        settings.weights = serde_json::from_value(value)?;
        println!("weights {:?}", settings.weights);
    }
    let directory = demo_directory(None);
    let only: Vec<String> = std::env::args().skip(1).collect();
    let classes = taxonomy.class_count();
    for name in list_demo_scenes(&directory)? {
        if !only.is_empty() && !only.contains(&name) {
            continue;
        }
        let started = Instant::now();
        let demo = sayso_render::demo::load_demo_scene(&directory, Some(&name))?;
        let prepared = prepare_loaded(demo.capture(), &classifier)?;
        let prepare_seconds = started.elapsed().as_secs_f64();
        let scene = prepared.scene.clone();
        let notes: Vec<String> = sayso_lab::evaluation::read_notes(&demo.directory)?
            .into_iter()
            .take(2)
            .collect();
        let started = Instant::now();
        let baseline = believe_without_notes(&prepared, &settings)?;
        let baseline_seconds = started.elapsed().as_secs_f64();
        let classifier_map = label_map(&scene, &prepared.classifier_labels);
        let started = Instant::now();
        let report = correct_prepared(prepared, &notes, None, false, &settings)?;
        let notes_seconds = started.elapsed().as_secs_f64();
        // The scene after the last note that changed it (`correction`), else the no-note solve.
        let last = report
            .correction
            .as_ref()
            .map_or_else(|| baseline.graph.clone(), |c| c.graph.clone());
        let truth = &demo.labels.values;
        let (cls, cls_right, total) = correct_by_class(truth, &classifier_map.values, classes);
        let base_map = label_map(&scene, &baseline.graph.segment_labels);
        let (base, base_right, _) = correct_by_class(truth, &base_map.values, classes);
        let after_map = label_map(&scene, &last.segment_labels);
        let (after, after_right, _) = correct_by_class(truth, &after_map.values, classes);
        let share = |n: i64| 100.0 * n as f64 / total.max(1) as f64;
        println!(
            "== {name}: {} segments; pixel classifier {:.1} no-note {:.1} after {:.1}; seconds prepare {:.1} no-note {:.1} notes {:.1}",
            scene.segment_count(),
            share(cls_right),
            share(base_right),
            share(after_right),
            prepare_seconds,
            baseline_seconds,
            notes_seconds
        );
        let mut moves: Vec<(i64, usize)> = (0..classes)
            .map(|c| (after[c] - cls[c], c))
            .filter(|m| m.0 != 0)
            .collect();
        moves.sort_by_key(|m| m.0.abs());
        moves.reverse();
        for (delta, class) in moves.iter().take(6) {
            // What the final labels call this class's pixels that the classifier had right.
            let mut became = vec![0i64; classes + 1];
            for ((&t, &c), &a) in truth
                .iter()
                .zip(&classifier_map.values)
                .zip(&after_map.values)
            {
                if t as usize == *class && c == t && a != t {
                    became[(a as usize).min(classes)] += 1;
                }
            }
            let mut lost: Vec<(i64, usize)> = became
                .iter()
                .enumerate()
                .filter(|(_, &n)| n > 0)
                .map(|(c, &n)| (n, c))
                .collect();
            lost.sort();
            lost.reverse();
            let lost: Vec<String> = lost
                .iter()
                .take(3)
                .map(|(n, c)| {
                    format!(
                        "{n} -> {}",
                        taxonomy.class_name(sayso_core::ids::ClassId(*c as u16))
                    )
                })
                .collect();
            println!(
                "  {:<14} correct pixels classifier {:>6} no-note {:>6} after {:>6} ({:+}) lost: {}",
                taxonomy.class_name(sayso_core::ids::ClassId(*class as u16)),
                cls[*class],
                base[*class],
                after[*class],
                delta,
                lost.join(", ")
            );
        }
    }
    Ok(())
}
