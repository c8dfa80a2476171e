//! radforce: how precisely can laser power (or a small optical force) be measured by the force
//! light exerts on a mirror? Monte Carlo propagation of distributions (JCGM 101:2008) through
//! radiation-pressure and balance models.
//!
//! Data flow (one direction): `scenario` (TOML -> [`scenario::Study`]) -> `engine` (chunked,
//! parallel, reproducible trials -> [`engine::Samples`]) -> `analysis` (statistics ->
//! [`analysis::Findings`]) -> `report` (text, JSON). Models never print; reports never compute.

pub mod analysis;
pub mod dist;
pub mod engine;
pub mod error;
pub mod model;
pub mod output;
pub mod physics;
pub mod report;
pub mod run;
pub mod scalar;
pub mod scenario;
pub mod shard;
pub mod units;
