//! Checks `sayso_core::slic` against scikit-image's `slic` on the committed reference images.
//!
//! Owns: the comparison of our superpixels with scikit-image 0.26 `skimage.segmentation.slic`
//! (n_segments=400, compactness=10, max_num_iter=10, sigma=0, convert2lab, enforce_connectivity,
//! start_label=0), whose segment counts, label maps and metric values `tests/fixtures/slic/make_slic.py`
//! wrote to `tests/fixtures/slic/`: two scikit-image sample images (astronaut, coffee), a synthetic room with
//! an exact region map, and every demo scene under `demo_scenes/` (ground-truth regions = distinct
//! (class, instance) pairs of its labels.png and instances.png).
//! Must not: regenerate fixtures or time anything (timing lives in benches/slic.rs).
//!
//! Checks: our segment count is within 15% of the 400 requested; our boundary recall at 2 pixels (Martin et
//! al. 2004 style, see `sayso_core::slic::metrics`) is at most 0.02 below scikit-image's on every image with a
//! ground truth; our Rust metrics reproduce the script's numpy figures on scikit-image's own segments. The
//! under-segmentation error (Neubert and Protzel 2012 form) of both is printed beside the recall.

mod support;

use std::collections::HashMap;
use std::path::PathBuf;

use sayso_core::raster::{read_index_png, read_rgb_png, DEFAULT_PIXEL_LIMIT};
use sayso_core::slic::connectivity::is_each_segment_connected;
use sayso_core::slic::metrics::{boundary_recall, undersegmentation_error};
use sayso_core::slic::{slic, SlicParams};
use serde::Deserialize;

#[derive(Deserialize)]
struct Reference {
    source: String,
    boundary_tolerance_pixels: u32,
    images: Vec<ReferenceImage>,
}

#[derive(Deserialize)]
struct ReferenceImage {
    name: String,
    image: String,
    skimage_labels: Option<String>,
    skimage_segment_count: u32,
    truth: Option<String>,
    /// When present, a ground-truth region is a (class in `truth`, instance in this map) pair.
    truth_instances: Option<String>,
    skimage_boundary_recall: Option<f64>,
    skimage_undersegmentation_error: Option<f64>,
}

/// Paths in the reference are relative to the repository root.
fn repository_path(relative: &str) -> PathBuf {
    support::workspace_file(relative)
}

fn reference() -> Reference {
    let text = std::fs::read_to_string(repository_path("tests/fixtures/slic/reference.json"))
        .expect("the committed SLIC reference exists");
    serde_json::from_str(&text).expect("the committed SLIC reference parses")
}

fn labels_of(file: &str) -> Vec<u32> {
    let map = read_index_png(&repository_path(file), DEFAULT_PIXEL_LIMIT)
        .unwrap_or_else(|error| panic!("{error}"));
    map.values.into_iter().map(u32::from).collect()
}

/// Ground-truth regions: the truth map itself, or one region per (class, instance) pair.
fn truth_regions(truth: &str, instances: Option<&str>) -> Vec<u32> {
    let classes = labels_of(truth);
    let Some(instances) = instances else {
        return classes;
    };
    let mut region_of_pair = HashMap::new();
    classes
        .iter()
        .zip(labels_of(instances))
        .map(|(&class, instance)| {
            let next = region_of_pair.len() as u32;
            *region_of_pair.entry((class, instance)).or_insert(next)
        })
        .collect()
}

#[test]
fn our_superpixels_match_scikit_image_on_every_reference_image() {
    let reference = reference();
    assert!(reference.source.contains("slic"));
    assert_eq!(reference.boundary_tolerance_pixels, 2);
    let with_truth = reference
        .images
        .iter()
        .filter(|image| image.truth.is_some())
        .count();
    assert!(
        reference.images.len() >= 3 && with_truth >= 1,
        "too few images"
    );
    // The demo scenes (ground truth from labels.png and instances.png) are part of the reference.
    let demo_scenes = reference
        .images
        .iter()
        .filter(|image| image.truth_instances.is_some())
        .count();
    assert!(
        demo_scenes >= 16,
        "only {demo_scenes} demo scenes in the reference"
    );
    let params = SlicParams::default();
    let mut metric_cross_checks = 0;
    for entry in &reference.images {
        let image = read_rgb_png(&repository_path(&entry.image), DEFAULT_PIXEL_LIMIT)
            .unwrap_or_else(|error| panic!("{error}"));
        let (width, height) = (image.width as usize, image.height as usize);
        let ours = slic(&image, &params).unwrap();
        assert!(is_each_segment_connected(
            &ours.labels,
            width,
            height,
            ours.segment_count
        ));
        let requested = params.target_segments() as f64;
        let count = ours.segment_count as f64;
        assert!(
            (count - requested).abs() <= 0.15 * requested,
            "{}: {count} segments, requested {requested}",
            entry.name
        );
        let skimage_labels = entry.skimage_labels.as_deref().map(labels_of);
        if let Some(skimage_labels) = &skimage_labels {
            let skimage_count = skimage_labels.iter().max().map_or(0, |&max| max + 1);
            assert_eq!(skimage_count, entry.skimage_segment_count, "{}", entry.name);
        }
        let skimage_count = entry.skimage_segment_count;
        let Some(truth_file) = &entry.truth else {
            println!(
                "{}: ours {count} segments, scikit-image {skimage_count}",
                entry.name
            );
            continue;
        };
        let truth = truth_regions(truth_file, entry.truth_instances.as_deref());
        let tolerance = reference.boundary_tolerance_pixels;
        let our_recall = boundary_recall(&ours.labels, &truth, width, height, tolerance).unwrap();
        let our_error = undersegmentation_error(&ours.labels, &truth).unwrap();
        let script_recall = entry.skimage_boundary_recall.expect("recall beside truth");
        let script_error = entry
            .skimage_undersegmentation_error
            .expect("error beside truth");
        // Our metric code on scikit-image's segments must reproduce the script's numpy figures.
        if let Some(skimage_labels) = &skimage_labels {
            let their_recall =
                boundary_recall(skimage_labels, &truth, width, height, tolerance).unwrap();
            let their_error = undersegmentation_error(skimage_labels, &truth).unwrap();
            assert!(
                (their_recall - script_recall).abs() < 1e-9,
                "{}",
                entry.name
            );
            assert!((their_error - script_error).abs() < 1e-9, "{}", entry.name);
            metric_cross_checks += 1;
        }
        println!(
            "{}: ours {count} segments, boundary recall {our_recall:.4}, under-segmentation error \
             {our_error:.4}; scikit-image {skimage_count} segments, recall {script_recall:.4}, error \
             {script_error:.4}",
            entry.name
        );
        assert!(
            our_recall >= script_recall - 0.02,
            "{}: our boundary recall {our_recall:.4} is more than 0.02 below scikit-image's {script_recall:.4}",
            entry.name
        );
    }
    assert!(
        metric_cross_checks >= 1,
        "no image cross-checks the metric code"
    );
}
