//! Suppression comments: `kickback: allow rule-a, rule-b -- reason`.

use super::text::is_ws;

/// The rule IDs (lower-cased) and the reason of an allow comment, given the comment's text
/// with its marker (`*`, `;`, `$`, `//`); `None` when it is an ordinary comment.
pub fn parse_allow(comment: &str) -> Option<(Vec<String>, Option<String>)> {
    let body = comment
        .trim_start_matches(['*', ';', '$', '/'])
        .trim_start_matches(is_ws);
    const KEY: &str = "kickback:";
    let head = body.get(..KEY.len())?;
    if !head.eq_ignore_ascii_case(KEY) {
        return None;
    }
    let body = body[KEY.len()..].trim_start_matches(is_ws);
    let verb_len = body
        .find(|c: char| is_ws(c) || c == ',')
        .unwrap_or(body.len());
    if !body[..verb_len].eq_ignore_ascii_case("allow") {
        return None;
    }
    let body = &body[verb_len..];
    let (list, reason) = match body.find("--") {
        Some(i) => (&body[..i], Some(body[i + 2..].trim_matches(is_ws))),
        None => (body, None),
    };
    let rules = list
        .split(|c: char| c == ',' || is_ws(c))
        .filter(|r| !r.is_empty())
        .map(|r| r.to_ascii_lowercase())
        .collect();
    let reason = reason.filter(|r| !r.is_empty()).map(str::to_string);
    Some((rules, reason))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn allow_comments() {
        assert_eq!(
            parse_allow("* kickback: allow a-b, c -- why not"),
            Some((
                vec!["a-b".to_string(), "c".to_string()],
                Some("why not".to_string())
            ))
        );
        assert_eq!(
            parse_allow("; KICKBACK: Allow x"),
            Some((vec!["x".to_string()], None))
        );
        assert_eq!(parse_allow("* just a comment"), None);
        assert_eq!(parse_allow("* kickback: deny x"), None);
        assert_eq!(parse_allow("* kickback:"), None);
    }
}
