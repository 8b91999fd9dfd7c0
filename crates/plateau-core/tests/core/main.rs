//! Integration tests of the core against outside references: NIST StRD
//! certified values, analytic facts, known-parameter recovery and scipy.

mod diagnostics;
mod nist;
mod recovery;
mod scipy;
mod symmetry;
