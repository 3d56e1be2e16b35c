//! Why ground-truth objects of the demo scenes are missed, for finding what to improve next:
//! `cargo run --release --example demo_misses -- [scene names...]`. Per ground-truth object: `ok` (found
//! after the scene's first two notes), `MIS` (missed though a union of superpixels could reach IoU 0.5) or
//! `UNR` (no union of superpixels reaches it: smaller or thinner than the segments); its best IoU as an
//! `oracle` union of the segments mostly inside it, as the classifier's region (`cls`), as the no-note
//! graph (`base`) and after the notes; and the best IoU of any class with that class.
//!
//! Owns: nothing the crate uses. Must not: tune anything on what it prints (the demo scenes are for the
//! demo and its evaluation only).
use sayso_core::demo::{demo_directory, list_demo_scenes};
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::evaluation::{objects_from_graph, PredictedObject};
use sayso_perception::pipeline::*;
use std::collections::HashMap;

fn iou(a: &[u32], inst: &[u16], id: u16, area: u64) -> f64 {
    let shared = a.iter().filter(|&&p| inst[p as usize] == id).count() as u64;
    let union = area + a.len() as u64 - shared;
    shared as f64 / union.max(1) as f64
}

fn main() -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let directory = demo_directory(None);
    let only: Vec<String> = std::env::args().skip(1).collect();
    let (mut tot, mut reach, mut base, mut after) = (0, 0, 0, 0);
    for name in list_demo_scenes(&directory)? {
        if !only.is_empty() && !only.contains(&name) {
            continue;
        }
        let demo = sayso_render::demo::load_demo_scene(&directory, Some(&name))?;
        let prepared = prepare_loaded(demo.capture(), &classifier)?;
        let scene = prepared.scene.clone();
        let notes: Vec<String> = sayso_lab::evaluation::read_notes(&demo.directory)?
            .into_iter()
            .take(2)
            .collect();
        let baseline = believe_without_notes(&prepared, &settings)?;
        let report_cls = prepared.classifier_labels.clone();
        let report = correct_prepared(prepared, &notes, None, false, &settings)?;
        // The scene after the last note that changed it (`correction`), else the no-note solve.
        let last = report
            .correction
            .as_ref()
            .map_or_else(|| baseline.graph.clone(), |c| c.graph.clone());
        let inst = &demo.instances.values;
        let mut area: HashMap<u16, u64> = HashMap::new();
        for &i in inst {
            *area.entry(i).or_default() += 1;
        }
        let mut seg_pixels: Vec<Vec<u32>> = vec![Vec::new(); scene.segment_count()];
        for (p, &s) in scene.segments.labels.iter().enumerate() {
            seg_pixels[s as usize].push(p as u32);
        }
        let bo = objects_from_graph(&scene, &baseline.graph);
        let cm = sayso_core::scenegraph::label_map(&scene, &report_cls);
        let co = sayso_lab::evaluation::objects_from_regions(scene.width() as usize, &cm.values);
        let ao = objects_from_graph(&scene, &last);
        println!(
            "== {name}: {} objects, {} segments; notes {:?}",
            demo.objects.len(),
            scene.segment_count(),
            notes
        );
        for o in &demo.objects {
            let id = o.id as u16;
            let a = *area.get(&id).unwrap_or(&0);
            let mut oracle = Vec::new();
            for px in &seg_pixels {
                let n = px.iter().filter(|&&p| inst[p as usize] == id).count();
                if 2 * n > px.len() {
                    oracle.extend_from_slice(px);
                }
            }
            let oi = iou(&oracle, inst, id, a);
            let best = |objs: &[PredictedObject]| {
                objs.iter()
                    .filter(|p| p.class == o.class_id)
                    .map(|p| iou(&p.pixels, inst, id, a))
                    .fold(0.0, f64::max)
            };
            let bestany = |objs: &[PredictedObject]| {
                objs.iter()
                    .map(|p| (iou(&p.pixels, inst, id, a), p.class.0))
                    .fold((0.0, 0), |m, x| if x.0 > m.0 { x } else { m })
            };
            let (b, af) = (best(&bo), best(&ao));
            let cr = best(&co);
            let (ai, ac) = bestany(&ao);
            // Size of the best right-class object after the notes against the ground truth's (above 1: it
            // took in more than the object, a merge; below 1: it covers part of it).
            let size = ao
                .iter()
                .filter(|p| p.class == o.class_id)
                .map(|p| {
                    (
                        iou(&p.pixels, inst, id, a),
                        p.pixels.len() as f64 / a.max(1) as f64,
                    )
                })
                .fold((0.0, 0.0), |m, x| if x.0 > m.0 { x } else { m })
                .1;
            tot += 1;
            if oi >= 0.5 {
                reach += 1;
            }
            if b >= 0.5 {
                base += 1;
            }
            if af >= 0.5 {
                after += 1;
            }
            let tag = if af >= 0.5 {
                "ok "
            } else if oi < 0.5 {
                "UNR"
            } else {
                "MIS"
            };
            println!("  {tag} {:>3} {:<10} area {:>6} oracle {:.2} cls {:.2} base {:.2} after {:.2} size {:.2} bestany {:.2} {}", o.id, o.class, a, oi, cr, b, af, size, ai, taxonomy.class(sayso_core::ids::ClassId(ac)).map(|c| c.name.as_str()).unwrap_or("?"));
        }
    }
    println!("total {tot} reachable {reach} base {base} after {after}");
    Ok(())
}
