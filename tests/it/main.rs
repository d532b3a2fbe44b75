//! The integration suite, one binary: grammar, lowering, derivation checks, properties, emitters,
//! command line and fuzzing.

mod support;

mod cli;
mod derive;
mod emit;
mod fuzz;
mod grammar;
mod lower;
mod properties;
