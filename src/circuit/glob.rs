//! Case-insensitive name globs for `[parts.NAME]`: `*` any run, `?` one character, `[abc]`,
//! `[a-z]` and `[!abc]` classes. Small on purpose: names are short and patterns few.

enum Token {
    Star,
    One,
    Literal(char),
    Class {
        negated: bool,
        ranges: Vec<(char, char)>,
    },
}

/// True when the pattern uses glob syntax (otherwise it is an exact name).
pub fn is_glob(pattern: &str) -> bool {
    pattern.contains(['*', '?', '['])
}

/// Explains what is wrong with a pattern, if anything.
pub fn validate(pattern: &str) -> Result<(), String> {
    if pattern.trim().is_empty() {
        return Err("a part name or glob is empty".into());
    }
    tokens(pattern).map(|_| ())
}

/// Case-insensitive match of a whole name; an invalid pattern matches nothing.
pub fn matches(pattern: &str, name: &str) -> bool {
    if !is_glob(pattern) {
        return pattern.eq_ignore_ascii_case(name);
    }
    let Ok(pattern) = tokens(pattern) else {
        return false;
    };
    let name: Vec<char> = name.chars().map(fold).collect();
    let (mut p, mut n) = (0usize, 0usize);
    // Where the last `*` was and how much of the name it has swallowed, for backtracking.
    let mut star: Option<(usize, usize)> = None;
    while n < name.len() {
        let current = name.get(n).copied();
        match (pattern.get(p), current) {
            (Some(Token::Star), _) => {
                star = Some((p, n));
                p += 1;
            }
            (Some(token), Some(c)) if token_matches(token, c) => {
                p += 1;
                n += 1;
            }
            _ => match star {
                Some((star_p, star_n)) => {
                    p = star_p + 1;
                    n = star_n + 1;
                    star = Some((star_p, star_n + 1));
                }
                None => return false,
            },
        }
    }
    pattern
        .get(p..)
        .is_some_and(|rest| rest.iter().all(|t| matches!(t, Token::Star)))
}

fn fold(c: char) -> char {
    c.to_ascii_uppercase()
}

fn token_matches(token: &Token, c: char) -> bool {
    match token {
        Token::Star | Token::One => true,
        Token::Literal(l) => *l == c,
        Token::Class { negated, ranges } => {
            let inside = ranges.iter().any(|(lo, hi)| (*lo..=*hi).contains(&c));
            inside != *negated
        }
    }
}

fn tokens(pattern: &str) -> Result<Vec<Token>, String> {
    let mut out = Vec::new();
    let mut chars = pattern.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '*' => out.push(Token::Star),
            '?' => out.push(Token::One),
            '[' => {
                let negated = matches!(chars.peek(), Some('!' | '^'));
                if negated {
                    chars.next();
                }
                let mut ranges = Vec::new();
                let mut closed = false;
                let mut first = true;
                while let Some(c) = chars.next() {
                    if c == ']' && !first {
                        closed = true;
                        break;
                    }
                    first = false;
                    let lo = fold(c);
                    if chars.peek() == Some(&'-') {
                        let mut ahead = chars.clone();
                        ahead.next();
                        if let Some(hi) = ahead.next().filter(|h| *h != ']') {
                            chars.next();
                            chars.next();
                            let hi = fold(hi);
                            ranges.push((lo.min(hi), lo.max(hi)));
                            continue;
                        }
                    }
                    ranges.push((lo, lo));
                }
                if !closed {
                    return Err(format!("the glob \"{pattern}\" has a `[` with no `]`"));
                }
                out.push(Token::Class { negated, ranges });
            }
            other => out.push(Token::Literal(fold(other))),
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn globs() {
        assert!(matches("PUMP12", "pump12"));
        assert!(!matches("PUMP12", "pump123"));
        assert!(matches("pump*", "PUMP12"));
        assert!(matches("*12", "PUMP12"));
        assert!(matches("P?MP*", "pump12"));
        assert!(matches("VALVE_[ab]", "valve_B"));
        assert!(!matches("VALVE_[!ab]", "valve_B"));
        assert!(matches("Q[0-9]*", "q2x"));
        assert!(matches("*", ""));
        assert!(matches("a*b*c", "aXXbYYc"));
        assert!(!matches("a*b*c", "aXXbYY"));
        assert!(validate("bad[").is_err());
        assert!(validate(" ").is_err());
        assert!(validate("[]]").is_ok());
    }
}
