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
//!
//! # Typical sizes
//!
//! Objects of one colour side by side (a row of base cabinets, chairs pushed together) share no edge a cut
//! can find. For a class with a typical size `s` (the median over training renders of its objects' *depth-
//! scaled area*, `sum over segments of pixels x (depth in metres)^2`, which does not change with distance
//! for a given camera), a patch whose scaled area is `a` is parted into `round(a / s)` objects by geodesic
//! k-medoids (`super::split`) when that is 2 or more. Patches with a segment of unknown depth are left
//! whole. A class gets a typical size only where parting by it recovers more ground-truth objects of the
//! training renders than it invents (see `super::instance_statistics`).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use crate::ids::ClassId;
use crate::scene::Scene;
use crate::taxonomy::Taxonomy;

/// The schema of `models/instance_cuts.json`.
pub const INSTANCE_CUTS_SCHEMA: u32 = 1;

/// The committed cuts, counted by `sayso tune` over training renders.
pub const EMBEDDED_INSTANCE_CUTS: &str = include_str!("../../../models/instance_cuts.json");

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
    #[error("typical size of '{class}' is {value}; a size must be a finite number above 0")]
    BadSize { class: String, value: f32 },
}

/// The file: cuts by class name (classes not named are never cut) and how they were counted.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct InstanceCutsFile {
    pub schema: u32,
    /// The command and the scenes the cuts were counted over.
    pub source: String,
    pub cuts: BTreeMap<String, f32>,
    /// Class name -> typical depth-scaled area (pixels x m^2); a class not named is not parted by size.
    #[serde(default)]
    pub typical_sizes: BTreeMap<String, f32>,
}

/// Per-class cut strengths, checked against a taxonomy.
#[derive(Clone, Debug, PartialEq)]
pub struct InstanceCuts {
    by_class: Vec<Option<f32>>,
    typical: Vec<Option<f32>>,
}

impl InstanceCuts {
    /// No class is ever cut: every patch of a label is one object.
    pub fn none(class_count: usize) -> InstanceCuts {
        InstanceCuts {
            by_class: vec![None; class_count],
            typical: vec![None; class_count],
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
        let mut typical = vec![None; taxonomy.class_count()];
        for (name, &value) in &file.typical_sizes {
            let class = taxonomy
                .class_by_name(name)
                .ok_or_else(|| InstanceCutsError::UnknownClass(name.clone()))?;
            if !value.is_finite() || value <= 0.0 {
                return Err(InstanceCutsError::BadSize {
                    class: name.clone(),
                    value,
                });
            }
            typical[class.id.index()] = Some(value);
        }
        Ok(InstanceCuts { by_class, typical })
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

    /// The typical depth-scaled area of a class, when it is parted by size.
    pub fn typical_size(&self, class: ClassId) -> Option<f32> {
        self.typical.get(class.index()).copied().flatten()
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
    // Each list sized to its degree first, so the pushes below never grow one.
    let mut degree = vec![0usize; count];
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        if a < count && b < count && a != b {
            degree[a] += 1;
            degree[b] += 1;
        }
    }
    let mut lists: Vec<Vec<(usize, f32)>> = degree.into_iter().map(Vec::with_capacity).collect();
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

/// The depth-scaled area of a set of segments (pixels x m^2), or `None` when a segment's depth is unknown.
pub fn scaled_area(members: &[usize], depth: &[Option<f32>], area: &[u32]) -> Option<f64> {
    let mut total = 0.0;
    for &segment in members {
        let metres = f64::from(depth.get(segment).copied().flatten()?) / 1000.0;
        if !metres.is_finite() || metres <= 0.0 {
            return None;
        }
        total += f64::from(area.get(segment).copied().unwrap_or(0)) * metres * metres;
    }
    Some(total)
}

/// Parts a patch by its class's typical size (see the module doc): `round(scaled area / typical)` pieces
/// by geodesic k-medoids when that is 2 or more, else the patch whole.
pub fn part_by_size(
    patch: &[usize],
    typical: f32,
    neighbours: &[Vec<(usize, f32)>],
    depth: &[Option<f32>],
    area: &[u32],
) -> Vec<Vec<usize>> {
    let pieces = match scaled_area(patch, depth, area) {
        Some(scaled) if typical > 0.0 => (scaled / f64::from(typical)).round(),
        _ => 1.0,
    };
    if pieces >= 2.0 {
        let pieces = pieces.min(patch.len() as f64) as usize;
        super::split::geodesic_parts(patch, pieces, neighbours, depth, area)
    } else {
        vec![patch.to_vec()]
    }
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
        let cuts = InstanceCuts {
            by_class,
            typical: vec![None; 7],
        };
        let found = components(&labels, &neighbours, &depth, |c, s| cuts.joins(c, s));
        assert_eq!(found, vec![vec![0, 1], vec![2], vec![3]]);
        let whole = InstanceCuts::none(7);
        let found = components(&labels, &neighbours, &depth, |c, s| whole.joins(c, s));
        assert_eq!(found, vec![vec![0, 1, 2], vec![3]]);
    }

    #[test]
    fn a_patch_is_parted_by_its_scaled_area_over_the_typical_size() {
        // Six cells in a row, 16 pixels each at 1 m (scaled area 16 each, 96 in all), no colour edges.
        let neighbours: Vec<Vec<(usize, f32)>> = (0..6)
            .map(|i: usize| {
                [i.wrapping_sub(1), i + 1]
                    .into_iter()
                    .filter(|&j| j < 6)
                    .map(|j| (j, 0.0))
                    .collect()
            })
            .collect();
        let depth = vec![Some(1000.0); 6];
        let area = vec![16u32; 6];
        let patch: Vec<usize> = (0..6).collect();
        assert_eq!(scaled_area(&patch, &depth, &area), Some(96.0));
        // 96 / 32 = 3 objects, each a run of the row, together the whole row.
        let mut parts = part_by_size(&patch, 32.0, &neighbours, &depth, &area);
        parts.sort();
        assert_eq!(parts.len(), 3, "{parts:?}");
        assert!(parts.iter().all(|p| p.windows(2).all(|w| w[1] == w[0] + 1)));
        assert_eq!(parts.concat(), patch);
        // At 2 m the same pixels cover four times the area: 384 / 128 = 3 again.
        let far = vec![Some(2000.0); 6];
        assert_eq!(
            part_by_size(&patch, 128.0, &neighbours, &far, &area).len(),
            3
        );
        // Below 1.5 typical sizes, or with a depth unknown, the patch stays whole.
        assert_eq!(
            part_by_size(&patch, 70.0, &neighbours, &depth, &area),
            vec![patch.clone()]
        );
        let mut unknown = depth.clone();
        unknown[3] = None;
        assert_eq!(scaled_area(&patch, &unknown, &area), None);
        assert_eq!(
            part_by_size(&patch, 32.0, &neighbours, &unknown, &area),
            vec![patch.clone()]
        );
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
        let sized = r#"{"schema":1,"source":"t","cuts":{},"typical_sizes":{"cabinet":0.0}}"#;
        assert!(matches!(
            InstanceCuts::from_json(sized, &taxonomy),
            Err(InstanceCutsError::BadSize { .. })
        ));
        let sized = r#"{"schema":1,"source":"t","cuts":{},"typical_sizes":{"cabinet":2500.0}}"#;
        let cabinet = taxonomy.class_by_name("cabinet").unwrap().id;
        let cuts = InstanceCuts::from_json(sized, &taxonomy).unwrap();
        assert_eq!(cuts.typical_size(cabinet), Some(2500.0));
        assert_eq!(cuts.cut(cabinet), None);
        let cuts = InstanceCuts::from_json(&text(r#"{"book":1.5}"#), &taxonomy).unwrap();
        let book = taxonomy.class_by_name("book").unwrap().id;
        assert_eq!(cuts.cut(book), Some(1.5));
        assert!(cuts.joins(book, 1.5) && !cuts.joins(book, 1.6));
        assert!(cuts.joins(ClassId(0), 100.0));
        assert!(InstanceCuts::embedded(&taxonomy).is_ok());
    }
}
