//! Fittings and appliances: doors, windows, stairs, rugs, lamps, televisions, fridges, cookers, microwaves
//! and sinks.
//!
//! Owns: the proportions and part layout of each. Every function adds one instance (class looked up by name)
//! and returns it. A fridge is drawn close to a tall white cabinet, and a television shows a sky like a window.
//! Must not: choose where pieces go in a room (layouts do) or shade anything.

use super::builder::{Instance, SceneBuilder};
use super::furniture::{fabric, metal, painted, wood, Spot};
use super::geometry::{v3, Shape, Vec3, Yaw};
use super::material::{rgb, tint, Colour, Material, Texture};
use super::RenderError;

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

/// A television: a thin dark box with a glowing picture of an open sky (so it resembles a window); `on_wall` hangs it, otherwise it stands on `support`.
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
        Material::textured(picture, Texture::Sky).glowing(0.8),
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
