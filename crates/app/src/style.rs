//! The app's calm light palette and spacing: slate text, one steel-blue accent, amber for cautions,
//! brick red for errors, and a cold blue for liquid.

use egui::{Color32, Context, CornerRadius, FontId, Stroke, TextStyle, Visuals};

/// Main text.
pub const INK: Color32 = Color32::from_rgb(0x1f, 0x29, 0x33);
/// Secondary text (units, captions).
pub const MUTED: Color32 = Color32::from_rgb(0x5f, 0x6b, 0x7a);
/// Accent (selection, links, plotted line).
pub const ACCENT: Color32 = Color32::from_rgb(0x2f, 0x5f, 0x86);
/// Uncertainty band fill.
pub const BAND: Color32 = Color32::from_rgba_unmultiplied_const(0x2f, 0x5f, 0x86, 0x48);
/// Plot grid lines.
pub const GRID: Color32 = Color32::from_rgb(0x9a, 0xa5, 0xb1);
/// Liquid in the vessel drawing and the fill bars.
pub const LIQUID: Color32 = Color32::from_rgb(0x7e, 0xb2, 0xd4);
/// Vapour space.
pub const VAPOUR: Color32 = Color32::from_rgb(0xee, 0xf2, 0xf5);
/// Vessel wall.
pub const WALL: Color32 = Color32::from_rgb(0x4a, 0x55, 0x63);
/// Cautions and the safe-fill limit.
pub const CAUTION: Color32 = Color32::from_rgb(0xa8, 0x6a, 0x10);
/// Caution box background.
pub const CAUTION_BG: Color32 = Color32::from_rgb(0xfb, 0xf3, 0xe4);
/// Errors.
pub const ERROR: Color32 = Color32::from_rgb(0xb0, 0x37, 0x37);
/// Good news (saved).
pub const OK: Color32 = Color32::from_rgb(0x2e, 0x7a, 0x57);
/// Reorder level.
pub const REORDER: Color32 = Color32::from_rgb(0x8a, 0x4f, 0x9e);
/// Delivery markers.
pub const DELIVERY: Color32 = Color32::from_rgb(0x3e, 0x8e, 0x7e);
/// Panel background.
pub const PANEL: Color32 = Color32::from_rgb(0xf3, 0xf5, 0xf7);
/// Card background.
pub const CARD: Color32 = Color32::from_rgb(0xff, 0xff, 0xff);

/// The colour beside a verdict's word (never alone): short in red, excess in amber, inconclusive
/// muted, consistent in the usual ink.
pub fn verdict_colour(w: crate::view::VerdictWord) -> Option<Color32> {
    use crate::view::VerdictWord;
    match w {
        VerdictWord::Short => Some(ERROR),
        VerdictWord::Excess => Some(CAUTION),
        VerdictWord::Inconclusive => Some(MUTED),
        VerdictWord::Consistent => None,
    }
}

/// Apply the palette and text sizes to a context.
pub fn apply(ctx: &Context) {
    let mut v = Visuals::light();
    v.override_text_color = Some(INK);
    v.panel_fill = PANEL;
    v.window_fill = CARD;
    v.extreme_bg_color = CARD;
    v.faint_bg_color = Color32::from_rgb(0xea, 0xee, 0xf2);
    v.selection.bg_fill = Color32::from_rgb(0xcf, 0xdf, 0xec);
    v.selection.stroke = Stroke::new(1.0, ACCENT);
    v.hyperlink_color = ACCENT;
    v.error_fg_color = ERROR;
    v.warn_fg_color = CAUTION;
    v.widgets.noninteractive.bg_stroke = Stroke::new(1.0, Color32::from_rgb(0xd5, 0xdb, 0xe1));
    for w in [
        &mut v.widgets.inactive,
        &mut v.widgets.hovered,
        &mut v.widgets.active,
    ] {
        w.corner_radius = CornerRadius::same(3);
    }
    ctx.set_visuals_of(egui::Theme::Light, v);
    ctx.set_theme(egui::Theme::Light);
    ctx.global_style_mut(|s| {
        s.text_styles
            .insert(TextStyle::Heading, FontId::proportional(19.0));
        s.text_styles
            .insert(TextStyle::Body, FontId::proportional(13.5));
        s.text_styles
            .insert(TextStyle::Button, FontId::proportional(13.5));
        s.text_styles
            .insert(TextStyle::Small, FontId::proportional(11.0));
        s.spacing.item_spacing = egui::vec2(8.0, 5.0);
        s.spacing.button_padding = egui::vec2(8.0, 3.0);
    });
}
