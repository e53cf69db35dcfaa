//! `kickback.toml`: the schema of a full example, and every kind of error naming its line,
//! column and key.

use kickback::circuit::Kind;
use kickback::config::{starter_toml, Config, ConfigError, RuleLevel};
use kickback::diagnostic::Severity;
use std::path::{Path, PathBuf};

fn fixture(relative: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("testdata/config")
        .join(relative)
}

fn parse(text: &str) -> Result<Config, ConfigError> {
    Config::parse(text, Path::new("bench/kickback.toml"))
}

fn close(a: Option<f64>, b: f64) -> bool {
    a.is_some_and(|a| (a - b).abs() <= 1e-12 * b.abs().max(1.0))
}

#[test]
fn full_example_parses() {
    let path = fixture("full/kickback.toml");
    let config = Config::load(&path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(config.path.as_deref(), Some(path.as_path()));
    assert_eq!(config.analysis.ground, ["0", "GND", "AGND"]);

    assert_eq!(config.rules.get("pwm-audible"), Some(&RuleLevel::Off));
    assert_eq!(
        config.rules.get("value-suspicious"),
        Some(&RuleLevel::Set(Severity::Note))
    );
    assert_eq!(
        config.rule_level("gate-underdrive"),
        Some(RuleLevel::Set(Severity::Error)),
        "rule IDs are looked up without regard to case"
    );
    assert_eq!(config.rule_spans.get("pwm-audible"), Some(&(7, 1)));
    assert_eq!(config.rule_spans.get("gate-underdrive"), Some(&(9, 1)));

    let vbat = config.supply("vbat").expect("[supply.VBAT]");
    assert_eq!(
        (vbat.min, vbat.nominal, vbat.max),
        (Some(7.0), Some(9.0), Some(9.6))
    );
    let v12 = config.supply("V12").expect("[supply.V12]");
    assert_eq!((v12.min, v12.nominal, v12.max), (None, Some(12.0), None));

    let names: Vec<&str> = config.parts.iter().map(|(n, _)| n.as_str()).collect();
    assert_eq!(
        names,
        ["PUMP12", "VALVE_*", "DOSEFET", "CBULK"],
        "file order"
    );
    let pump = &config.parts[0].1;
    assert_eq!(pump.kind, Some(Kind::DcMotor));
    assert_eq!(pump.ratings.get("rated_voltage"), Some(&12.0));
    assert_eq!(pump.ratings.get("stall_current"), Some(&1.8));
    assert!(close(pump.ratings.get("inductance").copied(), 2.2e-3));
    let fet = &config.parts[2].1;
    assert_eq!(fet.kind, Some(Kind::Nmos));
    assert_eq!(
        fet.pins.as_deref(),
        Some(&["d".to_string(), "g".to_string(), "s".to_string()][..])
    );
    assert!(close(fet.ratings.get("rds_on").copied(), 35e-3));
    assert!(close(fet.ratings.get("qg").copied(), 12e-9));
    assert_eq!(fet.ratings.get("logic_level"), Some(&1.0));
    let cap = &config.parts[3].1;
    assert_eq!(
        cap.ratings.get("polarized"),
        Some(&1.0),
        "a bool is stored as 1.0"
    );

    let xm = config
        .elements
        .get("XCH2.XM")
        .expect("[elements.\"XCH2.XM\"]");
    assert_eq!(xm.ratings.get("rated_voltage"), Some(&6.0));
    let timer = config.elements.get("XCH1.XTIMER").expect("timer entry");
    assert!(close(
        timer.ratings.get("discharge_current_rated").copied(),
        10e-3
    ));
}

#[test]
fn an_empty_file_is_the_defaults() {
    let config = parse("").unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(config.analysis.ground, ["0", "gnd"]);
    assert!(config.rules.is_empty() && config.parts.is_empty() && config.elements.is_empty());
    assert_eq!(
        config.path.as_deref(),
        Some(Path::new("bench/kickback.toml"))
    );
}

/// Config text, expected (line, column), expected key, a word the message must hold.
type ErrorCase = (
    &'static str,
    (usize, usize),
    Option<&'static str>,
    &'static str,
);

const ERRORS: &[ErrorCase] = &[
    // TOML syntax
    ("[parts\nkind = 1\n", (1, 7), None, ""),
    // unknown keys, with a suggestion where one is close
    (
        "[analisys]\nground = [\"0\"]\n",
        (1, 2),
        Some("analisys"),
        "analysis",
    ),
    (
        "[analysis]\ngrounds = [\"0\"]\n",
        (2, 1),
        Some("analysis.grounds"),
        "ground",
    ),
    (
        "[parts.PUMP12]\nkind = \"dc-motor\"\nstall_curent = 1.8\n",
        (3, 1),
        Some("parts.PUMP12.stall_curent"),
        "stall_current",
    ),
    (
        "[elements.\"XCH2.XM\"]\nwattage = 3\n",
        (2, 1),
        Some("elements.\"XCH2.XM\".wattage"),
        "unknown key",
    ),
    (
        "[supply.VBAT]\ntyp = 9\n",
        (2, 1),
        Some("supply.VBAT.typ"),
        "nominal",
    ),
    // wrong types
    (
        "[parts.M]\nrated_voltage = true\n",
        (2, 1),
        Some("parts.M.rated_voltage"),
        "boolean",
    ),
    (
        "[parts.C]\npolarized = \"yes\"\n",
        (2, 1),
        Some("parts.C.polarized"),
        "true or false",
    ),
    (
        "[parts.M]\nkind = 3\n",
        (2, 1),
        Some("parts.M.kind"),
        "string",
    ),
    (
        "[parts.M]\npins = \"dgs\"\n",
        (2, 1),
        Some("parts.M.pins"),
        "array",
    ),
    (
        "[analysis]\nground = \"0\"\n",
        (2, 1),
        Some("analysis.ground"),
        "array",
    ),
    (
        "[analysis]\nground = [0]\n",
        (2, 1),
        Some("analysis.ground"),
        "strings",
    ),
    (
        "[rules]\npwm-audible = 1\n",
        (2, 1),
        Some("rules.pwm-audible"),
        "\"off\"",
    ),
    ("parts = 3\n", (1, 1), Some("parts"), "table"),
    ("[supply]\nVBAT = 9\n", (2, 1), Some("supply.VBAT"), "table"),
    // values that are not numbers or cannot be
    (
        "[parts.L]\ninductance = \"lots\"\n",
        (2, 1),
        Some("parts.L.inductance"),
        "not a number",
    ),
    (
        "[parts.R]\nresistance = -3\n",
        (2, 1),
        Some("parts.R.resistance"),
        "negative",
    ),
    (
        "[parts.L]\ninductance = \"-2m\"\n",
        (2, 1),
        Some("parts.L.inductance"),
        "negative",
    ),
    (
        "[parts.X]\nkind = \"stepper\"\n",
        (2, 1),
        Some("parts.X.kind"),
        "dc-motor",
    ),
    (
        "[parts.M]\npins = [\"d\", \"g\", \"spout\"]\n",
        (2, 1),
        Some("parts.M.pins"),
        "spout",
    ),
    (
        "[rules]\npwm-audible = \"fatal\"\n",
        (2, 1),
        Some("rules.pwm-audible"),
        "warning",
    ),
    (
        "[supply.VBAT]\nmin = 9.6\nmax = 7\n",
        (3, 1),
        Some("supply.VBAT.max"),
        "below min",
    ),
    (
        "[supply.VBAT]\nmin = 7\nmax = 9.6\nnominal = 12\n",
        (4, 1),
        Some("supply.VBAT.nominal"),
        "outside",
    ),
    (
        "[parts.M]\nvgs_th_max = 2\nvgs_th_min = 4\n",
        (2, 1),
        Some("parts.M.vgs_th_max"),
        "below vgs_th_min",
    ),
    (
        "[parts.U]\nsupply_max = 20\nsupply_abs_max = 18\n",
        (3, 1),
        Some("parts.U.supply_abs_max"),
        "below supply_max",
    ),
    (
        "[parts.\"PUMP[\"]\nkind = \"dc-motor\"\n",
        (1, 8),
        Some("parts.PUMP["),
        "glob",
    ),
    (
        "[parts.M]\n  vds_max = nan\n",
        (2, 3),
        Some("parts.M.vds_max"),
        "finite",
    ),
    ("[parts.M]\nvds_max = 1979-05-27\n", (2, 11), None, "date"),
];

#[test]
fn every_error_names_line_column_and_key() {
    for (text, (line, column), key, word) in ERRORS {
        let error = match parse(text) {
            Ok(_) => panic!("accepted:\n{text}"),
            Err(e) => e,
        };
        assert_eq!(
            (error.line, error.column),
            (*line, *column),
            "{text}\n{error}"
        );
        assert_eq!(error.key.as_deref(), *key, "{text}\n{error}");
        assert!(
            error.message.contains(word),
            "{text}\nmessage: {}",
            error.message
        );
        if let Some(key) = key {
            assert!(
                error.message.contains(key),
                "the message names the key: {}",
                error.message
            );
        }
        let shown = error.to_string();
        let prefix = format!("bench/kickback.toml:{line}:{column}: ");
        assert!(shown.starts_with(&prefix), "{shown}");
    }
}

#[test]
fn unreadable_file_is_an_error() {
    let missing = fixture("no-such-folder/kickback.toml");
    let error = Config::load(&missing).expect_err("missing file");
    assert_eq!(error.path, missing);
    assert!(error.message.contains("cannot read"));
}

#[test]
fn starter_file_parses_and_so_do_its_examples() {
    let starter = starter_toml();
    let config = parse(starter).unwrap_or_else(|e| panic!("starter: {e}"));
    assert_eq!(config.analysis.ground, ["0", "gnd"]);
    // "# " lines are examples; "## " lines are prose. Uncommented, the examples are valid.
    let uncommented: String = starter
        .lines()
        .map(|line| match line.strip_prefix("# ") {
            Some(example) => format!("{example}\n"),
            None => format!("{line}\n"),
        })
        .collect();
    let config = parse(&uncommented).unwrap_or_else(|e| panic!("uncommented starter: {e}"));
    assert_eq!(config.rules.get("pwm-audible"), Some(&RuleLevel::Off));
    assert!(config.supply("VBAT").is_some());
    assert_eq!(config.parts.len(), 3);
    assert_eq!(config.elements.len(), 1);
}

proptest::proptest! {
    /// Whatever the text, reading it gives a config or an error, never a panic.
    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,200}") {
        let _ = parse(&text);
    }

    /// Tables and keys of the schema with arbitrary values.
    #[test]
    fn arbitrary_values_never_panic(
        table in proptest::sample::select(vec!["parts.X", "elements.\"A.B\"", "supply.V1", "rules", "analysis"]),
        key in proptest::sample::select(vec!["kind", "pins", "min", "max", "ground", "vrrm", "polarized", "pwm-audible", "x"]),
        value in proptest::sample::select(vec!["1", "-1", "\"2.2m\"", "\"µ\"", "true", "[\"d\"]", "[1, 2]", "{ a = 1 }", "nan", "1e400", "\"\"", "1979-05-27"]),
    ) {
        let text = format!("[{table}]\n{key} = {value}\n");
        if let Err(error) = parse(&text) {
            proptest::prop_assert!(error.line >= 1 && error.column >= 1);
        }
    }
}
