//! Building a `JointEnergy` from a scene, its unaries, object hypotheses and grounded constraints.
//!
//! Owns: the default weights (`EnergyWeights`), the room-class prior (`RoomClassPrior`), and the translation
//! of every term listed in `crate::energy` into the energy's tables, keeping for every factor the constraint
//! it came from.
//! Must not: solve anything or parse words.

use serde::{Deserialize, Serialize};

use super::statistics::RoomClassCounts;
use super::{
    AbsentFactor, CountFactor, EnergyError, HypothesisTerm, JointEnergy, TupleFactor, UnaryFactor,
    ENERGY_SCHEMA, HARD_WEIGHT,
};
use crate::grounding::{
    footprint_of, in_region, relation_holds, Extents, GroundedConstraint, GroundedKind, Target,
};
use crate::hypotheses::{hypothesis_id, Hypothesis, HypothesisOrigin};
use crate::ids::{ClassId, SegmentId};
use crate::language::constraint::{Attribute, Count, SizeTerm};
use crate::scene::Scene;
use crate::taxonomy::Taxonomy;
use crate::unaries::Unaries;

/// Every weight of the energy. Defaults are hand-set starting values (to be tuned on training renders).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct EnergyWeights {
    /// Potts `lambda`, per boundary pixel.
    pub smoothing_lambda: f64,
    /// Potts `sigma`, in CIE76 units.
    pub contrast_sigma: f64,
    /// Fine/coarse agreement per member link.
    pub fine_coarse: f64,
    /// `g_h` per disagreeing member segment.
    pub agreement: f64,
    pub soft_count: f64,
    pub soft_absent: f64,
    pub soft_relation: f64,
    /// Per segment, for relabels.
    pub soft_segment: f64,
    pub soft_room: f64,
    /// Weight of the room declared in scene metadata.
    pub metadata_room: f64,
}

impl Default for EnergyWeights {
    fn default() -> Self {
        EnergyWeights {
            smoothing_lambda: 0.02,
            contrast_sigma: 12.0,
            fine_coarse: 0.3,
            agreement: 1.5,
            soft_count: 4.0,
            soft_absent: 4.0,
            soft_relation: 3.0,
            soft_segment: 3.0,
            soft_room: 6.0,
            metadata_room: 6.0,
        }
    }
}

/// The schema of `models/room_class_prior.json` this build writes. Schema 1 (no `counts`) is still read.
pub const PRIOR_SCHEMA: u32 = 2;

/// `P(class present | room)` and `P(room)`, stored as `models/room_class_prior.json`.
///
/// Schema 2 (written by `sayso tune`, documented in `models/README.md`): `schema`, `source` (which scenes
/// were counted), `room_count`, `class_count`, `present[room * class_count + class]`, `room_prior[room]`, and
/// `counts` (the raw counts the probabilities come from, see `crate::energy::statistics`). Schema 1 had no
/// `counts`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RoomClassPrior {
    pub schema: u32,
    /// How the table was estimated.
    pub source: String,
    pub room_count: usize,
    pub class_count: usize,
    /// `present[room * class_count + class]`.
    pub present: Vec<f64>,
    pub room_prior: Vec<f64>,
    /// The counts behind the probabilities, when they were counted from scenes.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub counts: Option<RoomClassCounts>,
}

/// The committed prior, embedded so the library needs no files.
pub const EMBEDDED_PRIOR: &str = include_str!("../../../models/room_class_prior.json");

/// The committed energy weights (`sayso tune` writes them), embedded so the library needs no files.
pub const EMBEDDED_WEIGHTS: &str = include_str!("../../../models/energy_weights.json");

/// Probability a class listed as typical for a room is in view there, and one that is not (a smoothed guess
/// from the taxonomy, until training renders exist to count from).
const TYPICAL_PRESENT: f64 = 0.5;
const ATYPICAL_PRESENT: f64 = 0.05;

impl RoomClassPrior {
    /// The smoothed prior estimated from the taxonomy's `rooms` lists (no renders counted yet).
    pub fn from_taxonomy(taxonomy: &Taxonomy) -> RoomClassPrior {
        let room_count = taxonomy.rooms().len().max(1);
        let class_count = taxonomy.class_count();
        let mut present = vec![ATYPICAL_PRESENT; room_count * class_count];
        for class in taxonomy.classes() {
            for room in &class.rooms {
                present[room.index() * class_count + class.id.index()] = TYPICAL_PRESENT;
            }
        }
        RoomClassPrior {
            // No counts: the schema-1 layout.
            schema: 1,
            source: "smoothed prior from grammar/classes.toml rooms lists (typical 0.5, otherwise 0.05); \
                     to be replaced by counts over training renders"
                .to_string(),
            room_count,
            class_count,
            present,
            room_prior: vec![1.0 / room_count as f64; room_count],
            counts: None,
        }
    }

    /// Reads a prior from its JSON text, checking the schema and the table shapes.
    pub fn from_json(text: &str) -> Result<RoomClassPrior, EnergyError> {
        let prior: RoomClassPrior = serde_json::from_str(text)
            .map_err(|error| EnergyError::Build(format!("room-class prior: {error}")))?;
        if prior.schema == 0 || prior.schema > PRIOR_SCHEMA {
            return Err(EnergyError::Build(format!(
                "room-class prior schema {} is not supported (this build reads 1..={PRIOR_SCHEMA})",
                prior.schema
            )));
        }
        if prior.present.len() != prior.room_count * prior.class_count {
            return Err(EnergyError::Shape {
                table: "room-class prior present",
                found: prior.present.len(),
                expected: prior.room_count * prior.class_count,
            });
        }
        if prior.room_prior.len() != prior.room_count {
            return Err(EnergyError::Shape {
                table: "room-class prior room_prior",
                found: prior.room_prior.len(),
                expected: prior.room_count,
            });
        }
        Ok(prior)
    }

    /// The embedded prior.
    pub fn embedded() -> Result<RoomClassPrior, EnergyError> {
        RoomClassPrior::from_json(EMBEDDED_PRIOR)
    }
}

/// The schema of `models/energy_weights.json`.
pub const WEIGHTS_SCHEMA: u32 = 1;

/// The weights file: the weights and how they were chosen.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct WeightsFile {
    pub schema: u32,
    /// The command and the scenes the weights were tuned on.
    pub source: String,
    pub weights: EnergyWeights,
}

impl EnergyWeights {
    /// Reads a weights file's JSON text (schema checked, every weight finite and not negative).
    pub fn from_json(text: &str) -> Result<EnergyWeights, EnergyError> {
        let file: WeightsFile = serde_json::from_str(text)
            .map_err(|error| EnergyError::Build(format!("energy weights: {error}")))?;
        if file.schema != WEIGHTS_SCHEMA {
            return Err(EnergyError::Build(format!(
                "energy weights schema {} is not supported (this build reads {WEIGHTS_SCHEMA})",
                file.schema
            )));
        }
        let weights = file.weights;
        for (name, value) in weights.named() {
            if !value.is_finite() {
                return Err(EnergyError::NotFinite {
                    what: format!("energy weight {name}"),
                });
            }
            if value < 0.0 {
                return Err(EnergyError::NegativeWeight {
                    what: format!("energy weight {name}"),
                });
            }
        }
        Ok(weights)
    }

    /// The committed weights (`models/energy_weights.json`), which the pipeline uses as defaults.
    pub fn embedded() -> Result<EnergyWeights, EnergyError> {
        EnergyWeights::from_json(EMBEDDED_WEIGHTS)
    }

    /// Every weight with its field name.
    pub fn named(&self) -> [(&'static str, f64); 10] {
        [
            ("smoothing_lambda", self.smoothing_lambda),
            ("contrast_sigma", self.contrast_sigma),
            ("fine_coarse", self.fine_coarse),
            ("agreement", self.agreement),
            ("soft_count", self.soft_count),
            ("soft_absent", self.soft_absent),
            ("soft_relation", self.soft_relation),
            ("soft_segment", self.soft_segment),
            ("soft_room", self.soft_room),
            ("metadata_room", self.metadata_room),
        ]
    }
}

/// A constraint that could not be expressed as a factor, with the reason.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct UnmetAtBuild {
    pub constraint: usize,
    pub reason: String,
}

/// The energy plus the hypothesis list it indexes (relabels may add hypotheses).
#[derive(Clone, Debug, PartialEq)]
pub struct BuiltEnergy {
    pub energy: JointEnergy,
    pub hypotheses: Vec<Hypothesis>,
    pub unmet: Vec<UnmetAtBuild>,
}

/// What the energy is built from.
pub struct EnergyInputs<'a> {
    pub scene: &'a Scene,
    pub unaries: &'a Unaries,
    pub taxonomy: &'a Taxonomy,
    pub hypotheses: &'a [Hypothesis],
    /// Which hypotheses the state the operator saw accepts (missing: not accepted): a relation is measured
    /// on the objects as shown (`crate::grounding::Extents`).
    pub accepted: &'a [bool],
    pub grounded: &'a [GroundedConstraint],
    pub prior: &'a RoomClassPrior,
    pub weights: &'a EnergyWeights,
}

fn probability_cost(probability: f64) -> f64 {
    -probability.clamp(1e-4, 1.0 - 1e-4).ln()
}

/// Builds the energy. Errors on shapes that do not fit or non-finite unaries.
pub fn build_energy(inputs: &EnergyInputs) -> Result<BuiltEnergy, EnergyError> {
    build(inputs, true)
}

/// The constraint part of `build_energy(inputs)` alone: the same hypotheses, factors, room and presence
/// costs and unmet list, with an empty unary table and no edges. For comparing what two sets of
/// constraints over one scene change (`sayso_solver::joint_region::touched_by_constraints`) without building
/// the segment part twice; it is not a valid energy and must never be solved.
pub fn build_constraint_part(inputs: &EnergyInputs) -> Result<BuiltEnergy, EnergyError> {
    build(inputs, false)
}

/// `build_energy`, with the segment part (unary table and edges, validated) or without it.
fn build(inputs: &EnergyInputs, segment_part: bool) -> Result<BuiltEnergy, EnergyError> {
    let scene = inputs.scene;
    let weights = inputs.weights;
    let fine_count = scene.segment_count();
    if fine_count == 0 {
        return Err(EnergyError::NoSegments);
    }
    if inputs.unaries.segment_count() != fine_count {
        return Err(EnergyError::Shape {
            table: "unaries rows",
            found: inputs.unaries.segment_count(),
            expected: fine_count,
        });
    }
    let label_count = inputs.unaries.class_count();
    let prior = inputs.prior;
    if prior.class_count != label_count || prior.present.len() != prior.room_count * label_count {
        return Err(EnergyError::Shape {
            table: "room-class prior classes",
            found: prior.class_count,
            expected: label_count,
        });
    }
    let region_count = scene.coarse.members.len();
    let node_count = fine_count + region_count;
    let (unary, edges) = if segment_part {
        segment_tables(inputs, node_count, label_count)?
    } else {
        (Vec::new(), Vec::new())
    };

    let mut hypotheses: Vec<Hypothesis> = inputs.hypotheses.to_vec();
    let mut factors = Factors::default();
    let mut unmet = Vec::new();
    let mut room_extra = vec![0.0; prior.room_count];
    // The objects as shown, measured once for every relation (hypotheses appended below for relabels are
    // their own members).
    let mut extents: Option<Extents> = None;
    for grounded in inputs.grounded {
        let index = grounded.constraint;
        let weight = |soft: f64| if grounded.hard { HARD_WEIGHT } else { soft };
        let mut report = |reason: String| {
            unmet.push(UnmetAtBuild {
                constraint: index,
                reason,
            })
        };
        match &grounded.kind {
            GroundedKind::Present { class } => factors.count.push(CountFactor {
                class: class.0,
                count: Count::AtLeast(1),
                weight: weight(weights.soft_count),
                source: Some(index),
            }),
            GroundedKind::Count { class, count } => factors.count.push(CountFactor {
                class: class.0,
                count: *count,
                weight: weight(weights.soft_count),
                source: Some(index),
            }),
            GroundedKind::Absent { class } => factors.absent.push(AbsentFactor {
                class: class.0,
                weight: weight(weights.soft_absent),
                source: Some(index),
            }),
            GroundedKind::Room { room } => {
                if room.index() >= prior.room_count {
                    report(format!("room type {room} is not in the prior"));
                } else {
                    for (other, extra) in room_extra.iter_mut().enumerate() {
                        if other != room.index() {
                            *extra += weight(weights.soft_room);
                        }
                    }
                }
            }
            GroundedKind::Relation {
                subject,
                relation,
                negated,
                landmarks,
            } => {
                let Some(first) = landmarks.first() else {
                    report("the relation names no landmark".to_string());
                    continue;
                };
                let second = landmarks.get(1);
                let extents = extents
                    .get_or_insert_with(|| Extents::new(scene, &hypotheses, inputs.accepted));
                let mut holding = Vec::new();
                let mut failing = Vec::new();
                for &s in &subject.hypotheses {
                    for &l in &first.hypotheses {
                        if s == l {
                            continue;
                        }
                        let subject_members = extents.of(&hypotheses, s);
                        let first_members = extents.of(&hypotheses, l);
                        let ok = match second {
                            Some(second) => second.hypotheses.iter().any(|&m| {
                                m != s
                                    && m != l
                                    && relation_holds(
                                        scene,
                                        *relation,
                                        subject_members,
                                        &[first_members, extents.of(&hypotheses, m)],
                                    )
                            }),
                            None => {
                                relation_holds(scene, *relation, subject_members, &[first_members])
                            }
                        };
                        if ok {
                            holding.push(vec![s as u32, l as u32]);
                        } else {
                            failing.push(vec![s as u32, l as u32]);
                        }
                    }
                }
                if subject.hypotheses.is_empty() || first.hypotheses.is_empty() {
                    report(
                        "the subject or the landmark is not an object sayso can place".to_string(),
                    );
                } else if !negated && holding.is_empty() {
                    report("no candidate pair stands in that relation in this picture".to_string());
                    factors.tuple.push(TupleFactor {
                        tuples: Vec::new(),
                        negated: false,
                        weight: weight(weights.soft_relation),
                        source: Some(index),
                    });
                } else if *negated {
                    if !holding.is_empty() {
                        factors.tuple.push(TupleFactor {
                            tuples: holding,
                            negated: true,
                            weight: weight(weights.soft_relation),
                            source: Some(index),
                        });
                    }
                } else {
                    factors.tuple.push(TupleFactor {
                        tuples: holding,
                        negated: false,
                        weight: weight(weights.soft_relation),
                        source: Some(index),
                    });
                }
                let _ = failing;
            }
            GroundedKind::Region { subject, region } => {
                let inside: Vec<Vec<u32>> = subject
                    .hypotheses
                    .iter()
                    .filter(|&&h| {
                        in_region(
                            &footprint_of(scene, &hypotheses[h].members),
                            *region,
                            scene.width(),
                            scene.height(),
                        )
                    })
                    .map(|&h| vec![h as u32])
                    .collect();
                if inside.is_empty() {
                    report("no candidate object is in that part of the picture".to_string());
                }
                factors.tuple.push(TupleFactor {
                    tuples: inside,
                    negated: false,
                    weight: weight(weights.soft_relation),
                    source: Some(index),
                });
            }
            GroundedKind::Relabel { target, from, to } => {
                let segments: Vec<u32> = target.segments.iter().map(|s| s.0).collect();
                if segments.is_empty() {
                    report("the target covers no segment".to_string());
                    continue;
                }
                let segment_weight = weight(weights.soft_segment);
                if let Some(from) = from {
                    factors.unary.push(UnaryFactor {
                        segments: segments.clone(),
                        label: from.0,
                        wanted: false,
                        weight: segment_weight,
                        source: Some(index),
                    });
                    // Only hypotheses mostly inside the target are denied: "that's not the wall" at a
                    // point says nothing about the rest of the wall.
                    let denied: Vec<Vec<u32>> = overlapping(&hypotheses, target, *from)
                        .into_iter()
                        .filter(|&h| {
                            let members = &hypotheses[h].members;
                            let inside = members
                                .iter()
                                .filter(|s| target.segments.binary_search(s).is_ok())
                                .count();
                            2 * inside >= members.len()
                        })
                        .map(|h| vec![h as u32])
                        .collect();
                    if !denied.is_empty() {
                        factors.tuple.push(TupleFactor {
                            tuples: denied,
                            negated: true,
                            weight: weight(weights.soft_relation),
                            source: Some(index),
                        });
                    }
                }
                if let Some(to) = to {
                    factors.unary.push(UnaryFactor {
                        segments: segments.clone(),
                        label: to.0,
                        wanted: true,
                        weight: segment_weight,
                        source: Some(index),
                    });
                    let wanted =
                        target_hypothesis(scene, inputs.unaries, &mut hypotheses, target, *to);
                    let twins: Vec<Vec<u32>> = overlapping(&hypotheses, target, *to)
                        .into_iter()
                        .filter(|&h| h != wanted)
                        .map(|h| vec![h as u32, wanted as u32])
                        .collect();
                    if !twins.is_empty() {
                        factors.tuple.push(TupleFactor {
                            tuples: twins,
                            negated: true,
                            weight: HARD_WEIGHT,
                            source: None,
                        });
                    }
                    factors.tuple.push(TupleFactor {
                        tuples: vec![vec![wanted as u32]],
                        negated: false,
                        weight: weight(weights.soft_relation),
                        source: Some(index),
                    });
                }
            }
            GroundedKind::Attribute { target, attribute } => {
                let matching: Vec<Vec<u32>> = target
                    .hypotheses
                    .iter()
                    .filter(|&&h| {
                        attribute_holds(scene, &hypotheses, h, &target.hypotheses, *attribute)
                    })
                    .map(|&h| vec![h as u32])
                    .collect();
                if matching.is_empty() {
                    report("the object does not look that way in this picture".to_string());
                }
                factors.tuple.push(TupleFactor {
                    tuples: matching,
                    negated: false,
                    weight: weight(weights.soft_relation),
                    source: Some(index),
                });
            }
        }
    }

    // The object a definite statement places or names (the laptop of "the laptop is on the desk", the
    // towel of "that's a towel") is drawn in full when on: its members take its class, so the scene graph
    // shows the object the statement needs. A landmark keeps the usual agreement: "the desk" is taken to
    // be in view already.
    let mut drawn_in_full = vec![false; hypotheses.len()];
    for factor in factors
        .tuple
        .iter()
        .filter(|f| !f.negated && f.source.is_some() && f.weight >= HARD_WEIGHT)
    {
        for &h in factor.tuples.iter().filter_map(|tuple| tuple.first()) {
            if let Some(flag) = drawn_in_full.get_mut(h as usize) {
                *flag = true;
            }
        }
    }
    let hypothesis_terms = hypotheses
        .iter()
        .zip(&drawn_in_full)
        .map(|(h, &full)| {
            let score = (h.score as f64).clamp(0.02, 0.98);
            HypothesisTerm {
                class: h.class.0,
                members: h.members.iter().map(|s| s.0).collect(),
                activation_cost: -(score / (1.0 - score)).ln(),
                agreement_weight: if full { HARD_WEIGHT } else { weights.agreement },
            }
        })
        .collect();
    let mut room_cost: Vec<f64> = (0..prior.room_count)
        .map(|r| probability_cost(prior.room_prior.get(r).copied().unwrap_or(1.0)) + room_extra[r])
        .collect();
    if let Some(room) = scene.room {
        for (other, cost) in room_cost.iter_mut().enumerate() {
            if other != room.index() {
                *cost += weights.metadata_room;
            }
        }
    }
    let presence_cost = prior
        .present
        .iter()
        .map(|&p| {
            let p = p.clamp(1e-4, 1.0 - 1e-4);
            -p.ln() + (1.0 - p).ln()
        })
        .collect();
    let energy = JointEnergy {
        schema: ENERGY_SCHEMA,
        label_count,
        fine_count,
        node_count,
        unary,
        edges,
        hypotheses: hypothesis_terms,
        room_count: prior.room_count,
        room_cost,
        presence_cost,
        count_factors: factors.count,
        absent_factors: factors.absent,
        tuple_factors: factors.tuple,
        unary_factors: factors.unary,
    };
    if segment_part {
        energy.validate()?;
    }
    Ok(BuiltEnergy {
        energy,
        hypotheses,
        unmet,
    })
}

/// One Potts edge of the energy: its two nodes and its weight.
type PottsEdge = (u32, u32, f64);

/// The segment part of the energy: the negated log-probabilities of every fine segment (coarse rows zero)
/// and the Potts edges, fine-fine by contrast and fine-coarse by membership.
fn segment_tables(
    inputs: &EnergyInputs,
    node_count: usize,
    label_count: usize,
) -> Result<(Vec<f64>, Vec<PottsEdge>), EnergyError> {
    let scene = inputs.scene;
    let weights = inputs.weights;
    let fine_count = scene.segment_count();
    let mut unary = vec![0.0; node_count * label_count];
    for s in 0..fine_count {
        for c in 0..label_count {
            let value = -(inputs.unaries.log_probs[[s, c]] as f64);
            if !value.is_finite() {
                return Err(EnergyError::NotFinite {
                    what: format!("unary of segment {s} class {c}"),
                });
            }
            unary[s * label_count + c] = value;
        }
    }
    let mut edges = Vec::new();
    let two_sigma_squared = 2.0 * weights.contrast_sigma * weights.contrast_sigma;
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        if a >= fine_count || b >= fine_count || a == b {
            continue;
        }
        let contrast = edge.weight.colour_contrast as f64;
        let weight = weights.smoothing_lambda
            * edge.weight.boundary_length as f64
            * (-(contrast * contrast) / two_sigma_squared).exp();
        if weight.is_finite() && weight > 0.0 {
            edges.push((a as u32, b as u32, weight));
        }
    }
    for (region, members) in scene.coarse.members.iter().enumerate() {
        for member in members {
            if member.index() < fine_count {
                edges.push((member.0, (fine_count + region) as u32, weights.fine_coarse));
            }
        }
    }
    Ok((unary, edges))
}

#[derive(Default)]
struct Factors {
    count: Vec<CountFactor>,
    absent: Vec<AbsentFactor>,
    tuple: Vec<TupleFactor>,
    unary: Vec<UnaryFactor>,
}

/// Hypotheses of `class` sharing a segment with the target.
fn overlapping(hypotheses: &[Hypothesis], target: &Target, class: ClassId) -> Vec<usize> {
    (0..hypotheses.len())
        .filter(|&h| {
            hypotheses[h].class == class
                && hypotheses[h]
                    .members
                    .iter()
                    .any(|s| target.segments.binary_search(s).is_ok())
        })
        .collect()
}

/// The hypothesis "the target is a `class`": reused when it exists, otherwise added (the caller keeps it and
/// overlapping hypotheses of the same class from both being on, so one object is not counted twice).
fn target_hypothesis(
    scene: &Scene,
    unaries: &Unaries,
    hypotheses: &mut Vec<Hypothesis>,
    target: &Target,
    class: ClassId,
) -> usize {
    let members: Vec<SegmentId> = target.segments.clone();
    if let Some(found) = hypotheses
        .iter()
        .position(|h| h.class == class && h.members == members)
    {
        return found;
    }
    let footprint = footprint_of(scene, &members);
    let mut probability = 0.0f64;
    for member in &members {
        if member.index() < unaries.segment_count() && class.index() < unaries.class_count() {
            probability += (unaries.log_probs[[member.index(), class.index()]] as f64).exp();
        }
    }
    let score = (probability / members.len().max(1) as f64) as f32;
    hypotheses.push(Hypothesis {
        id: hypothesis_id(class, &members),
        class,
        members,
        bbox: footprint.bbox,
        score,
        origin: HypothesisOrigin::FineGroup,
    });
    hypotheses.len() - 1
}

fn attribute_holds(
    scene: &Scene,
    hypotheses: &[Hypothesis],
    hypothesis: usize,
    peers: &[usize],
    attribute: Attribute,
) -> bool {
    match attribute {
        Attribute::Colour(term) => {
            crate::grounding::colour_terms::nearest_term(crate::grounding::mean_colour(
                scene,
                &hypotheses[hypothesis].members,
            )) == term
        }
        Attribute::Size(size) => {
            // Relative to the other hypotheses of the same class in the scene.
            let class = hypotheses[hypothesis].class;
            let mut areas: Vec<u32> = hypotheses
                .iter()
                .filter(|h| h.class == class)
                .map(|h| footprint_of(scene, &h.members).area)
                .collect();
            let _ = peers;
            areas.sort_unstable();
            let median = areas.get(areas.len() / 2).copied().unwrap_or(0);
            let area = footprint_of(scene, &hypotheses[hypothesis].members).area;
            match size {
                SizeTerm::Big => area >= median,
                SizeTerm::Small => area <= median,
            }
        }
    }
}
