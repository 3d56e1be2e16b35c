//! The `sayso demo` and `sayso render` commands as a user runs them: files written, errors reported.

use std::process::Command;

use sayso_core::raster::{read_rgb_png, DEFAULT_PIXEL_LIMIT};

fn sayso() -> Command {
    Command::new(env!("CARGO_BIN_EXE_sayso"))
}

#[test]
fn demo_writes_overlay_and_summaries_of_the_first_scene() {
    let out = tempfile::tempdir().unwrap();
    let status = sayso()
        .args(["demo", "--labels", "ground-truth", "--out"])
        .arg(out.path())
        .status()
        .unwrap();
    assert!(status.success());
    let overlay = read_rgb_png(&out.path().join("overlay.png"), DEFAULT_PIXEL_LIMIT).unwrap();
    // The image plus a legend panel to its right.
    assert!(overlay.width > 640 && overlay.height >= 480);
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.path().join("summary.json")).unwrap())
            .unwrap();
    assert_eq!(summary["scene"], "living_room_evening");
    assert_eq!(summary["source"], "ground_truth");
    assert!(summary["classes"].as_array().unwrap().len() > 10);
    let text = std::fs::read_to_string(out.path().join("summary.txt")).unwrap();
    assert!(text.contains("ground truth") && text.contains("person"));
}

#[test]
fn unknown_scene_and_room_fail_with_a_reason() {
    let out = tempfile::tempdir().unwrap();
    let result = sayso()
        .args(["demo", "--scene", "attic_party", "--out"])
        .arg(out.path())
        .output()
        .unwrap();
    assert!(!result.status.success());
    let message = String::from_utf8_lossy(&result.stderr);
    assert!(
        message.contains("attic_party") && message.contains("kitchen_breakfast"),
        "{message}"
    );
    let result = sayso()
        .args(["render", "--room", "attic", "--out"])
        .arg(out.path())
        .output()
        .unwrap();
    assert!(!result.status.success());
    assert!(String::from_utf8_lossy(&result.stderr).contains("attic"));
}

#[test]
fn render_count_cycles_rooms_with_consecutive_seeds() {
    let out = tempfile::tempdir().unwrap();
    let status = sayso()
        .args(["render", "--seed", "100000", "--count", "2", "--out"])
        .arg(out.path())
        .status()
        .unwrap();
    assert!(status.success());
    for name in ["kitchen_100000", "living_room_100001"] {
        let scene: serde_json::Value = serde_json::from_str(
            &std::fs::read_to_string(out.path().join(name).join("scene.json")).unwrap(),
        )
        .unwrap();
        assert_eq!(scene["name"], name);
        assert_eq!(scene["width"], 640);
    }
}
