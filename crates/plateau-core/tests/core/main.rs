//! Integration tests of the core against outside references: NIST StRD
//! certified values, analytic facts, known-parameter recovery and scipy.

mod bands;
mod bass;
mod bilogistic;
mod bootstrap_calibration;
mod calendar;
mod calibration;
mod constrained;
mod diagnostics;
mod error_models;
mod ill_posed;
mod multi;
mod nist;
mod profile;
mod recovery;
mod replicates;
mod richards;
mod scale;
mod scipy;
mod symmetry;
