//! The live scenes a coordinator holds: a bounded cache over the correction log.
//!
//! Owns: which scenes are held decoded in memory (at most `capacity` that no request is using, the least
//! recently used let go first) and the use clock. A scene let go is read again from the log when next asked
//! for (`super::replica::load_scene`: the stored image, inputs and superpixels, and the head's snapshot),
//! so memory does not grow with the number of stored scenes and nothing is decoded up front at start.
//! A slot some request still holds (its `Arc` is shared) is never let go: a turn finishing on it writes
//! its new head into the one copy every later request reads, never into a copy already replaced.
//! Must not: read the log or decide anything about a scene; the coordinator loads and checks slots.

use std::collections::HashMap;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex, RwLock};

use crate::correction_log::SceneKey;

use super::SceneSlot;

/// How many idle scenes a coordinator keeps decoded when its settings do not say.
pub const SCENE_CACHE_DEFAULT: usize = 32;

struct Entry {
    slot: Arc<Mutex<SceneSlot>>,
    /// The use clock's reading at the last use.
    used: AtomicU64,
}

/// Scenes held in memory, least recently used let go first.
pub(crate) struct SceneCache {
    capacity: usize,
    clock: AtomicU64,
    entries: RwLock<HashMap<SceneKey, Entry>>,
}

impl SceneCache {
    /// A cache keeping at most `capacity` idle scenes (at least one).
    pub(crate) fn new(capacity: usize) -> SceneCache {
        SceneCache {
            capacity: capacity.max(1),
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

    /// Holds `slot` for `scene` unless another request put one there first (then that one is answered, so
    /// everyone uses one copy), and lets the least recently used idle scenes go beyond the capacity.
    pub(crate) fn insert(&self, scene: SceneKey, slot: SceneSlot) -> Arc<Mutex<SceneSlot>> {
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
            })
            .slot
            .clone();
        while entries.len() > self.capacity {
            // Only slots no request holds (the map's `Arc` is the only one; `kept` counts for this one).
            let idle = entries
                .iter()
                .filter(|(key, entry)| **key != scene && Arc::strong_count(&entry.slot) == 1)
                .min_by_key(|(_, entry)| entry.used.load(Ordering::Relaxed))
                .map(|(key, _)| *key);
            match idle {
                Some(key) => {
                    entries.remove(&key);
                }
                // Every other scene is in use: hold one more for now; the next insert lets it go.
                None => break,
            }
        }
        kept
    }

    /// How many scenes are held decoded now.
    pub(crate) fn len(&self) -> usize {
        self.entries
            .read()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .len()
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
