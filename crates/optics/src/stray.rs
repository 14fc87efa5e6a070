//! Stray reflections: the light that refracting surfaces reflect, followed paraxially along its own path.
//!
//! Every interface between media of indices n₁ and n₂ reflects ((n₁ − n₂)/(n₁ + n₂))² of the light at
//! normal incidence (Fresnel; E. Hecht, *Optics*, sec. 4.6): 4.0 % for n = 1.5 against air. A curved
//! surface reflects like a mirror of the same radius, so the reflected light comes to a focus somewhere.
//! Two kinds of path are followed:
//!
//! - a **back-reflection** from surface k: surfaces 0 … k−1, a mirror of surface k's shape, then
//!   k−1 … 0 crossed the other way, back towards the source;
//! - a **double reflection** from surfaces j and then i (i < j): surfaces 0 … j−1, a mirror at j,
//!   j−1 … i+1 the other way, a mirror at i (met from behind), then i+1 … onwards to the end of the
//!   sequence, towards the screen beside the main beam.
//!
//! Each path is built as a [`Sequence`] of its own from the main sequence's steps (the same numbers;
//! nothing is evaluated again), so every trace of this crate runs along it unchanged: the paraxial y-nu
//! trace and its matrices for the foci, [`crate::beam::BeamTrace`] for a laser's own beam parameter along
//! the stray path (so that the irradiance at a stray focus is finite), and the exact trace
//! ([`crate::trace`]) for the same path with real rays.

use crate::beam::{BeamTrace, LaserSource};
use crate::paraxial::{self, ParaxialRay};
use crate::system::{Kind, Sequence, Step};

/// The reflectance of an interface between absolute indices `n1` and `n2` at normal incidence:
/// ((n₁ − n₂)/(n₁ + n₂))² (Fresnel; Hecht, *Optics*, sec. 4.6). 0 for equal indices.
pub fn fresnel_reflectance(n1: f64, n2: f64) -> f64 {
    let r = (n1 - n2) / (n1 + n2);
    r * r
}

/// Whether a step of the main sequence can send stray light back: a refracting interface between
/// different media (a lens or doublet face). Irises, ideal thin lenses (which have no surfaces) and the
/// bench's own mirrors (whose reflection is the main path) are not.
pub fn reflects_stray(step: &Step) -> bool {
    step.kind == Kind::Refract && !step.is_aperture_only()
}

/// What a surface of a stray path does to the stray light there.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// The light passes the main sequence's surface (refracts, or is turned by a bench mirror, as the
    /// main beam is).
    Pass,
    /// The light is reflected by a refracting surface: a stray reflection.
    Reflect,
}

/// Which stray path.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StrayKind {
    /// The back-reflection from one surface of the main sequence, towards the source.
    Back {
        /// The reflecting surface's index in the main sequence.
        surface: usize,
    },
    /// The double reflection from `later` back to `earlier` and on towards the screen.
    Double {
        /// The surface that reflects first (the later one along the main path).
        later: usize,
        /// The surface that sends the light on again (the earlier one).
        earlier: usize,
    },
}

/// A stray path: its own sequence, and for each of its steps the main sequence's surface it comes from
/// and what happens there.
#[derive(Debug, Clone, PartialEq)]
pub struct StrayPath {
    /// Which path.
    pub kind: StrayKind,
    /// The path as a sequence of its own (positions, shapes, indices and directions of the main
    /// sequence's steps, reversed where the light crosses them the other way).
    pub seq: Sequence,
    /// For each step of `seq`: the main sequence's surface index, and whether the light passes or is
    /// reflected there.
    pub origin: Vec<(usize, Role)>,
}

/// A step met the other way: the light arrives from the space after it and leaves into the space before.
fn reversed(step: &Step) -> Step {
    Step {
        n_before: step.n_after,
        n_after: step.n_before,
        dir_before: -step.dir_after,
        dir_after: -step.dir_before,
        ..*step
    }
}

/// A refracting step turned into a mirror of its own shape, met from the side the light arrives on:
/// from before it (`from_behind` false: the medium before the surface) or from after it.
fn reflected(step: &Step, from_behind: bool) -> Step {
    let (n, dir) = if from_behind { (step.n_after, -step.dir_after) } else { (step.n_before, step.dir_before) };
    Step { kind: Kind::Reflect, n_before: n, n_after: n, dir_before: dir, dir_after: -dir, ..*step }
}

impl StrayPath {
    /// The back-reflection from surface `k` of `seq` (`None` unless [`reflects_stray`] holds there).
    pub fn back(seq: &Sequence, k: usize) -> Option<StrayPath> {
        let step = seq.steps.get(k).filter(|s| reflects_stray(s))?;
        let mut steps: Vec<Step> = seq.steps[..k].to_vec();
        let mut origin: Vec<(usize, Role)> = (0..k).map(|m| (m, Role::Pass)).collect();
        steps.push(reflected(step, false));
        origin.push((k, Role::Reflect));
        for m in (0..k).rev() {
            steps.push(reversed(&seq.steps[m]));
            origin.push((m, Role::Pass));
        }
        let seq = Sequence { wavelength_nm: seq.wavelength_nm, n_object: seq.n_object, steps };
        Some(StrayPath { kind: StrayKind::Back { surface: k }, seq, origin })
    }

    /// The double reflection from surface `later` back to surface `earlier` and on to the end of `seq`
    /// (`None` unless `earlier < later` and both reflect stray light).
    pub fn double(seq: &Sequence, later: usize, earlier: usize) -> Option<StrayPath> {
        if earlier >= later {
            return None;
        }
        let j = seq.steps.get(later).filter(|s| reflects_stray(s))?;
        let i = seq.steps.get(earlier).filter(|s| reflects_stray(s))?;
        let mut steps: Vec<Step> = seq.steps[..later].to_vec();
        let mut origin: Vec<(usize, Role)> = (0..later).map(|m| (m, Role::Pass)).collect();
        steps.push(reflected(j, false));
        origin.push((later, Role::Reflect));
        for m in (earlier + 1..later).rev() {
            steps.push(reversed(&seq.steps[m]));
            origin.push((m, Role::Pass));
        }
        steps.push(reflected(i, true));
        origin.push((earlier, Role::Reflect));
        for m in earlier + 1..seq.steps.len() {
            steps.push(seq.steps[m]);
            origin.push((m, Role::Pass));
        }
        let seq = Sequence { wavelength_nm: seq.wavelength_nm, n_object: seq.n_object, steps };
        Some(StrayPath { kind: StrayKind::Double { later, earlier }, seq, origin })
    }

    /// Every back-reflection and double reflection of `seq`, back-reflections first, each in the order of
    /// its surfaces.
    pub fn all(seq: &Sequence) -> Vec<StrayPath> {
        let n = seq.steps.len();
        let mut paths: Vec<StrayPath> = (0..n).filter_map(|k| StrayPath::back(seq, k)).collect();
        for later in 0..n {
            for earlier in 0..later {
                paths.extend(StrayPath::double(seq, later, earlier));
            }
        }
        paths
    }

    /// The step of the path where the light is first reflected: before it, the path is the main beam.
    pub fn first_reflection(&self) -> usize {
        self.origin.iter().position(|&(_, role)| role == Role::Reflect).unwrap_or(0)
    }

    /// The share of the light entering the path that leaves its last surface: the product of the
    /// reflectances where it is reflected and of the transmissions 1 − R where it passes a surface that
    /// reflects stray light. `reflectance(s)` gives surface s's reflectance (0 to 1); irises, thin lenses
    /// and the bench's mirrors pass everything.
    pub fn power_share(&self, main: &Sequence, reflectance: impl Fn(usize) -> f64) -> f64 {
        self.origin
            .iter()
            .map(|&(s, role)| match role {
                Role::Reflect => reflectance(s),
                Role::Pass if reflects_stray(&main.steps[s]) => 1.0 - reflectance(s),
                Role::Pass => 1.0,
            })
            .product()
    }
}

/// A point where stray light comes to a focus: in the space after one step of its path.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StrayFocus {
    /// The step of the path after which the light focuses (an index into the path's sequence).
    pub after_step: usize,
    /// Whether the focus lies in the path's last space (beyond every surface of the path).
    pub final_space: bool,
    /// Rail position of the focus, mm.
    pub at_mm: f64,
    /// For a laser's beam: the waist's 1/e² radius w₀, mm (`None` for a geometric focus, a point).
    pub waist_radius_mm: Option<f64>,
    /// For a laser's beam: the waist's Rayleigh range, mm.
    pub rayleigh_range_mm: Option<f64>,
}

/// Whether rail position `z` lies ahead of step `p`'s vertex along the light, and before the next
/// step's vertex (when there is one).
fn in_space(seq: &Sequence, p: usize, z: f64) -> bool {
    let step = &seq.steps[p];
    let ahead = (z - step.z_mm) * step.dir_after > 0.0;
    ahead && seq.steps.get(p + 1).is_none_or(|next| (next.z_mm - z) * step.dir_after > 0.0)
}

/// The paraxial foci of a path for the ray that reaches its first vertex plane with height `y1_mm` and
/// reduced slope `nu0` (the marginal ray of the main bench): every real axis crossing of the reflected
/// light (from its first reflection on) in a space between its surfaces, and in its last space.
pub fn geometric_foci(path: &StrayPath, y1_mm: f64, nu0: f64) -> Vec<StrayFocus> {
    let seq = &path.seq;
    let rays = paraxial::trace(seq, y1_mm, nu0);
    let mut out = Vec::new();
    for (p, ray) in rays.iter().enumerate().skip(path.first_reflection()) {
        let Some(z) = paraxial::axis_crossing_mm(seq, p, ray) else { continue };
        if z.is_finite() && in_space(seq, p, z) {
            out.push(StrayFocus {
                after_step: p,
                final_space: p + 1 == seq.steps.len(),
                at_mm: z,
                waist_radius_mm: None,
                rayleigh_range_mm: None,
            });
        }
    }
    out
}

/// The laser beam along a path (its own beam parameter through the path's matrices) and its foci: the
/// real waists of the reflected light (from its first reflection on) in the spaces between its surfaces
/// and in its last space. `None` when the source's numbers are not usable.
pub fn beam_foci(path: &StrayPath, source: LaserSource) -> Option<(BeamTrace, Vec<StrayFocus>)> {
    let seq = &path.seq;
    let beam = BeamTrace::of(seq, source).ok()?;
    let mut out = Vec::new();
    for (p, q) in beam.after.iter().enumerate().skip(path.first_reflection()) {
        let step = &seq.steps[p];
        let z = step.z_mm + step.dir_after * q.reduced_to_waist_mm() * step.n_after;
        let w0 = q.waist_radius_mm(source.wavelength_nm, source.m_squared);
        let z_r = step.n_after * q.im_mm;
        // A degenerate parameter (no finite waist) is no focus to report.
        let usable = z.is_finite() && w0.is_finite() && w0 > 0.0 && z_r.is_finite() && z_r > 0.0;
        if usable && in_space(seq, p, z) {
            out.push(StrayFocus {
                after_step: p,
                final_space: p + 1 == seq.steps.len(),
                at_mm: z,
                waist_radius_mm: Some(w0),
                rayleigh_range_mm: Some(z_r),
            });
        }
    }
    Some((beam, out))
}

/// The height of the paraxial ray (`y1_mm`, `nu0` at the first vertex plane) in the path's last space at
/// rail position `z_mm`, mm.
pub fn final_height_mm(seq: &Sequence, y1_mm: f64, nu0: f64, z_mm: f64) -> Option<f64> {
    let rays = paraxial::trace(seq, y1_mm, nu0);
    let (last, step) = (rays.last()?, seq.steps.last()?);
    Some(height_in_space(last, step, z_mm))
}

fn height_in_space(ray: &ParaxialRay, step: &Step, z_mm: f64) -> f64 {
    ray.y_mm + (z_mm - step.z_mm) * ray.nu / step.signed_n_after()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    // Equal indices give exactly 0 by construction: (n − n) is 0.
    #[allow(clippy::float_cmp)]
    fn equal_indices_reflect_nothing_and_the_order_does_not_matter() {
        assert_eq!(fresnel_reflectance(1.5, 1.5), 0.0);
        assert!((fresnel_reflectance(1.0, 1.8) - fresnel_reflectance(1.8, 1.0)).abs() < 1e-18);
    }
}
