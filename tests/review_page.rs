//! `kickback report --format html|markdown`: the review page as a person sees it. A real
//! headless Chromium (the system's package, which `.ci/run` installs) renders the demo's page
//! and each of its plots; the checks are that every plot drew its curves, that the page has
//! the right number of plots and neighbourhood drawings, that the browser logged no error, and
//! that the page refers to nothing outside itself. The Markdown form is kept as a snapshot.

use assert_cmd::Command;
use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::time::{Duration, Instant};

fn kickback() -> Command {
    let mut cmd = Command::cargo_bin("kickback").expect("binary built");
    for name in ["NO_COLOR", "COLUMNS", "TERM", "LC_ALL", "LC_CTYPE", "LANG"] {
        cmd.env_remove(name);
    }
    cmd.current_dir(env!("CARGO_MANIFEST_DIR"));
    cmd.timeout(Duration::from_secs(300));
    cmd
}

fn run(args: &[&str]) -> (String, String, Option<i32>) {
    let out = kickback().args(args).output().expect("kickback ran");
    (
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
        out.status.code(),
    )
}

const DEMO: &str = "testdata/demo/doser.cir";

fn demo_html() -> String {
    let (html, stderr, code) = run(&["report", DEMO, "--format", "html"]);
    assert_eq!(code, Some(0), "{stderr}");
    html
}

/// The attribute values of `name="..."` in a document.
fn attributes(html: &str, name: &str) -> Vec<String> {
    let needle = format!(" {name}=\"");
    let mut out = Vec::new();
    let mut rest = html;
    while let Some(at) = rest.find(&needle) {
        let after = &rest[at + needle.len()..];
        let end = after.find('"').unwrap_or(after.len());
        out.push(after[..end].to_string());
        rest = &after[end..];
    }
    out
}

/// Every `<svg class="CLASS...">…</svg>` element (the plots hold no nested `svg`).
fn svgs<'a>(html: &'a str, class: &str) -> Vec<&'a str> {
    let open = format!("<svg class=\"{class}");
    let mut out = Vec::new();
    let mut rest = html;
    while let Some(at) = rest.find(&open) {
        let from = &rest[at..];
        let end = from
            .find("</svg>")
            .map_or(from.len(), |e| e + "</svg>".len());
        out.push(&from[..end]);
        rest = &from[end..];
    }
    out
}

#[test]
fn the_markdown_form_of_the_demo() {
    let (md, stderr, code) = run(&["report", DEMO, "--format", "markdown"]);
    assert_eq!(code, Some(0), "{stderr}");
    insta::assert_snapshot!("demo_markdown", md);
}

#[test]
fn the_page_refers_to_nothing_outside_itself() {
    let html = demo_html();
    let ids: std::collections::BTreeSet<String> = attributes(&html, "id").into_iter().collect();
    for href in attributes(&html, "href") {
        let target = href
            .strip_prefix('#')
            .unwrap_or_else(|| panic!("link out of the page: {href}"));
        assert!(ids.contains(target), "link to a missing anchor: #{target}");
    }
    assert!(
        attributes(&html, "src").is_empty(),
        "the page loads something"
    );
    for forbidden in ["<script", "<link", "@import", "url(", "http://", "https://"] {
        let hits: Vec<&str> = html
            .match_indices(forbidden)
            .map(|(i, _)| &html[i.saturating_sub(40)..(i + 60).min(html.len())])
            // The SVG namespace names itself; nothing is fetched from it.
            .filter(|around| !around.contains("http://www.w3.org/"))
            .collect();
        assert!(hits.is_empty(), "{forbidden}: {hits:?}");
    }
    assert!(
        html.contains("Content-Security-Policy"),
        "no policy against fetching"
    );
}

#[test]
fn names_from_the_netlist_are_escaped() {
    let dir = tempfile::tempdir().expect("temp dir");
    let deck = "<script>alert(1)</script> & \"quotes\"\n\
                V1 in<b> 0 DC 12\n\
                R<i>1 in<b> out&x 1k\n\
                M1 out&x g'q 0 0 NCH\n\
                VG g'q 0 PULSE(0 5 0 1u 1u 10u 20u)\n\
                .model NCH NMOS (VTO=2 KP=1)\n\
                .end\n";
    let path = dir.path().join("odd.cir");
    std::fs::write(&path, deck).expect("written");
    let file = path.to_string_lossy().to_string();
    for format in ["html", "markdown"] {
        let (out, stderr, code) = run(&["report", &file, "--format", format]);
        assert_eq!(code, Some(0), "{format}: {stderr}");
        for raw in ["<script", "<b>", "<i>"] {
            assert!(!out.contains(raw), "{format} printed {raw} raw");
        }
        assert!(out.contains("alert(1)"), "{format} lost the title");
    }
}

#[test]
fn check_leaves_the_page_formats_to_report() {
    let (_, stderr, code) = run(&["check", DEMO, "--format", "html"]);
    assert_eq!(code, Some(2));
    assert!(stderr.contains("kickback report"), "{stderr}");
}

// ---- in a real browser -------------------------------------------------------------------

/// The system's Chromium. Under CI (`CI` set) a missing browser fails the test: `.ci/run`
/// installs it. Elsewhere the test says so and passes.
fn chromium() -> Option<PathBuf> {
    for name in ["chromium", "chromium-browser"] {
        for dir in std::env::var("PATH").unwrap_or_default().split(':') {
            let path = Path::new(dir).join(name);
            if path.is_file() {
                return Some(path);
            }
        }
    }
    let ci = std::env::var("CI").is_ok_and(|v| !v.is_empty() && v != "false" && v != "0");
    assert!(
        !ci,
        "Chromium is missing: .ci/run installs the `chromium` package"
    );
    eprintln!("Chromium is not installed here; the browser checks did not run");
    None
}

/// Runs the browser on `page` with `extra` flags; returns (stdout, stderr).
fn browse(browser: &Path, page: &Path, extra: &[String]) -> (String, String) {
    let profile = tempfile::tempdir().expect("profile dir");
    let mut cmd = std::process::Command::new(browser);
    cmd.args([
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        "--hide-scrollbars",
        "--enable-logging=stderr",
        "--v=0",
    ])
    .arg(format!("--user-data-dir={}", profile.path().display()))
    .args(extra)
    .arg(format!("file://{}", page.display()));
    // Files, not pipes: the browser logs enough to fill a pipe that nobody reads until it exits.
    let logs = tempfile::tempdir().expect("log dir");
    let (out_path, err_path) = (logs.path().join("out"), logs.path().join("err"));
    cmd.stdin(Stdio::null())
        .stdout(std::fs::File::create(&out_path).expect("stdout file"))
        .stderr(std::fs::File::create(&err_path).expect("stderr file"));
    let mut child = cmd.spawn().expect("chromium starts");
    let started = Instant::now();
    loop {
        if child.try_wait().expect("wait").is_some() {
            break;
        }
        if started.elapsed() > Duration::from_secs(180) {
            let _ = child.kill();
            panic!("chromium did not finish in 180 s");
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let read =
        |p: &Path| String::from_utf8_lossy(&std::fs::read(p).unwrap_or_default()).into_owned();
    (read(&out_path), read(&err_path))
}

/// Lines where the page itself complained: console messages and blocked or missing loads.
fn page_errors(stderr: &str) -> Vec<&str> {
    stderr
        .lines()
        .filter(|l| {
            l.contains("CONSOLE")
                || l.contains("Uncaught")
                || l.contains("Refused to")
                || l.contains("Failed to load resource")
                || l.contains("net::ERR_")
        })
        .collect()
}

struct Shot {
    width: usize,
    height: usize,
    rgb: Vec<[u8; 3]>,
}

fn decode(path: &Path) -> Shot {
    let file = std::fs::File::open(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let decoder = png::Decoder::new(file);
    let mut reader = decoder.read_info().expect("png header");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("png frame");
    let channels = match info.color_type {
        png::ColorType::Rgba => 4,
        png::ColorType::Rgb => 3,
        other => panic!("unexpected screenshot colour type {other:?}"),
    };
    assert_eq!(info.bit_depth, png::BitDepth::Eight);
    let rgb = buf[..info.buffer_size()]
        .chunks(channels)
        .map(|p| [p[0], p[1], p[2]])
        .collect();
    Shot {
        width: info.width as usize,
        height: info.height as usize,
        rgb,
    }
}

fn near(p: [u8; 3], q: [u8; 3], tolerance: i32) -> bool {
    p.iter()
        .zip(q)
        .all(|(&a, b)| (i32::from(a) - i32::from(b)).abs() <= tolerance)
}

/// Where screenshots are kept for a person to look at.
fn shots_dir() -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("review-shots");
    std::fs::create_dir_all(&dir).expect("shots dir");
    dir
}

#[test]
fn the_demo_page_draws_in_a_real_browser() {
    let Some(browser) = chromium() else {
        return;
    };
    let html = demo_html();
    let dir = shots_dir();
    let page = dir.join("doser.html");
    std::fs::write(&page, &html).expect("page written");

    // The page as the browser built it: every plot and drawing is there, nothing complained.
    let (dom, stderr) = browse(&browser, &page, &["--dump-dom".to_string()]);
    let errors = page_errors(&stderr);
    assert!(errors.is_empty(), "the browser logged errors: {errors:#?}");
    let plots = svgs(&dom, "plot");
    // The demo has two timers (XU1 astable, XU2 one-shot) and four switches (MPH, MPL, MST,
    // QV), each with a diagram (testdata/demo/doser.cir).
    assert_eq!(plots.len(), 6, "plots in the page");
    assert_eq!(svgs(&dom, "plot timer-plot").len(), 2);
    assert_eq!(svgs(&dom, "plot switch-plot").len(), 4);
    // One neighbourhood drawing per finding about an element.
    let (json, _, _) = run(&["check", DEMO, "--format", "json"]);
    let doc: serde_json::Value = serde_json::from_str(&json).expect("check json");
    let with_element = doc["diagnostics"]
        .as_array()
        .expect("diagnostics")
        .iter()
        .filter(|d| d["element"].is_string())
        .count();
    assert!(with_element > 0);
    assert_eq!(
        svgs(&dom, "net").len(),
        with_element,
        "neighbourhood drawings"
    );
    for svg in &plots {
        assert!(
            svg.contains("<text"),
            "a plot without text: {}",
            &svg[..svg.len().min(200)]
        );
        assert!(
            svg.contains("<polyline") || svg.contains("<path"),
            "a plot without curves"
        );
    }

    // The whole page, for a person to look at.
    let (_, stderr) = browse(
        &browser,
        &page,
        &[
            format!("--screenshot={}", dir.join("doser.png").display()),
            "--window-size=1000,9000".to_string(),
        ],
    );
    assert!(page_errors(&stderr).is_empty(), "{stderr}");
    let whole = decode(&dir.join("doser.png"));
    let inked = whole
        .rgb
        .iter()
        .filter(|p| !near(**p, [255, 255, 255], 8))
        .count();
    assert!(inked * 50 > whole.rgb.len(), "the page is almost blank");

    // Each plot on its own, at a known place: its plot area holds the reference curve's
    // colour (charts.rs STYLES[0], #005a9c), so the curves drew, not only the axes.
    for (i, svg) in plots.iter().enumerate() {
        let single = dir.join(format!("plot-{i}.html"));
        std::fs::write(
            &single,
            format!(
                "<!DOCTYPE html><html><head><meta charset=\"utf-8\"><style>body{{margin:0}}svg{{display:block}}</style></head><body>{svg}</body></html>"
            ),
        )
        .expect("plot page");
        let png = dir.join(format!("plot-{i}.png"));
        let (_, stderr) = browse(
            &browser,
            &single,
            &[
                format!("--screenshot={}", png.display()),
                "--window-size=800,800".to_string(),
            ],
        );
        assert!(page_errors(&stderr).is_empty(), "plot {i}: {stderr}");
        let shot = decode(&png);
        assert!(
            shot.width >= 760 && shot.height >= 200,
            "plot {i}: {}x{}",
            shot.width,
            shot.height
        );
        let curve = shot
            .rgb
            .iter()
            .filter(|p| near(**p, [0x00, 0x5a, 0x9c], 40))
            .count();
        assert!(
            curve >= 150,
            "plot {i}: the reference curve drew {curve} pixels"
        );
        let colours: std::collections::BTreeSet<[u8; 3]> = shot.rgb.iter().copied().collect();
        assert!(
            colours.len() > 8,
            "plot {i} is nearly flat: {} colours",
            colours.len()
        );
    }
}
