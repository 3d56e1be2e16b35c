//! Object accuracy on training renders, for checking a change to how objects are formed:
//! `cargo run --release --example render_objects -- [first seed, default 200000] [count, default 21]`.
//! Per render: object accuracy of the classifier's label-map regions, of the scene graph solved with no
//! note, and after the training notes (`sayso_lab::tuning::training_notes`); mean IoU before and after; then the
//! means. The figures quoted in `sayso_core::scenegraph::objects` come from this program.
//!
//! Owns: nothing the crate uses. Must not: read demo_scenes/ (the renders are training seeds only).
use sayso_core::scenegraph::label_map;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::evaluation::{
    object_accuracy, objects_from_graph, objects_from_regions, score_labels,
};
use sayso_lab::tuning::prepare_tuning_scenes;
use sayso_perception::pipeline::*;

fn main() -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let first: u64 = std::env::args()
        .nth(1)
        .and_then(|v| v.parse().ok())
        .unwrap_or(200000);
    let count: u64 = std::env::args()
        .nth(2)
        .and_then(|v| v.parse().ok())
        .unwrap_or(21);
    let scenes = prepare_tuning_scenes(&taxonomy, &classifier, first..first + count, |_| {})?;
    let (mut c, mut b, mut a, mut mb, mut ma) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for t in &scenes {
        let p = &t.prepared;
        let cm = label_map(&p.scene, &p.classifier_labels);
        let cls = object_accuracy(
            &t.truth,
            &objects_from_regions(p.scene.width() as usize, &cm.values),
        );
        let base = believe_without_notes(p, &settings)?;
        let bo = object_accuracy(&t.truth, &objects_from_graph(&p.scene, &base.graph));
        let inputs = TurnInputs {
            scene: &p.scene,
            unaries: &p.unaries,
            detections: &[],
        };
        let mut prev = None;
        for note in &t.notes {
            let cs = settings
                .grammar
                .parse(note, None)
                .map(|x| x.constraints)
                .unwrap_or_default();
            prev = Some(correct_turn(
                &inputs,
                prev.as_ref(),
                &cs,
                None,
                false,
                &settings,
            )?);
        }
        let g = prev.as_ref().map(|x| &x.graph).unwrap_or(&base.graph);
        let ao = object_accuracy(&t.truth, &objects_from_graph(&p.scene, g));
        let bl = score_labels(
            &t.truth,
            &label_map(&p.scene, &base.graph.segment_labels).values,
            taxonomy.class_count(),
        )?;
        let al = score_labels(
            &t.truth,
            &label_map(&p.scene, &g.segment_labels).values,
            taxonomy.class_count(),
        )?;
        println!(
            "{:<32} cls {:.3} base {:.3} after {:.3}  mIoU base {:.3} after {:.3}  {:?}",
            t.truth.name, cls, bo, ao, bl.mean_iou, al.mean_iou, t.notes
        );
        c += cls;
        b += bo;
        a += ao;
        mb += bl.mean_iou;
        ma += al.mean_iou;
    }
    let n = scenes.len() as f64;
    println!(
        "MEAN cls {:.4} base {:.4} after {:.4} mIoU base {:.4} after {:.4}",
        c / n,
        b / n,
        a / n,
        mb / n,
        ma / n
    );
    Ok(())
}
