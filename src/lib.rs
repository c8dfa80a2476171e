//! radforce: how precisely can laser power (or a small optical force) be measured by the force
//! light exerts on a mirror? Monte Carlo propagation of distributions (JCGM 101:2008) through
//! radiation-pressure and balance models.
//!
//! Data flow (one direction): `scenario` (TOML -> [`scenario::Study`]) -> `engine` (chunked,
//! parallel, reproducible trials -> [`engine::Samples`]) -> `analysis` (statistics ->
//! [`analysis::Findings`]) -> `report` (text, JSON). Models never print; reports never compute.
//!
//! Modules, highest first; each imports only modules below it: `run` (a study from start to
//! finish, shards, file delivery), `report`, `analysis`, `engine`, `stats` (plain statistics,
//! imports nothing of the crate), `scenario`, `model`, `physics`, `dist`, `scalar`, `units`, and
//! `error`, which everything may use.

pub mod analysis;
pub mod dist;
pub mod engine;
pub mod error;
pub mod model;
pub mod physics;
pub mod report;
pub mod run;
pub mod scalar;
pub mod scenario;
pub mod stats;
pub mod units;
