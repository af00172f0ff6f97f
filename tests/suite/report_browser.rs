//! The design report in a real browser engine: print it to PDF with
//! headless Chromium at Letter and A4. Chromium is not a build dependency:
//! when it is absent the test says so and skips (CI on a fresh machine).

use std::path::{Path, PathBuf};
use std::process::Command;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn chromium() -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .flat_map(|d| ["chromium", "chromium-browser"].map(|n| d.join(n)))
        .find(|p| p.is_file())
}

/// Pages and their sizes (points) from the PDF's page objects.
fn pages(pdf: &[u8]) -> Vec<(f64, f64)> {
    let text = String::from_utf8_lossy(pdf);
    let mut out = Vec::new();
    for (k, _) in text.match_indices("/Type /Page") {
        let rest = &text[k + "/Type /Page".len()..];
        if rest.starts_with('s') {
            continue; // the /Pages tree node
        }
        let obj_end = rest.find("endobj").unwrap_or(rest.len());
        let obj = &rest[..obj_end];
        let start = text[..k].rfind(" obj").unwrap_or(0);
        let whole = format!("{}{}", &text[start..k], obj);
        if let Some(m) = whole.find("/MediaBox") {
            let b = &whole[m..];
            let (o, c) = (b.find('[').unwrap(), b.find(']').unwrap());
            let n: Vec<f64> = b[o + 1..c]
                .split_whitespace()
                .filter_map(|x| x.parse().ok())
                .collect();
            if n.len() == 4 {
                out.push((n[2] - n[0], n[3] - n[1]));
            }
        }
    }
    out
}

#[test]
fn the_report_prints_to_pdf_in_chromium() {
    let Some(browser) = chromium() else {
        eprintln!(
            "skipped: chromium is not installed (apt-get install chromium to run this check)"
        );
        return;
    };
    let dir = std::env::temp_dir().join(format!("biasline-browser-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let html = dir.join("design.html");
    let o = Command::new(env!("CARGO_BIN_EXE_biasline"))
        .args([
            "report",
            "projects/two-stage-preamp.json",
            "--spread",
            "--runs",
            "200",
            "-o",
        ])
        .arg(&html)
        .current_dir(root())
        .output()
        .unwrap();
    assert!(o.status.code().is_some_and(|c| c < 2));
    let page = std::fs::read_to_string(&html).unwrap();
    // The paper size is the reader's: print once as is (the browser's
    // default, Letter) and once with A4 asked for in the page style.
    let a4 = dir.join("design-a4.html");
    std::fs::write(&a4, page.replacen("@page{", "@page{size:A4;", 1)).unwrap();
    for (file, want) in [(&html, (612.0, 792.0)), (&a4, (595.3, 841.9))] {
        let pdf = file.with_extension("pdf");
        let profile = dir.join(format!(
            "profile-{}",
            file.file_stem().unwrap().to_string_lossy()
        ));
        let o = Command::new(&browser)
            .args([
                "--headless",
                "--no-sandbox",
                "--disable-gpu",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
                "--no-first-run",
                "--no-pdf-header-footer",
            ])
            .arg(format!("--user-data-dir={}", profile.display()))
            .arg(format!("--print-to-pdf={}", pdf.display()))
            .arg(file)
            .output()
            .unwrap();
        let bytes = std::fs::read(&pdf)
            .unwrap_or_else(|_| panic!("no PDF: {}", String::from_utf8_lossy(&o.stderr)));
        assert!(bytes.starts_with(b"%PDF"));
        let sizes = pages(&bytes);
        // invariant: page breaks between sections — at least one page per
        // section (title, findings, schematic, operating point, stages,
        // response, noise, spread, parts).
        assert!(sizes.len() >= 9, "{} pages", sizes.len());
        // source: ISO 216 (A4 210 × 297 mm = 595.3 × 841.9 pt) and ANSI/ASME
        // Y14.1 (Letter 8.5 × 11 in = 612 × 792 pt).
        for (w, h) in &sizes {
            assert!(
                (w - want.0).abs() < 1.0 && (h - want.1).abs() < 1.0,
                "{w} × {h}"
            );
        }
    }
}
