//! Finds the line of a key in config text, so that range errors found after parsing can
//! still point at the line the user must edit. Understands `[section]` headers followed by
//! `key = …`, dotted keys (`section.key = …`) and inline tables (`section = { key = … }`).

/// 1-based line of `key` inside `[section]`, if it appears there.
pub fn key_line(text: &str, section: &str, key: &str) -> Option<usize> {
    let mut current = String::new();
    for (i, line) in text.lines().enumerate() {
        let t = strip_comment(line).trim();
        if let Some(rest) = t.strip_prefix('[') {
            if let Some(name) = rest.split(']').next() {
                current = unquote(name.trim()).to_string();
            }
            continue;
        }
        let Some((lhs, rhs)) = t.split_once('=') else {
            continue;
        };
        let path: Vec<&str> = lhs.split('.').map(|p| unquote(p.trim())).collect();
        let found = if current == section {
            path == [key]
        } else if current.is_empty() {
            path == [section, key] || (path == [section] && inline_has_key(rhs, key))
        } else {
            false
        };
        if found {
            return Some(i + 1);
        }
    }
    None
}

/// 1-based line of the `[section]` header, if any.
pub fn section_line(text: &str, section: &str) -> Option<usize> {
    text.lines()
        .position(|line| {
            let t = strip_comment(line).trim();
            t.strip_prefix('[')
                .and_then(|r| r.split(']').next())
                .is_some_and(|name| unquote(name.trim()) == section)
        })
        .map(|i| i + 1)
}

fn unquote(s: &str) -> &str {
    s.trim_matches('"').trim_matches('\'')
}

/// The line without a trailing `# comment` (a `#` inside quotes is kept).
fn strip_comment(line: &str) -> &str {
    let mut quote = None;
    for (i, c) in line.char_indices() {
        match (quote, c) {
            (None, '"' | '\'') => quote = Some(c),
            (Some(q), c) if c == q => quote = None,
            (None, '#') => return &line[..i],
            _ => {}
        }
    }
    line
}

fn inline_has_key(rhs: &str, key: &str) -> bool {
    let Some(body) = rhs.trim().strip_prefix('{') else {
        return false;
    };
    body.trim_end_matches('}')
        .split(',')
        .filter_map(|kv| kv.split_once('='))
        .any(|(k, _)| unquote(k.trim()) == key)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn finds_key_in_its_section_only() {
        let text = "[data]\nfile = \"a.csv\"\n\n[sampler]\nchains = 0\ndraws=5\n";
        assert_eq!(key_line(text, "sampler", "chains"), Some(5));
        assert_eq!(key_line(text, "sampler", "draws"), Some(6));
        assert_eq!(key_line(text, "data", "chains"), None);
        assert_eq!(section_line(text, "sampler"), Some(4));
    }

    #[test]
    fn finds_dotted_and_inline_keys_and_skips_comments() {
        let text = "# chains = 3\nsampler.chains = 0\ngrid = { from = 1, to = 0 }\n[\"bands\"] # x\nlevels = [2]\n";
        assert_eq!(key_line(text, "sampler", "chains"), Some(2));
        assert_eq!(key_line(text, "grid", "to"), Some(3));
        assert_eq!(key_line(text, "bands", "levels"), Some(5));
        assert_eq!(key_line(text, "grid", "points"), None);
    }
}
