//! Many conversations at once, on different scenes and on the same scene: no update is lost, and every
//! scene's final labels are exactly the union of the corrections that were acknowledged.

use crate::service_support;

use std::collections::HashMap;

use sayso_core::raster::{self, IndexImage};
use sayso_session::config::ServiceConfig;
use service_support::*;

const MUG: u16 = 21;
const TOWEL: u16 = 37;

#[test]
fn concurrent_conversations_lose_no_update() {
    let data = tempfile::tempdir().unwrap();
    let service = route_service(
        data.path(),
        ServiceConfig {
            rate_per_second: 100_000.0,
            rate_burst: 100_000,
            ..ServiceConfig::default()
        },
    );
    let address = &service;
    // Two shared scenes (four conversations each) and four scenes of their own.
    let shared: Vec<i64> = (0..2)
        .map(|_| scene_and_conversation(address, None, &IndexImage::filled(16, 16, 0)).0)
        .collect();
    let mut plans = Vec::new();
    for worker in 0..8u32 {
        let scene = shared[(worker % 2) as usize];
        let opened = send_json(
            address,
            "POST",
            "/v1/conversations",
            None,
            &serde_json::json!({ "scene_id": scene }),
        );
        plans.push((
            worker,
            scene,
            opened.json()["conversation_id"].as_i64().unwrap(),
        ));
    }
    for worker in 8..12u32 {
        let (scene, conversation) =
            scene_and_conversation(address, None, &IndexImage::filled(16, 16, 0));
        plans.push((worker, scene, conversation));
    }
    let threads: Vec<_> = plans
        .into_iter()
        .map(|(worker, scene, conversation)| {
            let service = service.clone();
            std::thread::spawn(move || {
                let address = &service;
                let mut acknowledged = Vec::new();
                // Each worker owns two rows of the scene: no two workers paint the same pixel.
                let row = (worker / 2) % 8 * 2;
                for step in 0..24u32 {
                    let (x, y) = (step % 16, row + step / 16);
                    let class = if step % 2 == 0 { "mug" } else { "towel" };
                    let reply = send_json(
                        address,
                        "POST",
                        &format!("/v1/conversations/{conversation}/utterances"),
                        None,
                        &serde_json::json!({"text": format!("paint {class}"), "focus": {"type": "pixel", "x": x, "y": y}}),
                    );
                    assert_eq!(reply.status, 200, "{:?}", String::from_utf8_lossy(&reply.body));
                    assert_eq!(reply.json()["status"], "applied");
                    acknowledged.push((x, y, if step % 2 == 0 { MUG } else { TOWEL }));
                }
                (scene, acknowledged)
            })
        })
        .collect();
    let mut expected: HashMap<i64, Vec<(u32, u32, u16)>> = HashMap::new();
    for thread in threads {
        let (scene, acknowledged) = thread.join().expect("worker");
        expected.entry(scene).or_default().extend(acknowledged);
    }
    for (scene, pixels) in &expected {
        let reply = get(address, &format!("/v1/scenes/{scene}/labels.png"), None);
        let labels =
            raster::decode_index_png(&reply.body, std::path::Path::new("labels"), 1 << 20).unwrap();
        let mut want = IndexImage::filled(16, 16, 0);
        for &(x, y, class) in pixels {
            want.set(x, y, class);
        }
        assert_eq!(labels, want, "scene {scene}");
    }
    // Every acknowledged correction became a training example.
    let examples = service
        .coordinator
        .with_log(|log| log.training_examples().unwrap().len());
    assert_eq!(examples, 12 * 24);
}
