//! A fleet on one shared log: three `sayso serve` replicas on one PostgreSQL database (a real server,
//! `tests/postgres_support`). Four operators hold conversations on two scenes at once, each sending its
//! turns to the replicas in rotation, so consecutive turns of one conversation are answered by different
//! processes; meanwhile a replica is killed hard (SIGKILL) mid-write and started again, three times. Then,
//! read straight from the database: every acknowledged correction is stored exactly once (its turn, its
//! version and its training example), nothing else is stored but the turns whose answer the kills cut off,
//! every scene's versions form one linear chain ending at its head, and where each operator points the
//! scene shows what their last acknowledged (or cut-off) turn made it.

use crate::postgres_support;
use crate::service_support;

use std::collections::{HashMap, HashSet};
use std::net::SocketAddr;
use std::path::Path;
use std::process::{Child, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use sayso_core::raster::{self, IndexImage};
use service_support::{scene_body, send, send_json};

const WALL: u16 = 1;
const FLOOR: u16 = 0;
const MUG: u16 = 21;
const TOWEL: u16 = 37;
const REPLICAS: usize = 3;
const SCENES: usize = 2;
/// Conversations per scene, each on a block of its own.
const BLOCKS: usize = 2;
const KILLS: usize = 3;

struct Replica {
    child: Child,
    address: SocketAddr,
}

impl Drop for Replica {
    /// A replica never outlives the test, whether it passes or not.
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn start(url: &str, data: &Path, config: &Path) -> Replica {
    // A replica's log lines (an internal error's detail) show beside a failure.
    let (child, address) = service_support::start_serve(
        &[
            &"--database",
            &url,
            &"--data-dir",
            &data,
            &"--config",
            &config,
        ],
        Stdio::inherit(),
    );
    Replica { child, address }
}

/// A block's side and the picture's height, in pixels: a block covers about 3% of the picture, under the
/// share past which a relabel to a small object asks first (`grounding::usual_share`), and the picture is
/// large enough for 36 superpixels (`SceneParams::for_image_size`).
const SIDE: u32 = 12;
const HEIGHT: u32 = 48;

fn block_origin(block: usize) -> (u32, u32) {
    (
        block as u32 * HEIGHT + (HEIGHT - SIDE) / 2,
        (HEIGHT - SIDE) / 2,
    )
}

/// Two floor blocks walled off from each other.
fn scene_labels() -> IndexImage {
    let mut labels = IndexImage::filled(BLOCKS as u32 * HEIGHT, HEIGHT, WALL);
    for block in 0..BLOCKS {
        let (x0, y0) = block_origin(block);
        for y in y0..y0 + SIDE {
            for x in x0..x0 + SIDE {
                labels.set(x, y, FLOOR);
            }
        }
    }
    labels
}

/// One acknowledged turn: its id, text, status, the version it made, and which replica answered.
#[derive(Clone, Debug)]
struct Acknowledged {
    turn: i64,
    text: String,
    version: i64,
    replica: usize,
}

/// What one operator saw.
#[derive(Default)]
struct Seen {
    acknowledged: Vec<Acknowledged>,
    /// Turns sent whose answer never came (the replica was killed): each may or may not be stored.
    cut_off: usize,
    /// Answers 409 `stale_change` (another conversation moved the scene first); sent again.
    stale: usize,
    /// The classes the block may show now: the last acknowledged one, and any cut off after it.
    possible: Vec<u16>,
}

fn text_of(class: u16) -> &'static str {
    if class == MUG {
        "that's a mug"
    } else {
        "no, it's a towel"
    }
}

/// One operator: opens a conversation on `scene`, then says "mug" and "towel" in turn about its block,
/// each turn to the next replica, until told to stop.
fn operate(
    client: usize,
    scene: i64,
    block: usize,
    addresses: Arc<Mutex<Vec<Option<SocketAddr>>>>,
    stop: Arc<AtomicBool>,
) -> (i64, Seen) {
    let address_of = |replica: usize| addresses.lock().unwrap()[replica % REPLICAS];
    let opened = send_json(
        address_of(client).expect("every replica is up at the start"),
        "POST",
        "/v1/conversations",
        None,
        &serde_json::json!({ "scene_id": scene }),
    );
    assert_eq!(opened.status, 201, "{:?}", opened.json());
    let conversation = opened.json()["conversation_id"].as_i64().unwrap();
    let (x0, y0) = block_origin(block);
    let body_for = |class: u16| {
        serde_json::json!({"text": text_of(class), "focus": {"type": "pixel", "x": x0 + SIDE / 2, "y": y0 + SIDE / 2}})
            .to_string()
    };
    let mut seen = Seen {
        possible: vec![FLOOR],
        ..Seen::default()
    };
    let mut next_class = MUG;
    let mut after_cut_off = false;
    let mut replica = client + 1;
    while !stop.load(Ordering::Relaxed) {
        replica += 1;
        let Some(address) = address_of(replica) else {
            // That replica is being restarted: the next one takes the turn.
            continue;
        };
        let reply = send(
            address,
            "POST",
            &format!("/v1/conversations/{conversation}/utterances"),
            &[("Content-Type", "application/json")],
            body_for(next_class).as_bytes(),
        );
        match reply {
            Ok(reply) if reply.status == 200 => {
                let answer = reply.json();
                let status = answer["status"].as_str().unwrap_or_default().to_string();
                // A turn cut off just before may have been stored and already made the block this class.
                let expected =
                    status == "applied" || (after_cut_off && status == "nothing_to_change");
                assert!(
                    expected,
                    "client {client}, replica {}: {answer}",
                    replica % REPLICAS
                );
                seen.acknowledged.push(Acknowledged {
                    turn: answer["turn_id"].as_i64().unwrap(),
                    text: text_of(next_class).to_string(),
                    version: if status == "applied" {
                        answer["scene_version"].as_i64().unwrap()
                    } else {
                        0
                    },
                    replica: replica % REPLICAS,
                });
                seen.possible = vec![next_class];
                after_cut_off = false;
                next_class = if next_class == MUG { TOWEL } else { MUG };
            }
            Ok(reply) if reply.status == 409 => {
                assert_eq!(reply.code(), "stale_change", "{:?}", reply.json());
                seen.stale += 1;
            }
            Ok(reply) => panic!(
                "client {client}, replica {}: {} {:?}",
                replica % REPLICAS,
                reply.status,
                String::from_utf8_lossy(&reply.body)
            ),
            Err(_) => {
                // The replica died with the turn in flight (or before it was read): it may be stored.
                seen.cut_off += 1;
                seen.possible.push(next_class);
                after_cut_off = true;
                next_class = if next_class == MUG { TOWEL } else { MUG };
            }
        }
    }
    (conversation, seen)
}

#[test]
fn replicas_on_one_database_lose_and_repeat_nothing_when_killed() {
    let started = Instant::now();
    let url = postgres_support::migrated_database();
    let data = tempfile::tempdir().unwrap();
    let config = data.path().join("sayso.toml");
    std::fs::write(&config, "rate_per_second = 100000.0\nrate_burst = 100000\n").unwrap();
    let mut replicas: Vec<Replica> = (0..REPLICAS)
        .map(|index| {
            let directory = data.path().join(format!("replica{index}"));
            start(&url, &directory, &config)
        })
        .collect();
    let addresses = Arc::new(Mutex::new(
        replicas
            .iter()
            .map(|replica| Some(replica.address))
            .collect::<Vec<_>>(),
    ));
    // Each scene registered through a different replica than the ones its operators start on.
    let scenes: Vec<i64> = (0..SCENES)
        .map(|index| {
            let created = send_json(
                replicas[(index + 2) % REPLICAS].address,
                "POST",
                "/v1/scenes",
                None,
                &scene_body(&scene_labels()),
            );
            assert_eq!(created.status, 201, "{:?}", created.json());
            created.json()["scene_id"].as_i64().unwrap()
        })
        .collect();

    let stop = Arc::new(AtomicBool::new(false));
    let operators: Vec<_> = (0..SCENES * BLOCKS)
        .map(|client| {
            let (scene, block) = (scenes[client / BLOCKS], client % BLOCKS);
            let (addresses, stop) = (addresses.clone(), stop.clone());
            std::thread::spawn(move || operate(client, scene, block, addresses, stop))
        })
        .collect();
    for kill in 0..KILLS {
        std::thread::sleep(Duration::from_millis(2500));
        let victim = kill % REPLICAS;
        addresses.lock().unwrap()[victim] = None;
        replicas[victim].child.kill().expect("SIGKILL");
        let _ = replicas[victim].child.wait();
        let directory = data.path().join(format!("replica{victim}"));
        replicas[victim] = start(&url, &directory, &config);
        addresses.lock().unwrap()[victim] = Some(replicas[victim].address);
    }
    std::thread::sleep(Duration::from_millis(2500));
    stop.store(true, Ordering::Relaxed);
    let seen: Vec<(i64, Seen)> = operators
        .into_iter()
        .map(|operator| operator.join().expect("an operator thread"))
        .collect();

    // Every conversation was served by every replica, and got on after each kill.
    for (conversation, seen) in &seen {
        let replicas_seen: HashSet<usize> =
            seen.acknowledged.iter().map(|ack| ack.replica).collect();
        assert_eq!(
            replicas_seen.len(),
            REPLICAS,
            "conversation {conversation}: acknowledged by replicas {replicas_seen:?} only"
        );
        assert!(
            seen.acknowledged.len() >= 6,
            "conversation {conversation}: only {} turns acknowledged",
            seen.acknowledged.len()
        );
    }

    // Straight from the database: each acknowledged turn once, and nothing but the cut-off turns besides.
    for (conversation, seen) in &seen {
        let stored: Vec<(i64, String)> = postgres_support::query(
            &url,
            &format!(
                "SELECT id, text FROM turns WHERE conversation_id = {conversation} ORDER BY id"
            ),
        )
        .iter()
        .map(|row| (row.get(0), row.get(1)))
        .collect();
        let by_id: HashMap<i64, &String> = stored.iter().map(|(id, text)| (*id, text)).collect();
        for ack in &seen.acknowledged {
            assert_eq!(
                by_id.get(&ack.turn).map(|text| text.as_str()),
                Some(ack.text.as_str()),
                "conversation {conversation}: acknowledged turn {} is missing or changed",
                ack.turn
            );
        }
        let extra = stored.len() - seen.acknowledged.len();
        assert!(
            extra <= seen.cut_off,
            "conversation {conversation}: {extra} turns stored that nobody was told of, {} cut off",
            seen.cut_off
        );
        for ack in seen.acknowledged.iter().filter(|ack| ack.version != 0) {
            let versions = postgres_support::query(
                &url,
                &format!("SELECT id FROM scene_versions WHERE turn_id = {}", ack.turn),
            );
            assert_eq!(
                versions.len(),
                1,
                "turn {}: versions {versions:?}",
                ack.turn
            );
            assert_eq!(
                versions[0].get::<_, i64>(0),
                ack.version,
                "turn {}",
                ack.turn
            );
            let examples = postgres_support::query(
                &url,
                &format!(
                    "SELECT id FROM training_examples WHERE turn_id = {} AND active = 1",
                    ack.turn
                ),
            );
            assert_eq!(examples.len(), 1, "turn {}: training examples", ack.turn);
        }
    }

    // Each scene's versions: one root, no version the parent of two, every one on the way to the head.
    for scene in &scenes {
        let versions: Vec<(i64, Option<i64>)> = postgres_support::query(
            &url,
            &format!(
                "SELECT id, parent_id FROM scene_versions WHERE scene_id = {scene} ORDER BY id"
            ),
        )
        .iter()
        .map(|row| (row.get(0), row.get(1)))
        .collect();
        let head: i64 = postgres_support::query(
            &url,
            &format!("SELECT head_version FROM scenes WHERE id = {scene}"),
        )[0]
        .get(0);
        let roots = versions
            .iter()
            .filter(|(_, parent)| parent.is_none())
            .count();
        assert_eq!(roots, 1, "scene {scene}: {versions:?}");
        let mut child_of: HashMap<i64, i64> = HashMap::new();
        for (id, parent) in &versions {
            if let Some(parent) = parent {
                assert!(
                    child_of.insert(*parent, *id).is_none(),
                    "scene {scene}: version {parent} has two children"
                );
            }
        }
        let mut at = versions[0].0;
        let mut walked = 1;
        while let Some(next) = child_of.get(&at) {
            at = *next;
            walked += 1;
        }
        assert_eq!(
            at, head,
            "scene {scene}: the chain does not end at the head"
        );
        assert_eq!(
            walked,
            versions.len(),
            "scene {scene}: versions off the chain"
        );
    }

    // Where each operator points: their last acknowledged class, or one cut off after it; read through a
    // replica.
    for (client, (_, seen)) in seen.iter().enumerate() {
        let (scene, block) = (scenes[client / BLOCKS], client % BLOCKS);
        let reply = send(
            replicas[client % REPLICAS].address,
            "GET",
            &format!("/v1/scenes/{scene}/labels.png"),
            &[],
            b"",
        )
        .expect("a replica answers");
        assert_eq!(reply.status, 200);
        let labels = raster::decode_index_png(&reply.body, Path::new("labels"), 1 << 20).unwrap();
        let (x0, y0) = block_origin(block);
        let shown = labels.get(x0 + SIDE / 2, y0 + SIDE / 2);
        assert!(
            seen.possible.contains(&shown),
            "scene {scene} block {block} shows {shown} where its operator points, expected one of {:?}",
            seen.possible
        );
    }

    let acknowledged: usize = seen.iter().map(|(_, seen)| seen.acknowledged.len()).sum();
    let cut_off: usize = seen.iter().map(|(_, seen)| seen.cut_off).sum();
    let stale: usize = seen.iter().map(|(_, seen)| seen.stale).sum();
    eprintln!(
        "fleet test: {REPLICAS} replicas, {KILLS} SIGKILLs, {acknowledged} turns acknowledged, {cut_off} cut off, \
         {stale} answered stale_change and sent again, in {:?}",
        started.elapsed()
    );
    drop(replicas);
    assert!(
        started.elapsed() < Duration::from_secs(120),
        "the fleet test took {:?}",
        started.elapsed()
    );
}
