//! The cautions every report carries.

/// Shown on every report that involves a laser (common practice; the standards named are the
/// laser-safety standards in force: IEC 60825-1:2014 and ANSI Z136.1-2022).
pub(crate) const LASER_CAUTION: &str = "Laser safety: beams of the powers these balances use (class 3B and 4) can blind and burn, also by stray and specular reflections. Follow IEC 60825-1 / ANSI Z136.1 and your local laser safety officer.";

/// Shown on every report with an uncertainty.
pub(crate) const PLANNING_NOTE: &str = "This uncertainty is a planning estimate computed from a model of the measurement; it is not an accredited calibration (ISO/IEC 17025 governs those).";

/// Both, as they apply.
pub(crate) fn cautions(laser: bool) -> Vec<&'static str> {
    if laser {
        vec![LASER_CAUTION, PLANNING_NOTE]
    } else {
        vec![PLANNING_NOTE]
    }
}
