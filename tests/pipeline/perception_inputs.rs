//! The robot's own perception on every entry point: per-pixel scores (NPY, written by numpy) with a class-name
//! list in an order unlike the taxonomy's, a label map with its own class list, a user ONNX model with its
//! config file, and detections in JSON Lines (boxes and masks), through `fix`, `store` + `field-notes`, and
//! the service (JSON and multipart upload, whose refusals state the body limit); the same files in a scene
//! directory, picked up by `fix DIR` and `store --scene DIR`.
//!
//! Owns: checks that each input reaches the solve and that bad input is refused naming what was wrong.
//! Must not: check the solver's quality. Fixtures: `tests/fixtures/perception/make_perception_fixtures.py`
//! (numpy and Pillow) and `tests/fixtures/unaries/make_onnx_reference.py` (the user model).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use crate::send;
use axum::body::Body;
use axum::http::{Request, StatusCode};
use sayso_core::raster::{decode_index_png, read_index_png, IndexImage, DEFAULT_PIXEL_LIMIT};
use sayso_core::taxonomy::Taxonomy;

/// The block the fixture's scores call a couch: x 30..66, y 38..60 (see the script).
const BLOCK: (u32, u32, u32, u32) = (30, 38, 66, 60);

fn fixture(name: &str) -> PathBuf {
    crate::paths::fixture("perception").join(name)
}

/// The user model's config file (written by `tests/fixtures/unaries/make_onnx_reference.py`).
fn user_model() -> PathBuf {
    crate::paths::fixture("unaries/pixel_model.toml")
}

fn class(name: &str) -> u16 {
    Taxonomy::embedded().class_by_name(name).unwrap().id.0
}

/// The share of the block's inner pixels (one pixel in from its edge) labelled `wanted`.
fn block_share(labels: &IndexImage, wanted: u16) -> f64 {
    let (x0, y0, x1, y1) = BLOCK;
    let mut hits = 0;
    let mut total = 0;
    for y in y0 + 1..y1 - 1 {
        for x in x0 + 1..x1 - 1 {
            total += 1;
            if labels.values[(y * labels.width + x) as usize] == wanted {
                hits += 1;
            }
        }
    }
    hits as f64 / total as f64
}

fn at(labels: &IndexImage, x: u32, y: u32) -> u16 {
    labels.values[(y * labels.width + x) as usize]
}

fn fix(extra: &[&str], out: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sayso"))
        .arg("fix")
        .arg(fixture("corner.png"))
        .args(["--say", "this is the living room", "--out"])
        .arg(out)
        .args(extra)
        .output()
        .unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

fn path(name: &str) -> String {
    fixture(name).display().to_string()
}

#[test]
fn fix_reads_scores_by_their_class_names_and_names_unknown_ones() {
    let out = tempfile::tempdir().unwrap();
    let scored = fix(
        &[
            "--scores",
            &path("corner_scores.npy"),
            "--score-classes",
            &path("corner_score_classes.txt"),
        ],
        out.path(),
    );
    assert!(scored.status.success(), "{}", text(&scored.stderr));
    assert!(!text(&scored.stderr).contains("no depth map"));
    let labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert!(block_share(&labels, class("sofa")) > 0.9);
    assert_eq!(at(&labels, 10, 10), class("wall"));
    assert_eq!(at(&labels, 10, 65), class("floor"));

    let unknown = fix(
        &[
            "--scores",
            &path("corner_scores.npy"),
            "--score-classes",
            &path("corner_score_classes_unknown.txt"),
        ],
        out.path(),
    );
    assert_eq!(unknown.status.code(), Some(1));
    let message = text(&unknown.stderr);
    assert!(
        message.contains("unknown class names") && message.contains("gnome"),
        "{message}"
    );
    // The refusal says how to go on: where the known names are listed and the flag that leaves unknown
    // ones out.
    assert!(
        message.contains("sayso classes") && message.contains("--drop-unknown-classes"),
        "{message}"
    );
    assert_eq!(message.matches("gnome").count(), 1, "said once: {message}");

    let dropped = fix(
        &[
            "--scores",
            &path("corner_scores.npy"),
            "--score-classes",
            &path("corner_score_classes_unknown.txt"),
            "--drop-unknown-classes",
        ],
        out.path(),
    );
    assert!(dropped.status.success(), "{}", text(&dropped.stderr));
    assert!(text(&dropped.stderr).contains("left out classes with unknown names: gnome"));
}

#[test]
fn fix_reads_a_label_map_through_its_own_class_list() {
    let out = tempfile::tempdir().unwrap();
    let run = fix(
        &[
            "--label-map",
            &path("corner_label_map.png"),
            "--label-classes",
            &path("corner_label_classes.txt"),
        ],
        out.path(),
    );
    assert!(run.status.success(), "{}", text(&run.stderr));
    let labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    // Value 1 is "settee", the taxonomy's sofa; read as a class id it would be the wall.
    assert!(block_share(&labels, class("sofa")) > 0.9);
    assert_eq!(at(&labels, 10, 10), class("wall"));
}

#[test]
fn fix_runs_a_user_model_from_its_config_file() {
    let out = tempfile::tempdir().unwrap();
    let model = user_model();
    let run = fix(&["--user-model", model.to_str().unwrap()], out.path());
    assert!(run.status.success(), "{}", text(&run.stderr));
    let labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    // The model knows four classes (its config's list, "couch" being the sofa): nothing else is shown.
    let known = [class("floor"), class("wall"), class("sofa"), class("towel")];
    assert!(labels.values.iter().all(|value| known.contains(value)));
}

#[test]
fn detections_come_as_json_lines_and_a_bad_line_is_named() {
    let taxonomy = Taxonomy::embedded();
    let capture =
        sayso_core::raster::read_rgb_image(&fixture("corner.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    let synonyms = sayso_perception::unaries::byo::SynonymTable::embedded(&taxonomy);
    let detections = sayso_perception::unaries::byo_detections::parse_detections(
        &std::fs::read_to_string(fixture("corner_detections.jsonl")).unwrap(),
        Some(&crate::paths::fixture("perception")),
        capture.width,
        capture.height,
        &taxonomy,
        &synonyms,
    )
    .unwrap();
    assert_eq!(detections.len(), 2);
    assert!(detections.iter().all(|d| d.class.0 == class("sofa")));
    let mask = detections[1].mask.as_ref().unwrap();
    let inside = mask.inside.iter().filter(|&&inside| inside).count();
    assert_eq!(inside, 36 * 22);

    let out = tempfile::tempdir().unwrap();
    let good = fix(
        &["--detections", &path("corner_detections.jsonl")],
        out.path(),
    );
    assert!(good.status.success(), "{}", text(&good.stderr));
    // The built-in pair on an image with no depth: its image-only model scores it, nothing to warn of.
    assert!(
        !text(&good.stderr).contains("no depth map"),
        "{}",
        text(&good.stderr)
    );
    // A model of the built-in contract with no image-only companion beside it: the command says that a
    // model trained with depth labels such images poorly.
    let mine = tempfile::tempdir().unwrap();
    let model = mine.path().join("mine.onnx");
    std::fs::copy(sayso_perception::pipeline::model_path(None), &model).unwrap();
    let alone = fix(
        &[
            "--detections",
            &path("corner_detections.jsonl"),
            "--model",
            model.to_str().unwrap(),
        ],
        out.path(),
    );
    assert!(alone.status.success(), "{}", text(&alone.stderr));
    assert!(
        text(&alone.stderr)
            .contains("no depth map, and this classifier has no image-only companion"),
        "{}",
        text(&alone.stderr)
    );
    let bad = fix(
        &["--detections", &path("corner_detections_bad.jsonl")],
        out.path(),
    );
    assert_eq!(bad.status.code(), Some(1));
    let message = text(&bad.stderr);
    assert!(
        message.contains("line 2") && message.contains("outside the 96x72 image"),
        "{message}"
    );
}

#[test]
fn store_keeps_the_scores_and_field_notes_are_solved_on_them() {
    let data = tempfile::tempdir().unwrap();
    // The detections file's second line has a mask (run lengths): the stored scene keeps it.
    let stored = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(["store", "--data-dir"])
        .arg(data.path())
        .arg("--image")
        .arg(fixture("corner.png"))
        .arg("--scores")
        .arg(fixture("corner_scores.npy"))
        .arg("--score-classes")
        .arg(fixture("corner_score_classes.txt"))
        .arg("--detections")
        .arg(fixture("corner_detections.jsonl"))
        .output()
        .unwrap();
    assert!(stored.status.success(), "{}", text(&stored.stderr));
    let scene_id: i64 = text(&stored.stdout)
        .split('\t')
        .next()
        .unwrap()
        .trim()
        .parse()
        .unwrap();
    let notes = data.path().join("notes.jsonl");
    std::fs::write(
        &notes,
        format!("{{\"scene_id\": {scene_id}, \"text\": \"there is no sofa\"}}\n"),
    )
    .unwrap();
    let applied = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(["field-notes", "--quiet", "--data-dir"])
        .arg(data.path())
        .arg(&notes)
        .output()
        .unwrap();
    assert!(applied.status.success(), "{}", text(&applied.stderr));
    let report: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(data.path().join("notes.jsonl.report.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(report["results"][0]["outcome"], "applied", "{report}");
    // Each change is said once (counted when repeated), as fix says it.
    let reason = report["results"][0]["reason"].as_str().unwrap();
    let mut said: Vec<&str> = reason.split("; ").collect();
    let count = said.len();
    said.sort_unstable();
    said.dedup();
    assert_eq!(said.len(), count, "{reason}");
    // The exported example shows what the note was solved on: the stored scores' sofa (the built-in
    // classifier alone shows another class there), and after the note no sofa.
    let dataset = data.path().join("dataset");
    let exported = Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(["export", "--data-dir"])
        .arg(data.path())
        .arg("--output")
        .arg(&dataset)
        .output()
        .unwrap();
    assert!(exported.status.success(), "{}", text(&exported.stderr));
    let example = dataset.join("example-000001");
    let before = read_index_png(&example.join("labels_before.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    let after = read_index_png(&example.join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert!(block_share(&before, class("sofa")) > 0.9);
    assert!(block_share(&after, class("sofa")) < 0.1);
}

fn run(arguments: &[&std::ffi::OsStr]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_sayso"))
        .args(arguments)
        .output()
        .unwrap()
}

/// A scene directory's perception files (`scene::files`: scores.npy, scores_classes.txt, detections.jsonl
/// with a mask by file name and one by run lengths) are picked up by `fix DIR` and by `store --scene DIR`,
/// and "there is no sofa" is one turn on both paths: the same labels come out of `fix` as out of `store` +
/// `field-notes` + `export` (they once differed: the service cut a small image into fewer superpixels).
#[test]
fn a_scene_directory_brings_its_perception_to_fix_and_store() {
    let scene = fixture("corner_scene");
    let out = tempfile::tempdir().unwrap();
    let fixed = run(&[
        "fix".as_ref(),
        scene.as_os_str(),
        "--say".as_ref(),
        "there is no sofa".as_ref(),
        "--out".as_ref(),
        out.path().as_os_str(),
    ]);
    assert!(fixed.status.success(), "{}", text(&fixed.stderr));
    let said = text(&fixed.stderr);
    assert!(
        said.contains("scores.npy, scores_classes.txt, detections.jsonl"),
        "{said}"
    );
    let summary = text(&fixed.stdout);
    assert!(summary.contains("sofa: one removed"), "{summary}");
    let fixed_labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert!(block_share(&fixed_labels, class("sofa")) < 0.1);

    // Without a note that changes anything, the scores' sofa shows (the built-in classifier alone shows
    // another class there).
    let kept = run(&[
        "fix".as_ref(),
        scene.as_os_str(),
        "--say".as_ref(),
        "this is the living room".as_ref(),
        "--out".as_ref(),
        out.path().as_os_str(),
    ]);
    assert!(kept.status.success(), "{}", text(&kept.stderr));
    let kept_labels = read_index_png(&out.path().join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert!(block_share(&kept_labels, class("sofa")) > 0.9);

    let data = tempfile::tempdir().unwrap();
    let stored = run(&[
        "store".as_ref(),
        "--data-dir".as_ref(),
        data.path().as_os_str(),
        "--scene".as_ref(),
        scene.as_os_str(),
    ]);
    assert!(stored.status.success(), "{}", text(&stored.stderr));
    assert!(text(&stored.stdout).starts_with("1\tcorner_scene"));
    let notes = data.path().join("notes.jsonl");
    std::fs::write(
        &notes,
        "{\"scene_id\": 1, \"text\": \"there is no sofa\"}\n",
    )
    .unwrap();
    let applied = run(&[
        "field-notes".as_ref(),
        "--quiet".as_ref(),
        "--data-dir".as_ref(),
        data.path().as_os_str(),
        notes.as_os_str(),
    ]);
    assert!(applied.status.success(), "{}", text(&applied.stderr));
    let dataset = data.path().join("dataset");
    let exported = run(&[
        "export".as_ref(),
        "--data-dir".as_ref(),
        data.path().as_os_str(),
        "--output".as_ref(),
        dataset.as_os_str(),
    ]);
    assert!(exported.status.success(), "{}", text(&exported.stderr));
    let example = dataset.join("example-000001");
    let before = read_index_png(&example.join("labels_before.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    let after = read_index_png(&example.join("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    assert!(block_share(&before, class("sofa")) > 0.9);
    assert_eq!(after, fixed_labels, "fix and store + field-notes differ");

    // A path that is not there is named as a path, not looked up as a demo scene.
    let missing = run(&[
        "fix".as_ref(),
        "no/such/photo.jpg".as_ref(),
        "--say".as_ref(),
        "there is no sofa".as_ref(),
    ]);
    assert_eq!(missing.status.code(), Some(1));
    assert!(
        text(&missing.stderr).contains("no/such/photo.jpg is not a file or directory"),
        "{}",
        text(&missing.stderr)
    );

    // A directory with both scores and a label map is refused, naming both.
    let both = tempfile::tempdir().unwrap();
    for name in ["image.png", "scores.npy"] {
        std::fs::copy(scene.join(name), both.path().join(name)).unwrap();
    }
    std::fs::copy(
        fixture("corner_label_map.png"),
        both.path().join("label_map.png"),
    )
    .unwrap();
    let refused = run(&[
        "fix".as_ref(),
        both.path().as_os_str(),
        "--say".as_ref(),
        "there is no sofa".as_ref(),
        "--out".as_ref(),
        out.path().as_os_str(),
    ]);
    assert_eq!(refused.status.code(), Some(1));
    let message = text(&refused.stderr);
    assert!(
        message.contains("scores.npy") && message.contains("label_map.png"),
        "{message}"
    );
}

fn router(body_limit_bytes: usize) -> (tempfile::TempDir, axum::Router) {
    router_with(body_limit_bytes, None)
}

fn router_with(
    body_limit_bytes: usize,
    user_model: Option<&Path>,
) -> (tempfile::TempDir, axum::Router) {
    let model = sayso_perception::pipeline::model_path(None);
    crate::real_service(&model, user_model, |config| {
        config.body_limit_bytes = body_limit_bytes;
    })
}

const BOUNDARY: &str = "sayso-test-boundary-21";

fn multipart(parts: &[(&str, Vec<u8>)]) -> Vec<u8> {
    let mut body = Vec::new();
    for (name, bytes) in parts {
        body.extend_from_slice(
            format!(
                "--{BOUNDARY}\r\nContent-Disposition: form-data; name=\"{name}\"; filename=\"{name}\"\r\n\
                 Content-Type: application/octet-stream\r\n\r\n"
            )
            .as_bytes(),
        );
        body.extend_from_slice(bytes);
        body.extend_from_slice(b"\r\n");
    }
    body.extend_from_slice(format!("--{BOUNDARY}--\r\n").as_bytes());
    body
}

async fn upload(app: &axum::Router, parts: &[(&str, Vec<u8>)]) -> (StatusCode, serde_json::Value) {
    let request = Request::post("/v1/scenes/upload")
        .header(
            "content-type",
            format!("multipart/form-data; boundary={BOUNDARY}"),
        )
        .body(Body::from(multipart(parts)))
        .unwrap();
    let (status, bytes) = send(app, request).await;
    (status, serde_json::from_slice(&bytes).unwrap_or_default())
}

async fn labels_of(app: &axum::Router, scene: &serde_json::Value) -> IndexImage {
    let request = Request::get(format!("/v1/scenes/{}/labels.png", scene["scene_id"]))
        .body(Body::empty())
        .unwrap();
    let (status, bytes) = send(app, request).await;
    assert_eq!(status, StatusCode::OK);
    decode_index_png(&bytes, Path::new("labels.png"), DEFAULT_PIXEL_LIMIT).unwrap()
}

fn read(name: &str) -> Vec<u8> {
    std::fs::read(fixture(name)).unwrap()
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn the_service_takes_perception_by_multipart_and_json_with_class_names() {
    let (_data, app) = router(64 * 1024 * 1024);
    let (status, scene) = upload(
        &app,
        &[
            ("image", read("corner.png")),
            ("scores", read("corner_scores.npy")),
            ("scores_classes", read("corner_score_classes.txt")),
        ],
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{scene}");
    assert!(block_share(&labels_of(&app, &scene).await, class("sofa")) > 0.9);

    let (status, scene) = upload(
        &app,
        &[
            ("image", read("corner.png")),
            ("label_map", read("corner_label_map.png")),
            ("label_map_classes", read("corner_label_classes.txt")),
        ],
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{scene}");
    assert!(block_share(&labels_of(&app, &scene).await, class("sofa")) > 0.9);

    let (status, refused) = upload(
        &app,
        &[
            ("image", read("corner.png")),
            ("scores", read("corner_scores.npy")),
            ("scores_classes", read("corner_score_classes_unknown.txt")),
        ],
    )
    .await;
    assert_eq!(status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        refused["message"].as_str().unwrap().contains("gnome"),
        "{refused}"
    );

    let (status, refused) = upload(
        &app,
        &[
            ("image", read("corner.png")),
            ("detections", read("corner_detections_bad.jsonl")),
        ],
    )
    .await;
    assert_eq!(status, StatusCode::UNPROCESSABLE_ENTITY);
    assert!(
        refused["message"].as_str().unwrap().contains("line 2"),
        "{refused}"
    );

    // Detections with masks: run lengths in JSON Lines, and in the JSON route's mask_runs.
    let (status, scene) = upload(
        &app,
        &[
            ("image", read("corner.png")),
            ("detections", read("corner_detections.jsonl")),
        ],
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{scene}");

    let (status, refused) = upload(&app, &[("picture", read("corner.png"))]).await;
    assert_eq!(status, StatusCode::BAD_REQUEST);
    assert_eq!(refused["code"], "unknown_part");

    use base64::Engine;
    let base64 = |bytes: Vec<u8>| base64::engine::general_purpose::STANDARD.encode(bytes);
    let body = serde_json::json!({
        "image_base64": base64(read("corner.png")),
        "scores_npy_base64": base64(read("corner_scores.npy")),
        "scores_classes": ["couch", "wall", "Floor"],
    });
    let request = Request::post("/v1/scenes")
        .header("content-type", "application/json")
        .body(Body::from(body.to_string()))
        .unwrap();
    let (status, bytes) = send(&app, request).await;
    let scene: serde_json::Value = serde_json::from_slice(&bytes).unwrap();
    assert_eq!(status, StatusCode::CREATED, "{scene}");
    assert!(block_share(&labels_of(&app, &scene).await, class("sofa")) > 0.9);

    let masked = |runs: serde_json::Value| {
        let body = serde_json::json!({
            "image_base64": base64(read("corner.png")),
            "detections": [{"class": "sofa", "box": {"x0": 30, "y0": 38, "x1": 66, "y1": 60},
                            "score": 0.8, "mask_runs": runs}],
        });
        Request::post("/v1/scenes")
            .header("content-type", "application/json")
            .body(Body::from(body.to_string()))
            .unwrap()
    };
    let runs: Vec<u64> = std::iter::once(38 * 96 + 30)
        .chain((0..21).flat_map(|_| [36, 60]))
        .chain([36, 72 * 96 - (38 * 96 + 30) - 22 * 96 + 60])
        .collect();
    assert_eq!(runs.iter().sum::<u64>(), 96 * 72);
    let good = serde_json::json!({"width": 96, "height": 72, "runs": runs});
    let (status, bytes) = send(&app, masked(good)).await;
    assert_eq!(status, StatusCode::CREATED, "{}", text(&bytes));
    let small = serde_json::json!({"width": 48, "height": 36, "runs": [1728]});
    let (status, bytes) = send(&app, masked(small)).await;
    assert_eq!(status, StatusCode::UNPROCESSABLE_ENTITY);
    let refused: serde_json::Value = serde_json::from_slice(&bytes).unwrap();
    assert_eq!(refused["code"], "bad_mask", "{refused}");
    assert!(
        refused["message"]
            .as_str()
            .unwrap()
            .contains("detections[0].mask_runs is 48x36 but the image is 96x72"),
        "{refused}"
    );
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn every_refusal_of_a_large_body_states_the_limit() {
    let limit = 64 * 1024;
    let (_data, app) = router(limit);
    let (status, refused) = upload(
        &app,
        &[
            ("image", read("corner.png")),
            ("scores", read("corner_scores.npy")),
        ],
    )
    .await;
    assert_eq!(status, StatusCode::PAYLOAD_TOO_LARGE);
    let message = refused["message"].as_str().unwrap();
    assert!(
        message.contains(&format!("body_limit_bytes = {limit} bytes")),
        "{message}"
    );

    let body = serde_json::json!({"image_base64": "A".repeat(2 * limit)});
    let request = Request::post("/v1/scenes")
        .header("content-type", "application/json")
        .body(Body::from(body.to_string()))
        .unwrap();
    let (status, bytes) = send(&app, request).await;
    assert_eq!(status, StatusCode::PAYLOAD_TOO_LARGE);
    let refused: serde_json::Value = serde_json::from_slice(&bytes).unwrap();
    assert!(
        refused["message"]
            .as_str()
            .unwrap()
            .contains(&format!("{limit} bytes")),
        "{refused}"
    );
}

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_service_with_a_user_model_scores_plain_images_with_it() {
    let (_data, app) = router_with(64 * 1024 * 1024, Some(&user_model()));
    let (status, scene) = upload(&app, &[("image", read("corner.png"))]).await;
    assert_eq!(status, StatusCode::CREATED, "{scene}");
    let labels = labels_of(&app, &scene).await;
    let known = [class("floor"), class("wall"), class("sofa"), class("towel")];
    assert!(labels.values.iter().all(|value| known.contains(value)));
    // Scores sent with a scene still win over the service's model.
    let (status, scene) = upload(
        &app,
        &[
            ("image", read("corner.png")),
            ("label_map", read("corner_label_map.png")),
            ("label_map_classes", read("corner_label_classes.txt")),
        ],
    )
    .await;
    assert_eq!(status, StatusCode::CREATED, "{scene}");
    assert!(block_share(&labels_of(&app, &scene).await, class("sofa")) > 0.9);
}

/// A refused file is named as the caller sent it: the multipart part (`depth`, `image`), not the JSON
/// route's base64 field.
#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_multipart_refusal_names_the_part_that_was_sent() {
    let (_data, app) = router(64 * 1024 * 1024);
    let small_depth = sayso_core::raster::encode_index_png(&IndexImage {
        width: 3,
        height: 2,
        values: vec![1000; 6],
    })
    .expect("a 3x2 depth PNG");
    let (status, answer) = upload(
        &app,
        &[("image", read("corner.png")), ("depth", small_depth)],
    )
    .await;
    assert_eq!(status, StatusCode::UNPROCESSABLE_ENTITY, "{answer}");
    let message = answer["message"].as_str().unwrap_or_default();
    assert!(
        message.contains("depth") && !message.contains("_base64"),
        "{answer}"
    );

    let (status, answer) = upload(&app, &[("image", b"not a picture".to_vec())]).await;
    assert_eq!(status, StatusCode::UNPROCESSABLE_ENTITY, "{answer}");
    let message = answer["message"].as_str().unwrap_or_default();
    assert!(
        message.contains("image") && !message.contains("_base64"),
        "{answer}"
    );
}
