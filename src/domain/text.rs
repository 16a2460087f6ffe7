//! Showing text that came from a file or another station safely: control characters (which
//! could move the cursor, change colours or clear a terminal) are made visible instead.

use std::borrow::Cow;

/// Whether a character must not reach a terminal as it is: C0 and C1 controls, DEL, and the
/// bidirectional overrides that can reorder what is shown.
fn is_unsafe(c: char) -> bool {
    c.is_control() || matches!(c, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
}

/// The text with every unsafe character written as `\u{..}` (tab as `\t`, line breaks as
/// `\n`), so an imported log cannot send escape sequences to the screen.
pub fn visible(s: &str) -> Cow<'_, str> {
    if !s.chars().any(is_unsafe) {
        return Cow::Borrowed(s);
    }
    let mut out = String::with_capacity(s.len() + 8);
    for c in s.chars() {
        match c {
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if is_unsafe(c) => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
    Cow::Owned(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escape_sequences_are_made_visible() {
        assert_eq!(visible("Q1ABC"), "Q1ABC");
        assert_eq!(visible("\x1b[2J"), "\\u{1b}[2J");
        assert_eq!(visible("a\u{9b}b"), "a\\u{9b}b");
        assert_eq!(visible("x\u{202e}y"), "x\\u{202e}y");
        assert_eq!(visible("line\nnext"), "line\\nnext");
        assert!(matches!(visible("José"), Cow::Borrowed(_)));
    }
}
