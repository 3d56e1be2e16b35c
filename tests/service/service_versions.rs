//! A scene's stored versions through the router (no socket): the list names each version, its parent and
//! the turn that made it (the words only for whom may read that conversation), marks undone ones as no
//! longer in force, and every version's scene graph, label map and overlay can be read back; a version of
//! another scene, or a malformed query, is refused in the JSON error shape. A conversation's history also
//! carries its open question (kept through a note not understood and a restart), so a page reloaded later
//! can show it again.

use crate::service_support;

use std::sync::Arc;

use sayso_core::overlay::paint::{CHANGE_EDGE, CHANGE_RING};
use sayso_core::overlay::text::line_height;
use sayso_core::overlay::OverlayOptions;
use sayso_core::raster::{self, IndexImage};
use sayso_core::taxonomy::Taxonomy;
use sayso_service::config::{OperatorToken, Role, ServiceConfig};
use serde_json::{json, Value};
use service_support::*;

const MIRA: &str = "juniper-lane-mira-0001";
const OLA: &str = "juniper-lane-ola-00002";

fn config() -> ServiceConfig {
    let operator = |name: &str, token: &str| OperatorToken {
        name: name.into(),
        token: token.into(),
        role: Role::Operator,
    };
    ServiceConfig {
        operators: vec![operator("mira", MIRA), operator("ola", OLA)],
        ..ServiceConfig::default()
    }
}

fn labels() -> IndexImage {
    IndexImage::filled(5, 3, 0)
}

async fn get_json(router: &axum::Router, path: &str, token: &str) -> (u16, Value) {
    let reply = call(router, Call::new("GET", path, Some(token))).await;
    (reply.status, reply.json())
}

async fn say(router: &axum::Router, conversation: i64, text: &str, x: u32) -> Value {
    let reply = call(
        router,
        Call::new(
            "POST",
            &format!("/v1/conversations/{conversation}/utterances"),
            Some(MIRA),
        )
        .json(json!({"text": text, "focus": {"type": "pixel", "x": x, "y": 1}})),
    )
    .await;
    assert_eq!(reply.status, 200, "{:?}", reply.json());
    reply.json()
}

async fn open(router: &axum::Router, scene: i64, token: &str) -> i64 {
    let opened = call(
        router,
        Call::new("POST", "/v1/conversations", Some(token)).json(json!({ "scene_id": scene })),
    )
    .await;
    assert_eq!(opened.status, 201);
    opened.json()["conversation_id"].as_i64().unwrap()
}

#[tokio::test]
async fn every_version_of_a_scene_is_listed_and_can_be_read_back() {
    let data = tempfile::tempdir().unwrap();
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let mut scenes = Vec::new();
    for _ in 0..2 {
        let created = call(
            &router,
            Call::new("POST", "/v1/scenes", Some(MIRA)).json(scene_body(&labels())),
        )
        .await;
        assert_eq!(created.status, 201);
        scenes.push(created.json());
    }
    let scene = scenes[0]["scene_id"].as_i64().unwrap();
    let registered = scenes[0]["version"].as_i64().unwrap();
    let other_scene_version = scenes[1]["version"].as_i64().unwrap();
    let conversation = open(&router, scene, MIRA).await;

    let first = say(&router, conversation, "paint mug", 1).await;
    let second = say(&router, conversation, "paint towel", 3).await;
    assert_eq!(
        (first["status"].as_str(), second["status"].as_str()),
        (Some("applied"), Some("applied"))
    );
    let (first, second) = (
        first["scene_version"].as_i64().unwrap(),
        second["scene_version"].as_i64().unwrap(),
    );
    let undone = call(
        &router,
        Call::new(
            "POST",
            &format!("/v1/conversations/{conversation}/undo"),
            Some(MIRA),
        ),
    )
    .await;
    assert_eq!(undone.json()["scene_version"], first);

    let (status, listed) = get_json(&router, &format!("/v1/scenes/{scene}/versions"), MIRA).await;
    assert_eq!(status, 200, "{listed}");
    assert_eq!(listed["head"], first);
    assert_eq!(listed["truncated"], false);
    let versions = listed["versions"].as_array().unwrap();
    let shown: Vec<(i64, Option<i64>, bool)> = versions
        .iter()
        .map(|v| {
            (
                v["version"].as_i64().unwrap(),
                v["parent"].as_i64(),
                v["in_force"].as_bool().unwrap(),
            )
        })
        .collect();
    assert_eq!(
        shown,
        vec![
            (second, Some(first), false),
            (first, Some(registered), true),
            (registered, None, true)
        ],
        "newest first; the undone version is listed but not in force"
    );
    assert_eq!(versions[0]["text"], "paint towel");
    assert_eq!(versions[1]["kind"], "utterance");
    assert_eq!(versions[1]["operator"], "mira");
    assert!(versions[2]["turn_id"].is_null());
    assert_eq!(
        versions[2]["operator"], "mira",
        "the registered version is the scene's registrant's"
    );
    assert!(!versions[2]["at"].as_str().unwrap().is_empty());

    // Another operator sees the versions of the shared scene, but not the words of Mira's conversation.
    let (_, seen_by_ola) = get_json(&router, &format!("/v1/scenes/{scene}/versions"), OLA).await;
    assert_eq!(seen_by_ola["versions"].as_array().unwrap().len(), 3);
    assert!(seen_by_ola["versions"][0]["text"].is_null());
    assert_eq!(seen_by_ola["versions"][0]["conversation_id"], conversation);

    // Each version reads back: the registered one is all floor, the undone one has both pixels painted.
    let label_map = |version: i64| {
        let router = router.clone();
        async move {
            let reply = call(
                &router,
                Call::new(
                    "GET",
                    &format!("/v1/scenes/{scene}/labels.png?version={version}"),
                    Some(MIRA),
                ),
            )
            .await;
            assert_eq!(
                reply.status,
                200,
                "{}",
                String::from_utf8_lossy(&reply.body)
            );
            sayso_core::raster::decode_index_png(
                &reply.body,
                std::path::Path::new("labels"),
                1 << 20,
            )
            .unwrap()
        }
    };
    let mug = sayso_core::taxonomy::Taxonomy::embedded()
        .class_by_name("mug")
        .unwrap()
        .id
        .0;
    let towel = sayso_core::taxonomy::Taxonomy::embedded()
        .class_by_name("towel")
        .unwrap()
        .id
        .0;
    assert_eq!(label_map(registered).await, labels());
    let undone_labels = label_map(second).await;
    assert_eq!(
        (undone_labels.get(1, 1), undone_labels.get(3, 1)),
        (mug, towel)
    );
    let (status, graph) = get_json(
        &router,
        &format!("/v1/scenes/{scene}?version={second}"),
        MIRA,
    )
    .await;
    assert_eq!(status, 200);
    assert_eq!(graph["version"], second);
    assert!(graph["objects"]
        .as_array()
        .unwrap()
        .iter()
        .any(|o| o["class"] == "towel"));
    let (_, current) = get_json(&router, &format!("/v1/scenes/{scene}"), MIRA).await;
    assert_eq!(current["version"], first);
    assert!(!current["objects"]
        .as_array()
        .unwrap()
        .iter()
        .any(|o| o["class"] == "towel"));
    let overlay = call(
        &router,
        Call::new(
            "GET",
            &format!("/v1/scenes/{scene}/overlay.png?version={registered}"),
            Some(MIRA),
        ),
    )
    .await;
    assert_eq!(
        (overlay.status, overlay.header("content-type")),
        (200, Some("image/png"))
    );

    // Refusals: a version of the other scene, one that does not exist, a malformed or unknown query.
    for (query, status, code) in [
        (
            format!("version={other_scene_version}"),
            404,
            "unknown_version",
        ),
        ("version=9999".to_string(), 404, "unknown_version"),
        ("version=0".to_string(), 404, "unknown_version"),
        ("version=two".to_string(), 400, "bad_version"),
        ("release=1".to_string(), 400, "bad_version"),
    ] {
        for route in ["", "/labels.png", "/overlay.png"] {
            let reply = call(
                &router,
                Call::new(
                    "GET",
                    &format!("/v1/scenes/{scene}{route}?{query}"),
                    Some(MIRA),
                ),
            )
            .await;
            assert_eq!(
                (reply.status, reply.code()),
                (status, code.to_string()),
                "{route}?{query}"
            );
        }
    }
    let (status, missing) = get_json(&router, "/v1/scenes/77/versions", MIRA).await;
    assert_eq!(
        (status, missing["code"].as_str()),
        (404, Some("unknown_scene"))
    );
}

#[tokio::test]
async fn a_conversations_history_carries_its_open_question_until_it_is_answered() {
    let data = tempfile::tempdir().unwrap();
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let created = call(
        &router,
        Call::new("POST", "/v1/scenes", Some(MIRA)).json(scene_body(&labels())),
    )
    .await;
    let scene = created.json()["scene_id"].as_i64().unwrap();
    let conversation = open(&router, scene, MIRA).await;
    let path = format!("/v1/conversations/{conversation}");
    let (_, quiet) = get_json(&router, &path, MIRA).await;
    assert!(quiet["question"].is_null());
    assert_eq!(quiet["candidates"], json!([]));

    let asked = say(&router, conversation, "which one", 2).await;
    assert_eq!(asked["status"], "needs_clarification");
    let (_, waiting) = get_json(&router, &path, MIRA).await;
    assert_eq!(waiting["question"], "which pixel?");
    // A note not understood leaves the question open, and so does a restart of the service.
    let unread = say(&router, conversation, "hm", 2).await;
    assert_eq!(unread["status"], "not_understood");
    let (_, still) = get_json(&router, &path, MIRA).await;
    assert_eq!(still["question"], "which pixel?");
    drop(router);
    drop(_coordinator);
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let (_, restarted) = get_json(&router, &path, MIRA).await;
    assert_eq!(restarted["question"], "which pixel?", "{restarted}");

    let painted = say(&router, conversation, "paint mug", 2).await;
    assert_eq!(painted["status"], "applied");
    let (_, answered) = get_json(&router, &path, MIRA).await;
    assert!(answered["question"].is_null(), "{answered}");
}

/// The pixel at (x, 0) of a scene's current label map.
async fn top_row(router: &axum::Router, scene: i64) -> Vec<u16> {
    let reply = call(
        router,
        Call::new("GET", &format!("/v1/scenes/{scene}/labels.png"), Some(MIRA)),
    )
    .await;
    assert_eq!(reply.status, 200);
    let labels =
        sayso_core::raster::decode_index_png(&reply.body, std::path::Path::new("labels"), 1 << 20)
            .unwrap();
    (0..2).map(|x| labels.get(x, 0)).collect()
}

#[tokio::test]
async fn no_the_other_one_still_works_after_a_restart() {
    let data = tempfile::tempdir().unwrap();
    let (router, coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let created = call(
        &router,
        Call::new("POST", "/v1/scenes", Some(MIRA)).json(scene_body(&labels())),
    )
    .await;
    let scene = created.json()["scene_id"].as_i64().unwrap();
    let conversation = open(&router, scene, MIRA).await;
    let mug = sayso_core::taxonomy::Taxonomy::embedded()
        .class_by_name("mug")
        .unwrap()
        .id
        .0;
    let asked = say(&router, conversation, "either paint mug", 2).await;
    assert_eq!(asked["status"], "needs_clarification", "{asked}");
    assert_eq!(asked["candidates"].as_array().unwrap().len(), 2, "{asked}");
    let answered = say(&router, conversation, "the first one", 2).await;
    assert_eq!(answered["status"], "applied", "{answered}");
    assert_eq!(top_row(&router, scene).await, vec![mug, 0]);
    // The service stops and starts again on the same log: the answer is read back from its turn.
    drop(router);
    drop(coordinator);
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let other = say(&router, conversation, "no, the other one", 2).await;
    assert_eq!(other["status"], "applied", "{other}");
    assert_eq!(
        top_row(&router, scene).await,
        vec![0, mug],
        "the first answer's change is taken back and the note goes to the other pixel"
    );
    // An undo forgets the answer, after a restart as before one.
    let undone = call(
        &router,
        Call::new(
            "POST",
            &format!("/v1/conversations/{conversation}/undo"),
            Some(MIRA),
        )
        .json(json!({})),
    )
    .await;
    assert_eq!(undone.status, 200);
    drop(router);
    drop(_coordinator);
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let refused = call(
        &router,
        Call::new(
            "POST",
            &format!("/v1/conversations/{conversation}/utterances"),
            Some(MIRA),
        )
        .json(json!({"text": "no, the other one"})),
    )
    .await;
    assert_eq!(
        (refused.status, refused.code().as_str()),
        (409, "no_answer_to_change")
    );
}

/// The overlay of a version, decoded.
async fn overlay_of(router: &axum::Router, scene: i64, version: Option<i64>) -> raster::RgbImage {
    let query = version.map_or(String::new(), |v| format!("?version={v}"));
    let reply = call(
        router,
        Call::new(
            "GET",
            &format!("/v1/scenes/{scene}/overlay.png{query}"),
            Some(MIRA),
        ),
    )
    .await;
    assert_eq!(reply.status, 200);
    raster::decode_rgb_png(&reply.body, std::path::Path::new("overlay"), 1 << 22).unwrap()
}

#[tokio::test]
async fn a_version_overlay_outlines_objects_and_rings_what_its_note_changed() {
    let data = tempfile::tempdir().unwrap();
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let created = call(
        &router,
        Call::new("POST", "/v1/scenes", Some(MIRA))
            .json(scene_body(&IndexImage::filled(60, 40, 0))),
    )
    .await;
    assert_eq!(created.status, 201);
    let scene = created.json()["scene_id"].as_i64().unwrap();
    let registered = created.json()["version"].as_i64().unwrap();
    let conversation = open(&router, scene, MIRA).await;
    let painted = say(&router, conversation, "paint mug", 1).await;
    assert_eq!(painted["status"], "applied");
    let painted = painted["scene_version"].as_i64().unwrap();

    // The picture sits under the title strip the overlay draws above each view.
    let strip = line_height(OverlayOptions::default().text_size) + 8;
    let taxonomy = Taxonomy::embedded();
    let floor = taxonomy.class_by_name("floor").unwrap().colour;

    // The registered version: every pixel is floor, so there is no class border anywhere; the grid
    // engine's objects are single pixels, so (3, 1), inside the floor, is an object outline in the
    // floor's full colour, and nothing is ringed (no note made this version).
    let first = overlay_of(&router, scene, Some(registered)).await;
    assert_eq!(first.get(3, strip + 1), floor);
    assert!((0..5).all(|x| (0..3).all(|y| first.get(x, strip + y) != CHANGE_RING)));

    // The painted version, read as the scene's current overlay and by its number: the pixel the note
    // changed, (1, 1), is ringed (the ring takes both sides of the border, so (2, 1) too), with the dark
    // edge outside it at (3, 1).
    for version in [None, Some(painted)] {
        let after = overlay_of(&router, scene, version).await;
        assert_eq!(after.get(1, strip + 1), CHANGE_RING, "{version:?}");
        assert_eq!(after.get(2, strip + 1), CHANGE_RING, "{version:?}");
        assert_eq!(after.get(3, strip + 1), CHANGE_EDGE, "{version:?}");
        assert_eq!(after.get(4, strip + 1), floor, "{version:?}");
    }
}
