//! The joint solver's energies on the production demo turns never rise: every scripted note of the bench
//! scenes, solved from nothing and from the parent version, reaches the energy the solver of the commit
//! named in `tests/fixtures/joint_energies/demo_turns.json` reached, or a lower one.
//!
//! Owns: the before/after comparison of solved energies on the demo scenes, and that a loose solve
//! tightened afterwards (`solve_joint_loose`, `tighten_bound`) is `solve_joint`'s solution.
//! Must not: time anything (benches/joint.rs does), or accept a changed energy function silently: when the
//! warm start's state no longer has the energy recorded, the energy changed and the fixture must be remade.

use crate::demo_turns;

use sayso_solver::joint::{solve_joint, solve_joint_loose, tighten_bound};

/// The fixture's solved energies are printed to six decimals.
const PRINTED: f64 = 1e-6;

#[test]
fn demo_turn_energies_are_the_same_or_lower() {
    let text = std::fs::read_to_string(crate::paths::fixture("joint_energies/demo_turns.json"))
        .expect("the fixture reads");
    let fixture: serde_json::Value = serde_json::from_str(&text).expect("the fixture parses");
    let recorded = fixture["turns"].as_array().expect("turns");
    let settings = demo_turns::settings();
    let scenes = demo_turns::load_scenes(&settings);
    let mut checked = 0;
    for scene in &scenes {
        let versions = demo_turns::chain(scene, &settings);
        for index in 0..scene.notes.len() {
            let name = format!("{}_{index}", scene.name);
            let entry = recorded
                .iter()
                .find(|entry| entry["turn"] == name.as_str())
                .unwrap_or_else(|| panic!("{name}: not in the fixture"));
            let number = |key: &str| entry[key].as_f64().expect("a number");
            let energy =
                demo_turns::turn_energy(scene, &versions[index], &versions[index + 1], &settings);
            let start = energy
                .energy
                .evaluate(&energy.warm.state)
                .expect("the warm state fits its energy");
            assert!(
                (start - number("warm_state_energy")).abs() <= 1e-9 * start.abs().max(1.0),
                "{name}: the warm start's state has energy {start}, the fixture {}: the energy changed, \
                 remake tests/fixtures/joint_energies (its README says how)",
                number("warm_state_energy")
            );
            let options = &settings.options;
            let full = solve_joint(&energy.energy, None, options).expect("solves");
            let warm = solve_joint(&energy.energy, Some(&energy.warm), options).expect("solves");
            // A turn solves loose and tightens its answer's bound once: the same solution, bit for bit.
            for (what, start, whole) in [("full", None, &full), ("warm", Some(&energy.warm), &warm)]
            {
                let mut loose = solve_joint_loose(&energy.energy, start, options).expect("solves");
                assert!(
                    loose.lower_bound <= whole.lower_bound,
                    "{name}: {what} loose bound {} above the tightened {}",
                    loose.lower_bound,
                    whole.lower_bound
                );
                tighten_bound(&energy.energy, &mut loose, options).expect("tightens");
                assert_eq!(
                    serde_json::to_string(&loose).expect("json"),
                    serde_json::to_string(whole).expect("json"),
                    "{name}: {what} loose solve tightened afterwards differs from solve_joint"
                );
            }
            for (what, solved, before) in [
                ("full", &full, number("full_before")),
                ("warm", &warm, number("warm_before")),
            ] {
                assert!(
                    solved.energy <= before + PRINTED,
                    "{name}: {what} solve energy {} above the recorded {before}",
                    solved.energy
                );
                assert!(
                    solved.lower_bound <= solved.energy,
                    "{name}: bound above the energy"
                );
                let evaluated = energy
                    .energy
                    .evaluate(&solved.state)
                    .expect("a valid state");
                assert!(
                    (evaluated - solved.energy).abs() <= 1e-6,
                    "{name}: energy misreported"
                );
            }
            checked += 1;
        }
    }
    assert_eq!(checked, recorded.len(), "every recorded turn is checked");
}
