//! People and pets, in our own simple style: a person standing or seated, a dog standing or curled up, a cat
//! sitting or curled up.
//!
//! Owns: the body proportions of each figure. A pet is one table of parts (`DOG`, `CAT`) built by one
//! function (`pet`). A curled pet is built to resemble a pillow in size and outline, which is one of the
//! look-alike cases the demo scenes must contain.
//! Must not: choose where figures go (layouts do).

use super::builder::{Instance, SceneBuilder};
use super::furniture::{fabric, Spot};
use super::geometry::{v3, Vec3, Yaw};
use super::material::{rgb, tint, Colour, Material, Texture};
use super::RenderError;

use Anchor::{Base, Head};
use Form::{Cuboid, Cylinder, Ellipsoid};

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

/// Where a pet's part sits: `from` the pet's base or its head, raised by `lift` metres, then moved by
/// `offset` turned with the pet's yaw (each step only when given).
#[derive(Clone, Copy)]
struct Place {
    from: Anchor,
    lift: Option<f64>,
    offset: Option<Vec3>,
}

#[derive(Clone, Copy)]
enum Anchor {
    Base,
    Head,
}

/// A part's shape: an ellipsoid's radii, an upright cylinder, or a box's half sizes.
#[derive(Clone, Copy)]
enum Form {
    Ellipsoid(Vec3),
    Cylinder { radius: f64, height: f64 },
    Cuboid(Vec3),
}

/// One part of a pet: where, what shape, and in the coat or in plain coat darkened to `shade`.
#[derive(Clone, Copy)]
struct Part {
    place: Place,
    form: Form,
    shade: Option<f64>,
}

/// A pet's build: the shade of its fur's markings, its head (standing), and its parts curled up and standing.
struct Build {
    name: &'static str,
    markings: f64,
    head: Place,
    curled: &'static [Part],
    standing: &'static [Part],
}

const fn at(from: Anchor, lift: Option<f64>, offset: Option<Vec3>) -> Place {
    Place { from, lift, offset }
}

const fn coat(place: Place, form: Form) -> Part {
    Part {
        place,
        form,
        shade: None,
    }
}

const fn plain(place: Place, form: Form, shade: f64) -> Part {
    Part {
        place,
        form,
        shade: Some(shade),
    }
}

/// A dog: curled up lying down (a body, its head tucked beside it, an ear), or standing on four legs with a
/// snout, two hanging ears and a tail.
#[rustfmt::skip]
const DOG: Build = Build {
    name: "dog",
    markings: 0.6,
    head: at(Base, Some(0.55), Some(v3(0.0, 0.0, 0.34))),
    curled: &[
        coat(at(Base, Some(0.12), None), Ellipsoid(v3(0.3, 0.12, 0.22))),
        coat(at(Base, Some(0.15), Some(v3(0.18, 0.0, 0.12))), Ellipsoid(v3(0.09, 0.08, 0.11))),
        plain(at(Base, Some(0.19), Some(v3(0.24, 0.0, 0.08))), Ellipsoid(v3(0.04, 0.06, 0.025)), 0.5),
    ],
    standing: &[
        coat(at(Base, Some(0.38), None), Ellipsoid(v3(0.14, 0.14, 0.32))),
        coat(at(Base, None, Some(v3(-0.08, 0.0, -0.22))), Cylinder { radius: 0.035, height: 0.32 }),
        coat(at(Base, None, Some(v3(0.08, 0.0, -0.22))), Cylinder { radius: 0.035, height: 0.32 }),
        coat(at(Base, None, Some(v3(-0.08, 0.0, 0.22))), Cylinder { radius: 0.035, height: 0.32 }),
        coat(at(Base, None, Some(v3(0.08, 0.0, 0.22))), Cylinder { radius: 0.035, height: 0.32 }),
        coat(at(Head, None, None), Ellipsoid(v3(0.09, 0.09, 0.11))),
        coat(at(Head, None, Some(v3(0.0, -0.03, 0.1))), Ellipsoid(v3(0.05, 0.045, 0.07))),
        plain(at(Head, Some(0.01), Some(v3(-0.09, 0.0, -0.01))), Ellipsoid(v3(0.025, 0.08, 0.045)), 0.55),
        plain(at(Head, Some(0.01), Some(v3(0.09, 0.0, -0.01))), Ellipsoid(v3(0.025, 0.08, 0.045)), 0.55),
        coat(at(Base, Some(0.47), Some(v3(0.0, 0.0, -0.36))), Cuboid(v3(0.02, 0.1, 0.02))),
    ],
};

/// A cat: curled into a loaf (pillow-like: a body, its head and two ears), or sitting up with its head, two
/// ears and its tail along the floor.
#[rustfmt::skip]
const CAT: Build = Build {
    name: "cat",
    markings: 0.55,
    head: at(Base, Some(0.31), Some(v3(0.0, 0.0, 0.04))),
    curled: &[
        coat(at(Base, Some(0.08), None), Ellipsoid(v3(0.2, 0.08, 0.15))),
        coat(at(Base, Some(0.1), Some(v3(0.12, 0.0, 0.08))), Ellipsoid(v3(0.06, 0.055, 0.065))),
        coat(at(Base, Some(0.16), Some(v3(0.12 - 0.03, 0.0, 0.09))), Ellipsoid(v3(0.014, 0.025, 0.01))),
        coat(at(Base, Some(0.16), Some(v3(0.12 + 0.03, 0.0, 0.09))), Ellipsoid(v3(0.014, 0.025, 0.01))),
    ],
    standing: &[
        coat(at(Base, Some(0.14), None), Ellipsoid(v3(0.1, 0.14, 0.12))),
        coat(at(Head, None, None), Ellipsoid(v3(0.065, 0.06, 0.06))),
        coat(at(Head, Some(0.055), Some(v3(-0.04, 0.0, 0.0))), Ellipsoid(v3(0.016, 0.03, 0.012))),
        coat(at(Head, Some(0.055), Some(v3(0.04, 0.0, 0.0))), Ellipsoid(v3(0.016, 0.03, 0.012))),
        coat(at(Base, Some(0.03), Some(v3(0.1, 0.0, -0.06))), Ellipsoid(v3(0.12, 0.025, 0.03))),
    ],
};

/// Where `place` is for a pet at `base` facing `yaw` whose head is at `head`.
fn locate(place: Place, base: Vec3, head: Vec3, yaw: Yaw) -> Vec3 {
    let mut point = match place.from {
        Anchor::Base => base,
        Anchor::Head => head,
    };
    if let Some(lift) = place.lift {
        point = point + v3(0.0, lift, 0.0);
    }
    if let Some(offset) = place.offset {
        point = point + yaw.apply(offset);
    }
    point
}

/// A pet of `build` at `base` facing `yaw`, curled up or not: its parts in order, one object.
fn pet(
    build: &Build,
    builder: &SceneBuilder,
    base: Vec3,
    yaw: Yaw,
    colour: Colour,
    curled: bool,
    support: Option<Instance>,
) -> Result<Instance, RenderError> {
    let instance = builder.object(build.name, support)?;
    let coat_material = fur(colour, tint(colour, build.markings));
    let head = locate(build.head, base, base, yaw);
    let parts = if curled { build.curled } else { build.standing };
    for part in parts {
        let point = locate(part.place, base, head, yaw);
        let material = match part.shade {
            Some(shade) => Material::plain(tint(colour, shade)),
            None => coat_material,
        };
        match part.form {
            Form::Ellipsoid(radii) => builder.ellipsoid(instance, point, radii, yaw, material),
            Form::Cylinder { radius, height } => {
                builder.cylinder(instance, point, radius, height, material)
            }
            Form::Cuboid(half) => builder.cuboid(instance, point, half, yaw, material),
        }
    }
    Ok(instance)
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
    pet(&DOG, builder, base, yaw, coat, curled, support)
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
    pet(&CAT, builder, base, yaw, coat, curled, support)
}
