//! Integration tests of the core against outside references: NIST StRD
//! certified values, analytic facts, known-parameter recovery and scipy.

mod multi;
mod nist;
mod recovery;
mod scipy;
