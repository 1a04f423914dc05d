//! The core's integration tests, one module per area, linked as one test binary. Each check of the
//! main job names its source beside it; `common` holds the independent oracles.

mod bad_input;
mod common;
mod demo_scene;
mod expectations;
mod fuzz_corpus;
mod hostile_input;
mod jumps;
mod level_checks;
mod lint_checks;
mod loaders;
mod messy_meshes;
mod probe_files;
mod probe_robustness;
mod query_properties;
mod query_references;
mod reference_library;
mod schemas;
mod settle;
mod turning;
mod volumes;
mod walks;
