//! Parsing `.clv` text into the typed tree [`ast::File`]; start from [`parse`].
//! The pest grammar lives in `grammar/cleave.pest`; pest types never leave this module.
//! Knows nothing of what names mean or of the model.

pub mod ast;
mod brackets;
mod continuation;
mod parser;

use std::fmt;

use crate::diagnostics::Diagnostic;

/// Parses a whole model file. Parsing is a pure function of the text.
pub fn parse(text: &str) -> Result<ast::File, Diagnostic> {
    let joined = continuation::join_continued_lines(text);
    brackets::check_brackets(&joined)?;
    parser::parse_file(&joined)
}

/// Parses one expression on its own (as in `--at g=1/8` or a value printed by `cleave`).
pub fn parse_expr(text: &str) -> Result<ast::Expr, Diagnostic> {
    brackets::check_brackets(text)?;
    parser::parse_scalar_input(text)
}

/// Why a text is not a model, before any name is looked at.
#[derive(Clone, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum SyntaxError {
    /// An opening bracket that is never closed.
    UnclosedBracket {
        /// `(` or `[`.
        open: char,
    },
    /// A closing bracket with nothing to close.
    UnmatchedBracket {
        /// `)` or `]`.
        close: char,
    },
    /// A closing bracket of the wrong kind.
    MismatchedBracket {
        /// The bracket left open.
        open: char,
        /// The bracket that was found instead.
        close: char,
    },
    /// Brackets nested deeper than [`MAX_NESTING`].
    NestedTooDeeply,
    /// A statement with more than [`MAX_OPERATORS`] operator signs.
    TooManyOperators,
    /// Something else was expected at this point.
    Expected {
        /// What the grammar allows here, in words: "an expression or end of line".
        expected: String,
        /// What was found: "`)`", "end of line".
        found: String,
    },
    /// The parser gave up (nesting too deep for its stack).
    TooComplex,
}

/// The deepest bracket nesting a model may use; deeper input is surely a mistake, and the limit
/// keeps every recursive pass over the tree far from the stack's end.
pub const MAX_NESTING: usize = 32;

/// The most operator signs one statement may have. Sums and products become chains in the tree,
/// so this bounds its depth, and with it every recursive pass and the stack they use.
pub const MAX_OPERATORS: usize = 256;

impl fmt::Display for SyntaxError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SyntaxError::UnclosedBracket { open } => write!(f, "unclosed bracket `{open}`"),
            SyntaxError::UnmatchedBracket { close } => write!(f, "unmatched closing `{close}`"),
            SyntaxError::MismatchedBracket { open, close } => {
                write!(f, "`{close}` does not match the open `{open}`")
            }
            SyntaxError::NestedTooDeeply => {
                write!(f, "brackets nested more than {MAX_NESTING} deep")
            }
            SyntaxError::Expected { expected, found } => {
                write!(f, "expected {expected}, found {found}")
            }
            SyntaxError::TooManyOperators => {
                write!(f, "more than {MAX_OPERATORS} operators in one statement")
            }
            SyntaxError::TooComplex => write!(f, "expression too complex to parse"),
        }
    }
}
