//! Checks the superpixels of a large image, which SLIC cuts on a reduced copy (`superpixels_of`), against
//! the ground truth of demo scenes enlarged three times (1920 x 1440, reduced by 2 before SLIC) and against
//! SLIC at full resolution on the same enlarged image.
//!
//! Owns: the quality check of `sayso_core::scene::build::superpixels_of` above
//! `SLIC_FULL_RESOLUTION_PIXELS`. Must not: time anything (benches/slic.rs times SLIC).
//!
//! Checks, per scene: every segment is non-empty and 4-connected; the count is within 15% of the
//! scene's target; the boundary recall against the enlarged ground truth (Martin et al. 2004 style, as
//! `slic_reference.rs` measures it; tolerance 2 pixels scaled by 3) is at most 0.03 below full-resolution
//! SLIC's (our own margin). The ground truth is one region per (class, instance) pair of the scene's
//! labels.png and instances.png, enlarged by repeating each pixel.

mod support;

use std::collections::HashMap;

use sayso_core::raster::{read_index_png, read_rgb_png, RgbImage, DEFAULT_PIXEL_LIMIT};
use sayso_core::scene::build::{slic_reduction, superpixels_of};
use sayso_core::scene::SceneParams;
use sayso_core::slic::connectivity::is_each_segment_connected;
use sayso_core::slic::metrics::boundary_recall;
use sayso_core::slic::slic;

/// How many times the demo scenes are enlarged.
const ENLARGE: usize = 3;

fn enlarge<T: Copy>(values: &[T], width: usize, height: usize) -> Vec<T> {
    let mut out = Vec::with_capacity(values.len() * ENLARGE * ENLARGE);
    for y in 0..height * ENLARGE {
        let row = &values[(y / ENLARGE) * width..(y / ENLARGE + 1) * width];
        out.extend((0..width * ENLARGE).map(|x| row[x / ENLARGE]));
    }
    out
}

fn truth_regions(scene: &str) -> Vec<u32> {
    let read = |file: &str| {
        read_index_png(
            &support::workspace_file(&format!("demo_scenes/{scene}/{file}")),
            DEFAULT_PIXEL_LIMIT,
        )
        .unwrap_or_else(|error| panic!("{error}"))
        .values
    };
    let mut region_of_pair = HashMap::new();
    read("labels.png")
        .into_iter()
        .zip(read("instances.png"))
        .map(|pair| {
            let next = region_of_pair.len() as u32;
            *region_of_pair.entry(pair).or_insert(next)
        })
        .collect()
}

#[test]
fn superpixels_cut_on_a_reduced_copy_keep_the_boundaries_of_full_resolution_slic() {
    for scene in ["bedroom_unmade", "dining_room_supper"] {
        let small = read_rgb_png(
            &support::workspace_file(&format!("demo_scenes/{scene}/image.png")),
            DEFAULT_PIXEL_LIMIT,
        )
        .unwrap_or_else(|error| panic!("{error}"));
        let (width, height) = (
            small.width as usize * ENLARGE,
            small.height as usize * ENLARGE,
        );
        let image = RgbImage {
            width: width as u32,
            height: height as u32,
            pixels: enlarge(&small.pixels, small.width as usize, small.height as usize),
        };
        assert_eq!(slic_reduction(image.width, image.height), 2);
        let truth = enlarge(
            &truth_regions(scene),
            small.width as usize,
            small.height as usize,
        );
        let params = SceneParams::for_image_size(image.width, image.height).superpixels;
        let reduced = superpixels_of(&image, &params).unwrap();
        let full = slic(&image, &params).unwrap();
        assert_eq!((reduced.width, reduced.height), (image.width, image.height));
        assert!(is_each_segment_connected(
            &reduced.labels,
            width,
            height,
            reduced.segment_count
        ));
        let requested = params.target_segments() as f64;
        let count = reduced.segment_count as f64;
        assert!(
            (count - requested).abs() <= 0.15 * requested,
            "{scene}: {count} segments, requested {requested}"
        );
        let tolerance = 2 * ENLARGE as u32;
        let recall_reduced =
            boundary_recall(&reduced.labels, &truth, width, height, tolerance).unwrap();
        let recall_full = boundary_recall(&full.labels, &truth, width, height, tolerance).unwrap();
        println!(
            "{scene} at {width}x{height}: boundary recall {recall_reduced:.3} cut on the reduced copy \
             ({} segments), {recall_full:.3} at full resolution ({} segments)",
            reduced.segment_count, full.segment_count
        );
        assert!(
            recall_reduced >= recall_full - 0.03,
            "{scene}: recall {recall_reduced:.3} on the reduced copy, {recall_full:.3} at full resolution"
        );
    }
}

#[test]
fn an_image_within_the_full_resolution_size_is_cut_as_slic_cuts_it() {
    let image = read_rgb_png(
        &support::workspace_file("demo_scenes/bedroom_unmade/image.png"),
        DEFAULT_PIXEL_LIMIT,
    )
    .unwrap_or_else(|error| panic!("{error}"));
    assert_eq!(slic_reduction(image.width, image.height), 1);
    assert_eq!(slic_reduction(1280, 960), 1);
    assert_eq!(slic_reduction(1281, 960), 2);
    assert_eq!(slic_reduction(4096, 4096), 4);
    let params = SceneParams::for_image_size(image.width, image.height).superpixels;
    assert_eq!(
        superpixels_of(&image, &params).unwrap(),
        slic(&image, &params).unwrap()
    );
}
