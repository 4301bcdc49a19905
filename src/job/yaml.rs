//! YAML path files: the text checks run before the parser (encoding, control characters, an
//! empty file, bracket depth), the parse into [`PathFileSpec`], and parser errors turned into
//! located messages with what to change.

use super::read::line_column;
use super::schema::PathFileSpec;
use crate::error::Error;
use std::path::Path;

/// Deepest bracket (flow `[`/`{`) nesting accepted in a YAML path file. A path file needs 4
/// levels at most (`{waypoints: [{xyz: [...]}]}`); 64 leaves room for any hand-written layout.
/// The limit exists because the YAML parser's work grows with the square of this depth when
/// flow collections sit inside a block mapping (20,000 levels take seconds, 200,000 minutes),
/// so a pathological file is refused by a linear pre-scan instead of hanging.
const MAX_FLOW_DEPTH: usize = 64;

/// The first character YAML does not allow in a text (a NUL byte or another control
/// character other than tab, line feed and carriage return), and its byte offset.
fn first_control_char(text: &str) -> Option<(usize, char)> {
    text.char_indices().find(|&(_, c)| {
        (c.is_control() && !matches!(c, '\t' | '\n' | '\r' | '\u{85}'))
            || matches!(c, '\u{fffe}' | '\u{ffff}')
    })
}

/// The path file spec of YAML `bytes` (`path` names the file in messages), after the text
/// checks that give a better message than the parser would, or refuse what would make it slow.
pub(super) fn parse_yaml(bytes: &[u8], path: &Path) -> Result<PathFileSpec, Error> {
    // A byte-order mark some editors save at the start of UTF-8 text carries no content.
    let bytes = bytes.strip_prefix(b"\xef\xbb\xbf").unwrap_or(bytes);
    let text = std::str::from_utf8(bytes).map_err(|e| {
        Error::input(
            path,
            line_column(bytes, e.valid_up_to()),
            "is not UTF-8 text (a binary file, or text saved in another encoding?): give a \
             YAML path file saved as UTF-8, or a .csv waypoint file",
        )
    })?;
    if let Some((at, c)) = first_control_char(text) {
        let what = if c == '\0' {
            "a NUL byte".to_string()
        } else {
            format!("the control character U+{:04X}", c as u32)
        };
        return Err(Error::input(
            path,
            line_column(bytes, at),
            format!(
                "holds {what}, which YAML text may not contain (a binary file?): remove it, or \
                 give a YAML path file saved as UTF-8 text"
            ),
        ));
    }
    let blank = text.lines().all(|l| {
        let t = l.trim();
        t.is_empty() || t.starts_with('#') || t == "---" || t == "..."
    });
    if blank {
        return Err(Error::input(
            path,
            "file",
            "is empty: write the path file's settings and waypoints (at least `robot:`, \
             `speed:` and `waypoints:`)",
        ));
    }
    if let Err((line, depth)) = check_flow_depth(text) {
        return Err(Error::input(
            path,
            format!("line {line}"),
            format!(
                "brackets nest {depth} levels deep here, more than the {MAX_FLOW_DEPTH} \
                 armpath accepts (a path file needs at most 4): check that this is a path file"
            ),
        ));
    }
    serde_yaml::from_str(text).map_err(|e| yaml_error(path, text, e))
}

/// Linear scan of the flow (bracket) nesting depth of a YAML text. Returns the line (1-based)
/// and depth where [`MAX_FLOW_DEPTH`] is first exceeded.
///
/// The scan follows YAML's lexical rules closely enough for path files: `#` after whitespace
/// starts a comment; `'...'` and `"..."` starting a token are quoted scalars whose brackets do
/// not count; outside brackets, `[`/`{` opens a collection only at the start of a token (in
/// `a[1]` it is text); inside brackets every bracket counts. It is not a full YAML scanner:
/// brackets inside block scalars (`|`, `>`) count, which only matters for a text with more than
/// 64 unbalanced ones; and a quote character in the middle of a plain scalar (`a 'b`) is taken
/// as the start of a quoted scalar, so a file crafted that way can hide nesting from the scan
/// and reach the slow parser. Neither changes what a valid path file means.
fn check_flow_depth(text: &str) -> Result<(), (usize, usize)> {
    let b = text.as_bytes();
    let (mut i, mut line, mut depth) = (0, 1, 0usize);
    // True where a new token may begin: start of text, after whitespace or a flow indicator.
    let mut token_start = true;
    while i < b.len() {
        let c = b[i];
        match c {
            b'\n' => {
                line += 1;
                token_start = true;
            }
            b' ' | b'\t' | b'\r' => token_start = true,
            b'#' if token_start => {
                while i < b.len() && b[i] != b'\n' {
                    i += 1;
                }
                continue;
            }
            b'\'' | b'"' if token_start => {
                // Skip the quoted scalar: '' is an escaped quote in single quotes, \x escapes
                // in double quotes. An unterminated quote runs to the end (the parser reports it).
                i += 1;
                while i < b.len() {
                    match b[i] {
                        b'\n' => line += 1,
                        b'\\' if c == b'"' => {
                            if b.get(i + 1) == Some(&b'\n') {
                                line += 1;
                            }
                            i += 1;
                        }
                        q if q == c => {
                            if c == b'\'' && b.get(i + 1) == Some(&b'\'') {
                                i += 1;
                            } else {
                                break;
                            }
                        }
                        _ => {}
                    }
                    i += 1;
                }
                token_start = false;
            }
            b'[' | b'{' if depth > 0 || token_start => {
                depth += 1;
                if depth > MAX_FLOW_DEPTH {
                    return Err((line, depth));
                }
                token_start = true;
            }
            b']' | b'}' if depth > 0 => {
                depth -= 1;
                token_start = false;
            }
            b',' if depth > 0 => token_start = true,
            _ => token_start = false,
        }
        i += 1;
    }
    Ok(())
}

/// Turns a serde_yaml error into an [`Error::Input`] at `line L column C` (and the field path
/// when known), adding what to do.
fn yaml_error(path: &Path, text: &str, e: serde_yaml::Error) -> Error {
    let full = e.to_string();
    if let Some(loc) = e.location() {
        let at = format!("line {} column {}", loc.line(), loc.column());
        if full.contains("unknown field `<<`") {
            return Error::input(
                path,
                at,
                "`<<` is a YAML merge key, which armpath does not expand: write the merged keys \
                 out in this mapping instead",
            );
        }
        if full.contains("invalid type: integer") {
            if let Some(m) = non_decimal_integer(text, loc.line(), loc.column()) {
                return Error::input(path, at, m);
            }
        }
    }
    let (location, message) = match e.location() {
        Some(loc) => {
            // The location moves into `location`; the parser's messages repeat it inline.
            let repeated = format!(" at line {} column {}", loc.line(), loc.column());
            let msg = full.replace(&repeated, "");
            let msg = msg.as_str();
            // serde_yaml writes `field.path: message`; a path contains no spaces.
            let (field, msg) = match msg.split_once(": ") {
                Some((head, rest)) if !head.contains(' ') && !head.is_empty() => (Some(head), rest),
                _ => (None, msg),
            };
            let at = format!("line {} column {}", loc.line(), loc.column());
            let location = match field {
                Some(f) => format!("{at}, {f}"),
                None => at,
            };
            (location, msg.to_string())
        }
        None => ("file".to_string(), full.clone()),
    };
    let message = message.replace("expected f64", "expected a number");
    let hint = if message.contains("unknown field") {
        "remove the key or correct its spelling"
    } else if message.contains("missing field") {
        "add the key (see the path file format)"
    } else if message.contains("duplicate field") {
        "give each key once"
    } else if message.contains("unknown variant") {
        "use one of the listed values"
    } else if message.contains("invalid length") {
        "give exactly that many values"
    } else if message.contains("invalid type") {
        "write the value in the form the key expects"
    } else if message.contains("recursion limit") {
        "the file nests deeper than any path file needs (limit 128 levels): check that it is a \
         path file"
    } else if message.contains("repetition limit") {
        "YAML aliases (*name) expand to far more data than the file holds: write the values out \
         instead of using anchors and aliases"
    } else if message.contains("more than one document") {
        "keep a single YAML document: remove the extra `---` separators"
    } else if message.contains("tab character") {
        "indent with spaces: YAML does not allow tabs for indentation"
    } else if message.contains("cannot start any token") {
        // Most often a tab at the start of a line, which YAML never accepts as indentation.
        "remove or quote that character; if the line is indented with a tab, indent with \
         spaces instead (YAML does not allow tabs for indentation)"
    } else {
        "fix the YAML syntax there"
    };
    Error::input(path, location, format!("{message}: {hint}"))
}

/// The message for a hexadecimal, octal or binary integer (`0x14`, `0o17`, `0b101`) at `line`
/// and `column` (1-based, characters) of `text`: YAML reads it as an integer, which armpath
/// does not accept where a number is expected. `None` when the token there is not such an
/// integer.
fn non_decimal_integer(text: &str, line: usize, column: usize) -> Option<String> {
    let rest: String = text
        .lines()
        .nth(line.checked_sub(1)?)?
        .chars()
        .skip(column.checked_sub(1)?)
        .collect();
    let token = rest.split([',', ']', '}', ' ', '\t', '#']).next()?;
    let (sign, digits) = match token.strip_prefix('-') {
        Some(rest) => (-1i128, rest),
        None => (1, token.strip_prefix('+').unwrap_or(token)),
    };
    let (radix, name) = match digits.get(..2)? {
        "0x" | "0X" => (16, "hexadecimal"),
        "0o" | "0O" => (8, "octal"),
        "0b" | "0B" => (2, "binary"),
        _ => return None,
    };
    let value = i128::from_str_radix(digits.get(2..)?, radix).ok()? * sign;
    Some(format!(
        "`{token}` is a {name} integer, which armpath does not accept for numbers: write it in \
         decimal, `{value}`"
    ))
}
