//! The parts of the `plateau` command that benches and tests use directly:
//! [`batch`], fitting every series of a long-format file in parallel.

pub mod batch;
