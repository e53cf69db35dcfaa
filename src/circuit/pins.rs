//! Pin roles: the default port order of each kind, the port names (and common aliases) that
//! name a role, and the assignment of roles to an element's nodes.
//!
//! For a subcircuit kept whole, a port name that names a role wins over the port's position;
//! numeric names (`3`, `P3`, `PIN3`) name the position in the kind's default order (DIP order for
//! a 555). Ports whose names say nothing take the role of their position.

use super::layouts::{layout_of_kind, normalize, Layout, ALL_LAYOUTS, OTHER_NAMES, TWO_TERMINAL};
use super::{Kind, PinRole};

/// The role names to suggest in messages (each kind accepts its own aliases too).
pub const PRIMARY_ROLE_NAMES: [&str; 23] = [
    "gnd", "trig", "out", "reset", "ctrl", "thr", "dis", "vcc", "d", "g", "s", "b", "c", "e",
    "sub", "a", "k", "pos", "neg", "w", "ctrl+", "ctrl-", "other",
];

/// True when `name` is a pin role any kind accepts (for validating `pins = [...]`).
pub fn is_role_name(name: &str) -> bool {
    let name = normalize(name);
    OTHER_NAMES.contains(&name.as_str())
        || ALL_LAYOUTS.iter().any(|layout| {
            layout
                .order
                .iter()
                .any(|r| r.names.contains(&name.as_str()))
        })
}

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
pub(crate) fn by_kind_order(kind: Kind, count: usize) -> (Vec<PinRole>, Option<String>) {
    let layout = layout_of_kind(kind);
    let roles = by_position(layout, count);
    let problem = layout
        .filter(|l| count < l.by_order.0 || count > l.by_order.1)
        .map(|l| misfit(kind, count, l));
    (roles, problem)
}

/// A port name's role within a layout, when the name says it.
fn role_by_name(layout: &Layout, name: &str) -> Option<PinRole> {
    let name = normalize(name);
    if let Some(r) = layout
        .order
        .iter()
        .find(|r| r.names.contains(&name.as_str()))
    {
        return Some(r.role);
    }
    let digits = name
        .strip_prefix("PIN")
        .or_else(|| name.strip_prefix('P'))
        .unwrap_or(&name);
    if let Ok(position) = digits.parse::<usize>() {
        return position
            .checked_sub(1)
            .and_then(|i| layout.order.get(i))
            .map(|r| r.role);
    }
    if layout.sign_suffixes && name.len() > 1 {
        if name.ends_with('+') {
            return layout.order.first().map(|r| r.role);
        }
        if name.ends_with('-') {
            return layout.order.get(1).map(|r| r.role);
        }
    }
    None
}

/// Roles for a subcircuit kept whole: port names first, then positions. `ports` may be empty
/// (no definition in the deck); then only positions count.
pub(crate) fn for_kept(
    kind: Kind,
    ports: &[String],
    count: usize,
) -> (Vec<PinRole>, Option<String>) {
    let Some(layout) = layout_of_kind(kind) else {
        return (vec![PinRole::Other; count], None);
    };
    if ports.is_empty() {
        return by_kind_order(kind, count);
    }
    let named: Vec<Option<PinRole>> = (0..count)
        .map(|i| ports.get(i).and_then(|p| role_by_name(layout, p)))
        .collect();
    let explicit_other: Vec<bool> = (0..count)
        .map(|i| {
            ports
                .get(i)
                .is_some_and(|p| OTHER_NAMES.contains(&normalize(p).as_str()))
        })
        .collect();
    let taken: Vec<PinRole> = named.iter().flatten().copied().collect();
    let mut unplaced = false;
    let roles: Vec<PinRole> = (0..count)
        .map(|i| match named.get(i).copied().flatten() {
            Some(role) => role,
            None if explicit_other.get(i).copied().unwrap_or(false) => PinRole::Other,
            None => match layout.order.get(i).map(|r| r.role) {
                Some(role) if !taken.contains(&role) => role,
                _ => {
                    unplaced = true;
                    PinRole::Other
                }
            },
        })
        .collect();
    let all_named = named
        .iter()
        .zip(&explicit_other)
        .all(|(role, other)| role.is_some() || *other);
    let fits = if all_named {
        taken.len() >= layout.named_min
    } else {
        (layout.by_order.0..=layout.by_order.1).contains(&count)
    };
    let problem = (unplaced || !fits).then(|| misfit(kind, count, layout));
    (roles, problem)
}

/// Roles from a `pins = [...]` list in the config, in port order.
pub(crate) fn from_config(
    kind: Kind,
    names: &[String],
    count: usize,
) -> (Vec<PinRole>, Option<String>) {
    let layout = layout_of_kind(kind);
    let mut unknown = Vec::new();
    let roles: Vec<PinRole> = (0..count)
        .map(|i| {
            let Some(name) = names.get(i) else {
                return PinRole::Other;
            };
            if OTHER_NAMES.contains(&normalize(name).as_str()) {
                return PinRole::Other;
            }
            let role = layout.and_then(|l| {
                let normal = normalize(name);
                l.order
                    .iter()
                    .find(|r| r.names.contains(&normal.as_str()))
                    .map(|r| r.role)
            });
            role.unwrap_or_else(|| {
                unknown.push(name.clone());
                PinRole::Other
            })
        })
        .collect();
    let problem = if names.len() != count {
        Some(format!(
            "`pins` lists {} roles for {} ports; give one role per port, in port order",
            names.len(),
            count
        ))
    } else if !unknown.is_empty() {
        Some(format!(
            "`pins` names {} which a {kind} does not have; a {kind} has {}",
            unknown
                .iter()
                .map(|n| format!("\"{n}\""))
                .collect::<Vec<_>>()
                .join(", "),
            expected_roles(kind)
        ))
    } else {
        None
    };
    (roles, problem)
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

    #[test]
    fn timer_by_name_and_by_number() {
        let (roles, problem) = for_kept(
            Kind::Timer555,
            &ports(&[
                "VCC",
                "OUTPUT",
                "TRIGGER",
                "GND",
                "THRESHOLD",
                "DISCHARGE",
                "CV",
                "RESETbar",
            ]),
            8,
        );
        assert_eq!(problem, None);
        use PinRole::*;
        assert_eq!(roles, [Vcc, Out, Trig, Gnd, Thr, Dis, Ctrl, Reset]);
        let (roles, _) = for_kept(
            Kind::Timer555,
            &ports(&["8", "3", "1", "2", "4", "5", "6", "7"]),
            8,
        );
        assert_eq!(roles, [Vcc, Out, Gnd, Trig, Reset, Ctrl, Thr, Dis]);
    }

    #[test]
    fn mixed_names_fill_by_position() {
        use PinRole::*;
        let (roles, problem) = for_kept(
            Kind::Timer555,
            &ports(&["gnd", "x2", "x3", "x4", "x5", "x6", "x7", "vp"]),
            8,
        );
        assert_eq!(problem, None);
        assert_eq!(roles, [Gnd, Trig, Out, Reset, Ctrl, Thr, Dis, Vcc]);
    }

    #[test]
    fn misfits_are_reported() {
        let (_, problem) = for_kept(Kind::Timer555, &ports(&["a1", "a2", "a3"]), 3);
        assert!(problem.is_some());
        let (_, problem) = for_kept(Kind::DcMotor, &ports(&["m+", "m-"]), 2);
        assert_eq!(problem, None);
        let (_, problem) = from_config(Kind::Nmos, &ports(&["d", "g"]), 3);
        assert!(problem.is_some());
        let (_, problem) = from_config(Kind::Nmos, &ports(&["d", "g", "trig"]), 3);
        assert!(problem.is_some_and(|p| p.contains("trig")));
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
