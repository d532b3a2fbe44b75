//! Statements that continue on the next line: inside an open bracket, or after a line that ends
//! in a binary operator, `,` or `=`. Such newlines (and the comment before them) become spaces
//! before the grammar runs; every byte keeps its offset, so positions in messages are unchanged.

/// The text with each continuing newline (and any comment ending at it) blanked to spaces.
pub(super) fn join_continued_lines(text: &str) -> String {
    // A statement cut short at the end of the file is reported where it stops, not joined to
    // nothing: only newlines before the last written character continue.
    let last_content = last_content(text);
    let mut out = text.as_bytes().to_vec();
    let mut depth: i64 = 0;
    let mut comment_start: Option<usize> = None;
    let mut last: Option<u8> = None;
    for (offset, &byte) in text.as_bytes().iter().enumerate() {
        if byte == b'\n' {
            let continues = offset < last_content
                && (depth > 0
                    || matches!(last, Some(b'+' | b'-' | b'*' | b'/' | b'^' | b'%' | b',' | b'=')));
            if continues {
                let from = comment_start.unwrap_or(offset);
                for slot in &mut out[from..offset] {
                    *slot = b' ';
                }
                if offset > 0 && out[offset - 1] == b'\r' {
                    out[offset - 1] = b' ';
                }
                out[offset] = b' ';
            } else {
                depth = 0;
            }
            comment_start = None;
            last = None;
            continue;
        }
        if comment_start.is_some() {
            continue;
        }
        match byte {
            b'#' => {
                comment_start = Some(offset);
                continue;
            }
            b'(' | b'[' => depth += 1,
            b')' | b']' => depth -= 1,
            _ => {}
        }
        if !byte.is_ascii_whitespace() {
            last = Some(byte);
        }
    }
    // Only ASCII bytes were written, each over a whole comment or a newline, so the text stays
    // valid UTF-8.
    String::from_utf8(out).expect("blanked whole characters only")
}

/// The offset of the last character that is neither white space nor in a comment (0 if none).
fn last_content(text: &str) -> usize {
    let mut in_comment = false;
    let mut res = 0;
    for (offset, byte) in text.bytes().enumerate() {
        match byte {
            b'\n' => in_comment = false,
            _ if in_comment => {}
            b'#' => in_comment = true,
            _ if !byte.is_ascii_whitespace() => res = offset,
            _ => {}
        }
    }
    res
}

#[cfg(test)]
mod tests {
    use super::join_continued_lines;

    #[test]
    fn continues_inside_brackets_and_after_operators() {
        let text = "V = g * (a +\n  b) # note\nH0 = a +  # more\n  b\norder 2\n";
        let joined = join_continued_lines(text);
        assert_eq!(joined.len(), text.len());
        assert_eq!(joined, "V = g * (a +   b) # note\nH0 = a +           b\norder 2\n");
    }

    #[test]
    fn a_finished_line_ends_the_statement() {
        let text = "H0 = a\n+ b\n";
        assert_eq!(join_continued_lines(text), text);
        let text = "V = 3 +\n# the end\n";
        assert_eq!(join_continued_lines(text), text, "nothing follows to continue with");
    }
}
