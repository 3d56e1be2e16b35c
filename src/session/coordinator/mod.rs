//! The coordinator: the session's working memory over the correction log, and the only caller of the
//! `Corrector`.
//!
//! Owns: the in-memory scenes and conversations (on a log this process owns, restored at start; on a log
//! shared by replicas, a cache read on demand and checked at every use: `replica`), the per-scene and
//! per-conversation locks that keep updates from being lost, the rule that every answer is given only after
//! its turn is committed, and the conversion between internal values and the API's shapes (`crate::wire`).
//! Must not: know about HTTP, sockets or tokio; every method is synchronous (the service's handlers call
//! it on a blocking thread, the CLI directly) and fails with a `SessionError`, which carries no status.
//!
//! Lock order, always: a conversation, then its scene, then the log.

mod access;
mod commands;
mod convert;
mod register;
mod replica;
mod scene_cache;
mod turns;
mod versions;

use std::collections::HashMap;
use std::path::PathBuf;
use std::sync::{Arc, Mutex, MutexGuard, RwLock};

use crate::correction_log::{
    BackgroundCheckpoints, ConversationKey, CorrectionLog, GroupCommit, LogError, NewTurn,
    PostgresLog, SceneKey, SqliteLog, StateRecord, TurnMark, TurnWritten, VersionKey,
};
use crate::language::constraint::Constraint;
use crate::raster;
use crate::turn::{Answered, OpenQuestion};

use super::corrector::{Corrector, PastTurn, ReportedChange, SceneInput, SceneState, SceneSummary};
use super::counters::TurnCounters;
use super::error::SessionError;
use crate::wire::{ConversationOut, HealthOut, SceneGraphOut};

pub use access::{Caller, PageRequest, Role, PAGE_LIMIT_DEFAULT, PAGE_LIMIT_MAX};
pub use register::SceneUpload;
pub use scene_cache::{SCENE_BYTES_DEFAULT, SCENE_CACHE_DEFAULT};
pub use turns::check_utterance_text;

/// How often the background thread checkpoints the log's WAL.
const CHECKPOINT_INTERVAL: std::time::Duration = std::time::Duration::from_millis(100);

/// The longest utterance accepted, in characters.
pub const UTTERANCE_CHARACTER_LIMIT: usize = 2000;

pub(crate) struct SceneSlot {
    name: String,
    input: Arc<SceneInput>,
    head: VersionKey,
    state: SceneState,
}

impl SceneSlot {
    /// The bytes the slot's parts hold on the heap (pixels, maps, scores, engine state), counted from their
    /// lengths; the small fixed parts are left out.
    fn bytes(&self) -> u64 {
        fn index(image: &Option<raster::IndexImage>) -> usize {
            image.as_ref().map_or(0, |image| image.values.len() * 2)
        }
        let input = &self.input;
        let parts = input.name.len()
            + input.image.pixels.len() * 3
            + input
                .depth
                .as_ref()
                .map_or(0, |depth| depth.millimetres.len() * 2)
            + input.scores_npy.as_ref().map_or(0, Vec::len)
            + index(&input.label_map)
            + index(&input.superpixels)
            + input.prepared.as_ref().map_or(0, |form| form.len())
            + input.detections.len() * std::mem::size_of::<crate::corrector::Detection>()
            + input
                .detections
                .iter()
                .filter_map(|detection| detection.mask.as_ref())
                .map(|mask| mask.runs.len() * 8)
                .sum::<usize>()
            + self.name.len()
            + self.state.labels.values.len() * 2
            + self.state.engine_state.len()
            + self.state.summary.objects.len()
                * std::mem::size_of::<super::corrector::ObjectSummary>();
        parts as u64
    }
}

pub(crate) struct PendingSlot {
    base: VersionKey,
    state: SceneState,
    reason: String,
    changes: Vec<ReportedChange>,
    utterance: String,
    constraints: Vec<Constraint>,
    focus: Option<crate::language::constraint::Focus>,
}

pub(crate) struct ConversationSlot {
    key: ConversationKey,
    scene: SceneKey,
    operator: String,
    opened_at: String,
    history: Vec<PastTurn>,
    pending: Option<PendingSlot>,
    applied: Vec<VersionKey>,
    redo: Vec<VersionKey>,
    /// The question the conversation waits on (restored from the last turn when it asked one).
    question: Option<OpenQuestion>,
    /// The version the last answer to a question made, and that answer, for "no, the other one".
    answered: Option<(VersionKey, Answered)>,
    /// The turns this copy holds (on a shared log, a copy whose mark differs from the log's is read again).
    mark: TurnMark,
}

/// The service's state; share it behind an `Arc`.
pub struct Coordinator {
    corrector: Arc<dyn Corrector>,
    log: Mutex<CorrectionLog>,
    /// Turns from many requests share one commit (and one fsync) through this queue.
    group: GatedCommit,
    /// Copies the WAL into the database file off the commit path (stopped when the coordinator drops).
    _checkpoints: Option<BackgroundCheckpoints>,
    /// Whether other replicas write to the log too: then every slot is a cache checked at each use
    /// (`replica`).
    shared: bool,
    /// The live scenes, a bounded cache over the log (`scene_cache`).
    scenes: scene_cache::SceneCache,
    conversations: RwLock<HashMap<ConversationKey, Arc<Mutex<ConversationSlot>>>>,
    counters: Arc<TurnCounters>,
    pixel_limit: u64,
    demo_dir: PathBuf,
    /// A user per-pixel model that scores scenes registered without scores or a label map.
    user_model: Option<Arc<crate::unaries::byo_user_model::UserModel>>,
    /// Held for the coordinator's life on a SQLite log: one process per file (a locked file beside it).
    _exclusive: Option<std::fs::File>,
}

/// Settings the coordinator needs.
#[derive(Clone, Debug)]
pub struct CoordinatorSettings {
    pub log_path: PathBuf,
    pub pixel_limit: u64,
    pub demo_dir: PathBuf,
}

/// What can go wrong opening the coordinator.
#[derive(Debug, thiserror::Error)]
pub enum OpenError {
    #[error(transparent)]
    Log(#[from] LogError),
    #[error("stored scene {scene} cannot be restored: {message}")]
    Restore { scene: i64, message: String },
    #[error(
        "the correction log {shown} is in use by another sayso process (a running service?); stop it \
         or send the work through its HTTP API"
    )]
    InUse { shown: String },
    #[error("cannot create the lock file {path}: {source}")]
    LockFile {
        path: PathBuf,
        source: std::io::Error,
    },
}

fn lock<T>(mutex: &Mutex<T>) -> MutexGuard<'_, T> {
    // A panic while holding a lock leaves data that was only being read or replaced whole; keep serving.
    mutex
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

pub(crate) fn encode_state(state: &SceneState) -> Result<StateRecord, SessionError> {
    Ok(StateRecord {
        labels_png: raster::encode_index_png(&state.labels).map_err(SessionError::internal)?,
        summary_json: serde_json::to_string(&state.summary).map_err(SessionError::internal)?,
        engine_state: state.engine_state.clone(),
        model: state.summary.model.clone(),
    })
}

pub(crate) fn decode_state(record: &StateRecord) -> Result<SceneState, String> {
    let labels = raster::decode_index_png(
        &record.labels_png,
        std::path::Path::new("stored label map"),
        u64::MAX,
    )
    .map_err(|error| error.to_string())?;
    let summary: SceneSummary =
        serde_json::from_str(&record.summary_json).map_err(|error| error.to_string())?;
    Ok(SceneState {
        labels,
        summary,
        engine_state: record.engine_state.clone(),
    })
}

/// The group commit behind one check: a turn whose request was answered "abandoned" is not written
/// (`super::abandon`). Outside a request (the CLI, tests) every turn is written.
pub(crate) struct GatedCommit(GroupCommit);

impl GatedCommit {
    /// As `GroupCommit::commit`, or `LogError::Withdrawn` (nothing written) for an abandoned request.
    pub(crate) fn commit(
        &self,
        log: &Mutex<CorrectionLog>,
        turn: &NewTurn<'_>,
        stacks: Option<(&[VersionKey], &[VersionKey])>,
    ) -> Result<TurnWritten, LogError> {
        if !super::abandon::may_commit() {
            return Err(LogError::Withdrawn);
        }
        self.0.commit(log, turn, stacks)
    }
}

impl Coordinator {
    /// Runs `work` holding the conversation's lock and then its scene's (the lock order above).
    fn with_turn_locks<T>(
        &self,
        conversation: ConversationKey,
        work: impl FnOnce(&mut ConversationSlot, &mut SceneSlot) -> Result<T, SessionError>,
    ) -> Result<T, SessionError> {
        let conversation_slot = self.conversation_slot(conversation)?;
        let mut conversation_state = lock(&conversation_slot);
        let scene_key = conversation_state.scene;
        let scene_slot = self.scene_slot(scene_key)?;
        let mut scene = lock(&scene_slot);
        let result = work(&mut conversation_state, &mut scene);
        self.reweigh_scene(scene_key, &scene);
        result
    }

    /// Commits one turn of a conversation, then moves the conversation's mark past it and counts it.
    fn commit_turn(
        &self,
        mark: &mut TurnMark,
        turn: &NewTurn<'_>,
        stacks: Option<(&[VersionKey], &[VersionKey])>,
    ) -> Result<TurnWritten, SessionError> {
        let (turn_key, new_version) = self
            .group
            .commit(&self.log, turn, stacks)
            .map_err(log_error)?;
        *mark = mark.after(turn_key);
        self.counters.record_turn(new_version.is_some());
        Ok((turn_key, new_version))
    }
}

/// The answer to work whose request was abandoned before it could be written (the caller has by then
/// been told so by the time limit).
pub(crate) fn withdrawn() -> SessionError {
    SessionError::withdrawn()
}

fn log_error(error: LogError) -> SessionError {
    match error {
        LogError::Withdrawn => withdrawn(),
        LogError::Stale { .. } => SessionError::conflict(
            "stale_change",
            "the scene changed while this request was being worked out; send it again",
        ),
        other => SessionError::internal(other),
    }
}

impl Coordinator {
    /// Opens the log and restores every scene and conversation in it.
    pub fn open(
        corrector: Arc<dyn Corrector>,
        settings: &CoordinatorSettings,
    ) -> Result<Coordinator, OpenError> {
        let lock_path = settings.log_path.with_extension("lock");
        if let Some(parent) = lock_path.parent() {
            let _ = std::fs::create_dir_all(parent);
        }
        let exclusive = std::fs::OpenOptions::new()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&lock_path)
            .map_err(|source| OpenError::LockFile {
                path: lock_path.clone(),
                source,
            })?;
        if exclusive.try_lock().is_err() {
            return Err(OpenError::InUse {
                shown: settings.log_path.display().to_string(),
            });
        }
        let log = SqliteLog::open(&settings.log_path)?;
        // Checkpoints run on their own thread so no commit waits for one; if the thread cannot start,
        // SQLite's automatic checkpoint stays on.
        let checkpoints =
            BackgroundCheckpoints::start(&settings.log_path, CHECKPOINT_INTERVAL).ok();
        if checkpoints.is_some() {
            log.set_automatic_checkpoints(false)?;
        }
        Coordinator::restore(
            corrector,
            CorrectionLog::Sqlite(log),
            checkpoints,
            Some(exclusive),
            settings,
        )
    }

    /// Opens the coordinator on a PostgreSQL log (`url`, already at this build's schema) as one replica of
    /// any number on the same database: nothing is read up front; scenes and conversations are read from
    /// the log when first asked for and checked against it at every use (`replica`).
    /// `settings.log_path` is not used.
    pub fn open_postgres(
        corrector: Arc<dyn Corrector>,
        url: &str,
        settings: &CoordinatorSettings,
    ) -> Result<Coordinator, OpenError> {
        let log = PostgresLog::connect(url)?;
        Coordinator::restore(
            corrector,
            CorrectionLog::Postgres(log),
            None,
            None,
            settings,
        )
    }

    /// Restores every conversation from an opened log this process owns; on a shared log, none (each is
    /// read when first asked for). Scenes are never read up front: each is read when first asked for
    /// and held in a bounded cache (`scene_cache`).
    fn restore(
        corrector: Arc<dyn Corrector>,
        log: CorrectionLog,
        checkpoints: Option<BackgroundCheckpoints>,
        exclusive: Option<std::fs::File>,
        settings: &CoordinatorSettings,
    ) -> Result<Coordinator, OpenError> {
        let shared = log.is_shared();
        let mut conversations = HashMap::new();
        if !shared {
            for row in log.conversations()? {
                let key = row.key;
                let slot = replica::load_conversation(&log, row)?;
                conversations.insert(key, Arc::new(Mutex::new(slot)));
            }
        }
        Ok(Coordinator {
            corrector,
            log: Mutex::new(log),
            group: GatedCommit(GroupCommit::new()),
            _checkpoints: checkpoints,
            shared,
            scenes: scene_cache::SceneCache::new(SCENE_CACHE_DEFAULT, SCENE_BYTES_DEFAULT),
            conversations: RwLock::new(conversations),
            counters: Arc::new(TurnCounters::default()),
            pixel_limit: settings.pixel_limit,
            demo_dir: settings.demo_dir.clone(),
            user_model: None,
            _exclusive: exclusive,
        })
    }

    /// Scores every scene registered without scores or a label map with a user per-pixel model (its
    /// scores are kept with the scene, as if the caller had sent them).
    pub fn with_user_model(
        mut self,
        model: Arc<crate::unaries::byo_user_model::UserModel>,
    ) -> Coordinator {
        self.user_model = Some(model);
        self
    }

    /// Holds at most `capacity` idle scenes decoded in memory (default `SCENE_CACHE_DEFAULT`) of at most
    /// `bytes` in all (default `SCENE_BYTES_DEFAULT`; the scene last used is held whatever it weighs); the
    /// others are read from the log again when asked for.
    pub fn with_scene_cache(mut self, capacity: usize, bytes: u64) -> Coordinator {
        self.scenes = scene_cache::SceneCache::new(capacity, bytes);
        self
    }

    /// How many scenes are held decoded in memory now.
    pub fn scenes_held(&self) -> usize {
        self.scenes.len()
    }

    /// What the scenes held now weighed when they were put in (`SceneSlot::bytes` and what the corrector
    /// held for each), in bytes.
    pub fn scene_bytes_held(&self) -> u64 {
        self.scenes.bytes()
    }

    /// Puts a scene in the cache, weighed with what the corrector holds for it, and tells the corrector
    /// about the scenes the cache let go for it. Answers the slot every request uses.
    fn hold_scene(&self, scene: SceneKey, slot: SceneSlot) -> Arc<Mutex<SceneSlot>> {
        let bytes = self.weigh(&slot);
        let (kept, let_go) = self.scenes.insert(scene, slot, bytes);
        self.release_scenes(let_go);
        kept
    }

    /// What a held scene weighs: its slot and what the corrector holds for it.
    fn weigh(&self, slot: &SceneSlot) -> u64 {
        slot.bytes() + self.corrector.held_bytes(&slot.input, &slot.state)
    }

    /// Weighs a held scene again after work on it (the corrector may have prepared or solved more for it;
    /// a scene read back from the log weighs only its slot until then), letting others go if need be.
    fn reweigh_scene(&self, scene: SceneKey, slot: &SceneSlot) {
        let let_go = self.scenes.reweigh(scene, self.weigh(slot));
        self.release_scenes(let_go);
    }

    /// Tells the corrector about scenes the cache let go (no request holds them).
    fn release_scenes(&self, let_go: Vec<Arc<Mutex<SceneSlot>>>) {
        for slot in let_go {
            let slot = lock(&slot);
            self.corrector.release(&slot.input, &slot.state);
        }
    }

    /// What the coordinator counts as it works (turns, corrections, solver gaps).
    pub fn counters(&self) -> &Arc<TurnCounters> {
        &self.counters
    }

    /// The corrector in use.
    pub fn corrector(&self) -> &Arc<dyn Corrector> {
        &self.corrector
    }

    /// Liveness and counts.
    pub fn health(&self) -> Result<HealthOut, SessionError> {
        let log_schema = lock(&self.log).schema_version().map_err(log_error)?;
        Ok(HealthOut {
            status: "ok".into(),
            version: env!("CARGO_PKG_VERSION").into(),
            log_schema,
            scenes: self.scene_ids().len(),
            conversations: self.conversation_ids().len(),
        })
    }

    /// The current scene graph.
    pub fn scene_graph(&self, scene: SceneKey) -> Result<SceneGraphOut, SessionError> {
        let slot = self.scene_slot(scene)?;
        let slot = lock(&slot);
        Ok(convert::scene_graph(
            scene,
            &slot,
            self.corrector.taxonomy(),
        ))
    }

    /// The current label map as a palette PNG: pixel value = class id (255 unlabelled), shown in the
    /// class's colour (`Taxonomy::label_palette`), so it reads as class ids and looks like the classes.
    pub fn label_map_png(&self, scene: SceneKey) -> Result<Vec<u8>, SessionError> {
        let slot = self.scene_slot(scene)?;
        let labels = lock(&slot).state.labels.clone();
        raster::encode_palette_png(&labels, &self.corrector.taxonomy().label_palette())
            .map_err(SessionError::internal)
    }

    /// The current overlay as an RGB PNG, with what the current version's note changed ringed
    /// (`Corrector::overlay`).
    pub fn overlay_png(&self, scene: SceneKey) -> Result<Vec<u8>, SessionError> {
        let slot = self.scene_slot(scene)?;
        let head = {
            let slot = lock(&slot);
            // Drawing a large scene takes long: the request's time limit may grow with its image.
            crate::abandon::report_pixels(slot.input.image.pixels.len() as u64);
            slot.head
        };
        let parent = self.parent_state(scene, head)?;
        let overlay = {
            let slot = lock(&slot);
            self.corrector
                .overlay(&slot.input, &slot.state, parent.as_ref())
        };
        raster::encode_rgb_png(&overlay).map_err(SessionError::internal)
    }

    /// Opens a conversation on a scene for an operator.
    pub fn open_conversation(
        &self,
        scene: SceneKey,
        operator: &str,
    ) -> Result<ConversationOut, SessionError> {
        self.scene_slot(scene)?;
        let row = lock(&self.log)
            .open_conversation(scene, operator)
            .map_err(log_error)?;
        let out = ConversationOut {
            conversation_id: row.key.0,
            scene_id: scene.0,
            operator: row.operator.clone(),
            opened_at: row.opened_at.clone(),
        };
        self.conversations
            .write()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
            .insert(
                row.key,
                Arc::new(Mutex::new(ConversationSlot {
                    key: row.key,
                    scene,
                    operator: row.operator,
                    opened_at: row.opened_at,
                    history: Vec::new(),
                    pending: None,
                    applied: Vec::new(),
                    redo: Vec::new(),
                    question: None,
                    answered: None,
                    mark: TurnMark::default(),
                })),
            );
        Ok(out)
    }

    /// Runs `f` with the log locked (for export and checks).
    pub fn with_log<T>(&self, f: impl FnOnce(&CorrectionLog) -> T) -> T {
        f(&lock(&self.log))
    }
}
