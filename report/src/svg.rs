//! A tiny SVG writer: elements, attributes and text, every string XML-escaped on the way in
//! and every number written with at most two decimals (pixel coordinates need no more), so
//! figures stay small and can never carry markup from the data.
//!
//! Elements are opened and closed through a stack, so the output is always balanced.

use std::fmt::Write as _;

/// Escapes the five XML special characters (`& < > " '`); safe in text and in quoted
/// attribute values of both XML and HTML.
///
/// # Examples
/// ```
/// use trajweave_report::svg::escape;
/// assert_eq!(escape("<script>&\"'"), "&lt;script&gt;&amp;&quot;&#39;");
/// ```
pub fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            // Control characters other than tab and newline are not allowed in XML 1.0.
            c if (c as u32) < 0x20 && c != '\t' && c != '\n' => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

/// A number with at most two decimals, trailing zeros trimmed (`"-0"` written `"0"`); a
/// non-finite value is written `0` so an attribute stays valid.
///
/// # Examples
/// ```
/// use trajweave_report::svg::num;
/// assert_eq!(num(12.3456), "12.35");
/// assert_eq!(num(3.0), "3");
/// assert_eq!(num(-0.001), "0");
/// ```
pub fn num(x: f64) -> String {
    if !x.is_finite() {
        return "0".into();
    }
    let s = format!("{x:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".into()
    } else {
        s.to_string()
    }
}

/// An SVG document being written.
///
/// # Examples
/// ```
/// use trajweave_report::svg::Svg;
/// let mut s = Svg::new(100.0, 50.0, "a <b> chart");
/// s.leaf("rect", &[("x", "1"), ("width", "10")]);
/// s.text(5.0, 20.0, &[], "x < y");
/// let out = s.finish();
/// assert!(out.contains("x &lt; y") && out.ends_with("</svg>"));
/// ```
#[derive(Debug, Clone)]
pub struct Svg {
    buf: String,
    open: Vec<&'static str>,
}

impl Svg {
    /// Opens an `<svg>` of `width` x `height` pixels, described by `label` for screen readers.
    pub fn new(width: f64, height: f64, label: &str) -> Svg {
        let mut s = Svg {
            buf: String::with_capacity(4096),
            open: Vec::new(),
        };
        let (w, h) = (num(width), num(height));
        let view = format!("0 0 {w} {h}");
        s.open(
            "svg",
            &[
                ("xmlns", "http://www.w3.org/2000/svg"),
                ("viewBox", &view),
                ("width", &w),
                ("height", &h),
                ("role", "img"),
                ("aria-label", label),
                ("font-family", "sans-serif"),
                ("font-size", "12"),
            ],
        );
        s
    }

    fn tag(&mut self, name: &str, attrs: &[(&str, &str)]) {
        self.buf.push('<');
        self.buf.push_str(name);
        for (k, v) in attrs {
            let _ = write!(self.buf, " {k}=\"{}\"", escape(v));
        }
    }

    /// Opens an element; [`Svg::close`] closes it.
    pub fn open(&mut self, name: &'static str, attrs: &[(&str, &str)]) {
        self.tag(name, attrs);
        self.buf.push('>');
        self.open.push(name);
    }

    /// Closes the innermost open element (nothing when only none is open).
    pub fn close(&mut self) {
        if let Some(name) = self.open.pop() {
            let _ = write!(self.buf, "</{name}>");
        }
    }

    /// An element without content, such as `<rect .../>`.
    pub fn leaf(&mut self, name: &str, attrs: &[(&str, &str)]) {
        self.tag(name, attrs);
        self.buf.push_str("/>");
    }

    /// A `<text>` element at (x, y) holding `content` (escaped).
    pub fn text(&mut self, x: f64, y: f64, attrs: &[(&str, &str)], content: &str) {
        let (xs, ys) = (num(x), num(y));
        let mut all: Vec<(&str, &str)> = vec![("x", &xs), ("y", &ys)];
        all.extend_from_slice(attrs);
        self.tag("text", &all);
        self.buf.push('>');
        self.buf.push_str(&escape(content));
        self.buf.push_str("</text>");
    }

    /// A `<title>` child (a tooltip in browsers) holding `content` (escaped).
    pub fn title(&mut self, content: &str) {
        let _ = write!(self.buf, "<title>{}</title>", escape(content));
    }

    /// Closes every open element and returns the document.
    pub fn finish(mut self) -> String {
        while !self.open.is_empty() {
            self.close();
        }
        self.buf
    }
}

/// The `d` attribute of a polyline through the finite points; a non-finite point breaks the
/// line (a new `M`), so a curve with gaps is drawn as separate pieces.
///
/// # Examples
/// ```
/// use trajweave_report::svg::path_data;
/// assert_eq!(path_data([(0.0, 1.0), (2.5, 3.0)].into_iter()), "M0 1L2.5 3");
/// ```
pub fn path_data(points: impl Iterator<Item = (f64, f64)>) -> String {
    let mut d = String::new();
    let mut pen_down = false;
    for (x, y) in points {
        if !(x.is_finite() && y.is_finite()) {
            pen_down = false;
            continue;
        }
        let cmd = if pen_down { 'L' } else { 'M' };
        let _ = write!(d, "{cmd}{} {}", num(x), num(y));
        pen_down = true;
    }
    d
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;

    /// A minimal XML well-formedness check: tags balance and nest, attribute values are
    /// quoted, and no raw `<` or `&` (outside an entity) appears in text or values. Returns the
    /// names of the elements seen. Written from the XML 1.0 rules (W3C, sec. 2-3).
    pub(crate) fn well_formed(doc: &str) -> Result<Vec<String>, String> {
        let b = doc.as_bytes();
        let (mut i, mut stack, mut seen) = (0usize, Vec::<String>::new(), Vec::new());
        let entity_ok = |s: &str| {
            let mut rest = s;
            while let Some(p) = rest.find('&') {
                let tail = &rest[p + 1..];
                let end = tail.find(';').ok_or("unterminated entity")?;
                let name = &tail[..end];
                let ok = ["amp", "lt", "gt", "quot", "apos"].contains(&name)
                    || (name.starts_with('#') && name[1..].chars().all(|c| c.is_ascii_digit()));
                if !ok {
                    return Err("unknown entity");
                }
                rest = &tail[end + 1..];
            }
            Ok(())
        };
        while i < b.len() {
            if b[i] != b'<' {
                let end = doc[i..].find('<').map_or(b.len(), |p| i + p);
                let text = &doc[i..end];
                if text.contains('>') {
                    return Err(format!("raw > in text near {i}"));
                }
                entity_ok(text).map_err(|e| format!("{e} near {i}"))?;
                i = end;
                continue;
            }
            let end = doc[i..].find('>').ok_or("unterminated tag")? + i;
            let inner = &doc[i + 1..end];
            if inner.contains('<') {
                return Err(format!("raw < inside a tag near {i}"));
            }
            if let Some(name) = inner.strip_prefix('/') {
                match stack.pop() {
                    Some(open) if open == name => {}
                    other => return Err(format!("</{name}> closes {other:?}")),
                }
            } else if !inner.starts_with('!') {
                let self_closing = inner.ends_with('/');
                let body = inner.trim_end_matches('/');
                let name: String = body.chars().take_while(|c| !c.is_whitespace()).collect();
                let mut attrs = body[name.len()..].trim();
                while !attrs.is_empty() {
                    let eq = attrs.find('=').ok_or("attribute without value")?;
                    let rest = &attrs[eq + 1..];
                    if !rest.starts_with('"') {
                        return Err(format!("unquoted attribute in <{name}>"));
                    }
                    let close = rest[1..].find('"').ok_or("unterminated value")?;
                    entity_ok(&rest[1..1 + close]).map_err(|e| e.to_string())?;
                    attrs = rest[close + 2..].trim_start();
                }
                seen.push(name.clone());
                if !self_closing {
                    stack.push(name);
                }
            }
            i = end + 1;
        }
        if stack.is_empty() {
            Ok(seen)
        } else {
            Err(format!("unclosed {stack:?}"))
        }
    }

    #[test]
    fn checker_refuses_broken_documents() {
        // The checker itself must be able to fail.
        assert!(well_formed("<a><b></a></b>").is_err());
        assert!(well_formed("<a x=1></a>").is_err());
        assert!(well_formed("<a>x & y</a>").is_err());
        assert!(well_formed("<a><script>").is_err());
        assert!(well_formed("<a x=\"1\"><b/>&lt;&#39;</a>").is_ok());
    }

    #[test]
    fn user_strings_are_escaped_everywhere() {
        let evil = "<script>alert('x')</script> & \"q\"";
        let mut s = Svg::new(10.0, 10.0, evil);
        s.open("g", &[("data-name", evil)]);
        s.title(evil);
        s.text(0.0, 0.0, &[("class", evil)], evil);
        s.close();
        let out = s.finish();
        assert!(!out.contains("<script"));
        let seen = well_formed(&out).unwrap();
        assert_eq!(seen, vec!["svg", "g", "title", "text"]);
    }

    #[test]
    fn numbers_are_short() {
        assert_eq!(num(1.0 / 3.0), "0.33");
        assert_eq!(num(-2.5), "-2.5");
        assert_eq!(num(f64::NAN), "0");
        assert_eq!(num(1e6), "1000000");
    }

    #[test]
    fn paths_break_at_gaps() {
        let pts = [(0.0, 1.0), (1.0, f64::NAN), (2.0, 3.0), (3.0, 4.0)];
        assert_eq!(path_data(pts.into_iter()), "M0 1M2 3L3 4");
    }
}
