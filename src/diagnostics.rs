//! Located error messages: [`Span`], [`Diagnostic`], byte offset to line and column, and the
//! rendering `FILE:LINE:COL: message` with the source line and a caret.
//! Inner stages return span-free errors and attach a span with [`At::at`] where it is known.
//! Knows nothing of pest, the model or the terminal.

use std::fmt;

/// A byte range `start..end` in the source text.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Span {
    /// First byte.
    pub start: usize,
    /// One past the last byte.
    pub end: usize,
}

impl Span {
    /// The span `start..end`.
    pub fn new(start: usize, end: usize) -> Span {
        Span { start, end: end.max(start) }
    }
    /// The smallest span covering both.
    pub fn to(self, other: Span) -> Span {
        Span::new(self.start.min(other.start), self.end.max(other.end))
    }
}

/// A 1-based line and column; the column counts characters, not bytes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LineCol {
    /// Line number, from 1.
    pub line: usize,
    /// Column in characters, from 1.
    pub col: usize,
}

impl fmt::Display for LineCol {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}:{}", self.line, self.col)
    }
}

/// The line and column of byte `offset` in `source`. Offsets past the end, or inside a
/// multi-byte character, are clamped to the nearest character boundary before them. Lines end
/// at `\n`, `\r\n` or a lone `\r`, as in the grammar.
pub fn line_col(source: &str, offset: usize) -> LineCol {
    let offset = floor_char_boundary(source, offset);
    let before = &source[..offset];
    let line = before.bytes().enumerate().filter(|&(i, b)| is_line_break(source, i, b)).count() + 1;
    let line_start = line_start(source, offset);
    let col = source[line_start..offset].chars().count() + 1;
    LineCol { line, col }
}

/// Whether byte `b` at `idx` ends a line: `\n`, or a `\r` not followed by `\n`.
fn is_line_break(source: &str, idx: usize, b: u8) -> bool {
    b == b'\n' || (b == b'\r' && source.as_bytes().get(idx + 1) != Some(&b'\n'))
}

/// The first byte of the line holding `offset`.
fn line_start(source: &str, offset: usize) -> usize {
    source.as_bytes()[..offset]
        .iter()
        .enumerate()
        .rev()
        .find(|&(i, &b)| is_line_break(source, i, b))
        .map_or(0, |(i, _)| i + 1)
}

/// One past the last byte of the line holding `offset`, before its line break.
fn line_end(source: &str, offset: usize) -> usize {
    source.as_bytes()[offset..]
        .iter()
        .position(|&b| b == b'\n' || b == b'\r')
        .map_or(source.len(), |idx| offset + idx)
}

/// Characters of an echoed line shown around the caret; longer lines are cut.
const ECHO_WIDTH: usize = 100;

/// A character as it is echoed: control characters as their visible Unicode pictures (U+2400
/// and on), so that a NUL or an escape byte never reaches the terminal raw.
fn visible(c: char) -> char {
    match c {
        '\t' => '\t',
        c if (c as u32) < 0x20 => char::from_u32(0x2400 + c as u32).unwrap_or('?'),
        '\u{7f}' => '\u{2421}',
        c => c,
    }
}

fn floor_char_boundary(source: &str, offset: usize) -> usize {
    let mut offset = offset.min(source.len());
    while !source.is_char_boundary(offset) {
        offset -= 1;
    }
    offset
}

/// An error located in the source: a short lowercase message, the span it is about, and
/// optional hints on how to fix it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Diagnostic {
    /// What is wrong, lowercase, without a location.
    pub message: String,
    /// The offending source text.
    pub span: Span,
    /// Suggestions, each one sentence.
    pub hints: Vec<String>,
}

impl Diagnostic {
    /// A diagnostic without hints.
    pub fn new(message: impl Into<String>, span: Span) -> Diagnostic {
        Diagnostic { message: message.into(), span, hints: Vec::new() }
    }
    /// Adds a hint.
    pub fn with_hint(mut self, hint: impl Into<String>) -> Diagnostic {
        self.hints.push(hint.into());
        self
    }
    /// Where the span starts.
    pub fn line_col(&self, source: &str) -> LineCol {
        line_col(source, self.span.start)
    }
    /// Renders as `FILE:LINE:COL: message`, then the source line, a caret line under the span,
    /// and one `= hint:` line per hint. A span running past its line is underlined to the line's
    /// end; an empty span gets one caret.
    pub fn render(&self, source: &str, file_name: &str) -> String {
        let start = floor_char_boundary(source, self.span.start);
        let end = floor_char_boundary(source, self.span.end).max(start);
        let position = line_col(source, start);
        let line_start = line_start(source, start);
        let line_end = line_end(source, start);
        // A long line is cut to a window around the caret, marked with `...` at the cuts.
        let before: Vec<char> = source[line_start..start].chars().collect();
        let after: Vec<char> = source[start..line_end].chars().collect();
        let skip = before.len().saturating_sub(ECHO_WIDTH / 2);
        let keep_after = ECHO_WIDTH.saturating_sub(before.len() - skip);
        let mut line_text: String = if skip > 0 { "...".to_string() } else { String::new() };
        line_text.extend(
            before[skip..].iter().chain(after.iter().take(keep_after)).map(|&c| visible(c)),
        );
        if after.len() > keep_after {
            line_text.push_str("...");
        }
        // Tabs are copied into the caret line so the caret stays aligned whatever the tab width.
        let mut pad: String = if skip > 0 { "   ".to_string() } else { String::new() };
        pad.extend(before[skip..].iter().map(|&c| if c == '\t' { '\t' } else { ' ' }));
        let n_carets = source[start..end.min(line_end)].chars().count().clamp(1, keep_after.max(1));
        let number = position.line.to_string();
        let gutter = " ".repeat(number.len());
        let message: String =
            self.message.chars().map(|c| if c == '\n' { c } else { visible(c) }).collect();
        let mut res = format!("{file_name}:{position}: {message}\n");
        res.push_str(&format!("{gutter} |\n{number} | {line_text}\n"));
        res.push_str(&format!("{gutter} | {pad}{}\n", "^".repeat(n_carets)));
        for hint in &self.hints {
            res.push_str(&format!("{gutter} = hint: {hint}\n"));
        }
        res
    }
}

impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.message)
    }
}

impl std::error::Error for Diagnostic {}

/// Attaches a span to a span-free error, turning it into a [`Diagnostic`].
pub trait At<T> {
    /// The error, located at `span`.
    fn at(self, span: Span) -> Result<T, Diagnostic>;
}

impl<T, E: fmt::Display> At<T> for Result<T, E> {
    fn at(self, span: Span) -> Result<T, Diagnostic> {
        self.map_err(|err| Diagnostic::new(err.to_string(), span))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_col_counts_characters() {
        let text = "ab\nµx = 1\n";
        assert_eq!(line_col(text, 0), LineCol { line: 1, col: 1 });
        assert_eq!(line_col(text, 3), LineCol { line: 2, col: 1 });
        // `µ` is two bytes but one column.
        assert_eq!(line_col(text, 5), LineCol { line: 2, col: 2 });
        assert_eq!(line_col(text, 4), LineCol { line: 2, col: 1 });
        assert_eq!(line_col(text, 999), LineCol { line: 3, col: 1 });
    }

    #[test]
    fn render_puts_carets_under_the_span() {
        let text = "param g\nV = gg * 2\n";
        let diagnostic =
            Diagnostic::new("unknown name `gg`", Span::new(12, 14)).with_hint("did you mean `g`?");
        assert_eq!(
            diagnostic.render(text, "m.clv"),
            "m.clv:2:5: unknown name `gg`\n  |\n2 | V = gg * 2\n  |     ^^\n  = hint: did you mean `g`?\n"
        );
    }

    #[test]
    fn render_at_end_of_file_has_one_caret() {
        let text = "V = (";
        let rendered = Diagnostic::new("x", Span::new(5, 5)).render(text, "m");
        assert!(rendered.ends_with("1 | V = (\n  |      ^\n"), "{rendered}");
    }
}
