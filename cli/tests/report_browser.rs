//! The HTML report in a real browser (issue 17): headless Debian chromium opens the page offline through `tests/browser/check-report.mjs`, and this test judges what it saw.
//!
//! The script fails on any console error, page error or request that is not a
//! `file:` URL, checks the page becomes ready and loads in under 2 s, plays the
//! replay for 5 s and moves the time slider (see the script's header). Here the
//! screenshots are decoded and judged: not blank, and the replay's drawing
//! changed between 0 s and 5 s of play; and the frame statistics the page
//! measured are read. The screenshots stay in `target/report-screenshots/`
//! (printed), which CI keeps as artefacts.
//!
//! Chromium and the script's one Node package are installed by `.ci/run`, which
//! sets LAYFLOW_REQUIRE_BROWSER=1 so that there the tests cannot skip; on a
//! machine without them the tests skip with a notice, like the GNU parallel
//! test in `experiment.rs`. To run them locally:
//! `apt-get install chromium && npm ci --prefix tests/browser`.

mod common;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::Mutex;

use common::{layflow, root, text};
use serde_json::Value;

/// One browser at a time: the page's own timings (load, frame draw time) are
/// measured while it runs, and two chromiums sharing the test machine's cores
/// would measure each other.
static ONE_BROWSER: Mutex<()> = Mutex::new(());

/// The 30 frames-per-second budget of issue 17: one frame's draw must take
/// less than 1000/30 ms.
const FRAME_BUDGET_MS: f64 = 1000.0 / 30.0;

/// What the script needs: node, the browser, and playwright-core installed
/// from the lock file. `None` (with a notice) when one is missing, unless
/// LAYFLOW_REQUIRE_BROWSER is set, as CI sets it: then missing is a failure.
#[allow(clippy::disallowed_macros)] // a test's notice (cli/clippy.toml keeps print! out of the program)
fn browser() -> Option<()> {
    let chromium = std::env::var_os("LAYFLOW_CHROMIUM")
        .map_or_else(|| PathBuf::from("/usr/bin/chromium"), PathBuf::from);
    let mut missing = Vec::new();
    if !chromium.is_file() {
        missing.push(format!(
            "chromium ({}; Debian package `chromium`, or set LAYFLOW_CHROMIUM)",
            chromium.display()
        ));
    }
    if Command::new("node").arg("--version").output().map_or(true, |o| !o.status.success()) {
        missing.push("node (Node.js 20 or later)".to_string());
    }
    if !root().join("tests/browser/node_modules/playwright-core/package.json").is_file() {
        missing.push("playwright-core (`npm ci --prefix tests/browser`)".to_string());
    }
    if missing.is_empty() {
        return Some(());
    }
    let what = missing.join(", ");
    assert!(
        std::env::var_os("LAYFLOW_REQUIRE_BROWSER").is_none(),
        "the browser test is required (LAYFLOW_REQUIRE_BROWSER is set) but not found: {what}"
    );
    eprintln!("NOTICE: not found: {what}; the HTML report was not checked in a browser (CI installs them)");
    None
}

/// A fresh screenshot folder `target/report-screenshots/NAME` in the
/// workspace, its absolute path printed so that a reader (or CI) finds it.
#[allow(clippy::disallowed_macros)] // a test's notice
fn screenshot_dir(name: &str) -> PathBuf {
    let dir = root().join("target/report-screenshots").join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("the screenshot folder can be made");
    let dir = dir.canonicalize().expect("the screenshot folder exists");
    eprintln!("screenshots of {name}: {}", dir.display());
    dir
}

/// Run the script on `page`, writing into `out`: (exit code, result.json).
/// The exit code is 0 when every check passed, 1 when one failed.
/// `fail_fast` stops at the first failed check, before the 5 s of play.
fn check_page(page: &Path, out: &Path, fail_fast: bool) -> (i32, Value) {
    let _one = ONE_BROWSER.lock().unwrap_or_else(|e| e.into_inner());
    let o = Command::new("node")
        .arg(root().join("tests/browser/check-report.mjs"))
        .args(fail_fast.then_some("--fail-fast"))
        .arg(page)
        .arg(out)
        .current_dir(root())
        .output()
        .expect("node runs");
    let code = o.status.code().unwrap_or(-1);
    assert!(code == 0 || code == 1, "check-report.mjs exited {code}: {}{}", text(&o.stdout), text(&o.stderr));
    let json = std::fs::read_to_string(out.join("result.json")).expect("the script wrote result.json");
    (code, serde_json::from_str(&json).expect("result.json is JSON"))
}

/// The names (and details) of the checks that failed.
fn failed(result: &Value) -> Vec<String> {
    result["checks"]
        .as_array()
        .expect("checks")
        .iter()
        .filter(|c| c["ok"] != Value::Bool(true))
        .map(|c| format!("{}: {}", c["name"].as_str().unwrap_or("?"), c["detail"]))
        .collect()
}

/// A decoded screenshot: width, height and RGB pixels.
struct Image {
    width: usize,
    height: usize,
    rgb: Vec<[u8; 3]>,
}

fn decode(path: &Path) -> Image {
    let file = std::fs::File::open(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let mut decoder = png::Decoder::new(std::io::BufReader::new(file));
    decoder.set_transformations(png::Transformations::EXPAND | png::Transformations::STRIP_16);
    let mut reader = decoder.read_info().unwrap_or_else(|e| panic!("{} is not a PNG: {e}", path.display()));
    let mut buf = vec![0; reader.output_buffer_size().expect("a screenshot's size fits in memory")];
    let info = reader.next_frame(&mut buf).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let channels = info.color_type.samples();
    let rgb = buf[..info.buffer_size()]
        .chunks_exact(channels)
        .map(|p| match channels {
            1 | 2 => [p[0]; 3],
            _ => [p[0], p[1], p[2]],
        })
        .collect();
    Image { width: info.width as usize, height: info.height as usize, rgb }
}

/// Not blank: a page of text, charts and a plant drawn with antialiasing has
/// hundreds of distinct colours, and no one colour covers nearly all of it.
/// The bounds leave a wide margin: the fixture's top, mostly white page, has
/// about 80% of one colour and hundreds of colours; a blank or one-colour
/// screenshot has 1 colour and 100%.
fn assert_not_blank(path: &Path) -> Image {
    let img = decode(path);
    let mut counts: HashMap<[u8; 3], usize> = HashMap::new();
    for p in &img.rgb {
        *counts.entry(*p).or_default() += 1;
    }
    let top = counts.values().max().copied().unwrap_or(0) as f64 / img.rgb.len().max(1) as f64;
    assert!(
        counts.len() >= 32 && top <= 0.97,
        "{} looks blank: {} distinct colours, the commonest covers {:.1}%",
        path.display(),
        counts.len(),
        100.0 * top
    );
    img
}

/// The pixels that differ between two screenshots of the same element inside
/// `bx` (x, y, width, height: the canvas within the #replay screenshot).
fn changed_pixels(a: &Image, b: &Image, bx: (usize, usize, usize, usize)) -> usize {
    assert_eq!((a.width, a.height), (b.width, b.height), "the two replay screenshots differ in size");
    let (x0, y0, w, h) = bx;
    let (x1, y1) = ((x0 + w).min(a.width), (y0 + h).min(a.height));
    (y0..y1).flat_map(|y| (x0..x1).map(move |x| y * a.width + x)).filter(|&i| a.rgb[i] != b.rgb[i]).count()
}

/// Everything this test asks of a page the script passed: the screenshots are
/// pictures, the replay moved, frames were drawn within the frame budget.
#[allow(clippy::disallowed_macros)] // the measurements go to the CI log
fn judge(name: &str, out: &Path, result: &Value) {
    let m = &result["measurements"];
    let num = |k: &str| m[k].as_f64().unwrap_or_else(|| panic!("result.json has no number {k}: {m}"));
    eprintln!(
        "{name}: load {:.0} ms; {} frames, draw time mean {:.3} ms, p95 {:.3} ms (budget {FRAME_BUDGET_MS:.1} ms); rAF interval mean {:.1} ms",
        num("load_ms"),
        num("frames"),
        num("frame_ms_mean"),
        num("frame_ms_p95"),
        num("interval_ms_mean"),
    );
    let top = assert_not_blank(&out.join("top.png"));
    assert_eq!((top.width, top.height), (1400, 900), "the top screenshot is the 1400×900 viewport");
    let before = assert_not_blank(&out.join("replay-0s.png"));
    let after = assert_not_blank(&out.join("replay-5s.png"));
    let bx = &m["canvas_box"];
    let at = |k: &str| bx[k].as_u64().unwrap_or_else(|| panic!("canvas_box has no {k}: {bx}")) as usize;
    let changed = changed_pixels(&before, &after, (at("x"), at("y"), at("width"), at("height")));
    eprintln!("{name}: {changed} pixels of the replay canvas changed in 5 s of play");
    // A mover drawn as a dot of radius r that moves by more than its width
    // changes about 2πr² pixels; 100 is a dot of radius 4 (a small mover)
    // moving once. Antialiasing alone, with nothing moving, changes none: the
    // same canvas draws the same pixels.
    assert!(
        changed >= 100,
        "{name}: the replay did not move: only {changed} pixels of the canvas changed in 5 s of play"
    );
    assert!(num("frames") > 0.0, "{name}: the replay drew no frame");
    // A measured time in a test, which the project otherwise avoids (machines
    // are shared and noisy): issue 17 asks for the frame time to be measured
    // in the headless test, and one frame's draw costs a small fraction of the
    // 33 ms budget (under 1 ms on the fixture on the 2-core development
    // machine), so noise cannot make a healthy replay fail; only a draw that
    // grew by more than ten times can.
    assert!(
        num("frame_ms_p95") < FRAME_BUDGET_MS,
        "{name}: the p95 draw time per frame is {:.2} ms, over the {FRAME_BUDGET_MS:.1} ms budget of 30 frames per second",
        num("frame_ms_p95")
    );
}

/// The stand-in page of `tests/browser/fixture.html`, which keeps to the
/// page contract of issue 17, passes every check: the script and this judge
/// work on a page that is right.
#[test]
fn the_fixture_page_passes_in_chromium() {
    let Some(()) = browser() else { return };
    let out = screenshot_dir("fixture");
    let (code, result) = check_page(&root().join("tests/browser/fixture.html"), &out, false);
    assert!(code == 0 && result["passed"] == Value::Bool(true), "failed checks: {:#?}", failed(&result));
    judge("fixture", &out, &result);
}

/// The fixture with `edit` applied, written to a temporary folder, fails
/// with (at least) the check named `expect`.
fn fixture_variant_fails(edit: impl Fn(&str) -> String, expect: &str) -> Value {
    let t = tempfile::tempdir().unwrap();
    let fixture = std::fs::read_to_string(root().join("tests/browser/fixture.html")).unwrap();
    let page = t.path().join("page.html");
    let edited = edit(&fixture);
    assert_ne!(edited, fixture, "the edit changed nothing");
    std::fs::write(&page, edited).unwrap();
    let (code, result) = check_page(&page, &t.path().join("out"), true);
    assert_eq!(code, 1, "the script passed a broken page: {result}");
    assert_eq!(result["passed"], Value::Bool(false));
    let failed = failed(&result);
    assert!(
        failed.iter().any(|f| f.starts_with(expect)),
        "expected the check {expect:?} to fail; failed: {failed:#?}"
    );
    result
}

/// The checks can fail: a console error, or a picture fetched from the
/// network (blocked by the CSP, and by the network being off when the CSP
/// is missing), each fails the script.
#[test]
fn a_console_error_or_an_external_picture_fails_the_check() {
    let Some(()) = browser() else { return };
    let r = fixture_variant_fails(
        |f| {
            f.replace(
                "document.body.dataset.ready = \"1\";",
                "console.error(\"boom\"); document.body.dataset.ready = \"1\";",
            )
        },
        "no console error",
    );
    assert!(r["console_errors"][0].as_str().unwrap_or("").contains("boom"), "{}", r["console_errors"]);

    let img = "<img src=\"https://example.invalid/logo.png\" alt=\"logo\">";
    let r = fixture_variant_fails(|f| f.replace("</main>", &format!("{img}</main>")), "no console error");
    assert!(r["console_errors"].to_string().contains("Content Security Policy"), "{}", r["console_errors"]);

    // Without the CSP meta the request reaches the network layer, where the
    // route aborts it: counted, so a page that drops the CSP still fails.
    let r = fixture_variant_fails(
        |f| {
            let no_csp: String = f
                .lines()
                .filter(|l| !l.contains("Content-Security-Policy"))
                .map(|l| format!("{l}\n"))
                .collect();
            no_csp.replace("</main>", &format!("{img}</main>"))
        },
        "html: the contract's CSP meta, exactly",
    );
    assert_eq!(r["blocked_requests"][0], "https://example.invalid/logo.png", "{r}");
}

/// The real page: a report of a small demo comparison by hour of day with a
/// replay of the busiest traced day, made as a user would (compare --out,
/// run --trace, report --replay), passes every check in the browser.
#[test]
fn the_report_page_passes_in_chromium() {
    let Some(()) = browser() else { return };
    let t = tempfile::tempdir().unwrap();
    let dir = t.path();
    let s = |p: PathBuf| p.display().to_string();
    let (results, trace, page) = (s(dir.join("results")), s(dir.join("trace")), dir.join("report.html"));
    // 5 replications of 5 days of the demo: the whole report in well under a second.
    let steps: [&[&str]; 3] = [
        &[
            "compare",
            "scenarios/demo.yaml",
            "--replications",
            "5",
            "--horizon",
            "5d",
            "--warmup",
            "1d",
            "--by",
            "hour-of-day",
            "--out",
            &results,
            "--quiet",
        ],
        &[
            "run",
            "scenarios/demo.yaml",
            "--layout",
            "current",
            "--replications",
            "1",
            "--horizon",
            "5d",
            "--warmup",
            "1d",
            "--trace",
            &trace,
            "--quiet",
        ],
        &["report", &results, "--replay", &trace, "-o", &s(page.clone())],
    ];
    for args in steps {
        let o = layflow(args);
        assert!(o.status.success(), "layflow {}: {}", args.join(" "), text(&o.stderr));
    }
    let out = screenshot_dir("report");
    let (code, result) = check_page(&page, &out, false);
    assert!(code == 0 && result["passed"] == Value::Bool(true), "failed checks: {:#?}", failed(&result));
    judge("report", &out, &result);
}
