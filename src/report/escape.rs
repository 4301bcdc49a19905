//! Text from the user's files (robot, joint, link and waypoint names, file names, messages
//! that quote them) shown in terminal text. A name may hold a line break or a terminal
//! escape sequence that would draw a line armpath never wrote (a fake verdict, say); every
//! text renderer passes such text through [`visible`], which spells those characters out.
//! JSON keeps the exact strings (serde escapes them there).

use std::borrow::Cow;

/// Characters that move the cursor, end a line, switch the terminal's state or reorder the
/// text around them: C0 and C1 controls and DEL, the Unicode line and paragraph separators,
/// and the bidirectional embedding, override and isolate controls.
fn hidden(c: char) -> bool {
    c.is_control()
        || matches!(c, '\u{2028}' | '\u{2029}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
}

/// `text` with every control character written out: `\n`, `\r`, `\t`, and `\u{1b}` style
/// for the rest. Text without such characters is returned as it is, without a copy.
pub fn visible(text: &str) -> Cow<'_, str> {
    if !text.chars().any(hidden) {
        return Cow::Borrowed(text);
    }
    let mut o = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        match c {
            '\n' => o.push_str("\\n"),
            '\r' => o.push_str("\\r"),
            '\t' => o.push_str("\\t"),
            c if hidden(c) => o.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => o.push(c),
        }
    }
    Cow::Owned(o)
}

/// `n` and the noun, plural unless `n` is 1: `1 segment`, `0 segments`, `3 segments`.
/// Only for nouns whose plural adds an `s` (all the report's nouns do).
pub fn count(n: usize, noun: &str) -> String {
    if n == 1 {
        format!("1 {noun}")
    } else {
        format!("{n} {noun}s")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_breaks_and_escapes_are_spelled_out() {
        // source: common practice (Rust's own escape_debug spelling of \n, \r, \t, \u{1b})
        assert_eq!(visible("a\nb"), "a\\nb");
        assert_eq!(visible("a\r\n  verdict  PASS"), "a\\r\\n  verdict  PASS");
        assert_eq!(visible("\x1b[2J\x1b[1;1H"), "\\u{1b}[2J\\u{1b}[1;1H");
        assert_eq!(visible("tab\there"), "tab\\there");
        assert_eq!(visible("del\x7f c1\u{9b}"), "del\\u{7f} c1\\u{9b}");
        assert_eq!(visible("rtl\u{202e}txt"), "rtl\\u{202e}txt");
        assert_eq!(visible("ls\u{2028}x"), "ls\\u{2028}x");
        // The result has no control characters left.
        let all: String = (0u32..0x250).filter_map(char::from_u32).collect();
        assert!(!visible(&all).chars().any(hidden));
    }

    #[test]
    fn plain_text_is_left_as_it_is() {
        // source: common practice (names in any script and paths stay readable)
        for t in [
            "wp1",
            "Schweißnaht → Ecke",
            "C:\\cell\\path.yaml",
            "",
            "点 7",
        ] {
            assert!(matches!(visible(t), Cow::Borrowed(_)), "{t}");
            assert_eq!(visible(t), t);
        }
    }

    #[test]
    fn nouns_are_singular_for_one_only() {
        // source: common practice (English plural by count)
        assert_eq!(count(0, "segment"), "0 segments");
        assert_eq!(count(1, "segment"), "1 segment");
        assert_eq!(count(2, "configuration"), "2 configurations");
        assert_eq!(count(1, "sample"), "1 sample");
        assert_eq!(count(1_000_000, "sample"), "1000000 samples");
    }
}
