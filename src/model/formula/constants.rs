//! Physical constants a formula may use by name, with their SI values and dimensions. Their
//! names are reserved: no input or measurand may take one.

use crate::physics::constants::{
    BOLTZMANN, PLANCK, SPEED_OF_LIGHT, STANDARD_GRAVITY, VACUUM_PERMEABILITY, VACUUM_PERMITTIVITY,
};
use crate::units::Dimension;

/// A named constant of a formula.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FormulaConstant {
    /// Its name in formulas.
    pub name: &'static str,
    /// Its value in SI units.
    pub value: f64,
    /// Its dimension.
    pub dimension: Dimension,
    /// What it is and where its value comes from.
    pub what: &'static str,
}

/// The constants (SI Brochure, 9th edition, 2019, table 1, for the exact ones; CODATA 2018 for
/// epsilon_0 and mu_0; the 3rd CGPM, 1901, for g_n).
pub const CONSTANTS: [FormulaConstant; 6] = [
    FormulaConstant {
        name: "c",
        value: SPEED_OF_LIGHT,
        dimension: Dimension([1, 0, -1, 0, 0, 0, 0, 0]),
        what: "speed of light in vacuum, 299 792 458 m/s (exact, SI 2019)",
    },
    FormulaConstant {
        name: "h",
        value: PLANCK,
        dimension: Dimension([2, 1, -1, 0, 0, 0, 0, 0]),
        what: "Planck constant, 6.626 070 15e-34 J s (exact, SI 2019)",
    },
    FormulaConstant {
        name: "k_B",
        value: BOLTZMANN,
        dimension: Dimension([2, 1, -2, 0, -1, 0, 0, 0]),
        what: "Boltzmann constant, 1.380 649e-23 J/K (exact, SI 2019)",
    },
    FormulaConstant {
        name: "g_n",
        value: STANDARD_GRAVITY,
        dimension: Dimension::ACCELERATION,
        what: "standard acceleration of gravity, 9.806 65 m/s^2 (exact by convention, 3rd CGPM 1901)",
    },
    FormulaConstant {
        name: "epsilon_0",
        value: VACUUM_PERMITTIVITY,
        dimension: Dimension([-3, -1, 4, 2, 0, 0, 0, 0]),
        what: "vacuum electric permittivity, 8.854 187 8128e-12 F/m (CODATA 2018)",
    },
    FormulaConstant {
        name: "mu_0",
        value: VACUUM_PERMEABILITY,
        dimension: Dimension([1, 1, -2, -2, 0, 0, 0, 0]),
        what: "vacuum magnetic permeability, 1.256 637 062 12e-6 N/A^2 (CODATA 2018)",
    },
];

/// The constant of a name, if it is one.
pub fn constant(name: &str) -> Option<&'static FormulaConstant> {
    CONSTANTS.iter().find(|c| c.name == name)
}

#[cfg(test)]
mod tests {
    use super::*;

    // The exact SI 2019 values as printed in the SI Brochure (9th edition, table 1) and the
    // CODATA 2018 values (Tiesinga et al., Rev. Mod. Phys. 93, 025010, 2021), digit for digit.
    #[test]
    fn values_are_the_published_ones() {
        let v = |n| constant(n).unwrap().value;
        assert_eq!(v("c"), 299_792_458.0);
        assert_eq!(v("h"), 6.626_070_15e-34);
        assert_eq!(v("k_B"), 1.380_649e-23);
        assert_eq!(v("g_n"), 9.806_65);
        assert_eq!(v("epsilon_0"), 8.854_187_812_8e-12);
        assert_eq!(v("mu_0"), 1.256_637_062_12e-6);
        // Dimensions: c^2 epsilon_0 mu_0 is a pure number; h c has the dimension of J m.
        let d = |n| constant(n).unwrap().dimension;
        let one = d("c").times(d("c")).times(d("epsilon_0")).times(d("mu_0"));
        assert_eq!(one, Dimension::NONE);
        assert_eq!(
            d("k_B").times(Dimension::TEMPERATURE),
            Dimension([2, 1, -2, 0, 0, 0, 0, 0])
        );
    }
}
