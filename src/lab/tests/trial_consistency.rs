//! `sayso trial` on one development render: the automatic operator speaks, every note is judged, and the
//! figures agree with each other (a note's change in pixel accuracy is exactly the pixels it turned
//! wrong->right minus right->wrong, over the labelled pixels of the ground truth).
//!
//! Owns: that consistency check on the real pipeline (built-in classifier, embedded settings). Must not: read
//! held-out seeds or phrasings.

use sayso_core::taxonomy::{Taxonomy, UNLABELLED};
use sayso_lab::trial::phrasings::{PhrasingSet, Phrasings};
use sayso_lab::trial::{render_trial_scene, run_scene, Outcome, TrialContext, DEV_START};
use sayso_perception::pipeline::{load_classifier, model_path, CorrectionSettings};

#[test]
fn a_development_trial_scene_keeps_its_books_straight() {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy).unwrap();
    let settings = CorrectionSettings::embedded().unwrap();
    let phrasings = Phrasings::embedded(PhrasingSet::Dev).unwrap();
    let context = TrialContext {
        taxonomy: &taxonomy,
        classifier: &classifier,
        settings: &settings,
        phrasings: &phrasings,
        notes: 2,
    };
    let index = 3;
    let seed = DEV_START + index as u64;
    let trial = run_scene(&context, seed, index).unwrap();
    assert_eq!(trial.steps.len(), trial.notes.len() + 1);
    assert!(
        !trial.notes.is_empty(),
        "the operator found something to say"
    );
    let truth = render_trial_scene(&taxonomy, seed, index).unwrap();
    let labelled = truth
        .labels
        .values
        .iter()
        .filter(|&&l| l != UNLABELLED)
        .count() as f64;
    for (k, note) in trial.notes.iter().enumerate() {
        assert!(!note.utterance.trim().is_empty());
        let change = trial.steps[k + 1].pixel - trial.steps[k].pixel;
        let flips = (note.wrong_to_right as f64 - note.right_to_wrong as f64) / labelled;
        assert!(
            (change - flips).abs() < 1e-9,
            "note {k}: {change} vs {flips}"
        );
        if note.outcome == Outcome::NotUnderstood {
            assert_eq!((note.wrong_to_right, note.right_to_wrong), (0, 0));
        }
    }
    let gain = trial.gain();
    let total = (trial.wrong_to_right as f64 - trial.right_to_wrong as f64) / labelled;
    assert!((gain.pixel - total).abs() < 1e-9);
}
