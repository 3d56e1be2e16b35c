//! How many ground-truth objects of training renders a union of superpixels can reach at IoU 0.5, for a
//! SLIC setting: `cargo run --release --example superpixel_reach -- <target segments> <compactness> [renders]`
//! (renders from seed 200000, room types in turn). A segment counts toward an object when more than half of
//! its pixels are the object's; the object is reachable when the union of those segments has IoU above 0.5.
//! Prints the reachable share over all objects and as a mean over scenes, and the scene-building time.
//!
//! Owns: nothing the crate uses. Must not: read demo scenes (settings are chosen on training renders).
use sayso_core::scene::{Scene, SceneParams};
use sayso_core::slic::SlicParams;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::tuning::render_training_scene;
use std::collections::HashMap;
use std::time::Instant;

fn main() -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let args: Vec<String> = std::env::args().skip(1).collect();
    let (Some(target), Some(compactness)) = (args.first(), args.get(1)) else {
        anyhow::bail!("usage: superpixel_reach <target segments> <compactness> [renders]");
    };
    let target: u32 = target.parse()?;
    let compactness: f32 = compactness.parse()?;
    let count: u64 = args.get(2).map(|s| s.parse()).transpose()?.unwrap_or(21);
    let params = SceneParams {
        superpixels: SlicParams::new(target, compactness, 10)?,
        ..SceneParams::default()
    };
    let (mut total, mut reach, mut per_scene_sum, mut segs) = (0u64, 0u64, 0.0f64, 0usize);
    let mut elapsed = 0.0;
    for index in 0..count as usize {
        let r = render_training_scene(&taxonomy, 200000 + index as u64, index)?;
        let t = Instant::now();
        let scene = Scene::from_image(
            r.name.clone(),
            r.image.clone(),
            Some(r.depth.clone()),
            None,
            &params,
        )?;
        elapsed += t.elapsed().as_secs_f64();
        segs += scene.segment_count();
        let inst = &r.instances.values;
        let mut area: HashMap<u16, u64> = HashMap::new();
        for &i in inst {
            if i != 0 {
                *area.entry(i).or_default() += 1;
            }
        }
        let n = scene.segment_count();
        let mut seg_area = vec![0u64; n];
        let mut seg_inst: Vec<HashMap<u16, u64>> = vec![HashMap::new(); n];
        for (p, &s) in scene.segments.labels.iter().enumerate() {
            seg_area[s as usize] += 1;
            if inst[p] != 0 {
                *seg_inst[s as usize].entry(inst[p]).or_default() += 1;
            }
        }
        let (mut t_s, mut r_s) = (0u64, 0u64);
        for (&id, &a) in &area {
            let (mut inter, mut uni) = (0u64, 0u64);
            for s in 0..n {
                let c = seg_inst[s].get(&id).copied().unwrap_or(0);
                if 2 * c > seg_area[s] {
                    inter += c;
                    uni += seg_area[s];
                }
            }
            let union = a + uni - inter;
            t_s += 1;
            if union > 0 && 2 * inter > union {
                r_s += 1;
            }
        }
        total += t_s;
        reach += r_s;
        per_scene_sum += r_s as f64 / t_s.max(1) as f64;
    }
    println!("target {target} compactness {compactness}: segments/scene {:.0}, reachable {reach}/{total} = {:.3}, per-scene mean {:.3}, scene build {:.1} ms", segs as f64 / count as f64, reach as f64 / total as f64, per_scene_sum / count as f64, elapsed * 1e3 / count as f64);
    Ok(())
}
