//! The integration suite, one binary: grammar, lowering, derivation checks, properties, command
//! line and fuzzing.

mod support;

mod cli;
mod derive;
mod fuzz;
mod grammar;
mod lower;
mod properties;
