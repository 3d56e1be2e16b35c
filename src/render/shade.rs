//! Turning a `SceneDraft` into pixels: nearest-hit visibility per pixel (a z-buffer by ray casting), Lambert
//! shading from a small square ceiling light with soft shadows (five light samples), ambient and floor bounce,
//! then sensor effects (slight blur, vignetting, Gaussian noise) and quantisation.
//!
//! Owns: `Frame` (colour, depth in millimetres, class labels and instance numbers per pixel) and the sensor model.
//! Must not: decide what is in the scene (layouts do) or write files (the writer does).

use crate::raster::{DepthImage, IndexImage, RgbImage};
use crate::taxonomy::UNLABELLED;

use super::builder::SceneDraft;
use super::camera::RoomSurface;
use super::geometry::{v3, Ray, Vec3};
use super::material::Colour;
use super::random::SplitMix64;

/// Everything one render produces, before it is written.
#[derive(Clone, Debug, PartialEq)]
pub struct Frame {
    pub image: RgbImage,
    pub depth: DepthImage,
    pub labels: IndexImage,
    /// Instance numbers as declared by the layout (0 = structure).
    pub instances: IndexImage,
}

/// The sensor's standard deviation of noise, in 8-bit levels.
const NOISE_LEVELS: f64 = 0.6;
/// How much darker the image corners are than the centre.
const VIGNETTE: f64 = 0.2;
/// Light reaching every surface regardless of the lamp.
const AMBIENT: f64 = 0.34;

/// Renders a draft; `noise_seed` drives the sensor noise.
pub fn render_frame(draft: &SceneDraft, noise_seed: u64) -> Frame {
    let camera = &draft.camera;
    let (width, height) = (camera.width, camera.height);
    let count = width as usize * height as usize;
    let mut colour = vec![[0.0; 3]; count];
    let mut depth = vec![0u16; count];
    let mut labels = vec![UNLABELLED; count];
    let mut instances = vec![0u16; count];
    let offsets = [
        (-0.5, -0.5),
        (0.5, -0.5),
        (-0.5, 0.5),
        (0.5, 0.5),
        (0.0, 0.0),
    ];
    let light_samples: Vec<Vec3> = offsets
        .iter()
        .map(|(dx, dz)| {
            draft.light + v3(dx * draft.light_half_size, 0.0, dz * draft.light_half_size)
        })
        .collect();
    for row in 0..height {
        for column in 0..width {
            let index = row as usize * width as usize + column as usize;
            let ray = camera.primary_ray(column, row);
            let (room_distance, surface, room_normal) = draft.room.exit(&ray);
            let mut nearest = room_distance;
            let mut found = None;
            for (part_index, part) in draft.parts.iter().enumerate() {
                if let Some(hit) = part.shape.intersect(&ray, nearest) {
                    nearest = hit.distance;
                    found = Some((part_index, hit));
                }
            }
            let point = ray.origin + ray.direction * nearest;
            let (albedo, normal, glow, class, instance) = match found {
                Some((part_index, hit)) => {
                    let part = &draft.parts[part_index];
                    let albedo = part.material.colour_at(hit.local_point, hit.local_normal);
                    (
                        albedo,
                        hit.normal,
                        part.material.glow,
                        part.class.0,
                        part.instance,
                    )
                }
                None => {
                    let (material, class) = match surface {
                        RoomSurface::Floor => (&draft.surfaces.floor, draft.surfaces.floor_class),
                        RoomSurface::Ceiling => {
                            (&draft.surfaces.ceiling, draft.surfaces.ceiling_class)
                        }
                        RoomSurface::Wall => (&draft.surfaces.wall, draft.surfaces.wall_class),
                    };
                    (
                        material.colour_at(point, room_normal),
                        room_normal,
                        material.glow,
                        class.0,
                        0,
                    )
                }
            };
            let light = lighting(draft, point, normal, &light_samples);
            // Glowing surfaces (sky, screens, lamp shades) mostly light themselves.
            let brightness = if glow > 0.0 {
                glow + 0.25 * light
            } else {
                light
            };
            colour[index] = [
                albedo[0] * brightness,
                albedo[1] * brightness,
                albedo[2] * brightness,
            ];
            let millimetres = (camera.axial_depth(ray.direction, nearest) * 1000.0).round();
            depth[index] = if (1.0..65535.0).contains(&millimetres) {
                millimetres as u16
            } else {
                0
            };
            labels[index] = class;
            instances[index] = instance;
        }
    }
    let image = sensor(&colour, width, height, noise_seed);
    Frame {
        image,
        depth: DepthImage {
            width,
            height,
            millimetres: depth,
        },
        labels: IndexImage {
            width,
            height,
            values: labels,
        },
        instances: IndexImage {
            width,
            height,
            values: instances,
        },
    }
}

/// Ambient, sky-from-above and direct light with soft shadows, as one brightness factor.
fn lighting(draft: &SceneDraft, point: Vec3, normal: Vec3, samples: &[Vec3]) -> f64 {
    let start = point + normal * 0.002;
    let mut direct = 0.0;
    for sample in samples {
        let towards = *sample - start;
        let distance = towards.length();
        if distance <= 0.0 {
            continue;
        }
        let direction = towards * (1.0 / distance);
        let lambert = normal.dot(direction);
        if lambert <= 0.0 {
            continue;
        }
        let shadow_ray = Ray {
            origin: start,
            direction,
        };
        let blocked = draft.parts.iter().any(|part| {
            part.material.glow == 0.0 && part.shape.intersect(&shadow_ray, distance).is_some()
        });
        if blocked {
            continue;
        }
        let downward = (-direction.y).max(0.0);
        direct += lambert * (0.45 + 0.55 * downward) / (1.0 + 0.09 * distance * distance);
    }
    direct /= samples.len() as f64;
    // Light bounced off the floor reaches surfaces facing down (the ceiling, undersides).
    let bounce = 0.3 * (-normal.y).max(0.0);
    AMBIENT + 0.12 * (normal.y * 0.5 + 0.5) + bounce + 1.05 * direct
}

/// The sensor: a [1 2 1] blur in each direction, vignetting, Gaussian noise, rounding to 8 bits.
fn sensor(colour: &[Colour], width: u32, height: u32, noise_seed: u64) -> RgbImage {
    let (w, h) = (width as usize, height as usize);
    let blur_pass = |source: &[Colour], horizontal: bool| -> Vec<Colour> {
        let mut out = vec![[0.0; 3]; source.len()];
        for y in 0..h {
            for x in 0..w {
                let (before, after) = if horizontal {
                    (y * w + x.saturating_sub(1), y * w + (x + 1).min(w - 1))
                } else {
                    (y.saturating_sub(1) * w + x, (y + 1).min(h - 1) * w + x)
                };
                let centre = source[y * w + x];
                for channel in 0..3 {
                    out[y * w + x][channel] = 0.25 * source[before][channel]
                        + 0.5 * centre[channel]
                        + 0.25 * source[after][channel];
                }
            }
        }
        out
    };
    let blurred = blur_pass(&blur_pass(colour, true), false);
    let mut random = SplitMix64::new(noise_seed);
    let (cx, cy) = (w as f64 * 0.5, h as f64 * 0.5);
    let corner = cx * cx + cy * cy;
    let mut pixels = Vec::with_capacity(w * h);
    for y in 0..h {
        for x in 0..w {
            let dx = x as f64 + 0.5 - cx;
            let dy = y as f64 + 0.5 - cy;
            let vignette = 1.0 - VIGNETTE * (dx * dx + dy * dy) / corner;
            let value = blurred[y * w + x];
            let mut pixel = [0u8; 3];
            for channel in 0..3 {
                let level = value[channel] * vignette * 255.0 + random.gaussian() * NOISE_LEVELS;
                pixel[channel] = level.round().clamp(0.0, 255.0) as u8;
            }
            pixels.push(pixel);
        }
    }
    RgbImage {
        width,
        height,
        pixels,
    }
}
