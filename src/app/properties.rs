//! The properties panel: every field of the selected object, with units, and the trace
//! settings. The panel edits a copy and turns a difference into one edit; a drag on a
//! number is one undo step.

use egui::DragValue;

use super::Edit;
use super::app::{Command, EditorApp};
use crate::scene::{Emission, Line, Object, ObjectKind, Path, Polarization, Shape, TraceMode, TraceSettings};

/// A labelled number with a unit.
fn num(ui: &mut egui::Ui, label: &str, v: &mut f64, unit: &str, speed: f64) -> egui::Response {
    let l = ui.label(label);
    let r = ui.add(DragValue::new(v).speed(speed).suffix(unit).max_decimals(6)).labelled_by(l.id);
    ui.end_row();
    r
}

fn count(ui: &mut egui::Ui, label: &str, v: &mut u32, max: u32) -> egui::Response {
    let l = ui.label(label);
    let r = ui.add(DragValue::new(v).range(1..=max)).labelled_by(l.id);
    ui.end_row();
    r
}

/// Outlines with more vertices than this show one vertex row, the one picked on the canvas.
const MAX_VERTEX_ROWS: usize = 40;

/// Tracks whether any widget of the panel is being dragged, for one gesture per drag.
struct Changes {
    dragging: bool,
}

impl Changes {
    fn see(&mut self, r: &egui::Response) {
        self.dragging |= r.dragged();
    }
}

fn point(ui: &mut egui::Ui, label: &str, p: &mut (f64, f64), ch: &mut Changes) {
    let l = ui.label(label);
    ui.horizontal(|ui| {
        let r =
            ui.add(DragValue::new(&mut p.0).speed(0.1).prefix("x ").suffix(" mm").max_decimals(6)).labelled_by(l.id);
        ch.see(&r);
        let r =
            ui.add(DragValue::new(&mut p.1).speed(0.1).prefix("y ").suffix(" mm").max_decimals(6)).labelled_by(l.id);
        ch.see(&r);
    });
    ui.end_row();
}

fn path_ui(ui: &mut egui::Ui, path: &mut Path, ch: &mut Changes) {
    for i in 0..path.points.len() {
        let mut p = path.points[i];
        point(ui, &format!("point {}", i + 1), &mut p, ch);
        path.points[i] = p;
    }
    if !path.bulges.is_empty() {
        for i in 0..path.bulges.len() {
            let r = num(ui, &format!("bulge {}", i + 1), &mut path.bulges[i], "", 0.01);
            ch.see(&r);
        }
    }
}

fn emission_ui(ui: &mut egui::Ui, e: &mut Emission, ch: &mut Changes) {
    let r = count(ui, "rays per wavelength", &mut e.rays, crate::scene::MAX_RAYS_PER_SOURCE);
    ch.see(&r);
    let r = num(ui, "power", &mut e.power_w, " W", 0.01);
    ch.see(&r);
    let l = ui.label("polarisation");
    let r = egui::ComboBox::from_id_salt("polarization")
        .selected_text(match e.polarization {
            Polarization::Unpolarized => "unpolarised",
            Polarization::S => "s",
            Polarization::P => "p",
        })
        .show_ui(ui, |ui| {
            ui.selectable_value(&mut e.polarization, Polarization::Unpolarized, "unpolarised");
            ui.selectable_value(&mut e.polarization, Polarization::S, "s (field out of the plane)");
            ui.selectable_value(&mut e.polarization, Polarization::P, "p (field in the plane)");
        });
    let _labelled = r.response.labelled_by(l.id);
    ui.end_row();
    let mut remove = None;
    for (k, line) in e.spectrum.iter_mut().enumerate() {
        let l = ui.label(format!("line {}", k + 1));
        ui.horizontal(|ui| {
            let r =
                ui.add(DragValue::new(&mut line.nm).speed(1.0).range(200.0..=20_000.0).suffix(" nm")).labelled_by(l.id);
            ch.see(&r);
            let r = ui
                .add(DragValue::new(&mut line.weight).speed(0.01).range(0.0..=1e6).prefix("weight "))
                .labelled_by(l.id);
            ch.see(&r);
            if ui.small_button("remove").on_hover_text("Remove this wavelength").clicked() {
                remove = Some(k);
            }
        });
        ui.end_row();
    }
    if let Some(k) = remove {
        if e.spectrum.len() > 1 {
            e.spectrum.remove(k);
        }
    }
    ui.label("");
    if ui.button("Add a wavelength").clicked() && e.spectrum.len() < crate::scene::MAX_SPECTRUM_LINES {
        e.spectrum.push(Line { nm: 650.0, weight: 1.0 });
    }
    ui.end_row();
}

#[allow(clippy::too_many_lines)] // one block per kind and shape
fn shape_ui(ui: &mut egui::Ui, shape: &mut Shape, focus: Option<usize>, ch: &mut Changes) {
    let n =
        |ui: &mut egui::Ui, label: &str, v: &mut f64, unit: &str, speed: f64| num(ui, label, v, unit, speed).dragged();
    match shape {
        Shape::Outline { points, bulges } => {
            ui.label("vertices");
            ui.label(format!("{}", points.len()));
            ui.end_row();
            // Thousands of rows of numbers would cost more than a frame and help nobody:
            // a long outline shows the vertex picked on the canvas (or the first).
            let rows = if points.len() <= MAX_VERTEX_ROWS {
                0..points.len()
            } else {
                let k = focus.unwrap_or(0).min(points.len() - 1);
                ui.label("");
                ui.label(egui::RichText::new("Click a vertex on the canvas to edit it here.").small().weak());
                ui.end_row();
                k..k + 1
            };
            for (i, p) in points.iter_mut().enumerate().skip(rows.start).take(rows.len()) {
                let l = ui.label(format!("vertex {}", i + 1));
                ui.horizontal(|ui| {
                    ch.see(
                        &ui.add(DragValue::new(&mut p.0).speed(0.1).prefix("x ").suffix(" mm").max_decimals(6))
                            .labelled_by(l.id),
                    );
                    ch.see(
                        &ui.add(DragValue::new(&mut p.1).speed(0.1).prefix("y ").suffix(" mm").max_decimals(6))
                            .labelled_by(l.id),
                    );
                    if let Some(b) = bulges.get_mut(i) {
                        ch.see(
                            &ui.add(DragValue::new(b).speed(0.01).prefix("bulge ").max_decimals(6)).labelled_by(l.id),
                        );
                    }
                });
                ui.end_row();
            }
        }
        Shape::Rectangle { position, width, height, rotation_deg } => {
            point(ui, "centre", position, ch);
            ch.dragging |= n(ui, "width", width, " mm", 0.1);
            ch.dragging |= n(ui, "height", height, " mm", 0.1);
            ch.dragging |= n(ui, "rotation", rotation_deg, " °", 1.0);
        }
        Shape::Wedge { position, length, thickness_start, thickness_end, rotation_deg } => {
            point(ui, "bottom-left corner", position, ch);
            ch.dragging |= n(ui, "length", length, " mm", 0.1);
            ch.dragging |= n(ui, "thickness at start", thickness_start, " mm", 0.1);
            ch.dragging |= n(ui, "thickness at end", thickness_end, " mm", 0.1);
            ch.dragging |= n(ui, "rotation", rotation_deg, " °", 1.0);
        }
        Shape::Prism { position, apex_deg, side, rotation_deg } => {
            point(ui, "middle of base", position, ch);
            ch.dragging |= n(ui, "apex angle", apex_deg, " °", 0.5);
            ch.dragging |= n(ui, "side", side, " mm", 0.1);
            ch.dragging |= n(ui, "rotation", rotation_deg, " °", 1.0);
        }
        Shape::Lens { position, diameter, thickness, r1, r2, rotation_deg } => {
            point(ui, "centre", position, ch);
            ch.dragging |= n(ui, "diameter", diameter, " mm", 0.1);
            ch.dragging |= n(ui, "centre thickness", thickness, " mm", 0.1);
            ch.dragging |= n(ui, "first radius r1 (0 flat)", r1, " mm", 0.5);
            ch.dragging |= n(ui, "second radius r2 (0 flat)", r2, " mm", 0.5);
            ch.dragging |= n(ui, "rotation", rotation_deg, " °", 1.0);
        }
        Shape::Ball { position, radius } => {
            point(ui, "centre", position, ch);
            ch.dragging |= n(ui, "radius", radius, " mm", 0.1);
        }
        Shape::Pipe { position, width, length_in, bend_radius, bend_deg, length_out, rotation_deg } => {
            point(ui, "start", position, ch);
            ch.dragging |= n(ui, "width", width, " mm", 0.1);
            ch.dragging |= n(ui, "straight in", length_in, " mm", 0.5);
            ch.dragging |= n(ui, "bend radius", bend_radius, " mm", 0.5);
            ch.dragging |= n(ui, "bend angle", bend_deg, " °", 1.0);
            ch.dragging |= n(ui, "straight out", length_out, " mm", 0.5);
            ch.dragging |= n(ui, "rotation", rotation_deg, " °", 1.0);
        }
        Shape::NotchedPlate {
            position,
            length,
            thickness,
            notches,
            notch_depth,
            notch_angle_deg,
            notch_start,
            notch_end,
            density_ratio,
            rotation_deg,
        } => {
            point(ui, "bottom-left corner", position, ch);
            ch.dragging |= n(ui, "length", length, " mm", 0.5);
            ch.dragging |= n(ui, "thickness", thickness, " mm", 0.05);
            let r = count(ui, "notches", notches, crate::scene::shapes::MAX_NOTCHES);
            ch.see(&r);
            ch.dragging |= n(ui, "notch depth", notch_depth, " mm", 0.01);
            ch.dragging |= n(ui, "notch angle", notch_angle_deg, " °", 1.0);
            ch.dragging |= n(ui, "notches from", notch_start, " mm", 0.5);
            ch.dragging |= n(ui, "notches to", notch_end, " mm", 0.5);
            ch.dragging |= n(ui, "density ratio end/start", density_ratio, "", 0.05);
            ch.dragging |= n(ui, "rotation", rotation_deg, " °", 1.0);
        }
    }
}

/// All material names: the scene's own, then the library's.
pub fn material_names(app: &EditorApp) -> Vec<String> {
    let mut names: Vec<String> = app.doc.scene.materials.iter().map(|m| m.name.clone()).collect();
    for m in crate::optics::library() {
        if !names.contains(&m.name) {
            names.push(m.name);
        }
    }
    names
}

#[allow(clippy::too_many_lines)] // one block per kind
pub fn properties_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    if app.selection.len() != 1 {
        if app.selection.is_empty() {
            ui.label("Nothing selected. Click an object on the canvas.");
        } else {
            ui.label(format!("{} objects selected.", app.selection.len()));
        }
        return;
    }
    let id = app.selection[0];
    let Some(original) = app.doc.scene.object(id).cloned() else { return };
    let mut o: Object = original.clone();
    let names = material_names(app);
    let mut ch = Changes { dragging: false };
    ui.label(egui::RichText::new(o.kind.word()).strong());
    egui::Grid::new(("props", id)).num_columns(2).striped(true).show(ui, |ui| {
        let l = ui.label("name");
        let _name = ui.text_edit_singleline(&mut o.name).labelled_by(l.id);
        ui.end_row();
        match &mut o.kind {
            ObjectKind::Solid(s) => {
                let l = ui.label("material");
                let r = egui::ComboBox::from_id_salt("material").selected_text(&s.material).show_ui(ui, |ui| {
                    for n in &names {
                        ui.selectable_value(&mut s.material, n.clone(), n);
                    }
                });
                let _labelled = r.response.labelled_by(l.id);
                ui.end_row();
                ui.label("shape");
                ui.label(s.shape.word());
                ui.end_row();
                let focus = app.selected_vertex.filter(|(v_id, _)| *v_id == id).map(|(_, v)| v);
                shape_ui(ui, &mut s.shape, focus, &mut ch);
            }
            ObjectKind::Mirror(m) => {
                let r = num(ui, "reflectance", &mut m.reflectance, "", 0.01);
                ch.see(&r);
                ui.label("one-sided");
                ui.checkbox(&mut m.one_sided, "only the left side reflects");
                ui.end_row();
                path_ui(ui, &mut m.path, &mut ch);
            }
            ObjectKind::Absorber(a) => path_ui(ui, &mut a.path, &mut ch),
            ObjectKind::Splitter(s) => {
                let r = num(ui, "reflectance", &mut s.reflectance, "", 0.01);
                ch.see(&r);
                let r = num(ui, "transmittance", &mut s.transmittance, "", 0.01);
                ch.see(&r);
                path_ui(ui, &mut s.path, &mut ch);
            }
            ObjectKind::Detector(d) => {
                let r = count(ui, "position bins", &mut d.bins, crate::scene::MAX_DETECTOR_BINS);
                ch.see(&r);
                let r = count(ui, "angle bins", &mut d.angle_bins, crate::scene::MAX_DETECTOR_BINS);
                ch.see(&r);
                path_ui(ui, &mut d.path, &mut ch);
            }
            ObjectKind::PointSource(p) => {
                point(ui, "position", &mut p.position, &mut ch);
                let r = num(ui, "first direction", &mut p.start_deg, " °", 1.0);
                ch.see(&r);
                let r = num(ui, "last direction", &mut p.end_deg, " °", 1.0);
                ch.see(&r);
                emission_ui(ui, &mut p.emission, &mut ch);
            }
            ObjectKind::BeamSource(b) => {
                point(ui, "centre", &mut b.center, &mut ch);
                let r = num(ui, "width", &mut b.width, " mm", 0.1);
                ch.see(&r);
                let r = num(ui, "direction", &mut b.direction_deg, " °", 1.0);
                ch.see(&r);
                emission_ui(ui, &mut b.emission, &mut ch);
            }
            ObjectKind::LambertianSource(l) => {
                point(ui, "end a", &mut l.a, &mut ch);
                point(ui, "end b", &mut l.b, &mut ch);
                emission_ui(ui, &mut l.emission, &mut ch);
            }
        }
    });
    if let ObjectKind::Solid(s) = &o.kind {
        if !matches!(s.shape, Shape::Outline { .. }) && ui.button("Make free outline").clicked() {
            app.push(Command::MakeFreeOutline);
        }
    }
    if o == original {
        if !ch.dragging {
            app.props_gesture = None;
        }
        return;
    }
    // One edit for the change: the narrowest that says what happened.
    let edit = match (&original.kind, &o.kind) {
        _ if o.name != original.name && o.kind == original.kind => Edit::Rename { id, name: o.name.clone() },
        (ObjectKind::Solid(a), ObjectKind::Solid(b)) if a.shape == b.shape && a.material != b.material => {
            Edit::SetMaterial { id, material: b.material.clone() }
        }
        (ObjectKind::Solid(a), ObjectKind::Solid(b)) if a.material == b.material && o.name == original.name => {
            Edit::SetShape { id, shape: b.shape.clone() }
        }
        _ => Edit::ReplaceObject { id, object: o },
    };
    if ch.dragging {
        let g = match app.props_gesture {
            Some(g) => g,
            None => {
                let g = app.begin_gesture();
                app.props_gesture = Some(g);
                g
            }
        };
        app.push(Command::EditIn(edit, g));
    } else {
        app.props_gesture = None;
        app.push(Command::Edit(edit));
    }
}

/// Trace settings saved with the scene.
pub fn settings_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    let original = app.doc.scene.settings.clone();
    let mut s: TraceSettings = original.clone();
    let mut ch = Changes { dragging: false };
    let sources: Vec<(u64, u32)> = app
        .doc
        .scene
        .objects
        .iter()
        .filter_map(|o| match &o.kind {
            ObjectKind::PointSource(p) => Some((o.id, p.emission.rays)),
            ObjectKind::BeamSource(b) => Some((o.id, b.emission.rays)),
            ObjectKind::LambertianSource(l) => Some((o.id, l.emission.rays)),
            _ => None,
        })
        .collect();
    let mut all_rays = sources.first().map_or(0, |s| s.1);
    let before_rays = all_rays;
    egui::Grid::new("settings").num_columns(2).striped(true).show(ui, |ui| {
        let l = ui.label("mode");
        let r = egui::ComboBox::from_id_salt("mode").selected_text(crate::export::json::mode_word(s.mode)).show_ui(
            ui,
            |ui| {
                ui.selectable_value(&mut s.mode, TraceMode::Principal, "principal path");
                ui.selectable_value(&mut s.mode, TraceMode::Tree, "Fresnel tree");
                ui.selectable_value(&mut s.mode, TraceMode::MonteCarlo, "Monte Carlo");
            },
        );
        let _labelled = r.response.labelled_by(l.id);
        ui.end_row();
        if !sources.is_empty() {
            let r = count(ui, "rays per source and wavelength", &mut all_rays, 1_000_000);
            ch.see(&r);
        }
        let l = ui.label("power threshold");
        ch.see(
            &ui.add(DragValue::new(&mut s.threshold).speed(1e-5).range(0.0..=1.0).max_decimals(8)).labelled_by(l.id),
        );
        ui.end_row();
        let l = ui.label("event limit per path");
        ch.see(&ui.add(DragValue::new(&mut s.max_depth).range(1..=100_000)).labelled_by(l.id));
        ui.end_row();
        let l = ui.label("events stored for drawing");
        ch.see(
            &ui.add(DragValue::new(&mut s.max_stored_events).speed(1000.0).range(1000..=50_000_000)).labelled_by(l.id),
        );
        ui.end_row();
        let l = ui.label("Monte Carlo seed");
        ch.see(&ui.add(DragValue::new(&mut s.seed)).labelled_by(l.id));
        ui.end_row();
        let l = ui.label("margin");
        ch.see(&ui.add(DragValue::new(&mut s.margin).speed(0.5).range(0.0..=1e6).suffix(" mm")).labelled_by(l.id));
        ui.end_row();
    });
    let mut edits = Vec::new();
    if s != original {
        edits.push(Edit::SetSettings(s));
    }
    if all_rays != before_rays {
        for (id, _) in &sources {
            if let Some(o) = app.doc.scene.object(*id) {
                let mut o = o.clone();
                match &mut o.kind {
                    ObjectKind::PointSource(p) => p.emission.rays = all_rays,
                    ObjectKind::BeamSource(b) => b.emission.rays = all_rays,
                    ObjectKind::LambertianSource(l) => l.emission.rays = all_rays,
                    _ => {}
                }
                edits.push(Edit::ReplaceObject { id: *id, object: o });
            }
        }
    }
    if edits.is_empty() {
        return;
    }
    let edit = if edits.len() == 1 { edits.remove(0) } else { Edit::Batch(edits) };
    if ch.dragging {
        let g = match app.props_gesture {
            Some(g) => g,
            None => {
                let g = app.begin_gesture();
                app.props_gesture = Some(g);
                g
            }
        };
        app.push(Command::EditIn(edit, g));
    } else {
        app.push(Command::Edit(edit));
    }
}
