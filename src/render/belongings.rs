//! Soft and loose belongings: boxes, bags, shoes, clothes, pillows, blankets, plants, toys and towels.
//!
//! Owns: each object's proportions. Every function adds one instance resting at a given point and returns it.
//! A pillow is close in size and colour to a curled-up pet on purpose.
//! Must not: choose where objects go (layouts do) or shade anything.

use super::builder::{Instance, SceneBuilder};
use super::furniture::{fabric, painted};
use super::geometry::{v3, Shape, Vec3, Yaw};
use super::material::{rgb, tint, Colour, Material, Texture};
use super::RenderError;

/// A cardboard box with a tape strip standing at `base`.
pub fn cardboard_box(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    half: Vec3,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("box", support)?;
    builder.cuboid(
        instance,
        base + v3(0.0, half.y, 0.0),
        half,
        yaw,
        Material::textured(
            rgb(176, 138, 92),
            Texture::Mottled {
                size: 0.06,
                strength: 0.12,
            },
        ),
    );
    builder.cuboid(
        instance,
        base + v3(0.0, half.y * 2.0 + 0.001, 0.0),
        v3(0.03, 0.001, half.z + 0.001),
        yaw,
        Material::plain(rgb(200, 180, 130)),
    );
    Ok(instance)
}

/// A soft bag with a strap, standing at `base`.
pub fn bag(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("bag", support)?;
    builder.cuboid(
        instance,
        base + v3(0.0, 0.15, 0.0),
        v3(0.18, 0.15, 0.08),
        yaw,
        fabric(colour),
    );
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.3, 0.0),
        v3(0.18, 0.05, 0.08),
        yaw,
        fabric(colour),
    );
    builder.cuboid(
        instance,
        base + v3(0.0, 0.4, 0.0),
        v3(0.1, 0.012, 0.012),
        yaw,
        Material::plain(tint(colour, 0.6)),
    );
    for side in [-1.0, 1.0] {
        builder.cuboid(
            instance,
            base + v3(0.0, 0.36, 0.0) + yaw.apply(v3(side * 0.1, 0.0, 0.0)),
            v3(0.012, 0.05, 0.012),
            yaw,
            Material::plain(tint(colour, 0.6)),
        );
    }
    Ok(instance)
}

/// One shoe at `base`, toe towards local +z.
pub fn shoe(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("shoe", support)?;
    builder.cuboid(
        instance,
        base + v3(0.0, 0.012, 0.0),
        v3(0.045, 0.012, 0.135),
        yaw,
        Material::plain(rgb(235, 232, 225)),
    );
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.03, 0.0),
        v3(0.045, 0.05, 0.13),
        yaw,
        Material::textured(
            colour,
            Texture::Mottled {
                size: 0.03,
                strength: 0.12,
            },
        ),
    );
    Ok(instance)
}

/// A pair of shoes side by side at `base`.
pub fn shoe_pair(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    support: Option<Instance>,
) -> Result<[Instance; 2], RenderError> {
    let left = shoe(
        builder,
        base + yaw.apply(v3(-0.06, 0.0, 0.0)),
        yaw,
        colour,
        support,
    )?;
    let right = shoe(
        builder,
        base + yaw.apply(v3(0.06, 0.0, 0.01)),
        yaw,
        colour,
        support,
    )?;
    Ok([left, right])
}

/// A heap of clothes: several flattened, overlapping blobs in a few fabric colours.
pub fn clothes(
    builder: &SceneBuilder,
    base: Vec3,
    spread: f64,
    colours: &[Colour],
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("clothes", support)?;
    let count = 4 + builder.below(3);
    for index in 0..count {
        let dx = builder.range(-spread, spread);
        let dz = builder.range(-spread * 0.6, spread * 0.6);
        let colour = colours
            .get(index as usize % colours.len().max(1))
            .copied()
            .unwrap_or(rgb(90, 90, 120));
        let yaw = Yaw::from_half_tangent(builder.range(-0.6, 0.6));
        builder.ellipsoid(
            instance,
            base + v3(dx, 0.025 + index as f64 * 0.012, dz),
            v3(spread * 0.7, 0.035, spread * 0.45),
            yaw,
            fabric(colour),
        );
    }
    Ok(instance)
}

/// A pillow (a flattened ellipsoid) lying at `base`, or leaning when `upright`.
pub fn pillow(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    upright: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("pillow", support)?;
    let radii = if upright {
        v3(0.22, 0.2, 0.07)
    } else {
        v3(0.3, 0.07, 0.2)
    };
    builder.ellipsoid(
        instance,
        base + v3(0.0, radii.y * 0.9, 0.0),
        radii,
        yaw,
        fabric(colour),
    );
    Ok(instance)
}

/// A blanket: a thin slab over a surface of `half` size centred at `base`, hanging a little over its sides.
pub fn blanket(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    half: Vec3,
    colour: Colour,
    stripe: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("blanket", support)?;
    let material = Material::textured(
        colour,
        Texture::Stripes {
            period: 0.16,
            other: stripe,
        },
    );
    builder.cuboid(instance, base + v3(0.0, half.y, 0.0), half, yaw, material);
    for side in [-1.0, 1.0] {
        builder.cuboid(
            instance,
            base + v3(0.0, half.y - 0.12, 0.0) + yaw.apply(v3(side * (half.x + 0.01), 0.0, 0.0)),
            v3(0.012, 0.13, half.z),
            yaw,
            material,
        );
    }
    Ok(instance)
}

/// A potted plant: a pot and a few clumps of leaves; `height` overall.
pub fn plant(
    builder: &SceneBuilder,
    base: Vec3,
    height: f64,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("plant", support)?;
    let pot = height * 0.3;
    builder.part(
        instance,
        Shape::octagonal_frustum(pot * 0.45, pot * 0.6, pot),
        base,
        Yaw::NONE,
        painted(rgb(180, 95, 60)),
    );
    let leaves = Material::textured(rgb(70, 130, 60), Texture::Leaves);
    let clumps = [
        (0.0, 0.62, 0.0, 0.42),
        (-0.12, 0.55, 0.05, 0.3),
        (0.12, 0.58, -0.04, 0.32),
        (0.02, 0.8, 0.03, 0.28),
    ];
    for (dx, dy, dz, r) in clumps {
        builder.ellipsoid(
            instance,
            base + v3(dx * height, dy * height, dz * height),
            v3(r * height * 0.7, r * height * 0.6, r * height * 0.7),
            Yaw::NONE,
            leaves,
        );
    }
    Ok(instance)
}

/// A toy: a bright ball, or a little teddy bear of ellipsoids when `bear`.
pub fn toy(
    builder: &SceneBuilder,
    base: Vec3,
    bear: bool,
    colour: Colour,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("toy", support)?;
    if bear {
        let fur = Material::textured(colour, Texture::Fabric);
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.09, 0.0),
            v3(0.08, 0.09, 0.07),
            Yaw::NONE,
            fur,
        );
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.22, 0.0),
            v3(0.06, 0.06, 0.06),
            Yaw::NONE,
            fur,
        );
        for side in [-1.0, 1.0] {
            builder.ellipsoid(
                instance,
                base + v3(side * 0.045, 0.28, 0.0),
                v3(0.022, 0.022, 0.015),
                Yaw::NONE,
                fur,
            );
            builder.ellipsoid(
                instance,
                base + v3(side * 0.06, 0.03, 0.05),
                v3(0.03, 0.03, 0.04),
                Yaw::NONE,
                fur,
            );
        }
    } else {
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.1, 0.0),
            v3(0.1, 0.1, 0.1),
            Yaw::NONE,
            Material::textured(
                colour,
                Texture::Stripes {
                    period: 0.06,
                    other: rgb(245, 240, 230),
                },
            ),
        );
    }
    Ok(instance)
}

/// A towel hanging flat against a wall-facing frame at `centre`, or folded on a surface when `folded`.
pub fn towel(
    builder: &SceneBuilder,
    centre: Vec3,
    yaw: Yaw,
    colour: Colour,
    folded: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("towel", support)?;
    let material = Material::textured(
        colour,
        Texture::Stripes {
            period: 0.05,
            other: tint(colour, 0.8),
        },
    );
    if folded {
        builder.cuboid(
            instance,
            centre + v3(0.0, 0.03, 0.0),
            v3(0.16, 0.03, 0.11),
            yaw,
            material,
        );
    } else {
        builder.cuboid(instance, centre, v3(0.22, 0.3, 0.015), yaw, material);
        builder.cylinder(
            instance,
            centre + v3(0.0, 0.3, 0.0) - v3(0.0, 0.0, 0.0),
            0.012,
            0.012,
            Material::plain(rgb(170, 170, 175)),
        );
    }
    Ok(instance)
}
