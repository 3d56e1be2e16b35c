//! Estimating the energy's room/class statistics and tuning a few of its weights on training renders.
//!
//! Owns: the seed check (training renders never use the demo seeds 1000..=1999, which are the evaluation
//! set), rendering training scenes in memory, counting room-type-to-class presence and class co-occurrence
//! (`crate::energy::statistics`) and how well each cut strength tells a class's objects apart
//! (`crate::scenegraph::instance_statistics`), the scripted training notes written from a render's ground
//! truth, the tuning objective and the coordinate search over weights. `sayso tune` is its command.
//! Must not: read or score demo scenes, or write files (the binary writes what this returns).
//!
//! # The search
//!
//! Objective (higher is better): over the tuning scenes, the mean of mean IoU and graph-based object-level
//! accuracy (`crate::evaluation`), less `SHORTFALL_WEIGHT` times whatever pixel accuracy and mean IoU the
//! state lost against the classifier alone, averaged over three states of each scene — solved with no note,
//! after a room-type note, and after a count note as well. The notes are written from the render's ground truth
//! ("this is the kitchen", "there are three bottles": the countable class with the most objects, 2 to 6),
//! so the weights are chosen for following notes as well as for the picture alone.
//!
//! Coordinate search, `passes` passes: each tuned weight in turn is multiplied by each factor of
//! `FACTORS` with the others held, and the best value is kept when it beats the current objective by more
//! than `MIN_GAIN` (so a tie keeps the hand-set value).

use std::ops::Range;

use serde::Serialize;

use crate::demo::DemoScene;
use crate::energy::build::EnergyWeights;
use crate::energy::statistics::RoomClassCounts;
use crate::energy::EnergyError;
use crate::evaluation::{
    object_accuracy, objects_from_graph, score_labels, EvaluationError, SceneScore,
};
use crate::grounding::plural;
use crate::ids::ClassId;
use crate::pipeline::{
    believe_without_notes, correct_turn, prepare_loaded, superpixels_of, CorrectionSettings,
    PipelineError, PreparedScene, TurnInputs,
};
use crate::render::catalogue::DEMO_SEEDS;
use crate::render::{render_scene, RenderError, SceneRequest, ROOM_TYPES};
use crate::scenegraph::instance_statistics::{InstanceCountError, InstanceCutCounts};
use crate::scenegraph::{label_map, SceneGraph};
use crate::taxonomy::{ClassGroup, Taxonomy};
use crate::turn::solve::Correction;
use crate::unaries::classifier::Classifier;

/// Multipliers tried for each weight in a pass.
pub const FACTORS: [f64; 4] = [0.25, 0.5, 2.0, 4.0];

/// Each unit (a fraction) of pixel accuracy or of mean IoU that a state loses against the classifier alone
/// is taken off its score times this: the joint solve should never leave the picture worse than the robot's
/// own classifier (before the penalty, the tuned weights smoothed whole ceilings into walls on some scenes).
pub const SHORTFALL_WEIGHT: f64 = 1.0;

/// A new value must beat the current objective by this much (objective units: a fraction) to be kept.
pub const MIN_GAIN: f64 = 1e-4;

/// The weights the search moves, by field name.
pub const TUNED_WEIGHTS: [&str; 4] = [
    "smoothing_lambda",
    "contrast_sigma",
    "agreement",
    "fine_coarse",
];

/// What can stop tuning.
#[derive(Debug, thiserror::Error)]
pub enum TuningError {
    #[error(
        "seeds {start}..{end} include demo seed {seed}; the demo seeds {first}..={last} are the evaluation set, \
         pick training seeds from 100000",
        first = DEMO_SEEDS.start(),
        last = DEMO_SEEDS.end()
    )]
    DemoSeed { start: u64, end: u64, seed: u64 },
    #[error(
        "seeds {start}..{end} touch the trial seeds {first}..{last} that `sayso trial` measures on; tuning never \
         sees them",
        first = crate::trial::TRIAL_SEEDS.start,
        last = crate::trial::TRIAL_SEEDS.end
    )]
    TrialSeed { start: u64, end: u64 },
    #[error("no seeds given")]
    NoSeeds,
    #[error("rendering: {0}")]
    Render(#[from] RenderError),
    #[error("room type '{0}' is not in the taxonomy")]
    UnknownRoom(String),
    #[error(transparent)]
    Pipeline(#[from] PipelineError),
    #[error(transparent)]
    Energy(#[from] EnergyError),
    #[error(transparent)]
    Evaluation(#[from] EvaluationError),
    #[error("counting instance cuts: {0}")]
    InstanceCount(#[from] InstanceCountError),
    #[error("unknown weight '{0}'")]
    UnknownWeight(String),
    #[error("instance cuts: {0}")]
    InstanceCuts(#[from] crate::scenegraph::instances::InstanceCutsError),
}

/// Refuses a seed range that is empty or touches the demo seeds.
pub fn check_training_seeds(seeds: &Range<u64>) -> Result<(), TuningError> {
    if seeds.is_empty() {
        return Err(TuningError::NoSeeds);
    }
    if seeds.start <= *DEMO_SEEDS.end() && *DEMO_SEEDS.start() < seeds.end {
        return Err(TuningError::DemoSeed {
            start: seeds.start,
            end: seeds.end,
            seed: seeds.start.max(*DEMO_SEEDS.start()),
        });
    }
    let trial = crate::trial::TRIAL_SEEDS;
    if seeds.start < trial.end && trial.start < seeds.end {
        return Err(TuningError::TrialSeed {
            start: seeds.start,
            end: seeds.end,
        });
    }
    Ok(())
}

/// Renders the training scene of `seed`, the room type cycling with `index` as `sayso render` does.
pub fn render_training_scene(
    taxonomy: &Taxonomy,
    seed: u64,
    index: usize,
) -> Result<DemoScene, TuningError> {
    check_training_seeds(&(seed..seed + 1))?;
    let request = SceneRequest::new(ROOM_TYPES[index % ROOM_TYPES.len()], seed);
    Ok(DemoScene::from_rendered(render_scene(taxonomy, &request)?))
}

/// What `count_statistics` counts over training renders.
pub struct TrainingCounts {
    /// Room-type-to-class presence and co-occurrence (the room-class prior).
    pub rooms: RoomClassCounts,
    /// How well each cut strength recovers each class's objects (the instance cuts).
    pub instances: InstanceCutCounts,
}

/// Counts room-type-to-class presence and co-occurrence, and the instance-cut tallies (over the
/// superpixels the pipeline builds), over the renders of `seeds`.
pub fn count_statistics(
    taxonomy: &Taxonomy,
    seeds: Range<u64>,
    mut progress: impl FnMut(&str),
) -> Result<TrainingCounts, TuningError> {
    check_training_seeds(&seeds)?;
    let mut rooms = RoomClassCounts::new(taxonomy.rooms().len(), taxonomy.class_count());
    let mut instances = InstanceCutCounts::new(taxonomy.class_count());
    for (index, seed) in seeds.enumerate() {
        let rendered = render_training_scene(taxonomy, seed, index)?;
        let room = taxonomy
            .room_by_name(&rendered.metadata.room)
            .ok_or_else(|| TuningError::UnknownRoom(rendered.metadata.room.clone()))?;
        rooms.add_scene(room.id.index(), &rendered.labels.values)?;
        let scene = superpixels_of(&rendered.capture())?;
        instances.add_scene(&scene, &rendered.labels.values, &rendered.instances.values)?;
        progress(&rendered.name);
    }
    Ok(TrainingCounts { rooms, instances })
}

const NUMBER_WORDS: [&str; 7] = ["zero", "one", "two", "three", "four", "five", "six"];

/// The notes an operator would give a training render, written from its ground truth: the room type, then
/// the number of objects of its most numerous countable class (2 to 6 objects; things, not structure).
pub fn training_notes(taxonomy: &Taxonomy, scene: &DemoScene) -> Vec<String> {
    let mut notes = vec![format!(
        "this is the {}",
        scene.metadata.room.replace('_', " ")
    )];
    let mut tally: Vec<(usize, u64, ClassId)> = Vec::new();
    for object in &scene.objects {
        let structure = taxonomy
            .class(object.class_id)
            .is_none_or(|info| info.group == ClassGroup::Structure);
        if structure {
            continue;
        }
        match tally.iter_mut().find(|entry| entry.2 == object.class_id) {
            Some(entry) => {
                entry.0 += 1;
                entry.1 += object.area;
            }
            None => tally.push((1, object.area, object.class_id)),
        }
    }
    tally.retain(|entry| (2..NUMBER_WORDS.len()).contains(&entry.0));
    tally.sort_by(|a, b| b.0.cmp(&a.0).then(b.1.cmp(&a.1)).then(a.2.cmp(&b.2)));
    if let Some(&(count, _, class)) = tally.first() {
        notes.push(format!(
            "there are {} {}",
            NUMBER_WORDS[count],
            plural(taxonomy.class_name(class))
        ));
    }
    notes
}

/// One tuning scene: prepared (superpixels and the classifier's scores) with its ground truth and training
/// notes.
pub struct TuningScene {
    pub prepared: PreparedScene,
    /// The render's ground truth, which the tuning scores against.
    pub truth: DemoScene,
    pub notes: Vec<String>,
    /// The classifier alone, scored once: what every state's shortfall is measured against.
    pub classifier: SceneScore,
}

/// Renders and prepares the tuning scenes of `seeds`.
pub fn prepare_tuning_scenes(
    taxonomy: &Taxonomy,
    classifier: &Classifier,
    seeds: Range<u64>,
    mut progress: impl FnMut(&str),
) -> Result<Vec<TuningScene>, TuningError> {
    check_training_seeds(&seeds)?;
    let mut scenes = Vec::new();
    for (index, seed) in seeds.enumerate() {
        let demo = render_training_scene(taxonomy, seed, index)?;
        let notes = training_notes(taxonomy, &demo);
        progress(&format!("{} ({})", demo.name, notes.join("; ")));
        let prepared = prepare_loaded(demo.capture(), classifier)?;
        let classifier_map = label_map(&prepared.scene, &prepared.classifier_labels);
        let classifier = score_labels(&demo, &classifier_map.values, taxonomy.class_count())?;
        scenes.push(TuningScene {
            prepared,
            truth: demo,
            notes,
            classifier,
        });
    }
    Ok(scenes)
}

fn state_score(
    tuning: &TuningScene,
    graph: &SceneGraph,
    class_count: usize,
) -> Result<f64, TuningError> {
    let (prepared, classifier) = (&tuning.prepared, &tuning.classifier);
    let labels = label_map(&prepared.scene, &graph.segment_labels);
    let score = score_labels(&tuning.truth, &labels.values, class_count)?;
    let objects = object_accuracy(&tuning.truth, &objects_from_graph(&prepared.scene, graph));
    let shortfall = (classifier.pixel_accuracy - score.pixel_accuracy).max(0.0)
        + (classifier.mean_iou - score.mean_iou).max(0.0);
    Ok(0.5 * (score.mean_iou + objects) - SHORTFALL_WEIGHT * shortfall)
}

/// Solves a tuning scene with no note, then after each of its notes in turn (each turn on the one before),
/// handing every state to `visit`.
pub fn walk_states(
    tuning: &TuningScene,
    settings: &CorrectionSettings,
    mut visit: impl FnMut(&Correction) -> Result<(), TuningError>,
) -> Result<(), TuningError> {
    let prepared = &tuning.prepared;
    visit(&believe_without_notes(prepared, settings)?)?;
    let inputs = TurnInputs {
        scene: &prepared.scene,
        unaries: &prepared.unaries,
        detections: &[],
    };
    let mut previous: Option<Correction> = None;
    for note in &tuning.notes {
        let constraints = match settings.grammar.parse(note, None) {
            Ok(parse) => parse.constraints,
            Err(_) => Vec::new(),
        };
        let correction = correct_turn(
            &inputs,
            previous.as_ref(),
            &constraints,
            None,
            false,
            settings,
        )
        .map_err(PipelineError::from)?;
        visit(&correction)?;
        previous = Some(correction);
    }
    Ok(())
}

/// The objective of one setting (see the module doc): higher is better.
pub fn objective(
    scenes: &[TuningScene],
    settings: &CorrectionSettings,
) -> Result<f64, TuningError> {
    let class_count = settings.grammar.taxonomy().class_count();
    let mut total = 0.0;
    let mut states = 0usize;
    for tuning in scenes {
        walk_states(tuning, settings, |correction| {
            total += state_score(tuning, &correction.graph, class_count)?;
            states += 1;
            Ok(())
        })?;
    }
    Ok(if states == 0 {
        0.0
    } else {
        total / states as f64
    })
}

fn weight_mut<'a>(weights: &'a mut EnergyWeights, name: &str) -> Result<&'a mut f64, TuningError> {
    Ok(match name {
        "smoothing_lambda" => &mut weights.smoothing_lambda,
        "contrast_sigma" => &mut weights.contrast_sigma,
        "fine_coarse" => &mut weights.fine_coarse,
        "agreement" => &mut weights.agreement,
        "soft_count" => &mut weights.soft_count,
        "soft_absent" => &mut weights.soft_absent,
        "soft_relation" => &mut weights.soft_relation,
        "soft_segment" => &mut weights.soft_segment,
        "soft_room" => &mut weights.soft_room,
        "metadata_room" => &mut weights.metadata_room,
        other => return Err(TuningError::UnknownWeight(other.to_string())),
    })
}

/// One evaluated setting of the search.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Trial {
    pub weight: String,
    pub value: f64,
    pub objective: f64,
    pub kept: bool,
}

/// The search's result.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct TuningResult {
    pub start_objective: f64,
    pub weights: EnergyWeights,
    pub objective: f64,
    pub trials: Vec<Trial>,
}

/// Coordinate search over `TUNED_WEIGHTS` (see the module doc), starting from `settings.weights`.
pub fn tune_weights(
    scenes: &[TuningScene],
    settings: &mut CorrectionSettings,
    passes: usize,
    mut progress: impl FnMut(&Trial),
) -> Result<TuningResult, TuningError> {
    let start_objective = objective(scenes, settings)?;
    let mut best = start_objective;
    let mut trials = Vec::new();
    for _ in 0..passes {
        let mut moved = false;
        for name in TUNED_WEIGHTS {
            let current = *weight_mut(&mut settings.weights, name)?;
            let mut best_value = current;
            for factor in FACTORS {
                let value = current * factor;
                *weight_mut(&mut settings.weights, name)? = value;
                let score = objective(scenes, settings)?;
                let kept = score > best + MIN_GAIN;
                if kept {
                    best = score;
                    best_value = value;
                }
                let trial = Trial {
                    weight: name.to_string(),
                    value,
                    objective: score,
                    kept,
                };
                progress(&trial);
                trials.push(trial);
            }
            *weight_mut(&mut settings.weights, name)? = best_value;
            moved |= best_value != current;
        }
        if !moved {
            break;
        }
    }
    Ok(TuningResult {
        start_objective,
        weights: settings.weights.clone(),
        objective: best,
        trials,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn demo_seeds_are_refused_and_training_seeds_pass() {
        assert!(matches!(
            check_training_seeds(&(999..1001)),
            Err(TuningError::DemoSeed { seed: 1000, .. })
        ));
        assert!(matches!(
            check_training_seeds(&(1999..2005)),
            Err(TuningError::DemoSeed { seed: 1999, .. })
        ));
        assert!(matches!(
            check_training_seeds(&(5..5)),
            Err(TuningError::NoSeeds)
        ));
        assert!(check_training_seeds(&(2000..2010)).is_ok());
        assert!(check_training_seeds(&(100_000..100_140)).is_ok());
        assert!(matches!(
            check_training_seeds(&(5_999_990..6_000_001)),
            Err(TuningError::TrialSeed { .. })
        ));
        let taxonomy = Taxonomy::embedded();
        assert!(matches!(
            render_training_scene(&taxonomy, 1006, 0),
            Err(TuningError::DemoSeed { seed: 1006, .. })
        ));
    }

    fn object(id: u32, class: &str, taxonomy: &Taxonomy, area: u64) -> crate::render::TruthObject {
        crate::render::TruthObject {
            id,
            class: class.to_string(),
            class_id: taxonomy.class_by_name(class).unwrap().id,
            bbox: [0, 0, 1, 1],
            area,
            rests_on: None,
        }
    }

    #[test]
    fn training_notes_name_the_room_and_the_most_numerous_countable_class_and_parse() {
        use crate::language::constraint::{ConstraintKind, Count};
        use crate::raster::{DepthImage, IndexImage, RgbImage};
        let taxonomy = Taxonomy::embedded();
        let objects = vec![
            object(1, "chair", &taxonomy, 900),
            object(2, "chair", &taxonomy, 800),
            object(3, "bottle", &taxonomy, 50),
            object(4, "bottle", &taxonomy, 60),
            object(5, "bottle", &taxonomy, 70),
            object(6, "table", &taxonomy, 5000),
        ];
        let scene = DemoScene {
            name: "dining_room_200006".to_string(),
            directory: std::path::PathBuf::new(),
            metadata: crate::render::SceneMetadata {
                name: "dining_room_200006".to_string(),
                room: "dining_room".to_string(),
                width: 1,
                height: 1,
                seed: 200_006,
                renderer_version: "test".to_string(),
                description: String::new(),
            },
            image: RgbImage {
                width: 1,
                height: 1,
                pixels: vec![[0, 0, 0]],
            },
            depth: DepthImage {
                width: 1,
                height: 1,
                millimetres: vec![0],
            },
            labels: IndexImage {
                width: 1,
                height: 1,
                values: vec![0],
            },
            instances: IndexImage {
                width: 1,
                height: 1,
                values: vec![0],
            },
            objects,
        };
        let notes = training_notes(&taxonomy, &scene);
        assert_eq!(
            notes,
            vec!["this is the dining room", "there are three bottles"]
        );
        let grammar = crate::language::Grammar::embedded().unwrap();
        let room = grammar.parse(&notes[0], None).unwrap();
        assert!(matches!(
            room.constraints[0].kind,
            ConstraintKind::RoomType { room } if taxonomy.room(room).unwrap().name == "dining_room"
        ));
        let count = grammar.parse(&notes[1], None).unwrap();
        assert!(matches!(
            count.constraints[0].kind,
            ConstraintKind::Count { class, count: Count::Exactly(3) }
                if class == taxonomy.class_by_name("bottle").unwrap().id
        ));
    }

    #[test]
    fn every_tuned_weight_has_a_field() {
        let mut weights = EnergyWeights::default();
        for name in TUNED_WEIGHTS {
            assert!(weight_mut(&mut weights, name).is_ok(), "{name}");
        }
        assert!(matches!(
            weight_mut(&mut weights, "nonsense"),
            Err(TuningError::UnknownWeight(_))
        ));
    }
}
