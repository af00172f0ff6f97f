//! The keyboard map (chosen here: plain mnemonic keys) and its help overlay.

use super::message::{Command, Layer};
use crate::document::PartKind;
use iced::keyboard::{key::Named, Key, Modifiers};

/// Every shortcut: the keys as shown, and what they do. The help overlay and
/// the key handling read this one table.
pub const SHORTCUTS: &[(&str, &str)] = &[
    ("r", "place a resistor"),
    ("c", "place a capacitor"),
    ("e", "place a polarised (electrolytic) capacitor"),
    ("l", "place an inductor"),
    ("n", "place an NPN transistor"),
    ("p", "place a PNP transistor"),
    ("j", "place an N-channel JFET"),
    ("J", "place a P-channel JFET (shift+j)"),
    ("m", "place an N-channel MOSFET"),
    ("M", "place a P-channel MOSFET (shift+m)"),
    ("d", "place a diode"),
    ("b", "place a DC voltage source (battery)"),
    ("s", "place a signal source"),
    ("i", "place a current source"),
    ("v", "place a supply rail"),
    ("g", "place a ground"),
    ("w", "draw a wire (click to start, click to bend or end)"),
    (
        "/",
        "while drawing a wire: swap which leg of the bend comes first",
    ),
    (
        "a",
        "attach a net label (type its name in the inspector first)",
    ),
    (
        "t",
        "turn the part a quarter clockwise (before or after placing)",
    ),
    ("f", "flip the part left–right (before or after placing)"),
    ("Esc", "back to selecting; cancels a wire or a placement"),
    ("Delete / Backspace", "delete the selection"),
    ("Ctrl+Z", "undo"),
    ("Ctrl+Y or Ctrl+Shift+Z", "redo"),
    ("Ctrl+C / Ctrl+V", "copy / paste at the pointer"),
    ("Ctrl+D", "duplicate the selection"),
    ("Ctrl+N / Ctrl+O", "new sheet / open a project"),
    ("Ctrl+S / Ctrl+Shift+S", "save / save as"),
    ("Home", "fit the sheet to the window"),
    ("+ / −, wheel", "zoom (the wheel zooms about the pointer)"),
    ("middle drag, Space+drag", "pan the sheet"),
    (
        "1 / 2 / 3 / 4",
        "show or hide voltages / currents / stages / distortion",
    ),
    ("h or F1", "show or hide this help"),
];

/// The command a key press means, if any. Plain letters only act without
/// Ctrl or Alt, so they never clash with the Ctrl shortcuts.
pub fn command_for(key: &Key, modifiers: Modifiers) -> Option<Command> {
    let ctrl = modifiers.control() || modifiers.command();
    match key {
        Key::Named(named) => match named {
            Named::Escape => Some(Command::Escape),
            Named::Delete | Named::Backspace => Some(Command::Delete),
            Named::Home => Some(Command::Fit),
            Named::F1 => Some(Command::Help),
            _ => None,
        },
        Key::Character(c) => {
            let shifted = modifiers.shift() || c.chars().any(char::is_uppercase);
            let c = c.to_lowercase();
            if ctrl {
                return match c.as_str() {
                    "z" if modifiers.shift() => Some(Command::Redo),
                    "z" => Some(Command::Undo),
                    "y" => Some(Command::Redo),
                    "c" => Some(Command::Copy),
                    "v" => Some(Command::Paste),
                    "d" => Some(Command::Duplicate),
                    "n" => Some(Command::New),
                    "o" => Some(Command::Open),
                    "s" if modifiers.shift() => Some(Command::SaveAs),
                    "s" => Some(Command::Save),
                    _ => None,
                };
            }
            if modifiers.alt() {
                return None;
            }
            // The part shelf's keys live in the part-kind table.
            // A shifted letter is a kind's second key (P-channel parts) where
            // one exists, else the plain letter.
            let upper = c.to_uppercase();
            let kind = shifted
                .then(|| PartKind::by_key(&upper))
                .flatten()
                .or_else(|| PartKind::by_key(&c));
            if let Some(kind) = kind {
                return Some(Command::Place(kind));
            }
            match c.as_str() {
                "w" => Some(Command::Wire),
                "/" => Some(Command::ToggleBend),
                "a" => Some(Command::Label),
                "t" => Some(Command::Turn),
                "f" => Some(Command::Flip),
                "h" => Some(Command::Help),
                "+" | "=" => Some(Command::ZoomIn),
                "-" => Some(Command::ZoomOut),
                "1" => Some(Command::ToggleLayer(Layer::Voltages)),
                "2" => Some(Command::ToggleLayer(Layer::Currents)),
                "3" => Some(Command::ToggleLayer(Layer::Stages)),
                "4" => Some(Command::ToggleLayer(Layer::Distortion)),
                _ => None,
            }
        }
        _ => None,
    }
}

/// The shelf key of a kind (shown on its button).
pub fn shelf_key(kind: PartKind) -> &'static str {
    kind.info().key
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_shelf_kind_has_its_key_and_the_table_lists_it() {
        // invariant: the help overlay lists every key the handler knows, and no two kinds share one.
        let mut seen = std::collections::BTreeSet::new();
        for kind in PartKind::ALL {
            let k = shelf_key(kind);
            assert!(seen.insert(k), "{k} used twice");
            let cmd = command_for(&Key::Character(k.into()), Modifiers::empty());
            assert_eq!(cmd, Some(Command::Place(kind)));
            // The same key pressed with shift, as the window reports it (lower case + shift).
            if k.chars().any(char::is_uppercase) {
                let cmd = command_for(&Key::Character(k.to_lowercase().into()), Modifiers::SHIFT);
                assert_eq!(cmd, Some(Command::Place(kind)));
            }
            assert!(
                SHORTCUTS.iter().any(|(keys, _)| *keys == k),
                "{k} not in help"
            );
        }
        assert_eq!(
            command_for(&Key::Character("z".into()), Modifiers::CTRL),
            Some(Command::Undo)
        );
        assert_eq!(
            command_for(&Key::Character("r".into()), Modifiers::CTRL),
            None
        );
    }
}
