//! People and pets, in our own simple style: a person standing or seated, a dog standing or curled up, a cat
//! sitting or curled up.
//!
//! Owns: the body proportions of each figure. A curled pet is built to resemble a pillow in size and outline,
//! which is one of the look-alike cases the demo scenes must contain.
//! Must not: choose where figures go (layouts do).

use super::builder::{Instance, SceneBuilder};
use super::furniture::{fabric, Spot};
use super::geometry::{v3, Vec3, Yaw};
use super::material::{rgb, tint, Colour, Material, Texture};
use super::RenderError;

/// How a person is posed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Pose {
    Standing,
    /// Seated with the seat at this height in millimetres.
    Seated {
        seat_millimetres: u32,
    },
}

/// Clothing and skin colours of a person.
#[derive(Clone, Copy, Debug)]
pub struct Outfit {
    pub top: Colour,
    pub trousers: Colour,
    pub skin: Colour,
    pub hair: Colour,
}

/// A person at `spot` facing `spot.yaw`.
pub fn person(
    builder: &SceneBuilder,
    spot: Spot,
    pose: Pose,
    outfit: Outfit,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("person", support)?;
    let anchor = spot.at(Vec3::default());
    let yaw = spot.yaw;
    let skin = Material::textured(
        outfit.skin,
        Texture::Mottled {
            size: 0.05,
            strength: 0.05,
        },
    );
    let top = fabric(outfit.top);
    let trousers = fabric(outfit.trousers);
    let hip = match pose {
        Pose::Standing => {
            for side in [-1.0, 1.0] {
                builder.cuboid_at(
                    instance,
                    anchor,
                    yaw,
                    v3(side * 0.09, 0.44, 0.0),
                    v3(0.065, 0.42, 0.07),
                    trousers,
                );
                builder.cuboid_at(
                    instance,
                    anchor,
                    yaw,
                    v3(side * 0.09, 0.03, 0.04),
                    v3(0.055, 0.03, 0.12),
                    Material::plain(rgb(40, 36, 34)),
                );
            }
            0.86
        }
        Pose::Seated { seat_millimetres } => {
            let seat = seat_millimetres as f64 / 1000.0;
            for side in [-1.0, 1.0] {
                // Thighs forward along the seat, shins down to the floor.
                builder.cuboid_at(
                    instance,
                    anchor,
                    yaw,
                    v3(side * 0.09, seat + 0.07, 0.18),
                    v3(0.07, 0.07, 0.22),
                    trousers,
                );
                builder.cuboid_at(
                    instance,
                    anchor,
                    yaw,
                    v3(side * 0.09, (seat + 0.02) * 0.5, 0.37),
                    v3(0.06, (seat + 0.02) * 0.5, 0.065),
                    trousers,
                );
                builder.cuboid_at(
                    instance,
                    anchor,
                    yaw,
                    v3(side * 0.09, 0.03, 0.43),
                    v3(0.055, 0.03, 0.11),
                    Material::plain(rgb(40, 36, 34)),
                );
            }
            seat + 0.1
        }
    };
    builder.ellipsoid(
        instance,
        anchor + yaw.apply(v3(0.0, hip + 0.28, 0.0)),
        v3(0.19, 0.32, 0.12),
        yaw,
        top,
    );
    for side in [-1.0, 1.0] {
        builder.cuboid_at(
            instance,
            anchor,
            yaw,
            v3(side * 0.22, hip + 0.3, 0.05),
            v3(0.045, 0.25, 0.05),
            top,
        );
        builder.ellipsoid(
            instance,
            anchor + yaw.apply(v3(side * 0.22, hip + 0.03, 0.07)),
            v3(0.04, 0.05, 0.04),
            yaw,
            skin,
        );
    }
    builder.cylinder(
        instance,
        anchor + v3(0.0, hip + 0.57, 0.0),
        0.045,
        0.08,
        skin,
    );
    let head = anchor + v3(0.0, hip + 0.74, 0.0);
    builder.ellipsoid(instance, head, v3(0.09, 0.115, 0.1), yaw, skin);
    builder.ellipsoid(
        instance,
        head + v3(0.0, 0.04, 0.0) + yaw.apply(v3(0.0, 0.0, -0.02)),
        v3(0.095, 0.09, 0.095),
        yaw,
        Material::textured(outfit.hair, Texture::Fabric),
    );
    Ok(instance)
}

/// Fur for a pet.
fn fur(colour: Colour, markings: Colour) -> Material {
    Material::textured(colour, Texture::Fur { other: markings })
}

/// A dog at `base` facing `yaw`; curled up lying down, or standing.
pub fn dog(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    coat: Colour,
    curled: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("dog", support)?;
    let coat_material = fur(coat, tint(coat, 0.6));
    if curled {
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.12, 0.0),
            v3(0.3, 0.12, 0.22),
            yaw,
            coat_material,
        );
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.15, 0.0) + yaw.apply(v3(0.18, 0.0, 0.12)),
            v3(0.09, 0.08, 0.11),
            yaw,
            coat_material,
        );
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.19, 0.0) + yaw.apply(v3(0.24, 0.0, 0.08)),
            v3(0.04, 0.06, 0.025),
            yaw,
            Material::plain(tint(coat, 0.5)),
        );
        return Ok(instance);
    }
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.38, 0.0),
        v3(0.14, 0.14, 0.32),
        yaw,
        coat_material,
    );
    for (sx, sz) in [(-1.0, -1.0), (1.0, -1.0), (-1.0, 1.0), (1.0, 1.0)] {
        builder.cylinder(
            instance,
            base + yaw.apply(v3(sx * 0.08, 0.0, sz * 0.22)),
            0.035,
            0.32,
            coat_material,
        );
    }
    let head = base + v3(0.0, 0.55, 0.0) + yaw.apply(v3(0.0, 0.0, 0.34));
    builder.ellipsoid(instance, head, v3(0.09, 0.09, 0.11), yaw, coat_material);
    builder.ellipsoid(
        instance,
        head + yaw.apply(v3(0.0, -0.03, 0.1)),
        v3(0.05, 0.045, 0.07),
        yaw,
        coat_material,
    );
    for side in [-1.0, 1.0] {
        builder.ellipsoid(
            instance,
            head + v3(0.0, 0.01, 0.0) + yaw.apply(v3(side * 0.09, 0.0, -0.01)),
            v3(0.025, 0.08, 0.045),
            yaw,
            Material::plain(tint(coat, 0.55)),
        );
    }
    builder.cuboid(
        instance,
        base + v3(0.0, 0.47, 0.0) + yaw.apply(v3(0.0, 0.0, -0.36)),
        v3(0.02, 0.1, 0.02),
        yaw,
        coat_material,
    );
    Ok(instance)
}

/// A cat at `base` facing `yaw`; curled into a loaf (pillow-like), or sitting up.
pub fn cat(
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    coat: Colour,
    curled: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object("cat", support)?;
    let coat_material = fur(coat, tint(coat, 0.55));
    if curled {
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.08, 0.0),
            v3(0.2, 0.08, 0.15),
            yaw,
            coat_material,
        );
        builder.ellipsoid(
            instance,
            base + v3(0.0, 0.1, 0.0) + yaw.apply(v3(0.12, 0.0, 0.08)),
            v3(0.06, 0.055, 0.065),
            yaw,
            coat_material,
        );
        for side in [-1.0, 1.0] {
            builder.ellipsoid(
                instance,
                base + v3(0.0, 0.16, 0.0) + yaw.apply(v3(0.12 + side * 0.03, 0.0, 0.09)),
                v3(0.014, 0.025, 0.01),
                yaw,
                coat_material,
            );
        }
        return Ok(instance);
    }
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.14, 0.0),
        v3(0.1, 0.14, 0.12),
        yaw,
        coat_material,
    );
    let head = base + v3(0.0, 0.31, 0.0) + yaw.apply(v3(0.0, 0.0, 0.04));
    builder.ellipsoid(instance, head, v3(0.065, 0.06, 0.06), yaw, coat_material);
    for side in [-1.0, 1.0] {
        builder.ellipsoid(
            instance,
            head + v3(0.0, 0.055, 0.0) + yaw.apply(v3(side * 0.04, 0.0, 0.0)),
            v3(0.016, 0.03, 0.012),
            yaw,
            coat_material,
        );
    }
    builder.ellipsoid(
        instance,
        base + v3(0.0, 0.03, 0.0) + yaw.apply(v3(0.1, 0.0, -0.06)),
        v3(0.12, 0.025, 0.03),
        yaw,
        coat_material,
    );
    Ok(instance)
}
