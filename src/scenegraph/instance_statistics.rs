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

use std::collections::{BTreeMap, HashMap};

use crate::scene::Scene;
use crate::taxonomy::Taxonomy;

use super::instances::{
    components, neighbours, InstanceCutsError, InstanceCutsFile, INSTANCE_CUTS_SCHEMA,
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

/// Tallies per class: index 0 for "never cut", then one per `CANDIDATE_CUTS` entry.
#[derive(Clone, Debug, PartialEq)]
pub struct InstanceCutCounts {
    tallies: Vec<Vec<Tally>>,
    objects: Vec<u64>,
    scenes: u32,
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
        // Per segment: pixels per ground-truth class and per instance.
        let mut class_votes: Vec<HashMap<u16, u32>> = vec![HashMap::new(); segment_count];
        let mut in_instance: Vec<HashMap<u16, u64>> = vec![HashMap::new(); segment_count];
        let mut segment_area = vec![0u64; segment_count];
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
            segment_area[segment] += 1;
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
        let mut present: Vec<u16> = segment_class.clone();
        present.sort_unstable();
        present.dedup();
        for class in
            (0..class_count as u16).filter(|&c| objects_of[c as usize] > 0 || present.contains(&c))
        {
            let wanted = objects_of[class as usize];
            self.objects[class as usize] += wanted;
            for index in 0..=CANDIDATE_CUTS.len() {
                let cut = if index == 0 {
                    f32::INFINITY
                } else {
                    CANDIDATE_CUTS[index - 1]
                };
                let groups = components(&segment_class, &neighbours, &depth, |c, strength| {
                    c.0 != class || strength <= cut
                });
                let mut matched = 0u64;
                let mut made = 0u64;
                for group in groups.iter().filter(|g| segment_class[g[0]] == class) {
                    made += 1;
                    let area: u64 = group.iter().map(|&s| segment_area[s]).sum();
                    let mut shared: HashMap<u16, u64> = HashMap::new();
                    for &segment in group {
                        for (&instance, &count) in &in_instance[segment] {
                            *shared.entry(instance).or_default() += count;
                        }
                    }
                    let hit = shared.iter().any(|(instance, &common)| {
                        instance_class.get(instance) == Some(&class) && {
                            let union = area + instance_area[instance] - common;
                            2 * common > union
                        }
                    });
                    if hit {
                        matched += 1;
                    }
                }
                let tally = &mut self.tallies[class as usize][index];
                tally.matched += matched;
                tally.invented += made - matched;
                tally.missed += wanted.saturating_sub(matched);
            }
        }
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

    /// The file of the chosen cuts, by class name.
    pub fn to_file(
        &self,
        taxonomy: &Taxonomy,
        source: String,
    ) -> Result<InstanceCutsFile, InstanceCutsError> {
        let mut cuts = BTreeMap::new();
        for (index, cut) in self.chosen().into_iter().enumerate() {
            if let Some(cut) = cut {
                let class = taxonomy.classes().get(index).ok_or_else(|| {
                    InstanceCutsError::UnknownClass(format!("class index {index}"))
                })?;
                cuts.insert(class.name.clone(), cut);
            }
        }
        Ok(InstanceCutsFile {
            schema: INSTANCE_CUTS_SCHEMA,
            source,
            cuts,
        })
    }

    /// One line per class that has ground-truth objects: its objects, RQ never cut and at its chosen cut.
    pub fn summary(&self, taxonomy: &Taxonomy) -> Vec<String> {
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
            lines.push(format!(
                "{name}: {} objects, RQ never cut {:.3}, {at}",
                self.objects[index],
                tallies[0].quality()
            ));
        }
        lines
    }
}
