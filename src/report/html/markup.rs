//! Escaping of user text (names, paths, messages) for the page's HTML.

/// Escape text for HTML element content and quoted attribute values.
pub fn escape(text: &str) -> String {
    let mut o = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            other => o.push(other),
        }
    }
    o
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escaping_covers_markup_and_quotes() {
        // source: HTML Living Standard, "escaping a string" (&, <, >, " and ' in attributes)
        assert_eq!(
            escape(r#"<script>alert("x&y")</script> it's"#),
            "&lt;script&gt;alert(&quot;x&amp;y&quot;)&lt;/script&gt; it&#39;s"
        );
        assert_eq!(escape("plain ø → ✓"), "plain ø → ✓");
        assert_eq!(escape("&amp;"), "&amp;amp;");
    }
}
