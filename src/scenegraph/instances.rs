//! Telling objects of one class apart inside one patch of its label: the strength of the edge between two
//! adjacent segments, and the per-class cut strengths (`models/instance_cuts.json`) above which two
//! segments of the same final label are reported as different objects (books side by side on a shelf).
//!
//! Owns: `edge_strength` (also the geodesic step of `super::split`), `InstanceCuts` and its file
//! (schema 1), and the neighbour lists the object rule walks.
//! Must not: learn the cuts (`super::instance_statistics` counts them over training renders, `sayso tune`
//! writes the file), change labels or hypotheses.
//!
//! # Edge strength
//!
//! `strength(a, b) = contrast(a, b) / 10 + |depth_a - depth_b| / min(depth_a, depth_b) / 0.1`: the CIE76
//! distance between the two segments' mean colours in units of 10 (common practice for "clearly
//! different"), plus the relative depth step in units of 10% (0 when either depth is unknown). A plainly
//! visible colour edge or a 10% depth step each add about 1.
//!
//! # Cuts
//!
//! For a class with a cut `t`, two adjacent segments of that final label belong to one object only when the
//! strength of their edge is at most `t`; a class without a cut (walls, a sofa) keeps every patch whole.
//! Each class's cut is the one that best recovers the ground-truth objects of training renders from their
//! ground-truth labels (see `super::instance_statistics`).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::ids::ClassId;
use crate::scene::Scene;
use crate::taxonomy::Taxonomy;

/// The schema of `models/instance_cuts.json`.
pub const INSTANCE_CUTS_SCHEMA: u32 = 1;

/// The committed cuts, counted by `sayso tune` over training renders.
pub const EMBEDDED_INSTANCE_CUTS: &str = include_str!("../../models/instance_cuts.json");

/// CIE76 units that add 1 to an edge's strength.
pub const CONTRAST_UNIT: f32 = 10.0;
/// Relative depth step that adds 1 to an edge's strength.
pub const DEPTH_UNIT: f32 = 0.1;

/// What is wrong with an instance-cuts file.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum InstanceCutsError {
    #[error("instance cuts: {0}")]
    Json(String),
    #[error(
        "instance cuts schema {found} is not supported (this build reads {INSTANCE_CUTS_SCHEMA})"
    )]
    Schema { found: u32 },
    #[error("instance cuts name the class '{0}', which the taxonomy does not have")]
    UnknownClass(String),
    #[error("instance cut of '{class}' is {value}; a cut must be a finite number of at least 0")]
    BadCut { class: String, value: f32 },
}

/// The file: cuts by class name (classes not named are never cut) and how they were counted.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct InstanceCutsFile {
    pub schema: u32,
    /// The command and the scenes the cuts were counted over.
    pub source: String,
    pub cuts: BTreeMap<String, f32>,
}

/// Per-class cut strengths, checked against a taxonomy.
#[derive(Clone, Debug, PartialEq)]
pub struct InstanceCuts {
    by_class: Vec<Option<f32>>,
}

impl InstanceCuts {
    /// No class is ever cut: every patch of a label is one object.
    pub fn none(class_count: usize) -> InstanceCuts {
        InstanceCuts {
            by_class: vec![None; class_count],
        }
    }

    /// Checks a file against the taxonomy.
    pub fn from_file(
        file: &InstanceCutsFile,
        taxonomy: &Taxonomy,
    ) -> Result<InstanceCuts, InstanceCutsError> {
        if file.schema != INSTANCE_CUTS_SCHEMA {
            return Err(InstanceCutsError::Schema { found: file.schema });
        }
        let mut by_class = vec![None; taxonomy.class_count()];
        for (name, &value) in &file.cuts {
            let class = taxonomy
                .class_by_name(name)
                .ok_or_else(|| InstanceCutsError::UnknownClass(name.clone()))?;
            if !value.is_finite() || value < 0.0 {
                return Err(InstanceCutsError::BadCut {
                    class: name.clone(),
                    value,
                });
            }
            by_class[class.id.index()] = Some(value);
        }
        Ok(InstanceCuts { by_class })
    }

    /// Reads a file's JSON text and checks it against the taxonomy.
    pub fn from_json(text: &str, taxonomy: &Taxonomy) -> Result<InstanceCuts, InstanceCutsError> {
        let file: InstanceCutsFile = serde_json::from_str(text)
            .map_err(|error| InstanceCutsError::Json(error.to_string()))?;
        InstanceCuts::from_file(&file, taxonomy)
    }

    /// The committed cuts (`models/instance_cuts.json`).
    pub fn embedded(taxonomy: &Taxonomy) -> Result<InstanceCuts, InstanceCutsError> {
        InstanceCuts::from_json(EMBEDDED_INSTANCE_CUTS, taxonomy)
    }

    /// The cut of a class (`None`: never cut; also for a class outside the table).
    pub fn cut(&self, class: ClassId) -> Option<f32> {
        self.by_class.get(class.index()).copied().flatten()
    }

    /// Do two adjacent segments of `class` joined by an edge of `strength` belong to one object?
    pub fn joins(&self, class: ClassId, strength: f32) -> bool {
        match self.cut(class) {
            Some(cut) => strength <= cut,
            None => true,
        }
    }
}

/// The strength of the edge between two adjacent segments (see the module doc); never negative, and a
/// non-finite contrast or depth counts as 0.
pub fn edge_strength(contrast: f32, depth: (Option<f32>, Option<f32>)) -> f32 {
    let contrast = if contrast.is_finite() {
        contrast.max(0.0)
    } else {
        0.0
    };
    let jump = match depth {
        (Some(a), Some(b)) if a.is_finite() && b.is_finite() && a.min(b) > 0.0 => {
            (a - b).abs() / a.min(b)
        }
        _ => 0.0,
    };
    contrast / CONTRAST_UNIT + jump / DEPTH_UNIT
}

/// Neighbour lists of the fine segments: (neighbour, colour contrast across the shared boundary), each
/// list ascending by neighbour, without duplicates.
pub fn neighbours(scene: &Scene) -> Vec<Vec<(usize, f32)>> {
    let count = scene.segment_count();
    let mut lists = vec![Vec::new(); count];
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        if a < count && b < count && a != b {
            let contrast = edge.weight.colour_contrast;
            let contrast = if contrast.is_finite() {
                contrast.max(0.0)
            } else {
                0.0
            };
            lists[a].push((b, contrast));
            lists[b].push((a, contrast));
        }
    }
    for list in &mut lists {
        list.sort_by(|x, y| x.0.cmp(&y.0).then(x.1.total_cmp(&y.1)));
        list.dedup_by_key(|entry| entry.0);
    }
    lists
}

/// Components of equal label, joined only across edges the cuts keep (`joins(label, strength)`), each
/// ascending, in order of their lowest segment. `depth[s]` is segment `s`'s mean depth when known.
pub fn components(
    labels: &[u16],
    neighbours: &[Vec<(usize, f32)>],
    depth: &[Option<f32>],
    joins: impl Fn(ClassId, f32) -> bool,
) -> Vec<Vec<usize>> {
    let mut seen = vec![false; labels.len()];
    let mut found = Vec::new();
    for start in 0..labels.len() {
        if seen[start] {
            continue;
        }
        seen[start] = true;
        let class = ClassId(labels[start]);
        let mut group = vec![start];
        let mut cursor = 0;
        while cursor < group.len() {
            let here = group[cursor];
            cursor += 1;
            for &(next, contrast) in neighbours.get(here).into_iter().flatten() {
                if next >= labels.len() || seen[next] || labels[next] != class.0 {
                    continue;
                }
                let depths = (
                    depth.get(here).copied().flatten(),
                    depth.get(next).copied().flatten(),
                );
                if joins(class, edge_strength(contrast, depths)) {
                    seen[next] = true;
                    group.push(next);
                }
            }
        }
        group.sort_unstable();
        found.push(group);
    }
    found
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn strength_adds_colour_and_depth_steps_and_ignores_what_is_unknown() {
        assert_eq!(edge_strength(10.0, (None, None)), 1.0);
        assert!((edge_strength(0.0, (Some(1000.0), Some(1100.0))) - 1.0).abs() < 1e-5);
        assert!(
            (edge_strength(20.0, (Some(2000.0), Some(1800.0))) - (2.0 + 1.111_111)).abs() < 1e-4
        );
        assert_eq!(edge_strength(f32::NAN, (Some(0.0), Some(5.0))), 0.0);
        assert_eq!(edge_strength(-3.0, (Some(f32::NAN), Some(5.0))), 0.0);
    }

    #[test]
    fn a_cut_separates_only_its_own_class_across_strong_edges() {
        // A row 0-1-2-3: segments 0..=2 class 5 (edge 1-2 strong), segment 3 class 6 (edge 2-3 strong).
        let neighbours = vec![
            vec![(1, 2.0)],
            vec![(0, 2.0), (2, 40.0)],
            vec![(1, 40.0), (3, 40.0)],
            vec![(2, 40.0)],
        ];
        let labels = [5u16, 5, 5, 6];
        let depth = vec![None; 4];
        let mut by_class = vec![None; 7];
        by_class[5] = Some(2.0);
        let cuts = InstanceCuts { by_class };
        let found = components(&labels, &neighbours, &depth, |c, s| cuts.joins(c, s));
        assert_eq!(found, vec![vec![0, 1], vec![2], vec![3]]);
        let whole = InstanceCuts::none(7);
        let found = components(&labels, &neighbours, &depth, |c, s| whole.joins(c, s));
        assert_eq!(found, vec![vec![0, 1, 2], vec![3]]);
    }

    #[test]
    fn files_naming_unknown_classes_or_bad_cuts_are_refused() {
        let taxonomy = Taxonomy::embedded();
        let text = |cuts: &str| format!(r#"{{"schema":1,"source":"t","cuts":{cuts}}}"#);
        assert_eq!(
            InstanceCuts::from_json(&text(r#"{"dragon":1.0}"#), &taxonomy),
            Err(InstanceCutsError::UnknownClass("dragon".into()))
        );
        assert!(matches!(
            InstanceCuts::from_json(&text(r#"{"book":-1.0}"#), &taxonomy),
            Err(InstanceCutsError::BadCut { .. })
        ));
        assert!(matches!(
            InstanceCuts::from_json(r#"{"schema":9,"source":"t","cuts":{}}"#, &taxonomy),
            Err(InstanceCutsError::Schema { found: 9 })
        ));
        assert!(matches!(
            InstanceCuts::from_json("{", &taxonomy),
            Err(InstanceCutsError::Json(_))
        ));
        let cuts = InstanceCuts::from_json(&text(r#"{"book":1.5}"#), &taxonomy).unwrap();
        let book = taxonomy.class_by_name("book").unwrap().id;
        assert_eq!(cuts.cut(book), Some(1.5));
        assert!(cuts.joins(book, 1.5) && !cuts.joins(book, 1.6));
        assert!(cuts.joins(ClassId(0), 100.0));
        assert!(InstanceCuts::embedded(&taxonomy).is_ok());
    }
}
