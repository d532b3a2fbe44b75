//! The integration suite, one binary: grammar, lowering, model and spectrum checks, derivation
//! checks, properties, emitters, command line and fuzzing.

mod support;

mod answers;
mod check;
mod cli;
mod derive;
mod diagram;
mod emit;
mod fixed;
mod fuzz;
mod grammar;
mod language;
mod levels;
mod lower;
mod properties;
