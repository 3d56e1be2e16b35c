//! Where the no-note joint solve loses mean IoU on development trial scenes, to decide which notes could
//! recover it: `cargo run --release --example miou_loss -- FIRST COUNT`.
//! Per scene, each class's share of the loss (1 - IoU over the classes present, divided by their number) is
//! put in one of three heaps: shown but absent from the truth, in the truth but never shown, or both (partial),
//! the last with the class it is most confused with. Prints the heaps' totals and the largest partial pairs.
//!
//! Owns: nothing the crate uses. Must not: read the held-out half (indices are development seeds only).
use std::collections::BTreeMap;

use sayso_core::scenegraph::label_map;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::trial::{render_trial_scene, DEV_START};
use sayso_perception::pipeline::*;
use sayso_perception::unaries::metrics::ConfusionMatrix;

fn main() -> anyhow::Result<()> {
    let args: Vec<usize> = std::env::args()
        .skip(1)
        .filter_map(|v| v.parse().ok())
        .collect();
    let first = args.first().copied().unwrap_or(0);
    let count = args.get(1).copied().unwrap_or(28);
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let classes = taxonomy.class_count();
    let name = |c: usize| {
        taxonomy
            .class(sayso_core::ids::ClassId(c as u16))
            .map_or("?".into(), |i| i.name.clone())
    };
    let mut heaps: BTreeMap<&str, f64> = BTreeMap::new();
    let mut pairs: BTreeMap<(String, String), (f64, u32)> = BTreeMap::new();
    let mut whole = 0.0;
    for index in first..first + count {
        let truth = render_trial_scene(&taxonomy, DEV_START + index as u64, index)?;
        let prepared = prepare_loaded(truth.clone(), &classifier)?;
        let base = believe_without_notes(&prepared, &settings)?;
        let labels = label_map(&prepared.scene, &base.graph.segment_labels).values;
        let mut matrix = ConfusionMatrix::new(classes);
        matrix.add_maps(&truth.labels.values, &labels)?;
        let iou = matrix.per_class_iou();
        let present = iou.iter().flatten().count().max(1) as f64;
        for (class, value) in iou.iter().enumerate() {
            let Some(value) = value else { continue };
            let loss = (1.0 - value) / present;
            whole += loss;
            let truth_total: u64 = (0..classes).map(|o| matrix.count(class, o)).sum();
            let shown_total: u64 = (0..classes).map(|o| matrix.count(o, class)).sum();
            let heap = if truth_total == 0 {
                "shown, not in truth"
            } else if matrix.count(class, class) == 0 && shown_total == 0 {
                "in truth, never shown"
            } else if matrix.count(class, class) == 0 {
                "shown only where wrong"
            } else {
                "partial"
            };
            *heaps.entry(heap).or_default() += loss;
            if heap == "shown, not in truth" {
                println!(
                    "    halluc {} {} px loss {:.2}",
                    name(class),
                    shown_total,
                    100.0 * loss
                );
            }
            if heap == "partial" || heap == "shown only where wrong" {
                // The class taking most of its truth pixels, or giving most of its false ones.
                let (other, _) = (0..classes)
                    .filter(|&o| o != class)
                    .map(|o| (o, matrix.count(class, o) + matrix.count(o, class)))
                    .max_by_key(|&(_, n)| n)
                    .unwrap_or((class, 0));
                let entry = pairs.entry((name(class), name(other))).or_insert((0.0, 0));
                entry.0 += loss;
                entry.1 += 1;
            }
        }
        println!("{} mIoU {:.3}", truth.name, matrix.mean_iou());
    }
    let scenes = count.max(1) as f64;
    println!(
        "mean mIoU loss per scene: {:.2} points",
        100.0 * whole / scenes
    );
    for (heap, loss) in &heaps {
        println!("  {heap:<24} {:.2} points", 100.0 * loss / scenes);
    }
    let mut pairs: Vec<_> = pairs.into_iter().collect();
    pairs.sort_by(|a, b| b.1 .0.total_cmp(&a.1 .0));
    for ((class, other), (loss, n)) in pairs.iter().take(25) {
        println!(
            "  {class:<10} with {other:<10} {:.2} points over {n} scenes",
            100.0 * loss / scenes
        );
    }
    Ok(())
}
