//! Suppression comments: `kickback waive rule-a, rule-b because reason`.
//!
//! The form written before this one, `kickback: allow rule-a -- reason`, is still read for one
//! release so that existing netlists keep their waivers while they are rewritten.

use super::text::is_ws;

/// What a waiver comment says.
#[derive(Clone, Debug, PartialEq)]
pub struct Waiver {
    /// Rule IDs as written, lower-cased.
    pub rules: Vec<String>,
    /// The reason, when one is given.
    pub reason: Option<String>,
    /// Written in the earlier `kickback: allow ... -- ...` form.
    pub earlier_form: bool,
}

/// The waiver a comment holds, given the comment's text with its marker (`*`, `;`, `$`,
/// `//`); `None` when it is an ordinary comment.
pub fn parse_waiver(comment: &str) -> Option<Waiver> {
    let body = comment
        .trim_start_matches(['*', ';', '$', '/'])
        .trim_start_matches(is_ws);
    if let Some((rules, reason)) = parse_waive(body) {
        return Some(Waiver {
            rules,
            reason,
            earlier_form: false,
        });
    }
    parse_old_allow(body).map(|(rules, reason)| Waiver {
        rules,
        reason,
        earlier_form: true,
    })
}

type Parts = (Vec<String>, Option<String>);

/// `kickback waive a, b because why`.
fn parse_waive(body: &str) -> Option<Parts> {
    let rest = strip_word(body, "kickback")?;
    let rest = strip_word(rest, "waive")?;
    let (list, reason) = match find_word(rest, "because") {
        Some((start, end)) => (&rest[..start], Some(rest[end..].trim_matches(is_ws))),
        None => (rest, None),
    };
    Some((rule_list(list), non_empty(reason)))
}

/// `kickback: allow a, b -- why`, the earlier form.
fn parse_old_allow(body: &str) -> Option<Parts> {
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
    Some((rule_list(list), non_empty(reason)))
}

/// `text` without its leading `word` (any case) and the blanks after it, when the word stands
/// there whole.
fn strip_word<'a>(text: &'a str, word: &str) -> Option<&'a str> {
    let head = text.get(..word.len())?;
    if !head.eq_ignore_ascii_case(word) {
        return None;
    }
    let rest = &text[word.len()..];
    if !rest.is_empty() && !rest.starts_with(is_ws) {
        return None;
    }
    Some(rest.trim_start_matches(is_ws))
}

/// Byte range of the first whole-word `word` (any case) in `text`.
fn find_word(text: &str, word: &str) -> Option<(usize, usize)> {
    let mut at = 0;
    for piece in text.split_inclusive(|c: char| is_ws(c) || c == ',') {
        let bare = piece.trim_end_matches(|c: char| is_ws(c) || c == ',');
        if bare.eq_ignore_ascii_case(word) {
            return Some((at, at + bare.len()));
        }
        at += piece.len();
    }
    None
}

fn rule_list(list: &str) -> Vec<String> {
    list.split(|c: char| c == ',' || is_ws(c))
        .filter(|r| !r.is_empty())
        .map(|r| r.to_ascii_lowercase())
        .collect()
}

fn non_empty(reason: Option<&str>) -> Option<String> {
    reason.filter(|r| !r.is_empty()).map(str::to_string)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rules(list: &[&str]) -> Vec<String> {
        list.iter().map(|r| r.to_string()).collect()
    }

    /// The rules and reason of a comment in the current form.
    fn parse_current(comment: &str) -> Option<Parts> {
        parse_waiver(comment).map(|w| {
            assert!(!w.earlier_form, "{comment}");
            (w.rules, w.reason)
        })
    }

    /// The rules and reason of a comment in the earlier form.
    fn parse_earlier(comment: &str) -> Option<Parts> {
        parse_waiver(comment).map(|w| {
            assert!(w.earlier_form, "{comment}");
            (w.rules, w.reason)
        })
    }

    #[test]
    fn waive_comments() {
        assert_eq!(
            parse_current("* kickback waive a-b, c because the coil has its own snubber"),
            Some((
                rules(&["a-b", "c"]),
                Some("the coil has its own snubber".to_string())
            ))
        );
        assert_eq!(
            parse_current("; KICKBACK Waive x"),
            Some((rules(&["x"]), None))
        );
        assert_eq!(
            parse_current("$ kickback waive x because"),
            Some((rules(&["x"]), None))
        );
        assert_eq!(
            parse_current("* kickback waive because why"),
            Some((vec![], Some("why".to_string())))
        );
        // A reason may itself say "because" again; only the first one separates.
        assert_eq!(
            parse_current("; kickback waive x because A, because B"),
            Some((rules(&["x"]), Some("A, because B".to_string())))
        );
    }

    #[test]
    fn ordinary_comments_are_not_waivers() {
        assert_eq!(parse_current("* just a comment"), None);
        assert_eq!(parse_current("* kickback waits for the supply"), None);
        assert_eq!(parse_current("* kickbackwaive x"), None);
        assert_eq!(parse_current("* kickback: deny x"), None);
        assert_eq!(parse_current("* kickback:"), None);
    }

    #[test]
    fn the_earlier_form_still_reads() {
        assert_eq!(
            parse_earlier("* kickback: allow a-b, c -- why not"),
            Some((rules(&["a-b", "c"]), Some("why not".to_string())))
        );
        assert_eq!(
            parse_earlier("; KICKBACK: Allow x"),
            Some((rules(&["x"]), None))
        );
    }
}
