//! Typed handles. Each is a `u32` index into the owning container.

use serde::{Deserialize, Serialize};

macro_rules! id_type {
    ($(#[$doc:meta])* $name:ident) => {
        $(#[$doc])*
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
        #[serde(transparent)]
        pub struct $name(pub u32);

        impl $name {
            /// The handle as a `usize` index.
            #[inline]
            pub fn index(self) -> usize {
                self.0 as usize
            }
        }

        impl From<$name> for usize {
            #[inline]
            fn from(id: $name) -> usize {
                id.0 as usize
            }
        }
    };
}

id_type!(
    /// A mesh vertex (node of the P1 mesh).
    VertexId
);
id_type!(
    /// A mesh triangle.
    TriangleId
);
id_type!(
    /// A meshed region (holes are not regions of the mesh).
    RegionId
);
id_type!(
    /// An input point of a geometry.
    PointId
);
id_type!(
    /// An input curve (segment or arc) of a geometry; the mesh keeps the
    /// same numbering for its curve node lists.
    CurveId
);
