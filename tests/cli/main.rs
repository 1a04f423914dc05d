//! The `plumbline` command from the outside, as users' CI scripts run it: exit codes, files written,
//! messages.

mod check;
mod demo;
mod hostile;
mod info;
mod lint;
mod shard;
mod support;
