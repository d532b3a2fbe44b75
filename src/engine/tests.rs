//! Engine unit tests on models built through the constructors.
