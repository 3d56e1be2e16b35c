//! Assembling one scene: the room box, camera, light and every solid part with its class and instance.
//!
//! Owns: `SceneBuilder`, through which layouts add object instances (class looked up by name in the taxonomy)
//! and their parts, and `SceneDraft`, the finished description that `shade` renders.
//! Must not: render pixels or write files; it only records what is where.

use std::cell::RefCell;

use crate::ids::ClassId;
use crate::taxonomy::Taxonomy;

use super::camera::{Camera, RoomBox};
use super::geometry::{v3, PlacedShape, Shape, Vec3, Yaw};
use super::material::Material;
use super::random::{mix64, SplitMix64};
use super::RenderError;

/// An object instance being built: its number (1.., in creation order) and class.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Instance {
    pub number: u16,
    pub class: ClassId,
}

/// One solid of the scene.
#[derive(Clone, Debug)]
pub struct Part {
    pub shape: PlacedShape,
    pub class: ClassId,
    /// 0 for structure that is not an object instance.
    pub instance: u16,
    pub material: Material,
}

/// What the layout declared about one instance.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct InstanceDeclaration {
    pub class: ClassId,
    /// The instance number this one rests on, when it rests on another instance.
    pub rests_on: Option<u16>,
}

/// The inside surfaces of the room.
#[derive(Clone, Copy, Debug)]
pub struct RoomSurfaces {
    pub floor: Material,
    pub wall: Material,
    pub ceiling: Material,
    pub floor_class: ClassId,
    pub wall_class: ClassId,
    pub ceiling_class: ClassId,
}

/// A complete scene description, ready to render.
#[derive(Clone, Debug)]
pub struct SceneDraft {
    pub room: RoomBox,
    pub surfaces: RoomSurfaces,
    pub camera: Camera,
    /// Centre of the (small, square, horizontal) ceiling light.
    pub light: Vec3,
    pub light_half_size: f64,
    pub parts: Vec<Part>,
    pub instances: Vec<InstanceDeclaration>,
    /// A sentence about what the layout put in the room.
    pub description: String,
}

/// Collects instances and parts for one scene. Shared (`&SceneBuilder`) so that a call may draw random
/// numbers for its own arguments; the interior state is only ever touched by one call at a time.
pub struct SceneBuilder<'t> {
    taxonomy: &'t Taxonomy,
    random: RefCell<SplitMix64>,
    pub room: RoomBox,
    parts: RefCell<Vec<Part>>,
    instances: RefCell<Vec<InstanceDeclaration>>,
}

impl<'t> SceneBuilder<'t> {
    pub fn new(taxonomy: &'t Taxonomy, random: SplitMix64, room: RoomBox) -> SceneBuilder<'t> {
        SceneBuilder {
            taxonomy,
            random: RefCell::new(random),
            room,
            parts: RefCell::new(Vec::new()),
            instances: RefCell::new(Vec::new()),
        }
    }

    /// A uniform number in `[low, high)` from the scene's generator.
    pub fn range(&self, low: f64, high: f64) -> f64 {
        self.random.borrow_mut().range(low, high)
    }

    /// A uniform integer in `0..count`.
    pub fn below(&self, count: u32) -> u32 {
        self.random.borrow_mut().below(count)
    }

    /// True with probability `probability`.
    pub fn chance(&self, probability: f64) -> bool {
        self.random.borrow_mut().chance(probability)
    }

    /// The id of a class by canonical name.
    pub fn class_id(&self, name: &str) -> Result<ClassId, RenderError> {
        self.taxonomy
            .class_by_name(name)
            .map(|class| class.id)
            .ok_or_else(|| RenderError::UnknownClass(name.to_string()))
    }

    /// Declares a new object instance of `class_name`, optionally resting on another instance.
    pub fn object(
        &self,
        class_name: &str,
        rests_on: Option<Instance>,
    ) -> Result<Instance, RenderError> {
        let class = self.class_id(class_name)?;
        let mut instances = self.instances.borrow_mut();
        if instances.len() >= u16::MAX as usize - 1 {
            return Err(RenderError::TooManyInstances);
        }
        instances.push(InstanceDeclaration {
            class,
            rests_on: rests_on.map(|support| support.number),
        });
        Ok(Instance {
            number: instances.len() as u16,
            class,
        })
    }

    /// Adds a solid belonging to `instance`.
    pub fn part(
        &self,
        instance: Instance,
        shape: Shape,
        origin: Vec3,
        yaw: Yaw,
        material: Material,
    ) {
        let mut material = material;
        if material.pattern_seed == 0 {
            material.pattern_seed = mix64(instance.number as u64 + 1);
        }
        self.parts.borrow_mut().push(Part {
            shape: PlacedShape::new(shape, origin, yaw),
            class: instance.class,
            instance: instance.number,
            material,
        });
    }

    /// Adds a box with centre `centre` and half sizes `half`, turned by `yaw`.
    pub fn cuboid(
        &self,
        instance: Instance,
        centre: Vec3,
        half: Vec3,
        yaw: Yaw,
        material: Material,
    ) {
        self.part(instance, Shape::cuboid(half), centre, yaw, material);
    }

    /// Adds a box in an object's frame: `offset` from `anchor` measured along the turned axes.
    pub fn cuboid_at(
        &self,
        instance: Instance,
        anchor: Vec3,
        yaw: Yaw,
        offset: Vec3,
        half: Vec3,
        material: Material,
    ) {
        self.cuboid(instance, anchor + yaw.apply(offset), half, yaw, material);
    }

    /// Adds a vertical cylinder standing at `base`.
    pub fn cylinder(
        &self,
        instance: Instance,
        base: Vec3,
        radius: f64,
        height: f64,
        material: Material,
    ) {
        self.part(
            instance,
            Shape::Cylinder { radius, height },
            base,
            Yaw::NONE,
            material,
        );
    }

    /// Adds an ellipsoid.
    pub fn ellipsoid(
        &self,
        instance: Instance,
        centre: Vec3,
        radii: Vec3,
        yaw: Yaw,
        material: Material,
    ) {
        self.part(instance, Shape::Ellipsoid { radii }, centre, yaw, material);
    }

    /// Finishes the scene with its surfaces, camera and light.
    pub fn finish(self, surfaces: RoomSurfaces, camera: Camera, description: String) -> SceneDraft {
        let light = v3(0.0, self.room.height - 0.02, self.room.depth * 0.5);
        SceneDraft {
            room: self.room,
            surfaces,
            camera,
            light,
            light_half_size: 0.35,
            parts: self.parts.into_inner(),
            instances: self.instances.into_inner(),
            description,
        }
    }
}
