//! End-to-end through the router (no socket): register, read, converse, confirm, undo, redo, history,
//! metrics, OpenAPI; then a restart restores everything, and the export and field notes read the log.

use crate::service_support;

use sayso_core::raster::{self, IndexImage};
use sayso_session::config::ServiceConfig;
use service_support::*;

const CAT: u16 = 40;
const TOWEL: u16 = 37;
const BOX: u16 = 29;
const MUG: u16 = 21;

#[test]
fn a_conversation_corrects_a_scene_and_survives_a_restart() {
    let data = tempfile::tempdir().unwrap();
    let mut labels = IndexImage::filled(6, 4, 0);
    labels.set(2, 1, CAT);
    let (scene_id, conversation_id, history_before, graph_before) = {
        let service = route_service(data.path(), ServiceConfig::default());
        let address = &service;
        let health = get(address, "/v1/health", None);
        assert_eq!(health.status, 200);
        assert_eq!(health.json()["status"], "ok");
        let (scene_id, conversation_id) = scene_and_conversation(address, None, &labels);

        // The label map comes back as the index PNG it was registered with.
        let label_png = get(address, &format!("/v1/scenes/{scene_id}/labels.png"), None);
        assert_eq!(label_png.status, 200);
        assert_eq!(label_png.header("content-type"), Some("image/png"));
        let decoded =
            raster::decode_index_png(&label_png.body, std::path::Path::new("reply"), 1 << 20)
                .unwrap();
        assert_eq!(decoded, labels);
        let overlay = get(address, &format!("/v1/scenes/{scene_id}/overlay.png"), None);
        let overlay =
            raster::decode_rgb_png(&overlay.body, std::path::Path::new("overlay"), 1 << 20)
                .unwrap();
        // The picture with a legend panel to its right (taller than the picture when the legend needs it).
        assert!(
            overlay.width > 6 && overlay.height >= 4,
            "{}x{}",
            overlay.width,
            overlay.height
        );
        // Floor pixels are tinted with the floor colour, so the overlay's picture differs from the photo.
        let photo = picture(6, 4);
        assert!((0..4).any(|y| (0..6).any(|x| overlay.get(x, y) != photo.get(x, y))));

        let path = format!("/v1/conversations/{conversation_id}/utterances");
        // A plain correction is applied and committed.
        let applied = send_json(
            address,
            "POST",
            &path,
            None,
            &serde_json::json!({
                "text": "paint mug", "focus": {"type": "pixel", "x": 4, "y": 3}
            }),
        );
        assert_eq!(applied.status, 200);
        let applied = applied.json();
        assert_eq!(applied["status"], "applied");
        assert_eq!(applied["changes"][0]["from"], "floor");
        assert_eq!(applied["changes"][0]["to"], "mug");
        assert_eq!(applied["constraints"][0]["kind"], "relabel");
        let graph = get(address, &format!("/v1/scenes/{scene_id}"), None).json();
        let mug_object = graph["objects"]
            .as_array()
            .unwrap()
            .iter()
            .find(|object| object["class"] == "mug");
        assert!(mug_object.is_some(), "{graph}");
        assert_eq!(graph["version"], applied["scene_version"]);

        // Renaming the cat waits for confirmation and does not change the scene yet.
        let pending = send_json(
            address,
            "POST",
            &path,
            None,
            &serde_json::json!({
                "text": "paint towel", "focus": {"type": "pixel", "x": 2, "y": 1}
            }),
        )
        .json();
        assert_eq!(pending["status"], "needs_confirmation");
        assert!(pending["pending"]["reason"]
            .as_str()
            .unwrap()
            .contains("cat"));
        let still = get(address, &format!("/v1/scenes/{scene_id}/labels.png"), None);
        let still =
            raster::decode_index_png(&still.body, std::path::Path::new("r"), 1 << 20).unwrap();
        assert_eq!(still.get(2, 1), CAT);
        let confirm_path = format!("/v1/conversations/{conversation_id}/confirm");
        let confirmed = send_json(address, "POST", &confirm_path, None, &serde_json::json!({}));
        assert_eq!(confirmed.status, 200);
        assert_eq!(confirmed.json()["status"], "confirmed");
        // A second confirm has nothing to confirm.
        let again = send_json(address, "POST", &confirm_path, None, &serde_json::json!({}));
        assert_eq!(
            (again.status, again.code().as_str()),
            (409, "no_pending_change")
        );

        // A clarification and a sentence that is not understood are logged, not applied.
        let question = send_json(
            address,
            "POST",
            &path,
            None,
            &serde_json::json!({"text": "which one"}),
        )
        .json();
        assert_eq!(question["status"], "needs_clarification");
        assert_eq!(question["question"], "which pixel?");
        let lost = send_json(
            address,
            "POST",
            &path,
            None,
            &serde_json::json!({"text": "hm"}),
        )
        .json();
        assert_eq!(lost["status"], "not_understood");

        // Undo takes back the towel, redo puts it back.
        let undo_path = format!("/v1/conversations/{conversation_id}/undo");
        let undone = send_json(address, "POST", &undo_path, None, &serde_json::json!({})).json();
        assert_eq!(undone["status"], "undone");
        let after_undo = get(address, &format!("/v1/scenes/{scene_id}/labels.png"), None);
        let after_undo =
            raster::decode_index_png(&after_undo.body, std::path::Path::new("r"), 1 << 20).unwrap();
        assert_eq!(after_undo.get(2, 1), CAT);
        assert_eq!(after_undo.get(4, 3), MUG);
        let redo_path = format!("/v1/conversations/{conversation_id}/redo");
        let redone = send_json(address, "POST", &redo_path, None, &serde_json::json!({})).json();
        assert_eq!(redone["status"], "redone");
        let nothing = send_json(address, "POST", &redo_path, None, &serde_json::json!({}));
        assert_eq!(
            (nothing.status, nothing.code().as_str()),
            (409, "nothing_to_redo")
        );

        let history = get(
            address,
            &format!("/v1/conversations/{conversation_id}"),
            None,
        )
        .json();
        let kinds: Vec<&str> = history["turns"]
            .as_array()
            .unwrap()
            .iter()
            .map(|turn| turn["kind"].as_str().unwrap())
            .collect();
        assert_eq!(
            kinds,
            [
                "utterance",
                "utterance",
                "confirm",
                "utterance",
                "utterance",
                "undo",
                "redo"
            ]
        );

        let metrics = get(address, "/v1/metrics", None);
        assert_eq!(metrics.status, 200);
        let text = String::from_utf8(metrics.body.clone()).unwrap();
        assert!(text.contains("sayso_corrections_logged_total 2"), "{text}");
        assert!(text.contains("sayso_turns_logged_total 7"), "{text}");
        assert!(text.contains("sayso_solver_gap_count 4"), "{text}");
        assert!(text.contains("route=\"/v1/conversations/{conversation_id}/utterances\""));

        let document = get(address, "/v1/openapi.json", None);
        assert_eq!(document.body, sayso_service::openapi::COMMITTED.as_bytes());
        let graph = get(address, &format!("/v1/scenes/{scene_id}"), None).json();
        (scene_id, conversation_id, history, graph)
    };

    // A new service on the same data directory has every scene and conversation back.
    let service = route_service(data.path(), ServiceConfig::default());
    let address = &service;
    assert_eq!(
        get(address, &format!("/v1/scenes/{scene_id}"), None).json(),
        graph_before
    );
    assert_eq!(
        get(
            address,
            &format!("/v1/conversations/{conversation_id}"),
            None
        )
        .json(),
        history_before
    );
    // The conversation goes on: undo still knows the towel was this conversation's last change.
    let undone = send_json(
        address,
        "POST",
        &format!("/v1/conversations/{conversation_id}/undo"),
        None,
        &serde_json::json!({}),
    );
    assert_eq!(undone.json()["status"], "undone");
    let labels_now = get(address, &format!("/v1/scenes/{scene_id}/labels.png"), None);
    let labels_now =
        raster::decode_index_png(&labels_now.body, std::path::Path::new("r"), 1 << 20).unwrap();
    assert_eq!(labels_now.get(2, 1), CAT);
    let integrity = service
        .coordinator
        .with_log(|log| log.integrity_check().unwrap());
    assert_eq!(integrity, "ok");

    // The export writes only the corrections that still count: the mug (the towel is undone).
    let export = tempfile::tempdir().unwrap();
    let out = export.path().join("dataset");
    let taxonomy = sayso_core::taxonomy::Taxonomy::embedded();
    let summary = service
        .coordinator
        .with_log(|log| sayso_correction_log::export_dataset(log, &taxonomy, &out))
        .unwrap();
    assert_eq!(summary.examples, 1);
    let index = std::fs::read_to_string(out.join("index.jsonl")).unwrap();
    let records: Vec<serde_json::Value> = index
        .lines()
        .map(|line| serde_json::from_str(line).unwrap())
        .collect();
    assert_eq!(records.len(), 1);
    assert_eq!(records[0]["utterance"], "paint mug");
    assert_eq!(records[0]["operator"], "local");
    let folder = out.join(records[0]["directory"].as_str().unwrap());
    let before = raster::read_index_png(&folder.join("labels_before.png"), 1 << 20).unwrap();
    let after = raster::read_index_png(&folder.join("labels.png"), 1 << 20).unwrap();
    assert_eq!(before, labels);
    assert_eq!(after.get(4, 3), MUG);
    assert_eq!(
        raster::read_rgb_png(&folder.join("image.png"), 1 << 20).unwrap(),
        picture_of(&labels)
    );
    let classes: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("classes.json")).unwrap()).unwrap();
    assert_eq!(classes["classes"][TOWEL as usize]["name"], "towel");
    let scene_json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(folder.join("scene.json")).unwrap()).unwrap();
    // The same keys a rendered demo scene's scene.json carries for its name and size.
    assert_eq!(scene_json["name"], "juniper-lane-hall");
    assert_eq!(
        (scene_json["width"].as_u64(), scene_json["height"].as_u64()),
        (Some(6), Some(4))
    );
}

#[test]
fn field_notes_are_sorted_into_outcomes_with_reasons() {
    let data = tempfile::tempdir().unwrap();
    let coordinator = open_grid_coordinator(data.path());
    // A second process (or coordinator) on the same log is refused while the first holds it.
    let second = sayso_session::Coordinator::open(
        std::sync::Arc::new(GridEngine::new()),
        &sayso_session::CoordinatorSettings {
            log_path: data.path().join("corrections.sqlite"),
            pixel_limit: 1 << 20,
            demo_dir: data.path().to_path_buf(),
        },
    );
    assert!(matches!(
        second,
        Err(sayso_session::OpenError::InUse { .. })
    ));
    let mut labels = IndexImage::filled(4, 4, 0);
    labels.set(1, 1, CAT);
    let upload = sayso_session::SceneUpload {
        image_png: Some(raster::encode_rgb_png(&picture(4, 4)).unwrap()),
        label_map_png: Some(raster::encode_index_png(&labels).unwrap()),
        ..Default::default()
    };
    let scene = coordinator.register_scene(upload, "mira").unwrap().scene_id;
    let notes = format!(
        "{{\"scene_id\": {scene}, \"text\": \"paint mug\", \"focus\": {{\"type\": \"pixel\", \"x\": 0, \"y\": 0}}}}\n\
         {{\"scene_id\": {scene}, \"text\": \"paint towel\", \"focus\": {{\"type\": \"pixel\", \"x\": 1, \"y\": 1}}}}\n\
         {scene}\twhich one is it\n\
         {scene}\tthe mug is a v@se\n\
         {scene}\tuh the thing by the door\n\
         999\tpaint mug\n"
    );
    // One byte of the fourth line is not UTF-8 (0xE9, "é" in Latin-1): that line is reported and the rest
    // go on.
    let mut notes = notes.into_bytes();
    let at = notes.iter().position(|&byte| byte == b'@').unwrap();
    notes[at] = 0xE9;
    let column = at - notes[..at].iter().rposition(|&byte| byte == b'\n').unwrap();
    let mut ticks = Vec::new();
    let report = sayso_session::field_notes::apply_notes(
        &coordinator,
        &notes,
        "field-notes",
        |done, total| ticks.push((done, total)),
    );
    assert_eq!(ticks.last(), Some(&(6, 6)));
    let outcomes: Vec<String> = report
        .results
        .iter()
        .map(|result| {
            serde_json::to_value(result.outcome)
                .unwrap()
                .as_str()
                .unwrap()
                .to_string()
        })
        .collect();
    assert_eq!(
        outcomes,
        [
            "applied",
            "needs_confirmation",
            "needs_clarification",
            "skipped",
            "not_understood",
            "skipped"
        ]
    );
    assert!(report.results[1].reason.contains("cat"));
    assert_eq!(report.results[3].line, 4);
    assert!(
        report.results[3].reason.contains("not UTF-8")
            && report.results[3]
                .reason
                .contains(&format!("column {column}")),
        "{}",
        report.results[3].reason
    );
    assert_eq!(report.results[4].line, 5);
    assert!(report.results[5].reason.starts_with("unknown_scene"));
    assert!(report
        .results
        .iter()
        .all(|result| !result.reason.is_empty()));
    assert_eq!(report.counts["applied"], 1);
}

#[test]
fn a_rendered_demo_scene_registers_by_name_with_the_binary_corrector() {
    use sayso_session::{Coordinator, CoordinatorSettings, SceneUpload};
    let data = tempfile::tempdir().unwrap();
    let coordinator = Coordinator::open(
        std::sync::Arc::new(
            sayso_session::JointCorrector::load(&sayso_perception::pipeline::model_path(None))
                .unwrap(),
        ),
        &CoordinatorSettings {
            log_path: data.path().join("corrections.sqlite"),
            pixel_limit: sayso_core::raster::DEFAULT_PIXEL_LIMIT,
            demo_dir: crate::paths::demo_scenes(),
        },
    )
    .unwrap();
    let created = coordinator
        .register_scene(
            SceneUpload {
                demo: Some("bathroom_morning".into()),
                ..Default::default()
            },
            "mira",
        )
        .unwrap();
    assert_eq!(
        (created.width, created.height, created.name.as_str()),
        (640, 480, "bathroom_morning")
    );
    let scene = sayso_correction_log::SceneKey(created.scene_id);
    let graph = coordinator.scene_graph(scene).unwrap();
    assert!(
        graph.objects.iter().any(|object| object.class == "box"),
        "the robot sees the box in the rendered bathroom"
    );
    // Point into the box's region and call it a rug: the whole region changes.
    let boxed = graph
        .objects
        .iter()
        .find(|object| object.class == "box")
        .unwrap();
    let labels_png = coordinator.label_map_png(scene).unwrap();
    let labels =
        raster::decode_index_png(&labels_png, std::path::Path::new("labels"), 1 << 22).unwrap();
    let (x, y) = (boxed.bbox.x0..boxed.bbox.x1)
        .flat_map(|x| (boxed.bbox.y0..boxed.bbox.y1).map(move |y| (x, y)))
        .find(|&(x, y)| labels.get(x, y) == BOX)
        .unwrap();
    // The served label map is a palette PNG (IHDR colour type 3 at byte 25: PNG specification, W3C, 11.2.2)
    // whose colours are the classes' own, so it reads as class ids and looks like the classes.
    assert_eq!(labels_png[25], 3, "an indexed-colour PNG");
    let coloured =
        raster::decode_rgb_image(&labels_png, std::path::Path::new("labels"), 1 << 22).unwrap();
    let taxonomy = sayso_core::taxonomy::Taxonomy::embedded();
    let box_colour = taxonomy
        .class(sayso_core::ids::ClassId(BOX))
        .unwrap()
        .colour;
    assert_eq!(coloured.get(x, y), box_colour);
    let conversation = coordinator.open_conversation(scene, "mira").unwrap();
    let reply = coordinator
        .utterance(
            sayso_correction_log::ConversationKey(conversation.conversation_id),
            "mira",
            "no, that's a rug, not a box",
            Some(sayso_wire::FocusIn::Pixel { x, y }),
        )
        .unwrap();
    assert_eq!(reply.status, sayso_wire::TurnStatus::Applied);
    // The joint solve relabels the pointed-at region (and may move other labels with it).
    assert!(
        reply
            .changes
            .iter()
            .any(|change| change.from.as_deref() == Some("box")
                && change.to.as_deref() == Some("rug")
                && change.pixels > 0),
        "{:#?}",
        reply.changes
    );
    let after = raster::decode_index_png(
        &coordinator.label_map_png(scene).unwrap(),
        std::path::Path::new("labels"),
        1 << 22,
    )
    .unwrap();
    let rug = sayso_core::taxonomy::Taxonomy::embedded()
        .class_by_name("rug")
        .unwrap()
        .id
        .0;
    assert_eq!(after.get(x, y), rug, "the pointed-at pixel is a rug now");
}
