//! Room layouts of the flat at 14 Juniper Lane: which furniture and objects go where, per room type.
//!
//! The flat belongs to Wren Okafor-Lind (a piano tuner) and her brother Teodor (a night-shift baker), with Fig,
//! a grey tabby cat, and Bramble, an old ginger terrier. Each layout draws a room of that flat with the seed
//! choosing sizes, colours, positions and a few optional items, and always includes the hard cases its room
//! type is meant to show (look-alikes, repeated objects, small objects on surfaces, things under or behind
//! furniture).
//!
//! Owns: the room box size, the camera placement, the surfaces, loose clutter and the per-room layouts.
//! Must not: shade pixels or write files.

mod cooking;
mod living;
mod private;

use crate::taxonomy::Taxonomy;

use super::belongings::{bag, cardboard_box, clothes, toy};
use super::builder::{RoomSurfaces, SceneBuilder, SceneDraft};
use super::camera::{Camera, RoomBox};
use super::geometry::{v3, Yaw};
use super::material::{rgb, Colour, Material, Texture};
use super::random::SplitMix64;
use super::RenderError;

/// The room types this renderer can draw, by their taxonomy names.
pub const ROOM_TYPES: [&str; 7] = [
    "kitchen",
    "living_room",
    "bedroom",
    "bathroom",
    "hallway",
    "office",
    "dining_room",
];

/// Focal length in pixels for a 640-pixel-wide image (a horizontal field of view of about 72 degrees,
/// a wide-angle robot head camera; our own choice, not a measured figure). Scaled with the width.
const FOCAL_PIXELS_AT_640: f64 = 440.0;

/// What a layout hands back besides its parts.
pub struct LayoutOutcome {
    pub floor: Material,
    pub wall: Material,
    pub description: String,
    /// Where the camera looks across the room, as a fraction of the half width (-1 left wall, 1 right wall).
    pub look_towards: f64,
}

/// Builds the draft of one scene.
pub fn build_scene(
    taxonomy: &Taxonomy,
    room_name: &str,
    seed: u64,
    width: u32,
    height: u32,
) -> Result<SceneDraft, RenderError> {
    if taxonomy.room_by_name(room_name).is_none() || !ROOM_TYPES.contains(&room_name) {
        return Err(RenderError::UnknownRoom(room_name.to_string()));
    }
    let mut random = SplitMix64::new(seed ^ 0x4A75_6E69_7065_7221);
    let (half_width, depth) = match room_name {
        "bathroom" => (random.range(1.4, 1.7), random.range(3.0, 3.4)),
        "hallway" => (random.range(1.5, 1.8), random.range(4.2, 4.8)),
        _ => (random.range(1.75, 2.2), random.range(3.9, 4.6)),
    };
    let room = RoomBox {
        half_width,
        height: random.range(2.5, 2.7),
        depth,
    };
    let camera_random = random.fork();
    let builder = SceneBuilder::new(taxonomy, random, room);
    let outcome = match room_name {
        "kitchen" => cooking::kitchen(&builder)?,
        "bathroom" => cooking::bathroom(&builder)?,
        "living_room" => living::living_room(&builder)?,
        "dining_room" => living::dining_room(&builder)?,
        "bedroom" => private::bedroom(&builder)?,
        "office" => private::office(&builder)?,
        _ => private::hallway(&builder)?,
    };
    scatter_clutter(&builder)?;
    let mut camera_random = camera_random;
    let position = v3(
        camera_random.range(-0.25, 0.25) * half_width,
        camera_random.range(1.45, 1.65),
        0.12,
    );
    let target = v3(
        (outcome.look_towards + camera_random.range(-0.12, 0.12)) * half_width,
        camera_random.range(0.55, 0.8),
        depth * 0.75,
    );
    let focal = FOCAL_PIXELS_AT_640 * width as f64 / 640.0;
    let camera = Camera::looking_at(position, target, focal, width, height);
    let surfaces = RoomSurfaces {
        floor: outcome.floor,
        wall: outcome.wall,
        ceiling: Material::textured(
            rgb(238, 236, 230),
            Texture::Mottled {
                size: 0.8,
                strength: 0.03,
            },
        ),
        floor_class: builder.class_id("floor")?,
        wall_class: builder.class_id("wall")?,
        ceiling_class: builder.class_id("ceiling")?,
    };
    Ok(builder.finish(surfaces, camera, outcome.description))
}

/// Drops up to two loose things (a toy, a box, a bag, a heap of clothes) on the open floor between the camera
/// and the furniture, so no two seeds of a room are equally tidy.
fn scatter_clutter(builder: &SceneBuilder) -> Result<(), RenderError> {
    let room = builder.room;
    let count = builder.below(3);
    for _ in 0..count {
        let x = builder.range(-0.3, 0.3) * room.half_width;
        let z = builder.range(1.0, 1.0 + room.depth * 0.12);
        let yaw = Yaw::from_half_tangent(builder.range(-0.8, 0.8));
        let base = v3(x, 0.0, z);
        match builder.below(4) {
            0 => {
                let colour = choose(
                    builder,
                    &[rgb(220, 60, 50), rgb(60, 140, 220), rgb(240, 200, 40)],
                );
                toy(builder, base, builder.chance(0.5), colour, None)?;
            }
            1 => {
                let half = v3(
                    builder.range(0.12, 0.25),
                    builder.range(0.08, 0.18),
                    builder.range(0.1, 0.2),
                );
                cardboard_box(builder, base, yaw, half, None)?;
            }
            2 => {
                let colour = choose(
                    builder,
                    &[rgb(120, 80, 50), rgb(40, 60, 90), rgb(150, 40, 60)],
                );
                bag(builder, base, yaw, colour, None)?;
            }
            _ => {
                clothes(
                    builder,
                    base,
                    0.18,
                    &[rgb(200, 200, 190), rgb(60, 70, 110), rgb(140, 60, 50)],
                    None,
                )?;
            }
        }
    }
    Ok(())
}

/// Painted plaster for walls.
pub fn wall_paint(colour: Colour) -> Material {
    Material::textured(
        colour,
        Texture::Mottled {
            size: 0.5,
            strength: 0.04,
        },
    )
}

/// Floor boards.
pub fn floorboards(colour: Colour) -> Material {
    Material::textured(colour, Texture::Planks { width: 0.16 })
}

/// Floor or wall tiles.
pub fn tiles(colour: Colour, size: f64) -> Material {
    Material::textured(
        colour,
        Texture::Tiles {
            size,
            grout: [colour[0] * 0.7, colour[1] * 0.7, colour[2] * 0.7],
        },
    )
}

/// One of `choices`, picked by the builder's generator.
pub fn choose(builder: &SceneBuilder, choices: &[Colour]) -> Colour {
    match choices.len() {
        0 => [0.5, 0.5, 0.5],
        count => choices[builder.below(count as u32) as usize],
    }
}

/// Wall colours used across the flat.
pub const WALL_COLOURS: [Colour; 5] = [
    [0.86, 0.84, 0.78],
    [0.78, 0.84, 0.82],
    [0.88, 0.82, 0.74],
    [0.8, 0.8, 0.86],
    [0.9, 0.88, 0.84],
];

/// Wood tones used for floors and furniture.
pub const WOOD_COLOURS: [Colour; 4] = [
    [0.62, 0.45, 0.3],
    [0.72, 0.56, 0.38],
    [0.5, 0.36, 0.24],
    [0.78, 0.66, 0.5],
];

/// Glaze colours shared by mugs and vases, so they look alike.
pub const GLAZE_COLOURS: [Colour; 4] = [
    [0.85, 0.82, 0.74],
    [0.35, 0.5, 0.62],
    [0.72, 0.3, 0.25],
    [0.9, 0.9, 0.9],
];

/// A sky seen through a window, and a picture on a television close to it (tv versus window).
pub const SKY: Colour = [0.55, 0.72, 0.9];
