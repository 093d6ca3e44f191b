//! The HTML report in a real browser: `termsight report` writes the page of the
//! shipped example, headless Chromium opens it and takes a screenshot, and the
//! screenshot must show the page (not a blank or an error page).
//!
//! Chromium is looked for as `$TERMSIGHT_CHROMIUM`, then `chromium` and
//! `chromium-browser` on the PATH. Without it the test says so on standard output and
//! passes (the message goes to standard error past the harness' capture), except under CI (the environment variable `CI` set), where it fails:
//! `.ci/run` installs Debian's `chromium`, so a missing browser there is a broken set-up.

use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// The browser to run, if any.
fn chromium() -> Option<PathBuf> {
    if let Some(path) = std::env::var_os("TERMSIGHT_CHROMIUM") {
        return Some(PathBuf::from(path));
    }
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .flat_map(|dir| ["chromium", "chromium-browser"].map(|name| dir.join(name)))
        .find(|candidate| candidate.is_file())
}

/// Run the browser on `page` and wait at most `limit` for its screenshot.
fn screenshot(browser: &Path, page: &Path, png: &Path, profile: &Path, limit: Duration) {
    let url = format!("file://{}", page.display());
    // The flags of a headless run on a machine without a display or a network
    // (common practice, no source): no sandbox (root in CI), no GPU, no first-run
    // page, no background connections, a fresh profile.
    let mut child = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .arg(format!("--screenshot={}", png.display()))
        .arg("--window-size=1280,1600")
        .arg(&url)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("{}: cannot start: {e}", browser.display()));
    let start = Instant::now();
    loop {
        match child.try_wait() {
            Ok(Some(_)) => break,
            Ok(None) if start.elapsed() < limit => std::thread::sleep(Duration::from_millis(100)),
            Ok(None) => {
                let _ = child.kill();
                let _ = child.wait();
                panic!("{} took more than {limit:?}", browser.display());
            }
            Err(e) => panic!("{}: {e}", browser.display()),
        }
    }
    let output = child.wait_with_output().unwrap();
    assert!(
        png.is_file(),
        "{} wrote no screenshot; its standard error:\n{}",
        browser.display(),
        String::from_utf8_lossy(&output.stderr)
    );
}

#[test]
fn the_report_of_the_shipped_example_shows_in_a_headless_browser() {
    let Some(browser) = chromium() else {
        let message = "browser test: no Chromium found (set TERMSIGHT_CHROMIUM, or install \
                       Debian's chromium as .ci/run does)";
        assert!(
            std::env::var_os("CI").is_none(),
            "{message}; CI must have it"
        );
        // Straight to the standard error, past the test harness' capture, so that the
        // skip shows in every run.
        let _ = writeln!(std::io::stderr(), "{message}: SKIPPED");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("report.html");
    let example =
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("examples/he-ne-teaching-tube/lines.csv");
    let out = Command::new(env!("CARGO_BIN_EXE_termsight"))
        .arg("report")
        .arg(&example)
        .args(["--species", "He I", "--species", "Ne I", "--species", "H I"])
        .arg("-o")
        .arg(&page)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    // Self-contained (the condition): nothing is fetched from elsewhere.
    for outside in [
        "<script",
        "src=\"http",
        "href=\"http",
        "<link",
        "@import",
        "url(",
    ] {
        assert!(!html.contains(outside), "the page contains {outside:?}");
    }
    let png = dir.path().join("report.png");
    let profile = dir.path().join("profile");
    screenshot(&browser, &page, &png, &profile, Duration::from_secs(120));

    let pixmap = resvg::tiny_skia::Pixmap::load_png(&png)
        .unwrap_or_else(|e| panic!("{}: not a PNG: {e}", png.display()));
    assert_eq!((pixmap.width(), pixmap.height()), (1280, 1600));
    if let Some(keep) = std::env::var_os("TERMSIGHT_FIGURE_PNG") {
        let _ = std::fs::copy(&png, Path::new(&keep).join("browser-report.png"));
    }
    // The page is black text and figures on white. A blank page (or a failed load,
    // which Chromium shows as a mostly grey page with an icon) has next to no dark
    // pixels; the report's heading, lists and the stick spectrum give thousands.
    // Thresholds: common practice, no source.
    let (w, h) = (pixmap.width(), pixmap.height());
    let mut dark = 0usize;
    let mut not_white = 0usize;
    let mut rows_with_ink = 0usize;
    for y in 0..h {
        let mut row_ink = false;
        for x in 0..w {
            let p = pixmap.pixel(x, y).unwrap();
            let (r, g, b) = (p.red(), p.green(), p.blue());
            if r < 250 || g < 250 || b < 250 {
                not_white += 1;
                row_ink = true;
            }
            if r < 100 && g < 100 && b < 100 {
                dark += 1;
            }
        }
        rows_with_ink += usize::from(row_ink);
    }
    let all = (w * h) as usize;
    assert!(dark > 2_000, "only {dark} dark pixels: a blank page?");
    assert!(
        not_white < all * 6 / 10,
        "{not_white} of {all} pixels are not white: not the report's white page"
    );
    // Ink spread down the page (heading, lists, the figures), not one blot.
    assert!(
        rows_with_ink > (h as usize) / 3,
        "ink on only {rows_with_ink} of {h} rows"
    );
}
