//! Counting, over labelled scenes, how well each candidate cut strength recovers a class's ground-truth
//! objects from its ground-truth labels, and choosing each class's cut (`models/instance_cuts.json`).
//!
//! Owns: `InstanceCutCounts`, `CANDIDATE_CUTS`, the choice of cut.
//! Must not: render, read files or look at demo scenes; scenes arrive with their ground-truth label and
//! instance rasters, and the caller decides which scenes are counted (training renders, `sayso tune`).
//!
//! # How a cut is chosen
//!
//! Each fine segment takes the ground-truth class covering most of its pixels (unlabelled pixels, 255, do
//! not vote). For every class and every candidate cut, the segments of that class are grouped into
//! components joined across edges no stronger than the cut (`super::instances::components`), and the
//! components are matched to the ground-truth objects of the class (instance ids other than 0 whose pixels
//! are mostly of that class) at IoU above 0.5, where a match is unique (Kirillov et al., "Panoptic
//! Segmentation", CVPR 2019). Over all scenes, the cut with the highest recognition quality
//! `RQ = TP / (TP + FP / 2 + FN / 2)` is the class's cut; "never cut" is a candidate too, and wins ties, so
//! a class is cut only where cutting recovers more objects than it invents. A class with fewer than
//! `MIN_OBJECTS` ground-truth objects over the scenes is never cut.
//!
//! # How a typical size is chosen
//!
//! A class's candidate typical size is the median depth-scaled area of its ground-truth objects (each
//! object's pixels per segment times that segment's squared depth in metres, as `super::instances` measures
//! a patch). With the class's chosen cut, every patch of the ground-truth labels is also parted by that
//! size (`super::instances::part_by_size`); the class keeps the size only when the recognition quality over
//! all scenes is higher than without it.

use std::collections::{BTreeMap, HashMap};

use crate::scene::Scene;
use crate::taxonomy::Taxonomy;

use super::instances::{
    components, neighbours, part_by_size, InstanceCutsError, InstanceCutsFile, INSTANCE_CUTS_SCHEMA,
};

/// The cut strengths tried: 0.25 to 6 in steps of 0.25 (about 2.5 to 60 CIE76 units of colour alone).
pub const CANDIDATE_CUTS: [f32; 24] = [
    0.25, 0.5, 0.75, 1.0, 1.25, 1.5, 1.75, 2.0, 2.25, 2.5, 2.75, 3.0, 3.25, 3.5, 3.75, 4.0, 4.25,
    4.5, 4.75, 5.0, 5.25, 5.5, 5.75, 6.0,
];

/// Ground-truth objects a class needs over the counted scenes before it may be cut.
pub const MIN_OBJECTS: u64 = 20;

/// Unlabelled pixels in a ground-truth label raster.
const UNLABELLED: u16 = 255;

/// True positives, false positives and false negatives of one class at one candidate.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Tally {
    pub matched: u64,
    pub invented: u64,
    pub missed: u64,
}

impl std::ops::AddAssign for Tally {
    fn add_assign(&mut self, other: Tally) {
        self.matched += other.matched;
        self.invented += other.invented;
        self.missed += other.missed;
    }
}

/// A typical size a class keeps, with the recognition quality over the counted scenes without and with it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TypicalSize {
    pub size: f32,
    pub quality_without: f64,
    pub quality_with: f64,
}

impl Tally {
    /// Recognition quality (0 when there is nothing to recognise).
    pub fn quality(&self) -> f64 {
        let denominator =
            self.matched as f64 + 0.5 * self.invented as f64 + 0.5 * self.missed as f64;
        if denominator > 0.0 {
            self.matched as f64 / denominator
        } else {
            0.0
        }
    }
}

/// What is kept of one counted scene to try typical sizes once every scene is counted.
#[derive(Clone, Debug, PartialEq)]
struct SceneRecord {
    segment_class: Vec<u16>,
    neighbours: Vec<Vec<(usize, f32)>>,
    depth: Vec<Option<f32>>,
    area: Vec<u32>,
    /// Per segment: (instance, pixels of the segment in it).
    in_instance: Vec<Vec<(u16, u64)>>,
    /// Per instance: (class, pixel area).
    instances: BTreeMap<u16, (u16, u64)>,
}

/// Tallies per class: index 0 for "never cut", then one per `CANDIDATE_CUTS` entry.
#[derive(Clone, Debug, PartialEq)]
pub struct InstanceCutCounts {
    tallies: Vec<Vec<Tally>>,
    objects: Vec<u64>,
    scenes: u32,
    /// Per class, the depth-scaled area of every ground-truth object with known depth.
    scaled_sizes: Vec<Vec<f64>>,
    records: Vec<SceneRecord>,
}

/// Matches the patches of `class` (each a list of segments) against the class's ground-truth objects.
fn tally_patches<'a>(
    record: &SceneRecord,
    class: u16,
    patches: impl Iterator<Item = &'a Vec<usize>>,
) -> Tally {
    let wanted = record
        .instances
        .values()
        .filter(|(of, _)| *of == class)
        .count() as u64;
    let mut matched = 0u64;
    let mut made = 0u64;
    for patch in patches {
        made += 1;
        let area: u64 = patch.iter().map(|&s| u64::from(record.area[s])).sum();
        let mut shared: HashMap<u16, u64> = HashMap::new();
        for &segment in patch {
            for &(instance, count) in &record.in_instance[segment] {
                *shared.entry(instance).or_default() += count;
            }
        }
        let hit = shared.iter().any(|(instance, &common)| {
            record
                .instances
                .get(instance)
                .is_some_and(|&(of, size)| of == class && 2 * common > area + size - common)
        });
        if hit {
            matched += 1;
        }
    }
    Tally {
        matched,
        invented: made - matched,
        missed: wanted.saturating_sub(matched),
    }
}

/// Why a scene could not be counted.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum InstanceCountError {
    #[error("the {what} raster has {found} pixels, the scene {expected}")]
    Size {
        what: &'static str,
        found: usize,
        expected: usize,
    },
}

impl InstanceCutCounts {
    pub fn new(class_count: usize) -> InstanceCutCounts {
        InstanceCutCounts {
            tallies: vec![vec![Tally::default(); CANDIDATE_CUTS.len() + 1]; class_count],
            objects: vec![0; class_count],
            scenes: 0,
            scaled_sizes: vec![Vec::new(); class_count],
            records: Vec::new(),
        }
    }

    pub fn scene_count(&self) -> u32 {
        self.scenes
    }

    /// The tally of `class` at candidate `index` (0: never cut; `i + 1`: `CANDIDATE_CUTS[i]`).
    pub fn tally(&self, class: usize, index: usize) -> Option<Tally> {
        self.tallies.get(class)?.get(index).copied()
    }

    /// Counts one scene: `labels` and `instances` are its ground-truth rasters, row-major like the
    /// scene's segment map.
    pub fn add_scene(
        &mut self,
        scene: &Scene,
        labels: &[u16],
        instances: &[u16],
    ) -> Result<(), InstanceCountError> {
        let pixels = scene.segments.labels.len();
        for (what, raster) in [("label", labels), ("instance", instances)] {
            if raster.len() != pixels {
                return Err(InstanceCountError::Size {
                    what,
                    found: raster.len(),
                    expected: pixels,
                });
            }
        }
        let class_count = self.tallies.len();
        let segment_count = scene.segment_count();
        // Per segment: pixels per ground-truth class and per instance (its area is in the scene's stats).
        let mut class_votes: Vec<HashMap<u16, u32>> = vec![HashMap::new(); segment_count];
        let mut in_instance: Vec<HashMap<u16, u64>> = vec![HashMap::new(); segment_count];
        // Per instance: area and pixels per class.
        let mut instance_area: BTreeMap<u16, u64> = BTreeMap::new();
        let mut instance_votes: BTreeMap<u16, HashMap<u16, u64>> = BTreeMap::new();
        for ((&segment, &class), &instance) in
            scene.segments.labels.iter().zip(labels).zip(instances)
        {
            let segment = segment as usize;
            if segment >= segment_count {
                continue;
            }
            if class != UNLABELLED {
                *class_votes[segment].entry(class).or_default() += 1;
            }
            if instance != 0 {
                *in_instance[segment].entry(instance).or_default() += 1;
                *instance_area.entry(instance).or_default() += 1;
                *instance_votes
                    .entry(instance)
                    .or_default()
                    .entry(class)
                    .or_default() += 1;
            }
        }
        let majority = |votes: &HashMap<u16, u32>| {
            votes
                .iter()
                .max_by_key(|(&class, &count)| (count, std::cmp::Reverse(class)))
                .map(|(&class, _)| class)
        };
        let segment_class: Vec<u16> = class_votes
            .iter()
            .map(|votes| majority(votes).unwrap_or(UNLABELLED))
            .collect();
        let instance_class: BTreeMap<u16, u16> = instance_votes
            .iter()
            .filter_map(|(&instance, votes)| {
                votes
                    .iter()
                    .filter(|(&class, _)| class != UNLABELLED)
                    .max_by_key(|(&class, &count)| (count, std::cmp::Reverse(class)))
                    .map(|(&class, _)| (instance, class))
            })
            .collect();
        let mut objects_of = vec![0u64; class_count];
        for &class in instance_class.values() {
            if let Some(count) = objects_of.get_mut(class as usize) {
                *count += 1;
            }
        }
        let neighbours = neighbours(scene);
        let depth: Vec<Option<f32>> = scene.stats.iter().map(|s| s.mean_depth_mm).collect();
        let area: Vec<u32> = scene.stats.iter().map(|s| s.area).collect();
        let record = SceneRecord {
            segment_class,
            neighbours,
            depth,
            area,
            in_instance: in_instance
                .into_iter()
                .map(|map| {
                    let mut list: Vec<(u16, u64)> = map.into_iter().collect();
                    list.sort_unstable();
                    list
                })
                .collect(),
            instances: instance_class
                .iter()
                .map(|(&instance, &class)| (instance, (class, instance_area[&instance])))
                .collect(),
        };
        // Each object's depth-scaled area, from its pixels in each segment and that segment's depth.
        let mut scaled: BTreeMap<u16, Option<f64>> = BTreeMap::new();
        for (segment, list) in record.in_instance.iter().enumerate() {
            let metres = record.depth[segment].map(|d| f64::from(d) / 1000.0);
            for &(instance, count) in list {
                let entry = scaled.entry(instance).or_insert(Some(0.0));
                *entry = match (*entry, metres) {
                    (Some(total), Some(m)) if m.is_finite() && m > 0.0 => {
                        Some(total + count as f64 * m * m)
                    }
                    _ => None,
                };
            }
        }
        for (instance, size) in scaled {
            if let (Some(size), Some(&(class, _))) = (size, record.instances.get(&instance)) {
                if let Some(sizes) = self.scaled_sizes.get_mut(class as usize) {
                    sizes.push(size);
                }
            }
        }
        let mut present: Vec<u16> = record.segment_class.clone();
        present.sort_unstable();
        present.dedup();
        for class in
            (0..class_count as u16).filter(|&c| objects_of[c as usize] > 0 || present.contains(&c))
        {
            self.objects[class as usize] += objects_of[class as usize];
            for index in 0..=CANDIDATE_CUTS.len() {
                let groups = Self::patches(&record, class, Self::cut_at(index));
                self.tallies[class as usize][index] += tally_patches(&record, class, groups.iter());
            }
        }
        self.records.push(record);
        self.scenes += 1;
        Ok(())
    }

    /// The chosen cut of every class index (`None`: never cut), by the rule in the module doc.
    pub fn chosen(&self) -> Vec<Option<f32>> {
        self.tallies
            .iter()
            .zip(&self.objects)
            .map(|(tallies, &objects)| {
                if objects < MIN_OBJECTS {
                    return None;
                }
                let mut best = (tallies[0].quality(), None);
                // Larger cuts first, so a tie keeps the cut that splits less.
                for index in (1..tallies.len()).rev() {
                    let quality = tallies[index].quality();
                    if quality > best.0 {
                        best = (quality, Some(CANDIDATE_CUTS[index - 1]));
                    }
                }
                best.1
            })
            .collect()
    }

    /// The cut of candidate `index` (0: never cut).
    fn cut_at(index: usize) -> f32 {
        if index == 0 {
            f32::INFINITY
        } else {
            CANDIDATE_CUTS[index - 1]
        }
    }

    /// The patches of `class` in a record's ground-truth labels, joined across edges no stronger than `cut`.
    fn patches(record: &SceneRecord, class: u16, cut: f32) -> Vec<Vec<usize>> {
        components(
            &record.segment_class,
            &record.neighbours,
            &record.depth,
            |c, strength| c.0 != class || strength <= cut,
        )
        .into_iter()
        .filter(|group| record.segment_class[group[0]] == class)
        .collect()
    }

    /// Per class index: the typical size kept (see the module doc), or `None` for a class that is not
    /// parted by size. Walks every counted scene again: compute it once and pass it to `to_file` and
    /// `summary`.
    pub fn typical_sizes(&self) -> Vec<Option<TypicalSize>> {
        let chosen = self.chosen();
        (0..self.tallies.len())
            .map(|class| {
                if self.objects[class] < MIN_OBJECTS || self.scaled_sizes[class].is_empty() {
                    return None;
                }
                let mut sizes = self.scaled_sizes[class].clone();
                sizes.sort_by(f64::total_cmp);
                let typical = sizes[sizes.len() / 2] as f32;
                if !(typical.is_finite() && typical > 0.0) {
                    return None;
                }
                let cut = chosen[class].unwrap_or(f32::INFINITY);
                let (mut plain, mut parted) = (Tally::default(), Tally::default());
                for record in &self.records {
                    let patches = Self::patches(record, class as u16, cut);
                    let one = tally_patches(record, class as u16, patches.iter());
                    let pieces: Vec<Vec<usize>> = patches
                        .iter()
                        .flat_map(|patch| {
                            part_by_size(
                                patch,
                                typical,
                                &record.neighbours,
                                &record.depth,
                                &record.area,
                            )
                        })
                        .collect();
                    plain += one;
                    parted += tally_patches(record, class as u16, pieces.iter());
                }
                (parted.quality() > plain.quality()).then_some(TypicalSize {
                    size: typical,
                    quality_without: plain.quality(),
                    quality_with: parted.quality(),
                })
            })
            .collect()
    }

    /// The file of the chosen cuts and the typical sizes `typical_sizes` returned, by class name.
    pub fn to_file(
        &self,
        taxonomy: &Taxonomy,
        source: String,
        sizes: &[Option<TypicalSize>],
    ) -> Result<InstanceCutsFile, InstanceCutsError> {
        let name = |index: usize| {
            taxonomy
                .classes()
                .get(index)
                .map(|class| class.name.clone())
                .ok_or_else(|| InstanceCutsError::UnknownClass(format!("class index {index}")))
        };
        let mut cuts = BTreeMap::new();
        for (index, cut) in self.chosen().into_iter().enumerate() {
            if let Some(cut) = cut {
                cuts.insert(name(index)?, cut);
            }
        }
        let mut typical_sizes = BTreeMap::new();
        for (index, size) in sizes.iter().enumerate() {
            if let Some(size) = size {
                typical_sizes.insert(name(index)?, size.size);
            }
        }
        Ok(InstanceCutsFile {
            schema: INSTANCE_CUTS_SCHEMA,
            source,
            cuts,
            typical_sizes,
        })
    }

    /// One line per class that has ground-truth objects: its objects, RQ never cut and at its chosen cut,
    /// and the typical size kept, if any (`sizes` as `typical_sizes` returned them).
    pub fn summary(&self, taxonomy: &Taxonomy, sizes: &[Option<TypicalSize>]) -> Vec<String> {
        let chosen = self.chosen();
        let mut lines = Vec::new();
        for (index, tallies) in self.tallies.iter().enumerate() {
            if self.objects[index] == 0 {
                continue;
            }
            let name = taxonomy
                .classes()
                .get(index)
                .map(|c| c.name.as_str())
                .unwrap_or("?");
            let at = match chosen[index] {
                Some(cut) => {
                    let position = CANDIDATE_CUTS.iter().position(|&c| c == cut).unwrap_or(0);
                    format!("cut {cut:.2}: RQ {:.3}", tallies[position + 1].quality())
                }
                None => "never cut".to_string(),
            };
            let sized = match sizes.get(index).copied().flatten() {
                Some(typical) => format!(
                    "; parted by typical size {:.0}: RQ {:.3} -> {:.3}",
                    typical.size, typical.quality_without, typical.quality_with
                ),
                None => String::new(),
            };
            lines.push(format!(
                "{name}: {} objects, RQ never cut {:.3}, {at}{sized}",
                self.objects[index],
                tallies[0].quality()
            ));
        }
        lines
    }
}
