//! How well a pointed pixel's grown region (`sayso_core::grounding::pointer`) covers the object pointed at, on
//! training renders (seeds from 200000; never demo or trial seeds):
//! `cargo run --release --example pointer_reach -- [renders] [edge dE] [region dE] [depth step]`.
//! For every ground-truth object of at least 400 pixels (floor, walls and ceiling are not objects), the
//! pointer goes to the object's deepest pixel; prints the mean IoU of region and object, the share at IoU
//! >= 0.5, and how often the region spills past twice the object's area.
//!
//! Owns: nothing the crate uses. Must not: read demo scenes or trial seeds.
use sayso_core::grounding::pointer::pointed_region_tries;
use sayso_core::ids::SegmentId;
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::trial::operator::deepest_pixel;
use sayso_lab::tuning::render_training_scene;
use sayso_perception::pipeline::superpixels_of;

fn main() -> anyhow::Result<()> {
    let taxonomy = Taxonomy::embedded();
    let args: Vec<String> = std::env::args().skip(1).collect();
    let count: u64 = args.first().map(|s| s.parse()).transpose()?.unwrap_or(14);
    let edge: f32 = args
        .get(1)
        .map(|s| s.parse())
        .transpose()?
        .unwrap_or(sayso_core::grounding::pointer::EDGE_DELTA_E);
    let region: f32 = args
        .get(2)
        .map(|s| s.parse())
        .transpose()?
        .unwrap_or(sayso_core::grounding::pointer::REGION_DELTA_E);
    let depth: f32 = args
        .get(3)
        .map(|s| s.parse())
        .transpose()?
        .unwrap_or(sayso_core::grounding::pointer::DEPTH_STEP);
    let tries: Vec<Vec<f32>> = vec![
        Vec::new(),
        sayso_core::grounding::pointer::TIGHTER.to_vec(),
        vec![0.5],
        vec![0.75, 0.5],
        vec![0.8, 0.6, 0.4, 0.25],
    ];
    for tighter in &tries {
        reach(&taxonomy, count, [edge, region, depth], tighter)?;
    }
    Ok(())
}

/// The pointer's reach over `count` training renders with one list of tighter scales.
fn reach(
    taxonomy: &Taxonomy,
    count: u64,
    thresholds: [f32; 3],
    tighter: &[f32],
) -> anyhow::Result<()> {
    let [edge, region, depth] = thresholds;
    let (mut objects, mut iou_sum, mut hits, mut spills) = (0u64, 0.0f64, 0u64, 0u64);
    for index in 0..count as usize {
        let truth = render_training_scene(taxonomy, 200_000 + index as u64, index)?;
        let scene = superpixels_of(&truth.capture())?;
        let width = truth.labels.width as usize;
        let max_area = truth.labels.values.len() as u64 / sayso_core::grounding::POINTER_MAX_SHARE;
        for object in &truth.objects {
            if object.area < 400 {
                continue;
            }
            let pixels: Vec<u32> = truth
                .instances
                .values
                .iter()
                .enumerate()
                .filter(|(_, &i)| u32::from(i) == object.id)
                .map(|(p, _)| p as u32)
                .collect();
            let Some((x, y)) = deepest_pixel(&pixels, width, |_| true) else {
                continue;
            };
            let seed = SegmentId(scene.segments.labels[y as usize * width + x as usize]);
            let region = pointed_region_tries(&scene, seed, max_area, thresholds, tighter);
            let mut inside = vec![false; scene.segment_count()];
            for s in &region {
                inside[s.index()] = true;
            }
            let region_pixels = scene
                .segments
                .labels
                .iter()
                .filter(|&&s| inside[s as usize])
                .count() as f64;
            let shared = pixels
                .iter()
                .filter(|&&p| inside[scene.segments.labels[p as usize] as usize])
                .count() as f64;
            let iou = shared / (region_pixels + pixels.len() as f64 - shared);
            objects += 1;
            iou_sum += iou;
            hits += u64::from(iou >= 0.5);
            spills += u64::from(region_pixels > 2.0 * pixels.len() as f64);
        }
    }
    println!(
        "edge {edge} region {region} depth {depth} then {tighter:?}: {objects} objects, mean IoU {:.3}, IoU>=0.5 {:.3}, spill {:.3}",
        iou_sum / objects.max(1) as f64,
        hits as f64 / objects.max(1) as f64,
        spills as f64 / objects.max(1) as f64
    );
    Ok(())
}
