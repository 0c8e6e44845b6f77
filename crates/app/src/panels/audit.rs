//! The audit page: every fill's balance (filtered, ordered, with its detail), each vehicle's bias
//! against the legal tolerance, each gauge's drift or step, and the gains and losses between fills. The
//! audit runs in the background; a bar shows how far it is and a button stops it.

use crate::action::{Action, ReportRequest};
use crate::fmt;
use crate::fmt::Figure;
use crate::panels::widgets::{self, Column, LogRow};
use crate::style;
use crate::style::verdict_colour;
use crate::view::{
    AuditColumn, AuditFilter, AuditSection, AuditView, BalanceRow, BracketView, VerdictWord,
    ViewState,
};
use egui::{RichText, Stroke, Ui, vec2};

mod sections;

/// Draw the audit page.
pub fn audit_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let a = &view.audit;
    ui.horizontal(|ui| {
        ui.heading("Audit");
        ui.separator();
        for s in AuditSection::ALL {
            if ui.selectable_label(a.section == s, s.title()).clicked() {
                out.push(Action::ShowAuditSection(s));
            }
        }
        ui.separator();
        match view.fleet.progress {
            Some((done, total)) => {
                let f = if total > 0 {
                    done as f32 / total as f32
                } else {
                    0.0
                };
                ui.add(
                    egui::ProgressBar::new(f)
                        .desired_width(220.0)
                        .text(format!("auditing tank {done} of {total}")),
                );
                if ui.button("Stop").clicked() {
                    out.push(Action::StopAudit);
                }
            }
            None => {
                if ui
                    .button("Run again")
                    .on_hover_text("Audit the whole fleet again from the ledger")
                    .clicked()
                {
                    out.push(Action::RunAudit);
                }
            }
        }
    });
    if !a.ready {
        let text = if a.stopped {
            "The audit was stopped before it finished. Run it again to see the fills."
        } else {
            "The fleet is being audited in the background; the window stays usable meanwhile."
        };
        ui.label(RichText::new(text).color(style::MUTED));
        return;
    }
    if a.stopped {
        ui.label(
            RichText::new("Stopped: the figures below are from the last audit that finished.")
                .color(style::CAUTION),
        );
    }
    match a.section {
        AuditSection::Fills => fills_ui(ui, view, out),
        AuditSection::Vehicles => sections::vehicles_ui(ui, a, out),
        AuditSection::Gauges => sections::gauges_ui(ui, a, out),
        AuditSection::Findings => sections::findings_ui(ui, a, out),
    }
}

fn pick(ui: &mut Ui, label: &str, current: &str, names: &[String]) -> Option<String> {
    let mut chosen = None;
    ui.label(RichText::new(label).color(style::MUTED));
    let r = egui::ComboBox::from_id_salt(label)
        .selected_text(if current.is_empty() { "any" } else { current })
        .width(130.0)
        .show_ui(ui, |ui| {
            if ui.selectable_label(current.is_empty(), "any").clicked() {
                chosen = Some(String::new());
            }
            for n in names {
                if ui.selectable_label(current == n, n).clicked() {
                    chosen = Some(n.clone());
                }
            }
        });
    r.response
        .widget_info(|| egui::WidgetInfo::labeled(egui::Role::ComboBox, true, label));
    chosen
}

/// A day, typed as YYYY-MM-DD, its label inline; the new text when it changed.
fn day_field(ui: &mut Ui, label: &str, text: &str) -> Option<String> {
    ui.label(RichText::new(label).color(style::MUTED));
    let mut t = text.to_owned();
    let r = ui.add(
        egui::TextEdit::singleline(&mut t)
            .desired_width(96.0)
            .hint_text("YYYY-MM-DD"),
    );
    r.widget_info(|| egui::WidgetInfo::labeled(egui::Role::TextInput, true, label));
    r.changed().then_some(t)
}

fn filter_ui(ui: &mut Ui, a: &AuditView, out: &mut Vec<Action>) {
    let f = &a.filter;
    let mut next: Option<AuditFilter> = None;
    ui.horizontal_wrapped(|ui| {
        let fields: [(&str, &String); 4] = [
            ("site", &f.site),
            ("tank", &f.tank),
            ("carrier", &f.carrier),
            ("vehicle", &f.vehicle),
        ];
        for (k, (label, current)) in fields.into_iter().enumerate() {
            if let Some(c) = pick(ui, label, current, &a.choices[k]) {
                let mut n = next.clone().unwrap_or_else(|| f.clone());
                match k {
                    0 => n.site = c,
                    1 => n.tank = c,
                    2 => n.carrier = c,
                    _ => n.vehicle = c,
                }
                next = Some(n);
            }
        }
        ui.label(RichText::new("verdict").color(style::MUTED));
        let r = egui::ComboBox::from_id_salt("verdict")
            .selected_text(f.verdict.map_or("any", |w| w.word()))
            .width(110.0)
            .show_ui(ui, |ui| {
                if ui.selectable_label(f.verdict.is_none(), "any").clicked() {
                    let mut n = f.clone();
                    n.verdict = None;
                    next = Some(n);
                }
                for w in VerdictWord::ALL {
                    if ui
                        .selectable_label(f.verdict == Some(w), w.word())
                        .clicked()
                    {
                        let mut n = f.clone();
                        n.verdict = Some(w);
                        next = Some(n);
                    }
                }
            });
        r.response
            .widget_info(|| egui::WidgetInfo::labeled(egui::Role::ComboBox, true, "verdict"));
        if let Some(t) = day_field(ui, "from", &f.from) {
            let mut n = f.clone();
            n.from = t;
            next = Some(n);
        }
        if let Some(t) = day_field(ui, "to", &f.to) {
            let mut n = f.clone();
            n.to = t;
            next = Some(n);
        }
        if *f != AuditFilter::default() && ui.small_button("Clear").clicked() {
            next = Some(AuditFilter::default());
        }
    });
    if let Some(n) = next {
        out.push(Action::SetAuditFilter(n));
    }
    if let Some(e) = &a.filter_error {
        ui.label(RichText::new(e).color(style::ERROR));
    }
    ui.horizontal(|ui| {
        ui.label(RichText::new("Order by").color(style::MUTED));
        for c in AuditColumn::ALL {
            let on = a.sort.0 == c;
            let arrow = match (on, a.sort.1) {
                (true, true) => " (high first)",
                (true, false) => " (low first)",
                _ => "",
            };
            if ui
                .selectable_label(on, format!("{}{arrow}", c.title()))
                .clicked()
            {
                out.push(Action::SortAudit(c));
            }
        }
    });
}

fn fills_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    let a = &view.audit;
    filter_ui(ui, a, out);
    ui.label(RichText::new(&a.summary).strong());
    if let Some(r) = a.selected.and_then(|i| a.rows.get(i)) {
        egui::Panel::right("balance_detail")
            .exact_size(440.0)
            .resizable(false)
            .show(ui, |ui| {
                egui::ScrollArea::vertical().show(ui, |ui| detail_ui(ui, view, r, out));
            });
    }
    let u = view.units;
    let mut cols = vec![
        Column::text("Ticket", 90.0),
        Column::text("Start (site time)", 150.0),
        Column::text("Tank", 90.0),
        Column::text("Vehicle", 70.0),
        Column::text("Verdict", 90.0),
        Column::num(format!("Billed ({})", u.mass_unit()), 96.0),
        Column::num("Residual (%)", 84.0),
        Column::num("Limit (%)", 70.0),
    ];
    let used: f32 = cols.iter().map(|c| c.width).sum();
    cols.push(Column::text(
        "Site",
        (ui.available_width() - used - 16.0).max(140.0),
    ));
    let clicked = widgets::record_log(
        ui,
        "audit_fills",
        &cols,
        a.visible.len(),
        a.selected.map(|i| i as i64),
        |i| a.visible.iter().position(|&v| v as i64 == i),
        |k| {
            let i = *a.visible.get(k)?;
            let r = a.rows.get(i)?;
            Some(LogRow {
                id: i as i64,
                cells: vec![
                    r.ticket.clone(),
                    r.zone.text(r.start_ms),
                    r.tank.clone(),
                    r.vehicle.clone(),
                    r.verdict.word().to_owned(),
                    fmt::fig(Figure::Mass, u.mass(r.billed_kg)),
                    fmt::fig(Figure::Percent, r.residual_percent),
                    fmt::fig(
                        Figure::Percent,
                        100.0 * r.limit_kg / r.billed_kg.abs().max(1e-9),
                    ),
                    r.site.clone(),
                ],
                colour: verdict_colour(r.verdict),
            })
        },
    );
    if let Some(i) = clicked {
        let i = usize::try_from(i).ok();
        out.push(Action::SelectBalance(if i == a.selected {
            None
        } else {
            i
        }));
    }
}

/// The residual on its own axis: the ±limit band (k·σ or materiality, the larger), the materiality
/// marks, and the residual with its ±k·σ whiskers.
fn residual_chart(ui: &mut Ui, r: &BalanceRow, k: f64, mass: impl Fn(f64) -> f64, unit: &str) {
    let (rect, resp) =
        ui.allocate_exact_size(vec2(ui.available_width(), 70.0), egui::Sense::hover());
    let p = ui.painter_at(rect);
    let span = [
        r.residual_kg.abs() + k * r.sigma_kg,
        r.limit_kg,
        r.excess_limit_kg,
        r.materiality_kg,
    ]
    .into_iter()
    .fold(1.0_f64, f64::max)
        * 1.15;
    let x = |kg: f64| rect.center().x + (kg / span) as f32 * (rect.width() * 0.5 - 8.0);
    let mid = rect.center().y;
    p.rect_filled(
        egui::Rect::from_min_max(
            egui::pos2(x(-r.excess_limit_kg), mid - 14.0),
            egui::pos2(x(r.limit_kg), mid + 14.0),
        ),
        2.0,
        style::BAND,
    );
    p.hline(rect.x_range(), mid, Stroke::new(1.0, style::GRID));
    for m in [-r.materiality_kg, r.materiality_kg] {
        p.vline(
            x(m),
            (mid - 18.0)..=(mid + 18.0),
            Stroke::new(1.5, style::REORDER),
        );
    }
    p.vline(
        x(0.0),
        (mid - 20.0)..=(mid + 20.0),
        Stroke::new(1.0, style::WALL),
    );
    let ink = verdict_colour(r.verdict).unwrap_or(style::ACCENT);
    let (lo, hi) = (
        r.residual_kg - k * r.sigma_kg,
        r.residual_kg + k * r.sigma_kg,
    );
    p.hline(x(lo)..=x(hi), mid, Stroke::new(2.0, ink));
    p.circle_filled(egui::pos2(x(r.residual_kg), mid), 5.0, ink);
    let font = egui::FontId::proportional(11.0);
    p.text(
        egui::pos2(x(0.0), rect.top() + 2.0),
        egui::Align2::CENTER_TOP,
        "0",
        font.clone(),
        style::MUTED,
    );
    p.text(
        egui::pos2(rect.left() + 2.0, rect.bottom() - 2.0),
        egui::Align2::LEFT_BOTTOM,
        format!("more arrived  |  ({unit})  |  less arrived"),
        font,
        style::MUTED,
    );
    let limit = if (r.excess_limit_kg - r.limit_kg).abs() > 1e-9 {
        format!(
            "limit {} {unit} for less arrived, {} {unit} for more",
            fmt::fig(Figure::Mass, mass(r.limit_kg)),
            fmt::fig(Figure::Mass, mass(r.excess_limit_kg)),
        )
    } else {
        format!("limit ±{} {unit}", fmt::fig(Figure::Mass, mass(r.limit_kg)))
    };
    resp.on_hover_text(format!(
        "residual {} {unit} ± {} (k = {k}); {limit} (shaded); materiality ±{} {unit} (purple)",
        fmt::fig(Figure::Mass, mass(r.residual_kg)),
        fmt::fig(Figure::Mass, mass(k * r.sigma_kg)),
        fmt::fig(Figure::Mass, mass(r.materiality_kg)),
    ));
}

/// The uncertainty budget as bars, each part's share of the variance beside it.
fn budget_ui(ui: &mut Ui, r: &BalanceRow, mass: impl Fn(f64) -> f64, unit: &str) {
    let total: f64 = r.budget.iter().map(|b| b.kg * b.kg).sum();
    let biggest = r
        .budget
        .iter()
        .map(|b| b.kg)
        .fold(0.0_f64, f64::max)
        .max(1e-9);
    for b in &r.budget {
        ui.horizontal(|ui| {
            ui.add_sized(
                vec2(150.0, 16.0),
                egui::Label::new(RichText::new(b.label).small()),
            );
            let (rect, _) = ui.allocate_exact_size(vec2(150.0, 12.0), egui::Sense::hover());
            let w = (b.kg / biggest) as f32 * rect.width();
            ui.painter().rect_filled(
                egui::Rect::from_min_size(rect.min, vec2(w.max(1.0), rect.height())),
                2.0,
                style::ACCENT,
            );
            let share = if total > 0.0 {
                100.0 * b.kg * b.kg / total
            } else {
                0.0
            };
            ui.label(
                RichText::new(format!(
                    "{} {unit} ({} %)",
                    fmt::fig(Figure::Mass, mass(b.kg)),
                    fmt::num(share, 0)
                ))
                .small(),
            );
        });
    }
}

fn bracket_line(
    ui: &mut Ui,
    label: &str,
    b: &Option<BracketView>,
    zone: units::Zone,
    view: &ViewState,
) {
    let u = view.units;
    match b {
        Some(b) => {
            ui.label(RichText::new(format!(
                "{label}: {} — {} {} ({} % full); liquid at {} {}, saturation at the tank pressure {} {} ({} {} subcooled)",
                zone.text(b.time_ms),
                fmt::fig(Figure::Mass, u.mass(b.mass_kg)),
                u.mass_unit(),
                fmt::fig(Figure::FillPercent, 100.0 * b.fill),
                fmt::fig(Figure::Kelvin, u.temperature(b.liquid_temperature_k)),
                u.temperature_unit(),
                fmt::fig(Figure::Kelvin, u.temperature(b.saturation_temperature_k)),
                u.temperature_unit(),
                fmt::fig(Figure::Kelvin, u.temperature_difference(b.saturation_temperature_k - b.liquid_temperature_k)),
                u.temperature_difference_unit(),
            )).small());
        }
        None => {
            ui.label(RichText::new(format!("{label}: no usable reading")).small());
        }
    }
}

fn detail_ui(ui: &mut Ui, view: &ViewState, r: &BalanceRow, out: &mut Vec<Action>) {
    let u = view.units;
    let unit = u.mass_unit();
    let mass = |kg: f64| u.mass(kg);
    ui.horizontal(|ui| {
        ui.heading(format!("Ticket {}", r.ticket));
        ui.label(
            RichText::new(r.verdict.word())
                .strong()
                .color(verdict_colour(r.verdict).unwrap_or(style::OK)),
        );
    });
    ui.label(
        RichText::new(format!(
            "{} at {}, {} ({}), {}",
            r.tank,
            r.site,
            r.vehicle,
            r.carrier,
            r.zone.text(r.start_ms)
        ))
        .color(style::MUTED),
    );
    ui.horizontal(|ui| {
        if let Some(id) = r.tank_id
            && ui.button("Open the delivery on its tank page").clicked()
        {
            out.push(Action::OpenFill {
                tank: id,
                ticket: r.ticket.clone(),
            });
        }
        if ui
            .button("Save fill report…")
            .on_hover_text(
                "A self-contained HTML document for the carrier: this balance, its budget, the readings, the vehicle's fills, the method and the records it rests on (as `cryoledger report fill`).",
            )
            .clicked()
        {
            out.push(Action::SaveReport {
                what: ReportRequest::Fill(r.ticket.clone()),
                to: None,
            });
        }
        if ui.small_button("Close").clicked() {
            out.push(Action::SelectBalance(None));
        }
    });
    ui.add_space(6.0);
    ui.label(RichText::new("From billed to residual").strong());
    egui::Grid::new("chain").num_columns(2).show(ui, |ui| {
        let line = |ui: &mut Ui, what: &str, kg: f64| {
            ui.label(what);
            ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
                ui.label(format!("{} {unit}", fmt::fig(Figure::Mass, mass(kg))));
            });
            ui.end_row();
        };
        line(ui, "billed", r.billed_kg);
        line(ui, "gained by the tank, as the gauge reads", r.gained_kg);
        line(ui, "drawn by the customer meanwhile", r.drawn_kg);
        if r.lost_kg > 0.0 {
            line(ui, "lost meanwhile in a found leak or venting", r.lost_kg);
        }
        line(
            ui,
            "arrived: (gained + drawn + lost) / gauge scale",
            r.billed_kg - r.residual_kg,
        );
        line(ui, "residual (billed − arrived)", r.residual_kg);
        line(ui, "standard uncertainty σ", r.sigma_kg);
    });
    ui.label(RichText::new(format!("gauge scale: {}", r.scale)).small());
    if let Some(w) = &r.with_vehicle {
        ui.label(RichText::new(w).small().color(style::ERROR));
    }
    residual_chart(ui, r, 2.0, mass, unit);
    ui.add_space(6.0);
    ui.label(RichText::new("Uncertainty budget (standard uncertainties)").strong());
    budget_ui(ui, r, mass, unit);
    ui.add_space(6.0);
    ui.label(RichText::new("Readings used, with the liquid state assumed").strong());
    bracket_line(ui, "before", &r.before, r.zone, view);
    bracket_line(ui, "after", &r.after, r.zone, view);
    if let Some(tank) = r.tank_id {
        ui.horizontal(|ui| {
            for (label, b) in [
                ("Open the reading before", &r.before),
                ("Open the reading after", &r.after),
            ] {
                if let Some(b) = b
                    && ui.small_button(label).clicked()
                {
                    out.push(Action::OpenReading {
                        tank,
                        time_ms: b.time_ms,
                    });
                }
            }
        });
    }
    ui.add_space(6.0);
    ui.label(RichText::new("In words").strong());
    ui.label(&r.explanation);
}
