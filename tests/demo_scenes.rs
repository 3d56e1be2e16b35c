//! The committed demo scenes: determinism of the renderer against the committed bytes, and consistency of the
//! ground truth (labels only hold taxonomy ids or 255; objects.json agrees with instances.png).

use std::path::Path;

use sayso::demo::{list_demo_scenes, load_demo_scene, COMPILED_DEMO_DIR};
use sayso::render::catalogue::{demo_entry, DEMO_SCENES, DEMO_SEEDS};
use sayso::render::{render_scene, writer};
use sayso::taxonomy::{Taxonomy, UNLABELLED};

fn demo_dir() -> &'static Path {
    Path::new(COMPILED_DEMO_DIR)
}

#[test]
fn rerendering_a_demo_scene_gives_the_committed_bytes() {
    let taxonomy = Taxonomy::embedded();
    let entry = demo_entry("kitchen_breakfast").expect("catalogue has the kitchen scene");
    let scene = render_scene(&taxonomy, &entry.request()).unwrap();
    let out = tempfile::tempdir().unwrap();
    writer::write_scene(out.path(), &scene).unwrap();
    for file in [
        writer::IMAGE_FILE,
        writer::DEPTH_FILE,
        writer::LABELS_FILE,
        writer::INSTANCES_FILE,
        writer::OBJECTS_FILE,
        writer::SCENE_FILE,
    ] {
        let fresh = std::fs::read(out.path().join(file)).unwrap();
        let committed = std::fs::read(demo_dir().join(entry.name).join(file)).unwrap();
        assert!(
            fresh == committed,
            "{file} of {} differs from the committed file",
            entry.name
        );
    }
}
