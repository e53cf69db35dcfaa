//! What the process's surroundings say about how to print: colour, characters, width.
//! Read once in [`Environment::from_process`]; tests build their own.

use super::cli::ColorChoice;
use std::io::IsTerminal;

#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Environment {
    pub stdout_is_terminal: bool,
    /// stderr is a terminal: a progress line may be drawn there.
    pub stderr_is_terminal: bool,
    /// `NO_COLOR`, when set.
    pub no_color: Option<String>,
    /// `TERM`, when set.
    pub term: Option<String>,
    /// The first set of `LC_ALL`, `LC_CTYPE`, `LANG`.
    pub locale: Option<String>,
    /// `COLUMNS`, when set.
    pub columns: Option<String>,
}

impl Environment {
    pub fn from_process() -> Environment {
        let var = |name: &str| std::env::var(name).ok();
        Environment {
            stdout_is_terminal: std::io::stdout().is_terminal(),
            stderr_is_terminal: std::io::stderr().is_terminal(),
            no_color: var("NO_COLOR"),
            term: var("TERM"),
            locale: ["LC_ALL", "LC_CTYPE", "LANG"]
                .iter()
                .find_map(|name| var(name).filter(|v| !v.is_empty())),
            columns: var("COLUMNS"),
        }
    }

    /// `always` and `never` are obeyed as given (an explicit flag outranks `NO_COLOR`);
    /// `auto` colours only a terminal that is not `dumb`, and only while `NO_COLOR` is unset
    /// or empty.
    pub fn color(&self, choice: ColorChoice) -> bool {
        match choice {
            ColorChoice::Always => true,
            ColorChoice::Never => false,
            ColorChoice::Auto => {
                self.stdout_is_terminal
                    && self.no_color.as_deref().is_none_or(str::is_empty)
                    && self.term.as_deref() != Some("dumb")
            }
        }
    }

    /// Box-drawing characters unless the terminal is `dumb` or the locale names a character set
    /// other than UTF-8. With no locale at all (CI runners, containers) Unicode is assumed.
    pub fn unicode(&self) -> bool {
        if self.term.as_deref() == Some("dumb") {
            return false;
        }
        match &self.locale {
            None => true,
            Some(locale) => {
                let locale = locale.to_ascii_lowercase();
                let names_utf8 = locale.contains("utf-8") || locale.contains("utf8");
                // `en_US` with no character set usually means UTF-8 today; `C` and `POSIX` mean
                // ASCII.
                let bare = !locale.contains('.') && locale != "c" && locale != "posix";
                names_utf8 || bare
            }
        }
    }

    /// Columns to wrap at: `COLUMNS` when it is a sensible number, else 100.
    pub fn width(&self) -> usize {
        self.columns
            .as_deref()
            .and_then(|c| c.trim().parse::<usize>().ok())
            .filter(|c| (40..=400).contains(c))
            .unwrap_or(100)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn terminal() -> Environment {
        Environment {
            stdout_is_terminal: true,
            ..Environment::default()
        }
    }

    #[test]
    fn colour_follows_flag_terminal_and_no_color() {
        assert!(terminal().color(ColorChoice::Auto));
        assert!(!Environment::default().color(ColorChoice::Auto));
        assert!(Environment::default().color(ColorChoice::Always));
        assert!(!terminal().color(ColorChoice::Never));
        let no_color = Environment {
            no_color: Some("1".into()),
            ..terminal()
        };
        assert!(!no_color.color(ColorChoice::Auto));
        let empty = Environment {
            no_color: Some(String::new()),
            ..terminal()
        };
        assert!(empty.color(ColorChoice::Auto));
    }

    #[test]
    fn unicode_unless_the_locale_says_otherwise() {
        assert!(Environment::default().unicode());
        let utf8 = Environment {
            locale: Some("en_GB.UTF-8".into()),
            ..Environment::default()
        };
        assert!(utf8.unicode());
        for narrow in ["C", "POSIX", "de_DE.ISO-8859-1"] {
            let env = Environment {
                locale: Some(narrow.into()),
                ..Environment::default()
            };
            assert!(!env.unicode(), "{narrow}");
        }
        let dumb = Environment {
            term: Some("dumb".into()),
            ..Environment::default()
        };
        assert!(!dumb.unicode());
    }

    #[test]
    fn width_comes_from_columns_within_reason() {
        assert_eq!(Environment::default().width(), 100);
        let wide = Environment {
            columns: Some("160".into()),
            ..Environment::default()
        };
        assert_eq!(wide.width(), 160);
        let silly = Environment {
            columns: Some("3".into()),
            ..Environment::default()
        };
        assert_eq!(silly.width(), 100);
    }
}
