//! Physical constants in SI units.
//!
//! Exact by the definition of the SI (2019 redefinition, SI Brochure 9th edition, table 1):
//! c, h, k_B. CODATA 2018 recommended values (Tiesinga et al., Rev. Mod. Phys. 93, 025010,
//! 2021): eps_0, mu_0. Standard acceleration of gravity g_n: 3rd CGPM (1901), exact by
//! convention.

/// Speed of light in vacuum, m/s (exact).
pub const SPEED_OF_LIGHT: f64 = 299_792_458.0;
/// Planck constant, J s (exact).
pub const PLANCK: f64 = 6.626_070_15e-34;
/// Boltzmann constant, J/K (exact).
pub const BOLTZMANN: f64 = 1.380_649e-23;
/// Vacuum electric permittivity, F/m (CODATA 2018).
pub const VACUUM_PERMITTIVITY: f64 = 8.854_187_812_8e-12;
/// Vacuum magnetic permeability, N/A^2 (CODATA 2018).
pub const VACUUM_PERMEABILITY: f64 = 1.256_637_062_12e-6;
/// Standard acceleration of gravity, m/s^2 (exact by convention).
pub const STANDARD_GRAVITY: f64 = 9.806_65;

#[cfg(test)]
mod tests {
    use super::*;

    // c^2 eps0 mu0 = 1 holds to the CODATA 2018 uncertainty (relative 1.5e-10).
    #[test]
    fn maxwell_relation_holds() {
        let x = SPEED_OF_LIGHT * SPEED_OF_LIGHT * VACUUM_PERMITTIVITY * VACUUM_PERMEABILITY;
        assert!((x - 1.0).abs() < 1e-9, "c^2 eps0 mu0 = {x}");
    }
}
