//! Finds the line of a key in config text, so that range errors found after parsing can
//! still point at the line the user must edit.

/// 1-based line of `key = …` inside `[section]`, if it appears there.
pub fn key_line(text: &str, section: &str, key: &str) -> Option<usize> {
    let mut current = String::new();
    for (i, line) in text.lines().enumerate() {
        let t = line.trim();
        if let Some(rest) = t.strip_prefix('[') {
            if let Some(name) = rest.split(']').next() {
                current = name.trim().to_string();
            }
            continue;
        }
        if current == section {
            if let Some((k, _)) = t.split_once('=') {
                if k.trim().trim_matches('"') == key {
                    return Some(i + 1);
                }
            }
        }
    }
    None
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
    }
}
