//! The core of Plumbline: it loads a level's collision geometry and answers ray, sweep, closest-point
//! and overlap probes exactly, keeps probes with their expectations in probe sets, runs them, and says
//! what changed between runs. The command line and the workbench window are thin shells over it.
//!
//! [`level`] loads and validates geometry, [`query`] answers probes over it, [`probe`] reads and writes
//! probe sets, [`check`] runs them and compares runs, [`report`] writes JUnit XML and Markdown,
//! [`demo`] generates the demo level; [`atomic`] writes files safely and [`json_text`] lays them out.
//! This crate knows nothing of terminals or windows.
//!
//! ```
//! use glam::{DQuat, DVec3};
//! use plumbline_core::level::{Geometry, Level, LevelObject, Primitive, ShapeSpec};
//! use plumbline_core::query::{ProbeShape, World};
//!
//! // A 2 m crate standing on the origin.
//! let crate_box = LevelObject {
//!     name: "crate".into(),
//!     tags: vec!["prop".into()],
//!     geometry: Geometry::Primitive {
//!         shape: Primitive::Box { half_extents: DVec3::ONE },
//!         translation: DVec3::new(0.0, 1.0, 0.0),
//!         rotation: DQuat::IDENTITY,
//!     },
//! };
//! let world = World::new(&Level { up: DVec3::Y, objects: vec![crate_box] }).unwrap();
//!
//! // A sightline 1.5 m above the ground meets the crate's face 4 m from the eye.
//! let hit = world.everything().ray_first(DVec3::new(-5.0, 1.5, 0.0), DVec3::new(5.0, 1.5, 0.0)).unwrap().unwrap();
//! assert_eq!(world.name(hit.object), "crate");
//! assert!((hit.distance - 4.0).abs() < 1e-12);
//! assert_eq!(hit.normal, -DVec3::X);
//!
//! // A ball of radius 0.5 m rolled along the same line touches it after 3.5 m.
//! let ball = ProbeShape::new(&ShapeSpec::Sphere { radius: 0.5 }, DQuat::IDENTITY).unwrap();
//! let path = [DVec3::new(-5.0, 1.5, 0.0), DVec3::new(5.0, 1.5, 0.0)];
//! let touch = world.everything().sweep_first(&ball, &path).unwrap().unwrap();
//! assert!((touch.distance - 3.5).abs() < 1e-9);
//! ```

#![warn(missing_docs)]

pub mod atomic;
pub mod beside;
pub mod check;
pub mod demo;
pub mod error;
pub mod input;
pub mod json_object;
pub mod json_text;
pub mod level;
pub mod lint;
pub mod probe;
pub mod query;
pub mod report;
pub mod session;
