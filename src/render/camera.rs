//! The pinhole camera and the room box it stands in.
//!
//! Owns: `Camera` (position, orientation, focal length in pixels, primary rays, camera-space depth) and
//! `RoomBox` (the floor, walls and ceiling as the inside of an axis-aligned box, with its surface kind per hit).
//! Must not: know about furniture, materials or classes beyond which face of the room a ray ends on.

use super::geometry::{v3, Ray, Vec3};

/// A pinhole camera looking from `position` along `forward`.
#[derive(Clone, Copy, Debug)]
pub struct Camera {
    pub position: Vec3,
    forward: Vec3,
    right: Vec3,
    up: Vec3,
    /// Focal length in pixels (square pixels).
    pub focal_pixels: f64,
    pub width: u32,
    pub height: u32,
}

impl Camera {
    /// A level-horizon camera at `position` looking towards `target`.
    pub fn looking_at(
        position: Vec3,
        target: Vec3,
        focal_pixels: f64,
        width: u32,
        height: u32,
    ) -> Camera {
        let forward = (target - position).normalised();
        let right = v3(0.0, 1.0, 0.0).cross(forward).normalised();
        let up = forward.cross(right);
        Camera {
            position,
            forward,
            right,
            up,
            focal_pixels,
            width,
            height,
        }
    }

    /// The ray through the centre of pixel (`column`, `row`).
    pub fn primary_ray(&self, column: u32, row: u32) -> Ray {
        let u = (column as f64 + 0.5 - self.width as f64 * 0.5) / self.focal_pixels;
        let v = -(row as f64 + 0.5 - self.height as f64 * 0.5) / self.focal_pixels;
        Ray {
            origin: self.position,
            direction: (self.forward + self.right * u + self.up * v).normalised(),
        }
    }

    /// The depth along the optical axis (what a depth camera reports) of a point `distance` along `direction`.
    pub fn axial_depth(&self, direction: Vec3, distance: f64) -> f64 {
        direction.dot(self.forward) * distance
    }
}

/// Which inside face of the room a ray ends on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RoomSurface {
    Floor,
    Ceiling,
    Wall,
}

/// The room as the inside of a box: x in `-half_width..half_width`, y in `0..height`, z in `0..depth`.
#[derive(Clone, Copy, Debug)]
pub struct RoomBox {
    pub half_width: f64,
    pub height: f64,
    pub depth: f64,
}

impl RoomBox {
    /// Where a ray starting inside the room leaves it: distance, surface and inward normal.
    pub fn exit(&self, ray: &Ray) -> (f64, RoomSurface, Vec3) {
        let mut best = (f64::INFINITY, RoomSurface::Wall, v3(0.0, 0.0, -1.0));
        let direction = ray.direction;
        let origin = ray.origin;
        let mut consider = |distance: f64, surface: RoomSurface, normal: Vec3| {
            if distance > 0.0 && distance < best.0 {
                best = (distance, surface, normal);
            }
        };
        if direction.y < 0.0 {
            consider(
                -origin.y / direction.y,
                RoomSurface::Floor,
                v3(0.0, 1.0, 0.0),
            );
        } else if direction.y > 0.0 {
            consider(
                (self.height - origin.y) / direction.y,
                RoomSurface::Ceiling,
                v3(0.0, -1.0, 0.0),
            );
        }
        if direction.x < 0.0 {
            consider(
                (-self.half_width - origin.x) / direction.x,
                RoomSurface::Wall,
                v3(1.0, 0.0, 0.0),
            );
        } else if direction.x > 0.0 {
            consider(
                (self.half_width - origin.x) / direction.x,
                RoomSurface::Wall,
                v3(-1.0, 0.0, 0.0),
            );
        }
        if direction.z < 0.0 {
            consider(
                -origin.z / direction.z,
                RoomSurface::Wall,
                v3(0.0, 0.0, 1.0),
            );
        } else if direction.z > 0.0 {
            consider(
                (self.depth - origin.z) / direction.z,
                RoomSurface::Wall,
                v3(0.0, 0.0, -1.0),
            );
        }
        best
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn centre_ray_looks_forward_and_depth_is_axial() {
        let camera = Camera::looking_at(v3(0.0, 1.0, 0.0), v3(0.0, 1.0, 5.0), 500.0, 640, 480);
        let ray = camera.primary_ray(320, 240);
        assert!(ray.direction.z > 0.999_99);
        let corner = camera.primary_ray(0, 0);
        assert!(
            (camera.axial_depth(corner.direction, 2.0) - 2.0 * corner.direction.z).abs() < 1e-12
        );
        assert!(corner.direction.x < 0.0 && corner.direction.y > 0.0);
    }

    #[test]
    fn room_exit_finds_floor_and_back_wall() {
        let room = RoomBox {
            half_width: 2.0,
            height: 2.5,
            depth: 4.0,
        };
        let down = Ray {
            origin: v3(0.0, 1.0, 1.0),
            direction: v3(0.0, -1.0, 0.0),
        };
        assert_eq!(room.exit(&down).1, RoomSurface::Floor);
        let ahead = Ray {
            origin: v3(0.0, 1.0, 1.0),
            direction: v3(0.0, 0.0, 1.0),
        };
        let (distance, surface, _) = room.exit(&ahead);
        assert_eq!(surface, RoomSurface::Wall);
        assert!((distance - 3.0).abs() < 1e-12);
    }
}
