//! Distortion, injectivity and overlap metrics of a UV layout (DESIGN §3).
//!
//! [`face_metrics`] measures every face (Jacobian from the polygon gradient of de
//! Goes, Butts & Desbrun 2020, signed singular values, flip test); [`summarize`]
//! turns them into the [`Metrics`] the report prints, for the whole layout or one
//! chart; [`overlapping_face_pairs`] finds faces whose UV polygons overlap.

mod face;
mod jacobian;
mod overlap;
mod summary;

pub use face::{
    face_metric, face_metrics, global_scale, has_inverted_fan_triangle, signed_area, Distortion,
    FaceMetrics, DISTORTION_CAP,
};
pub use jacobian::{jacobian, signed_singular_values};
pub(crate) use overlap::overlapping_pairs_among;
pub use overlap::{overlapping_face_pairs, RELATIVE_TOLERANCE};
pub use summary::{summarize, Metrics};
