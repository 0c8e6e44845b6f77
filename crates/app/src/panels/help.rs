//! Help and cautions: the usual cautions for cryogenic bulk tanks and the method's assumptions in
//! plain words.

use crate::action::Action;
use crate::panels::widgets;
use crate::style;
use crate::view::ViewState;
use egui::{RichText, Ui};

const ASSUMPTIONS: [&str; 8] = [
    "The DP gauge's high side is at the bottom of the inner vessel and its low side at the top; both sensing lines hold gas at about the line temperature set for the tank (15 °C unless set).",
    "DP = g [(liquid density − vapour density) × liquid height + (vapour density − line gas density) × tap distance]. The liquid height follows from the DP; the liquid volume from the vessel's shape (or its strapping table).",
    "The liquid is usually colder than saturation at the tank pressure, and denser: each fill brings cold liquid, and the pressure-building circuit raises the pressure without warming the bulk. Unless a liquid temperature is entered, its state comes from its thermal history: at each fill the remaining and the delivered liquid mix by enthalpy; between fills the heat leak (the tank's NER) warms it until it reaches saturation at the tank pressure. With too few readings to follow, the liquid is taken as saturated at the tank pressure, and the contents shown are then a little low.",
    "Gauge pressures become absolute with the site's barometer: an entered value, else the elevation through the ICAO standard atmosphere, else 101.325 kPa.",
    "Fluid properties come from reference equations of state (Span et al. for nitrogen, Schmidt and Wagner for oxygen, Tegeler et al. for argon, and others), evaluated in SI.",
    "Uncertainties are standard uncertainties (k = 1) propagated as in the GUM from the gauge's accuracy class and the uncertainty of the liquid's tracked state.",
    "Gas equivalents are at 0 °C and 101.325 kPa (Nm³) or 70 °F and 14.696 psia (scf), from the real-gas density.",
    "The safe-fill limit keeps 2 % of the gross volume as vapour when the liquid has warmed to saturation at the relief valve's set pressure (common practice, no source). The vessel maker's limit and local codes govern when lower.",
];

/// Draw the help page.
pub fn help_ui(ui: &mut Ui, view: &ViewState, out: &mut Vec<Action>) {
    egui::ScrollArea::vertical().auto_shrink([false, false]).show(ui, |ui| {
        ui.set_max_width(820.0);
        ui.add_space(4.0);
        ui.horizontal(|ui| {
            ui.heading("Help and cautions");
            if view.tank.is_some() && ui.small_button("Back to the tank page").clicked() {
                out.push(Action::ShowTankPage);
            }
        });
        let mut diagnostics = view.diagnostics;
        if ui
            .checkbox(&mut diagnostics, "Show frame and page-build timings in the status bar")
            .changed()
        {
            out.push(Action::SetDiagnostics(diagnostics));
        }
        ui.label(
            "cryoledger turns DP-gauge readings of cryogenic bulk tanks into true contents, keeps the log of \
             readings and deliveries, and shows each tank's trend. Pick a tank in the Fleet list; enter \
             readings and deliveries on its page; set up tanks in Tank setup.",
        );
        ui.add_space(8.0);
        ui.label(RichText::new("Cautions").strong().size(16.0));
        for c in &view.cautions {
            widgets::caution(ui, c);
            ui.add_space(3.0);
        }
        widgets::caution(
            ui,
            "Defer to local codes, the vessel maker's instructions and licensed practice in every operation on a tank.",
        );
        ui.add_space(8.0);
        ui.label(RichText::new("How the contents are worked out").strong().size(16.0));
        for a in ASSUMPTIONS {
            ui.horizontal_wrapped(|ui| {
                ui.label(RichText::new("•").color(style::ACCENT));
                ui.label(a);
            });
        }
        ui.add_space(8.0);
        ui.label(RichText::new("Marks in the Fleet list").strong().size(16.0));
        ui.label(
            "An amber dot marks a tank that needs attention: its latest reading is more than three days old, its \
             contents are below the reorder level, its latest reading could not be evaluated, or the audit of its \
             last 45 days has an open finding (a fill that came short or in excess of its ticket beyond the \
             uncertainty, a gain no ticket explains, a loss beyond the usual use). Hover the dot for the reason. \
             The bar shows the fill, with the reorder level as a violet tick.",
        );
        ui.add_space(8.0);
        ui.label(RichText::new("Units").strong().size(16.0));
        ui.label(
            "Choose SI or US customary in the top bar; the choice is remembered. Entry fields take any supported \
             unit: type a number and pick the unit, or type both (\"46 kPa\", \"171 psig\", \"9000 lb\").",
        );
    });
}
