//! Vectors, rays and the solids the renderer draws, with exact ray intersection for each.
//!
//! Owns: `Vec3`, `Ray`, `Yaw` (a rotation about the vertical axis built from a rational half-angle tangent, so
//! no trigonometric function is needed), `Shape` (convex solids given by planes, vertical cylinders,
//! ellipsoids) and `Placed` shapes with a bounding sphere for quick rejection.
//! Must not: know about classes, materials or images.

use std::ops::{Add, Mul, Neg, Sub};

/// A point or direction in metres: `x` to the right, `y` up, `z` into the room.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Vec3 {
    pub x: f64,
    pub y: f64,
    pub z: f64,
}

/// Shorthand constructor.
pub const fn v3(x: f64, y: f64, z: f64) -> Vec3 {
    Vec3 { x, y, z }
}

impl Vec3 {
    pub fn dot(self, other: Vec3) -> f64 {
        self.x * other.x + self.y * other.y + self.z * other.z
    }

    pub fn cross(self, other: Vec3) -> Vec3 {
        v3(
            self.y * other.z - self.z * other.y,
            self.z * other.x - self.x * other.z,
            self.x * other.y - self.y * other.x,
        )
    }

    pub fn length(self) -> f64 {
        self.dot(self).sqrt()
    }

    /// The unit vector in the same direction (the zero vector stays zero).
    pub fn normalised(self) -> Vec3 {
        let length = self.length();
        if length > 0.0 {
            self * (1.0 / length)
        } else {
            self
        }
    }

    /// Component-wise product.
    pub fn scale(self, other: Vec3) -> Vec3 {
        v3(self.x * other.x, self.y * other.y, self.z * other.z)
    }
}

impl Add for Vec3 {
    type Output = Vec3;
    fn add(self, other: Vec3) -> Vec3 {
        v3(self.x + other.x, self.y + other.y, self.z + other.z)
    }
}

impl Sub for Vec3 {
    type Output = Vec3;
    fn sub(self, other: Vec3) -> Vec3 {
        v3(self.x - other.x, self.y - other.y, self.z - other.z)
    }
}

impl Mul<f64> for Vec3 {
    type Output = Vec3;
    fn mul(self, factor: f64) -> Vec3 {
        v3(self.x * factor, self.y * factor, self.z * factor)
    }
}

impl Neg for Vec3 {
    type Output = Vec3;
    fn neg(self) -> Vec3 {
        v3(-self.x, -self.y, -self.z)
    }
}

/// A half-line from `origin` along the unit vector `direction`.
#[derive(Clone, Copy, Debug)]
pub struct Ray {
    pub origin: Vec3,
    pub direction: Vec3,
}

/// A rotation about the vertical axis, stored as its cosine and sine.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Yaw {
    cosine: f64,
    sine: f64,
}

impl Yaw {
    /// No rotation.
    pub const NONE: Yaw = Yaw {
        cosine: 1.0,
        sine: 0.0,
    };

    /// The rotation whose half-angle has tangent `tangent` (so 1.0 is a quarter turn, -1.0 the other way).
    /// The rational form keeps it exact without trigonometric functions.
    pub fn from_half_tangent(tangent: f64) -> Yaw {
        let square = tangent * tangent;
        Yaw {
            cosine: (1.0 - square) / (1.0 + square),
            sine: 2.0 * tangent / (1.0 + square),
        }
    }

    /// The rotation that turns local +z (an object's "front") towards the horizontal direction (dx, dz).
    pub fn facing(dx: f64, dz: f64) -> Yaw {
        let length = (dx * dx + dz * dz).sqrt();
        if length == 0.0 {
            return Yaw::NONE;
        }
        Yaw {
            cosine: dz / length,
            sine: dx / length,
        }
    }

    /// Local to world.
    pub fn apply(self, vector: Vec3) -> Vec3 {
        v3(
            self.cosine * vector.x + self.sine * vector.z,
            vector.y,
            -self.sine * vector.x + self.cosine * vector.z,
        )
    }

    /// World to local.
    pub fn invert(self, vector: Vec3) -> Vec3 {
        v3(
            self.cosine * vector.x - self.sine * vector.z,
            vector.y,
            self.sine * vector.x + self.cosine * vector.z,
        )
    }
}

/// A plane `normal · p <= offset` bounding a convex solid (normal points outward).
#[derive(Clone, Copy, Debug)]
pub struct Plane {
    pub normal: Vec3,
    pub offset: f64,
}

/// A solid in its local frame.
#[derive(Clone, Debug)]
pub enum Shape {
    /// The intersection of half-spaces (boxes, prisms, frusta, slanted slabs); `radius` bounds its corners.
    Convex { planes: Vec<Plane>, radius: f64 },
    /// A vertical cylinder standing on local y = 0.
    Cylinder { radius: f64, height: f64 },
    /// An ellipsoid centred on the local origin.
    Ellipsoid { radii: Vec3 },
}

impl Shape {
    /// A box centred on the origin with these half sizes.
    pub fn cuboid(half: Vec3) -> Shape {
        let axes = [v3(1.0, 0.0, 0.0), v3(0.0, 1.0, 0.0), v3(0.0, 0.0, 1.0)];
        let halves = [half.x, half.y, half.z];
        let mut planes = Vec::with_capacity(6);
        for (axis, half) in axes.iter().zip(halves) {
            planes.push(Plane {
                normal: *axis,
                offset: half,
            });
            planes.push(Plane {
                normal: -*axis,
                offset: half,
            });
        }
        Shape::Convex {
            planes,
            radius: half.length() + 1e-6,
        }
    }

    /// A convex profile drawn in the local (z, y) plane, extruded along x from `-half_width` to `half_width`.
    /// The profile's corners must be given in a consistent turning order.
    pub fn extruded_profile(profile: &[(f64, f64)], half_width: f64) -> Shape {
        let mut planes = vec![
            Plane {
                normal: v3(1.0, 0.0, 0.0),
                offset: half_width,
            },
            Plane {
                normal: v3(-1.0, 0.0, 0.0),
                offset: half_width,
            },
        ];
        let count = profile.len();
        let centre = profile.iter().fold((0.0, 0.0), |sum, corner| {
            (sum.0 + corner.0, sum.1 + corner.1)
        });
        let centre = v3(0.0, centre.1 / count as f64, centre.0 / count as f64);
        for index in 0..count {
            let (z0, y0) = profile[index];
            let (z1, y1) = profile[(index + 1) % count];
            let a = v3(0.0, y0, z0);
            let b = v3(0.0, y1, z1);
            let c = v3(1.0, y0, z0);
            planes.push(plane_through(a, b, c, centre));
        }
        let radius = profile
            .iter()
            .map(|(z, y)| (z * z + y * y + half_width * half_width).sqrt())
            .fold(0.0, f64::max);
        Shape::Convex {
            planes,
            radius: radius + 1e-6,
        }
    }

    /// An octagonal frustum standing on local y = 0 (a lamp shade, a flower pot).
    pub fn octagonal_frustum(bottom_radius: f64, top_radius: f64, height: f64) -> Shape {
        let h = std::f64::consts::FRAC_1_SQRT_2;
        let corners = [
            (1.0, 0.0),
            (h, h),
            (0.0, 1.0),
            (-h, h),
            (-1.0, 0.0),
            (-h, -h),
            (0.0, -1.0),
            (h, -h),
        ];
        let inside = v3(0.0, height * 0.5, 0.0);
        let mut planes = vec![
            Plane {
                normal: v3(0.0, 1.0, 0.0),
                offset: height,
            },
            Plane {
                normal: v3(0.0, -1.0, 0.0),
                offset: 0.0,
            },
        ];
        for index in 0..corners.len() {
            let (x0, z0) = corners[index];
            let (x1, z1) = corners[(index + 1) % corners.len()];
            let a = v3(x0 * bottom_radius, 0.0, z0 * bottom_radius);
            let b = v3(x1 * bottom_radius, 0.0, z1 * bottom_radius);
            let c = v3(x0 * top_radius, height, z0 * top_radius);
            planes.push(plane_through(a, b, c, inside));
        }
        let widest = bottom_radius.max(top_radius);
        Shape::Convex {
            planes,
            radius: (widest * widest + height * height).sqrt() + 1e-6,
        }
    }

    /// The radius of a sphere about the local origin that contains the shape.
    fn bounding_radius(&self) -> f64 {
        match self {
            Shape::Convex { radius, .. } => *radius,
            Shape::Cylinder { radius, height } => (radius * radius + height * height).sqrt(),
            Shape::Ellipsoid { radii } => radii.x.max(radii.y).max(radii.z),
        }
    }
}

fn plane_through(a: Vec3, b: Vec3, c: Vec3, inside: Vec3) -> Plane {
    let mut normal = (b - a).cross(c - a).normalised();
    if normal.dot(inside - a) > 0.0 {
        normal = -normal;
    }
    Plane {
        normal,
        offset: normal.dot(a),
    }
}

/// Where a ray meets a solid.
#[derive(Clone, Copy, Debug)]
pub struct Hit {
    /// Distance along the ray in metres.
    pub distance: f64,
    /// World-space unit normal facing the ray's origin side.
    pub normal: Vec3,
    /// The hit point in the solid's local frame (for texturing).
    pub local_point: Vec3,
    /// The unit normal in the solid's local frame.
    pub local_normal: Vec3,
}

/// The smallest distance counted as a hit, so a ray leaving a surface does not hit it again.
pub const MIN_DISTANCE: f64 = 1e-4;

/// A shape placed in the world: translated to `origin` and turned by `yaw`.
#[derive(Clone, Debug)]
pub struct PlacedShape {
    pub shape: Shape,
    pub origin: Vec3,
    pub yaw: Yaw,
    bound_radius: f64,
    bound_centre: Vec3,
}

impl PlacedShape {
    pub fn new(shape: Shape, origin: Vec3, yaw: Yaw) -> PlacedShape {
        let bound_radius = shape.bounding_radius();
        let local_centre = match &shape {
            Shape::Cylinder { height, .. } => v3(0.0, height * 0.5, 0.0),
            _ => Vec3::default(),
        };
        let bound_radius = match &shape {
            Shape::Cylinder { radius, height } => {
                (radius * radius + height * height * 0.25).sqrt() + 1e-6
            }
            _ => bound_radius,
        };
        PlacedShape {
            shape,
            origin,
            yaw,
            bound_radius,
            bound_centre: origin + yaw.apply(local_centre),
        }
    }

    /// Whether the ray can possibly meet the shape before `limit`.
    #[inline]
    fn may_hit(&self, ray: &Ray, limit: f64) -> bool {
        let offset = self.bound_centre - ray.origin;
        let along = offset.dot(ray.direction);
        if along < -self.bound_radius || along - self.bound_radius > limit {
            return false;
        }
        let squared = offset.dot(offset) - along * along;
        squared <= self.bound_radius * self.bound_radius
    }

    /// The nearest hit closer than `limit`, if any.
    pub fn intersect(&self, ray: &Ray, limit: f64) -> Option<Hit> {
        if !self.may_hit(ray, limit) {
            return None;
        }
        let origin = self.yaw.invert(ray.origin - self.origin);
        let direction = self.yaw.invert(ray.direction);
        let (distance, local_normal) = match &self.shape {
            Shape::Convex { planes, .. } => intersect_convex(planes, origin, direction)?,
            Shape::Cylinder { radius, height } => {
                intersect_cylinder(*radius, *height, origin, direction)?
            }
            Shape::Ellipsoid { radii } => intersect_ellipsoid(*radii, origin, direction)?,
        };
        if distance >= limit {
            return None;
        }
        let mut normal = self.yaw.apply(local_normal);
        if normal.dot(ray.direction) > 0.0 {
            normal = -normal;
        }
        Some(Hit {
            distance,
            normal,
            local_point: origin + direction * distance,
            local_normal,
        })
    }
}

fn intersect_convex(planes: &[Plane], origin: Vec3, direction: Vec3) -> Option<(f64, Vec3)> {
    let mut enter = f64::NEG_INFINITY;
    let mut exit = f64::INFINITY;
    let mut enter_normal = Vec3::default();
    for plane in planes {
        let along = plane.normal.dot(direction);
        let gap = plane.offset - plane.normal.dot(origin);
        if along == 0.0 {
            if gap < 0.0 {
                return None;
            }
            continue;
        }
        let distance = gap / along;
        if along < 0.0 {
            if distance > enter {
                enter = distance;
                enter_normal = plane.normal;
            }
        } else if distance < exit {
            exit = distance;
        }
        if enter > exit {
            return None;
        }
    }
    if enter >= MIN_DISTANCE && enter <= exit {
        Some((enter, enter_normal))
    } else {
        None
    }
}

fn intersect_cylinder(
    radius: f64,
    height: f64,
    origin: Vec3,
    direction: Vec3,
) -> Option<(f64, Vec3)> {
    let mut best: Option<(f64, Vec3)> = None;
    let mut consider = |distance: f64, normal: Vec3| {
        if distance >= MIN_DISTANCE && best.is_none_or(|(current, _)| distance < current) {
            best = Some((distance, normal));
        }
    };
    let a = direction.x * direction.x + direction.z * direction.z;
    if a > 0.0 {
        let b = 2.0 * (origin.x * direction.x + origin.z * direction.z);
        let c = origin.x * origin.x + origin.z * origin.z - radius * radius;
        let discriminant = b * b - 4.0 * a * c;
        if discriminant >= 0.0 {
            let root = discriminant.sqrt();
            for distance in [(-b - root) / (2.0 * a), (-b + root) / (2.0 * a)] {
                let y = origin.y + direction.y * distance;
                if (0.0..=height).contains(&y) {
                    let x = origin.x + direction.x * distance;
                    let z = origin.z + direction.z * distance;
                    consider(distance, v3(x / radius, 0.0, z / radius));
                }
            }
        }
    }
    if direction.y != 0.0 {
        for (cap, normal) in [(0.0, v3(0.0, -1.0, 0.0)), (height, v3(0.0, 1.0, 0.0))] {
            let distance = (cap - origin.y) / direction.y;
            let x = origin.x + direction.x * distance;
            let z = origin.z + direction.z * distance;
            if x * x + z * z <= radius * radius {
                consider(distance, normal);
            }
        }
    }
    best
}

fn intersect_ellipsoid(radii: Vec3, origin: Vec3, direction: Vec3) -> Option<(f64, Vec3)> {
    let inverse = v3(1.0 / radii.x, 1.0 / radii.y, 1.0 / radii.z);
    let o = origin.scale(inverse);
    let d = direction.scale(inverse);
    let a = d.dot(d);
    let b = 2.0 * o.dot(d);
    let c = o.dot(o) - 1.0;
    let discriminant = b * b - 4.0 * a * c;
    if discriminant < 0.0 {
        return None;
    }
    let root = discriminant.sqrt();
    let near = (-b - root) / (2.0 * a);
    let far = (-b + root) / (2.0 * a);
    let distance = if near >= MIN_DISTANCE {
        near
    } else if far >= MIN_DISTANCE {
        far
    } else {
        return None;
    };
    let point = origin + direction * distance;
    let normal = point.scale(inverse).scale(inverse).normalised();
    Some((distance, normal))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ray(origin: Vec3, direction: Vec3) -> Ray {
        Ray {
            origin,
            direction: direction.normalised(),
        }
    }

    #[test]
    fn cuboid_hit_distance_and_normal() {
        let shape = PlacedShape::new(
            Shape::cuboid(v3(0.5, 0.5, 0.5)),
            v3(0.0, 0.0, 5.0),
            Yaw::NONE,
        );
        let hit = shape
            .intersect(&ray(v3(0.0, 0.0, 0.0), v3(0.0, 0.0, 1.0)), 100.0)
            .unwrap();
        assert!((hit.distance - 4.5).abs() < 1e-12);
        assert_eq!(hit.normal, v3(0.0, 0.0, -1.0));
        assert!(shape
            .intersect(&ray(v3(2.0, 0.0, 0.0), v3(0.0, 0.0, 1.0)), 100.0)
            .is_none());
    }

    #[test]
    fn quarter_turn_yaw_swaps_axes() {
        let yaw = Yaw::from_half_tangent(1.0);
        let turned = yaw.apply(v3(0.0, 0.0, 1.0));
        assert!((turned.x - 1.0).abs() < 1e-12 && turned.z.abs() < 1e-12);
        let back = yaw.invert(turned);
        assert!((back.z - 1.0).abs() < 1e-12);
        let facing = Yaw::facing(1.0, 0.0).apply(v3(0.0, 0.0, 1.0));
        assert!((facing.x - 1.0).abs() < 1e-12);
    }

    #[test]
    fn cylinder_side_and_cap() {
        let shape = PlacedShape::new(
            Shape::Cylinder {
                radius: 1.0,
                height: 2.0,
            },
            v3(0.0, 0.0, 10.0),
            Yaw::NONE,
        );
        let side = shape
            .intersect(&ray(v3(0.0, 1.0, 0.0), v3(0.0, 0.0, 1.0)), 100.0)
            .unwrap();
        assert!((side.distance - 9.0).abs() < 1e-9);
        let cap = shape
            .intersect(&ray(v3(0.0, 5.0, 10.0), v3(0.0, -1.0, 0.0)), 100.0)
            .unwrap();
        assert!((cap.distance - 3.0).abs() < 1e-9);
        assert_eq!(cap.normal, v3(0.0, 1.0, 0.0));
    }

    #[test]
    fn ellipsoid_and_frustum_and_profile() {
        let ellipsoid = PlacedShape::new(
            Shape::Ellipsoid {
                radii: v3(2.0, 1.0, 1.0),
            },
            v3(0.0, 0.0, 0.0),
            Yaw::NONE,
        );
        let hit = ellipsoid
            .intersect(&ray(v3(-10.0, 0.0, 0.0), v3(1.0, 0.0, 0.0)), 100.0)
            .unwrap();
        assert!((hit.distance - 8.0).abs() < 1e-9);
        let frustum = PlacedShape::new(
            Shape::octagonal_frustum(1.0, 0.5, 1.0),
            v3(0.0, 0.0, 0.0),
            Yaw::NONE,
        );
        let top = frustum
            .intersect(&ray(v3(0.0, 3.0, 0.0), v3(0.0, -1.0, 0.0)), 100.0)
            .unwrap();
        assert!((top.distance - 2.0).abs() < 1e-9);
        let wedge = PlacedShape::new(
            Shape::extruded_profile(&[(0.0, 0.0), (1.0, 0.0), (0.0, 1.0)], 0.5),
            v3(0.0, 0.0, 0.0),
            Yaw::NONE,
        );
        // Straight down at z = 0.5 the wedge's slanted top is at y = 0.5.
        let slant = wedge
            .intersect(&ray(v3(0.0, 3.0, 0.5), v3(0.0, -1.0, 0.0)), 100.0)
            .unwrap();
        assert!((slant.distance - 2.5).abs() < 1e-9);
    }
}
