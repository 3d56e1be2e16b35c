//! The conversation loop on real demo scenes, through the one turn path (`sayso_core::turn`) that the command
//! line and the service share: a question names the scene graph's own objects and can be answered by
//! position, id or pointing; "undo", "redo", "yes", "no" and "no, the other one" work in words; a held
//! safety change survives later notes until confirmed; and every count or presence in force after a note
//! is either shown by the returned scene graph or reported unmet.
//!
//! Scenes are the committed demo scenes (invented, rendered by `sayso`'s own renderer); the assertions are
//! about the loop's behaviour, not about tuned figures.

use std::sync::OnceLock;

use sayso_core::ids::ClassId;
use sayso_core::language::constraint::{ConstraintKind, Count, Focus};
use sayso_core::scenegraph::SceneGraph;
use sayso_core::taxonomy::Taxonomy;
use sayso_core::turn::dialogue::{Dialogue, Status};
use sayso_core::turn::{CorrectionSettings, TurnInputs};
use sayso_perception::pipeline::{
    load_classifier, model_path, prepare_scene, PreparedScene, SceneSource,
};

fn settings() -> &'static CorrectionSettings {
    static SETTINGS: OnceLock<CorrectionSettings> = OnceLock::new();
    SETTINGS.get_or_init(|| CorrectionSettings::embedded().expect("embedded settings"))
}

fn prepared(name: &str) -> PreparedScene {
    let taxonomy = Taxonomy::embedded();
    let classifier = load_classifier(&model_path(None), &taxonomy).expect("classifier");
    let source = SceneSource::Demo {
        directory: sayso_core::demo::demo_directory(None),
        name: Some(name.to_string()),
    };
    prepare_scene(&source, &classifier).expect("demo scene")
}

fn inputs(prepared: &PreparedScene) -> TurnInputs<'_> {
    TurnInputs {
        scene: &prepared.scene,
        unaries: &prepared.unaries,
        detections: &[],
    }
}

fn objects_of(graph: &SceneGraph, class: &str) -> Vec<u32> {
    graph
        .objects
        .iter()
        .filter(|o| o.class_name == class)
        .map(|o| o.id.0)
        .collect()
}

#[test]
fn a_question_names_the_graphs_objects_and_an_answer_applies_the_note_to_one() {
    let scene = prepared("dining_room_guests");
    let mut dialogue = Dialogue::new(inputs(&scene), settings(), false).expect("baseline");
    let chairs = objects_of(&dialogue.current().graph, "chair");
    assert!(
        chairs.len() >= 2,
        "the scene must show several chairs for this test, it shows {chairs:?}"
    );
    let asked = dialogue.say("the chair is a sofa", None).expect("turn");
    assert_eq!(asked.status, Status::Asked, "an ambiguous relabel asks");
    let question = asked.question.expect("a question with candidates");
    assert!(question.candidates.len() >= 2);
    for candidate in &question.candidates {
        assert!(
            chairs.contains(&candidate.object.0),
            "candidate {} is not a chair the graph shows ({chairs:?})",
            candidate.object.0
        );
    }
    assert!(
        question.candidates.len() <= chairs.len(),
        "the question counts no more chairs than the graph shows"
    );
    // Nothing changed while the question is open.
    assert_eq!(
        dialogue.current().graph.segment_labels,
        dialogue.baseline().graph.segment_labels
    );

    let chosen = question.candidates[1].object;
    let answered = dialogue
        .say("the second from the left", None)
        .expect("turn");
    assert_eq!(answered.status, Status::Applied, "{:?}", answered.message);
    let after = dialogue.current().graph.clone();
    let sofa = Taxonomy::embedded().class_by_name("sofa").unwrap().id;
    let chosen_members = &dialogue
        .baseline()
        .graph
        .objects
        .iter()
        .find(|o| o.id == chosen)
        .expect("chosen object in the graph shown")
        .members;
    let now_sofa = chosen_members
        .iter()
        .filter(|m| after.segment_labels[m.index()] == sofa)
        .count();
    assert!(
        2 * now_sofa >= chosen_members.len(),
        "most of the chosen chair is a sofa now ({now_sofa} of {})",
        chosen_members.len()
    );
    let others_still_chairs = question
        .candidates
        .iter()
        .filter(|c| c.object != chosen)
        .filter(|c| {
            after
                .objects
                .iter()
                .any(|o| o.id == c.object && o.class_name == "chair")
        })
        .count();
    assert!(
        others_still_chairs >= 1,
        "the answer applied the note to one chair, not to all of them"
    );

    // "undo" in words says what changed back and returns to the scene before the answer.
    let undone = dialogue.say("undo", None).expect("turn");
    assert_eq!(undone.status, Status::Undone);
    assert!(!undone.changes.is_empty(), "undo lists what changed back");
    assert_eq!(
        dialogue.current().graph.segment_labels,
        dialogue.baseline().graph.segment_labels
    );
    let redone = dialogue.say("redo please", None).expect("turn");
    assert_eq!(redone.status, Status::Redone);
    assert_eq!(
        &dialogue.current().graph.segment_labels,
        &after.segment_labels
    );

    // "No, the other one": the answer is taken back and the note goes to another candidate.
    let other = dialogue.say("no, the other one", None).expect("turn");
    assert!(
        matches!(other.status, Status::Applied | Status::Asked),
        "{:?}",
        other.status
    );
    match &other.question {
        Some(again) => {
            assert!(again.candidates.iter().all(|c| c.object != chosen));
            assert_eq!(again.candidates.len(), question.candidates.len() - 1);
            assert_eq!(
                dialogue.current().graph.segment_labels,
                dialogue.baseline().graph.segment_labels,
                "the wrong answer's change is taken back"
            );
            let first = again.candidates[0].object;
            let second = dialogue.say("the first one", None).expect("turn");
            assert_eq!(second.status, Status::Applied);
            let members = &dialogue
                .baseline()
                .graph
                .objects
                .iter()
                .find(|o| o.id == first)
                .expect("candidate in the graph shown")
                .members;
            let labels = &dialogue.current().graph.segment_labels;
            assert!(
                members.iter().filter(|m| labels[m.index()] == sofa).count() * 2 >= members.len()
            );
        }
        None => assert_eq!(
            question.candidates.len(),
            2,
            "with two candidates the other one is applied"
        ),
    }
}

#[test]
fn a_held_change_survives_later_notes_until_confirmed_and_then_applies_whole() {
    let scene = prepared("living_room_evening");
    let mut dialogue = Dialogue::new(inputs(&scene), settings(), false).expect("baseline");
    let people = objects_of(&dialogue.current().graph, "person");
    assert!(
        !people.is_empty(),
        "the scene must show a person for this test"
    );
    let held = dialogue.say("there is no person", None).expect("turn");
    assert_eq!(held.status, Status::Held);
    assert!(held.held.is_some());
    assert_eq!(
        dialogue.current().graph.segment_labels,
        dialogue.baseline().graph.segment_labels,
        "nothing of a held change is applied"
    );
    let later = dialogue.say("it's a living room", None).expect("turn");
    assert_eq!(
        later.waiting,
        vec!["there is no person".to_string()],
        "every reply lists the held change"
    );
    let unknown = dialogue.say("flibber jabber", None).expect("turn");
    assert_eq!(unknown.status, Status::NotUnderstood);
    assert_eq!(
        unknown.waiting.len(),
        1,
        "a note not understood drops no hold"
    );
    let confirmed = dialogue.say("yes", None).expect("turn");
    assert_eq!(confirmed.status, Status::Confirmed);
    assert!(confirmed.waiting.is_empty());
    let person = Taxonomy::embedded().class_by_name("person").unwrap().id;
    assert!(
        !dialogue.current().graph.segment_labels.contains(&person),
        "a confirmed removal leaves no person fragment"
    );
    assert!(objects_of(&dialogue.current().graph, "person").is_empty());
}

#[test]
fn conversation_words_do_what_they_say_and_refuse_clearly() {
    let scene = prepared("kitchen_breakfast");
    let mut dialogue = Dialogue::new(inputs(&scene), settings(), false).expect("baseline");
    let nothing = dialogue.say("undo", None).expect("turn");
    assert_eq!(nothing.status, Status::Refused);
    assert!(nothing.message.unwrap().contains("no change to undo"));
    let no_hold = dialogue.say("yes", None).expect("turn");
    assert_eq!(no_hold.status, Status::Refused);
    // "get rid of it" is read (as "it is not there"), not refused.
    let pointed = dialogue
        .say("that's a mug", Some(Focus::Pixel { x: 320, y: 240 }))
        .expect("turn");
    assert_ne!(pointed.status, Status::NotUnderstood);
    let removed = dialogue.say("get rid of it", None).expect("turn");
    assert_ne!(
        removed.status,
        Status::NotUnderstood,
        "{:?}",
        removed.message
    );
    let note = removed.note.expect("a note was read");
    assert!(note
        .constraints
        .iter()
        .any(|c| matches!(c.kind, ConstraintKind::Relabel { to: None, .. })));
}

/// Every count and presence a note puts in force is shown by the graph it returns or reported unmet.
#[test]
fn every_count_and_presence_in_an_answer_agrees_with_its_scene_graph() {
    let scripts: [(&str, &[&str]); 3] = [
        (
            "dining_room_supper",
            &[
                "there are six chairs",
                "one table",
                "there's a vase on the table",
            ],
        ),
        (
            "office_late_shift",
            &["two monitors on the desk", "there's no bed", "one chair"],
        ),
        (
            "bedroom_unmade",
            &["there's just one bed", "two pillows", "no towel"],
        ),
    ];
    let mut checked = 0;
    for (name, notes) in scripts {
        let scene = prepared(name);
        let mut dialogue = Dialogue::new(inputs(&scene), settings(), true).expect("baseline");
        for text in notes {
            let reply = dialogue.say(text, None).expect("turn");
            let (Some(note), Some(solved)) = (&reply.note, &reply.solved) else {
                continue;
            };
            if !matches!(reply.status, Status::Applied | Status::NothingToChange) {
                continue;
            }
            let first_new = solved.constraint_labels.len() - note.constraints.len();
            for (index, constraint) in note.constraints.iter().enumerate() {
                let shown = |class: ClassId| {
                    solved
                        .graph
                        .objects
                        .iter()
                        .filter(|o| o.class == class)
                        .count() as u32
                };
                let holds = match constraint.kind {
                    ConstraintKind::Count { class, count } => Some(match count {
                        Count::Exactly(n) => shown(class) == n,
                        Count::AtLeast(n) => shown(class) >= n,
                        Count::AtMost(n) => shown(class) <= n,
                    }),
                    ConstraintKind::Present { class } => Some(shown(class) > 0),
                    ConstraintKind::Absent { class } => Some(shown(class) == 0),
                    _ => None,
                };
                let Some(holds) = holds else { continue };
                checked += 1;
                let reported = solved
                    .unmet
                    .iter()
                    .any(|u| u.constraint == first_new + index);
                assert!(
                    holds || reported,
                    "{name}: \"{text}\" ({}) is neither shown by the graph nor reported unmet",
                    constraint.gloss
                );
            }
        }
    }
    assert!(checked >= 6, "only {checked} constraints were checked");
}

fn fix(arguments: &[&str]) -> (Option<i32>, String, String) {
    let out = tempfile::tempdir().unwrap();
    let output = std::process::Command::new(env!("CARGO_BIN_EXE_sayso"))
        .arg("fix")
        .args(arguments)
        .arg("--out")
        .arg(out.path())
        .env_remove("SAYSO_LOG")
        .output()
        .unwrap();
    (
        output.status.code(),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

#[test]
fn fix_exits_by_what_became_of_its_notes_and_pairs_each_focus_with_its_note() {
    let (code, stdout, _) = fix(&["kitchen_breakfast", "--say", "flibber jabber"]);
    assert_eq!(code, Some(3), "{stdout}");
    assert!(stdout.contains("not understood"), "{stdout}");

    let (code, stdout, _) = fix(&["living_room_evening", "--say", "there is no person"]);
    assert_eq!(code, Some(5), "a held change ends with 5: {stdout}");
    assert!(stdout.contains("held"), "{stdout}");
    let (code, stdout, _) = fix(&[
        "living_room_evening",
        "--say",
        "there is no person",
        "--say",
        "yes",
    ]);
    assert_ne!(code, Some(5), "confirmed in words: {stdout}");
    assert!(stdout.contains("confirmed"), "{stdout}");

    let (code, stdout, _) = fix(&["dining_room_guests", "--say", "the chair is a sofa"]);
    assert_eq!(code, Some(4), "an open question ends with 4: {stdout}");
    assert!(
        stdout.contains("question:") && stdout.contains("1. object"),
        "{stdout}"
    );

    // The focus after the second note belongs to it alone: only note 2 is told its point is outside.
    let (_, stdout, _) = fix(&[
        "kitchen_breakfast",
        "--say",
        "there are two mugs",
        "--say",
        "that's a towel",
        "--focus",
        "pixel:5000,5",
    ]);
    let second = stdout.split("note 2:").nth(1).expect("two notes reported");
    let first = stdout.split("note 2:").next().unwrap();
    assert!(second.contains("outside"), "{stdout}");
    assert!(!first.contains("outside"), "{stdout}");
    let (code, _, stderr) = fix(&[
        "kitchen_breakfast",
        "--say",
        "that's a towel",
        "--focus",
        "pixel:5,5",
        "--focus",
        "pixel:6,6",
    ]);
    assert_eq!(code, Some(1));
    assert!(stderr.contains("two --focus"), "{stderr}");
}

mod service {
    use std::path::Path;
    use std::sync::Arc;

    use sayso_correction_log::{ConversationKey, SceneKey};
    use sayso_session::JointCorrector;
    use sayso_session::{Coordinator, CoordinatorSettings, SceneUpload};
    use sayso_wire::{TurnStatus, UtteranceReply};

    fn open(data: &Path) -> Coordinator {
        let engine = JointCorrector::load(&sayso_perception::pipeline::model_path(None))
            .expect("classifier");
        Coordinator::open(
            Arc::new(engine),
            &CoordinatorSettings {
                log_path: data.join("corrections.sqlite"),
                pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
                demo_dir: sayso_core::demo::demo_directory(None),
            },
        )
        .expect("open")
    }

    fn say(coordinator: &Coordinator, conversation: ConversationKey, text: &str) -> UtteranceReply {
        coordinator
            .utterance(conversation, "odile", text, None)
            .unwrap_or_else(|error| panic!("{text:?}: {error:?}"))
    }

    fn chairs(coordinator: &Coordinator, scene: SceneKey) -> Vec<u32> {
        coordinator
            .scene_graph(scene)
            .unwrap()
            .objects
            .iter()
            .filter(|o| o.class == "chair")
            .map(|o| o.object_id)
            .collect()
    }

    #[test]
    fn the_service_asks_with_candidates_takes_answers_and_words_and_never_drops_a_hold() {
        let data = tempfile::tempdir().unwrap();
        let (scene, conversation, pick) = {
            let coordinator = open(data.path());
            let created = coordinator
                .register_scene(
                    SceneUpload {
                        demo: Some("dining_room_guests".into()),
                        ..Default::default()
                    },
                    "odile",
                )
                .expect("registered");
            let scene = SceneKey(created.scene_id);
            let opened = coordinator.open_conversation(scene, "odile").unwrap();
            let conversation = ConversationKey(opened.conversation_id);
            let shown = chairs(&coordinator, scene);
            let asked = say(&coordinator, conversation, "the chair is a sofa");
            assert_eq!(asked.status, TurnStatus::NeedsClarification);
            assert!(asked.candidates.len() >= 2, "{asked:?}");
            for candidate in &asked.candidates {
                assert!(
                    shown.contains(&candidate.object_id),
                    "candidate {} is not a chair of the scene graph {shown:?}",
                    candidate.object_id
                );
                assert!(candidate.bbox.is_some() && !candidate.description.is_empty());
            }
            (scene, conversation, asked.candidates[0].object_id)
        };
        // The open question survives a restart; the answer names an object by id.
        let coordinator = open(data.path());
        let before = coordinator.scene_graph(scene).unwrap();
        let answered = say(&coordinator, conversation, &format!("object {pick}"));
        assert_eq!(answered.status, TurnStatus::Applied, "{answered:?}");
        assert!(answered
            .changes
            .iter()
            .any(|c| c.to.as_deref() == Some("sofa")));
        // One change list's figures agree: an object added as a sofa counts no more pixels than the
        // labels that moved to sofa.
        let relabelled: u64 = answered
            .changes
            .iter()
            .filter(|c| c.object_id.is_none() && c.to.as_deref() == Some("sofa"))
            .map(|c| c.pixels)
            .sum();
        for added in answered.changes.iter().filter(|c| {
            c.object_id.is_some() && c.from.is_none() && c.to.as_deref() == Some("sofa")
        }) {
            assert!(
                added.pixels <= relabelled,
                "{added:?} counts more than the {relabelled} px relabelled"
            );
        }
        assert!(!chairs(&coordinator, scene).contains(&pick));
        assert!(
            chairs(&coordinator, scene).len() + 1
                >= before.objects.iter().filter(|o| o.class == "chair").count(),
            "one chair became a sofa, not all of them"
        );

        // "undo" in words says what changed back.
        let undone = say(&coordinator, conversation, "undo");
        assert_eq!(undone.status, TurnStatus::Undone);
        assert!(undone
            .changes
            .iter()
            .any(|c| c.from.as_deref() == Some("sofa")));
        assert_eq!(
            coordinator.scene_graph(scene).unwrap().objects,
            before.objects
        );

        // A held change survives a later applied change, is listed with it, and confirming applies it on
        // the scene as it is now.
        let held = say(&coordinator, conversation, "there is no person");
        assert_eq!(held.status, TurnStatus::NeedsConfirmation);
        assert_eq!(
            say(&coordinator, conversation, "the chair is a sofa").status,
            TurnStatus::NeedsClarification
        );
        let applied = say(&coordinator, conversation, "the first from the left");
        assert_eq!(applied.status, TurnStatus::Applied);
        assert!(
            applied.waiting.is_some(),
            "the held change is listed: {applied:?}"
        );
        let sofas_before = coordinator
            .scene_graph(scene)
            .unwrap()
            .objects
            .iter()
            .filter(|o| o.class == "sofa")
            .count();
        let confirmed = say(&coordinator, conversation, "yes");
        assert_eq!(confirmed.status, TurnStatus::Confirmed, "{confirmed:?}");
        assert!(confirmed.waiting.is_none());
        let after = coordinator.scene_graph(scene).unwrap();
        assert!(
            after.objects.iter().all(|o| o.class != "person"),
            "no person fragment is left"
        );
        assert!(
            after.objects.iter().filter(|o| o.class == "sofa").count() >= sofas_before.min(1),
            "the change applied in between is kept"
        );

        // History keeps what was understood, typed, and each turn's focus.
        let history = coordinator.history(conversation).unwrap();
        assert!(history
            .turns
            .iter()
            .any(|turn| turn.constraints.iter().any(|c| c.kind == "relabel")));
        assert!(
            history.turns.iter().any(|turn| turn.focus.is_some()),
            "an answer is kept with its object"
        );
    }
}
