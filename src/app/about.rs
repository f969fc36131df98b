//! The About window with the safety cautions from the README.

/// The cautions shown in the About window (the same words as the README's Safety section).
pub const SAFETY: &str = "Raydraft does geometric optics only: no diffraction, interference, coherence or \
scattering. It is not a tool for laser-safety or eye-exposure calculations: for lasers, defer to the \
applicable laser-safety standards (IEC 60825-1:2014, ANSI Z136.1-2014) and a qualified laser-safety \
officer; for other bright sources, to photobiological-safety standards (IEC 62471:2006) and the exposure \
limits of ICNIRP (2013). It is not a tool for concentrated-sunlight hazards either: lenses, mirrors and \
water-filled shapes that concentrate sunlight can burn skin and start fires, and never look at the sun \
through any optics: it can injure the eye (for solar filters see ISO 12312-2:2015). Prototype and measure \
before relying on a layout, and defer to local codes and licensed practice.";

pub fn about_ui(ctx: &egui::Context, open: &mut bool) {
    egui::Window::new("About Raydraft").open(open).collapsible(false).default_width(480.0).show(ctx, |ui| {
        ui.heading(format!("Raydraft {}", env!("CARGO_PKG_VERSION")));
        ui.label("A 2D ray-trace sketchpad for prisms, light guides, windows and small lens stacks.");
        ui.add_space(6.0);
        ui.label(egui::RichText::new("Safety").strong());
        ui.label(SAFETY);
        ui.add_space(6.0);
        ui.label(egui::RichText::new("What 2D means").strong());
        ui.label(super::budget::MEANING_2D);
    });
}
