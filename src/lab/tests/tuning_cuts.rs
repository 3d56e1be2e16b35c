//! Re-choosing instance cut strengths on solved training renders (`sayso_lab::tuning_cuts`): the objects it
//! scores are the scene graph's objects, and the choice never loses against the counted cuts.
//! The scenes are training renders (seeds from 300000, disjoint from the demo seeds and from the 42 renders
//! `sayso tune` chooses on).

use sayso_core::scenegraph::instance_statistics::CANDIDATE_CUTS;
use sayso_core::scenegraph::instances::{InstanceCuts, InstanceCutsFile, EMBEDDED_INSTANCE_CUTS};
use sayso_core::taxonomy::Taxonomy;
use sayso_lab::evaluation::{object_accuracy, objects_from_graph};
use sayso_lab::tuning::{prepare_tuning_scenes, MIN_GAIN};
use sayso_lab::tuning_cuts::{cut_objective, refine_cuts, solve_states, SolvedState};
use sayso_perception::pipeline::{
    believe_without_notes, load_classifier, model_path, CorrectionSettings,
};

#[test]
fn refined_cuts_score_the_scene_graphs_objects_and_never_lose() {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy).expect("classifier");
    let settings = CorrectionSettings::embedded().expect("settings");
    // Kitchen, living room, bedroom, bathroom, hallway (room types in turn).
    let scenes =
        prepare_tuning_scenes(&taxonomy, &classifier, 300_000..300_005, |_| {}).expect("renders");
    let states = solve_states(&scenes, &settings).expect("solved");
    let notes: usize = scenes.iter().map(|s| s.notes.len()).sum();
    assert_eq!(states.len(), scenes.len() + notes);

    // With the committed cuts, a state's score is the object accuracy of the scene graph the pipeline
    // returns for it (checked on the states with no note).
    for (index, tuning) in scenes.iter().enumerate() {
        let graph = believe_without_notes(&tuning.prepared, &settings)
            .expect("solved")
            .graph;
        let expected = object_accuracy(
            &tuning.truth,
            &objects_from_graph(&tuning.prepared.scene, &graph),
        );
        let first: Vec<&SolvedState> = states.iter().filter(|s| s.scene == index).collect();
        let alone = SolvedState {
            scene: 0,
            labels: first[0].labels.clone(),
            hypotheses: first[0].hypotheses.clone(),
            accepted: first[0].accepted.clone(),
            counted: first[0].counted.clone(),
        };
        let scored = cut_objective(
            std::slice::from_ref(tuning),
            std::slice::from_ref(&alone),
            &settings.instance_cuts,
        );
        assert!(
            (scored - expected).abs() < 1e-12,
            "scene {index}: {scored} vs the graph's {expected}"
        );
    }

    let counted: InstanceCutsFile = serde_json::from_str(EMBEDDED_INSTANCE_CUTS).expect("file");
    let refined = refine_cuts(&scenes, &states, &counted, &taxonomy).expect("refined");
    assert!(refined.objective >= refined.start_objective);
    // Each kept strength beat the best before it by more than MIN_GAIN; the rest did not.
    let mut best = refined.start_objective;
    for trial in &refined.trials {
        assert!(CANDIDATE_CUTS.contains(&trial.cut));
        assert_eq!(trial.kept, trial.objective > best + MIN_GAIN, "{trial:?}");
        if trial.kept {
            best = trial.objective;
        }
    }
    assert_eq!(best, refined.objective);
    // The file holds the kept strengths and scores what was reported; a counted cut stays a cut, and a class
    // newly cut got its strength from a kept trial.
    let recomputed = cut_objective(
        &scenes,
        &states,
        &InstanceCuts::from_file(&refined.file, &taxonomy).expect("valid"),
    );
    assert_eq!(recomputed, refined.objective);
    for class in counted.cuts.keys() {
        assert!(
            refined.file.cuts.contains_key(class),
            "{class} no longer cut"
        );
    }
    for (class, &cut) in &refined.file.cuts {
        if !counted.cuts.contains_key(class) {
            assert!(refined
                .trials
                .iter()
                .any(|t| &t.class == class && t.kept && t.cut == cut));
        }
    }
    assert_eq!(refined.file.typical_sizes, counted.typical_sizes);
}
