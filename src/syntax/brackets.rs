//! A bracket check run before the grammar, so that an unclosed `(` is reported at the bracket
//! itself rather than wherever the grammar happens to give up.

use super::{SyntaxError, MAX_NESTING, MAX_OPERATORS};
use crate::diagnostics::{At, Diagnostic, Span};

/// Checks that `(` and `[` are balanced, properly nested and at most [`MAX_NESTING`] deep, and
/// that no line has more than [`MAX_OPERATORS`] operator signs.
/// Comments are skipped. A `(` must close on its own line unless it is inside a `[`, because
/// statements end at a newline while matrix rows may span lines.
pub(super) fn check_brackets(text: &str) -> Result<(), Diagnostic> {
    let mut open: Vec<(char, usize)> = Vec::new();
    let mut in_comment = false;
    let mut n_operators = 0;
    for (offset, c) in text.char_indices() {
        if in_comment {
            in_comment = c != '\n';
            if in_comment {
                continue;
            }
        }
        match c {
            '#' => in_comment = true,
            '\n' if open.is_empty() => n_operators = 0,
            '+' | '-' | '*' | '/' | '^' => {
                n_operators += 1;
                if n_operators > MAX_OPERATORS {
                    return Err(SyntaxError::TooManyOperators).at(Span::new(offset, offset + 1));
                }
            }
            '\n' if !open.is_empty() && !open.iter().any(|(b, _)| *b == '[') => {
                let (bracket, at) = open[open.len() - 1];
                return Err(SyntaxError::UnclosedBracket { open: bracket })
                    .at(Span::new(at, at + 1));
            }
            '(' | '[' => {
                if open.len() == MAX_NESTING {
                    return Err(SyntaxError::NestedTooDeeply).at(Span::new(offset, offset + 1));
                }
                open.push((c, offset));
            }
            ')' | ']' => {
                let expected = if c == ')' { '(' } else { '[' };
                match open.pop() {
                    None => {
                        return Err(SyntaxError::UnmatchedBracket { close: c })
                            .at(Span::new(offset, offset + 1));
                    }
                    Some((bracket, _)) if bracket != expected => {
                        return Err(SyntaxError::MismatchedBracket { open: bracket, close: c })
                            .at(Span::new(offset, offset + 1));
                    }
                    Some(_) => {}
                }
            }
            _ => {}
        }
    }
    // The innermost open bracket is the one a closing bracket was most likely meant for.
    match open.last() {
        Some((bracket, at)) => {
            Err(SyntaxError::UnclosedBracket { open: *bracket }).at(Span::new(*at, at + 1))
        }
        None => Ok(()),
    }
}
