//! Furniture, fittings and appliances built from solids: tables, chairs, sofas, beds, cabinets, shelves,
//! counters, desks, rugs, doors, windows, stairs, fridges, stoves, microwaves, sinks, televisions and lamps.
//!
//! Owns: the proportions and part layout of each piece. Every function adds one instance (class looked up by
//! name) and returns it with the heights later objects rest at.
//! Must not: choose where pieces go in a room (layouts do) or shade anything.

use super::builder::{Instance, SceneBuilder};
use super::geometry::{v3, Shape, Vec3, Yaw};
use super::material::{rgb, tint, Colour, Material, Texture};
use super::RenderError;

/// A wooden material of this colour.
pub fn wood(colour: Colour) -> Material {
    Material::textured(colour, Texture::Wood { spacing: 0.035 })
}

/// A painted or lacquered surface with a faint mottle.
pub fn painted(colour: Colour) -> Material {
    Material::textured(
        colour,
        Texture::Mottled {
            size: 0.4,
            strength: 0.05,
        },
    )
}

/// Brushed metal.
pub fn metal(colour: Colour) -> Material {
    Material::textured(
        colour,
        Texture::Mottled {
            size: 0.06,
            strength: 0.04,
        },
    )
}

/// Woven upholstery.
pub fn fabric(colour: Colour) -> Material {
    Material::textured(colour, Texture::Fabric)
}

/// A piece placed on the floor: floor position of its centre and the way its front faces.
#[derive(Clone, Copy, Debug)]
pub struct Spot {
    pub x: f64,
    pub z: f64,
    pub yaw: Yaw,
}

impl Spot {
    pub fn new(x: f64, z: f64, yaw: Yaw) -> Spot {
        Spot { x, z, yaw }
    }

    /// The world point at `offset` in this piece's frame (y measured from the floor).
    pub fn at(&self, offset: Vec3) -> Vec3 {
        v3(self.x, 0.0, self.z) + self.yaw.apply(offset)
    }
}

/// A table: top of `width` x `depth` at `height`, four legs. Returns the table and its top height.
pub fn table(
    builder: &SceneBuilder,
    spot: Spot,
    size: Vec3,
    material: Material,
    support: Option<Instance>,
) -> Result<(Instance, f64), RenderError> {
    table_like(builder, "table", spot, size, material, support)
}

/// A desk: like a table with a drawer block under one side.
pub fn desk(
    builder: &SceneBuilder,
    spot: Spot,
    size: Vec3,
    material: Material,
) -> Result<(Instance, f64), RenderError> {
    let (desk, top) = table_like(builder, "desk", spot, size, material, None)?;
    let block = v3(size.x * 0.18, (top - 0.05) * 0.5, size.z * 0.45);
    builder.cuboid_at(
        desk,
        spot.at(Vec3::default()),
        spot.yaw,
        v3(size.x * 0.5 - block.x - 0.03, block.y + 0.02, 0.0),
        block,
        painted(tint(material.albedo, 0.92)),
    );
    Ok((desk, top))
}

fn table_like(
    builder: &SceneBuilder,
    class: &str,
    spot: Spot,
    size: Vec3,
    material: Material,
    support: Option<Instance>,
) -> Result<(Instance, f64), RenderError> {
    let instance = builder.object(class, support)?;
    let thickness = 0.04;
    let base = if support.is_some() { 0.008 } else { 0.0 };
    let top = base + size.y;
    let anchor = spot.at(Vec3::default());
    builder.cuboid_at(
        instance,
        anchor,
        spot.yaw,
        v3(0.0, top - thickness * 0.5, 0.0),
        v3(size.x * 0.5, thickness * 0.5, size.z * 0.5),
        material,
    );
    let leg = 0.025;
    let leg_height = (top - thickness - base) * 0.5;
    for (sx, sz) in [(-1.0, -1.0), (1.0, -1.0), (-1.0, 1.0), (1.0, 1.0)] {
        builder.cuboid_at(
            instance,
            anchor,
            spot.yaw,
            v3(
                sx * (size.x * 0.5 - 0.06),
                base + leg_height,
                sz * (size.z * 0.5 - 0.06),
            ),
            v3(leg, leg_height, leg),
            material,
        );
    }
    Ok((instance, top))
}

/// A chair facing `spot.yaw`: four legs, a seat and a back. Returns the chair and its seat height.
pub fn chair(
    builder: &SceneBuilder,
    spot: Spot,
    material: Material,
    support: Option<Instance>,
) -> Result<(Instance, f64), RenderError> {
    let instance = builder.object("chair", support)?;
    let anchor = spot.at(Vec3::default());
    let seat = 0.46;
    let half = 0.22;
    builder.cuboid_at(
        instance,
        anchor,
        spot.yaw,
        v3(0.0, seat - 0.02, 0.0),
        v3(half, 0.02, half),
        material,
    );
    for (sx, sz) in [(-1.0, -1.0), (1.0, -1.0), (-1.0, 1.0), (1.0, 1.0)] {
        builder.cuboid_at(
            instance,
            anchor,
            spot.yaw,
            v3(sx * (half - 0.03), (seat - 0.04) * 0.5, sz * (half - 0.03)),
            v3(0.018, (seat - 0.04) * 0.5, 0.018),
            material,
        );
    }
    // The back rises from the rear edge (local -z).
    builder.cuboid_at(
        instance,
        anchor,
        spot.yaw,
        v3(0.0, seat + 0.25, -half + 0.02),
        v3(half, 0.2, 0.018),
        material,
    );
    for sx in [-1.0, 1.0] {
        builder.cuboid_at(
            instance,
            anchor,
            spot.yaw,
            v3(sx * (half - 0.03), seat + 0.04, -half + 0.02),
            v3(0.018, 0.06, 0.018),
            material,
        );
    }
    Ok((instance, seat))
}

/// A sofa of `width` facing `spot.yaw`. Returns the sofa and its seat height.
pub fn sofa(
    builder: &SceneBuilder,
    spot: Spot,
    width: f64,
    material: Material,
) -> Result<(Instance, f64), RenderError> {
    let instance = builder.object("sofa", None)?;
    let anchor = spot.at(Vec3::default());
    let depth = 0.9;
    let seat = 0.45;
    let yaw = spot.yaw;
    // Base.
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, 0.2, 0.0),
        v3(width * 0.5, 0.16, depth * 0.5),
        fabric(tint(material.albedo, 0.85)),
    );
    // Seat cushion.
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, seat - 0.05, 0.06),
        v3(width * 0.5 - 0.16, 0.07, depth * 0.5 - 0.12),
        material,
    );
    // Back, slightly reclined: an extruded profile in (z, y).
    let back = Shape::extruded_profile(
        &[(-0.45, 0.36), (-0.26, 0.36), (-0.3, 0.88), (-0.45, 0.86)],
        width * 0.5,
    );
    builder.part(instance, back, anchor, yaw, material);
    for side in [-1.0, 1.0] {
        builder.cuboid_at(
            instance,
            anchor,
            yaw,
            v3(side * (width * 0.5 - 0.08), 0.5, 0.0),
            v3(0.08, 0.16, depth * 0.5),
            material,
        );
    }
    Ok((instance, seat + 0.02))
}

/// A bed with its headboard against the wall behind `spot` (local -z). Returns bed and mattress top height.
pub fn bed(
    builder: &SceneBuilder,
    spot: Spot,
    width: f64,
    length: f64,
    frame: Material,
    sheet: Material,
) -> Result<(Instance, f64), RenderError> {
    let instance = builder.object("bed", None)?;
    let anchor = spot.at(Vec3::default());
    let yaw = spot.yaw;
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, 0.2, 0.0),
        v3(width * 0.5, 0.08, length * 0.5),
        frame,
    );
    for (sx, sz) in [(-1.0, -1.0), (1.0, -1.0), (-1.0, 1.0), (1.0, 1.0)] {
        builder.cuboid_at(
            instance,
            anchor,
            yaw,
            v3(sx * (width * 0.5 - 0.05), 0.06, sz * (length * 0.5 - 0.05)),
            v3(0.035, 0.06, 0.035),
            frame,
        );
    }
    let mattress_top = 0.5;
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, (mattress_top + 0.28) * 0.5, 0.0),
        v3(
            width * 0.5 - 0.02,
            (mattress_top - 0.28) * 0.5,
            length * 0.5 - 0.02,
        ),
        sheet,
    );
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, 0.5, -length * 0.5 + 0.03),
        v3(width * 0.5 + 0.03, 0.5, 0.03),
        frame,
    );
    Ok((instance, mattress_top))
}

/// A closed cabinet (doors with a seam and handles) of `size`, its back towards local -z.
pub fn cabinet(
    builder: &SceneBuilder,
    spot: Spot,
    size: Vec3,
    material: Material,
) -> Result<Instance, RenderError> {
    let instance = builder.object("cabinet", None)?;
    cabinet_body(builder, instance, spot, size, material, 0.0);
    Ok(instance)
}

/// A cabinet hung on a wall with its bottom at `base` metres.
pub fn hanging_cabinet(
    builder: &SceneBuilder,
    spot: Spot,
    size: Vec3,
    material: Material,
    base: f64,
) -> Result<Instance, RenderError> {
    let instance = builder.object("cabinet", None)?;
    cabinet_body(builder, instance, spot, size, material, base);
    Ok(instance)
}

fn cabinet_body(
    builder: &SceneBuilder,
    instance: Instance,
    spot: Spot,
    size: Vec3,
    material: Material,
    base: f64,
) {
    let anchor = spot.at(Vec3::default());
    let yaw = spot.yaw;
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, base + size.y * 0.5, 0.0),
        size * 0.5,
        material,
    );
    let doors = if size.x > 0.7 { 2 } else { 1 };
    let door_width = size.x / doors as f64;
    let seam = tint(material.albedo, 0.55);
    let handle = metal(rgb(170, 170, 175));
    for door in 0..doors {
        let left = -size.x * 0.5 + door as f64 * door_width;
        if door > 0 {
            builder.cuboid_at(
                instance,
                anchor,
                yaw,
                v3(left, base + size.y * 0.5, size.z * 0.5 + 0.001),
                v3(0.004, size.y * 0.46, 0.002),
                Material::plain(seam),
            );
        }
        let handle_x = if door % 2 == 0 {
            left + door_width - 0.06
        } else {
            left + 0.06
        };
        builder.cuboid_at(
            instance,
            anchor,
            yaw,
            v3(handle_x, base + size.y * 0.72, size.z * 0.5 + 0.012),
            v3(0.01, 0.05, 0.012),
            handle,
        );
    }
}

/// An open bookcase of `size` with `shelves` boards; returns it and the top height of each board.
pub fn bookcase(
    builder: &SceneBuilder,
    spot: Spot,
    size: Vec3,
    shelves: u32,
    material: Material,
) -> Result<(Instance, Vec<f64>), RenderError> {
    let instance = builder.object("shelf", None)?;
    let anchor = spot.at(Vec3::default());
    let yaw = spot.yaw;
    let board = 0.018;
    for side in [-1.0, 1.0] {
        builder.cuboid_at(
            instance,
            anchor,
            yaw,
            v3(side * (size.x * 0.5 - board), size.y * 0.5, 0.0),
            v3(board, size.y * 0.5, size.z * 0.5),
            material,
        );
    }
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, size.y * 0.5, -size.z * 0.5 + 0.005),
        v3(size.x * 0.5, size.y * 0.5, 0.005),
        Material::plain(tint(material.albedo, 0.7)),
    );
    let mut levels = Vec::new();
    for level in 0..=shelves {
        let y = 0.04 + level as f64 * (size.y - 0.06) / shelves as f64;
        builder.cuboid_at(
            instance,
            anchor,
            yaw,
            v3(0.0, y, 0.0),
            v3(size.x * 0.5 - board, board, size.z * 0.5),
            material,
        );
        levels.push(y + board);
    }
    levels.pop();
    Ok((instance, levels))
}

/// A wall shelf: one board on brackets at `height`. Returns it and its top height.
pub fn wall_shelf(
    builder: &SceneBuilder,
    centre: Vec3,
    width: f64,
    depth: f64,
    yaw: Yaw,
    material: Material,
) -> Result<(Instance, f64), RenderError> {
    let instance = builder.object("shelf", None)?;
    builder.cuboid(
        instance,
        centre,
        v3(width * 0.5, 0.015, depth * 0.5),
        yaw,
        material,
    );
    Ok((instance, centre.y + 0.015))
}

/// A kitchen or bathroom counter on base cabinets: returns (counter, cabinets, top height).
pub fn counter_run(
    builder: &SceneBuilder,
    spot: Spot,
    length: f64,
    cabinet_material: Material,
    top_material: Material,
    units: u32,
) -> Result<(Instance, Vec<Instance>, f64), RenderError> {
    let depth = 0.6;
    let height = 0.9;
    let unit_width = length / units as f64;
    let mut cabinets = Vec::new();
    for unit in 0..units {
        let offset = -length * 0.5 + unit_width * (unit as f64 + 0.5);
        let unit_spot = Spot::new(
            spot.at(v3(offset, 0.0, -0.02)).x,
            spot.at(v3(offset, 0.0, -0.02)).z,
            spot.yaw,
        );
        let instance = builder.object("cabinet", None)?;
        cabinet_body(
            builder,
            instance,
            unit_spot,
            v3(unit_width - 0.006, height - 0.14, depth - 0.04),
            cabinet_material,
            0.1,
        );
        builder.cuboid_at(
            instance,
            unit_spot.at(Vec3::default()),
            spot.yaw,
            v3(0.0, 0.05, -0.04),
            v3(unit_width * 0.5 - 0.003, 0.05, depth * 0.5 - 0.06),
            Material::plain(rgb(40, 38, 36)),
        );
        cabinets.push(instance);
    }
    let counter = builder.object("counter", cabinets.first().copied())?;
    builder.cuboid_at(
        counter,
        spot.at(Vec3::default()),
        spot.yaw,
        v3(0.0, height - 0.02, 0.0),
        v3(length * 0.5 + 0.01, 0.02, depth * 0.5),
        top_material,
    );
    Ok((counter, cabinets, height))
}

/// A sink set into a counter at `centre` (top surface point): basin rim, dark basin and a tap.
pub fn sink(
    builder: &SceneBuilder,
    centre: Vec3,
    yaw: Yaw,
    width: f64,
    counter: Instance,
) -> Result<Instance, RenderError> {
    let instance = builder.object("sink", Some(counter))?;
    let steel = metal(rgb(185, 188, 192));
    builder.cuboid(
        instance,
        centre + v3(0.0, 0.006, 0.0),
        v3(width * 0.5, 0.006, 0.22),
        yaw,
        steel,
    );
    builder.cuboid(
        instance,
        centre + v3(0.0, 0.0125, 0.0),
        v3(width * 0.5 - 0.04, 0.001, 0.18),
        yaw,
        metal(rgb(120, 124, 130)),
    );
    let tap_base = centre + yaw.apply(v3(0.0, 0.0, -0.25));
    builder.cylinder(instance, tap_base, 0.018, 0.26, steel);
    builder.cuboid(
        instance,
        tap_base + v3(0.0, 0.25, 0.0) + yaw.apply(v3(0.0, 0.0, 0.08)),
        v3(0.014, 0.014, 0.09),
        yaw,
        steel,
    );
    Ok(instance)
}

/// A tall fridge with a freezer seam and a long handle. White or steel: close to a tall cabinet on purpose.
pub fn fridge(builder: &SceneBuilder, spot: Spot, colour: Colour) -> Result<Instance, RenderError> {
    let instance = builder.object("fridge", None)?;
    let anchor = spot.at(Vec3::default());
    let size = v3(0.62, 1.82, 0.64);
    builder.cuboid_at(
        instance,
        anchor,
        spot.yaw,
        v3(0.0, size.y * 0.5, 0.0),
        size * 0.5,
        metal(colour),
    );
    builder.cuboid_at(
        instance,
        anchor,
        spot.yaw,
        v3(0.0, 1.22, size.z * 0.5 + 0.001),
        v3(size.x * 0.49, 0.005, 0.002),
        Material::plain(tint(colour, 0.5)),
    );
    for (y, half) in [(1.5, 0.2), (0.8, 0.3)] {
        builder.cuboid_at(
            instance,
            anchor,
            spot.yaw,
            v3(size.x * 0.5 - 0.06, y, size.z * 0.5 + 0.025),
            v3(0.012, half, 0.015),
            metal(rgb(150, 150, 155)),
        );
    }
    Ok(instance)
}

/// A freestanding cooker: body, oven door window, black hob with four rings.
pub fn stove(
    builder: &SceneBuilder,
    spot: Spot,
    height: f64,
) -> Result<(Instance, f64), RenderError> {
    let instance = builder.object("stove", None)?;
    let anchor = spot.at(Vec3::default());
    let yaw = spot.yaw;
    let body = metal(rgb(212, 212, 208));
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, height * 0.5 - 0.02, 0.0),
        v3(0.29, height * 0.5 - 0.02, 0.29),
        body,
    );
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, height - 0.03, 0.0),
        v3(0.3, 0.012, 0.3),
        Material::plain(rgb(28, 28, 30)),
    );
    builder.cuboid_at(
        instance,
        anchor,
        yaw,
        v3(0.0, height * 0.42, 0.291),
        v3(0.2, 0.14, 0.004),
        Material::plain(rgb(35, 32, 30)),
    );
    for (sx, sz) in [(-1.0, -1.0), (1.0, -1.0), (-1.0, 1.0), (1.0, 1.0)] {
        let ring = anchor + yaw.apply(v3(sx * 0.13, height - 0.018, sz * 0.13));
        builder.cylinder(
            instance,
            ring,
            0.075,
            0.006,
            Material::plain(rgb(60, 58, 58)),
        );
    }
    Ok((instance, height))
}

/// A microwave on a surface at `base` (the surface point under its centre).
pub fn microwave(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    support: Instance,
) -> Result<Instance, RenderError> {
    let instance = builder.object("microwave", Some(support))?;
    builder.cuboid(
        instance,
        base + v3(0.0, 0.15, 0.0),
        v3(0.25, 0.15, 0.19),
        yaw,
        metal(rgb(225, 225, 222)),
    );
    builder.cuboid(
        instance,
        base + v3(0.0, 0.15, 0.0) + yaw.apply(v3(-0.04, 0.0, 0.191)),
        v3(0.16, 0.1, 0.002),
        yaw,
        Material::plain(rgb(30, 32, 34)),
    );
    Ok(instance)
}

/// A television: a thin dark box with a glowing picture; `on_wall` hangs it, otherwise it stands on `support`.
pub fn television(
    builder: &SceneBuilder,
    centre: Vec3,
    yaw: Yaw,
    width: f64,
    support: Option<Instance>,
    picture: Colour,
) -> Result<Instance, RenderError> {
    let instance = builder.object("tv", support)?;
    let height = width * 0.58;
    builder.cuboid(
        instance,
        centre,
        v3(width * 0.5, height * 0.5, 0.03),
        yaw,
        Material::plain(rgb(22, 22, 24)),
    );
    builder.cuboid(
        instance,
        centre + yaw.apply(v3(0.0, 0.0, 0.031)),
        v3(width * 0.47, height * 0.45, 0.001),
        yaw,
        Material::textured(picture, Texture::Picture).glowing(0.75),
    );
    if support.is_some() {
        builder.cuboid(
            instance,
            centre - v3(0.0, height * 0.5 + 0.03, 0.0),
            v3(0.12, 0.03, 0.08),
            yaw,
            Material::plain(rgb(30, 30, 32)),
        );
    }
    Ok(instance)
}

/// A lamp standing at `base`: a round foot, a pole and a glowing shade; `height` to the shade top.
pub fn lamp(
    builder: &SceneBuilder,
    base: Vec3,
    height: f64,
    shade: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("lamp", support)?;
    let scale = height / 1.6;
    let foot = metal(rgb(60, 58, 55));
    builder.cylinder(instance, base, 0.14 * scale.max(0.6), 0.02, foot);
    builder.cylinder(instance, base, 0.012, height - 0.3 * scale, foot);
    builder.part(
        instance,
        Shape::octagonal_frustum(0.2 * scale.max(0.6), 0.13 * scale.max(0.6), 0.3 * scale),
        base + v3(0.0, height - 0.3 * scale, 0.0),
        Yaw::NONE,
        fabric(shade).glowing(0.9),
    );
    Ok(instance)
}

/// A flat rug on the floor, `half_width` x `half_depth`.
pub fn rug(
    builder: &SceneBuilder,
    spot: Spot,
    half_width: f64,
    half_depth: f64,
    colour: Colour,
    border: Colour,
) -> Result<Instance, RenderError> {
    let instance = builder.object("rug", None)?;
    builder.cuboid(
        instance,
        spot.at(v3(0.0, 0.004, 0.0)),
        v3(half_width, 0.004, half_depth),
        spot.yaw,
        Material::textured(
            colour,
            Texture::RugBorder {
                other: border,
                half_width,
                half_depth,
            },
        ),
    );
    Ok(instance)
}

/// Which wall a fitting is on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Wall {
    Back,
    Left,
    Right,
}

/// The centre point on `wall` at horizontal position `along` (x for the back wall, z for side walls) and
/// height `y`, pushed `out` metres into the room, with the yaw that makes local +z face into the room.
pub fn on_wall(builder: &SceneBuilder, wall: Wall, along: f64, y: f64, out: f64) -> (Vec3, Yaw) {
    let room = builder.room;
    match wall {
        Wall::Back => (v3(along, y, room.depth - out), Yaw::facing(0.0, -1.0)),
        Wall::Left => (v3(-room.half_width + out, y, along), Yaw::facing(1.0, 0.0)),
        Wall::Right => (v3(room.half_width - out, y, along), Yaw::facing(-1.0, 0.0)),
    }
}

/// A door in `wall` centred at `along`: a slightly proud panel with a frame and a handle.
pub fn door(
    builder: &SceneBuilder,
    wall: Wall,
    along: f64,
    colour: Colour,
) -> Result<Instance, RenderError> {
    let instance = builder.object("door", None)?;
    let (centre, yaw) = on_wall(builder, wall, along, 1.02, 0.02);
    builder.cuboid(
        instance,
        centre,
        v3(0.46, 1.02, 0.02),
        yaw,
        painted(tint(colour, 0.9)),
    );
    builder.cuboid(
        instance,
        centre + yaw.apply(v3(0.0, 0.0, 0.005)),
        v3(0.4, 0.97, 0.02),
        yaw,
        wood(colour),
    );
    builder.part(
        instance,
        Shape::Cylinder {
            radius: 0.03,
            height: 0.03,
        },
        centre + yaw.apply(v3(0.3, -0.05, 0.04)),
        Yaw::NONE,
        metal(rgb(190, 180, 140)),
    );
    Ok(instance)
}

/// A window in `wall`: glowing sky behind a frame with a cross bar.
pub fn window(
    builder: &SceneBuilder,
    wall: Wall,
    along: f64,
    size: (f64, f64),
    sill_height: f64,
    sky: Colour,
) -> Result<Instance, RenderError> {
    let instance = builder.object("window", None)?;
    let (half_width, half_height) = (size.0 * 0.5, size.1 * 0.5);
    let (centre, yaw) = on_wall(builder, wall, along, sill_height + half_height, 0.004);
    builder.cuboid(
        instance,
        centre,
        v3(half_width, half_height, 0.004),
        yaw,
        Material::textured(sky, Texture::Sky).glowing(0.85),
    );
    let frame = painted(rgb(236, 234, 228));
    let bar = 0.035;
    for (offset, half) in [
        (v3(0.0, half_height, 0.02), v3(half_width + bar, bar, 0.02)),
        (v3(0.0, -half_height, 0.02), v3(half_width + bar, bar, 0.03)),
        (v3(0.0, 0.0, 0.02), v3(half_width, bar * 0.5, 0.015)),
    ] {
        builder.cuboid(instance, centre + yaw.apply(offset), half, yaw, frame);
    }
    for x in [-half_width, 0.0, half_width] {
        builder.cuboid(
            instance,
            centre + yaw.apply(v3(x, 0.0, 0.02)),
            v3(bar * 0.6, half_height, 0.015),
            yaw,
            frame,
        );
    }
    Ok(instance)
}

/// A straight flight of `steps` stairs rising away from `spot` (towards local +z), `width` wide.
pub fn stairs(
    builder: &SceneBuilder,
    spot: Spot,
    width: f64,
    steps: u32,
    tread: Material,
) -> Result<Instance, RenderError> {
    let instance = builder.object("stairs", None)?;
    let rise = 0.18;
    let run = 0.26;
    let anchor = spot.at(Vec3::default());
    for step in 0..steps {
        let top = rise * (step as f64 + 1.0);
        builder.cuboid_at(
            instance,
            anchor,
            spot.yaw,
            v3(0.0, top * 0.5, run * (step as f64 + 0.5)),
            v3(width * 0.5, top * 0.5, run * 0.5),
            if step % 2 == 0 {
                tread
            } else {
                tread.seeded(step as u64 + 77)
            },
        );
        builder.cuboid_at(
            instance,
            anchor,
            spot.yaw,
            v3(0.0, top - 0.005, run * step as f64 + 0.015),
            v3(width * 0.5, 0.006, 0.018),
            Material::plain(tint(tread.albedo, 0.6)),
        );
    }
    Ok(instance)
}
