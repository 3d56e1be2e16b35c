//! Diagnostic: dumps the joint energies of the bench's demo turns (`dump DIR`), and solves dumped energies
//! full and warm (`solve DIR REPEATS`), printing energies, gaps and median times: a small program to run under
//! `valgrind --tool=callgrind` or `perf` without the scene pipeline in the profile. `turn - REPEATS` runs
//! every demo turn whole, as the service does; under callgrind, `--collect-atstart=no
//! --toggle-collect='*profiled_turn*'` counts the timed turns alone (not the chain of versions they start
//! from, which `correct_turn` also builds). `digest` prints every demo version's energy,
//! bound, gap and a hash of its JSON, to compare the answers of two builds.
//!
//! Owns: nothing the crate uses.
//! Must not: tune anything; it prints figures for people to read.

#[path = "../benches/support/demo_turns.rs"]
mod demo_turns;

use std::time::Instant;

use sayso_core::energy::JointEnergy;
use sayso_solver::joint::{solve_joint, JointOptions, WarmStart};

/// One demo turn, kept out of line so that `valgrind --tool=callgrind --collect-atstart=no
/// --toggle-collect='*profiled_turn*'` counts the timed turns alone, not the chain they start from.
#[inline(never)]
fn profiled_turn(
    scene: &demo_turns::BenchScene,
    previous: &sayso_core::turn::solve::Correction,
    note: &demo_turns::Note,
    settings: &sayso_perception::pipeline::CorrectionSettings,
) -> sayso_core::turn::solve::Correction {
    demo_turns::turn(scene, previous, note, settings)
}

fn main() {
    let arguments: Vec<String> = std::env::args().collect();
    let mode = arguments.get(1).map(String::as_str).unwrap_or("");
    let directory =
        std::path::PathBuf::from(arguments.get(2).cloned().unwrap_or("/tmp/joint".into()));
    match mode {
        "dump" => {
            let settings = demo_turns::settings();
            let scenes = demo_turns::load_scenes(&settings);
            std::fs::create_dir_all(&directory).expect("directory");
            for scene in &scenes {
                let versions = demo_turns::chain(scene, &settings);
                for index in 0..scene.notes.len() {
                    let energy = demo_turns::turn_energy(
                        scene,
                        &versions[index],
                        &versions[index + 1],
                        &settings,
                    );
                    let path = directory.join(format!("{}_{index}.json", scene.name));
                    let value = serde_json::json!({"energy": energy.energy, "warm": energy.warm});
                    std::fs::write(&path, serde_json::to_vec(&value).expect("json"))
                        .expect("write");
                    println!("{}", path.display());
                }
            }
        }
        "solve" => {
            let repeats: usize = arguments.get(3).and_then(|r| r.parse().ok()).unwrap_or(1);
            let which = arguments.get(4).cloned().unwrap_or_else(|| "both".into());
            let mut paths: Vec<_> = std::fs::read_dir(&directory)
                .expect("directory")
                .map(|entry| entry.expect("entry").path())
                .collect();
            paths.sort();
            let options = JointOptions::default();
            let (mut full_times, mut warm_times) = (Vec::new(), Vec::new());
            let (mut full_total, mut warm_total) = (0.0, 0.0);
            for path in paths {
                let value: serde_json::Value =
                    serde_json::from_slice(&std::fs::read(&path).expect("read")).expect("json");
                let energy: JointEnergy =
                    serde_json::from_value(value["energy"].clone()).expect("energy");
                let warm: WarmStart = serde_json::from_value(value["warm"].clone()).expect("warm");
                let mut line = format!("{}", path.file_name().unwrap().to_string_lossy());
                for _ in 0..repeats {
                    if which != "warm" {
                        let start = Instant::now();
                        let full = solve_joint(&energy, None, &options).expect("solves");
                        full_times.push(start.elapsed().as_secs_f64() * 1e3);
                        line = format!(
                            "{} full {:.6} gap {:.4} it {}",
                            path.file_name().unwrap().to_string_lossy(),
                            full.energy,
                            full.relative_gap,
                            full.iterations
                        );
                        full_total += full.energy / repeats as f64;
                    }
                    if which != "full" {
                        let start = Instant::now();
                        let solved = solve_joint(&energy, Some(&warm), &options).expect("solves");
                        warm_times.push(start.elapsed().as_secs_f64() * 1e3);
                        line = format!(
                            "{line} warm {:.6} gap {:.4} it {}",
                            solved.energy, solved.relative_gap, solved.iterations
                        );
                        warm_total += solved.energy / repeats as f64;
                    }
                }
                println!("{line}");
            }
            full_times.sort_by(f64::total_cmp);
            warm_times.sort_by(f64::total_cmp);
            let median = |v: &[f64]| {
                if v.is_empty() {
                    f64::NAN
                } else {
                    v[v.len() / 2]
                }
            };
            println!(
                "energy sums full {full_total:.6} warm {warm_total:.6}; median ms full {:.2} warm {:.2}",
                median(&full_times),
                median(&warm_times)
            );
        }
        "turn" => {
            // Every demo turn as the service runs it (`pipeline::correct_turn`), REPEATS times each: for
            // `valgrind --tool=callgrind --toggle-collect='*correct_turn*'`, which counts the turns alone.
            let repeats: usize = arguments.get(3).and_then(|r| r.parse().ok()).unwrap_or(1);
            let settings = demo_turns::settings();
            let scenes = demo_turns::load_scenes(&settings);
            let mut times = Vec::new();
            for scene in &scenes {
                let versions = demo_turns::chain(scene, &settings);
                for (index, note) in scene.notes.iter().enumerate() {
                    for _ in 0..repeats {
                        let start = Instant::now();
                        let solved = profiled_turn(scene, &versions[index], note, &settings);
                        times.push(start.elapsed().as_secs_f64() * 1e3);
                        std::hint::black_box(solved);
                    }
                }
            }
            times.sort_by(f64::total_cmp);
            println!("turns {}, median ms {:.2}", times.len(), times[times.len() / 2]);
        }
        "digest" => {
            // Every version of every demo chain: its energy, bound and gap, and a hash of the whole
            // correction as JSON (graph, changes, unmet, solution), to compare two builds' answers.
            let settings = demo_turns::settings();
            let scenes = demo_turns::load_scenes(&settings);
            for scene in &scenes {
                let versions = demo_turns::chain(scene, &settings);
                for (index, version) in versions.iter().enumerate() {
                    let text = serde_json::to_string(version).expect("json");
                    // FNV-1a, 64 bits.
                    let hash = text.bytes().fold(0xcbf2_9ce4_8422_2325u64, |hash, byte| {
                        (hash ^ byte as u64).wrapping_mul(0x0100_0000_01b3)
                    });
                    // The same without the multipliers and the iteration count, which a build may
                    // reach differently with the same answer.
                    let mut answer = version.clone();
                    answer.solution.multipliers = Default::default();
                    answer.solution.iterations = 0;
                    let text = serde_json::to_string(&answer).expect("json");
                    if let Some(directory) = std::env::var_os("SAYSO_DIGEST_DIR") {
                        let path = std::path::Path::new(&directory)
                            .join(format!("{}_{index}.json", scene.name));
                        std::fs::write(path, &text).expect("write");
                    }
                    let answer_hash = text.bytes().fold(0xcbf2_9ce4_8422_2325u64, |hash, byte| {
                        (hash ^ byte as u64).wrapping_mul(0x0100_0000_01b3)
                    });
                    println!(
                        "{} {index}: energy {:.6} bound {:.6} gap {:.4} json {hash:016x} answer {answer_hash:016x}",
                        scene.name,
                        version.solution.energy,
                        version.solution.lower_bound,
                        version.solution.relative_gap
                    );
                }
            }
        }
        "fixture" => {
            // One JSON line per dumped turn: the energy of its warm start's state (which identifies the
            // energy, whatever solves it) and the full and warm solves' energies.
            let mut paths: Vec<_> = std::fs::read_dir(&directory)
                .expect("directory")
                .map(|entry| entry.expect("entry").path())
                .collect();
            paths.sort();
            let options = JointOptions::default();
            for path in paths {
                let value: serde_json::Value =
                    serde_json::from_slice(&std::fs::read(&path).expect("read")).expect("json");
                let energy: JointEnergy =
                    serde_json::from_value(value["energy"].clone()).expect("energy");
                let warm: WarmStart = serde_json::from_value(value["warm"].clone()).expect("warm");
                let full = solve_joint(&energy, None, &options).expect("solves");
                let solved = solve_joint(&energy, Some(&warm), &options).expect("solves");
                let line = serde_json::json!({
                    "turn": path.file_stem().map(|s| s.to_string_lossy().to_string()),
                    "warm_state_energy": energy.evaluate(&warm.state),
                    "full": full.energy,
                    "warm": solved.energy,
                });
                println!("{line}");
            }
        }
        _ => eprintln!(
            "usage: joint_profile dump DIR | solve DIR REPEATS [full|warm|both] | turn - REPEATS | digest | \
             fixture DIR"
        ),
    }
}
