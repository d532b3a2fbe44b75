//! STUB — to be replaced: dense univariate polynomials over any `Field`.
