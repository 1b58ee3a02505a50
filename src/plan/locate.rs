//! Which key an error's byte offset belongs to, for messages that name it:
//! the table in effect (with `[[scenario]]` entries numbered from 1), then the key
//! path inside the statement, inline tables and multi-line arrays included.

/// Strip a `#` comment outside quotes.
fn strip_comment(line: &str) -> &str {
    let mut in_str: Option<char> = None;
    for (i, c) in line.char_indices() {
        match (in_str, c) {
            (None, '"') | (None, '\'') => in_str = Some(c),
            (Some(q), c) if c == q => in_str = None,
            (None, '#') => return &line[..i],
            _ => {}
        }
    }
    line
}

/// The name of a header line (`[a.b]` or `[[a]]`), and whether it is an array table.
fn header(line: &str) -> Option<(String, bool)> {
    let t = strip_comment(line).trim();
    if let Some(inner) = t.strip_prefix("[[").and_then(|r| r.strip_suffix("]]")) {
        return Some((clean(inner), true));
    }
    if let Some(inner) = t.strip_prefix('[').and_then(|r| r.strip_suffix(']')) {
        return Some((clean(inner), false));
    }
    None
}

fn clean(key: &str) -> String {
    key.split('.')
        .map(|p| p.trim().trim_matches('"').trim_matches('\''))
        .collect::<Vec<_>>()
        .join(".")
}

/// Whether a (comment-free) line assigns a key: an `=` outside quotes and brackets.
fn assigns(line: &str) -> bool {
    let mut in_str: Option<char> = None;
    let mut depth = 0i32;
    for c in strip_comment(line).chars() {
        match (in_str, c) {
            (None, '"') | (None, '\'') => in_str = Some(c),
            (Some(q), c) if c == q => in_str = None,
            (None, '[') | (None, '{') => depth += 1,
            (None, ']') | (None, '}') => depth -= 1,
            (None, '=') if depth == 0 => return true,
            _ => {}
        }
    }
    false
}

/// The key path of a statement's text up to the error offset.
fn path_in(statement: &str, rest: &str) -> Vec<String> {
    let mut stack: Vec<String> = Vec::new();
    let mut word = String::new();
    let mut last_key = String::new();
    let mut in_str: Option<char> = None;
    let mut in_value = false;
    let mut arrays = 0i32;
    for c in statement.chars() {
        if let Some(q) = in_str {
            if c == q {
                in_str = None;
            }
            if !in_value {
                word.push(c);
            }
            continue;
        }
        match c {
            '"' | '\'' => {
                in_str = Some(c);
                if !in_value {
                    word.push(c);
                }
            }
            '=' if arrays == 0 => {
                last_key = clean(word.trim());
                word.clear();
                in_value = true;
            }
            '{' if arrays == 0 => {
                stack.push(last_key.clone());
                in_value = false;
                word.clear();
            }
            '}' if arrays == 0 => {
                last_key = stack.pop().unwrap_or_default();
                in_value = true;
            }
            ',' if arrays == 0 && !stack.is_empty() => {
                in_value = false;
                word.clear();
            }
            '[' if in_value => arrays += 1,
            ']' if in_value => arrays -= 1,
            '\n' => word.clear(),
            _ if !in_value => word.push(c),
            _ => {}
        }
    }
    // An unknown key: the span starts at the key itself (`name = ...`).
    let own: String = rest
        .trim_start()
        .chars()
        .take_while(|c| {
            c.is_ascii_alphanumeric() || *c == '_' || *c == '-' || *c == '"' || *c == '\''
        })
        .collect();
    let after = rest.trim_start()[own.len()..].trim_start();
    let mut path = stack;
    if !own.is_empty() && after.starts_with('=') && !in_value {
        path.push(clean(&own));
    } else if !last_key.is_empty() {
        path.push(last_key);
    }
    path.retain(|p| !p.is_empty());
    path
}

/// The dotted key at byte `offset` of `src` (empty when none can be told).
pub fn key_at(src: &str, offset: usize) -> String {
    let offset = (0..=offset.min(src.len()))
        .rev()
        .find(|i| src.is_char_boundary(*i))
        .unwrap_or(0);
    let line_start = src[..offset].rfind('\n').map_or(0, |i| i + 1);
    let line_end = src[offset..].find('\n').map_or(src.len(), |i| offset + i);
    if let Some((name, _)) = header(&src[line_start..line_end]) {
        return name;
    }
    // The table in effect, numbering array tables.
    let mut table = String::new();
    let mut counts: Vec<(String, usize)> = Vec::new();
    for l in src[..line_start].lines() {
        if let Some((name, array)) = header(l) {
            if array {
                let n = match counts.iter_mut().find(|(k, _)| *k == name) {
                    Some((_, n)) => {
                        *n += 1;
                        *n
                    }
                    None => {
                        counts.push((name.clone(), 1));
                        1
                    }
                };
                table = format!("{name}[{n}]");
            } else {
                table = name;
            }
        }
    }
    // The statement's first line: this one, or the nearest line above that assigns.
    let mut stmt_start = line_start;
    if !assigns(&src[line_start..offset]) && !assigns(&src[line_start..line_end]) {
        let mut pos = line_start;
        while pos > 0 {
            let prev_start = src[..pos - 1].rfind('\n').map_or(0, |i| i + 1);
            let l = &src[prev_start..pos - 1];
            if header(l).is_some() {
                break;
            }
            if assigns(l) {
                stmt_start = prev_start;
                break;
            }
            pos = prev_start;
        }
    }
    let statement: String = src[stmt_start..offset]
        .lines()
        .map(strip_comment)
        .collect::<Vec<_>>()
        .join("\n");
    let mut parts: Vec<String> = Vec::new();
    if !table.is_empty() {
        parts.push(table);
    }
    parts.extend(path_in(&statement, &src[offset..line_end]));
    parts.join(".")
}

#[cfg(test)]
mod tests {
    use super::key_at;

    fn at(src: &str, needle: &str) -> String {
        key_at(src, src.find(needle).expect("needle in source"))
    }

    #[test]
    fn plain_value_and_header_comment() {
        let s = "[protocol.dose]   # exactly one\nkcal_per_weak = 1200\n";
        assert_eq!(at(s, "kcal_per_weak"), "protocol.dose.kcal_per_weak");
        assert_eq!(at(s, "1200"), "protocol.dose.kcal_per_weak");
    }

    #[test]
    fn array_tables_are_numbered() {
        let s = "[[scenario]]\nname = \"a\"\n[[scenario]]\nname = \"b\"\nintake_fraction = \"x\"\n";
        assert_eq!(at(s, "\"x\""), "scenario[2].intake_fraction");
    }

    #[test]
    fn inline_table_and_multiline_array() {
        let s = "[activity]\nwalking = { speed_kmh = \"fast\", grade_percent = 2 }\n";
        assert_eq!(at(s, "\"fast\""), "activity.walking.speed_kmh");
        assert_eq!(at(s, "2 }"), "activity.walking.grade_percent");
        let m = "[protocol]\nsession_days = [\n  \"mon\",\n  7,\n]\n";
        assert_eq!(at(m, "7,"), "protocol.session_days");
    }

    #[test]
    fn quoted_key_and_top_level() {
        let s = "[participant]\n\"mas_kg\" = 3\n";
        assert_eq!(at(s, "\"mas_kg\""), "participant.mas_kg");
        assert_eq!(at("colour = 1\n", "colour"), "colour");
    }
}
