//! Furniture built from solids: tables, desks, chairs, sofas, beds, cabinets, bookcases, wall shelves and
//! counters on base cabinets, plus the common surface materials (wood, paint, metal, fabric).
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
