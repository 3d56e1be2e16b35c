//! Builds scenes from images and scene directories and checks their parts and errors.
//!
//! Owns: tests of `Scene::from_image`, `SceneParams::for_image_size`, `load_scene_dir`, `load_label_map` and
//! `segment_features`.
//! Must not: depend on demo scenes being present; it draws its own small images or reads committed fixtures.

use std::path::{Path, PathBuf};

use sayso_core::features::{column, feature_names, segment_features, FEATURE_COUNT};
use sayso_core::raster::{
    encode_rgb_png, read_rgb_png, write_depth_png, write_index_png, write_rgb_png, DepthImage,
    IndexImage, RasterError, RgbImage, DEFAULT_PIXEL_LIMIT,
};
use sayso_core::scene::{load_label_map, load_scene_dir, Scene, SceneError, SceneParams};
use sayso_core::slic::SlicParams;
use sayso_core::taxonomy::Taxonomy;

/// A small room-like picture of our own: a wall, a floor, a dark cabinet and a bright mug.
fn small_room(width: u32, height: u32) -> RgbImage {
    let mut image = RgbImage::filled(width, height, [205, 196, 170]);
    for y in 0..height {
        for x in 0..width {
            let noise = ((x * 7 + y * 13) % 5) as u8;
            let colour = if y > height * 2 / 3 {
                [120 + noise, 84, 52]
            } else if (width / 8..width / 3).contains(&x) && y > height / 4 {
                [40, 40 + noise, 46]
            } else if (width / 2..width / 2 + width / 10).contains(&x)
                && (height / 2..height / 2 + height / 8).contains(&y)
            {
                [40, 120, 170 + noise]
            } else {
                [205 - noise, 196, 170]
            };
            image.set(x, y, colour);
        }
    }
    image
}

fn params(target: u32) -> SceneParams {
    SceneParams {
        superpixels: SlicParams::new(target, 10.0, 10).unwrap(),
        segments_per_region: 8,
    }
}

fn synthetic_room() -> RgbImage {
    let path = crate::paths::fixture("slic/synthetic_room.png");
    read_rgb_png(&path, DEFAULT_PIXEL_LIMIT).unwrap()
}

#[test]
fn statistics_adjacency_and_coarse_level_are_consistent() {
    let image = synthetic_room();
    let scene = Scene::from_image("synthetic", image, None, None, &SceneParams::default()).unwrap();
    let (width, height) = (scene.width() as usize, scene.height() as usize);
    let count = scene.segment_count();
    // SLIC lands within ~15% of the requested count on this picture.
    let target = sayso_core::scene::SCENE_SEGMENTS as usize;
    assert!(
        (target * 85 / 100..=target * 115 / 100).contains(&count),
        "{count} segments for {target} requested"
    );
    assert_eq!(scene.stats.len(), count);

    // Areas add up and match the label map; centroids lie inside their boxes.
    let mut areas = vec![0u32; count];
    for &label in &scene.segments.labels {
        areas[label as usize] += 1;
    }
    for (stats, &area) in scene.stats.iter().zip(&areas) {
        assert_eq!(stats.area, area);
        let (cx, cy) = stats.centroid;
        assert!(cx >= stats.bbox.x0 as f32 && cx < stats.bbox.x1 as f32);
        assert!(cy >= stats.bbox.y0 as f32 && cy < stats.bbox.y1 as f32);
        assert!(stats.area as u64 <= stats.bbox.area());
        assert!(stats.mean_depth_mm.is_none() && stats.depth_pixels == 0);
    }

    // Boundary lengths add up to the number of 4-connected pixel pairs with different labels.
    let labels = &scene.segments.labels;
    let mut differing_pairs = 0u64;
    for y in 0..height {
        for x in 0..width {
            let here = labels[y * width + x];
            differing_pairs += u64::from(x + 1 < width && labels[y * width + x + 1] != here);
            differing_pairs += u64::from(y + 1 < height && labels[(y + 1) * width + x] != here);
        }
    }
    let graph = &scene.adjacency;
    assert_eq!(graph.node_count(), count);
    let total: u64 = graph
        .edge_weights()
        .map(|edge| edge.boundary_length as u64)
        .sum();
    assert_eq!(total, differing_pairs);
    for edge in graph.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        assert_ne!(a, b);
        let expected = scene.stats[a].mean_lab.delta_e(scene.stats[b].mean_lab);
        assert!((edge.weight.colour_contrast - expected).abs() < 1e-4);
    }

    // Every fine segment is in exactly one region; regions number about one per `segments_per_region`
    // segments and each is connected in the adjacency graph.
    let coarse = &scene.coarse;
    assert_eq!(coarse.region_of.len(), count);
    let mut seen = vec![0u32; count];
    for (region, members) in coarse.members.iter().enumerate() {
        assert!(!members.is_empty());
        for segment in members {
            seen[segment.index()] += 1;
            assert_eq!(coarse.region_of[segment.index()].index(), region);
        }
        let mut reached = vec![members[0].index()];
        let mut frontier = vec![members[0].index()];
        while let Some(node) = frontier.pop() {
            for neighbour in graph.neighbors(petgraph::graph::NodeIndex::new(node)) {
                let neighbour = neighbour.index();
                if coarse.region_of[neighbour].index() == region && !reached.contains(&neighbour) {
                    reached.push(neighbour);
                    frontier.push(neighbour);
                }
            }
        }
        assert_eq!(
            reached.len(),
            members.len(),
            "region {region} is not connected"
        );
    }
    assert!(seen.iter().all(|&times| times == 1));
    let per_region = SceneParams::default().segments_per_region as f64;
    let target = (count as f64 / per_region).round() as usize;
    let regions = coarse.members.len();
    assert!(
        regions <= target && regions * 2 >= target,
        "{regions} regions for target {target}"
    );
}

#[test]
fn building_is_deterministic_and_features_follow_the_layout() {
    let image = small_room(96, 72);
    let depth = DepthImage {
        width: 96,
        height: 72,
        millimetres: (0..96 * 72)
            .map(|i| if i % 10 == 0 { 0 } else { 2500 })
            .collect(),
    };
    let first =
        Scene::from_image("a", image.clone(), Some(depth.clone()), None, &params(40)).unwrap();
    let again = Scene::from_image("a", image.clone(), Some(depth), None, &params(40)).unwrap();
    assert_eq!(first.segments, again.segments);
    let features = segment_features(&first);
    assert_eq!(features, segment_features(&again));
    assert_eq!(features.dim(), (first.segment_count(), FEATURE_COUNT));
    assert_eq!(feature_names().len(), FEATURE_COUNT);
    for row in features.rows() {
        let histogram: f32 = row.iter().skip(column::HUE_HISTOGRAM).take(8).sum();
        assert!(
            (histogram - 1.0).abs() < 1e-5,
            "histogram sums to {histogram}"
        );
        for value in row.iter().skip(column::CENTROID).take(5) {
            assert!((0.0..=1.0).contains(value));
        }
        assert!((0.0..1.0).contains(&row[column::ECCENTRICITY]));
        assert_eq!(row[column::HAS_DEPTH], 1.0);
        assert!(
            (row[column::DEPTH_MEAN] - 2.5).abs() < 1e-4,
            "depth in metres"
        );
        assert!(row[column::DEPTH_STD].abs() < 1e-3);
        assert!(row[column::REGION_AREA] >= row[column::AREA]);
        // Flat depth: no slope, no step to the neighbours, the region at the same depth.
        assert!(row[column::DEPTH_SLOPE].abs() < 1e-4 && row[column::DEPTH_SLOPE + 1].abs() < 1e-4);
        assert!(row[column::NEAR_DEPTH_STEP].abs() < 1e-4);
        assert!((row[column::REGION_DEPTH_MEAN] - 2.5).abs() < 1e-4);
        // The region's box holds the segment's centroid.
        let (left, top, right, bottom) = (
            row[column::REGION_BOX],
            row[column::REGION_BOX + 1],
            row[column::REGION_BOX + 2],
            row[column::REGION_BOX + 3],
        );
        assert!(left <= row[column::CENTROID] && row[column::CENTROID] <= right);
        assert!(top <= row[column::CENTROID + 1] && row[column::CENTROID + 1] <= bottom);
    }
    let areas: f32 = features.column(column::AREA).sum();
    assert!((areas - 1.0).abs() < 1e-4);
    // The mug is blue (hue angle about 260 degrees, sector 5 of 257.1..308.6, histogram bin 6): its
    // segment puts most weight there.
    let mug = first.segments.segment_at(96 / 2 + 4, 72 / 2 + 4).index();
    let blue_share = features[[mug, column::HUE_HISTOGRAM + 6]];
    assert!(blue_share > 0.9, "mug histogram {:?}", features.row(mug));

    let without_depth = Scene::from_image("b", image, None, None, &params(40)).unwrap();
    let features = segment_features(&without_depth);
    assert!(features
        .column(column::HAS_DEPTH)
        .iter()
        .all(|&value| value == 0.0));
    assert!(features
        .column(column::DEPTH_MEAN)
        .iter()
        .all(|&value| value == 0.0));
}

/// Worked example: on a depth plane d(x, y) = 1000 + 3x + 10y millimetres, least squares recovers the
/// plane exactly, so every segment's slopes per 100 pixels over its mean depth in metres are
/// 0.3 / depth and 1.0 / depth.
#[test]
fn depth_slopes_recover_a_plane_and_neighbours_give_colour_and_depth_steps() {
    let image = small_room(96, 72);
    let depth = DepthImage {
        width: 96,
        height: 72,
        millimetres: (0..96 * 72u32)
            .map(|i| (1000 + 3 * (i % 96) + 10 * (i / 96)) as u16)
            .collect(),
    };
    let scene = Scene::from_image("plane", image, Some(depth), None, &params(40)).unwrap();
    let features = segment_features(&scene);
    for (segment, row) in features.rows().into_iter().enumerate() {
        let metres = scene.stats[segment].mean_depth_mm.unwrap() / 1000.0;
        let (sx, sy) = (row[column::DEPTH_SLOPE], row[column::DEPTH_SLOPE + 1]);
        if scene.stats[segment].bbox.width() > 1 && scene.stats[segment].bbox.height() > 1 {
            assert!((sx - 0.3 / metres).abs() < 1e-3, "segment {segment}: {sx}");
            assert!((sy - 1.0 / metres).abs() < 1e-3, "segment {segment}: {sy}");
        }
        // The neighbours' colour is a boundary-weighted mean of theirs: inside the range of the scene.
        let near_l = row[column::NEAR_MEAN_LAB];
        assert!((0.0..=100.0).contains(&near_l));
    }
    // The step to the neighbours, from the documented definition: the boundary-weighted mean of the
    // neighbours' depths against the segment's own.
    let mut sums = vec![(0.0f64, 0.0f64); scene.segment_count()];
    for edge in scene.adjacency.raw_edges() {
        let (a, b) = (edge.source().index(), edge.target().index());
        let length = f64::from(edge.weight.boundary_length);
        for (here, there) in [(a, b), (b, a)] {
            let depth = f64::from(scene.stats[there].mean_depth_mm.unwrap());
            sums[here].0 += length;
            sums[here].1 += length * depth;
        }
    }
    for (segment, (length, sum)) in sums.into_iter().enumerate() {
        let own = f64::from(scene.stats[segment].mean_depth_mm.unwrap());
        let expected = if length > 0.0 {
            (sum / length - own) / own
        } else {
            0.0
        };
        let found = f64::from(features[[segment, column::NEAR_DEPTH_STEP]]);
        assert!(
            (found - expected).abs() < 1e-4,
            "segment {segment}: {found} vs {expected}"
        );
    }
}

#[test]
fn bad_inputs_to_from_image_are_typed_errors() {
    let image = small_room(32, 24);
    let wrong_depth = DepthImage {
        width: 31,
        height: 24,
        millimetres: vec![1000; 31 * 24],
    };
    let error = Scene::from_image(
        "kitchen_corner",
        image.clone(),
        Some(wrong_depth),
        None,
        &params(10),
    )
    .unwrap_err();
    assert!(
        matches!(
            error,
            SceneError::DepthSizeMismatch {
                depth_width: 31,
                ..
            }
        ),
        "{error}"
    );
    assert!(error.to_string().contains("kitchen_corner"));

    let error =
        Scene::from_image("s", image.clone(), None, None, &params(32 * 24 + 1)).unwrap_err();
    assert!(matches!(error, SceneError::Superpixels { .. }), "{error}");
    let empty = RgbImage::filled(0, 0, [0, 0, 0]);
    let error = Scene::from_image("s", empty, None, None, &params(1)).unwrap_err();
    assert!(error.to_string().contains("at least one pixel"), "{error}");
    let one_pixel = RgbImage::filled(1, 1, [5, 5, 5]);
    let scene = Scene::from_image("dot", one_pixel, None, None, &params(1)).unwrap();
    assert_eq!(scene.segment_count(), 1);
    assert_eq!(scene.coarse.members.len(), 1);
    assert_eq!(segment_features(&scene).dim(), (1, FEATURE_COUNT));
}

fn scene_dir(image: &RgbImage, metadata: Option<&str>) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("juniper_kitchen");
    std::fs::create_dir(&path).unwrap();
    write_rgb_png(&path.join("image.png"), image).unwrap();
    if let Some(text) = metadata {
        std::fs::write(path.join("scene.json"), text).unwrap();
    }
    (dir, path)
}

#[test]
fn a_scene_directory_loads_with_its_room_and_depth() {
    let taxonomy = Taxonomy::embedded();
    let image = small_room(48, 36);
    let metadata = r#"{"name": "juniper lane kitchen", "room": "kitchen", "width": 48, "height": 36, "seed": 4}"#;
    let (_dir, path) = scene_dir(&image, Some(metadata));
    let depth = DepthImage {
        width: 48,
        height: 36,
        millimetres: vec![1800; 48 * 36],
    };
    write_depth_png(&path.join("depth.png"), &depth).unwrap();
    let scene = load_scene_dir(&path, &taxonomy, &params(20), DEFAULT_PIXEL_LIMIT).unwrap();
    assert_eq!(scene.name, "juniper lane kitchen");
    assert_eq!(
        scene.room,
        taxonomy.room_by_name("kitchen").map(|room| room.id)
    );
    assert!(scene.depth.is_some());
    assert!(scene.stats.iter().all(|s| s.mean_depth_mm == Some(1800.0)));

    // Without metadata the directory name is the scene name and the room is unknown.
    std::fs::remove_file(path.join("scene.json")).unwrap();
    let scene = load_scene_dir(&path, &taxonomy, &params(20), DEFAULT_PIXEL_LIMIT).unwrap();
    assert_eq!(scene.name, "juniper_kitchen");
    assert_eq!(scene.room, None);
}

#[test]
fn scene_directory_errors_name_the_file_and_the_problem() {
    let taxonomy = Taxonomy::embedded();
    let image = small_room(48, 36);
    let load = |path: &Path| load_scene_dir(path, &taxonomy, &params(20), DEFAULT_PIXEL_LIMIT);

    let (_dir, path) = scene_dir(&image, Some(r#"{"room": "attic"}"#));
    let error = load(&path).unwrap_err();
    assert!(
        matches!(&error, SceneError::UnknownRoom { room, .. } if room == "attic"),
        "{error}"
    );
    assert!(error.to_string().contains("scene.json") && error.to_string().contains("kitchen"));

    std::fs::write(path.join("scene.json"), "{\"room\": ").unwrap();
    let error = load(&path).unwrap_err();
    assert!(
        matches!(error, SceneError::Metadata { .. }) && error.to_string().contains("scene.json")
    );

    std::fs::write(path.join("scene.json"), r#"{"width": 640, "height": 480}"#).unwrap();
    let error = load(&path).unwrap_err();
    assert!(error.to_string().contains("640x480"), "{error}");
    std::fs::remove_file(path.join("scene.json")).unwrap();

    let small_depth = DepthImage {
        width: 24,
        height: 36,
        millimetres: vec![1000; 24 * 36],
    };
    write_depth_png(&path.join("depth.png"), &small_depth).unwrap();
    let error = load(&path).unwrap_err();
    assert!(
        matches!(error, SceneError::Raster(RasterError::SizeMismatch { .. })),
        "{error}"
    );
    assert!(error.to_string().contains("depth.png"));
    std::fs::remove_file(path.join("depth.png")).unwrap();

    let bytes = encode_rgb_png(&image).unwrap();
    std::fs::write(path.join("image.png"), &bytes[..bytes.len() / 2]).unwrap();
    let error = load(&path).unwrap_err();
    assert!(
        matches!(error, SceneError::Raster(RasterError::Decode { .. })),
        "{error}"
    );
    assert!(error.to_string().contains("image.png"));

    std::fs::write(path.join("image.png"), &bytes).unwrap();
    let error = load_scene_dir(&path, &taxonomy, &params(20), 100).unwrap_err();
    assert!(
        matches!(error, SceneError::Raster(RasterError::TooLarge { .. })),
        "{error}"
    );

    std::fs::remove_file(path.join("image.png")).unwrap();
    let error = load(&path).unwrap_err();
    assert!(
        matches!(error, SceneError::NoImage { .. })
            && error.to_string().contains("image.png")
            && error.to_string().contains("image.jpg"),
        "{error}"
    );
    let error = load(&path.join("nowhere")).unwrap_err();
    assert!(matches!(error, SceneError::NotADirectory { .. }), "{error}");
}

#[test]
fn label_maps_are_checked_against_the_taxonomy() {
    let taxonomy = Taxonomy::embedded();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("labels.png");
    let mut labels = IndexImage::filled(6, 4, 1);
    labels.set(0, 0, 255);
    write_index_png(&path, &labels).unwrap();
    let loaded = load_label_map(&path, &taxonomy, 6, 4, DEFAULT_PIXEL_LIMIT).unwrap();
    assert_eq!(loaded, labels);

    let bad_value = taxonomy.class_count() as u16;
    labels.set(4, 2, bad_value);
    labels.set(5, 3, 200);
    write_index_png(&path, &labels).unwrap();
    let error = load_label_map(&path, &taxonomy, 6, 4, DEFAULT_PIXEL_LIMIT).unwrap_err();
    assert!(
        matches!(error, SceneError::LabelOutOfRange { value, x: 4, y: 2, .. } if value == bad_value),
        "{error}"
    );
    let message = error.to_string();
    assert!(message.contains("labels.png") && message.contains(&bad_value.to_string()));

    let error = load_label_map(&path, &taxonomy, 7, 4, DEFAULT_PIXEL_LIMIT).unwrap_err();
    assert!(
        matches!(error, SceneError::Raster(RasterError::SizeMismatch { .. })),
        "{error}"
    );
    let error = load_label_map(
        &dir.path().join("none.png"),
        &taxonomy,
        6,
        4,
        DEFAULT_PIXEL_LIMIT,
    )
    .unwrap_err();
    assert!(matches!(error, SceneError::MissingFile { .. }), "{error}");
}

proptest::proptest! {
    #[test]
    fn any_small_image_and_target_gives_a_scene_or_a_typed_error(
        width in 0u32..7,
        height in 0u32..7,
        target in 0u32..60,
        colour in proptest::prelude::any::<[u8; 3]>(),
    ) {
        let image = small_room(width, height);
        let mut tinted = image.clone();
        if let Some(pixel) = tinted.pixels.first_mut() {
            *pixel = colour;
        }
        match SlicParams::new(target, 10.0, 10) {
            Err(_) => proptest::prop_assert_eq!(target, 0),
            Ok(superpixels) => {
                let params = SceneParams { superpixels, segments_per_region: 8 };
                match Scene::from_image("tiny", tinted, None, None, &params) {
                    Ok(scene) => {
                        proptest::prop_assert!(u64::from(target) <= u64::from(width * height));
                        let features = segment_features(&scene);
                        proptest::prop_assert_eq!(features.nrows(), scene.segment_count());
                        proptest::prop_assert!(features.iter().all(|value| value.is_finite()));
                    }
                    Err(error) => proptest::prop_assert!(
                        matches!(error, SceneError::Superpixels { .. }),
                        "{}", error
                    ),
                }
            }
        }
    }
}

/// The segment count scales with the image area (segments keep their reference size of about 128 pixels),
/// with a floor for tiny images and the reference count as the ceiling; every entry point cuts this way.
#[test]
fn the_segment_count_scales_with_the_image_area() {
    let full = SceneParams::default();
    let reference = full.superpixels.target_segments();
    assert_eq!(SceneParams::for_image_size(640, 480), full);
    assert_eq!(SceneParams::for_image_size(1280, 960), full);
    let quarter = SceneParams::for_image_size(320, 240);
    assert_eq!(quarter.superpixels.target_segments() * 4, reference);
    assert_eq!(quarter.segments_per_region * 4, full.segments_per_region);
    // 96 x 72 = 6912 pixels: 2400 * 6912 / 307200 = 54 segments, one coarse region per 0.54 (so 1).
    let small = SceneParams::for_image_size(96, 72);
    assert_eq!(small.superpixels.target_segments(), 54);
    assert_eq!(small.segments_per_region, 1);
    // 32 x 8: the area alone gives 2; the floor is 16 segments.
    assert_eq!(
        SceneParams::for_image_size(32, 8)
            .superpixels
            .target_segments(),
        16
    );
    // 4 x 4: at most one segment per 4 pixels; 1 x 1: one.
    assert_eq!(
        SceneParams::for_image_size(4, 4)
            .superpixels
            .target_segments(),
        4
    );
    assert_eq!(
        SceneParams::for_image_size(1, 1)
            .superpixels
            .target_segments(),
        1
    );
    // The compactness and iterations stay the scene's.
    assert_eq!(
        small.superpixels.with_target_segments(reference).unwrap(),
        full.superpixels
    );

    // On a real small image the pipeline's superpixels are about as many as the rule asks, not 2400.
    let capture = sayso_core::scene::Capture::from_image("small room", small_room(96, 72));
    let scene = sayso_perception::pipeline::superpixels_of(&capture).unwrap();
    let count = scene.segment_count();
    assert!((40..=70).contains(&count), "{count} segments on 96x72");
}
