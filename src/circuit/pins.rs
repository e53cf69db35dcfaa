//! Pin roles: the default port order of each kind, the port names (and common aliases) that
//! name a role, and the assignment of roles to an element's nodes.
//!
//! A subcircuit kept whole is never mapped by guesswork: when every port names its role
//! (`THRESHOLD`, `RESET_N`, `PIN6`), the names decide; when the port count fits the kind's
//! package order (DIP-8 for a 555) and no name contradicts that order, positions decide (bare
//! numbers are a model's internal node numbers and say nothing); otherwise the part's roles are
//! unknown until the config gives them, and its checks are skipped.

use super::{Kind, PinRole};
use crate::vocabulary::layouts::{layout_of_kind, normalize, Layout, OTHER_NAMES, TWO_TERMINAL};

pub use crate::vocabulary::roles::{is_role_name, PRIMARY_ROLE_NAMES};

/// Roles by node order for an element written with its own letter (`M1 d g s b`): extra nodes
/// are `other`. F, H, B and W elements have only the output pair.
pub(crate) fn by_letter(letter: char, kind: Kind, count: usize) -> Vec<PinRole> {
    let layout = match letter {
        'F' | 'H' | 'B' | 'W' => Some(&TWO_TERMINAL),
        'T' | 'A' | 'K' => None,
        _ => layout_of_kind(kind),
    };
    by_position(layout, count)
}

fn by_position(layout: Option<&Layout>, count: usize) -> Vec<PinRole> {
    (0..count)
        .map(|i| {
            layout
                .and_then(|l| l.order.get(i))
                .map_or(PinRole::Other, |r| r.role)
        })
        .collect()
}

/// Roles for an element whose kind was given in the config, by node order; a problem when the
/// node count does not fit the kind.
pub(crate) fn by_kind_order(kind: Kind, count: usize) -> Result<Vec<PinRole>, PinProblem> {
    let layout = layout_of_kind(kind);
    match layout.filter(|l| count < l.by_order.0 || count > l.by_order.1) {
        Some(l) => Err(PinProblem {
            message: misfit(kind, count, l),
            suggestion: vec!["?".to_string(); count],
            in_config: true,
        }),
        None => Ok(by_position(layout, count)),
    }
}

/// What a port's name says about its role.
#[derive(Clone, Copy, Debug, PartialEq)]
enum PortName {
    /// The name names this role (`THRESHOLD`, `RESET_N`, `PIN6`).
    Role(PinRole),
    /// A deliberately unused port (`NC`).
    Unused,
    /// A bare number: in a model, the author's internal node number, not the package pin. It
    /// neither names a role nor contradicts the package order.
    Number,
    /// A word that names no role (`drive`, `common`): it may mean anything.
    Silent,
}

/// Marks of inversion or polarity written around a role's name (`RESETB`, `RESETBAR`,
/// `RESET_N`, `NRESET`), tried when the whole name is no alias.
const SUFFIXES: [&str; 3] = ["BAR", "N", "B"];
const PREFIXES: [&str; 2] = ["NOT", "N"];

fn alias(layout: &Layout, name: &str) -> Option<PinRole> {
    layout
        .order
        .iter()
        .find(|r| r.names.contains(&name))
        .map(|r| r.role)
}

/// A port name's meaning within a layout.
fn port_name(layout: &Layout, raw: &str) -> PortName {
    let name = normalize(raw);
    if OTHER_NAMES.contains(&name.as_str()) {
        return PortName::Unused;
    }
    if let Some(role) = alias(layout, &name) {
        return PortName::Role(role);
    }
    let stripped = SUFFIXES
        .iter()
        .filter_map(|s| name.strip_suffix(s))
        .chain(PREFIXES.iter().filter_map(|p| name.strip_prefix(p)))
        .filter(|rest| rest.len() > 1)
        .find_map(|rest| alias(layout, rest));
    if let Some(role) = stripped {
        return PortName::Role(role);
    }
    // `PIN3` and `P3` say "package pin 3" in so many words.
    let numbered = name
        .strip_prefix("PIN")
        .or_else(|| name.strip_prefix('P'))
        .filter(|digits| !digits.is_empty() && digits.bytes().all(|b| b.is_ascii_digit()));
    if let Some(digits) = numbered {
        return match digits
            .parse::<usize>()
            .ok()
            .and_then(|p| p.checked_sub(1))
            .and_then(|i| layout.order.get(i))
        {
            Some(r) => PortName::Role(r.role),
            None => PortName::Silent,
        };
    }
    if !name.is_empty() && name.bytes().all(|b| b.is_ascii_digit()) {
        return PortName::Number;
    }
    if layout.sign_suffixes && name.len() > 1 {
        if name.ends_with('+') {
            return layout
                .order
                .first()
                .map_or(PortName::Silent, |r| PortName::Role(r.role));
        }
        if name.ends_with('-') {
            return layout
                .order
                .get(1)
                .map_or(PortName::Silent, |r| PortName::Role(r.role));
        }
    }
    PortName::Silent
}

/// Why a part's ports could not be given their roles, and the `pins` list that would settle it.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct PinProblem {
    pub message: String,
    /// One entry per port: the role the name gives it, `"?"` where nothing says.
    pub suggestion: Vec<String>,
    /// The config's own `pins` list is at fault (rather than the deck saying too little).
    pub in_config: bool,
}

/// Roles for a subcircuit kept whole. `ports` are the `.subckt` line's port names, empty when
/// the deck has no definition. Never guesses: port names decide when every port has one;
/// otherwise the kind's package order is used only when the count fits it and no name
/// contradicts it; anything else is a problem to settle in the config.
pub(crate) fn for_kept(
    kind: Kind,
    ports: &[String],
    count: usize,
) -> Result<Vec<PinRole>, PinProblem> {
    let Some(layout) = layout_of_kind(kind) else {
        return Ok(vec![PinRole::Other; count]);
    };
    let fits_order = (layout.by_order.0..=layout.by_order.1).contains(&count);
    if ports.is_empty() {
        return if fits_order {
            Ok(by_position(Some(layout), count))
        } else {
            Err(unsettled(kind, count, layout, &[], None))
        };
    }
    let names: Vec<PortName> = (0..count)
        .map(|i| {
            ports
                .get(i)
                .map_or(PortName::Silent, |p| port_name(layout, p))
        })
        .collect();
    let roles: Vec<PinRole> = names
        .iter()
        .filter_map(|n| match n {
            PortName::Role(r) => Some(*r),
            _ => None,
        })
        .collect();
    let mut distinct = roles.clone();
    distinct.sort_unstable();
    distinct.dedup();
    let repeated = distinct.len() < roles.len();
    let all_named = names
        .iter()
        .all(|n| matches!(n, PortName::Role(_) | PortName::Unused));
    if all_named && !repeated && roles.len() >= layout.named_min {
        return Ok(names
            .iter()
            .map(|n| match n {
                PortName::Role(r) => *r,
                _ => PinRole::Other,
            })
            .collect());
    }
    let agrees_with_order = names.iter().enumerate().all(|(i, n)| match n {
        PortName::Role(r) => layout.order.get(i).is_some_and(|o| o.role == *r),
        PortName::Silent => layout.words_by_position,
        PortName::Number | PortName::Unused => true,
    });
    if fits_order && agrees_with_order && !repeated {
        return Ok((0..count)
            .map(|i| match names.get(i) {
                Some(PortName::Unused) => PinRole::Other,
                _ => layout.order.get(i).map_or(PinRole::Other, |r| r.role),
            })
            .collect());
    }
    let why = if repeated {
        "two ports name the same pin"
    } else if !fits_order {
        "their count does not fit"
    } else if names.contains(&PortName::Silent) && !layout.words_by_position {
        "some names name no pin"
    } else {
        "their names disagree with the package order"
    };
    Err(unsettled(kind, count, layout, &names, Some(why)))
}

fn unsettled(
    kind: Kind,
    count: usize,
    layout: &Layout,
    names: &[PortName],
    why: Option<&str>,
) -> PinProblem {
    let (lo, hi) = layout.by_order;
    let expected = if lo == hi {
        format!("{lo}")
    } else {
        format!("{lo} to {hi}")
    };
    let message = match why {
        None => format!(
            "{count} ports and no `.subckt` line to name them: a {kind} has {expected} pins ({}), and kickback does not guess which port is which",
            expected_roles(kind)
        ),
        Some(why) => format!(
            "its ports do not say which {kind} pin each one is ({why}; a {kind} has {expected} pins: {}), and kickback does not guess",
            expected_roles(kind)
        ),
    };
    let suggestion = (0..count)
        .map(|i| match names.get(i) {
            Some(PortName::Role(r)) => r.as_str().to_string(),
            Some(PortName::Unused) => "other".to_string(),
            _ => "?".to_string(),
        })
        .collect();
    PinProblem {
        message,
        suggestion,
        in_config: false,
    }
}

/// Roles from a `pins = [...]` list in the config, in port order.
pub(crate) fn from_config(
    kind: Kind,
    names: &[String],
    count: usize,
) -> Result<Vec<PinRole>, PinProblem> {
    let layout = layout_of_kind(kind);
    let mut unknown = Vec::new();
    let roles: Vec<PinRole> = (0..count)
        .map(|i| {
            let Some(name) = names.get(i) else {
                return PinRole::Other;
            };
            let normal = normalize(name);
            if OTHER_NAMES.contains(&normal.as_str()) {
                return PinRole::Other;
            }
            layout.and_then(|l| alias(l, &normal)).unwrap_or_else(|| {
                unknown.push(name.clone());
                PinRole::Other
            })
        })
        .collect();
    let message = if names.len() != count {
        format!(
            "`pins` lists {} roles for {} ports; give one role per port, in port order",
            names.len(),
            count
        )
    } else if !unknown.is_empty() {
        format!(
            "`pins` names {} which a {kind} does not have; a {kind} has {}",
            unknown
                .iter()
                .map(|n| format!("\"{n}\""))
                .collect::<Vec<_>>()
                .join(", "),
            expected_roles(kind)
        )
    } else {
        return Ok(roles);
    };
    Err(PinProblem {
        message,
        suggestion: (0..count)
            .map(|i| match roles.get(i) {
                Some(PinRole::Other) | None => "?".to_string(),
                Some(r) => r.as_str().to_string(),
            })
            .collect(),
        in_config: true,
    })
}

/// The roles of a kind in default port order (`gnd trig out reset ctrl thr dis vcc`).
pub(crate) fn expected_roles(kind: Kind) -> String {
    match layout_of_kind(kind) {
        Some(layout) => layout
            .order
            .iter()
            .map(|r| r.role.as_str())
            .collect::<Vec<_>>()
            .join(" "),
        None => "no fixed roles".to_string(),
    }
}

fn misfit(kind: Kind, count: usize, layout: &Layout) -> String {
    let (lo, hi) = layout.by_order;
    let expected = if lo == hi {
        format!("{lo}")
    } else {
        format!("{lo} to {hi}")
    };
    format!(
        "{count} ports do not fit a {kind}, which has {expected} ({})",
        expected_roles(kind)
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ports(names: &[&str]) -> Vec<String> {
        names.iter().map(|s| s.to_string()).collect()
    }

    fn kept(names: &[&str]) -> Result<Vec<PinRole>, PinProblem> {
        for_kept(Kind::Timer555, &ports(names), names.len())
    }

    #[test]
    fn timer_ports_by_name_in_any_order() {
        use PinRole::*;
        let roles = kept(&[
            "VCC",
            "OUTPUT",
            "TRIGGER",
            "GND",
            "THRESHOLD",
            "DISCHARGE",
            "CV",
            "RESETbar",
        ]);
        assert_eq!(roles, Ok(vec![Vcc, Out, Trig, Gnd, Thr, Dis, Ctrl, Reset]));
        // A behavioural model's own order (common in public decks), with `TRI` and `RST`.
        let roles = kept(&["VCC", "GND", "RST", "DIS", "THR", "TRI", "CON", "OUT"]);
        assert_eq!(roles, Ok(vec![Vcc, Gnd, Reset, Dis, Thr, Trig, Ctrl, Out]));
        // Inversion marks around a name.
        let roles = kept(&[
            "vp", "vn", "reset_n", "disch", "thresh", "trig_b", "cont", "q",
        ]);
        assert_eq!(roles, Ok(vec![Vcc, Gnd, Reset, Dis, Thr, Trig, Ctrl, Out]));
        // Seven named ports (no reset pin on this model) are fine.
        let roles = kept(&["gnd", "trig", "out", "ctrl", "thr", "dis", "vcc"]);
        assert_eq!(roles, Ok(vec![Gnd, Trig, Out, Ctrl, Thr, Dis, Vcc]));
    }

    #[test]
    fn numbered_ports_are_node_numbers_not_pins() {
        use PinRole::*;
        let dip = vec![Gnd, Trig, Out, Reset, Ctrl, Thr, Dis, Vcc];
        // A vendor model's internal node numbers, in package order by its own comment.
        assert_eq!(
            kept(&["34", "32", "30", "19", "23", "33", "1", "21"]),
            Ok(dip.clone())
        );
        assert_eq!(
            kept(&["1", "2", "3", "4", "5", "6", "7", "8"]),
            Ok(dip.clone())
        );
        assert_eq!(kept(&["8", "3", "1", "2", "4", "5", "6", "7"]), Ok(dip));
        // `PIN3` says pin 3 in so many words.
        let roles = kept(&[
            "PIN8", "PIN1", "PIN2", "PIN3", "PIN4", "PIN5", "PIN6", "PIN7",
        ]);
        assert_eq!(roles, Ok(vec![Vcc, Gnd, Trig, Out, Reset, Ctrl, Thr, Dis]));
    }

    #[test]
    fn numbered_ports_follow_the_package_only_where_names_agree() {
        use PinRole::*;
        let roles = kept(&["gnd", "2", "3", "4", "5", "6", "7", "vp"]);
        assert_eq!(roles, Ok(vec![Gnd, Trig, Out, Reset, Ctrl, Thr, Dis, Vcc]));
        // Words that name no pin may mean anything: nothing is guessed.
        let problem = kept(&["gnd", "x2", "x3", "x4", "x5", "x6", "x7", "vp"]).unwrap_err();
        assert_eq!(problem.suggestion[0], "gnd");
        assert_eq!(problem.suggestion[1], "?");
        // `vcc` first contradicts the package order.
        let problem = kept(&["vcc", "2", "3", "4", "5", "6", "7", "gnd"]).unwrap_err();
        assert_eq!(problem.suggestion[0], "vcc");
        assert_eq!(problem.suggestion[1], "?");
        assert!(!problem.in_config);
        // Two ports that name one pin.
        assert!(kept(&["gnd", "trig", "out", "reset", "ctrl", "thr", "vcc", "vdd"]).is_err());
    }

    #[test]
    fn misfits_are_reported() {
        assert!(kept(&["a1", "a2", "a3"]).is_err());
        assert!(for_kept(Kind::Timer555, &[], 7).is_err());
        assert!(for_kept(Kind::Timer555, &[], 8).is_ok());
        assert!(for_kept(Kind::DcMotor, &ports(&["m+", "m-"]), 2).is_ok());
        assert!(for_kept(Kind::DcMotor, &ports(&["in", "out"]), 2).is_ok());
        let problem = from_config(Kind::Nmos, &ports(&["d", "g"]), 3).unwrap_err();
        assert!(problem.in_config);
        let problem = from_config(Kind::Nmos, &ports(&["d", "g", "trig"]), 3).unwrap_err();
        assert!(problem.message.contains("trig"));
    }

    #[test]
    fn role_names_are_known() {
        for name in PRIMARY_ROLE_NAMES {
            assert!(is_role_name(name), "{name}");
        }
        assert!(is_role_name("Drain"));
        assert!(!is_role_name("spout"));
    }
}
