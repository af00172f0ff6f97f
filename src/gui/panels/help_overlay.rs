//! The help overlay over the sheet (the dialogs are their own component,
//! [`crate::gui::dialogs`]).

use super::*;
use iced::widget::column;

pub(super) fn help_overlay() -> El<'static> {
    let mut c = column![text("Keys").size(18)].spacing(3);
    for (keys, what) in help::SHORTCUTS {
        c = c.push(row![text(*keys).size(13).width(190), small(*what)].spacing(8));
    }
    c = c.push(space::vertical().height(8));
    c = c.push(button(small("close (h or Esc)")).on_press(Message::Command(Command::Help)));
    panel(scrollable(c)).padding(18).max_width(640).into()
}
