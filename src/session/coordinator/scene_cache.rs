//! The live scenes a coordinator holds: a bounded cache over the correction log.
//!
//! Owns: which scenes are held decoded in memory (at most `capacity` that no request is using, and at most
//! `budget` bytes of them, the least recently used let go first) and the use clock. A scene's bytes are
//! what the caller weighed when it was put in (its decoded parts and what the corrector holds for it). A
//! scene let go is read again from the log when next asked for (`super::replica::load_scene`: the stored
//! image, inputs and superpixels, and the head's snapshot), so memory does not grow with the number or the
//! size of stored scenes and nothing is decoded up front at start. The scene just put in or asked for is
//! kept whatever its size (a scene larger than the budget is held alone), and a slot some request still
//! holds (its `Arc` is shared) is never let go: a turn finishing on it writes its new head into the one
//! copy every later request reads, never into a copy already replaced.
//! Must not: read the log, weigh a scene or decide anything about one; the coordinator loads, weighs and
//! checks slots, and tells the corrector about the scenes let go (`insert` hands them back).

use std::collections::HashMap;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex, RwLock};

use crate::correction_log::SceneKey;

use super::SceneSlot;

/// How many idle scenes a coordinator keeps decoded when its settings do not say.
pub const SCENE_CACHE_DEFAULT: usize = 32;

/// How many bytes of decoded scenes a coordinator keeps when its settings do not say: 256 MiB, an eighth
/// of the memory of a 2 GB single-board computer (our own choice). A room-sized 640x480 scene weighs about
/// 15.5 MB (19.5 MB of heap, measured by `tests/service_scene_cache.rs`), so about 16 are held; a
/// 4096x4096 scene weighs more than the budget and is held alone.
pub const SCENE_BYTES_DEFAULT: u64 = 256 << 20;

struct Entry {
    slot: Arc<Mutex<SceneSlot>>,
    /// The use clock's reading at the last use.
    used: AtomicU64,
    /// What the scene weighed when it was put in.
    bytes: u64,
}

/// Scenes held in memory, least recently used let go first.
pub(crate) struct SceneCache {
    capacity: usize,
    budget: u64,
    clock: AtomicU64,
    entries: RwLock<HashMap<SceneKey, Entry>>,
}

impl SceneCache {
    /// A cache keeping at most `capacity` idle scenes (at least one) of at most `budget` bytes in all
    /// (the scene last used is kept whatever it weighs).
    pub(crate) fn new(capacity: usize, budget: u64) -> SceneCache {
        SceneCache {
            capacity: capacity.max(1),
            budget,
            clock: AtomicU64::new(0),
            entries: RwLock::new(HashMap::new()),
        }
    }

    fn tick(&self) -> u64 {
        self.clock.fetch_add(1, Ordering::Relaxed) + 1
    }

    /// The slot of a held scene, marked as just used.
    pub(crate) fn get(&self, scene: SceneKey) -> Option<Arc<Mutex<SceneSlot>>> {
        let entries = self
            .entries
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        let entry = entries.get(&scene)?;
        entry.used.store(self.tick(), Ordering::Relaxed);
        Some(entry.slot.clone())
    }

    /// Holds `slot` (weighing `bytes`) for `scene` unless another request put one there first (then that
    /// one is answered, so everyone uses one copy), and lets the least recently used idle scenes go while
    /// more than the capacity or the byte budget is held. Answers the slot kept and the slots let go (the
    /// caller tells the corrector; no request holds them).
    pub(crate) fn insert(
        &self,
        scene: SceneKey,
        slot: SceneSlot,
        bytes: u64,
    ) -> (Arc<Mutex<SceneSlot>>, Vec<Arc<Mutex<SceneSlot>>>) {
        let mut entries = self
            .entries
            .write()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        let now = self.tick();
        let kept = entries
            .entry(scene)
            .or_insert_with(|| Entry {
                slot: Arc::new(Mutex::new(slot)),
                used: AtomicU64::new(now),
                bytes,
            })
            .slot
            .clone();
        let let_go = self.let_go_beyond(&mut entries, scene);
        (kept, let_go)
    }

    /// Weighs a held scene again (a turn prepared or solved more for it), and lets the least recently used
    /// idle scenes go if it is now over the budget. Answers the slots let go.
    pub(crate) fn reweigh(&self, scene: SceneKey, bytes: u64) -> Vec<Arc<Mutex<SceneSlot>>> {
        let mut entries = self
            .entries
            .write()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        match entries.get_mut(&scene) {
            Some(entry) => entry.bytes = bytes,
            None => return Vec::new(),
        }
        self.let_go_beyond(&mut entries, scene)
    }

    /// Removes the least recently used idle scenes other than `keep` while more than the capacity or the
    /// byte budget is held, and answers them.
    fn let_go_beyond(
        &self,
        entries: &mut HashMap<SceneKey, Entry>,
        keep: SceneKey,
    ) -> Vec<Arc<Mutex<SceneSlot>>> {
        let mut let_go = Vec::new();
        let mut held: u64 = entries.values().map(|entry| entry.bytes).sum();
        while entries.len() > self.capacity || (held > self.budget && entries.len() > 1) {
            // Only slots no request holds (the map's `Arc` is the only one; the caller's counts for `keep`).
            let idle = entries
                .iter()
                .filter(|(key, entry)| **key != keep && Arc::strong_count(&entry.slot) == 1)
                .min_by_key(|(_, entry)| entry.used.load(Ordering::Relaxed))
                .map(|(key, _)| *key);
            match idle.and_then(|key| entries.remove(&key)) {
                Some(entry) => {
                    held = held.saturating_sub(entry.bytes);
                    let_go.push(entry.slot);
                }
                // Every other scene is in use: hold more for now; a later insert lets them go.
                None => break,
            }
        }
        let_go
    }

    /// How many scenes are held decoded now.
    pub(crate) fn len(&self) -> usize {
        self.entries
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .len()
    }

    /// What the scenes held now weighed when they were put in, in bytes.
    pub(crate) fn bytes(&self) -> u64 {
        self.entries
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .values()
            .map(|entry| entry.bytes)
            .sum()
    }

    /// The keys of the scenes held now, ascending.
    pub(crate) fn keys(&self) -> Vec<SceneKey> {
        let mut keys: Vec<SceneKey> = self
            .entries
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .keys()
            .copied()
            .collect();
        keys.sort();
        keys
    }
}
