//! Room-type-to-class and class co-occurrence statistics counted over labelled scenes, and the room-class
//! prior they give (`models/room_class_prior.json`, schema 2).
//!
//! Owns: `RoomClassCounts` (scenes per room type, scenes per room type in which a class is in view, scenes
//! in which two classes are in view together), the smoothing that turns counts into probabilities, and the
//! `RoomClassPrior` built from them.
//! Must not: render, read files or look at demo scenes; scenes arrive as a room type and a label map, and the
//! caller decides which scenes are counted (training renders only, see `sayso tune`).
//!
//! # Estimates
//!
//! A class is *in view* in a scene when at least `MIN_PIXELS` pixels of its label map carry it (a handful of
//! stray pixels at an object's silhouette is not the object; common practice to ignore specks).
//! `P(class in view | room) = (n_rc + 1) / (N_r + 2)` — Laplace's rule of succession, so a class never seen
//! in a room type keeps a small probability and one always seen stays below 1. `P(room) = (N_r + 1) /
//! (N + R)` (add-one smoothing over the room types). Co-occurrence is stored as raw counts over all scenes
//! (`co_occurrence[a * class_count + b]`, symmetric, the diagonal being each class's scene count); the
//! energy uses it only through the room mixture (classes independent given the room type, see
//! `crate::energy`).

use serde::{Deserialize, Serialize};

use super::build::{RoomClassPrior, PRIOR_SCHEMA};
use super::EnergyError;

/// Pixels a class needs in a scene's label map to count as in view.
pub const MIN_PIXELS: u32 = 20;

/// Counts over labelled scenes.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct RoomClassCounts {
    pub room_count: usize,
    pub class_count: usize,
    /// `scenes[room]`: scenes of that room type counted.
    pub scenes: Vec<u32>,
    /// `present[room * class_count + class]`: scenes of that room type with the class in view.
    pub present: Vec<u32>,
    /// `co_occurrence[a * class_count + b]`: scenes (any room type) with both classes in view.
    pub co_occurrence: Vec<u32>,
}

impl RoomClassCounts {
    /// Empty counts for this many room types and classes.
    pub fn new(room_count: usize, class_count: usize) -> RoomClassCounts {
        RoomClassCounts {
            room_count,
            class_count,
            scenes: vec![0; room_count],
            present: vec![0; room_count * class_count],
            co_occurrence: vec![0; class_count * class_count],
        }
    }

    /// The total number of scenes counted.
    pub fn scene_count(&self) -> u32 {
        self.scenes.iter().sum()
    }

    /// The classes in view in a label map (`MIN_PIXELS` or more pixels; ids outside the classes ignored,
    /// which covers the unlabelled value).
    pub fn classes_in_view(&self, labels: &[u16]) -> Vec<usize> {
        let mut pixels = vec![0u32; self.class_count];
        for &label in labels {
            if let Some(count) = pixels.get_mut(label as usize) {
                *count += 1;
            }
        }
        (0..self.class_count)
            .filter(|&class| pixels[class] >= MIN_PIXELS)
            .collect()
    }

    /// Counts one scene of room type `room` with this label map.
    pub fn add_scene(&mut self, room: usize, labels: &[u16]) -> Result<(), EnergyError> {
        if room >= self.room_count {
            return Err(EnergyError::OutOfRange {
                what: "a counted scene".to_string(),
                kind: "room type",
                index: room,
            });
        }
        let in_view = self.classes_in_view(labels);
        self.scenes[room] += 1;
        for &a in &in_view {
            self.present[room * self.class_count + a] += 1;
            for &b in &in_view {
                self.co_occurrence[a * self.class_count + b] += 1;
            }
        }
        Ok(())
    }

    /// `P(class in view | room)` by Laplace's rule of succession.
    pub fn present_probability(&self, room: usize, class: usize) -> f64 {
        let seen = self.present[room * self.class_count + class] as f64;
        (seen + 1.0) / (self.scenes[room] as f64 + 2.0)
    }

    /// `P(room)` with add-one smoothing.
    pub fn room_probability(&self, room: usize) -> f64 {
        (self.scenes[room] as f64 + 1.0) / (self.scene_count() as f64 + self.room_count as f64)
    }

    /// The prior these counts give; `source` says which scenes were counted.
    pub fn to_prior(&self, source: String) -> RoomClassPrior {
        let mut present = Vec::with_capacity(self.room_count * self.class_count);
        for room in 0..self.room_count {
            for class in 0..self.class_count {
                present.push(self.present_probability(room, class));
            }
        }
        RoomClassPrior {
            schema: PRIOR_SCHEMA,
            source,
            room_count: self.room_count,
            class_count: self.class_count,
            present,
            room_prior: (0..self.room_count)
                .map(|room| self.room_probability(room))
                .collect(),
            counts: Some(self.clone()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A label map with `pixels` pixels of each listed class (and some unlabelled pixels).
    fn map(classes: &[(u16, u32)]) -> Vec<u16> {
        let mut labels = vec![255u16; 7];
        for &(class, pixels) in classes {
            labels.extend(std::iter::repeat_n(class, pixels as usize));
        }
        labels
    }

    #[test]
    fn hand_made_scenes_give_the_counts_by_hand() {
        // Two room types, four classes. Room 0: scenes {0, 1}, {0, 2}, {0, 1 with 5 pixels only};
        // room 1: scene {2, 3}.
        let mut counts = RoomClassCounts::new(2, 4);
        counts.add_scene(0, &map(&[(0, 50), (1, 30)])).unwrap();
        counts.add_scene(0, &map(&[(0, 40), (2, 20)])).unwrap();
        counts.add_scene(0, &map(&[(0, 40), (1, 5)])).unwrap();
        counts.add_scene(1, &map(&[(2, 100), (3, 25)])).unwrap();
        assert_eq!(counts.scenes, vec![3, 1]);
        assert_eq!(counts.present, vec![3, 1, 1, 0, 0, 0, 1, 1]);
        assert_eq!(counts.scene_count(), 4);
        let co = |a: usize, b: usize| counts.co_occurrence[a * 4 + b];
        assert_eq!(co(0, 0), 3);
        assert_eq!(co(0, 1), 1);
        assert_eq!(co(1, 0), 1);
        assert_eq!(co(0, 2), 1);
        assert_eq!(co(2, 3), 1);
        assert_eq!(co(2, 2), 2);
        assert_eq!(co(1, 3), 0);
        // Laplace: class 0 in room 0 seen 3 of 3 -> 4/5; class 3 in room 0 never -> 1/5.
        assert!((counts.present_probability(0, 0) - 0.8).abs() < 1e-12);
        assert!((counts.present_probability(0, 3) - 0.2).abs() < 1e-12);
        assert!((counts.present_probability(1, 3) - 2.0 / 3.0).abs() < 1e-12);
        // Rooms: (3 + 1) / (4 + 2) and (1 + 1) / (4 + 2).
        assert!((counts.room_probability(0) - 4.0 / 6.0).abs() < 1e-12);
        assert!((counts.room_probability(1) - 2.0 / 6.0).abs() < 1e-12);
        let prior = counts.to_prior("hand-made".to_string());
        assert_eq!(prior.schema, PRIOR_SCHEMA);
        assert_eq!(prior.present.len(), 8);
        assert!((prior.present[4 + 2] - 2.0 / 3.0).abs() < 1e-12);
        assert!((prior.room_prior.iter().sum::<f64>() - 1.0).abs() < 1e-12);
    }

    #[test]
    fn an_unknown_room_type_is_a_typed_error() {
        let mut counts = RoomClassCounts::new(2, 4);
        assert!(matches!(
            counts.add_scene(2, &map(&[(0, 50)])),
            Err(EnergyError::OutOfRange { index: 2, .. })
        ));
        assert_eq!(counts.scene_count(), 0);
    }
}
