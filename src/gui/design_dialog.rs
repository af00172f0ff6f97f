//! The "design a stage" dialog: the target line as `biasline design` takes
//! it, solved by the same library call, placed on the sheet as one edit
//! (`edit::place_design`). The parsing and solving here are plain Rust.

use crate::design::line::{spread_limits, targets, TargetLine};
use crate::document::Document;
use clap::Parser;

/// What the dialog opens with.
pub const EXAMPLE: &str = "--stage ce --supply 12 --gain 30dB --zin 20k --load 10k --low 20";

#[derive(Debug, Parser)]
#[command(name = "design a stage", no_binary_name = true)]
struct Line {
    #[command(flatten)]
    args: TargetLine,
}

/// Solve the target line; the preferred-value stage (drawn, spread limits
/// set) and a one-line summary, or the reason it cannot be designed.
pub fn design(line: &str) -> Result<(Document, String), String> {
    let words: Vec<&str> = line.split_whitespace().collect();
    let parsed = Line::try_parse_from(words).map_err(|e| {
        e.to_string()
            .lines()
            .next()
            .unwrap_or("cannot read the target line")
            .trim_start_matches("error: ")
            .to_string()
    })?;
    if let Some(t) = crate::design::line::fet_targets(&parsed.args) {
        let d = crate::design::fet::design(&t?).map_err(|e| e.0)?;
        let summary = format!(
            "{} with {} values: ID {}, gain {:.2} dB, Zin {}, ID over the spread {} … {}{}",
            d.targets.stage.words(),
            d.targets.resistor_series.name,
            crate::units::format(d.drain_current_achieved, crate::units::Unit::Ampere),
            d.measured.gain_db(),
            crate::units::format(d.measured.input_impedance, crate::units::Unit::Ohm),
            crate::units::format(d.ends[0].drain_current, crate::units::Unit::Ampere),
            crate::units::format(d.ends[1].drain_current, crate::units::Unit::Ampere),
            if d.misses.is_empty() {
                String::new()
            } else {
                format!("; MISSED: {}", d.misses.join("; "))
            }
        );
        return Ok((d.document, summary));
    }
    let t = targets(&parsed.args)?;
    let d = crate::design::design(&t).map_err(|e| e.0)?;
    let m = d.snapped.measured.as_ref().map_err(|e| e.clone())?;
    let mut doc = d.snapped.document.clone();
    doc.spread.limits = spread_limits(&t);
    let s = m.devices.iter().map(|q| q.sensitivity).fold(0.0, f64::max);
    let summary = format!(
        "{} with {} values: gain {:.2} dB, Zin {}, low corner {}, S {:.3}",
        t.topology.words(),
        t.resistor_series.name,
        m.gain_db(),
        crate::units::format(m.input_impedance, crate::units::Unit::Ohm),
        m.low_corner.map_or("—".into(), |f| crate::units::format(
            f,
            crate::units::Unit::Hertz
        )),
        s
    );
    Ok((doc, summary))
}

/// The dialog's body.
#[cfg(feature = "gui")]
pub fn view<'a>(
    line: &'a str,
    error: Option<&'a str>,
) -> iced::Element<'a, super::dialogs::Message> {
    use super::dialogs::{Answer, Message};
    use iced::widget::{button, column, row, text, text_input};
    let small = |s: &str| text(s.to_string()).size(13);
    let mut c = column![
        text("Design a stage from targets").size(16),
        text(format!(
            "the options of `biasline design`: --stage {} --supply --gain --zin --load --low [--ic --id --series …]",
            crate::design::stage_words("|")
        ))
        .size(13),
        text_input(EXAMPLE, line)
            .on_input(Message::PathEdited)
            .on_submit(Message::Answer(Answer::Confirm))
            .size(13)
            .width(560),
    ]
    .spacing(8);
    if let Some(e) = error {
        c = c.push(small(e).color(super::palette::WARNING));
    }
    c.push(
        row![
            button(small("design and place")).on_press(Message::Answer(Answer::Confirm)),
            button(small("cancel"))
                .style(button::secondary)
                .on_press(Message::Answer(Answer::Cancel)),
        ]
        .spacing(8),
    )
    .into()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_example_line_designs_and_a_bad_one_says_why() {
        // invariant: the dialog's line gives the same stage as the command line's targets.
        let (doc, summary) = design(EXAMPLE).expect("designs");
        assert!(doc.part_by_designator("RE1").is_some(), "{summary}");
        assert!(!doc.spread.limits.is_empty());
        let e =
            design("--stage ce --supply 12 --gain 0dB --zin 20k --load 10k --low 20").unwrap_err();
        assert!(e.contains("gain"), "{e}");
        // The JFET stages come through the same line.
        let (doc, summary) =
            design("--stage jfet-sf --supply 9 --zin 1M --load 10k --low 20").expect("designs");
        assert!(doc.part_by_designator("RSB").is_some(), "{summary}");
        assert!(summary.contains("source follower"), "{summary}");
        // The MOSFET stage too (its row in `design::STAGES`).
        let (doc, summary) =
            design("--stage mos-cs --supply 12 --gain 20dB --zin 1M --load 10k --low 20")
                .expect("designs");
        assert!(doc.part_by_designator("RG2").is_some(), "{summary}");
        assert!(summary.contains("MOSFET"), "{summary}");
        let e = design("--stage xx --supply 12").unwrap_err();
        assert!(!e.is_empty());
    }
}
