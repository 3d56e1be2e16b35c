//! Crash safety: the real `sayso serve` binary is killed hard (SIGKILL) while several clients send
//! corrections; after each restart every acknowledged correction is present and the database passes
//! `PRAGMA integrity_check`. Several cycles, bounded in time.

use crate::service_support;

use std::net::SocketAddr;
use std::process::{Child, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

use sayso_core::raster::{self, IndexImage};
use service_support::*;

const WALL: u16 = 1;
const FLOOR: u16 = 0;
const MUG: u16 = 21;
const TOWEL: u16 = 37;
const CLIENTS: u32 = 4;

fn start(data: &std::path::Path, config: &std::path::Path) -> (Child, SocketAddr) {
    start_serve(&[&"--data-dir", &data, &"--config", &config], Stdio::null())
}

/// One client's acknowledged corrections: (conversation, turn id, text, class).
type Acknowledged = Vec<(i64, i64, String, u16)>;

fn block_origin(client: u32) -> (u32, u32) {
    (client * 8 + 2, 2)
}

#[test]
fn acknowledged_corrections_survive_sigkill() {
    let data = tempfile::tempdir().unwrap();
    let config = data.path().join("sayso.toml");
    std::fs::write(&config, "rate_per_second = 100000.0\nrate_burst = 100000\n").unwrap();
    // Four floor blocks walled off from each other, one per client.
    let mut labels = IndexImage::filled(CLIENTS * 8, 8, WALL);
    for client in 0..CLIENTS {
        let (x0, y0) = block_origin(client);
        for y in y0..y0 + 4 {
            for x in x0..x0 + 4 {
                labels.set(x, y, FLOOR);
            }
        }
    }
    let started = Instant::now();
    let (mut child, mut address) = start(data.path(), &config);
    let (scene, _) = scene_and_conversation(address, None, &labels);
    let mut all_acknowledged: Vec<Acknowledged> = vec![Vec::new(); CLIENTS as usize];
    // The class each block may show: the last acknowledged one, or the one in flight at the kill.
    let mut possible: Vec<Vec<u16>> = vec![vec![FLOOR]; CLIENTS as usize];
    for cycle in 0..3u64 {
        let stop = Arc::new(AtomicBool::new(false));
        let workers: Vec<_> = (0..CLIENTS)
            .map(|client| {
                let stop = stop.clone();
                // Start with the class the block does not show, so every sentence changes it.
                let offset = u32::from(possible[client as usize] == [MUG]);
                std::thread::spawn(move || {
                    let opened = send(address, "POST", "/v1/conversations", &[("Content-Type", "application/json")],
                        serde_json::json!({ "scene_id": scene }).to_string().as_bytes());
                    let Ok(opened) = opened else { return (Vec::new(), None) };
                    let conversation = opened.json()["conversation_id"].as_i64().unwrap();
                    let (x0, y0) = block_origin(client);
                    let mut acknowledged = Vec::new();
                    let mut in_flight = None;
                    for step in 0..10_000u32 {
                        if stop.load(Ordering::Relaxed) {
                            break;
                        }
                        let (text, class) = if (step + offset) % 2 == 0 {
                            ("that's a mug".to_string(), MUG)
                        } else {
                            ("no, it's a towel".to_string(), TOWEL)
                        };
                        in_flight = Some(class);
                        let body = serde_json::json!({"text": text, "focus": {"type": "pixel", "x": x0 + 1, "y": y0 + 1}});
                        let reply = send(address, "POST", &format!("/v1/conversations/{conversation}/utterances"),
                            &[("Content-Type", "application/json")], body.to_string().as_bytes());
                        match reply {
                            Ok(reply) if reply.status == 200 => {
                                let reply = reply.json();
                                assert_eq!(reply["status"], "applied", "{reply}");
                                acknowledged.push((conversation, reply["turn_id"].as_i64().unwrap(), text, class));
                                in_flight = None;
                            }
                            // The process is gone (or going): stop sending.
                            _ => break,
                        }
                    }
                    (acknowledged, in_flight)
                })
            })
            .collect();
        std::thread::sleep(Duration::from_millis(1500 + 300 * cycle));
        child.kill().expect("SIGKILL");
        let _ = child.wait();
        stop.store(true, Ordering::Relaxed);
        for (client, worker) in workers.into_iter().enumerate() {
            let (acknowledged, in_flight) = worker.join().expect("client thread");
            if let Some(&(_, _, _, class)) = acknowledged.last() {
                possible[client] = vec![class];
            }
            if let Some(class) = in_flight {
                possible[client].push(class);
            }
            all_acknowledged[client].extend(acknowledged);
        }
        // The file is sound before anything opens it again.
        let connection =
            rusqlite::Connection::open(data.path().join("corrections.sqlite")).unwrap();
        let integrity: String = connection
            .query_row("PRAGMA integrity_check", [], |row| row.get(0))
            .unwrap();
        assert_eq!(integrity, "ok", "cycle {cycle}");
        drop(connection);

        let (restarted, address_after) = start(data.path(), &config);
        child = restarted;
        for (client, acknowledged) in all_acknowledged.iter().enumerate() {
            for (conversation, turn, text, _) in acknowledged {
                let history = get(
                    address_after,
                    &format!("/v1/conversations/{conversation}"),
                    None,
                );
                assert_eq!(history.status, 200, "conversation {conversation} is back");
                let history = history.json();
                let found = history["turns"].as_array().unwrap().iter().any(|stored| {
                    stored["turn_id"].as_i64() == Some(*turn)
                        && stored["text"].as_str() == Some(text.as_str())
                });
                assert!(
                    found,
                    "cycle {cycle}: client {client}'s acknowledged turn {turn} ({text}) is missing"
                );
            }
        }
        let reply = get(
            address_after,
            &format!("/v1/scenes/{scene}/labels.png"),
            None,
        );
        let now =
            raster::decode_index_png(&reply.body, std::path::Path::new("labels"), 1 << 20).unwrap();
        for client in 0..CLIENTS {
            let (x0, y0) = block_origin(client);
            let shown = now.get(x0, y0);
            assert!(
                possible[client as usize].contains(&shown),
                "cycle {cycle}: block {client} shows {shown}, expected one of {:?}",
                possible[client as usize]
            );
            // The whole block moved together.
            assert_eq!(now.get(x0 + 3, y0 + 3), shown);
            assert_eq!(now.get(x0 - 1, y0), WALL);
        }
        // Continue from what the restarted service shows.
        for client in 0..CLIENTS {
            let (x0, y0) = block_origin(client);
            possible[client as usize] = vec![now.get(x0, y0)];
        }
        // The next cycle drives the restarted process.
        address = address_after;
    }
    let total: usize = all_acknowledged.iter().map(Vec::len).sum();
    eprintln!(
        "crash test: {total} acknowledged corrections over 3 SIGKILL cycles in {:?}",
        started.elapsed()
    );
    assert!(
        total >= 3 * CLIENTS as usize,
        "clients got {total} corrections acknowledged"
    );
    let _ = child.kill();
    let _ = child.wait();
    assert!(
        started.elapsed() < Duration::from_secs(60),
        "the crash test took {:?}",
        started.elapsed()
    );
}
