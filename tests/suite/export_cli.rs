//! `biasline export`: drawings, report tables and the response plot from the
//! built command line, with its exit codes (0 clean, 1 warnings, 2 cannot).

use crate::cli_common;
use cli_common::{run, text};
use std::path::PathBuf;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("biasline-export-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

#[test]
fn export_writes_png_and_svg_by_extension() {
    let png = scratch("ce.png");
    let out = run(&[
        "export",
        "projects/common-emitter.json",
        "-o",
        png.to_str().unwrap(),
        "--scale",
        "2",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    // source: PNG specification (ISO/IEC 15948) §5.2: the eight-byte signature.
    assert_eq!(&std::fs::read(&png).unwrap()[..8], b"\x89PNG\r\n\x1a\n");
    let svg = scratch("ce.svg");
    let out = run(&[
        "export",
        "projects/common-emitter.json",
        "-o",
        svg.to_str().unwrap(),
        "--layers",
        "schematic,voltages",
        "--model",
        "hybrid-pi",
        "--background",
        "transparent",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = std::fs::read_to_string(&svg).unwrap();
    assert!(s.starts_with("<svg"));
    // invariant: only the asked-for layers are drawn (the title block always is).
    assert!(s.contains("class=\"voltages\"") && !s.contains("class=\"currents\""));
}

#[test]
fn export_refuses_bad_options_with_exit_2_and_says_what_to_use() {
    // common practice (no source): usage errors exit 2 with a message naming the fix.
    for (args, hint) in [
        (vec!["-o", "x.gif"], ".png or .svg"),
        (vec!["-o", "x.png", "--scale", "5"], "use 1, 2 or 3"),
        (
            vec!["-o", "x.png", "--layers", "schematic,shading"],
            "unknown layer",
        ),
        (vec!["-o", "x.png", "--model", "pi"], "t, h or hybrid-pi"),
        (
            vec!["-o", "x.png", "--background", "black"],
            "white, paper or transparent",
        ),
        (vec!["--table", "wires"], "bias, stages or parts"),
        (vec![], "-o OUT.png"),
    ] {
        let mut a = vec!["export", "projects/common-emitter.json"];
        a.extend(args.iter());
        let out = run(&a);
        assert_eq!(out.status.code(), Some(2), "{a:?}");
        assert!(
            text(&out.stderr).contains(hint),
            "{a:?}: {}",
            text(&out.stderr)
        );
    }
}

#[test]
fn export_with_warnings_exits_1_and_still_writes() {
    // common practice (no source): exit 1 means finished with warnings.
    // The ±35 V demo crosses the 60 V caution threshold: a warning, not a failure.
    let png = scratch("hv.png");
    let out = run(&[
        "export",
        "projects/high-voltage-driver.json",
        "-o",
        png.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    assert!(png.exists());
}

#[test]
fn tables_are_csv_with_a_header_and_one_row_per_item() {
    // The bias table: one voltage row per net and one current row per pin.
    let out = run(&["export", "projects/common-emitter.json", "--table", "bias"]);
    assert_eq!(out.status.code(), Some(0));
    let s = text(&out.stdout);
    let mut lines = s.lines();
    assert_eq!(lines.next(), Some("quantity,item,value,unit,text"));
    let nets = run(&["nets", "projects/common-emitter.json"]);
    let net_count = text(&nets.stdout).lines().count();
    let voltage_rows = s.lines().filter(|l| l.starts_with("voltage,")).count();
    // invariant: every net listed by `nets` has its voltage row.
    assert_eq!(voltage_rows, net_count);
    // invariant (Kirchhoff's current law): a part's pin currents sum to zero.
    // (A rail has one pin: its return is through ground, so it is left out.)
    let mut by_part: std::collections::BTreeMap<String, (f64, usize)> = Default::default();
    for l in s.lines().filter(|l| l.starts_with("current_into_pin,")) {
        let f: Vec<&str> = l.split(',').collect();
        let part = f[1].split('.').next().unwrap().to_string();
        let e = by_part.entry(part).or_default();
        e.0 += f[2].parse::<f64>().unwrap();
        e.1 += 1;
    }
    assert!(
        by_part.values().any(|(_, n)| *n == 3),
        "transistor rows present"
    );
    for (part, (sum, pins)) in by_part {
        if pins < 2 {
            continue;
        }
        assert!(sum.abs() < 1e-9, "{part}: pin currents sum to {sum}");
    }
    // The parts list: every part but the grounds, with its value and tolerance.
    let out = run(&["export", "projects/common-emitter.json", "--table", "parts"]);
    let s = text(&out.stdout);
    assert!(s.starts_with("designator,kind,value,rating,tolerance,preset\n"));
    assert!(
        s.lines().any(|l| l == "R1,resistor,56 kΩ,250 mW,5 %,"),
        "{s}"
    );
    let csv = scratch("stages.csv");
    let out = run(&[
        "export",
        "projects/common-emitter.json",
        "--table",
        "stages",
        "-o",
        csv.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0));
    assert!(std::fs::read_to_string(&csv)
        .unwrap()
        .starts_with("stage,configuration,figure,"));
}

#[test]
fn response_plot_from_sweep_csv() {
    // source: Sedra & Smith, Microelectronic Circuits, single-time-constant
    // networks: a first-order high-pass is 3 dB down at its pole.
    let csv = scratch("sweep.csv");
    let mut s = String::from("frequency_hz,magnitude_db,phase_degrees\n");
    for k in 0..=100 {
        let f = 10f64.powf(k as f64 / 20.0);
        let x = 200.0 / f;
        s += &format!(
            "{f},{},{}\n",
            -10.0 * (1.0 + x * x).log10(),
            x.atan().to_degrees()
        );
    }
    std::fs::write(&csv, s).unwrap();
    let svg = scratch("resp.svg");
    let out = run(&[
        "export",
        "projects/common-emitter.json",
        "--response",
        csv.to_str().unwrap(),
        "-o",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = std::fs::read_to_string(&svg).unwrap();
    let at = s.find("−3 dB at ").expect("corner label");
    let label = &s[at + "−3 dB at ".len()..];
    let value: f64 = label.split(' ').next().unwrap().parse().unwrap();
    assert!(
        (value - 200.0).abs() < 4.0,
        "corner at {value} Hz, expected 200 Hz"
    );
    assert!(resvg::usvg::Tree::from_str(&s, &biasline::render::usvg_options()).is_ok());
}
