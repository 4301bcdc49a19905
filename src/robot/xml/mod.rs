//! A light pass over the URDF text before the XML reader. It checks the element structure
//! (every element closed, in order, not nested absurdly deep) and collects what the reader
//! either drops or reports without a place: the line of every link and joint, duplicate
//! names, joint types, and the number syntax of vector and limit attributes. Messages can then
//! name the joint or link and its line.

use crate::error::{Error, Result};
use std::collections::HashMap;
use std::path::Path;

/// Deepest element nesting accepted in a URDF. A URDF needs 5 levels (robot > link > visual >
/// geometry > mesh) and simulator extensions a few more, so 64 leaves ample room. The limit
/// exists because the XML reader's work grows with the square of the depth (20,000 levels
/// take a second, 100,000 half a minute) and it recurses once per level; a linear pre-scan
/// refuses such a file instead of hanging.
pub(super) const MAX_XML_DEPTH: usize = 64;

/// Longest piece of an attribute value quoted back in a message (characters).
const QUOTE_CHARS: usize = 40;

/// A start tag as the scan finds it.
pub(super) struct StartTag<'a> {
    pub name: &'a str,
    /// Raw text between the name and the closing `>` or `/>`.
    pub attrs: &'a str,
    /// 1-based line of the `<`.
    pub line: usize,
    /// Number of elements open around the tag (the root element has depth 0).
    pub depth: usize,
}

/// Lines of the links and joints of a URDF, by name.
#[derive(Debug, Default)]
pub(super) struct Sites {
    links: HashMap<String, usize>,
    joints: HashMap<String, JointSite>,
}

/// Lines of a `<joint>` element and of its `<origin>`, `<axis>` and `<limit>` children.
#[derive(Debug, Default, Clone, Copy)]
pub(super) struct JointSite {
    pub line: usize,
    pub origin: Option<usize>,
    pub axis: Option<usize>,
    pub limit: Option<usize>,
    /// Whether `<parent>` and `<child>` were seen.
    parent: bool,
    child: bool,
}

impl Sites {
    /// Line of the `<link name>` element.
    pub fn link(&self, name: &str) -> Option<usize> {
        self.links.get(name).copied()
    }

    /// Lines of the `<joint name>` element and its children.
    pub fn joint(&self, name: &str) -> Option<JointSite> {
        self.joints.get(name).copied()
    }
}

/// Joint types the XML reader knows; armpath models some of them (see `load::build`).
const READER_JOINT_TYPES: [&str; 7] = [
    "revolute",
    "continuous",
    "prismatic",
    "fixed",
    "floating",
    "planar",
    "spherical",
];

/// The top-level element a tag sits in: `link 'name'` or `joint 'name'`.
struct Owner {
    joint: bool,
    name: String,
}

impl Owner {
    fn label(&self) -> String {
        format!(
            "{} '{}'",
            if self.joint { "joint" } else { "link" },
            self.name
        )
    }
}

/// Check the structure and collect the [`Sites`]; the first problem becomes an error naming
/// the file, the element and the line.
pub(super) fn survey(text: &str, path: &Path) -> Result<Sites> {
    let mut sites = Sites::default();
    let mut owner: Option<Owner> = None;
    let mut first: Option<Error> = None;
    let scanned = scan_xml(text, |tag| {
        if first.is_none() {
            if let Err(e) = visit(&tag, &mut sites, &mut owner, path) {
                first = Some(e);
            }
        }
    });
    if let Err((line, message)) = scanned {
        return Err(Error::robot(path, format!("line {line}"), message));
    }
    if let Some(e) = first {
        return Err(e);
    }
    // A joint without its parent or child link: the XML reader would say only which field.
    let mut incomplete: Vec<(&String, &JointSite)> = sites
        .joints
        .iter()
        .filter(|(_, s)| !(s.parent && s.child))
        .collect();
    incomplete.sort_by_key(|(_, s)| s.line);
    if let Some((name, site)) = incomplete.first() {
        let missing = if site.parent { "child" } else { "parent" };
        return Err(Error::robot(
            path,
            format!("joint '{name}'"),
            format!(
                "has no <{missing}> element: add <{missing} link=\"...\"/>, every joint names \
                 its parent and child links (line {})",
                site.line
            ),
        ));
    }
    Ok(sites)
}

fn visit(
    tag: &StartTag<'_>,
    sites: &mut Sites,
    owner: &mut Option<Owner>,
    path: &Path,
) -> Result<()> {
    let line = tag.line;
    if tag.depth == 1 {
        *owner = None;
        let joint = match tag.name {
            "link" => false,
            "joint" => true,
            _ => return Ok(()),
        };
        let Some(name) = attribute(tag.attrs, "name") else {
            return Err(Error::robot(
                path,
                format!("line {line}"),
                format!(
                    "<{0}> has no name attribute: give every {0} a name, e.g. <{0} name=\"...\">",
                    tag.name
                ),
            ));
        };
        let this = Owner { joint, name };
        let earlier = if joint {
            sites
                .joints
                .insert(
                    this.name.clone(),
                    JointSite {
                        line,
                        ..JointSite::default()
                    },
                )
                .map(|s| s.line)
        } else {
            sites.links.insert(this.name.clone(), line)
        };
        if let Some(earlier) = earlier {
            return Err(Error::robot(
                path,
                this.label(),
                format!(
                    "is defined twice, on lines {earlier} and {line}: give every {} its own \
                     name, or remove the copy",
                    if joint { "joint" } else { "link" }
                ),
            ));
        }
        if joint {
            match attribute(tag.attrs, "type") {
                None => {
                    return Err(Error::robot(
                        path,
                        this.label(),
                        format!(
                            "has no type attribute: add type=\"revolute\" (or continuous, \
                             prismatic, fixed) (line {line})"
                        ),
                    ))
                }
                Some(t) if !READER_JOINT_TYPES.contains(&t.as_str()) => {
                    return Err(Error::robot(
                        path,
                        this.label(),
                        format!(
                            "has type '{}', which URDF does not define: use revolute, \
                             continuous, prismatic or fixed (line {line})",
                            clip(&t)
                        ),
                    ))
                }
                Some(_) => {}
            }
        }
        *owner = Some(this);
        return Ok(());
    }
    let Some(owner) = owner.as_ref().filter(|_| tag.depth >= 2) else {
        return Ok(());
    };
    let vectors: &[(&str, usize)] = match tag.name {
        "origin" => &[("xyz", 3), ("rpy", 3), ("quat_xyzw", 4)],
        "axis" => &[("xyz", 3)],
        "box" => &[("size", 3)],
        "mesh" => &[("scale", 3)],
        _ => &[],
    };
    for &(key, count) in vectors {
        if let Some(v) = attribute(tag.attrs, key) {
            numbers(&v, count).map_err(|m| {
                Error::robot(
                    path,
                    format!("{} <{} {key}>", owner.label(), tag.name),
                    format!("{m} (line {line})"),
                )
            })?;
        }
    }
    if owner.joint && tag.depth == 2 {
        let Some(site) = sites.joints.get_mut(&owner.name) else {
            return Ok(());
        };
        match tag.name {
            "parent" | "child" => {
                if attribute(tag.attrs, "link").is_none() {
                    return Err(Error::robot(
                        path,
                        format!("{} <{}>", owner.label(), tag.name),
                        format!(
                            "has no link attribute: write <{} link=\"...\"/> (line {line})",
                            tag.name
                        ),
                    ));
                }
                if tag.name == "parent" {
                    site.parent = true;
                } else {
                    site.child = true;
                }
            }
            "origin" => site.origin = Some(line),
            "axis" => site.axis = Some(line),
            "limit" => {
                site.limit = Some(line);
                for key in ["lower", "upper", "effort", "velocity"] {
                    if let Some(v) = attribute(tag.attrs, key) {
                        if v.trim().parse::<f64>().is_err() {
                            return Err(Error::robot(
                                path,
                                format!("{} <limit {key}>", owner.label()),
                                format!(
                                    "'{}' is not a number: write one number, e.g. \
                                     {key}=\"1.5\" (line {line})",
                                    clip(&v)
                                ),
                            ));
                        }
                    }
                }
            }
            _ => {}
        }
    }
    Ok(())
}

/// A URDF vector attribute must hold exactly `want` (3 or 4) numbers separated by spaces (the
/// XML reader would otherwise skip words that are not numbers and count the rest).
fn numbers(v: &str, want: usize) -> std::result::Result<(), String> {
    let (words, example) = if want == 4 {
        ("four, x y z w", "0 0 0 1")
    } else {
        ("three, x y z", "0 0 1")
    };
    let mut count = 0;
    for word in v.split_whitespace() {
        if word.parse::<f64>().is_err() {
            return Err(format!(
                "'{}' in \"{}\" is not a number: write {} numbers separated by spaces, e.g. \
                 \"{example}\"",
                clip(word),
                clip(v),
                &words[..words.find(',').unwrap_or(words.len())]
            ));
        }
        count += 1;
    }
    if count == want {
        Ok(())
    } else {
        Err(format!(
            "has {count} number{} (\"{}\") where URDF expects {words}: write them separated \
             by spaces",
            if count == 1 { "" } else { "s" },
            clip(v)
        ))
    }
}

/// `v` shortened to [`QUOTE_CHARS`] characters for a message.
fn clip(v: &str) -> String {
    match v.char_indices().nth(QUOTE_CHARS) {
        Some((i, _)) => format!("{}…", &v[..i]),
        None => v.to_string(),
    }
}

/// The value of attribute `key` in a tag's raw attribute text, with the predefined XML
/// entities replaced. `None` when it is absent or the text is not plain `name="value"` pairs
/// (the XML reader then reports the fault).
fn attribute(attrs: &str, key: &str) -> Option<String> {
    let mut rest = attrs;
    loop {
        rest = rest.trim_start();
        let eq = rest.find('=')?;
        let name = rest[..eq].trim();
        let after = rest[eq + 1..].trim_start();
        let quote = after.chars().next().filter(|&c| c == '"' || c == '\'')?;
        let body = &after[1..];
        let end = body.find(quote)?;
        if name == key {
            return Some(unescape(&body[..end]));
        }
        rest = &body[end + 1..];
    }
}

fn unescape(v: &str) -> String {
    if !v.contains('&') {
        return v.to_string();
    }
    v.replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&apos;", "'")
        .replace("&amp;", "&")
}

/// Linear scan of the XML element structure: every element closed, in order, and nested at
/// most [`MAX_XML_DEPTH`] deep. Returns the line (1-based) and a message for the first
/// problem. It runs before the XML reader because that reader reports a cut-short file
/// without a line ("No elements found") and is slow on deep nesting (see [`MAX_XML_DEPTH`]).
///
/// The scan knows comments, CDATA, processing instructions, `<!DOCTYPE ...>` (with an
/// internal subset in brackets) and quoted attribute values; anything else inside `<...>`
/// is left to the XML reader, so a well-formed file always passes.
///
/// `on_start` sees every start tag in file order (see [`StartTag`]).
pub(super) fn scan_xml(
    text: &str,
    mut on_start: impl FnMut(StartTag<'_>),
) -> std::result::Result<(), (usize, String)> {
    let b = text.as_bytes();
    let line_at = |pos: usize| {
        1 + b[..pos.min(b.len())]
            .iter()
            .filter(|&&c| c == b'\n')
            .count()
    };
    // Open elements: name and the byte where the tag starts (lines of open elements are
    // counted only for messages; start tags are counted incrementally, so the scan stays
    // linear).
    let mut open: Vec<(&str, usize)> = Vec::new();
    let (mut counted_to, mut line) = (0usize, 1usize);
    let find = |from: usize, pat: &str| text[from..].find(pat).map(|i| from + i);
    let mut i = 0;
    while let Some(lt) = find(i, "<") {
        let rest = &text[lt..];
        let unclosed = |what: &str| {
            (
                line_at(lt),
                format!(
                    "is not valid URDF: {what} starting here is never closed: the file is cut \
                     short or a `>` is missing"
                ),
            )
        };
        if rest.starts_with("<!--") {
            i = find(lt + 4, "-->").ok_or_else(|| unclosed("the comment"))? + 3;
        } else if rest.starts_with("<![CDATA[") {
            i = find(lt + 9, "]]>").ok_or_else(|| unclosed("the CDATA section"))? + 3;
        } else if rest.starts_with("<?") {
            i = find(lt + 2, "?>").ok_or_else(|| unclosed("the `<?...?>` instruction"))? + 2;
        } else if rest.starts_with("<!") {
            // DOCTYPE: `>` ends it unless inside the bracketed internal subset or quotes.
            let (mut j, mut depth, mut quote) = (lt + 2, 0usize, None);
            loop {
                match (b.get(j), quote) {
                    (None, _) => return Err(unclosed("the `<!...>` declaration")),
                    (Some(&c), Some(q)) if c == q => quote = None,
                    (Some(_), Some(_)) => {}
                    (Some(&c), None) if c == b'"' || c == b'\'' => quote = Some(c),
                    (Some(b'['), None) => depth += 1,
                    (Some(b']'), None) => depth = depth.saturating_sub(1),
                    (Some(b'>'), None) if depth == 0 => break,
                    _ => {}
                }
                j += 1;
            }
            i = j + 1;
        } else {
            let closing = rest.starts_with("</");
            let name_start = lt + if closing { 2 } else { 1 };
            let name_end = text[name_start..]
                .find(|c: char| c.is_whitespace() || c == '>' || c == '/')
                .map_or(b.len(), |k| name_start + k);
            let name = &text[name_start..name_end];
            // A name that starts with ':' has an empty namespace prefix, which namespace-aware
            // XML forbids; the XML reader accepts it and then panics when it writes the
            // element back out, so it is refused here.
            let colon_name = || {
                (
                    line_at(lt),
                    "is not valid URDF: an element or attribute name in this tag starts with \
                     ':': remove the colon or write the prefix before it"
                        .to_string(),
                )
            };
            if name.starts_with(':') {
                return Err(colon_name());
            }
            // Find the tag's end outside quoted attribute values.
            let (mut j, mut quote) = (name_end, None);
            loop {
                match (b.get(j), quote) {
                    (None, _) => {
                        return Err(unclosed(&format!(
                            "the tag <{}{name}",
                            if closing { "/" } else { "" }
                        )))
                    }
                    (Some(&c), Some(q)) if c == q => quote = None,
                    (Some(_), Some(_)) => {}
                    (Some(&c), None) if c == b'"' || c == b'\'' => quote = Some(c),
                    (Some(b'>'), None) => break,
                    // An attribute name begins after whitespace or a closing quote.
                    (Some(b':'), None)
                        if matches!(b[j - 1], b' ' | b'\t' | b'\r' | b'\n' | b'"' | b'\'') =>
                    {
                        return Err(colon_name())
                    }
                    _ => {}
                }
                j += 1;
            }
            let self_closing = b[j - 1] == b'/' && j - 1 > lt;
            if closing {
                match open.pop() {
                    Some((o, _)) if o == name => {}
                    Some((o, at)) => {
                        return Err((
                            line_at(lt),
                            format!(
                                "is not valid URDF: </{name}> closes <{o}>, opened on line {}: \
                                 close the elements in the order they were opened",
                                line_at(at)
                            ),
                        ))
                    }
                    None => {
                        return Err((
                            line_at(lt),
                            format!(
                                "is not valid URDF: </{name}> closes no open element: remove it"
                            ),
                        ))
                    }
                }
            } else if !name.is_empty() {
                line += b[counted_to..lt].iter().filter(|&&c| c == b'\n').count();
                counted_to = lt;
                let attrs_end = if self_closing { j - 1 } else { j };
                on_start(StartTag {
                    name,
                    attrs: &text[name_end..attrs_end.max(name_end)],
                    line,
                    depth: open.len(),
                });
            }
            if !closing && !self_closing && !name.is_empty() {
                open.push((name, lt));
                if open.len() > MAX_XML_DEPTH {
                    return Err((
                        line_at(lt),
                        format!(
                            "elements nest more than {MAX_XML_DEPTH} deep here (a URDF needs \
                             about 5): check that this is a robot description"
                        ),
                    ));
                }
            }
            i = j + 1;
        }
    }
    match open.last() {
        Some((name, at)) => Err((
            line_at(*at),
            format!(
                "is not valid URDF: <{name}> opened here is never closed: the file is cut short \
                 or `</{name}>` is missing"
            ),
        )),
        None => Ok(()),
    }
}

#[cfg(test)]
mod tests;
