//! Who may act on what, through the router itself (no socket): each operator's conversations are theirs,
//! a supervisor may act on all and confirmations record who confirmed; lists page; bearer tokens are read
//! in any letter case and failed logins from one address are throttled; metric labels stay bounded.

use crate::service_support;

use std::sync::Arc;

use sayso_core::raster::IndexImage;
use sayso_session::config::{OperatorToken, Role, ServiceConfig};
use service_support::*;

const CAT: u16 = 40;
const MIRA: &str = "juniper-lane-mira-0001";
const OLA: &str = "juniper-lane-ola-00002";
const NOOR: &str = "juniper-lane-noor-0003";

fn operator(name: &str, token: &str, role: Role) -> OperatorToken {
    OperatorToken {
        name: name.into(),
        token: token.into(),
        role,
    }
}

fn config() -> ServiceConfig {
    ServiceConfig {
        operators: vec![
            operator("mira", MIRA, Role::Operator),
            operator("ola", OLA, Role::Operator),
            operator("noor", NOOR, Role::Supervisor),
        ],
        ..ServiceConfig::default()
    }
}

fn labels() -> IndexImage {
    let mut labels = IndexImage::filled(6, 4, 0);
    labels.set(2, 1, CAT);
    labels
}

async fn scene_and_conversation(router: &axum::Router, token: &str) -> (i64, i64) {
    let created = call(
        router,
        Call::new("POST", "/v1/scenes", Some(token)).json(scene_body(&labels())),
    )
    .await;
    assert_eq!(created.status, 201, "{:?}", created.json());
    let scene = created.json()["scene_id"].as_i64().unwrap();
    let opened = call(
        router,
        Call::new("POST", "/v1/conversations", Some(token))
            .json(serde_json::json!({ "scene_id": scene })),
    )
    .await;
    assert_eq!(opened.status, 201);
    (scene, opened.json()["conversation_id"].as_i64().unwrap())
}

#[tokio::test]
async fn an_operator_acts_only_on_their_own_conversations_and_a_supervisor_on_all() {
    let data = tempfile::tempdir().unwrap();
    let (router, coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let (scene, conversation) = scene_and_conversation(&router, MIRA).await;
    let base = format!("/v1/conversations/{conversation}");
    // Mira's sentence about the cat is held for confirmation.
    let held = call(
        &router,
        Call::new("POST", &format!("{base}/utterances"), Some(MIRA)).json(
            serde_json::json!({"text": "paint towel", "focus": {"type": "pixel", "x": 2, "y": 1}}),
        ),
    )
    .await;
    assert_eq!(held.json()["status"], "needs_confirmation");

    // Ola may read the shared scene, but not Mira's conversation, nor act on it in any way.
    let scene_read = call(
        &router,
        Call::new("GET", &format!("/v1/scenes/{scene}"), Some(OLA)),
    )
    .await;
    assert_eq!(scene_read.status, 200);
    for (method, suffix, body) in [
        ("GET", "", None),
        (
            "POST",
            "/utterances",
            Some(
                serde_json::json!({"text": "paint mug", "focus": {"type": "pixel", "x": 4, "y": 3}}),
            ),
        ),
        ("POST", "/confirm", None),
        ("POST", "/reject", None),
        ("POST", "/undo", None),
        ("POST", "/redo", None),
    ] {
        let path = format!("{base}{suffix}");
        let mut request = Call::new(method, &path, Some(OLA));
        request.body = body;
        let refused = call(&router, request).await;
        assert_eq!(
            (refused.status, refused.code().as_str()),
            (403, "not_your_conversation"),
            "{method} {path}"
        );
        assert!(
            !refused.json()["message"].as_str().unwrap().contains("mira"),
            "the refusal does not name the owner"
        );
    }
    // An unknown conversation is still 404, for everyone.
    let unknown = call(
        &router,
        Call::new("GET", "/v1/conversations/999", Some(OLA)),
    )
    .await;
    assert_eq!(
        (unknown.status, unknown.code().as_str()),
        (404, "unknown_conversation")
    );
    // None of Ola's attempts wrote a turn: the hold is still there.
    let history = call(&router, Call::new("GET", &base, Some(MIRA)))
        .await
        .json();
    assert_eq!(history["turns"].as_array().unwrap().len(), 1);
    assert!(history["pending"].is_object());

    // Noor, a supervisor, reads it and confirms the hold; the confirmation records Noor.
    let confirmed = call(
        &router,
        Call::new("POST", &format!("{base}/confirm"), Some(NOOR)),
    )
    .await;
    assert_eq!(
        (confirmed.status, confirmed.json()["status"].as_str()),
        (200, Some("confirmed"))
    );
    let history = call(&router, Call::new("GET", &base, Some(NOOR)))
        .await
        .json();
    let operators: Vec<(&str, &str)> = history["turns"]
        .as_array()
        .unwrap()
        .iter()
        .map(|turn| {
            (
                turn["kind"].as_str().unwrap(),
                turn["operator"].as_str().unwrap(),
            )
        })
        .collect();
    assert_eq!(operators, [("utterance", "mira"), ("confirm", "noor")]);
    // The training example names who said it and, apart, who confirmed it.
    let examples = coordinator.with_log(|log| log.training_examples().unwrap());
    assert_eq!(examples.len(), 1);
    assert_eq!(examples[0].operator, "mira");
    assert_eq!(examples[0].confirmed_by.as_deref(), Some("noor"));
    // Mira, the owner, may undo it.
    let undone = call(
        &router,
        Call::new("POST", &format!("{base}/undo"), Some(MIRA)),
    )
    .await;
    assert_eq!(undone.status, 200);
}

#[tokio::test]
async fn lists_page_by_id_and_show_an_operator_only_their_conversations() {
    let data = tempfile::tempdir().unwrap();
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let (scene, _) = scene_and_conversation(&router, MIRA).await;
    let mut mine = Vec::new();
    for token in [OLA, MIRA, OLA, OLA] {
        let opened = call(
            &router,
            Call::new("POST", "/v1/conversations", Some(token))
                .json(serde_json::json!({ "scene_id": scene })),
        )
        .await
        .json();
        if token == OLA {
            mine.push(opened["conversation_id"].as_i64().unwrap());
        }
    }
    // Ola pages through her own three, two at a time.
    let first = call(
        &router,
        Call::new("GET", "/v1/conversations?limit=2", Some(OLA)),
    )
    .await
    .json();
    let ids = |page: &serde_json::Value| -> Vec<i64> {
        page["conversations"]
            .as_array()
            .unwrap()
            .iter()
            .map(|item| item["conversation_id"].as_i64().unwrap())
            .collect()
    };
    assert_eq!(ids(&first), mine[..2]);
    let after = first["next_after"].as_i64().unwrap();
    let second = call(
        &router,
        Call::new(
            "GET",
            &format!("/v1/conversations?limit=2&after={after}"),
            Some(OLA),
        ),
    )
    .await
    .json();
    assert_eq!(ids(&second), mine[2..]);
    assert!(second["next_after"].is_null());
    // The supervisor sees all five.
    let all = call(&router, Call::new("GET", "/v1/conversations", Some(NOOR)))
        .await
        .json();
    assert_eq!(ids(&all).len(), 5);
    // Scenes are shared: everyone lists the one scene.
    let scenes = call(&router, Call::new("GET", "/v1/scenes", Some(OLA)))
        .await
        .json();
    assert_eq!(scenes["scenes"][0]["scene_id"], scene);
    assert_eq!(scenes["scenes"][0]["width"], 6);
    // Bad paging is named.
    for query in ["limit=0", "limit=201", "after=-1", "limit=x", "page=2"] {
        let refused = call(
            &router,
            Call::new("GET", &format!("/v1/scenes?{query}"), Some(OLA)),
        )
        .await;
        assert_eq!(
            (refused.status, refused.code().as_str()),
            (400, "bad_page"),
            "{query}"
        );
    }
}

#[tokio::test]
async fn the_bearer_scheme_is_read_in_any_case_and_failed_logins_are_throttled_per_address() {
    let data = tempfile::tempdir().unwrap();
    let config = ServiceConfig {
        auth_failure_burst: 5,
        auth_failures_per_minute: 6.0,
        ..config()
    };
    let (router, _coordinator) = router_with(data.path(), config, Arc::new(GridEngine::new()));
    for scheme in ["bearer", "BEARER", "Bearer", "bEaReR"] {
        let mut request = Call::new("GET", "/v1/classes", None).request();
        request
            .headers_mut()
            .insert("authorization", format!("{scheme} {MIRA}").parse().unwrap());
        assert_eq!(call_request(&router, request).await.status, 200, "{scheme}");
    }
    // Five wrong tokens from one address are answered 401; the sixth attempt, even with a right token,
    // waits.
    let attacker = [192, 0, 2, 7];
    for attempt in 0..5 {
        let wrong = format!("juniper-lane-guess-{attempt:04}");
        let refused = call(
            &router,
            Call::new("GET", "/v1/classes", Some(&wrong)).from(attacker),
        )
        .await;
        assert_eq!(
            (refused.status, refused.code().as_str()),
            (401, "wrong_token")
        );
        assert_eq!(refused.header("www-authenticate"), Some("Bearer"));
    }
    let throttled = call(
        &router,
        Call::new("GET", "/v1/classes", Some(MIRA)).from(attacker),
    )
    .await;
    assert_eq!(
        (throttled.status, throttled.code().as_str()),
        (429, "too_many_failed_logins")
    );
    let wait: u64 = throttled.header("retry-after").unwrap().parse().unwrap();
    // One failure drips back every 10 s at six a minute.
    assert!((1..=10).contains(&wait), "{wait}");
    // Another address is not affected.
    let other = call(
        &router,
        Call::new("GET", "/v1/classes", Some(MIRA)).from([192, 0, 2, 8]),
    )
    .await;
    assert_eq!(other.status, 200);
}

#[tokio::test]
async fn strange_methods_do_not_grow_the_metrics() {
    let data = tempfile::tempdir().unwrap();
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let baseline = call(&router, Call::new("GET", "/v1/metrics", Some(MIRA)))
        .await
        .body
        .len();
    for index in 0..300 {
        let method = format!("{}{index}", "X".repeat(200_000));
        let path = if index % 2 == 0 {
            "/v1/classes"
        } else {
            "/v1/no/such/route"
        };
        let reply = call(
            &router,
            Call::new(&method, path, None).from([198, 51, 100, 1]),
        )
        .await;
        assert!(reply.status >= 400, "{}", reply.status);
        assert!(!reply.code().is_empty(), "answered in the JSON shape");
    }
    let metrics = call(&router, Call::new("GET", "/v1/metrics", Some(MIRA))).await;
    let text = String::from_utf8(metrics.body).unwrap();
    assert!(text.contains("method=\"other\""), "{text}");
    assert!(!text.contains("XXXX"));
    // Two new series (one per route label), not three hundred, and nothing the size of a method.
    assert!(
        text.len() < baseline + 8_000,
        "metrics grew from {baseline} to {} bytes",
        text.len()
    );
}

#[tokio::test]
async fn heads_over_the_limits_are_refused_in_the_json_shape() {
    let data = tempfile::tempdir().unwrap();
    let (router, _coordinator) = router_with(data.path(), config(), Arc::new(GridEngine::new()));
    let long = format!("/v1/scenes/{}", "9".repeat(9_000));
    let refused = call(&router, Call::new("GET", &long, Some(MIRA))).await;
    assert_eq!(
        (refused.status, refused.code().as_str()),
        (414, "uri_too_long")
    );
    let mut request = Call::new("GET", "/v1/classes", Some(MIRA)).request();
    for index in 0..101 {
        request.headers_mut().insert(
            axum::http::HeaderName::from_bytes(format!("x-filler-{index}").as_bytes()).unwrap(),
            "a".parse().unwrap(),
        );
    }
    let refused = call_request(&router, request).await;
    assert_eq!(
        (refused.status, refused.code().as_str()),
        (431, "headers_too_large")
    );
    let mut request = Call::new("GET", "/v1/classes", Some(MIRA)).request();
    request
        .headers_mut()
        .insert("x-filler", "a".repeat(17_000).parse().unwrap());
    let refused = call_request(&router, request).await;
    assert_eq!(refused.status, 431);
}
