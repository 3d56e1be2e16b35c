//! The clients the service benches share: the bench scenes registered by name through a running service,
//! one conversation opened on each, and one scripted note sent as a timed HTTP request.
//!
//! Owns: `Conversation`, `open_conversations`, `utterance` and `closed_loop`. Must not: start or stop a service, or print;
//! the benches do (`benches/service.rs` in process, `benches/fleet.rs` as replicas).

use std::net::SocketAddr;
use std::sync::Arc;
use std::time::{Duration, Instant};

use sayso_core::demo::{demo_directory, list_demo_scenes};
use sayso_core::language::constraint::Focus;
use sayso_lab::evaluation::read_pointed_notes;

use crate::demo_turns::BENCH_SCENES;
use crate::service_support;

/// One conversation on one demo scene, with the notes it sends in turn.
#[derive(Clone)]
pub struct Conversation {
    pub id: i64,
    pub notes: Arc<Vec<(String, Option<Focus>)>>,
}

/// Registers the bench scenes through the service at `address` and opens one conversation on each.
pub fn open_conversations(address: SocketAddr) -> Vec<Conversation> {
    let demo_dir = demo_directory(None);
    let available = list_demo_scenes(&demo_dir).expect("the demo scenes are listed");
    BENCH_SCENES
        .iter()
        .map(|&name| {
            assert!(available.iter().any(|known| known == name), "{name}");
            let created = service_support::send_json(
                address,
                "POST",
                "/v1/scenes",
                None,
                &serde_json::json!({ "demo": name }),
            );
            assert_eq!(
                created.status,
                201,
                "{name}: {:?}",
                String::from_utf8_lossy(&created.body)
            );
            let scene_id = created.json()["scene_id"].as_i64().unwrap();
            let opened = service_support::send_json(
                address,
                "POST",
                "/v1/conversations",
                None,
                &serde_json::json!({ "scene_id": scene_id }),
            );
            assert_eq!(opened.status, 201);
            let notes: Vec<_> = read_pointed_notes(&demo_dir.join(name))
                .expect("the notes read")
                .into_iter()
                .map(|note| (note.text, note.focus))
                .collect();
            assert!(!notes.is_empty(), "{name} has notes");
            Conversation {
                id: opened.json()["conversation_id"].as_i64().unwrap(),
                notes: Arc::new(notes),
            }
        })
        .collect()
}

/// Sends the conversation's `step`th note (cycling) to `address`; how long the answer took.
pub fn utterance(address: SocketAddr, conversation: &Conversation, step: usize) -> Duration {
    let (text, focus) = &conversation.notes[step % conversation.notes.len()];
    let mut body = serde_json::json!({ "text": text });
    if let Some(Focus::Pixel { x, y }) = focus {
        body["focus"] = serde_json::json!({"type": "pixel", "x": x, "y": y});
    }
    let started = Instant::now();
    let reply = service_support::send_json(
        address,
        "POST",
        &format!("/v1/conversations/{}/utterances", conversation.id),
        None,
        &body,
    );
    let elapsed = started.elapsed();
    assert_eq!(
        reply.status,
        200,
        "{:?}",
        String::from_utf8_lossy(&reply.body)
    );
    elapsed
}

/// Every conversation's client, on its own thread, sends `per_client` notes one after another (a closed
/// loop) from `first_step` on, each to the next of `addresses`; returns corrections per second and the
/// sorted latencies.
pub fn closed_loop(
    addresses: &[SocketAddr],
    conversations: &[Conversation],
    first_step: usize,
    per_client: usize,
) -> (f64, Vec<Duration>) {
    let started = Instant::now();
    let threads: Vec<_> = conversations
        .iter()
        .enumerate()
        .map(|(client, conversation)| {
            let addresses = addresses.to_vec();
            let conversation = conversation.clone();
            std::thread::spawn(move || {
                (first_step..first_step + per_client)
                    .map(|step| {
                        let address = addresses[(client + step) % addresses.len()];
                        utterance(address, &conversation, step)
                    })
                    .collect::<Vec<_>>()
            })
        })
        .collect();
    let mut latencies: Vec<Duration> = threads
        .into_iter()
        .flat_map(|thread| thread.join().unwrap())
        .collect();
    let seconds = started.elapsed().as_secs_f64();
    latencies.sort();
    (latencies.len() as f64 / seconds, latencies)
}
