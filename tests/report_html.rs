//! `coilfield report --html`: the page read back by a real headless Chromium (Debian's
//! `chromium`, installed by `.ci/test`). Without it the test fails, unless
//! `COILFIELD_SKIP_BROWSER=1` says to skip (the test command never sets it).

mod common;

use common::{root, run};
use std::collections::HashSet;
use std::path::Path;
use std::process::Command;

/// The figures every report of the main demo carries, by element id.
const FIGURES: [&str; 3] = ["fig-side-view", "fig-field-map", "fig-coupling-height"];

/// The browser, or None when the run says to skip without one.
fn chromium() -> Option<&'static str> {
    let found = Command::new("chromium").arg("--version").output().is_ok();
    if found {
        return Some("chromium");
    }
    if std::env::var("COILFIELD_SKIP_BROWSER").as_deref() == Ok("1") {
        eprintln!("chromium absent and COILFIELD_SKIP_BROWSER=1: browser checks skipped");
        return None;
    }
    panic!(
        "chromium is not installed: install Debian's `chromium` (as .ci/test does) or set \
         COILFIELD_SKIP_BROWSER=1 to skip the browser checks"
    );
}

/// Run chromium headless on `url` with `args`; returns (stdout, stderr).
fn browse(exe: &str, args: &[&str], url: &str) -> (String, String) {
    let out = Command::new(exe)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--hide-scrollbars",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .args(args)
        .arg(url)
        .output()
        .expect("run chromium");
    assert!(
        out.status.success(),
        "chromium failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    (
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Console messages at error level, failed loads and uncaught exceptions in chromium's log.
fn console_errors(stderr: &str) -> Vec<&str> {
    stderr
        .lines()
        .filter(|l| {
            (l.contains("CONSOLE") && (l.contains("ERROR") || l.contains("Uncaught")))
                || l.contains("Failed to load resource")
                || l.contains("net::ERR_")
        })
        .collect()
}

/// The RGB pixels of a PNG screenshot, with its width and height.
fn decode(path: &Path) -> (Vec<[u8; 3]>, usize, usize) {
    let decoder = png::Decoder::new(std::fs::File::open(path).expect("screenshot"));
    let mut reader = decoder.read_info().expect("PNG header");
    let mut buf = vec![0u8; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("PNG frame");
    let channels = match info.color_type {
        png::ColorType::Rgb => 3,
        png::ColorType::Rgba => 4,
        other => panic!("unexpected PNG colour type {other:?}"),
    };
    let pixels = buf[..info.buffer_size()]
        .chunks_exact(channels)
        .map(|c| [c[0], c[1], c[2]])
        .collect();
    (pixels, info.width as usize, info.height as usize)
}

/// Distinct colours with some saturation (not white, grey or black: not text alone) in the
/// rectangle [x0, x1) x [y0, y1) of the image.
fn coloured_colours(
    px: &[[u8; 3]],
    w: usize,
    (x0, y0, x1, y1): (usize, usize, usize, usize),
) -> usize {
    let mut seen = HashSet::new();
    for y in y0..y1 {
        for x in x0..x1 {
            let [r, g, b] = px[y * w + x];
            let hi = r.max(g).max(b);
            let lo = r.min(g).min(b);
            if hi - lo >= 24 {
                seen.insert([r, g, b]);
            }
        }
    }
    seen.len()
}

#[test]
fn the_html_report_renders_every_figure_in_a_real_browser() {
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("report.html");
    let demo = root().join("meshes-demo/tabletop-resonator.toml");
    let out = run(&[
        "report",
        demo.to_str().unwrap(),
        "--html",
        page.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "report --html failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    // Self-contained: no scripts, nothing fetched from elsewhere.
    for bad in ["<script", "src=", "href=", "@import"] {
        assert!(!html.contains(bad), "the page contains {bad:?}");
    }
    // The one URL is the embedded font, a `data:` URL, carried once for the page.
    let urls: Vec<&str> = html.split("url(").skip(1).collect();
    assert!(
        urls.iter().all(|u| u.starts_with("data:font/ttf;base64,")),
        "a url( that is not the embedded font"
    );
    assert_eq!(urls.len(), 1, "the font is carried once");
    // The report's content as tables (the same text as stdout's sections).
    let text = String::from_utf8(out.stdout).unwrap();
    for section in [
        "inductance matrix",
        "electrodes and capacitances",
        "resonance of the secondary",
    ] {
        assert!(text.contains(section));
        assert!(
            html.contains(&format!("<h2>{section}")),
            "no section {section:?}"
        );
    }
    assert!(html.contains("<table>"));

    let Some(exe) = chromium() else { return };
    let url = format!("file://{}", page.display());
    let (dom, log) = browse(exe, &["--dump-dom"], &url);
    assert!(console_errors(&log).is_empty(), "console errors:\n{log}");
    for id in FIGURES {
        assert!(
            dom.contains(&format!("id=\"{id}\"")),
            "figure {id} not in the DOM"
        );
    }
    assert!(dom.matches("<svg").count() >= FIGURES.len());

    // The page fixes its layout (cli/report_html.rs: a 48 px title, then 840 px figure boxes,
    // 16 px from the left): figure k's picture is at (16, 48 + 840 k). A window tall enough for
    // the three; each region shows many colours (a heat map, coloured windings and electrodes,
    // a curve), not a blank or text alone.
    let (w, h) = (1000usize, 2800usize);
    let shot = dir.path().join("page.png");
    let (_, log) = browse(
        exe,
        &[
            &format!("--screenshot={}", shot.display()),
            &format!("--window-size={w},{h}"),
        ],
        &url,
    );
    assert!(console_errors(&log).is_empty(), "console errors:\n{log}");
    let (px, pw, ph) = decode(&shot);
    assert_eq!((pw, ph), (w, h));
    let mut counts = Vec::new();
    for (k, id) in FIGURES.iter().enumerate() {
        let top = 48 + 840 * k;
        let n = coloured_colours(&px, pw, (16, top, 916, top + 700));
        assert!(
            n >= 30,
            "figure {id}: only {n} distinct colours in its region"
        );
        counts.push(n);
    }
    // Below the figures: the tables (text, hardly any colour).
    let below = coloured_colours(&px, pw, (16, 48 + 840 * 3 + 40, 916, h));
    assert!(
        below < counts.iter().copied().min().unwrap(),
        "{below} vs {counts:?}"
    );
}

#[test]
fn the_html_report_refuses_a_wrong_file_name_before_any_work() {
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("report.txt");
    let demo = root().join("meshes-demo/tabletop-resonator.toml");
    let out = run(&[
        "report",
        demo.to_str().unwrap(),
        "--html",
        page.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--html") && err.contains(".html"), "{err}");
    assert!(!page.exists());
}
