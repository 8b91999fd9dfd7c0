//! Plateau's core: growth-curve models, a Levenberg–Marquardt solver with
//! self-starting values, fit statistics and data input.
//!
//! The crate does no I/O, reads no clocks, starts no threads and owns no
//! global random state, so the same code runs natively (CLI, tests,
//! benches) and in the browser (wasm32-unknown-unknown). Text comes in as
//! `&str`, results go out as plain data types.
//!
//! The inner loops (model evaluation over blocks of points, the Householder
//! QR, the self-start's line fits) are written so that the compiler
//! vectorises them, and on x86-64 processors with AVX2 they run in a copy
//! compiled for it, chosen at run time. That copy performs the same IEEE
//! operations in the same order (no fused multiply-add, no reassociation),
//! only more of them at once, so results are identical to the last bit on
//! every machine (a test checks this).
//!
//! Main entry points: [`data::parse_series`] turns pasted or file text into
//! a [`data::Series`]; [`fit::fit`] fits a [`model::Model`] to it and returns
//! a [`fit::Fit`]; [`compare::compare`] ranks every model by AICc;
//! [`diagnostics`] reads the residuals and tests the curve's symmetry.

pub mod analysis;
pub mod backtest;
pub mod bootstrap;
pub mod compare;
pub mod data;
pub mod diagnostics;
pub mod fit;
pub mod forecast;
pub mod history;
mod linalg;
mod mathfn;
pub mod milestones;
pub mod model;
pub mod solver;
pub mod start;
pub mod stats;
pub mod warning;

pub use data::{parse_series, ParseOptions, Series};
pub use fit::{fit, ErrorModel, Fit, FitError, FitOptions, IntervalMethod};
pub use model::Model;
pub use warning::{Warning, WarningCode};
