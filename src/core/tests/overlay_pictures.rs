//! The pictures people read: the before/after overlay checked for size, legend and the changed region's
//! ring, and against a committed golden picture; the class palette's separation; `labels.png` as a palette
//! PNG.
//!
//! Owns: checks on `sayso_core::overlay` output and the taxonomy's colours.
//! Must not: check the correction itself (the labels here are made up for the picture).
//!
//! The golden picture `tests/fixtures/pictures/before_after_golden.png` is our own output, looked at by a
//! person when it was made; regenerate it with `SAYSO_WRITE_GOLDEN=1 cargo test --test overlay_pictures`
//! after a deliberate change to the drawing, and look at it again.

mod support;

use sayso_core::color::{
    chromatic_distance, srgb8_to_lab, PALETTE_MIN_CHROMATIC_DISTANCE, PALETTE_MIN_DELTA_E,
};
use sayso_core::overlay::legend::PANEL_TEXT;
use sayso_core::overlay::paint::CHANGE_RING;
use sayso_core::overlay::{draw_before_after, OverlayOptions, RegionMap, View, VIEW_GAP};
use sayso_core::raster::{
    encode_palette_png, read_index_png, read_rgb_png, write_palette_png, write_rgb_png, IndexImage,
    RgbImage, DEFAULT_PIXEL_LIMIT,
};
use sayso_core::taxonomy::Taxonomy;

const WIDTH: u32 = 160;
const HEIGHT: u32 = 120;
/// The block whose class the made-up note changes: columns 90..130, rows 40..80.
const BLOCK: [u32; 4] = [90, 40, 130, 80];

fn class(taxonomy: &Taxonomy, name: &str) -> u16 {
    taxonomy.class_by_name(name).unwrap().id.0
}

/// A soft gradient "photo", floor below row 70, wall above, and a block that is a cat before, a towel after.
fn scene(taxonomy: &Taxonomy) -> (RgbImage, Vec<u16>, Vec<u16>) {
    let mut image = RgbImage::filled(WIDTH, HEIGHT, [0, 0, 0]);
    for y in 0..HEIGHT {
        for x in 0..WIDTH {
            image.set(x, y, [(60 + x / 2) as u8, (80 + y) as u8, 120]);
        }
    }
    let (floor, wall) = (class(taxonomy, "floor"), class(taxonomy, "wall"));
    let (cat, towel) = (class(taxonomy, "cat"), class(taxonomy, "towel"));
    let mut before = Vec::new();
    let mut after = Vec::new();
    for y in 0..HEIGHT {
        for x in 0..WIDTH {
            let in_block = (BLOCK[0]..BLOCK[2]).contains(&x) && (BLOCK[1]..BLOCK[3]).contains(&y);
            let ground = if y >= 70 { floor } else { wall };
            before.push(if in_block { cat } else { ground });
            after.push(if in_block { towel } else { ground });
        }
    }
    (image, before, after)
}

fn draw(taxonomy: &Taxonomy) -> sayso_core::overlay::BeforeAfter {
    let (image, before, after) = scene(taxonomy);
    let before_regions: Vec<u32> = before.iter().map(|&c| u32::from(c)).collect();
    let after_regions: Vec<u32> = after.iter().map(|&c| u32::from(c)).collect();
    draw_before_after(
        &image,
        View {
            regions: RegionMap {
                width: WIDTH,
                regions: &before_regions,
            },
            labels: &before,
            title: "Before the notes",
        },
        View {
            regions: RegionMap {
                width: WIDTH,
                regions: &after_regions,
            },
            labels: &after,
            title: "After 1 note",
        },
        taxonomy,
        &OverlayOptions {
            title: "Made-up scene".to_string(),
            ..OverlayOptions::default()
        },
    )
    .unwrap()
}

#[test]
fn before_and_after_share_a_size_a_legend_and_ring_the_change() {
    let taxonomy = Taxonomy::embedded();
    let pictures = draw(&taxonomy);
    let (before, after, both) = (&pictures.before, &pictures.after, &pictures.side_by_side);
    assert_eq!((before.width, before.height), (after.width, after.height));
    let legend_width = after.width - WIDTH;
    assert!(legend_width > 60, "a legend panel beside the picture");
    assert_eq!(both.width, 2 * WIDTH + 2 * VIEW_GAP + legend_width);
    assert_eq!(both.height, after.height);
    let strip = after.height - HEIGHT;
    assert!(strip > 10, "a title strip above each view");

    // The legend: towel, wall, floor by share, then the cat as "before only"; each class's swatch is there
    // in its exact colour, and the panel carries text.
    let names: Vec<&str> = pictures
        .legend
        .iter()
        .map(|entry| taxonomy.class_name(entry.class))
        .collect();
    assert_eq!(names, ["wall", "floor", "towel", "cat"]);
    let panel_pixels: Vec<[u8; 3]> = (0..after.height)
        .flat_map(|y| (WIDTH..after.width).map(move |x| (x, y)))
        .map(|(x, y)| after.get(x, y))
        .collect();
    for entry in &pictures.legend {
        let colour = taxonomy.class(entry.class).unwrap().colour;
        let swatch = panel_pixels.iter().filter(|&&p| p == colour).count();
        assert!(
            swatch >= 25,
            "{} swatch: {swatch} pixels",
            taxonomy.class_name(entry.class)
        );
    }
    let ink = panel_pixels.iter().filter(|&&p| p == PANEL_TEXT).count();
    assert!(ink > 300, "legend text and swatch edges: {ink} pixels");

    // The changed block is ringed in the after view (offset by the title strip), and only there.
    assert_eq!(pictures.changed.len(), 1);
    let change = &pictures.changed[0];
    assert_eq!(taxonomy.class_name(change.from), "cat");
    assert_eq!(taxonomy.class_name(change.to), "towel");
    assert_eq!(change.bbox, BLOCK);
    assert_eq!(change.pixels, 40 * 40);
    let at = |x: u32, y: u32| after.get(x, y + strip);
    for (x, y) in [
        (BLOCK[0], 60),
        (BLOCK[2] - 1, 60),
        (110, BLOCK[3] - 1),
        (BLOCK[0] - 1, 60),
    ] {
        assert_eq!(at(x, y), CHANGE_RING, "ring at ({x}, {y})");
    }
    assert_ne!(at(110, 60), CHANGE_RING, "inside the block the photo shows");
    assert_ne!(at(20, 100), CHANGE_RING);
    // The before view has no ring.
    let before_ring = (0..HEIGHT)
        .flat_map(|y| (0..WIDTH).map(move |x| (x, y)))
        .filter(|&(x, y)| before.get(x, y + strip) == CHANGE_RING)
        .count();
    assert_eq!(before_ring, 0);
}

#[test]
fn the_overlay_matches_its_golden_picture() {
    let taxonomy = Taxonomy::embedded();
    let drawn = draw(&taxonomy).side_by_side;
    let golden_path = support::workspace_file("tests/fixtures/pictures/before_after_golden.png");
    if std::env::var_os("SAYSO_WRITE_GOLDEN").is_some() {
        std::fs::create_dir_all(golden_path.parent().unwrap()).unwrap();
        write_rgb_png(&golden_path, &drawn).unwrap();
    }
    let golden = read_rgb_png(&golden_path, DEFAULT_PIXEL_LIMIT).unwrap();
    assert_eq!((drawn.width, drawn.height), (golden.width, golden.height));
    // Anti-aliased text may differ by a level or two between floating-point paths; the picture must not.
    let differing = drawn
        .pixels
        .iter()
        .zip(&golden.pixels)
        .filter(|(a, b)| (0..3).any(|c| (i32::from(a[c]) - i32::from(b[c])).abs() > 2))
        .count();
    assert!(
        differing * 1000 <= drawn.pixels.len(),
        "{differing} pixels differ from the golden picture"
    );
}

#[test]
fn the_class_palette_keeps_every_pair_apart_in_cielab() {
    // CIELAB by sayso_core::color, itself checked against scikit-image's rgb2lab in src/core/tests/colour_reference.rs.
    let taxonomy = Taxonomy::embedded();
    let colours: Vec<[u8; 3]> = taxonomy.classes().iter().map(|c| c.colour).collect();
    assert_eq!(colours.len(), 41);
    for (i, first) in colours.iter().enumerate() {
        for second in &colours[i + 1..] {
            let (a, b) = (srgb8_to_lab(*first), srgb8_to_lab(*second));
            assert!(
                a.delta_e(b) >= PALETTE_MIN_DELTA_E,
                "{first:?} and {second:?}: delta E {}",
                a.delta_e(b)
            );
            assert!(
                chromatic_distance(a, b) >= PALETTE_MIN_CHROMATIC_DISTANCE,
                "{first:?} and {second:?}: a*b* distance {}",
                chromatic_distance(a, b)
            );
        }
    }
}

#[test]
fn labels_png_is_a_palette_png_that_reads_back_as_class_ids() {
    let taxonomy = Taxonomy::embedded();
    let (_, _, after) = scene(&taxonomy);
    let labels = IndexImage {
        width: WIDTH,
        height: HEIGHT,
        values: after,
    };
    // The palette `fix` and the service write label maps with: every class in its own colour, unlabelled
    // black.
    let palette = taxonomy.label_palette();
    assert_eq!(palette.len(), 256);
    assert_eq!(
        palette[usize::from(sayso_core::taxonomy::UNLABELLED)],
        [0, 0, 0]
    );
    for class in taxonomy.classes() {
        assert_eq!(palette[class.id.index()], class.colour);
        // The console reads a served label map back by colour: no class may look unlabelled or unused.
        assert!(
            class.colour != [0, 0, 0] && class.colour != [128, 128, 128],
            "{} is black or grey",
            class.name
        );
    }
    let directory = tempfile::tempdir().unwrap();
    let path = directory.path().join("labels.png");
    write_palette_png(&path, &labels, &palette).unwrap();
    let decoder = png::Decoder::new(std::fs::File::open(&path).unwrap());
    let reader = decoder.read_info().unwrap();
    assert_eq!(reader.info().color_type, png::ColorType::Indexed);
    let stored = reader.info().palette.as_ref().unwrap();
    let towel = usize::from(class(&taxonomy, "towel"));
    assert_eq!(&stored[3 * towel..3 * towel + 3], &palette[towel]);
    assert_eq!(read_index_png(&path, DEFAULT_PIXEL_LIMIT).unwrap(), labels);
    assert!(
        encode_palette_png(&labels, &palette[..5]).is_err(),
        "values without a colour are refused"
    );
}
