//! SVG text and marker elements, XML escaping and text measurement.

use super::axes::num;
use super::*;
use std::fmt::Write as _;

/// Escape `&`, `<`, `>`, `"` and `'` for XML text and attribute values.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c => out.push(c),
        }
    }
    out
}

/// Estimated width of `text` in DejaVu Sans at `size` px, from its advance widths
/// rounded up; the fallback fonts are narrower, so the estimate errs wide.
pub(super) fn text_width(text: &str, size: f64) -> f64 {
    let em: f64 = text
        .chars()
        .map(|c| match c {
            ' ' | '.' | ',' | ':' | ';' | '\'' | '|' | '!' | 'i' | 'j' | 'l' => 0.34,
            '(' | ')' | '[' | ']' | '/' | '-' | 'f' | 't' | 'r' | 'I' => 0.42,
            'm' | 'w' | 'M' | 'W' | '%' => 1.0,
            c if c.is_ascii_uppercase() => 0.75,
            _ => 0.64,
        })
        .sum();
    em * size
}

/// Greedy word wrap of `text` to lines no wider than `max` px at `size` px; a word
/// wider than `max` gets a line of its own.
pub(super) fn wrap(text: &str, max: f64, size: f64) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        let candidate = if line.is_empty() {
            word.to_string()
        } else {
            format!("{line} {word}")
        };
        if !line.is_empty() && text_width(&candidate, size) > max {
            lines.push(std::mem::replace(&mut line, word.to_string()));
        } else {
            line = candidate;
        }
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// One `<text>` element.
pub(super) fn text_element(
    out: &mut String,
    x: f64,
    y: f64,
    size: f64,
    attrs: &str,
    content: &str,
) {
    let _ = writeln!(
        out,
        r#"<text x="{}" y="{}" font-size="{}"{attrs}>{}</text>"#,
        num(x),
        num(y),
        num(size),
        escape(content)
    );
}

/// A marker of `shape` centred on `(x, y)`, filled or hollow.
pub(super) fn marker_element(
    out: &mut String,
    shape: Shape,
    x: f64,
    y: f64,
    colour: &str,
    hollow: bool,
) {
    let fill = if hollow { "#ffffff" } else { colour };
    let paint = format!(r#"fill="{fill}" stroke="{colour}" stroke-width="1.5""#);
    let r = 4.0;
    let poly = |pts: &[(f64, f64)]| -> String {
        pts.iter()
            .map(|(dx, dy)| format!("{},{}", num(x + dx), num(y + dy)))
            .collect::<Vec<_>>()
            .join(" ")
    };
    let _ = match shape {
        Shape::Circle => writeln!(
            out,
            r#"<circle cx="{}" cy="{}" r="{}" {paint}/>"#,
            num(x),
            num(y),
            num(r)
        ),
        Shape::Square => writeln!(
            out,
            r#"<rect x="{}" y="{}" width="{}" height="{}" {paint}/>"#,
            num(x - 0.9 * r),
            num(y - 0.9 * r),
            num(1.8 * r),
            num(1.8 * r)
        ),
        Shape::TriangleUp => writeln!(
            out,
            r#"<polygon points="{}" {paint}/>"#,
            poly(&[(0.0, -1.2 * r), (1.1 * r, 0.8 * r), (-1.1 * r, 0.8 * r)])
        ),
        Shape::Diamond => writeln!(
            out,
            r#"<polygon points="{}" {paint}/>"#,
            poly(&[(0.0, -1.25 * r), (r, 0.0), (0.0, 1.25 * r), (-r, 0.0)])
        ),
        Shape::TriangleDown => writeln!(
            out,
            r#"<polygon points="{}" {paint}/>"#,
            poly(&[(0.0, 1.2 * r), (1.1 * r, -0.8 * r), (-1.1 * r, -0.8 * r)])
        ),
    };
}
