//! The HTML reports of `simulate`, `compare` and `tolerance` rendered by a
//! real browser:
//! Debian's Chromium, headless, driven over its DevTools protocol by
//! `tests/browser_check.py` (Python's standard library only). Checks that
//! every plot is there with a drawn SVG of its size, that the page raised
//! no console message, exception or failed load (it must open from disk
//! with no network), and that the full-page screenshot is not blank.
//!
//! Without `chromium` on the PATH (or `RIPPLECTL_CHROMIUM`) the checks are
//! skipped with a message, unless `RIPPLECTL_REQUIRE_BROWSER` is set (CI
//! sets it), when they fail.

use crate::common;

use common::tools;
use std::path::Path;
use std::process::Command;

fn chromium() -> Option<String> {
    let name = std::env::var("RIPPLECTL_CHROMIUM").unwrap_or_else(|_| "chromium".to_string());
    let found = tools::runs(&name, &["--version"]).then_some(name);
    tools::found_or_skipped(
        found,
        "RIPPLECTL_REQUIRE_BROWSER",
        "chromium",
        "apt-get install chromium",
    )
}

fn ripplectl(args: &[&str]) {
    let out = Command::new(env!("CARGO_BIN_EXE_ripplectl")).args(args).output().unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
}

/// Render `page` and return the browser's account of it.
fn render(chromium: &str, page: &Path, shot: &Path) -> serde_json::Value {
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/browser_check.py");
    let out =
        Command::new("python3").arg(script).arg(chromium).arg(page).arg(shot).output().unwrap();
    assert!(out.status.success(), "browser check: {}", String::from_utf8_lossy(&out.stderr));
    serde_json::from_slice(&out.stdout).unwrap()
}

/// Share of pixels that differ from the most common colour (the page's
/// background), and the number of distinct colours, of an 8-bit RGB or RGBA
/// PNG.
fn ink(png_path: &Path) -> (f64, usize) {
    let decoder =
        png::Decoder::new(std::io::BufReader::new(std::fs::File::open(png_path).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert_eq!(info.bit_depth, png::BitDepth::Eight);
    let channels = info.color_type.samples();
    assert!(channels >= 3, "{:?}", info.color_type);
    let mut counts = std::collections::HashMap::new();
    for p in buf[..info.buffer_size()].chunks(channels) {
        *counts.entry([p[0], p[1], p[2]]).or_insert(0usize) += 1;
    }
    let total: usize = counts.values().sum();
    let background = counts.values().copied().max().unwrap_or(0);
    ((total - background) as f64 / total as f64, counts.len())
}

fn check(chromium: &str, dir: &Path, expected: &[&str]) {
    let shot = dir.join("shot.png");
    let seen = render(chromium, &dir.join("report.html"), &shot);
    let console = seen["console"].as_array().unwrap();
    assert!(console.is_empty(), "console: {console:?}");
    let figures = seen["figures"].as_array().unwrap();
    let ids: Vec<&str> = figures.iter().map(|f| f["id"].as_str().unwrap()).collect();
    assert_eq!(ids, expected);
    for f in figures {
        let (w, h) = (f["width"].as_f64().unwrap(), f["height"].as_f64().unwrap());
        assert!(w > 600.0 && h > 300.0, "{f}");
        assert!(f["shapes"].as_u64().unwrap() > 50, "{f}: hardly anything drawn");
    }
    let (share, colours) = ink(&shot);
    println!(
        "{}: {} figures, {:.1} % inked, {colours} colours",
        dir.display(),
        ids.len(),
        100.0 * share
    );
    assert!(share > 0.05, "screenshot nearly blank: {share}");
    assert!(colours > 50, "screenshot has only {colours} colours");
}

/// The plots of a report on the demo profile, which has four disturbances
/// (3, 6, 8 and 9 ms).
const DEMO_PLOTS: [&str; 6] =
    ["plot-waveforms", "plot-zoom-1", "plot-zoom-2", "plot-zoom-3", "plot-zoom-4", "plot-emission"];

#[test]
fn simulate_report_renders_in_a_browser() {
    let Some(chromium) = chromium() else { return };
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("run");
    ripplectl(&["simulate", "--out", out.to_str().unwrap()]);
    check(&chromium, &out, &DEMO_PLOTS);
}

#[test]
fn compare_report_renders_in_a_browser() {
    let Some(chromium) = chromium() else { return };
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/scenarios");
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("both");
    ripplectl(&[
        "compare",
        root.join("analog-retrofit.toml").to_str().unwrap(),
        root.join("hysteretic.toml").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    // Both profiles disturb at the same times.
    check(&chromium, &out, &DEMO_PLOTS);
}

#[test]
fn tolerance_report_renders_in_a_browser() {
    let Some(chromium) = chromium() else { return };
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("tolerance");
    ripplectl(&["tolerance", "--runs", "40", "--out", out.to_str().unwrap()]);
    // A histogram of every figure (each has a value in some run here).
    let ids: Vec<String> = ripplectl::sim::tolerance::criteria::FIGURES
        .iter()
        .map(|(name, _, _)| format!("plot-histogram-{name}"))
        .collect();
    let ids: Vec<&str> = ids.iter().map(String::as_str).collect();
    check(&chromium, &out, &ids);
}
