//! `biasline report`: the design report as one self-contained HTML file.
//! Every check runs the built command line, parses the page with an HTML5
//! parser and compares it with what `analyze --json` and `spread --json`
//! print for the same project.

use crate::cli_common;
use cli_common::{root, run};
use scraper::{ElementRef, Html, Selector};
use serde_json::Value;
use std::path::PathBuf;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-report-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

/// Write the report of `project` with `extra` options and return its text.
fn report(project: &str, extra: &[&str], name: &str) -> String {
    let out = scratch(name);
    let mut args = vec!["report", project, "-o", out.to_str().unwrap()];
    args.extend_from_slice(extra);
    let o = run(&args);
    assert!(
        o.status.code().is_some_and(|c| c < 2),
        "report of {project} failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    std::fs::read_to_string(&out).unwrap()
}

fn json_of(args: &[&str]) -> Value {
    let o = run(args);
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{args:?}: {e}"))
}

fn sel(s: &str) -> Selector {
    Selector::parse(s).unwrap()
}

fn text_of(e: ElementRef) -> String {
    e.text().collect::<String>()
}

const SPREAD_RUNS: &str = "200";

/// The two-stage demo with the spread section (200 runs) and its JSON root.
fn two_stage() -> (String, Value) {
    let project = "projects/two-stage-preamp.json";
    let html = report(
        project,
        &["--spread", "--runs", SPREAD_RUNS],
        "two-stage.html",
    );
    let analyze = json_of(&["analyze", project, "--json"]);
    let spread = json_of(&["spread", project, "--json", "--runs", SPREAD_RUNS]);
    let file: Value =
        serde_json::from_str(&std::fs::read_to_string(root().join(project)).unwrap()).unwrap();
    let transient = json_of(&["transient", project, "--json"]);
    let stability = json_of(&["stability", project, "--json"]);
    let root = serde_json::json!({
        "analyze": analyze,
        "spread": spread,
        "project": file,
        "transient": transient,
        "stability": stability,
    });
    (html, root)
}

#[test]
fn the_page_parses_as_html5_without_errors() {
    // source: WHATWG HTML Living Standard, §13.2 parsing: a conforming
    // document produces no parse errors (html5ever reports each one).
    for (project, extra) in [
        (
            "projects/two-stage-preamp.json",
            vec!["--spread", "--runs", "100"],
        ),
        ("projects/high-voltage-driver.json", vec![]),
        ("projects/current-mirror.json", vec![]),
    ] {
        let html = report(project, &extra, "parse.html");
        let doc = Html::parse_document(&html);
        assert!(doc.errors.is_empty(), "{project}: {:?}", doc.errors);
        assert!(html.starts_with("<!DOCTYPE html>"));
    }
}

/// Parse a shown number back: `4.7 kΩ`, `−12.3 %`, `26.41 dB`, `27.0 °C`,
/// `3.2 nV/√Hz`, `−42.3 V/V`. Returns the value in the JSON's units and
/// the size of the last digit shown (in the same units).
fn read_shown(s: &str) -> Option<(f64, f64)> {
    let s = s.replace('−', "-");
    let s = s.trim();
    let end = s
        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-' || c == '+' || c == 'e'))
        .unwrap_or(s.len());
    let (num, rest) = s.split_at(end);
    let rest = rest.trim();
    let v: f64 = num.parse().ok()?;
    let decimals = num.split_once('.').map_or(0, |(_, d)| {
        d.trim_end_matches(|c: char| !c.is_ascii_digit()).len()
    });
    let step = 10f64.powi(-(decimals as i32));
    let prefixes = [
        ("f", 1e-15),
        ("p", 1e-12),
        ("n", 1e-9),
        ("µ", 1e-6),
        ("m", 1e-3),
        ("k", 1e3),
        ("M", 1e6),
        ("G", 1e9),
        ("T", 1e12),
    ];
    if rest.starts_with('%') {
        return Some((v / 100.0, step / 100.0));
    }
    let units = ["Ω", "F", "H", "V", "A", "W", "Hz", "s", "S"];
    for (p, scale) in prefixes {
        if let Some(u) = rest.strip_prefix(p) {
            if units.iter().any(|x| u.starts_with(x)) {
                return Some((v * scale, step * scale));
            }
        }
    }
    Some((v, step))
}

#[test]
fn every_table_number_is_the_json_figure() {
    // invariant: one source of truth — each numeric cell names the JSON
    // pointer of its value (data-json) in what `analyze --json`, `spread
    // --json` and the project file hold, carries that exact number
    // (data-value), and shows it rounded (the text reads back within half
    // its last digit).
    let (html, root) = two_stage();
    let doc = Html::parse_document(&html);
    let mut checked = 0;
    for td in doc.select(&sel("td.num")) {
        let ptr = td
            .value()
            .attr("data-json")
            .expect("every number names its JSON");
        let shown = text_of(td);
        let want = root
            .pointer(ptr)
            .unwrap_or_else(|| panic!("{ptr} is not in the JSON"));
        let value = td.value().attr("data-value").unwrap();
        match want.as_f64() {
            None => {
                assert!(want.is_null(), "{ptr}: {want}");
                assert_eq!(value, "", "{ptr}");
                assert_eq!(shown, "—", "{ptr}");
            }
            Some(w) => {
                let got: f64 = value.parse().unwrap();
                assert_eq!(got, w, "{ptr}: data-value {value} against the JSON {w}");
                if !w.is_finite() {
                    continue;
                }
                let (mut read, mut step) =
                    read_shown(&shown).unwrap_or_else(|| panic!("{ptr}: cannot read {shown:?}"));
                if ptr.ends_with("_percent") {
                    // Already in per cent in the JSON (a difference of two estimates).
                    read *= 100.0;
                    step *= 100.0;
                }
                assert!(
                    (read - w).abs() <= 0.5 * step * 1.0001 + 1e-12 * w.abs(),
                    "{ptr}: shows {shown:?} for {w}"
                );
            }
        }
        checked += 1;
    }
    assert!(checked > 150, "only {checked} numbers checked");
    // invariant: every cell that is a number (starts with a digit or a sign)
    // is a checked cell or a part count; inputs quoted within words (ratings
    // of presets, parameter temperatures) are text cells.
    for td in doc.select(&sel("td")) {
        let t = text_of(td);
        let starts_numeric = t
            .trim()
            .chars()
            .next()
            .is_some_and(|c| c.is_ascii_digit() || c == '−' || c == '+');
        let class = td.value().attr("class").unwrap_or_default();
        assert!(
            !starts_numeric || ["num", "count", "hash", "time"].contains(&class),
            "a number outside the checked cells: {t:?}"
        );
    }
}

#[test]
fn every_figure_is_present_and_draws() {
    // invariant: every figure the page announces holds an SVG that renders
    // (resvg, the embedded font) to a non-blank picture.
    let (html, _) = two_stage();
    let doc = Html::parse_document(&html);
    let figures: Vec<ElementRef> = doc.select(&sel("figure")).collect();
    let classes: Vec<&str> = figures
        .iter()
        .map(|f| f.value().attr("class").unwrap_or_default())
        .collect();
    for want in [
        "schematic",
        "equivalent",
        "bode",
        "noise-density",
        "histogram",
    ] {
        assert!(classes.contains(&want), "no {want} figure: {classes:?}");
    }
    // Two stages, two drawn AC equivalents.
    assert_eq!(classes.iter().filter(|c| **c == "equivalent").count(), 2);
    assert!(figures
        .iter()
        .all(|f| f.select(&sel("svg")).next().is_some()));
    let svgs: Vec<&str> = html
        .match_indices("<svg ")
        .map(|(k, _)| {
            let end = html[k..].find("</svg>").unwrap() + k + "</svg>".len();
            &html[k..end]
        })
        .collect();
    assert_eq!(svgs.len(), figures.len());
    let opt = biasline::render::usvg_options();
    for svg in svgs {
        // The page leaves the SVG namespace to the HTML parser; a standalone
        // SVG names it.
        let standalone = svg.replacen("<svg ", "<svg xmlns=\"http://www.w3.org/2000/svg\" ", 1);
        let tree = resvg::usvg::Tree::from_str(&standalone, &opt).expect("the SVG parses");
        let size = tree.size().to_int_size();
        let mut pix = resvg::tiny_skia::Pixmap::new(size.width(), size.height()).unwrap();
        resvg::render(
            &tree,
            resvg::tiny_skia::Transform::default(),
            &mut pix.as_mut(),
        );
        let inked = pix
            .pixels()
            .iter()
            .filter(|p| p.alpha() > 0 && (p.red() < 200 || p.green() < 200 || p.blue() < 200))
            .count();
        assert!(
            inked > 200,
            "a blank figure: {}",
            &svg[..svg.len().min(200)]
        );
        assert!(tree.root().has_children());
    }
}

#[test]
fn no_external_url_anywhere() {
    // invariant: the report is self-contained — no address to fetch, no
    // script, no linked file; the only url() is the embedded font's data.
    let (html, _) = two_stage();
    let lower = html.to_lowercase();
    for bad in [
        "http:", "https:", "ftp:", "file:", "<script", "<link", "<img", "<iframe", "<object",
        "<embed", "@import", " src=", " href=", "xlink:",
    ] {
        assert!(!lower.contains(bad), "the page contains {bad:?}");
    }
    let urls = lower.matches("url(").count();
    let data = lower.matches("url(data:").count();
    assert_eq!(urls, data, "a url() that is not embedded data");
    assert_eq!(data, 2, "the font, regular and bold, embedded once each");
}

/// The rules of a CSS text as (prelude, body) pairs, one level of nesting
/// (the bodies of at-rules such as `@media print` are returned as they are).
fn css_rules(css: &str) -> Vec<(String, String)> {
    let mut out = Vec::new();
    let mut depth = 0;
    let mut start = 0;
    let mut prelude = String::new();
    for (k, c) in css.char_indices() {
        match c {
            '{' => {
                if depth == 0 {
                    prelude = css[start..k].trim().to_string();
                    start = k + 1;
                }
                depth += 1;
            }
            '}' => {
                depth -= 1;
                if depth == 0 {
                    out.push((prelude.clone(), css[start..k].to_string()));
                    start = k + 1;
                }
            }
            _ => {}
        }
    }
    out
}

fn declares(rules: &[(String, String)], selector: &str, declaration: &str) -> bool {
    rules.iter().any(|(p, b)| {
        p.split(',').any(|s| s.trim() == selector)
            && b.split(';').any(|d| d.replace(' ', "") == declaration)
    })
}

#[test]
fn the_print_style_breaks_between_sections_and_keeps_figures_whole() {
    // source: CSS Fragmentation Module Level 3, §3.1 (break-before: page
    // forces a page break; break-inside: avoid keeps a box on one page) and
    // CSS Paged Media Module Level 3, §3 (@page margins; no fixed size, so
    // A4 and Letter both print).
    let (html, _) = two_stage();
    let doc = Html::parse_document(&html);
    let css: String = doc.select(&sel("head style")).map(text_of).collect();
    let rules = css_rules(&css);
    let print = rules
        .iter()
        .find(|(p, _)| p == "@media print")
        .expect("a print style");
    let inner = css_rules(&print.1);
    assert!(declares(&inner, "section", "break-before:page"));
    assert!(declares(&inner, "figure", "break-inside:avoid"));
    assert!(declares(&inner, "tr", "break-inside:avoid"));
    let page = rules
        .iter()
        .find(|(p, _)| p == "@page")
        .expect("an @page rule");
    assert!(!page.1.contains("size"), "a fixed paper size: {}", page.1);
    // Every section but the first starts a page: each is a <section>.
    let ids: Vec<&str> = doc
        .select(&sel("body > section"))
        .filter_map(|s| s.value().attr("id"))
        .collect();
    for want in [
        "title",
        "findings",
        "schematic",
        "operating-point",
        "stages",
        "response",
        "stability",
        "noise",
        "spread",
        "parts",
    ] {
        assert!(ids.contains(&want), "no section {want}: {ids:?}");
    }
    // The demo has a sine source, so the time-domain section is there.
    assert!(
        ids.contains(&"transient"),
        "no time-domain section: {ids:?}"
    );
}

#[test]
fn the_same_project_gives_the_same_bytes() {
    // invariant: determinism — the same project and options give identical
    // bytes, whatever the number of threads of the spread runs.
    let project = "projects/two-stage-preamp.json";
    let a = report(
        project,
        &["--spread", "--runs", "100", "--threads", "1"],
        "a.html",
    );
    let b = report(
        project,
        &["--spread", "--runs", "100", "--threads", "2"],
        "b.html",
    );
    assert!(a == b, "two reports of one project differ");
    let c = report(project, &[], "c.html");
    let d = report(project, &[], "d.html");
    assert!(c == d);
    // The spread section is there only when asked for (the project sets none).
    assert!(a.contains("<section id=\"spread\">") && !c.contains("<section id=\"spread\">"));
}

#[test]
fn every_warning_is_shown() {
    // invariant: each warning `analyze --json` lists appears in the report's
    // findings, word for word.
    let mut seen = 0;
    for entry in std::fs::read_dir(root().join("projects")).unwrap() {
        let path = entry.unwrap().path();
        // The demo files (projects/connections/ holds the typed-in forms).
        if path.extension().is_none_or(|e| e != "json") {
            continue;
        }
        let project = path.to_str().unwrap();
        let analyze = json_of(&["analyze", project, "--json"]);
        let html = report(project, &[], "warnings.html");
        let doc = Html::parse_document(&html);
        let shown: Vec<String> = doc.select(&sel("li.warning")).map(text_of).collect();
        let warnings = analyze["warnings"].as_array().unwrap();
        assert_eq!(shown.len(), warnings.len(), "{project}");
        for w in warnings {
            let m = w["message"].as_str().unwrap();
            assert!(
                shown.iter().any(|s| s.contains(m)),
                "{project}: {m} not shown"
            );
            seen += 1;
        }
    }
    assert!(seen > 0, "no demo has a warning to check");
}

#[test]
fn the_safety_caution_shows_exactly_above_60_volts() {
    // source: IEC 62368-1, ES1 limit of 60 V DC between accessible parts
    // ; the caution follows the
    // analysis's largest voltage between any two nets.
    let mut with = Vec::new();
    for entry in std::fs::read_dir(root().join("projects")).unwrap() {
        let path = entry.unwrap().path();
        // The demo files (projects/connections/ holds the typed-in forms).
        if path.extension().is_none_or(|e| e != "json") {
            continue;
        }
        let project = path.to_str().unwrap();
        let analyze = json_of(&["analyze", project, "--json"]);
        let largest = analyze["largest_voltage"]["voltage"].as_f64().unwrap();
        let html = report(project, &[], "caution.html");
        let doc = Html::parse_document(&html);
        let cautions = doc.select(&sel("#safety-caution")).count();
        assert_eq!(
            cautions,
            usize::from(largest > 60.0),
            "{project}: {largest} V"
        );
        if cautions == 1 {
            with.push(path.file_name().unwrap().to_string_lossy().to_string());
        }
    }
    assert!(
        with.contains(&"high-voltage-driver.json".to_string()),
        "{with:?}"
    );
    assert!(
        !with.contains(&"pnp-sensor-loop.json".to_string()),
        "{with:?}"
    );
}

#[test]
fn the_title_block_names_the_file_and_its_hash() {
    // source: FIPS 180-4 (SHA-256); the digest is of the file's bytes as read.
    let (html, _) = two_stage();
    let doc = Html::parse_document(&html);
    let block: String = doc.select(&sel("#assumptions")).map(text_of).collect();
    let bytes = std::fs::read(root().join("projects/two-stage-preamp.json")).unwrap();
    assert!(block.contains(&biasline::report::gather::sha256_hex(&bytes)));
    assert!(block.contains(env!("CARGO_PKG_VERSION")));
    assert!(block.contains("ambient temperature"));
    // invariant: no timestamp unless asked for.
    assert!(!block.contains("written"));
}

#[test]
fn a_bad_output_name_is_refused() {
    // common practice (no source): the command says what it wants instead of
    // writing a file of the wrong kind (exit 2, cannot proceed).
    let o = run(&["report", "projects/two-stage-preamp.json", "-o", "x.pdf"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains(".html"));
}

#[test]
fn the_time_domain_section_shows_exactly_when_there_is_a_signal_source() {
    // invariant: the section is the `transient --json` run of the project's
    // own sine; a project with no signal source has nothing to run.
    let with = report(
        "projects/two-stage-preamp.json",
        &["--no-spread"],
        "with-source.html",
    );
    let doc = Html::parse_document(&with);
    assert_eq!(doc.select(&sel("section#transient")).count(), 1);
    let thd = doc
        .select(&sel(
            "td[data-json=\"/transient/distortion/output/spectrum/thd\"]",
        ))
        .next()
        .and_then(|c| c.value().attr("data-value"))
        .and_then(|v| v.parse::<f64>().ok())
        .expect("an output THD cell");
    let json = json_of(&["transient", "projects/two-stage-preamp.json", "--json"]);
    let want = json
        .pointer("/distortion/output/spectrum/thd")
        .and_then(Value::as_f64)
        .unwrap();
    assert_eq!(thd, want, "the report's THD is the transient command's");
    let without = report(
        "projects/current-mirror.json",
        &["--no-spread"],
        "no-source.html",
    );
    let doc = Html::parse_document(&without);
    assert_eq!(doc.select(&sel("section#transient")).count(), 0);
}

#[test]
fn the_mirror_demo_report_has_its_block_with_every_cell_from_the_json() {
    let project = "projects/current-mirror.json";
    let html = report(project, &[], "mirror.html");
    let analyze = json_of(&["analyze", project, "--json"]);
    let doc = Html::parse_document(&html);
    let section = doc
        .select(&sel("section#blocks"))
        .next()
        .expect("a blocks section");
    assert!(text_of(section).contains("Q1, Q2: current mirror"));
    // invariant: every number cell names the JSON pointer of its value, and
    // the value is the one `analyze --json` gives there.
    let mut cells = 0;
    for td in section.select(&sel("td[data-json]")) {
        let pointer = td.value().attr("data-json").unwrap();
        let inner = pointer.strip_prefix("/analyze").unwrap();
        let want = analyze.pointer(inner).and_then(Value::as_f64);
        let got = td.value().attr("data-value").unwrap();
        assert_eq!(
            want.map(|v| format!("{v:?}")).unwrap_or_default(),
            got,
            "{pointer}"
        );
        cells += 1;
    }
    assert_eq!(cells, 9, "three figures: exact, estimate, difference");
}
