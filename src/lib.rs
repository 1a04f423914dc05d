//! Plumbline checks that a 3D game level still behaves as intended: it loads the level's collision
//! geometry and answers ray, sweep, closest-point and overlap probes exactly.
//!
//! The library holds everything the command line and the window share:
//! [`level`] loads and validates geometry, [`query`] answers probes over it.

pub mod atomic;
pub mod check;
pub mod demo;
pub mod error;
pub mod json_text;
pub mod level;
pub mod probe;
pub mod query;
pub mod report;
