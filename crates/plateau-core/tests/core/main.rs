//! Integration tests of the core against outside references: NIST StRD
//! certified values, analytic facts, known-parameter recovery and scipy.

mod nist;
mod multi;
mod recovery;
mod scipy;
