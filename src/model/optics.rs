//! The optical path every chain shares: the mirror, the beam, the fold and the medium, as chain
//! inputs; what they give per watt arriving at the first mirror (the radiation force along the
//! mirror normal and along the balance's sensing axis, the power absorbed on the sensed mirror);
//! and their checks.
//!
//! Per watt, with the beam seeing the mirror at theta = incidence + tilt and the sensing axis at
//! beta = sensing_angle + tilt from the mirror normal (the tilt turns both, in the direction that
//! increases the incidence):
//!
//!   eta = caught fraction of the tilted footprint (physics::clipping),
//!   G_n = (1 + R - T) cos(theta) + (2/3) Rd,  G_t = (1 - R - T) sin(theta) (physics::momentum),
//!   S = sum_{k<N} (R R_fold)^k (the k-th hit on the sensed mirror carries P (R R_fold)^k),
//!   F_n = n eta S G_n / c,  F_axis = n eta S (G_n cos(beta) + G_t sin(beta)) / c,
//!   P_abs = eta S (1 - R - T - Rd),
//!
//! with n the refractive index of the medium (the momentum flux of light in a medium of index n
//! is n P / c: Jones and Richards, Proc. R. Soc. A 221, 480, 1954; Jones and Leslie, Proc. R. Soc.
//! A 360, 347, 1978). Given `reflectance_s`, `reflectance_p` and `polarisation_angle` psi (from
//! the s direction) instead of `reflectance`, the s and p parts of the beam (powers cos^2 psi and
//! sin^2 psi; the plane of incidence keeps them apart at every bounce) are summed, each with its
//! own R; for one bounce that is R = R_s cos^2 psi + R_p sin^2 psi (Born and Wolf, Principles of
//! Optics, 1.5).

use super::chain::{Alternative, ChainInput, ChainIssue, Domain, InputValues, Subsystem, input};
use crate::physics::clipping::{
    STEEPEST_INCIDENCE, caught_fraction, radius_for_fraction, tilted_mirror_fraction,
};
use crate::physics::constants::SPEED_OF_LIGHT;
use crate::physics::momentum::{bounce_sum, normal_force_factor, tangential_force_factor};
use crate::scalar::Scalar;
use crate::units::Dimension;

/// The optical inputs every chain takes, in this order (see the `OPTICS_*` indices).
pub(crate) const OPTICS_INPUTS: [ChainInput; 12] = [
    input(
        "reflectance",
        Dimension::NONE,
        None,
        Domain::UnitInterval,
        Subsystem::Mirror,
        "specular reflectance R of the mirror (or reflectance_s, reflectance_p and polarisation_angle)",
    ),
    input(
        "incidence",
        Dimension::ANGLE,
        None,
        Domain::Incidence,
        Subsystem::Beam,
        "angle of incidence theta of the beam on the mirror, as aligned",
    ),
    input(
        "beam_radius",
        Dimension::LENGTH,
        None,
        Domain::Positive,
        Subsystem::Beam,
        "1/e^2 radius w of the Gaussian beam at the mirror",
    ),
    input(
        "mirror_radius",
        Dimension::LENGTH,
        None,
        Domain::Positive,
        Subsystem::Mirror,
        "radius a of the circular mirror (the beam centred on it)",
    ),
    input(
        "transmittance",
        Dimension::NONE,
        Some(0.0),
        Domain::UnitInterval,
        Subsystem::Mirror,
        "transmittance T of the mirror (default 0)",
    ),
    input(
        "diffuse_reflectance",
        Dimension::NONE,
        Some(0.0),
        Domain::UnitInterval,
        Subsystem::Mirror,
        "diffuse (Lambertian) reflectance Rd (default 0)",
    ),
    input(
        "reflectance_s",
        Dimension::NONE,
        None,
        Domain::UnitInterval,
        Subsystem::Mirror,
        "specular reflectance for s polarisation (with reflectance_p and polarisation_angle, instead of reflectance)",
    ),
    input(
        "reflectance_p",
        Dimension::NONE,
        None,
        Domain::UnitInterval,
        Subsystem::Mirror,
        "specular reflectance for p polarisation (with reflectance_s and polarisation_angle)",
    ),
    input(
        "polarisation_angle",
        Dimension::ANGLE,
        None,
        Domain::Any,
        Subsystem::Beam,
        "angle psi of the beam's linear polarisation from the s direction (0: s, 90 deg: p)",
    ),
    input(
        "mirror_tilt",
        Dimension::ANGLE,
        Some(0.0),
        Domain::Incidence,
        Subsystem::Mirror,
        "in-plane tilt of the mirror from its nominal orientation: adds to the incidence and to the angle between the normal and the sensing axis (default 0)",
    ),
    input(
        "medium_index",
        Dimension::NONE,
        Some(1.0),
        Domain::RefractiveIndex,
        Subsystem::Environment,
        "refractive index n of the medium around the mirror (default 1, vacuum; air at 1064 nm about 1.00027)",
    ),
    input(
        "fold_reflectance",
        Dimension::NONE,
        Some(1.0),
        Domain::UnitInterval,
        Subsystem::Mirror,
        "reflectance of the fixed fold mirror that returns the beam (required when bounces > 1)",
    ),
];

/// Index of `reflectance` in [`OPTICS_INPUTS`].
pub(crate) const OPTICS_REFLECTANCE: usize = 0;
/// Index of `reflectance_s` in [`OPTICS_INPUTS`]; the chains read from [`ChainContext::given`]
/// whether the scenario describes the mirror by polarisation.
///
/// [`ChainContext::given`]: super::chain::ChainContext::given
pub(crate) const OPTICS_REFLECTANCE_S: usize = 6;

/// `reflectance` or, all together, the reflectances for s and p and the polarisation angle.
pub(crate) const POLARISATION: Alternative = Alternative {
    usual: &["reflectance"],
    instead: &["reflectance_s", "reflectance_p", "polarisation_angle"],
    usual_kept: 0,
    why: "`reflectance` is the mean that reflectance_s, reflectance_p and polarisation_angle already fix",
};

/// What the optical path gives per watt arriving at the first mirror.
#[derive(Clone, Copy, Debug)]
pub(crate) struct PerWatt<T> {
    /// Radiation force along the mirror normal, N/W.
    pub(crate) normal: T,
    /// Radiation force along the balance's sensing axis, N/W.
    pub(crate) axis: T,
    /// Power absorbed on the sensed mirror over all bounces, W/W.
    pub(crate) absorbed: T,
}

/// The radiation force and absorbed power per watt (module formulas) for the optical inputs `o`
/// (in [`OPTICS_INPUTS`] order), `bounces` hits on the sensed mirror and the nominal angle
/// `sensing_angle` between the mirror normal and the sensing axis (None: along the normal, and
/// the tilt then turns it only when `tilted`). `polarised`: take R from the s and p inputs.
#[inline(always)]
pub(crate) fn per_watt<T: Scalar>(
    o: &[T],
    bounces: u32,
    sensing_angle: Option<T>,
    polarised: bool,
    tilted: bool,
) -> PerWatt<T> {
    let (transmittance, diffuse) = (o[4], o[5]);
    let (tilt, medium, fold) = (o[9], o[10], o[11]);
    let theta = if tilted { o[1] + tilt } else { o[1] };
    let beta = match (sensing_angle, tilted) {
        (Some(b), true) => Some(b + tilt),
        (Some(b), false) => Some(b),
        (None, true) => Some(tilt),
        (None, false) => None,
    };
    let cos_theta = theta.cos();
    let eta = caught_fraction(o[3], o[2], cos_theta);
    // The sensing direction and the sine of the incidence only when the axis is off the normal.
    let (cos_b, sin_b, sin_theta) = match beta {
        Some(b) => (b.cos(), b.sin(), theta.sin()),
        None => (T::cst(1.0), T::cst(0.0), T::cst(0.0)),
    };
    // One polarisation of reflectance r: (G_n S, (G_n cos beta + G_t sin beta) S, A S).
    let part = |r: T| {
        let s = bounce_sum(r * fold, bounces);
        let g_n = normal_force_factor(r, transmittance, diffuse, cos_theta);
        let along = if beta.is_some() {
            g_n * cos_b + tangential_force_factor(r, transmittance, sin_theta) * sin_b
        } else {
            g_n
        };
        let absorbed = T::cst(1.0) - r - transmittance - diffuse;
        (g_n * s, along * s, absorbed * s)
    };
    let (n, x, a) = if polarised {
        let psi = o[8];
        let (ws, wp) = (psi.cos() * psi.cos(), psi.sin() * psi.sin());
        let (s, p) = (part(o[6]), part(o[7]));
        (
            ws * s.0 + wp * p.0,
            ws * s.1 + wp * p.1,
            ws * s.2 + wp * p.2,
        )
    } else {
        part(o[OPTICS_REFLECTANCE])
    };
    let k = medium * eta * T::cst(1.0 / SPEED_OF_LIGHT);
    PerWatt {
        normal: n * k,
        axis: x * k,
        absorbed: a * eta,
    }
}

/// The checks of the optical inputs: R + T + Rd must not exceed 1 anywhere in their
/// distributions (for R_s and R_p alike); several bounces need the fold mirror's reflectance;
/// incidence plus tilt must stay within [`STEEPEST_INCIDENCE`]; a warning when more than 1 % of
/// the Gaussian beam misses the tilted mirror, with the radius that would catch 99 %.
pub(crate) fn optics_checks(inputs: &InputValues<'_>) -> Result<Vec<String>, ChainIssue> {
    let upper = |n: &str| (inputs.upper)(n).unwrap_or(0.0);
    let r = upper("reflectance")
        .max(upper("reflectance_s"))
        .max(upper("reflectance_p"));
    let (t, rd) = (upper("transmittance"), upper("diffuse_reflectance"));
    if r + t + rd > 1.0 + 1e-12 {
        return Err(ChainIssue {
            key: "inputs.reflectance",
            inputs: &[
                "reflectance",
                "reflectance_s",
                "reflectance_p",
                "transmittance",
                "diffuse_reflectance",
            ],
            message: format!(
                "reflectance + transmittance + diffuse_reflectance can exceed 1 (their upper ends are {r:.6} + {t:.6} + {rd:.6} = {:.6}), which would make the absorptance negative",
                r + t + rd
            ),
            example: "reflectance in [0.9990, 0.9995] with transmittance = 1e-4".into(),
        });
    }
    let bounces = (inputs.estimate)("bounces").unwrap_or(1.0);
    let mut warnings = Vec::new();
    if bounces > 1.0 && !inputs.given("fold_reflectance") {
        return Err(ChainIssue {
            key: "inputs.bounces",
            inputs: &["bounces"],
            message: format!(
                "with bounces = {bounces} the beam comes back to the sensed mirror from a fixed fold mirror, and each return loses what that mirror does not reflect: the k-th hit carries P (R R_fold)^k. Give fold_reflectance (a perfect fold mirror would overstate the force by about (N - 1)(1 - R_fold)/2)"
            ),
            example:
                "[inputs.fold_reflectance]\ndist = \"rectangular\"\nmin = 0.9995\nmax = 0.9999"
                    .into(),
        });
    }
    if bounces <= 1.0 && inputs.given("fold_reflectance") {
        warnings.push(
            "fold_reflectance has no effect with one bounce (there is no return from a fold mirror)"
                .to_string(),
        );
    }
    let reach = |n: &str| {
        let lo = (inputs.lower)(n).unwrap_or(0.0).abs();
        let hi = (inputs.upper)(n).unwrap_or(0.0).abs();
        lo.max(hi)
    };
    let steepest = reach("incidence") + reach("mirror_tilt");
    if steepest > STEEPEST_INCIDENCE {
        return Err(ChainIssue {
            key: "inputs.incidence",
            inputs: &["incidence", "mirror_tilt"],
            message: format!(
                "incidence and mirror_tilt together can reach {:.3} deg; radforce computes the fraction of the beam the tilted mirror catches (to 1e-12) only up to 89.9 deg, where the mirror shows the beam less than 0.2 % of its width",
                steepest.to_degrees()
            ),
            example: "[inputs.incidence]\ndist = \"normal\"\nmean = \"45 deg\"\nsd = \"0.1 deg\""
                .into(),
        });
    }
    let defined = |n: &str| (inputs.upper)(n).and((inputs.estimate)(n));
    // Radiation-force balances use beams and mirrors of millimetres to a few centimetres
    // (common practice); a radius of 10 cm or more is most likely a bare number meant in mm.
    for n in ["beam_radius", "mirror_radius"] {
        if let Some(r) = defined(n).filter(|r| *r >= 0.1) {
            warnings.push(format!(
                "{n} is {r} m, larger than the beams and mirrors of any radiation-force balance; a bare number is read in SI units (metres): did you mean \"{r} mm\"?"
            ));
        }
    }
    if let (Some(a), Some(w)) = (defined("mirror_radius"), defined("beam_radius")) {
        let theta = (inputs.estimate)("incidence").unwrap_or(0.0)
            + (inputs.estimate)("mirror_tilt").unwrap_or(0.0);
        let eta = tilted_mirror_fraction(a, w, theta);
        if eta < 0.99 {
            warnings.push(format!(
                "only {:.2} % of the beam falls on the mirror (mirror_radius {:.4} mm, beam_radius {:.4} mm, seen at {:.2} deg as an ellipse): the chain corrects for the clipped fraction, but light diffracted at the mirror edge is not modelled; a mirror radius of {:.3} mm or more catches 99 % at this incidence",
                100.0 * eta,
                a * 1e3,
                w * 1e3,
                theta.to_degrees(),
                radius_for_fraction(0.99, w, theta) * 1e3
            ));
        }
    }
    Ok(warnings)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use std::f64::consts::FRAC_PI_4;

    /// A mirror of reflectance r at `deg` degrees, a/w = 1, nothing else.
    fn optics(r: f64, deg: f64) -> [f64; 12] {
        let mut o = [0.0; 12];
        o[0] = r;
        o[1] = deg.to_radians();
        o[2] = 1e-3;
        o[3] = 1e-3;
        o[10] = 1.0;
        o[11] = 1.0;
        o
    }

    // REFERENCES 8 [calc]: 1 W at 45 deg on a perfect 1 mm mirror with a 1 mm beam: 3.5028 nN
    // along the normal (eta = 0.742534 of 2 cos 45 deg / c).
    #[test]
    fn tilted_footprint_force() {
        let pw = per_watt(&optics(1.0, 45.0), 1, None, false, false);
        assert!((pw.normal - 3.5028e-9).abs() < 5e-14, "{}", pw.normal);
    }

    // The fold sum (REFERENCES 8, DESIGN): with the same coating on both mirrors, R = 0.99975
    // and 10 bounces, a perfect fold would overstate the sum by 0.11 %.
    #[test]
    fn lossy_fold() {
        let mut o = optics(0.99975, 0.0);
        o[3] = 10e-3;
        let perfect = per_watt(&o, 10, None, false, false).normal;
        o[11] = 0.99975;
        let lossy = per_watt(&o, 10, None, false, false).normal;
        let r: f64 = 0.99975;
        let exact = (1.0 - (r * r).powi(10)) / (1.0 - r * r) / ((1.0 - r.powi(10)) / (1.0 - r));
        assert_relative_eq!(lossy / perfect, exact, max_relative = 1e-13);
        assert!((1.0 - lossy / perfect - 1.12e-3).abs() < 0.02e-3);
    }

    // The medium multiplies every radiation force by n and leaves the absorbed power alone.
    #[test]
    fn medium_factor() {
        let mut o = optics(0.9, 30.0);
        let vacuum = per_watt(&o, 1, Some(0.1), false, true);
        o[10] = 1.00027;
        let air = per_watt(&o, 1, Some(0.1), false, true);
        assert_relative_eq!(air.normal / vacuum.normal, 1.00027, max_relative = 1e-15);
        assert_relative_eq!(air.axis / vacuum.axis, 1.00027, max_relative = 1e-15);
        assert_eq!(air.absorbed, vacuum.absorbed);
    }

    // One bounce: the s/p mix is the force of R = R_s cos^2 psi + R_p sin^2 psi; several
    // bounces: the power-weighted sum of the pure s and pure p forces.
    #[test]
    fn polarisation_mix() {
        let (rs, rp, psi) = (0.9995, 0.9950, 0.6f64);
        let mut o = optics(0.0, 45.0);
        o[6] = rs;
        o[7] = rp;
        o[8] = psi;
        o[11] = 0.999;
        let mixed = per_watt(&o, 1, Some(0.02), true, false);
        let r = rs * psi.cos().powi(2) + rp * psi.sin().powi(2);
        let single = per_watt(&optics_with(r, &o), 1, Some(0.02), false, false);
        assert_relative_eq!(mixed.normal, single.normal, max_relative = 1e-14);
        assert_relative_eq!(mixed.axis, single.axis, max_relative = 1e-14);
        let many = per_watt(&o, 7, None, true, false).normal;
        let pure = |r| per_watt(&optics_with(r, &o), 7, None, false, false).normal;
        assert_relative_eq!(
            many,
            psi.cos().powi(2) * pure(rs) + psi.sin().powi(2) * pure(rp),
            max_relative = 1e-14
        );
    }

    fn optics_with(r: f64, o: &[f64; 12]) -> [f64; 12] {
        let mut x = *o;
        x[0] = r;
        x
    }

    // A tilt turns the incidence and the sensing axis together: at a normal sensing axis the
    // calibration's sensitivity to the tilt is P tan(theta) for a perfect mirror, and in
    // general P 2R sin(theta) / G_n (differentiating F_axis per watt at zero tilt:
    // d/dalpha [G_n(theta + alpha) cos alpha + G_t(theta + alpha) sin alpha] = -2R sin theta).
    #[test]
    fn tilt_sensitivity() {
        for (r, deg) in [(1.0, 45.0), (1.0, 20.0), (0.9, 45.0), (0.3, 60.0)] {
            let axis = |alpha: f64| {
                let mut o = optics(r, deg);
                o[3] = 20e-3;
                o[9] = alpha;
                per_watt(&o, 1, None, false, true).axis
            };
            let power = |alpha: f64| 1.0 * axis(0.0) / axis(alpha);
            let h = 1e-6;
            let dp = (power(h) - power(-h)) / (2.0 * h);
            let theta = deg.to_radians();
            let expected = 2.0 * r * theta.sin() / ((1.0 + r) * theta.cos());
            assert_relative_eq!(dp, expected, max_relative = 1e-6);
            if r == 1.0 {
                assert_relative_eq!(dp, theta.tan(), max_relative = 1e-6);
            }
        }
    }

    // REFERENCES 8: an absorber at 45 deg read along an axis tilted by 1 deg gains
    // tan 45 deg tan 1 deg = 1.7 % from its tangential force.
    #[test]
    fn tangential_force_projects() {
        let mut o = optics(0.0, 45.0);
        o[3] = 20e-3;
        let along = per_watt(&o, 1, Some(1f64.to_radians()), false, false);
        let ratio = along.axis / (along.normal * 1f64.to_radians().cos());
        assert_relative_eq!(
            ratio,
            1.0 + FRAC_PI_4.tan() * 1f64.to_radians().tan(),
            max_relative = 1e-14
        );
        assert!((ratio - 1.0175).abs() < 1e-4);
    }
}
