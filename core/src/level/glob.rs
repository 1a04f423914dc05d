//! Name patterns for tag rules: `*` matches any run of characters, `?` any one character.

/// True when `name` matches the glob `pattern` (`*` any run, `?` one character, all else literal).
pub fn glob_matches(pattern: &str, name: &str) -> bool {
    let p: Vec<char> = pattern.chars().collect();
    let n: Vec<char> = name.chars().collect();
    let (mut pi, mut ni) = (0, 0);
    let mut backtrack: Option<(usize, usize)> = None;
    while ni < n.len() {
        if pi < p.len() && (p[pi] == '?' || p[pi] == n[ni]) {
            pi += 1;
            ni += 1;
        } else if pi < p.len() && p[pi] == '*' {
            backtrack = Some((pi, ni));
            pi += 1;
        } else if let Some((star, matched)) = backtrack {
            pi = star + 1;
            ni = matched + 1;
            backtrack = Some((star, matched + 1));
        } else {
            return false;
        }
    }
    p[pi..].iter().all(|&c| c == '*')
}

#[cfg(test)]
mod tests {
    use super::glob_matches;

    #[test]
    fn stars_and_question_marks() {
        assert!(glob_matches("*glass*", "tower/window-glass-2"));
        assert!(glob_matches("crate-?", "crate-7"));
        assert!(!glob_matches("crate-?", "crate-12"));
        assert!(glob_matches("*", ""));
        assert!(!glob_matches("a*b", "acd"));
        assert!(glob_matches("a*b*c", "aXbYbZc"));
    }
}
