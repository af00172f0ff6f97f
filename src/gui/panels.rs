//! The panels around the sheet: the command strip on top, the shelf on the
//! left, the inspector and stage table on the right, findings and status in
//! the bottom drawer, dialogs and the help overlay above everything.

use super::app::{App, Tool};

mod help_overlay;
use super::edit::Item;
use super::help;
use super::message::*;
use super::palette;
use super::readout;
use crate::document::PartKind;
use crate::netlist::Severity;
use crate::units::{format, Unit};
use help_overlay::help_overlay;
use iced::widget::{
    button, center, checkbox, column, container, opaque, pick_list, row, rule, scrollable, space,
    stack, text, text_input,
};
use iced::{Background, Border, Element, Length, Theme};

type El<'a> = Element<'a, Message>;

fn small<'a>(s: impl ToString) -> iced::widget::Text<'a> {
    text(s.to_string()).size(13)
}

fn heading<'a>(s: &str) -> iced::widget::Text<'a> {
    text(s.to_string()).size(14).color(palette::INK_SOFT)
}

fn cmd<'a>(label: &str, c: Command) -> El<'a> {
    button(small(label))
        .padding([3, 8])
        .style(button::secondary)
        .on_press(Message::Command(c))
        .into()
}

fn cmd_maybe<'a>(label: &str, c: Command, enabled: bool) -> El<'a> {
    button(small(label))
        .padding([3, 8])
        .style(button::secondary)
        .on_press_maybe(enabled.then_some(Message::Command(c)))
        .into()
}

fn sep<'a>() -> El<'a> {
    container(rule::vertical(1)).height(22).into()
}

fn panel<'a>(content: impl Into<El<'a>>) -> container::Container<'a, Message> {
    container(content)
        .padding(8)
        .style(|_t: &Theme| container::Style {
            background: Some(Background::Color(palette::PANEL)),
            border: Border {
                color: palette::GRID,
                width: 1.0,
                radius: 0.0.into(),
            },
            ..container::Style::default()
        })
}

/// The open dialog in its panel, its messages mapped into the app's.
fn dialog<'a>(app: &'a App, d: &'a super::dialogs::Dialog) -> El<'a> {
    panel(d.view(&app.recent).map(Message::Dialog))
        .padding(18)
        .max_width(560)
        .into()
}

/// The whole window.
pub fn view(app: &App) -> El<'_> {
    // Clipped to its own area: a zoomed drawing never paints over the
    // drawer, the shelf or the inspector.
    let sheet = container(app.sheet.view(app.sheet_showing()).map(Message::Sheet))
        .width(Length::Fill)
        .height(Length::Fill)
        .clip(true);
    let middle = row![shelf(app), sheet, inspector(app)].height(Length::Fill);
    let main: El = column![command_strip(app), middle, drawer(app)].into();
    let mut layers = vec![main];
    if let Some(d) = &app.dialog {
        layers.push(opaque(center(dialog(app, d)).style(|_t: &Theme| {
            container::Style {
                background: Some(Background::Color(iced::Color::from_rgba(
                    0.1, 0.1, 0.1, 0.35,
                ))),
                ..container::Style::default()
            }
        })));
    } else if app.help {
        layers.push(opaque(center(help_overlay())));
    } else if let Some(h) = hover_box(app) {
        layers.push(h);
    }
    stack(layers).into()
}

/// The readout beside the pointer (not interactive: the sheet keeps the mouse).
fn hover_box(app: &App) -> Option<El<'_>> {
    let sheet = &app.sheet;
    if sheet.tool != Tool::Select {
        return None;
    }
    let at = sheet.pointer?;
    let lines = readout::hover_lines(app, at)?;
    let view = app.view_for(sheet.size);
    let p = view.to_screen(at);
    let width = 12.0 + 7.0 * lines.iter().map(|l| l.chars().count()).max().unwrap_or(0) as f32;
    let height = 12.0 + 18.0 * lines.len() as f32;
    let mut x = sheet.origin.x + p.x + 18.0;
    let mut y = sheet.origin.y + p.y + 16.0;
    if p.x + 18.0 + width > sheet.size.width {
        x = (sheet.origin.x + p.x - width - 12.0).max(0.0);
    }
    if p.y + 16.0 + height > sheet.size.height {
        y = (sheet.origin.y + p.y - height - 12.0).max(0.0);
    }
    let mut col = column![].spacing(2);
    for (k, l) in lines.into_iter().enumerate() {
        let color = if k == 0 {
            palette::VOLTAGE
        } else if l.contains(" in") || l.contains("sum") {
            palette::CURRENT
        } else {
            palette::INK
        };
        col = col.push(small(l).color(color));
    }
    let card = container(col)
        .padding(6)
        .style(|_t: &Theme| container::Style {
            background: Some(Background::Color(palette::PAPER)),
            border: Border {
                color: palette::INK,
                width: 1.0,
                radius: 2.0.into(),
            },
            ..container::Style::default()
        });
    Some(
        container(card)
            .padding(iced::Padding {
                top: y,
                left: x,
                right: 0.0,
                bottom: 0.0,
            })
            .into(),
    )
}

fn command_strip(app: &App) -> El<'_> {
    let undo = match app.history.undo_name() {
        Some(_) => "undo",
        None => "undo",
    };
    let mut strip = row![
        cmd("new", Command::New),
        cmd("open", Command::Open),
        cmd("save", Command::Save),
        cmd("save as", Command::SaveAs),
        sep(),
        cmd_maybe(undo, Command::Undo, app.history.can_undo()),
        cmd_maybe("redo", Command::Redo, app.history.can_redo()),
        sep(),
        cmd("fit", Command::Fit),
        cmd_maybe("tidy the sheet", Command::Tidy, !app.doc.parts.is_empty()),
        cmd("design a stage", Command::DesignStage),
        cmd("export PNG", Command::ExportPng),
        cmd("export SVG", Command::ExportSvg),
        cmd("report HTML", Command::ExportReport),
        cmd_maybe("spread", Command::Spread, !app.drawer.spread.job.running),
        cmd_maybe("waveform", Command::Waveform, !app.drawer.wave.job.running),
        sep(),
    ]
    .spacing(6)
    .align_y(iced::Alignment::Center);
    for l in super::message::TOGGLED_LAYERS {
        strip = strip.push(
            checkbox(app.layer(l))
                .label(l.word())
                .size(14)
                .text_size(13)
                .on_toggle(move |_| Message::Command(Command::ToggleLayer(l))),
        );
    }
    strip = strip.push(small("cards:"));
    strip = strip.push(
        pick_list(&ModelKind::ALL[..], Some(app.model), |m| {
            Message::Command(Command::Model(m))
        })
        .text_size(13)
        .padding([2, 6]),
    );
    strip = strip.push(sep());
    strip = strip.push(cmd("help (h)", Command::Help));
    // The strip wraps onto a second line in a narrow window instead of
    // cutting its last commands off.
    panel(strip.wrap().vertical_spacing(4))
        .width(Length::Fill)
        .into()
}

fn shelf(app: &App) -> El<'_> {
    let mut col = column![heading("shelf")].spacing(3);
    let tool_button = |label: String, c: Command, active: bool| -> El<'_> {
        button(small(label))
            .width(Length::Fill)
            .padding([3, 6])
            .style(if active {
                button::primary
            } else {
                button::text
            })
            .on_press(Message::Command(c))
            .into()
    };
    col = col.push(tool_button(
        "select   Esc".into(),
        Command::Select,
        app.sheet.tool == Tool::Select,
    ));
    col = col.push(tool_button(
        "wire   w".into(),
        Command::Wire,
        matches!(app.sheet.tool, Tool::Wire { .. }),
    ));
    col = col.push(tool_button(
        "net label   a".into(),
        Command::Label,
        app.sheet.tool == Tool::Label,
    ));
    col = col.push(rule::horizontal(1));
    for kind in PartKind::ALL {
        let active = matches!(app.sheet.tool, Tool::Place { kind: k, .. } if k == kind);
        let name = kind.word().replace('_', " ");
        col = col.push(tool_button(
            format!("{name}   {}", help::shelf_key(kind)),
            Command::Place(kind),
            active,
        ));
    }
    panel(scrollable(col))
        .width(200)
        .height(Length::Fill)
        .into()
}

fn inspector(app: &App) -> El<'_> {
    let mut col = column![heading("inspector")].spacing(6);
    if app.sheet.tool == Tool::Label {
        col = col.push(small("name of the next net label"));
        col = col.push(
            text_input("e.g. vout", &app.label_name)
                .on_input(Message::LabelNameEdited)
                .size(13),
        );
    }
    match app.inspector.part {
        Some(i) if i < app.doc.parts.len() => col = part_inspector(app, i, col),
        _ => {
            let n = app.sheet.selection.len();
            col = col.push(small(if n == 0 {
                format!("{} — nothing selected", app.doc.title)
            } else {
                format!("{n} items selected")
            }));
            if app
                .sheet
                .selection
                .iter()
                .any(|i| matches!(i, Item::Wire(_)))
            {
                col = col.push(small("t/f turn or flip selected parts; Delete removes"));
            }
        }
    }
    col = col.push(rule::horizontal(1));
    col = col.push(heading("nets"));
    let figures = app.ok_figures();
    for (id, net) in app.derived.netlist.nets.iter().enumerate() {
        let v = figures
            .and_then(|f| f.net_voltages.get(id))
            .map(|v| format(*v, Unit::Volt))
            .unwrap_or_else(|| "—".into());
        let mark = if app.stale { " (stale)" } else { "" };
        col = col.push(small(format!("{}: {v}{mark}", net.name)).color(palette::VOLTAGE));
    }
    if let Some(Err(e)) = app.figures.as_deref() {
        col = col.push(small(format!("no DC figures: {e}")).color(palette::INK_SOFT));
    }
    if let Some(span) = figures.and_then(super::annotate::caution) {
        col = col.push(
            small(format!(
                "⚠ caution: {} between nets, above 60 V DC. Touching this circuit can hurt; follow your local electrical codes.",
                format(span, Unit::Volt)
            ))
            .color(palette::WARNING),
        );
    }
    col = col.push(rule::horizontal(1));
    col = col.push(heading("stage table"));
    col = stage_table(app, col);
    // The scrollbar sits beside the text, not over its last characters.
    panel(scrollable(col).spacing(4))
        .width(300)
        .height(Length::Fill)
        .into()
}

fn stage_table<'a>(
    app: &'a App,
    mut col: iced::widget::Column<'a, Message>,
) -> iced::widget::Column<'a, Message> {
    if app.stages.is_empty() && app.blocks.is_empty() {
        return col.push(small(
            "Stage figures (Zin, Zout, gain) appear here once the small-signal analysis is part of this build.",
        ));
    }
    for card in &app.stages {
        col = col.push(
            small(format!("{}: {}", card.transistor, card.configuration)).color(palette::STAGE),
        );
        if let Some(m) = card.model(app.model_kind()) {
            let values: Vec<String> = m.values.iter().map(|q| q.text()).collect();
            col = col.push(small(format!("  {}", values.join(", "))));
        }
        // A grid that fits the panel (at the default window width too):
        // figure, exact, hand estimate, difference.
        let cell = |s: String, w: f32| text(s).size(12).width(Length::Fixed(w));
        if !card.figures.is_empty() {
            col = col.push(
                row![
                    cell(String::new(), 42.0),
                    cell("exact".into(), 74.0),
                    cell("by hand".into(), 74.0),
                    cell("diff.".into(), 48.0),
                ]
                .spacing(4),
            );
        }
        for f in &card.figures {
            let (est, diff) = match (f.estimate, f.difference_percent()) {
                (Some(e), Some(d)) => (format(e, f.unit), format!("{d:+.0} %")),
                (Some(e), None) => (format(e, f.unit), String::new()),
                _ => ("—".into(), String::new()),
            };
            col = col.push(
                row![
                    cell(format!("  {}", f.name), 42.0),
                    cell(format(f.exact, f.unit), 74.0),
                    cell(est, 74.0),
                    cell(diff, 48.0),
                ]
                .spacing(4),
            );
        }
        for w in &card.warnings {
            col = col.push(small(format!("  ▲ {w}")).color(palette::CURRENT));
        }
    }
    block_table(app, col)
}

/// Each block's figures: exact, estimate, difference, and why an estimate
/// is absent.
fn block_table<'a>(
    app: &'a App,
    mut col: iced::widget::Column<'a, Message>,
) -> iced::widget::Column<'a, Message> {
    let cell = |s: String, w: f32| text(s).size(12).width(Length::Fixed(w));
    for b in &app.blocks {
        col = col.push(
            small(format!("Block {}: {}", b.transistors.join(", "), b.words)).color(palette::STAGE),
        );
        for f in &b.figures {
            let value = |v: Option<f64>| {
                v.filter(|x| x.is_finite())
                    .map_or("—".to_string(), |x| format(x, f.unit))
            };
            let diff = f
                .difference_percent
                .map_or(String::new(), |d| format!("{d:+.0} %"));
            col = col.push(
                row![
                    cell(format!("  {}", f.label), 58.0),
                    cell(value(f.exact), 70.0),
                    cell(value(f.estimate), 70.0),
                    cell(diff, 44.0),
                ]
                .spacing(4),
            );
        }
        for n in &b.no_estimate {
            col = col.push(small(format!("  {n}")));
        }
        for w in &b.warnings {
            col = col.push(small(format!("  ▲ {w}")).color(palette::CURRENT));
        }
    }
    col
}

fn part_inspector<'a>(
    app: &'a App,
    i: usize,
    mut col: iced::widget::Column<'a, Message>,
) -> iced::widget::Column<'a, Message> {
    let part = &app.doc.parts[i];
    col = col.push(small(format!(
        "{} · id {}",
        part.kind.word().replace('_', " "),
        part.id
    )));
    col = col.push(small("designator"));
    col = col.push(
        text_input("R1", &app.inspector.designator)
            .on_input(Message::DesignatorEdited)
            .on_submit(Message::DesignatorSubmitted)
            .size(13),
    );
    if let Some(e) = &app.inspector.designator_error {
        col = col.push(small(e).color(palette::WARNING));
    }
    if let Some(p) = &part.preset {
        col = col.push(small(format!("preset: {p}")));
    }
    if let Some(example) = crate::gui::edit::datasheet_example(part.kind) {
        col = col.push(
            small("from the datasheet (figures as `biasline fit` takes them)")
                .color(palette::INK_SOFT),
        );
        col = col.push(
            text_input(example, &app.inspector.fit_line)
                .on_input(Message::FitEdited)
                .on_submit(Message::FitSubmitted)
                .size(13),
        );
        if let Some(e) = &app.inspector.fit_error {
            col = col.push(small(format!("not applied: {e}")).color(palette::WARNING));
        }
    }
    for f in &app.inspector.fields {
        let key = f.key.clone();
        let key2 = f.key.clone();
        let name = f.key.replace('_', " ");
        let unit = if f.unit == Unit::None {
            String::new()
        } else {
            format!(" ({})", f.unit.symbol())
        };
        let origin = if f.own { "" } else { " · from preset" };
        col = col.push(small(format!("{name}{unit}{origin}")).color(palette::INK_SOFT));
        col = col.push(
            text_input("value, e.g. 4k7", &f.text)
                .on_input(move |t| Message::FieldEdited(key.clone(), t))
                .on_submit(Message::FieldSubmitted(key2))
                .size(13),
        );
        if let Some(e) = &f.error {
            col = col.push(small(format!("not applied: {e}")).color(palette::WARNING));
        }
    }
    let is_source = app.doc.signal.source.as_deref() == Some(part.designator.as_str())
        && !part.designator.is_empty();
    let is_load = app.doc.signal.load.as_deref() == Some(part.designator.as_str())
        && !part.designator.is_empty();
    let mut marks = row![].spacing(6);
    if part.kind == PartKind::SignalSource {
        marks = marks.push(cmd(
            if is_source {
                "unmark signal in"
            } else {
                "mark as signal in"
            },
            Command::MarkSource,
        ));
    }
    if !matches!(part.kind, PartKind::Ground | PartKind::Rail) {
        marks = marks.push(cmd(
            if is_load {
                "unmark load"
            } else {
                "mark as load"
            },
            Command::MarkLoad,
        ));
    }
    col = col.push(marks);
    col = col.push(heading("readout"));
    for l in readout::part_lines(app, i).into_iter().skip(1) {
        col = col.push(small(l));
    }
    col
}

/// The findings list's first line when the rules check found nothing: it
/// says so without claiming "no findings" above the analysis's warnings.
pub fn clean_rules_line(app: &App) -> String {
    match app.ok_figures().map_or(0, |f| f.warnings.len()) {
        0 => "no findings: the rules check is clean".into(),
        1 => "the rules check is clean; the analysis gives one warning:".into(),
        n => format!("the rules check is clean; the analysis gives {n} warnings:"),
    }
}

fn drawer(app: &App) -> El<'_> {
    let mut list = column![].spacing(2);
    if app.derived.findings.is_empty() {
        list = list.push(small(clean_rules_line(app)).color(palette::VOLTAGE));
    }
    for (k, f) in app.derived.findings.iter().enumerate() {
        let (mark, color) = match f.severity {
            Severity::Error => ("✖ error", palette::WARNING),
            Severity::Warning => ("▲ warning", palette::CURRENT),
        };
        list = list.push(
            button(small(format!("{mark}: {}: {}", f.subject, f.message)).color(color))
                .padding([1, 4])
                .style(button::text)
                .on_press(Message::FindingPressed(k)),
        );
    }
    if let Some(fig) = app.ok_figures() {
        for w in &fig.warnings {
            list = list.push(small(format!("▲ {w}")).color(palette::CURRENT));
        }
        if let Some(m) = &fig.loop_margin {
            list = list.push(small(format!("loop: {m}")).color(palette::VOLTAGE));
        }
        for a in &fig.aids {
            list = list.push(small(format!("note: {a}")).color(palette::INK_SOFT));
        }
    }
    let hover = app
        .sheet
        .pointer
        .and_then(|p| readout::hover_lines(app, p))
        .and_then(|l| l.into_iter().next())
        .unwrap_or_default();
    let status = row![
        small(&app.status),
        space::horizontal(),
        small(hover).color(palette::VOLTAGE)
    ]
    .spacing(12);
    let findings = column![
        heading("findings"),
        scrollable(list.width(Length::Fill)).height(72)
    ]
    .spacing(4)
    .width(Length::Fill);
    // Wide gaps: the response plot's last frequency label reaches past its edge.
    let mut top = row![findings].spacing(28);
    for view in app.drawer.view(app.revision()) {
        top = top.push(view.map(Message::Drawer));
    }
    panel(column![top, rule::horizontal(1), status].spacing(4))
        .width(Length::Fill)
        .into()
}
