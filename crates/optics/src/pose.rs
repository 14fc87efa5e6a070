//! Where a surface really sits: a rigid placement (decentre and tilt) of a surface away from its place on
//! the rail axis, for tolerance runs.
//!
//! A surface is defined in its own local frame, where it is centred on the rail axis with its vertex at
//! its `Step::z_mm`, exactly as the centred trace sees it. A [`Pose`] maps that frame into the rail
//! frame: `world = rotation · local + translation` (a rotation and a shift, so lengths and optical paths
//! are kept). The posed skew trace ([`crate::skew::trace_posed`], [`crate::skew_batch::trace_skew_batch_posed`])
//! carries each ray into a posed surface's local frame, meets the surface there and carries the ray back.
//! The identity pose is skipped altogether, so a bench with no decentre or tilt is traced exactly as
//! before, bit for bit.
//!
//! Tilts are rotations about the x axis (turning the surface's axis in the y–z plane, the rail drawing's
//! plane) and about the y axis, about a pivot point chosen by the caller: [`Pose::tilted_about`] applies the
//! tilt about x first, then about y (R = R_y(β) R_x(α)); for the small angles of a tolerance run the
//! order changes the result only at second order in the angles.

pub use glam::{DMat3, DVec3};

/// A rigid placement of a surface: `world = rotation · local + translation`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pose {
    /// The rotation from the surface's local frame into the rail frame.
    pub rotation: DMat3,
    /// The shift from the surface's local frame into the rail frame, mm.
    pub translation: DVec3,
}

impl Default for Pose {
    fn default() -> Pose {
        Pose::IDENTITY
    }
}

impl Pose {
    /// The surface where the centred trace puts it.
    pub const IDENTITY: Pose = Pose { rotation: DMat3::IDENTITY, translation: DVec3::ZERO };

    /// A pure decentre: the surface shifted by `x_mm` and `y_mm` across the axis.
    pub fn decentred(x_mm: f64, y_mm: f64) -> Pose {
        Pose { rotation: DMat3::IDENTITY, translation: DVec3::new(x_mm, y_mm, 0.0) }
    }

    /// A tilt by `about_x_rad` about the x axis, then `about_y_rad` about the y axis, both through
    /// `pivot_mm` (rail frame, mm). A pivot off the surface's own vertex moves the vertex too: that is the
    /// decentre a tilt about a far pivot brings with it.
    pub fn tilted_about(about_x_rad: f64, about_y_rad: f64, pivot_mm: DVec3) -> Pose {
        let rotation = DMat3::from_rotation_y(about_y_rad) * DMat3::from_rotation_x(about_x_rad);
        Pose { rotation, translation: pivot_mm - rotation * pivot_mm }
    }

    /// A part's pose from its tolerance errors: tilted about `pivot_mm` (see [`Pose::tilted_about`]), then
    /// decentred by (`decentre_x_mm`, `decentre_y_mm`). Exactly [`Pose::IDENTITY`] when every error is
    /// zero.
    pub fn of_errors(
        decentre_x_mm: f64,
        decentre_y_mm: f64,
        about_x_rad: f64,
        about_y_rad: f64,
        pivot_mm: DVec3,
    ) -> Pose {
        let tilt = if about_x_rad == 0.0 && about_y_rad == 0.0 {
            Pose::IDENTITY
        } else {
            Pose::tilted_about(about_x_rad, about_y_rad, pivot_mm)
        };
        Pose::decentred(decentre_x_mm, decentre_y_mm).after(&tilt)
    }

    /// This pose applied after `inner`: a point goes through `inner` first. Composing with the identity
    /// gives the other pose exactly.
    pub fn after(&self, inner: &Pose) -> Pose {
        if self.is_identity() {
            return *inner;
        }
        if inner.is_identity() {
            return *self;
        }
        Pose {
            rotation: self.rotation * inner.rotation,
            translation: self.rotation * inner.translation + self.translation,
        }
    }

    /// Whether this is exactly the identity (then the traces skip it).
    pub fn is_identity(&self) -> bool {
        self.rotation == DMat3::IDENTITY && self.translation == DVec3::ZERO
    }

    /// A rail-frame point in the surface's local frame.
    pub fn to_local_point(&self, world: DVec3) -> DVec3 {
        self.rotation.transpose() * (world - self.translation)
    }

    /// A local point in the rail frame.
    pub fn to_world_point(&self, local: DVec3) -> DVec3 {
        self.rotation * local + self.translation
    }

    /// A rail-frame direction in the surface's local frame.
    pub fn to_local_direction(&self, world: DVec3) -> DVec3 {
        self.rotation.transpose() * world
    }

    /// A local direction in the rail frame.
    pub fn to_world_direction(&self, local: DVec3) -> DVec3 {
        self.rotation * local
    }

    /// Where a ray (point `at_mm`, direction `dir`, both rail frame) meets the plane through
    /// `plane_z_mm` perpendicular to the axis of this pose's local frame (a posed screen), in that frame:
    /// (x, y) across the plane, mm. `None` when the ray runs parallel to the plane.
    pub fn plane_crossing(&self, plane_z_mm: f64, at_mm: DVec3, dir: DVec3) -> Option<(f64, f64)> {
        let p = self.to_local_point(at_mm);
        let d = self.to_local_direction(dir);
        if d.z == 0.0 {
            return None;
        }
        let t = (plane_z_mm - p.z) / d.z;
        Some((p.x + t * d.x, p.y + t * d.y))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_errors_give_the_identity_exactly() {
        let pose = Pose::of_errors(0.0, 0.0, 0.0, 0.0, DVec3::new(0.0, -40.0, 120.0));
        assert!(pose.is_identity());
        assert_eq!(Pose::IDENTITY.after(&Pose::decentred(0.1, 0.0)), Pose::decentred(0.1, 0.0));
    }

    /// A tilt about a pivot leaves the pivot where it is and moves a point one lever arm away along the
    /// arc: by L sin α across and L(1 − cos α) along (elementary geometry).
    #[test]
    fn a_tilt_keeps_its_pivot_and_swings_the_vertex() {
        let pivot = DVec3::new(0.0, 0.0, 100.0);
        let a = 0.01_f64;
        let pose = Pose::tilted_about(a, 0.0, pivot);
        assert!((pose.to_world_point(pivot) - pivot).length() < 1e-13);
        let v = pose.to_world_point(DVec3::new(0.0, 0.0, 130.0));
        // The right-handed rotation about +x by α takes (0, 0, 1) to (0, −sin α, cos α).
        assert!((v.y - (-30.0 * a.sin())).abs() < 1e-12);
        assert!((v.z - (100.0 + 30.0 * a.cos())).abs() < 1e-12);
        let back = pose.to_local_point(v);
        assert!((back - DVec3::new(0.0, 0.0, 130.0)).length() < 1e-12);
    }
}
