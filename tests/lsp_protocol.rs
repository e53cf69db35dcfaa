//! `kickback lsp` driven over stdio with JSON-RPC messages, as an editor drives it: the
//! handshake, diagnostics on open and after changes, hovers, definitions across includes,
//! the outline, and code actions whose edits, applied, make their finding go away.

use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, ChildStdin, Command, Stdio};
use std::sync::mpsc::{channel, Receiver};
use std::time::Duration;

/// Long enough for a debug build on a busy machine; a hung server fails the test instead of
/// hanging it.
const WAIT: Duration = Duration::from_secs(60);

struct Client {
    child: Child,
    stdin: ChildStdin,
    messages: Receiver<Value>,
    next_id: i64,
}

impl Client {
    fn start(debounce_ms: u64) -> Client {
        let mut child = Command::new(env!("CARGO_BIN_EXE_kickback"))
            .args(["lsp", "--debounce-ms", &debounce_ms.to_string()])
            .env(
                "XDG_CACHE_HOME",
                std::env::temp_dir().join("kickback-lsp-test-cache"),
            )
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .expect("kickback lsp starts");
        let stdin = child.stdin.take().unwrap();
        let stdout = child.stdout.take().unwrap();
        let (sender, messages) = channel();
        std::thread::spawn(move || {
            let mut reader = BufReader::new(stdout);
            loop {
                let mut length = None;
                loop {
                    let mut line = String::new();
                    if reader.read_line(&mut line).unwrap_or(0) == 0 {
                        return;
                    }
                    let line = line.trim();
                    if line.is_empty() {
                        break;
                    }
                    if let Some(v) = line.strip_prefix("Content-Length:") {
                        length = v.trim().parse::<usize>().ok();
                    }
                }
                let mut body = vec![0; length.expect("a Content-Length header")];
                if reader.read_exact(&mut body).is_err() {
                    return;
                }
                let message: Value = serde_json::from_slice(&body).expect("JSON body");
                if sender.send(message).is_err() {
                    return;
                }
            }
        });
        let mut client = Client {
            child,
            stdin,
            messages,
            next_id: 1,
        };
        let init = client.request(
            "initialize",
            json!({"processId": null, "rootUri": null, "capabilities": {}}),
        );
        assert_eq!(init["result"]["serverInfo"]["name"], "kickback", "{init}");
        client.notify("initialized", json!({}));
        client
    }

    fn send(&mut self, message: Value) {
        let body = message.to_string();
        write!(self.stdin, "Content-Length: {}\r\n\r\n{body}", body.len()).unwrap();
        self.stdin.flush().unwrap();
    }

    fn notify(&mut self, method: &str, params: Value) {
        self.send(json!({"jsonrpc": "2.0", "method": method, "params": params}));
    }

    fn request(&mut self, method: &str, params: Value) -> Value {
        let id = self.next_id;
        self.next_id += 1;
        self.send(json!({"jsonrpc": "2.0", "id": id, "method": method, "params": params}));
        loop {
            let message = self.messages.recv_timeout(WAIT).expect("an answer");
            if message["id"] == id {
                return message;
            }
        }
    }

    /// The next diagnostics published for `uri` (with `version`, when given).
    fn diagnostics(&mut self, uri: &str, version: Option<i64>) -> Vec<Value> {
        loop {
            let m = self.messages.recv_timeout(WAIT).expect("diagnostics");
            if m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri
                && version.is_none_or(|v| m["params"]["version"] == v)
            {
                return m["params"]["diagnostics"].as_array().cloned().unwrap();
            }
        }
    }

    fn open(&mut self, uri: &str, text: &str) -> Vec<Value> {
        self.notify(
            "textDocument/didOpen",
            json!({"textDocument": {"uri": uri, "languageId": "spice", "version": 1, "text": text}}),
        );
        self.diagnostics(uri, Some(1))
    }

    fn change(&mut self, uri: &str, version: i64, text: &str) {
        self.notify(
            "textDocument/didChange",
            json!({"textDocument": {"uri": uri, "version": version},
                   "contentChanges": [{"text": text}]}),
        );
    }

    fn stop(mut self) {
        let answer = self.request("shutdown", Value::Null);
        assert!(answer.get("error").is_none(), "{answer}");
        self.notify("exit", Value::Null);
        for _ in 0..600 {
            if let Ok(Some(status)) = self.child.try_wait() {
                assert!(status.success(), "kickback lsp exits cleanly: {status}");
                return;
            }
            std::thread::sleep(Duration::from_millis(50));
        }
        let _ = self.child.kill();
        panic!("kickback lsp did not exit after `exit`");
    }
}

fn demo() -> (PathBuf, String, String) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/demo/doser.cir");
    let text = std::fs::read_to_string(&path).unwrap();
    let uri = url_of(&path);
    (path, uri, text)
}

fn url_of(path: &Path) -> String {
    format!("file://{}", path.display())
}

fn line_of(text: &str, start: &str) -> usize {
    text.lines()
        .position(|l| l.starts_with(start))
        .unwrap_or_else(|| panic!("no line starts with {start}"))
}

fn at(line: usize, character: usize) -> Value {
    json!({"line": line, "character": character})
}

fn codes(diagnostics: &[Value]) -> Vec<String> {
    diagnostics
        .iter()
        .map(|d| d["code"].as_str().unwrap_or("").to_string())
        .collect()
}

/// Applies a code action's edits to one text (positions are UTF-16; the fixtures are ASCII
/// where the edits land).
fn apply(text: &str, edits: &[Value]) -> String {
    let mut edits: Vec<&Value> = edits.iter().collect();
    let offset = |p: &Value| {
        let line = p["line"].as_u64().unwrap() as usize;
        let character = p["character"].as_u64().unwrap() as usize;
        let start: usize = text.split_inclusive('\n').take(line).map(str::len).sum();
        start + character
    };
    edits.sort_by_key(|e| std::cmp::Reverse(offset(&e["range"]["start"])));
    let mut out = text.to_string();
    for e in edits {
        let (a, b) = (offset(&e["range"]["start"]), offset(&e["range"]["end"]));
        out.replace_range(a..b, e["newText"].as_str().unwrap());
    }
    out
}

#[test]
fn the_demo_opens_with_its_findings_as_diagnostics() {
    let (_, uri, text) = demo();
    let mut client = Client::start(30);
    let diagnostics = client.open(&uri, &text);
    // The same findings `kickback check` gives the demo (tests/demo.rs), one per finding.
    let found = codes(&diagnostics);
    for rule in [
        "flyback-missing",
        "base-underdrive",
        "gate-underdrive",
        "shoot-through",
    ] {
        assert!(found.contains(&rule.to_string()), "{rule} in {found:?}");
    }
    let flyback = diagnostics
        .iter()
        .find(|d| d["code"] == "flyback-missing")
        .unwrap();
    assert_eq!(flyback["range"]["start"], at(line_of(&text, "XVALV"), 0));
    assert_eq!(flyback["severity"], 1, "an error");
    assert_eq!(flyback["source"], "kickback");
    let href = flyback["codeDescription"]["href"].as_str().unwrap();
    assert!(href.ends_with("/flyback-missing.md"), "{href}");
    let page = std::fs::read_to_string(href.trim_start_matches("file://")).unwrap();
    assert!(page.starts_with("# flyback-missing"), "{page}");
    let related = flyback["relatedInformation"].as_array().unwrap();
    assert!(
        related.iter().any(
            |r| r["location"]["range"]["start"]["line"] == line_of(&text, "QV")
                && r["message"].as_str().unwrap().contains("interrupts")
        ),
        "{related:?}"
    );
    let note = diagnostics
        .iter()
        .find(|d| d["code"] == "pwm-audible")
        .unwrap();
    assert_eq!(note["severity"], 3, "a note is information");
    client.stop();
}

#[test]
fn hover_shows_the_facts_report_prints() {
    let (_, uri, text) = demo();
    let mut client = Client::start(30);
    client.open(&uri, &text);
    let mut hover = |line: usize, character: usize| {
        let answer = client.request(
            "textDocument/hover",
            json!({"textDocument": {"uri": uri}, "position": at(line, character)}),
        );
        answer["result"]["contents"]["value"]
            .as_str()
            .unwrap_or("")
            .to_string()
    };
    // Each row is `kickback report`'s (tests/report_facts.rs checks those numbers).
    let timer = hover(line_of(&text, "XU1"), 1);
    assert!(timer.contains("Timer XU1 (timer-555, astable)"), "{timer}");
    assert!(
        timer.contains("frequency      2.782 kHz … 2.783 kHz"),
        "{timer}"
    );
    assert!(timer.contains("duty"), "{timer}");
    let switch = hover(line_of(&text, "MST"), 0);
    assert!(switch.contains("Switch MST (nmos, low side)"), "{switch}");
    assert!(switch.contains("vgs_on         3.3 V"), "{switch}");
    assert!(switch.contains("from .model NCH VTO"), "{switch}");
    assert!(switch.contains("dissipation"), "{switch}");
    let load = hover(line_of(&text, "XPUMP"), 2);
    assert!(load.contains("Load XPUMP (dc-motor)"), "{load}");
    assert!(
        load.contains("peak") && load.contains("effective"),
        "{load}"
    );
    assert!(load.contains("from config [parts.PUMP12]"), "{load}");
    let resistor = hover(line_of(&text, "RBV"), 0);
    assert!(
        resistor.contains("RBV            0 W … 6.237 mW"),
        "{resistor}"
    );
    // On a model name: its definition.
    let mst = line_of(&text, "MST");
    let model = hover(mst, text.lines().nth(mst).unwrap().find("NCH").unwrap() + 1);
    assert!(model.contains(".model NCH  NMOS (VTO=2.2"), "{model}");
    // Between statements there is nothing to say.
    let blank = line_of(&text, "* --- stirrer");
    assert_eq!(hover(blank - 1, 0), "");
    client.stop();
}

#[test]
fn definitions_outline_and_requests_before_the_check() {
    let (_, uri, text) = demo();
    let mut client = Client::start(30);
    client.open(&uri, &text);
    let qv = line_of(&text, "QV");
    let character = text.lines().nth(qv).unwrap().find("NPNSW").unwrap();
    let answer = client.request(
        "textDocument/definition",
        json!({"textDocument": {"uri": uri}, "position": at(qv, character)}),
    );
    assert_eq!(answer["result"]["uri"], uri);
    assert_eq!(
        answer["result"]["range"]["start"],
        at(line_of(&text, ".model NPNSW"), 0)
    );
    let symbols = client.request(
        "textDocument/documentSymbol",
        json!({"textDocument": {"uri": uri}}),
    );
    let names: Vec<(String, String)> = symbols["result"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            (
                s["name"].as_str().unwrap().to_string(),
                s["detail"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    let expected = [
        ("XU1", "timer, timer-555"),
        ("XU2", "timer, timer-555"),
        ("MPH", "switch, pmos"),
        ("MPL", "switch, nmos"),
        ("XPUMP", "load, dc-motor"),
        ("MST", "switch, nmos"),
        ("XSTIR", "load, dc-motor"),
        ("QV", "switch, npn"),
        ("XVALV", "load, solenoid"),
    ];
    let expected: Vec<(String, String)> = expected
        .iter()
        .map(|(a, b)| (a.to_string(), b.to_string()))
        .collect();
    assert_eq!(names, expected);
    // A request that arrives while a change waits for its quiet interval reads the new text.
    let renamed = text.replace("QV    valv_c", "QVX   valv_c");
    client.change(&uri, 2, &renamed);
    let symbols = client.request(
        "textDocument/documentSymbol",
        json!({"textDocument": {"uri": uri}}),
    );
    assert!(symbols.to_string().contains("\"QVX\""), "{symbols}");
    let unknown = client.request("textDocument/formatting", json!({}));
    assert_eq!(unknown["error"]["code"], -32601);
    client.stop();
}

/// Asks for the code actions on a line and returns the one whose title contains `title`.
fn action(client: &mut Client, uri: &str, line: usize, title: &str) -> Value {
    let answer = client.request(
        "textDocument/codeAction",
        json!({"textDocument": {"uri": uri},
               "range": {"start": at(line, 0), "end": at(line, 0)},
               "context": {"diagnostics": []}}),
    );
    let actions = answer["result"].as_array().cloned().unwrap_or_default();
    actions
        .into_iter()
        .find(|a| a["title"].as_str().unwrap_or("").contains(title))
        .unwrap_or_else(|| panic!("no action `{title}` on line {line}: {answer}"))
}

#[test]
fn code_actions_apply_the_rules_fixes_and_the_finding_goes() {
    let (_, uri, text) = demo();
    let mut client = Client::start(0);
    let before = client.open(&uri, &text);
    let count = |d: &[Value], rule: &str| codes(d).iter().filter(|c| *c == rule).count();
    assert_eq!(count(&before, "base-underdrive"), 1);
    assert_eq!(count(&before, "flyback-missing"), 1);

    // base-underdrive: RBV set to the E12 value the rule names in its fix (47 Ω, from the
    // rule's own help text: (3.3 V − V_BE) / (I_C/10) rounded down to E12).
    let set = action(&mut client, &uri, line_of(&text, "RBV"), "set RBV to 47 Ω");
    assert_eq!(set["kind"], "quickfix");
    let edits = set["edit"]["changes"][&uri].as_array().unwrap().clone();
    assert_eq!(edits.len(), 1);
    assert_eq!(edits[0]["newText"], "47");
    let text2 = apply(&text, &edits);
    assert!(text2.contains("RBV   pwm_valv valv_b 47\n"), "{text2}");
    client.change(&uri, 2, &text2);
    let after = client.diagnostics(&uri, Some(2));
    assert_eq!(count(&after, "base-underdrive"), 0, "{:?}", codes(&after));

    // flyback-missing: a diode across the valve, anode on the switched node, cathode on the
    // rail, of the part the rule names for a 1 Hz switch (a rectifier).
    let fit = action(&mut client, &uri, line_of(&text2, "XVALV"), "add DFW_XVALV");
    let edits = fit["edit"]["changes"][&uri].as_array().unwrap().clone();
    assert_eq!(edits[0]["newText"], "DFW_XVALV valv_c v12 1N4001\n");
    let text3 = apply(&text2, &edits);
    client.change(&uri, 3, &text3);
    let after = client.diagnostics(&uri, Some(3));
    assert_eq!(count(&after, "flyback-missing"), 0, "{:?}", codes(&after));
    // Only those two findings went; no new one came.
    let mut expected = codes(&before);
    expected.retain(|c| c != "base-underdrive" && c != "flyback-missing");
    assert_eq!(codes(&after), expected);

    // A waiver for a finding the user accepts: the project's comment, with a reason to fill in.
    let line = line_of(&text3, "XPUMP");
    let waive = action(&mut client, &uri, line, "pwm-frequency-unsuitable: waive");
    let edits = waive["edit"]["changes"][&uri].as_array().unwrap().clone();
    assert_eq!(
        edits[0]["newText"],
        "* kickback waive pwm-frequency-unsuitable because <say why it is safe here>\n"
    );
    let text4 = apply(&text3, &edits);
    client.change(&uri, 4, &text4);
    let after = client.diagnostics(&uri, Some(4));
    assert_eq!(count(&after, "pwm-frequency-unsuitable"), 0);
    assert_eq!(after.len(), expected.len() - 1);
    client.stop();
}

#[test]
fn changes_are_checked_once_the_buffer_is_quiet() {
    let (_, uri, text) = demo();
    let mut client = Client::start(300);
    client.open(&uri, &text);
    // Three quick edits: one check, of the last text.
    client.change(
        &uri,
        2,
        &text.replace("RBV   pwm_valv valv_b 1k", "RBV   pwm_valv valv_b 2k"),
    );
    client.change(
        &uri,
        3,
        &text.replace("RBV   pwm_valv valv_b 1k", "RBV   pwm_valv valv_b 3k"),
    );
    client.change(
        &uri,
        4,
        &text.replace("RBV   pwm_valv valv_b 1k", "RBV   pwm_valv valv_b 47"),
    );
    let m = client.messages.recv_timeout(WAIT).expect("diagnostics");
    assert_eq!(m["method"], "textDocument/publishDiagnostics");
    assert_eq!(
        m["params"]["version"], 4,
        "only the last version is checked: {m}"
    );
    assert!(!codes(m["params"]["diagnostics"].as_array().unwrap())
        .contains(&"base-underdrive".to_string()));
    client.stop();
}

#[test]
fn an_unsaved_buffer_reads_its_includes_from_disk() {
    let folder = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/lsp/included");
    let path = folder.join("board.cir");
    let uri = url_of(&path);
    let text = std::fs::read_to_string(&path).unwrap();
    let mut client = Client::start(0);
    let diagnostics = client.open(&uri, &text);
    assert_eq!(codes(&diagnostics), ["flyback-missing"]);
    // The buffer's text, not the file's: a diode added and not saved.
    let edited = text.replace(
        "L1 v12 c 20m\n",
        "L1 v12 c 20m\nD1 c v12 DFAST\n.model DFAST D\n",
    );
    client.change(&uri, 2, &edited);
    assert_eq!(
        codes(&client.diagnostics(&uri, Some(2))),
        Vec::<String>::new()
    );
    // The model on Q1's line is defined in the included file: hover shows it, and the
    // definition is there.
    let q1 = line_of(&edited, "Q1");
    let character = edited.lines().nth(q1).unwrap().find("NPNSW").unwrap();
    let answer = client.request(
        "textDocument/definition",
        json!({"textDocument": {"uri": uri}, "position": at(q1, character)}),
    );
    assert_eq!(answer["result"]["uri"], url_of(&folder.join("parts.lib")));
    assert_eq!(answer["result"]["range"]["start"], at(1, 0));
    let hover = client.request(
        "textDocument/hover",
        json!({"textDocument": {"uri": uri}, "position": at(q1, character)}),
    );
    let value = hover["result"]["contents"]["value"].as_str().unwrap();
    assert!(
        value.contains(".model NPNSW NPN (IS=1e-14 BF=120)"),
        "{value}"
    );
    assert!(value.contains("parts.lib:2"), "{value}");
    // A syntax error while typing is a diagnostic like any other, never a crash.
    client.change(&uri, 3, "title\nR1 a b {1k\n.end\n");
    let broken = client.diagnostics(&uri, Some(3));
    assert!(!broken.is_empty());
    client.change(&uri, 4, "\u{0}\u{ffff}garbage ( ) = \n+ + +\n");
    client.diagnostics(&uri, Some(4));
    client.notify(
        "textDocument/didClose",
        json!({"textDocument": {"uri": uri}}),
    );
    assert_eq!(client.diagnostics(&uri, None), Vec::<Value>::new());
    client.stop();
}

#[test]
fn a_subcircuit_line_shows_each_instance_and_its_name_leads_to_the_definition() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("testdata/lsp/nested.cir");
    let uri = url_of(&path);
    let text = std::fs::read_to_string(&path).unwrap();
    let mut client = Client::start(0);
    let diagnostics = client.open(&uri, &text);
    // One finding per instance, both on the definition's line (as `kickback check` gives).
    assert_eq!(
        codes(&diagnostics),
        ["resistor-overpower", "resistor-overpower"]
    );
    let rl = line_of(&text, "RL ");
    assert!(diagnostics.iter().all(|d| d["range"]["start"] == at(rl, 0)));
    let answer = client.request(
        "textDocument/hover",
        json!({"textDocument": {"uri": uri}, "position": at(line_of(&text, "M1 "), 0)}),
    );
    let hover = answer["result"]["contents"]["value"].as_str().unwrap();
    // The report's rows for each instance (V_GS 10 V: the pulse's high level).
    assert!(hover.contains("Switch X1.M1 (nmos, low side)"), "{hover}");
    assert!(hover.contains("Switch X2.M1 (nmos, low side)"), "{hover}");
    assert!(hover.contains("vgs_on         10 V … 10 V"), "{hover}");
    let x2 = line_of(&text, "X2 ");
    let character = text.lines().nth(x2).unwrap().find("CHAN").unwrap();
    let answer = client.request(
        "textDocument/definition",
        json!({"textDocument": {"uri": uri}, "position": at(x2, character)}),
    );
    assert_eq!(
        answer["result"]["range"]["start"],
        at(line_of(&text, ".subckt CHAN"), 0)
    );
    let symbols = client.request(
        "textDocument/documentSymbol",
        json!({"textDocument": {"uri": uri}}),
    );
    let names: Vec<&str> = symbols["result"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["CHAN", "M1"], "a line placed twice is one symbol");
    client.stop();
}
