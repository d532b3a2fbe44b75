//! The integration suite, one binary: grammar, lowering, command line and fuzzing.

mod support;

mod cli;
mod emit;
mod fuzz;
mod grammar;
mod lower;
