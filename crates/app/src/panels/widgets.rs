//! Small widgets the panels share: labelled fields with their messages, unit pickers, figure cards,
//! table cells. Every interactive widget gets an accessible name.

use crate::style;
use crate::view::{FormCheck, HistoryRow};
use egui::{Align, Color32, Layout, Rect, RichText, Role, Ui, UiBuilder, WidgetInfo, vec2};

/// A single-line text field with a label above it; returns the new text when it changed.
pub fn text_field(ui: &mut Ui, label: &str, text: &str, width: f32, hint: &str) -> Option<String> {
    let mut t = text.to_owned();
    let mut changed = false;
    ui.vertical(|ui| {
        ui.label(RichText::new(label).color(style::MUTED).small());
        let r = ui.add(
            egui::TextEdit::singleline(&mut t)
                .desired_width(width)
                .hint_text(hint),
        );
        r.widget_info(|| WidgetInfo::labeled(Role::TextInput, true, label));
        changed = r.changed();
    });
    changed.then_some(t)
}

/// A pick list of unit or name choices with an accessible name; returns the new choice.
pub fn choice(
    ui: &mut Ui,
    label: &str,
    current: &str,
    options: &[&str],
    width: f32,
) -> Option<String> {
    let mut picked = None;
    ui.vertical(|ui| {
        ui.label(RichText::new(label).color(style::MUTED).small());
        let r = egui::ComboBox::from_id_salt(label)
            .selected_text(current)
            .width(width)
            .show_ui(ui, |ui| {
                for o in options {
                    let r = ui.selectable_label(current == *o, *o);
                    if r.clicked() {
                        picked = Some((*o).to_owned());
                    }
                }
            });
        r.response
            .widget_info(|| WidgetInfo::labeled(Role::ComboBox, true, label));
    });
    picked
}

/// The messages of the fields named `prefix` (and `prefix_...`), in the error colour, under a field.
pub fn messages(ui: &mut Ui, check: &FormCheck, prefix: &str) {
    for m in check.at(prefix) {
        ui.label(RichText::new(m).color(style::ERROR).small());
    }
}

/// A titled figure: big value, unit, and its standard uncertainty underneath.
pub fn figure(ui: &mut Ui, width: f32, title: &str, value: &str, unit: &str, sub: &str) {
    egui::Frame::new()
        .fill(style::CARD)
        .stroke(egui::Stroke::new(1.0, Color32::from_rgb(0xd8, 0xde, 0xe4)))
        .corner_radius(4)
        .inner_margin(egui::Margin::symmetric(12, 8))
        .show(ui, |ui| {
            ui.vertical(|ui| {
                ui.set_width(width - 24.0);
                ui.label(RichText::new(title).color(style::MUTED));
                ui.horizontal(|ui| {
                    ui.label(RichText::new(value).size(26.0).strong().color(style::INK));
                    ui.label(RichText::new(unit).size(15.0).color(style::MUTED));
                });
                ui.label(RichText::new(sub).color(style::MUTED).small());
            });
        });
}

/// A framed caution note.
pub fn caution(ui: &mut Ui, text: &str) {
    egui::Frame::new()
        .fill(style::CAUTION_BG)
        .stroke(egui::Stroke::new(1.0, style::CAUTION))
        .corner_radius(3)
        .inner_margin(egui::Margin::symmetric(10, 6))
        .show(ui, |ui| {
            ui.label(
                RichText::new(format!("Caution — {text}"))
                    .color(Color32::from_rgb(0x5c, 0x3b, 0x06)),
            );
        });
}

/// A framed audit finding.
pub fn finding(ui: &mut Ui, text: &str) {
    egui::Frame::new()
        .fill(style::CARD)
        .stroke(egui::Stroke::new(1.0, style::CAUTION))
        .corner_radius(3)
        .inner_margin(egui::Margin::symmetric(10, 5))
        .show(ui, |ui| {
            ui.label(RichText::new(format!("Open finding — {text}")).color(style::INK));
        });
}

/// A table column: title, width, right-aligned or not.
pub struct Column {
    /// Header text (with unit).
    pub title: String,
    /// Width in points.
    pub width: f32,
    /// Right-align (numbers).
    pub right: bool,
}

impl Column {
    /// A right-aligned numeric column.
    pub fn num(title: impl Into<String>, width: f32) -> Self {
        Self {
            title: title.into(),
            width,
            right: true,
        }
    }
    /// A left-aligned text column.
    pub fn text(title: impl Into<String>, width: f32) -> Self {
        Self {
            title: title.into(),
            width,
            right: false,
        }
    }
}

/// Height of one table row.
pub const ROW_HEIGHT: f32 = 20.0;

/// Lay out one table row: a selectable first cell (returns true when clicked) and plain cells.
pub fn row(
    ui: &mut Ui,
    cols: &[Column],
    cells: &[String],
    selected: bool,
    stripe: bool,
    colour: Option<Color32>,
) -> bool {
    let width: f32 = cols.iter().map(|c| c.width).sum();
    let (rect, _) = ui.allocate_exact_size(vec2(width, ROW_HEIGHT), egui::Sense::hover());
    if stripe {
        ui.painter()
            .rect_filled(rect, 0.0, ui.visuals().faint_bg_color);
    }
    let mut x = rect.left();
    let mut clicked = false;
    let font = egui::FontId::proportional(13.0);
    let ink = colour.unwrap_or(style::INK);
    for (i, (c, text)) in cols.iter().zip(cells).enumerate() {
        let cell = Rect::from_min_size(egui::pos2(x, rect.top()), vec2(c.width - 8.0, ROW_HEIGHT));
        x += c.width;
        if i == 0 {
            // The first cell is the row's handle: a real widget, so it can be clicked and found.
            let layout = Layout::left_to_right(Align::Center);
            ui.scope_builder(UiBuilder::new().max_rect(cell).layout(layout), |ui| {
                clicked |= ui.selectable_label(selected, text.as_str()).clicked();
            });
            continue;
        }
        // Other cells are painted (cheap for thousands of rows), clipped to their column.
        let (pos, align) = if c.right {
            (cell.right_center(), egui::Align2::RIGHT_CENTER)
        } else {
            (cell.left_center(), egui::Align2::LEFT_CENTER)
        };
        ui.painter()
            .with_clip_rect(cell)
            .text(pos, align, text, font.clone(), ink);
    }
    clicked
}

/// The header row of a table.
pub fn header(ui: &mut Ui, cols: &[Column]) {
    let width: f32 = cols.iter().map(|c| c.width).sum();
    let (rect, _) = ui.allocate_exact_size(vec2(width, ROW_HEIGHT + 2.0), egui::Sense::hover());
    let mut x = rect.left();
    for c in cols {
        let cell = Rect::from_min_size(egui::pos2(x, rect.top()), vec2(c.width - 8.0, ROW_HEIGHT));
        x += c.width;
        let (pos, align) = if c.right {
            (cell.right_center(), egui::Align2::RIGHT_CENTER)
        } else {
            (cell.left_center(), egui::Align2::LEFT_CENTER)
        };
        ui.painter().text(
            pos,
            align,
            &c.title,
            egui::FontId::proportional(12.0),
            style::MUTED,
        );
    }
    ui.painter().hline(
        rect.x_range(),
        rect.bottom(),
        egui::Stroke::new(1.0, Color32::from_rgb(0xc8, 0xd0, 0xd8)),
    );
}

/// A save-style button that is disabled unless `enabled`; true when clicked.
pub fn action_button(ui: &mut Ui, label: &str, enabled: bool) -> bool {
    ui.add_enabled(enabled, egui::Button::new(label)).clicked()
}

/// The notice (green) or error (red) line, with a dismiss button; true when dismissed.
pub fn message_line(ui: &mut Ui, notice: Option<&str>, error: Option<&str>) -> bool {
    let mut dismissed = false;
    if let Some(e) = error {
        ui.horizontal(|ui| {
            ui.label(RichText::new(e).color(style::ERROR));
            dismissed = ui.small_button("Dismiss").clicked();
        });
    } else if let Some(n) = notice {
        ui.horizontal(|ui| {
            ui.label(RichText::new(n).color(style::OK));
            dismissed = ui.small_button("Dismiss").clicked();
        });
    }
    dismissed
}

/// One line of a record log: the record's id, its cells, and an ink colour when it is not the usual one.
pub struct LogRow {
    /// The record's id (what a click selects).
    pub id: i64,
    /// One text per column.
    pub cells: Vec<String>,
    /// Ink of the whole line, e.g. for a refused reading.
    pub colour: Option<Color32>,
}

/// A record log: the header, then the lines (only those in view are laid out) inside a horizontal and a
/// vertical scroll area named after `salt`. `line(i)` gives line i; returns the id of a clicked line.
/// `selected` is the selected record's id; when the selection changes to a line out of view (a
/// reading opened from a balance, a time entered far back), `line_of` finds its line (only then) and
/// the log scrolls to it.
pub fn record_log(
    ui: &mut Ui,
    salt: &str,
    cols: &[Column],
    len: usize,
    selected: Option<i64>,
    line_of: impl FnOnce(i64) -> Option<usize>,
    mut line: impl FnMut(usize) -> Option<LogRow>,
) -> Option<i64> {
    let mut clicked = None;
    // the selection and the lines in view at the last frame
    let memory = ui.scope_id().with(("record_log_view", salt));
    let (was, in_view) = ui.data(|d| {
        d.get_temp::<(Option<i64>, std::ops::Range<usize>)>(memory)
            .unwrap_or_default()
    });
    let scroll_to = selected
        .filter(|_| was != selected)
        .and_then(line_of)
        .filter(|at| !in_view.contains(at));
    egui::ScrollArea::horizontal()
        .id_salt(format!("{salt}_h"))
        .show(ui, |ui| {
            ui.vertical(|ui| {
                ui.spacing_mut().item_spacing.y = 0.0;
                header(ui, cols);
                let mut area = egui::ScrollArea::vertical()
                    .id_salt(format!("{salt}_v"))
                    .auto_shrink([false, false]);
                if let Some(at) = scroll_to {
                    // the line a few lines below the top
                    area = area.vertical_scroll_offset(
                        (at.saturating_sub(3) as f32 * ROW_HEIGHT).max(0.0),
                    );
                }
                area.show_rows(ui, ROW_HEIGHT, len, |ui, range| {
                    // the first and last lines may be cut off: not counted as in view
                    let shown = (range.start + 1)..range.end.saturating_sub(1);
                    ui.data_mut(|d| d.insert_temp(memory, (selected, shown)));
                    for i in range {
                        let Some(r) = line(i) else { continue };
                        if row(
                            ui,
                            cols,
                            &r.cells,
                            selected == Some(r.id),
                            i % 2 == 1,
                            r.colour,
                        ) {
                            clicked = Some(r.id);
                        }
                    }
                });
            });
        });
    clicked
}

/// The heading of a record form, "New {noun}" or "Edit {noun}", with a button back to a new record while
/// editing; true when that button is clicked.
pub fn form_heading(ui: &mut Ui, noun: &str, editing: bool) -> bool {
    ui.add_space(4.0);
    ui.horizontal(|ui| {
        ui.heading(if editing {
            format!("Edit {noun}")
        } else {
            format!("New {noun}")
        });
        editing && ui.small_button(format!("New {noun}")).clicked()
    })
    .inner
}

/// True when the form may be saved, or when only its reason is missing (saving then says so: a form
/// does not complain about a reason before the user tries to save).
pub fn savable(check: &FormCheck) -> bool {
    check.ok || (!check.errors.is_empty() && check.errors.iter().all(|e| e.field == "reason"))
}

/// The reason asked for an edit or a deletion, with its messages once the user tried to save; the new
/// text when it changed.
pub fn reason_field(ui: &mut Ui, reason: &str, check: &FormCheck, tried: bool) -> Option<String> {
    let changed = text_field(
        ui,
        "Reason for the change",
        reason,
        300.0,
        "required to edit or delete",
    );
    if tried {
        messages(ui, check, "reason");
    }
    changed
}

/// "Save {noun}" (or "Save change" while editing), enabled when the form checks out, and, while editing,
/// "Delete {noun}", enabled once a reason is given. Returns (save clicked, delete clicked).
pub fn save_and_delete(
    ui: &mut Ui,
    noun: &str,
    editing: bool,
    ok: bool,
    reason: &str,
) -> (bool, bool) {
    ui.horizontal(|ui| {
        let label = if editing {
            "Save change".to_owned()
        } else {
            format!("Save {noun}")
        };
        let save = action_button(ui, &label, ok);
        let delete =
            editing && action_button(ui, &format!("Delete {noun}"), !reason.trim().is_empty());
        (save, delete)
    })
    .inner
}

/// The earlier versions of the record being edited.
pub fn record_history(ui: &mut Ui, noun: &str, history: &[HistoryRow]) {
    ui.add_space(8.0);
    ui.label(RichText::new(format!("History of this {noun}")).strong());
    if history.is_empty() {
        ui.label(
            RichText::new("No earlier versions.")
                .small()
                .color(style::MUTED),
        );
    }
    for h in history {
        ui.label(RichText::new(format!("{} — {}: {}", h.when, h.action, h.reason)).small());
        ui.label(
            RichText::new(format!("was {}", h.old))
                .small()
                .color(style::MUTED),
        );
    }
}

/// The local day, hour and minute a form's entry names (None while it is not a day and HH:MM).
fn entry_parts(e: &crate::view::LocalEntry) -> Option<(chrono::NaiveDate, u32, u32)> {
    let date = chrono::NaiveDate::parse_from_str(e.date.trim(), "%Y-%m-%d").ok()?;
    let (h, m) = e.clock.trim().split_once(':')?;
    Some((date, h.parse().ok()?, m.parse().ok()?))
}

/// A time on the site's clock: a date picker, the time of day as HH:MM, "Now", and, when the clocks
/// show that time twice (going back), which of the two. Returns the changed entry.
pub fn local_time(
    ui: &mut Ui,
    label: &str,
    e: &crate::view::LocalEntry,
    zone: units::Zone,
) -> Option<crate::view::LocalEntry> {
    use crate::view::LocalEntry;
    let mut out: Option<LocalEntry> = None;
    let now = crate::fmt::now_ms();
    ui.vertical(|ui| {
        ui.label(
            RichText::new(format!("{label} (site time, {})", zone.name()))
                .color(style::MUTED)
                .small(),
        );
        ui.horizontal(|ui| {
            let day = chrono::NaiveDate::parse_from_str(e.date.trim(), "%Y-%m-%d")
                .ok()
                .or_else(|| zone.parts(now).map(|p| p.0));
            if let Some(day) = day {
                use chrono::Datelike;
                let mut picked =
                    jiff::civil::Date::new(day.year() as i16, day.month() as i8, day.day() as i8)
                        .unwrap_or_default();
                let before = picked;
                let r = ui.add(
                    egui_extras::DatePickerButton::new(&mut picked)
                        .id_salt(label)
                        .calendar_week(false)
                        .show_icon(false),
                );
                r.widget_info(|| WidgetInfo::labeled(Role::Button, true, format!("{label} day")));
                if picked != before {
                    out = Some(LocalEntry {
                        date: format!(
                            "{:04}-{:02}-{:02}",
                            picked.year(),
                            picked.month(),
                            picked.day()
                        ),
                        repeat: None,
                        ..e.clone()
                    });
                }
            }
            let mut clock = e.clock.clone();
            let r = ui.add(
                egui::TextEdit::singleline(&mut clock)
                    .desired_width(52.0)
                    .hint_text("HH:MM"),
            );
            r.widget_info(|| {
                WidgetInfo::labeled(Role::TextInput, true, format!("{label} time of day"))
            });
            if r.changed() {
                out = Some(LocalEntry {
                    clock,
                    repeat: None,
                    ..out.clone().unwrap_or_else(|| e.clone())
                });
            }
            if ui
                .button("Now")
                .on_hover_text(format!(
                    "Set {} to now on the site's clock",
                    label.to_lowercase()
                ))
                .clicked()
                && let Some((d, h, m)) = zone.parts(now)
            {
                out = Some(LocalEntry {
                    date: d.format("%Y-%m-%d").to_string(),
                    clock: format!("{h:02}:{m:02}"),
                    repeat: None,
                });
            }
        });
        // a time the clocks show twice: say which
        let shown = out.clone().unwrap_or_else(|| e.clone());
        if let Some((d, h, m)) = entry_parts(&shown)
            && let Err(units::LocalTimeError::Repeated { first, second, .. }) =
                zone.instant(d, h, m, units::Repeat::Ask)
        {
            ui.horizontal(|ui| {
                ui.label(RichText::new("This time happens twice:").small());
                for (second_one, text) in [(false, &first), (true, &second)] {
                    let word = if second_one { "second" } else { "first" };
                    if ui
                        .radio(shown.repeat == Some(second_one), format!("{word} ({text})"))
                        .clicked()
                    {
                        out = Some(LocalEntry {
                            repeat: Some(second_one),
                            ..shown.clone()
                        });
                    }
                }
            });
        }
    });
    out
}
