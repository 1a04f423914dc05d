//! The Plumbline workbench: the window ([`app`]) and its 3D drawing ([`view`]), on top of the query
//! core in `plumbline_core`. The `plumbline` command line lives in the binary beside this library.

pub mod app;
pub mod pictures;
pub mod view;
