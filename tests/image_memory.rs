//! How much memory reading a large image takes: a counting allocator (this test binary's global
//! allocator) records the peak of live heap bytes while an image is decoded, and while a scene is
//! registered through the session layer.
//!
//! The bounds: a colour PNG is decoded once, row by row, into its pixels, so decoding a W x H image holds
//! the 3 W H bytes of the result and little else, whatever the file's colour type and bit depth; an image
//! over the pixel limit is refused from its header, before any pixel buffer exists. A registration's peak
//! is bounded per pixel (`REGISTRATION_BYTES_PER_PIXEL`), so the pixel limit bounds every request's peak.

#[path = "counting/allocator.rs"]
mod counting;
use std::path::Path;
use std::sync::{Arc, Mutex};

use sayso_core::raster::{self, RasterError, RgbImage};

/// One measurement at a time: the counters are global to the process.
static MEASURING: Mutex<()> = Mutex::new(());

/// The heap `work` holds at its peak above what was live when it started, in bytes, and its result.
fn peak_of<T>(work: impl FnOnce() -> T) -> (usize, T) {
    let (peak, _, result) = counting::measured(work);
    (peak, result)
}

/// A W x H picture with edges and texture (so the PNG is not trivially small).
fn picture(width: u32, height: u32) -> RgbImage {
    let mut image = RgbImage::filled(width, height, [0, 0, 0]);
    for y in 0..height {
        for x in 0..width {
            let block = ((x / 64) * 37 + (y / 48) * 101) % 251;
            image.set(
                x,
                y,
                [
                    block as u8,
                    (x % 7 * 9) as u8 ^ block as u8,
                    (y % 5 * 11) as u8,
                ],
            );
        }
    }
    image
}

/// A 16-bit RGBA PNG of `image` (the widest sample layout a colour PNG has: 8 bytes a pixel decoded whole).
fn rgba16_png(image: &RgbImage) -> Vec<u8> {
    let mut out = Vec::new();
    {
        let mut encoder = png::Encoder::new(&mut out, image.width, image.height);
        encoder.set_color(png::ColorType::Rgba);
        encoder.set_depth(png::BitDepth::Sixteen);
        let mut writer = encoder.write_header().unwrap();
        let mut data = Vec::with_capacity(image.pixels.len() * 8);
        for pixel in &image.pixels {
            for channel in pixel {
                data.extend_from_slice(&(u16::from(*channel) * 257).to_be_bytes());
            }
            data.extend_from_slice(&u16::MAX.to_be_bytes());
        }
        writer.write_image_data(&data).unwrap();
    }
    out
}

/// Slack for the decoder's own state (row buffers, inflate window), in bytes.
const DECODER_SLACK: usize = 2 << 20;

#[test]
fn a_4096_square_png_is_decoded_once_into_its_pixels() {
    let _one = MEASURING
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner());
    let image = picture(4096, 4096);
    let result_bytes = image.pixels.len() * 3;
    for (name, bytes) in [
        ("RGB 8-bit", raster::encode_rgb_png(&image).unwrap()),
        ("RGBA 16-bit", rgba16_png(&image)),
    ] {
        let (peak, decoded) = peak_of(|| {
            raster::decode_rgb_image(&bytes, Path::new("big.png"), raster::DEFAULT_PIXEL_LIMIT)
        });
        let decoded = decoded.unwrap();
        assert_eq!(decoded, image, "{name}");
        drop(decoded);
        println!(
            "{name}: {:.2} MB file, decoding peaked at {:.1} MB over {:.1} MB of pixels",
            bytes.len() as f64 / 1e6,
            peak as f64 / 1e6,
            result_bytes as f64 / 1e6
        );
        assert!(
            peak <= result_bytes + DECODER_SLACK,
            "{name}: decoding held {peak} bytes at its peak; the pixels are {result_bytes}"
        );
    }
}

#[test]
fn an_image_over_the_pixel_limit_is_refused_before_any_pixel_buffer_exists() {
    let _one = MEASURING
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner());
    let bytes = raster::encode_rgb_png(&picture(4096, 4096)).unwrap();
    let limit = 2048 * 2048;
    let (peak, refused) = peak_of(|| raster::decode_rgb_image(&bytes, Path::new("big.png"), limit));
    assert!(
        matches!(
            refused,
            Err(RasterError::TooLarge {
                width: 4096,
                height: 4096,
                ..
            })
        ),
        "{refused:?}"
    );
    assert!(peak < DECODER_SLACK, "refusing held {peak} bytes");
}

/// The most heap a registration through the session layer (decoding, superpixels, the built-in
/// classifier's unaries, the first solve, the stored state) holds at its peak per pixel of the image. Our
/// own bound: measured on this 1024 x 768 picture at 85 bytes a pixel (2026-12-04), with a margin for a
/// picture that cuts into other segments.
const REGISTRATION_BYTES_PER_PIXEL: usize = 120;

#[test]
fn a_registration_holds_a_bounded_number_of_bytes_per_pixel() {
    let _one = MEASURING
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner());
    use sayso_perception::pipeline::{load_classifier, model_path, CorrectionSettings};
    use sayso_session::{Coordinator, CoordinatorSettings, JointCorrector, SceneUpload};
    let data = tempfile::tempdir().unwrap();
    let settings = CorrectionSettings::embedded().unwrap();
    let classifier = load_classifier(&model_path(None), settings.grammar.taxonomy()).unwrap();
    let coordinator = Coordinator::open(
        Arc::new(JointCorrector::new(settings, classifier)),
        &CoordinatorSettings {
            log_path: data.path().join("corrections.sqlite"),
            pixel_limit: raster::DEFAULT_PIXEL_LIMIT,
            demo_dir: data.path().join("demo_scenes"),
        },
    )
    .unwrap();
    let image = picture(1024, 768);
    let pixels = image.pixels.len();
    let png = raster::encode_rgb_png(&image).unwrap();
    drop(image);
    let (peak, created) = peak_of(|| {
        coordinator.register_scene(
            SceneUpload {
                image_png: Some(png),
                ..SceneUpload::default()
            },
            "mira",
        )
    });
    let created = created.unwrap();
    assert_eq!((created.width, created.height), (1024, 768));
    println!(
        "registration peaked at {:.1} MB, {} bytes a pixel",
        peak as f64 / 1e6,
        peak / pixels
    );
    assert!(
        peak <= REGISTRATION_BYTES_PER_PIXEL * pixels,
        "a registration held {} bytes a pixel at its peak",
        peak / pixels
    );
}
