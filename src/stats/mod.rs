//! Plain statistics on numbers: moments merged in a fixed order, coverage intervals (from sorted
//! values, sorted tails or bucketed unsorted tails), the Monte Carlo summary of one measurand,
//! histograms and kernel densities, the numerical tolerance of JCGM 101 7.9.2 and the
//! overlapping Allan deviation. This module imports nothing of the crate: `engine` and
//! `analysis` build on it.

pub mod allan;
pub mod histogram;
pub mod intervals;
pub mod moments;
pub mod nnls;
pub mod summary;
pub mod tail_buckets;
pub mod tolerance;

pub use summary::{Summary, summarize};
pub(crate) use tolerance::numerical_tolerance;
