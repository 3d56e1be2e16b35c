//! Per object of one development trial scene: what the truth has and what the robot shows, before and after
//! some notes, for deciding what the notes should do next:
//! `cargo run --release --example trial_objects -- SEED INDEX [NOTE]...` (a note may start with `@x,y `).
//! Prints every truth object (class, area, found at IoU 0.5, the shown object that overlaps it most with its
//! class and IoU) and every shown object that covers no truth object. With `SAYSO_PICTURES=DIR` it also
//! writes the picture, the truth labels and the labels after each step as PNGs into DIR.
//!
//! Owns: nothing the crate uses. Must not: read the held-out half (seeds from 7000000 are refused).
use std::collections::{BTreeMap, HashMap};

use sayso_core::language::constraint::Focus;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::evaluation::{matched_objects, objects_from_graph, PredictedObject};
use sayso_lab::trial::{render_trial_scene, HELD_OUT_START};
use sayso_perception::pipeline::*;

fn main() -> anyhow::Result<()> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let seed: u64 = args
        .first()
        .and_then(|v| v.parse().ok())
        .unwrap_or(6_000_000);
    let index: usize = args.get(1).and_then(|v| v.parse().ok()).unwrap_or(0);
    anyhow::ensure!(
        seed < HELD_OUT_START,
        "the held-out half is not for looking at"
    );
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy)?;
    let settings = CorrectionSettings::embedded()?;
    let truth = render_trial_scene(&taxonomy, seed, index)?;
    let prepared = prepare_loaded(truth.clone(), &classifier)?;
    let base = believe_without_notes(&prepared, &settings)?;
    let name =
        |c: sayso_core::ids::ClassId| taxonomy.class(c).map_or("?".into(), |i| i.name.clone());
    let show = |title: &str, graph: &sayso_core::scenegraph::SceneGraph| {
        let objects = objects_from_graph(&prepared.scene, graph);
        // The classifier's mean log-probability margin of each object's class over the best other class.
        let margin: Vec<f64> = graph
            .objects
            .iter()
            .map(|o| {
                let (mut sum, mut weight) = (0.0, 0.0);
                for m in &o.members {
                    let row = prepared.unaries.log_probs.row(m.index());
                    let own = f64::from(row[o.class.0 as usize]);
                    let other = row
                        .iter()
                        .enumerate()
                        .filter(|(c, _)| *c != o.class.0 as usize)
                        .map(|(_, v)| f64::from(*v))
                        .fold(f64::MIN, f64::max);
                    let area = f64::from(prepared.scene.stats[m.index()].area);
                    sum += (own - other) * area;
                    weight += area;
                }
                if weight > 0.0 {
                    sum / weight
                } else {
                    0.0
                }
            })
            .collect();
        let matched = matched_objects(&truth, &objects);
        println!("== {title}");
        let mut covering = vec![false; objects.len()];
        for (t, object) in truth.objects.iter().enumerate() {
            let pixels: Vec<u32> = truth
                .instances
                .values
                .iter()
                .enumerate()
                .filter(|(_, &v)| u32::from(v) == object.id)
                .map(|(p, _)| p as u32)
                .collect();
            let (mut best, mut best_iou) = (None, 0.0);
            for (s, shown) in objects.iter().enumerate() {
                let iou = iou(&pixels, shown);
                if iou > best_iou {
                    best_iou = iou;
                    best = Some(s);
                }
                if iou >= 0.5 && shown.class == object.class_id {
                    covering[s] = true;
                }
            }
            let b = object.bbox;
            let best_text = best.map_or("-".to_string(), |s| {
                format!(
                    "{} {}px iou {:.2} m {:.2}",
                    name(objects[s].class),
                    objects[s].pixels.len(),
                    best_iou,
                    margin[s]
                )
            });
            println!(
                "  truth {:>3} {:<10} {:>6}px {:?} {:<5} best {}",
                object.id,
                object.class,
                object.area,
                b,
                if matched[t] { "found" } else { "MISS" },
                best_text
            );
        }
        let mut spurious: HashMap<String, Vec<String>> = HashMap::new();
        for (s, shown) in objects.iter().enumerate() {
            if !covering[s] {
                let w = truth.labels.width;
                let (mut x0, mut y0, mut x1, mut y1) = (u32::MAX, u32::MAX, 0, 0);
                for &p in &shown.pixels {
                    let (x, y) = (p % w, p / w);
                    x0 = x0.min(x);
                    y0 = y0.min(y);
                    x1 = x1.max(x);
                    y1 = y1.max(y);
                }
                spurious.entry(name(shown.class)).or_default().push(format!(
                    "{}px [{x0},{y0}..{x1},{y1}] m {:.2}",
                    shown.pixels.len(),
                    margin[s]
                ));
            }
        }
        let mut spurious: Vec<_> = spurious.into_iter().collect();
        spurious.sort();
        for (class, sizes) in spurious {
            println!("  shown, covering no truth object: {class} {sizes:?}");
        }
    };
    show("no note", &base.graph);
    let pictures = std::env::var_os("SAYSO_PICTURES").map(std::path::PathBuf::from);
    let palette = taxonomy.label_palette();
    let write_labels =
        |file: &str, graph: &sayso_core::scenegraph::SceneGraph| -> anyhow::Result<()> {
            if let Some(dir) = &pictures {
                let mut image = truth.labels.clone();
                for (pixel, &segment) in prepared.scene.segments.labels.iter().enumerate() {
                    if let Some(label) = graph.segment_labels.get(segment as usize) {
                        image.values[pixel] = label.0;
                    }
                }
                sayso_core::raster::write_palette_png(&dir.join(file), &image, &palette)?;
            }
            Ok(())
        };
    if let Some(dir) = &pictures {
        std::fs::create_dir_all(dir)?;
        sayso_core::raster::write_rgb_png(&dir.join("picture.png"), &truth.image)?;
        sayso_core::raster::write_palette_png(&dir.join("truth.png"), &truth.labels, &palette)?;
        sayso_core::raster::write_depth_png(&dir.join("depth.png"), &truth.depth)?;
    }
    write_labels("step0.png", &base.graph)?;
    let mut step = 0;
    let inputs = TurnInputs {
        scene: &prepared.scene,
        unaries: &prepared.unaries,
        detections: &[],
    };
    let mut previous = None;
    for note in args.iter().skip(2) {
        let (focus, text) = match note.strip_prefix('@').and_then(|r| r.split_once(' ')) {
            Some((xy, text)) => {
                let (x, y) = xy.split_once(',').unwrap_or(("0", "0"));
                (
                    Some(Focus::Pixel {
                        x: x.parse().unwrap_or(0),
                        y: y.parse().unwrap_or(0),
                    }),
                    text,
                )
            }
            None => (None, note.as_str()),
        };
        let parse = settings.grammar.parse(text, focus)?;
        let correction = correct_turn(
            &inputs,
            previous.as_ref(),
            &parse.constraints,
            focus,
            true,
            &settings,
        )?;
        for unmet in &correction.unmet {
            println!("  | unmet: {unmet:?}");
        }
        show(&format!("after {text:?}"), &correction.graph);
        step += 1;
        write_labels(&format!("step{step}.png"), &correction.graph)?;
        // Pixels whose label changed against the no-note solve, by truth class and labels before -> after.
        let mut moved: BTreeMap<(String, String, String, bool), u64> = BTreeMap::new();
        for (pixel, &segment) in prepared.scene.segments.labels.iter().enumerate() {
            let (Some(was), Some(now)) = (
                base.graph.segment_labels.get(segment as usize),
                correction.graph.segment_labels.get(segment as usize),
            ) else {
                continue;
            };
            let truth_label = truth.labels.values[pixel];
            if was != now && (was.0 == truth_label || now.0 == truth_label) {
                *moved
                    .entry((
                        name(sayso_core::ids::ClassId(truth_label)),
                        name(*was),
                        name(*now),
                        now.0 == truth_label,
                    ))
                    .or_insert(0) += 1;
            }
        }
        for ((truth_name, was, now, right), pixels) in moved {
            let arrow = if right {
                "wrong->right"
            } else {
                "right->wrong"
            };
            println!("  | {arrow} {pixels:>6} px truth {truth_name}: {was} -> {now}");
        }
        previous = Some(correction);
    }
    Ok(())
}

fn iou(truth: &[u32], shown: &PredictedObject) -> f64 {
    let shared = truth
        .iter()
        .filter(|p| shown.pixels.binary_search(p).is_ok())
        .count();
    let union = truth.len() + shown.pixels.len() - shared;
    if union == 0 {
        0.0
    } else {
        shared as f64 / union as f64
    }
}
