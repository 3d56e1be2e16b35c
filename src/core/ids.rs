//! Newtype ids that cross stage boundaries.
//!
//! Owns: `SegmentId`, `RegionId`, `ClassId`, `RoomId`, `ObjectId`, `HypothesisId`.
//! Must not: carry any behaviour beyond conversion and ordering; stages give ids meaning.

use serde::{Deserialize, Serialize};

macro_rules! newtype_id {
    ($(#[$doc:meta])* $name:ident, $inner:ty) => {
        $(#[$doc])*
        #[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
        #[serde(transparent)]
        pub struct $name(pub $inner);

        impl $name {
            /// The id as a `usize` index into a dense table.
            #[inline]
            pub fn index(self) -> usize {
                self.0 as usize
            }
        }

        impl std::fmt::Display for $name {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                write!(f, "{}", self.0)
            }
        }
    };
}

newtype_id!(
    /// A fine segment (superpixel) of one scene; dense from 0.
    SegmentId,
    u32
);
newtype_id!(
    /// A coarse region (a group of fine segments) of one scene; dense from 0.
    RegionId,
    u32
);
newtype_id!(
    /// A class of the taxonomy; equals the pixel value in a label map.
    ClassId,
    u16
);
newtype_id!(
    /// A room type of the taxonomy.
    RoomId,
    u16
);
newtype_id!(
    /// An object of a scene graph.
    ObjectId,
    u32
);
newtype_id!(
    /// An object hypothesis considered by the solver; stable across re-solves of one scene.
    HypothesisId,
    u32
);
