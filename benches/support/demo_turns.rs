//! The production configuration the benches run on: committed demo scenes through the real scene pipeline
//! (superpixels with the scene defaults, the built-in classifier's unaries, the embedded grammar, weights and
//! solver options), and each scene's scripted notes applied in order as service turns would be.
//!
//! Owns: loading the bench scenes, asserting their segment count is the production one, replaying their
//! notes, and rebuilding one turn's energy (the first solve a correction runs) with its warm start.
//! Must not: time anything or print; the benches do.

#![allow(dead_code)]

use std::path::PathBuf;

use sayso_core::demo::demo_directory;
use sayso_core::energy::build::{build_energy, EnergyInputs};
use sayso_core::energy::{JointEnergy, JointState};
use sayso_core::language::constraint::{Constraint, Focus};
use sayso_core::scene::SCENE_SEGMENTS;
use sayso_core::turn::solve::Correction;
use sayso_lab::evaluation::read_pointed_notes;
use sayso_perception::pipeline::{
    correct_turn, load_classifier, model_path, prepare_scene, CorrectionSettings, PreparedScene,
    SceneSource, TurnInputs,
};
use sayso_solver::joint::WarmStart;
use sayso_solver::joint_region::touched_nodes;

/// The demo scenes every production bench runs on: one of each of four room types.
pub const BENCH_SCENES: [&str; 4] = [
    "kitchen_breakfast",
    "living_room_evening",
    "bedroom_lazy_sunday",
    "office_deadline",
];

/// A production scene's superpixel count may differ from `SCENE_SEGMENTS` by this share at most (SLIC
/// aims at the target, the connectivity pass merges strays).
const SEGMENT_SLACK: f64 = 0.15;

/// One operator note: its parsed constraints and the focus sent with it.
pub struct Note {
    pub text: String,
    pub constraints: Vec<Constraint>,
    pub focus: Option<Focus>,
}

/// A prepared demo scene with its notes.
pub struct BenchScene {
    pub name: String,
    pub prepared: PreparedScene,
    pub notes: Vec<Note>,
}

impl BenchScene {
    pub fn inputs(&self) -> TurnInputs<'_> {
        TurnInputs {
            scene: &self.prepared.scene,
            unaries: &self.prepared.unaries,
            detections: &[],
        }
    }

    pub fn segment_count(&self) -> usize {
        self.prepared.scene.segment_count()
    }
}

/// The embedded settings the service and the CLI run with; with `SAYSO_WHOLE_SOLVES` set in the
/// environment, every solve of a turn is a whole one (`JointOptions::region_solve` off), to compare.
pub fn settings() -> CorrectionSettings {
    let mut settings = CorrectionSettings::embedded().expect("the embedded settings load");
    if std::env::var_os("SAYSO_WHOLE_SOLVES").is_some() {
        settings.options.region_solve = false;
    }
    settings
}

/// Loads the bench scenes through the real pipeline; panics unless each has the production segment count.
pub fn load_scenes(settings: &CorrectionSettings) -> Vec<BenchScene> {
    let directory: PathBuf = demo_directory(None);
    let classifier = load_classifier(&model_path(None), settings.grammar.taxonomy())
        .expect("the built-in classifier loads");
    BENCH_SCENES
        .iter()
        .map(|&name| {
            let source = SceneSource::Demo {
                directory: directory.clone(),
                name: Some(name.to_string()),
            };
            let prepared = prepare_scene(&source, &classifier).expect("a demo scene prepares");
            let segments = prepared.scene.segment_count() as f64;
            let target = SCENE_SEGMENTS as f64;
            assert!(
                (segments - target).abs() <= SEGMENT_SLACK * target,
                "{name}: {segments} segments, not the production {SCENE_SEGMENTS}"
            );
            let notes = read_pointed_notes(&directory.join(name))
                .expect("the scene's notes read")
                .into_iter()
                .filter_map(|note| {
                    let parse = settings.grammar.parse(&note.text, note.focus).ok()?;
                    (!parse.constraints.is_empty()).then_some(Note {
                        text: note.text,
                        constraints: parse.constraints,
                        focus: note.focus,
                    })
                })
                .collect::<Vec<_>>();
            assert!(!notes.is_empty(), "{name}: no note parses");
            BenchScene {
                name: name.to_string(),
                prepared,
                notes,
            }
        })
        .collect()
}

/// The registered version: the scene solved with no note.
pub fn registered(scene: &BenchScene, settings: &CorrectionSettings) -> Correction {
    correct_turn(&scene.inputs(), None, &[], None, false, settings).expect("the no-note solve")
}

/// One correction turn on top of `previous`, as the service runs it.
pub fn turn(
    scene: &BenchScene,
    previous: &Correction,
    note: &Note,
    settings: &CorrectionSettings,
) -> Correction {
    correct_turn(
        &scene.inputs(),
        Some(previous),
        &note.constraints,
        note.focus,
        false,
        settings,
    )
    .expect("a correction turn")
}

/// The chain of versions: the registered one, then one per note in order.
pub fn chain(scene: &BenchScene, settings: &CorrectionSettings) -> Vec<Correction> {
    let mut versions = vec![registered(scene, settings)];
    for note in &scene.notes {
        let next = turn(scene, versions.last().expect("not empty"), note, settings);
        versions.push(next);
    }
    versions
}

/// The energy a turn's correction solved first (its hypotheses, the constraints in force after it, the
/// parent's accepted hypotheses) and the warm start the parent version gives it.
pub struct TurnEnergy {
    pub energy: JointEnergy,
    pub warm: WarmStart,
    /// The fine nodes the turn's constraints change (`touched_nodes` against the energy of the constraints
    /// in force before it); `None` when the change reaches every node.
    pub seeds: Option<Vec<u32>>,
}

/// Rebuilds the energy of the turn that made `after` from `before`.
pub fn turn_energy(
    scene: &BenchScene,
    before: &Correction,
    after: &Correction,
    settings: &CorrectionSettings,
) -> TurnEnergy {
    let accepted_of = |hypotheses: &[sayso_core::hypotheses::Hypothesis]| -> Vec<bool> {
        hypotheses
            .iter()
            .map(|h| {
                before
                    .hypotheses
                    .iter()
                    .position(|p| p.id == h.id)
                    .and_then(|index| before.solution.state.hypotheses_on.get(index).copied())
                    .unwrap_or(false)
            })
            .collect()
    };
    let accepted = accepted_of(&after.hypotheses);
    // The turn's hypotheses under the given constraints.
    let energy_under = |grounded| {
        build_energy(&EnergyInputs {
            scene: &scene.prepared.scene,
            unaries: &scene.prepared.unaries,
            taxonomy: settings.grammar.taxonomy(),
            hypotheses: &after.hypotheses,
            accepted: &accepted,
            grounded,
            prior: &settings.prior,
            weights: &settings.weights,
        })
    };
    let built = energy_under(&after.grounded).expect("the turn's energy builds");
    // The same hypotheses under the constraints in force before the turn: where the turn's change lies.
    let before_energy = energy_under(&before.grounded).expect("the parent's energy builds");
    let seeds = touched_nodes(
        &before_energy.energy,
        &built.energy,
        &before.solution.state.labels,
    );
    let warm = WarmStart {
        state: JointState {
            labels: before.solution.state.labels.clone(),
            hypotheses_on: accepted,
            room: before.solution.state.room,
        },
        multipliers: Some(before.solution.multipliers.clone()),
    };
    TurnEnergy {
        energy: built.energy,
        warm,
        seeds,
    }
}

/// The value at `fraction` (0.5 for the median) of sorted samples.
pub fn percentile<T: Copy>(sorted: &[T], fraction: f64) -> T {
    let index = ((sorted.len() as f64 - 1.0) * fraction).round() as usize;
    sorted[index.min(sorted.len() - 1)]
}

/// CPU time this thread has run, in milliseconds (`/proc/thread-self/schedstat`; 0 where it cannot be
/// read): less disturbed than wall-clock time by other work on a shared machine.
pub fn thread_cpu_ms() -> f64 {
    std::fs::read_to_string("/proc/thread-self/schedstat")
        .ok()
        .and_then(|text| text.split_whitespace().next()?.parse::<f64>().ok())
        .map_or(0.0, |nanoseconds| nanoseconds / 1e6)
}

/// The machine's load averages, as `/proc/loadavg` gives them (empty where it cannot be read).
pub fn load_average() -> String {
    std::fs::read_to_string("/proc/loadavg")
        .map(|text| {
            text.split_whitespace()
                .take(3)
                .collect::<Vec<_>>()
                .join(" ")
        })
        .unwrap_or_default()
}
