//! cleave: exact perturbation theory for small model Hamiltonians.
#![warn(missing_docs)]

pub mod check;
pub mod cli;
pub mod diagnostics;
pub mod emit;
pub mod engine;
pub mod exact;
pub mod linalg;
pub mod lower;
pub mod model;
pub mod spectrum;
pub mod syntax;
