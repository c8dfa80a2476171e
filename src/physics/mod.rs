//! Pure functions of the trade: constants, the beam, momentum transfer to a mirror, the torsion
//! balance and its optical-lever readout. Every function is generic over [`Scalar`] so that the
//! law of propagation can differentiate it exactly; none prints or allocates.
//!
//! [`Scalar`]: crate::scalar::Scalar

pub mod balance;
pub mod beam;
pub mod clipping;
pub mod constants;
pub mod momentum;
pub mod noise;
pub mod power_law;
pub mod procedure;
pub mod response;
pub mod torsion;
