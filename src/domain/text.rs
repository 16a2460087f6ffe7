//! Showing text: safely, when it came from a file or another station (control characters,
//! which could move the cursor, change colours or clear a terminal, are made visible instead),
//! and word-wrapped to a width.

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

/// `text` broken at spaces into lines of at most `width` characters, the first after `first`
/// and the others after `rest` (runs of spaces count as one). A word too long for a line is
/// cut across lines when `cut_long` (a screen, whose border would hide the rest), and stays
/// whole otherwise (the command line, where a path is copied).
pub fn wrap_words(
    text: &str,
    width: usize,
    first: &str,
    rest: &str,
    cut_long: bool,
) -> Vec<String> {
    let rest_len = rest.chars().count();
    // Room after the indent, so that cutting always moves on.
    let width = if cut_long {
        width.max(rest_len + 10)
    } else {
        width
    };
    let mut out = Vec::new();
    let mut line = first.to_string();
    let mut col = first.chars().count();
    let mut at_start = true;
    for word in text.split(' ').filter(|w| !w.is_empty()) {
        if !at_start && col + 1 + word.chars().count() > width {
            out.push(std::mem::replace(&mut line, rest.to_string()));
            col = rest_len;
            at_start = true;
        }
        if !at_start {
            line.push(' ');
            col += 1;
        }
        let mut word = word;
        while cut_long && col + word.chars().count() > width {
            let room = width.saturating_sub(col);
            let cut = word.char_indices().nth(room).map_or(word.len(), |(i, _)| i);
            line.push_str(&word[..cut]);
            word = &word[cut..];
            out.push(std::mem::replace(&mut line, rest.to_string()));
            col = rest_len;
        }
        line.push_str(word);
        col += word.chars().count();
        at_start = false;
    }
    out.push(line);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_wrap_after_their_prefixes_and_long_ones_are_cut_only_when_asked() {
        assert_eq!(
            wrap_words("one two three four five six", 14, "", "  ", true),
            ["one two three", "  four five", "  six"]
        );
        // The first line's prefix is kept as it is.
        assert_eq!(
            wrap_words("01:02", 40, "   note ", "        ", true),
            ["   note 01:02"]
        );
        // A word longer than a line is cut, and no line is longer than the width.
        let long = format!("x {} y", "a".repeat(50));
        let out = wrap_words(&long, 20, "", "    ", true);
        assert!(out.iter().all(|l| l.chars().count() <= 20), "{out:?}");
        assert_eq!(out.concat().replace(' ', ""), long.replace(' ', ""));
        // ... or kept whole.
        let kept = wrap_words(&long, 20, "", "    ", false);
        assert_eq!(
            kept,
            ["x", format!("    {}", "a".repeat(50)).as_str(), "    y"]
        );
        // A width too small for the indent still ends.
        assert!(!wrap_words("a b c d e f g h", 3, "", "      ", true).is_empty());
        assert_eq!(wrap_words("", 80, "> ", "  ", false), ["> "]);
    }

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
