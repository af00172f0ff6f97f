//! The single-transistor stages of a push-pull output's devices, read
//! again beside the block: their textbook estimates do not apply (at idle
//! both halves conduct and share the output; under signal each carries
//! about half the cycle, and one half reaching cut-off is normal in class
//! AB), the other half is not their load, and their own swing to cut-off is
//! not the output's limit. The exact small-signal figures stay.

use super::{Block, BlockKind};
use crate::analysis::figures::{Figure, Midband};

fn drop_estimate(f: &mut Figure) {
    f.re_model = None;
    f.h_model = None;
    f.re_difference_percent = None;
    f.h_difference_percent = None;
}

/// Revise the stages taken in by push-pull blocks (and what drives them).
pub(crate) fn revise(blocks: &[Block], midband: &mut Midband, load: Option<&str>) {
    for (n, b) in blocks.iter().enumerate() {
        if b.kind != BlockKind::PushPull {
            continue;
        }
        let pair = b.transistors.join(", ");
        for (i, s) in midband.stages.iter_mut().enumerate() {
            let inside = b.stages.contains(&i);
            let loaded_by_block =
                s.ac.loaded_by
                    .as_ref()
                    .is_some_and(|l| b.transistors.contains(l));
            if !inside {
                if loaded_by_block {
                    s.ac.loaded_by = Some(format!("the push-pull output ({pair})"));
                }
                continue;
            }
            for f in [
                &mut s.input_impedance,
                &mut s.output_impedance,
                &mut s.voltage_gain,
                &mut s.current_gain,
            ] {
                drop_estimate(f);
            }
            let why = format!(
                "no estimate: the single-transistor formulas do not apply to one half of \
                 the push-pull output (block {})",
                n + 1
            );
            s.re_model_neglects = vec![why.clone()];
            s.h_model_neglects = vec![why];
            s.caveats.push(format!(
                "{} is one half of the push-pull output {pair} (block {}): at idle both \
                 halves conduct and share the output, under signal each carries about half \
                 the cycle and one half reaching cut-off is normal in class AB; the exact \
                 figures are the idle small-signal ones, the block gives the output's \
                 swing, power and dissipation",
                s.transistor,
                n + 1
            ));
            s.swing = None;
            let others: Vec<&String> = b
                .transistors
                .iter()
                .filter(|t| **t != s.transistor)
                .collect();
            if loaded_by_block {
                s.ac.loaded_by = Some(match load {
                    Some(l) => format!("{l} with the other half in parallel at idle"),
                    None => "the other half at idle".into(),
                });
            }
            s.notes.retain(|note| {
                !(others.iter().any(|o| note.contains(o.as_str()))
                    && (note.contains("differential pair") || note.contains("feedback pair")))
            });
        }
    }
}
