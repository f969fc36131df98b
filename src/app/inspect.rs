//! Explaining and measuring on the canvas: the ray inspector, escape cones, the surface a
//! budget row points at, and the distance, angle and optical-path tools.
//!
//! The numbers all come from [`crate::analysis`] (the command line prints the same ones);
//! this module picks what the user clicked, keeps the answers up to date with the scene and
//! the trace, and draws them.

use std::fmt::Write as _;

use egui::{Color32, Pos2, Stroke};

use super::app::EditorApp;
use super::canvas::{PICK_PX, View};
use super::tools::Tool;
use crate::analysis::{self, EscapeCone, EscapedByEdge, OpticalPath, RayExplanation, Surface};
use crate::geom::{Vec2, cross};
use crate::scene::ObjectKind;
use crate::trace::{Compiled, EventKind};

/// Colours of the explanations: dark ink for the explained path, orange for angles, red for
/// total internal reflection, green for escape cones, violet for measurements.
const INK: Color32 = Color32::from_rgb(20, 20, 20);
const ANGLE: Color32 = Color32::from_rgb(217, 95, 2);
const TIR: Color32 = Color32::from_rgb(215, 48, 31);
const CONE: Color32 = Color32::from_rgb(27, 140, 80);
const MEASURE: Color32 = Color32::from_rgb(110, 60, 170);
const HIGHLIGHT: Color32 = Color32::from_rgb(230, 0, 126);
/// Events of an inspected ray annotated on the canvas.
const MAX_ANNOTATED: usize = 12;

/// A ray the user clicked. After each new trace the ray under the same point is found
/// again, so the explanation follows the light while the scene is edited.
#[derive(Clone, Debug)]
pub struct RayPick {
    pub at: Vec2,
    pub tolerance_mm: f64,
    /// The trace (its finish count in the worker) the explanation was made from.
    seq: u64,
    pub explanation: Option<RayExplanation>,
}

/// A point on a solid's boundary the user clicked for its escape cone.
#[derive(Clone, Debug)]
pub struct ConePick {
    pub object_id: u64,
    pub edge: u32,
    pub at: Vec2,
    /// The scene revision and wavelength the cone was worked out for.
    made_for: (u64, f64),
    pub cone: Result<EscapeCone, String>,
}

/// A finished measurement.
#[derive(Clone, Debug)]
pub enum Measurement {
    Distance { a: Vec2, b: Vec2 },
    Angle { corner: Vec2, a: Vec2, b: Vec2 },
    OpticalPath { a: Vec2, b: Vec2, made_for: (u64, f64), result: Result<OpticalPath, String> },
}

/// What the explain-and-measure tools show.
#[derive(Default)]
pub struct AnalysisState {
    pub ray: Option<RayPick>,
    pub cone: Option<ConePick>,
    pub measure: Option<Measurement>,
    /// A surface to mark on the canvas (a row of the escaped-light table).
    pub highlight: Option<Surface>,
    /// The wavelength for escape cones and optical paths; `None` follows the trace's first.
    pub wavelength_nm: Option<f64>,
}

impl AnalysisState {
    /// Forgets everything (a new document).
    pub fn clear(&mut self) {
        *self = Self::default();
    }

    pub fn is_empty(&self) -> bool {
        self.ray.is_none() && self.cone.is_none() && self.measure.is_none() && self.highlight.is_none()
    }
}

impl EditorApp {
    /// The wavelength escape cones and optical paths are worked out at, nm.
    pub fn analysis_wavelength_nm(&self) -> f64 {
        self.analysis
            .wavelength_nm
            .or_else(|| self.worker.trace().and_then(|t| t.wavelengths.first().copied()))
            .unwrap_or(550.0)
    }

    /// Escaped light by surface for the shown trace (worked out on the trace's thread).
    pub fn escaped_by_edge(&self) -> Option<&EscapedByEdge> {
        self.worker.escaped_by_edge().map(AsRef::as_ref)
    }
}

/// Picks the ray nearest `p` in the shown trace and explains it.
pub fn pick_ray(app: &mut EditorApp, p: Vec2, tolerance_mm: f64) -> bool {
    let mut pick = RayPick { at: p, tolerance_mm, seq: u64::MAX, explanation: None };
    refresh_ray(app, &mut pick);
    let found = pick.explanation.is_some();
    app.analysis.ray = found.then_some(pick);
    found
}

fn refresh_ray(app: &EditorApp, pick: &mut RayPick) {
    let Some(t) = app.worker.trace() else { return };
    if pick.seq == app.worker.n_finished {
        return;
    }
    pick.seq = app.worker.n_finished;
    pick.explanation = crate::trace::pick::nearest_ray_segment(t, pick.at, pick.tolerance_mm)
        .and_then(|hit| analysis::explain_ray(&app.doc.scene, t, hit.ray_idx));
}

/// Picks the solid edge nearest `p` for an escape cone; false when no solid edge is near.
pub fn pick_cone(app: &mut EditorApp, p: Vec2, tolerance_mm: f64) -> bool {
    let picks = crate::scene::pick::PickGeometry::new(&app.doc.scene);
    let solid_edge = picks
        .nearest_edge(p, tolerance_mm)
        .filter(|e| app.doc.scene.object(e.object_id).is_some_and(|o| matches!(o.kind, ObjectKind::Solid(_))));
    let Some(e) = solid_edge else {
        app.status = "No solid boundary there: click on a solid's edge".into();
        return false;
    };
    let mut pick = ConePick {
        object_id: e.object_id,
        edge: e.edge_idx as u32,
        at: e.point,
        made_for: (u64::MAX, f64::NAN),
        cone: Err(String::new()),
    };
    refresh_cone(app, &mut pick, true);
    app.analysis.cone = Some(pick);
    true
}

fn refresh_cone(app: &EditorApp, pick: &mut ConePick, now: bool) {
    let want = (app.doc.revision, app.analysis_wavelength_nm());
    // While something is dragged the cone waits for the drop: compiling a large scene every
    // frame would stall the drag.
    if pick.made_for == want || (!now && app.canvas.drag != super::canvas::Drag::None) {
        return;
    }
    pick.made_for = want;
    let scene = &app.doc.scene;
    pick.cone = analysis::escape_cone(scene, pick.object_id, pick.edge, pick.at, want.1).map_err(|e| e.to_string());
    if let Ok(c) = &pick.cone {
        pick.at = c.point;
    }
}

fn optical_path_now(app: &EditorApp, a: Vec2, b: Vec2) -> Measurement {
    let made_for = (app.doc.revision, app.analysis_wavelength_nm());
    let compiled = Compiled::new(&app.doc.scene);
    let result = analysis::optical_path(&app.doc.scene, &compiled, a, b, made_for.1);
    Measurement::OpticalPath { a, b, made_for, result }
}

/// Brings the explanations up to date with the scene and the shown trace (once a frame).
pub fn refresh(app: &mut EditorApp) {
    if let Some(mut pick) = app.analysis.ray.take() {
        refresh_ray(app, &mut pick);
        app.analysis.ray = Some(pick);
    }
    if let Some(mut pick) = app.analysis.cone.take() {
        refresh_cone(app, &mut pick, false);
        // The solid or its edge went away: drop the cone.
        let gone = pick.cone.is_err() && app.doc.scene.object(pick.object_id).is_none();
        if !gone {
            app.analysis.cone = Some(pick);
        }
    }
    if let Some(Measurement::OpticalPath { a, b, made_for, .. }) = &app.analysis.measure {
        let want = (app.doc.revision, app.analysis_wavelength_nm());
        if *made_for != want && app.canvas.drag == super::canvas::Drag::None {
            app.analysis.measure = Some(optical_path_now(app, *a, *b));
        }
    }
}

/// A measuring click lands on a vertex within reach, else on the grid (when snapping).
fn measure_point(app: &EditorApp, p: Vec2) -> Vec2 {
    let tol = PICK_PX * app.view.mm_per_px();
    crate::scene::pick::nearest_vertex(&app.doc.scene, p, tol).map_or_else(|| app.snap(p), |v| v.point)
}

/// A click of one of the explain-and-measure tools at `p` (scene mm).
pub fn tool_interact(app: &mut EditorApp, p: Vec2, clicked: bool) {
    if !clicked {
        return;
    }
    let tol = PICK_PX * app.view.mm_per_px();
    let tool = app.tool;
    match tool {
        Tool::InspectRay if !pick_ray(app, p, tol) => {
            app.status =
                if app.worker.trace().is_some() { "No ray there: click on a drawn ray" } else { "No trace yet" }.into();
        }
        Tool::EscapeCone => {
            pick_cone(app, p, tol);
        }
        Tool::MeasureDistance | Tool::OpticalPath | Tool::MeasureAngle => {
            let q = measure_point(app, p);
            app.tool_state.points.push(q);
            let pts = &app.tool_state.points;
            let done = match (app.tool, pts.as_slice()) {
                (Tool::MeasureDistance, &[a, b]) => Some(Measurement::Distance { a, b }),
                (Tool::OpticalPath, &[a, b]) => Some(optical_path_now(app, a, b)),
                (Tool::MeasureAngle, &[corner, a, b]) => Some(Measurement::Angle { corner, a, b }),
                _ => None,
            };
            if let Some(m) = done {
                app.status = measurement_text(&m);
                app.analysis.measure = Some(m);
                app.tool_state.points.clear();
            }
        }
        _ => {}
    }
}

/// One line saying what a measurement found.
pub fn measurement_text(m: &Measurement) -> String {
    match m {
        Measurement::Distance { a, b } => {
            let d = *b - *a;
            format!(
                "distance {:.4} mm (Δx {:.4}, Δy {:.4}, direction {:.2}°)",
                d.norm(),
                d.x,
                d.y,
                d.y.atan2(d.x).to_degrees()
            )
        }
        Measurement::Angle { corner, a, b } => format!("angle {:.3}°", analysis::angle_deg(*corner, *a, *b)),
        Measurement::OpticalPath { result: Ok(o), .. } => format!(
            "optical path {:.4} mm over {:.4} mm at {} nm ({} media)",
            o.optical_mm,
            o.length_mm,
            o.wavelength_nm,
            o.pieces.len()
        ),
        Measurement::OpticalPath { result: Err(e), .. } => format!("optical path: {e}"),
    }
}

// ---------------------------------------------------------------------------------------
// Drawing.

fn text(painter: &egui::Painter, at: Pos2, s: &str, colour: Color32) {
    let font = egui::FontId::proportional(12.0);
    let galley = painter.layout_no_wrap(s.to_owned(), font, colour);
    let rect = egui::Rect::from_min_size(at, galley.size()).expand(2.0);
    painter.rect_filled(rect, 2.0, Color32::from_rgba_unmultiplied(255, 255, 255, 210));
    painter.galley(at, galley, colour);
}

/// Screen points of an arc about `c` from direction `u` to direction `v` (scene units),
/// radius `r` in screen points, turning the short way.
fn arc_points(view: &View, c: Vec2, u: Vec2, v: Vec2, r: f64) -> Vec<Pos2> {
    let a0 = u.y.atan2(u.x);
    let sweep = cross(u, v).atan2(u.dot(&v));
    let n = ((sweep.abs().to_degrees() / 4.0).ceil() as usize).max(2);
    let r_mm = r * view.mm_per_px();
    (0..=n)
        .map(|k| {
            let a = a0 + sweep * k as f64 / n as f64;
            view.screen_from_scene(c + Vec2::new(a.cos(), a.sin()) * r_mm)
        })
        .collect()
}

/// The explained path, and at each event on a surface its normal, the angle of incidence as
/// an arc with its value, and at a TIR the critical angle.
fn ray_ui(painter: &egui::Painter, view: &View, scene: &crate::scene::Scene, x: &RayExplanation) {
    let pts: Vec<Pos2> = x.steps.iter().map(|s| view.screen_from_scene(s.point)).collect();
    painter.add(egui::Shape::line(pts, Stroke::new(2.5, INK)));
    let mm = view.mm_per_px();
    for (k, w) in x.steps.windows(2).enumerate() {
        let (prev, s) = (&w[0], &w[1]);
        let p = view.screen_from_scene(s.point);
        painter.circle_filled(p, 3.0, INK);
        let (Some(surface), Some(inc)) = (&s.surface, s.incidence_deg) else { continue };
        // A long trapped path would bury the drawing in labels: the first ones tell the
        // story, the table has them all.
        if k >= MAX_ANNOTATED {
            continue;
        }
        let Some(edge) = analysis::surface_edge(scene, surface) else { continue };
        let Some(d) = (s.point - prev.point).try_normalize(1e-300) else { continue };
        let n = edge.normal_at(edge.param_of(s.point));
        let n_in = if n.dot(&d) < 0.0 { n } else { -n };
        let back = -d;
        let half = 36.0 * mm;
        crate::app::canvas::dashed(
            painter,
            &[view.screen_from_scene(s.point - n_in * half), view.screen_from_scene(s.point + n_in * half)],
            Color32::from_gray(70),
            1.0,
            4.0,
            3.0,
        );
        let mut label = format!("{}: {inc:.1}°", k + 1);
        if let Some(r) = s.refraction_deg.filter(|_| s.kind == EventKind::Refract) {
            let _ = write!(label, " → {r:.1}°");
        }
        let mid = (n_in + back).try_normalize(1e-12).unwrap_or(n_in);
        if inc >= 0.05 {
            painter.add(egui::Shape::line(arc_points(view, s.point, n_in, back, 22.0), Stroke::new(1.5, ANGLE)));
        }
        text(painter, view.screen_from_scene(s.point + mid * (28.0 * mm)), &label, ANGLE);
        if s.kind == EventKind::Tir {
            if let Some(c) = s.critical_deg {
                let side = Vec2::new(-n_in.y, n_in.x);
                let side = if side.dot(&back) < 0.0 { side } else { -side };
                text(
                    painter,
                    view.screen_from_scene(s.point + side * (30.0 * mm)),
                    &format!("TIR: {inc:.1}° > θc {c:.1}°"),
                    TIR,
                );
            }
        }
    }
}

/// The escape cone: directions inside the solid that reach the point within the critical
/// angle of the normal leave; the rest are totally internally reflected.
fn cone_ui(painter: &egui::Painter, view: &View, pick: &ConePick) {
    let p = view.screen_from_scene(pick.at);
    let Ok(c) = &pick.cone else {
        painter.circle_stroke(p, 5.0, Stroke::new(1.5, TIR));
        return;
    };
    let mm = view.mm_per_px();
    let len = 70.0 * mm;
    let inward = -c.outward_normal;
    let half = c.half_angle_deg.unwrap_or(90.0).to_radians();
    let rot = |v: Vec2, a: f64| Vec2::new(v.x * a.cos() - v.y * a.sin(), v.x * a.sin() + v.y * a.cos());
    // The wedge inside, from the point back along the arriving directions.
    let n = 24;
    let mut fan = vec![p];
    for k in 0..=n {
        let a = -half + 2.0 * half * f64::from(k) / f64::from(n);
        fan.push(view.screen_from_scene(pick.at + rot(inward, a) * len));
    }
    let fill = Color32::from_rgba_unmultiplied(27, 140, 80, 50);
    painter.add(egui::Shape::convex_polygon(fan.clone(), fill, Stroke::NONE));
    painter.add(egui::Shape::line(fan, Stroke::new(1.5, CONE)));
    // The normal, outward.
    crate::app::canvas::dashed(
        painter,
        &[
            view.screen_from_scene(pick.at - c.outward_normal * len),
            view.screen_from_scene(pick.at + c.outward_normal * len * 0.6),
        ],
        CONE,
        1.0,
        4.0,
        3.0,
    );
    painter.circle_filled(p, 3.5, CONE);
    let label = match c.half_angle_deg {
        Some(h) => format!("escape cone ±{h:.1}° (n {:.4} → {:.4})", c.n_inside, c.n_outside),
        None => format!("all directions leave (n {:.4} ≤ {:.4})", c.n_inside, c.n_outside),
    };
    text(painter, view.screen_from_scene(pick.at + inward * (len + 6.0 * mm)), &label, CONE);
}

fn measure_ui(painter: &egui::Painter, view: &View, m: &Measurement) {
    let s = Stroke::new(1.5, MEASURE);
    let mm = view.mm_per_px();
    match m {
        Measurement::Distance { a, b } | Measurement::OpticalPath { a, b, .. } => {
            let (pa, pb) = (view.screen_from_scene(*a), view.screen_from_scene(*b));
            painter.line_segment([pa, pb], s);
            painter.circle_filled(pa, 3.0, MEASURE);
            painter.circle_filled(pb, 3.0, MEASURE);
            let mid = view.screen_from_scene((*a + *b) * 0.5);
            text(painter, mid + egui::vec2(6.0, 6.0), &measurement_text(m), MEASURE);
        }
        Measurement::Angle { corner, a, b } => {
            let pc = view.screen_from_scene(*corner);
            painter.line_segment([pc, view.screen_from_scene(*a)], s);
            painter.line_segment([pc, view.screen_from_scene(*b)], s);
            if let (Some(u), Some(v)) = ((*a - *corner).try_normalize(1e-300), (*b - *corner).try_normalize(1e-300)) {
                painter.add(egui::Shape::line(arc_points(view, *corner, u, v, 26.0), s));
                let mid = (u + v).try_normalize(1e-12).unwrap_or(u);
                text(painter, view.screen_from_scene(*corner + mid * (32.0 * mm)), &measurement_text(m), MEASURE);
            }
        }
    }
}

/// Everything the explain-and-measure tools draw over the scene.
pub fn overlay_ui(app: &EditorApp, painter: &egui::Painter) {
    let view = &app.view;
    if let Some(s) = &app.analysis.highlight {
        if let Some(e) = analysis::surface_edge(&app.doc.scene, s) {
            let pts: Vec<Pos2> = e.polyline(0.05).iter().map(|p| view.screen_from_scene(*p)).collect();
            painter.add(egui::Shape::line(pts, Stroke::new(5.0, HIGHLIGHT.gamma_multiply(0.8))));
        }
    }
    if let Some(x) = app.analysis.ray.as_ref().and_then(|r| r.explanation.as_ref()) {
        ray_ui(painter, view, &app.doc.scene, x);
    }
    if let Some(c) = &app.analysis.cone {
        cone_ui(painter, view, c);
    }
    if let Some(m) = &app.analysis.measure {
        measure_ui(painter, view, m);
    }
    // Clicks of a measurement in progress, with a rubber line to the pointer.
    if matches!(app.tool, Tool::MeasureDistance | Tool::MeasureAngle | Tool::OpticalPath) && app.tool_state.is_drawing()
    {
        let mut pts: Vec<Pos2> = app.tool_state.points.iter().map(|p| view.screen_from_scene(*p)).collect();
        if let Some((x, y)) = app.canvas.cursor_mm {
            pts.push(view.screen_from_scene(app.snap(Vec2::new(x, y))));
        }
        painter.add(egui::Shape::line(pts, Stroke::new(1.0, MEASURE)));
    }
}

// ---------------------------------------------------------------------------------------
// Panels.

/// The ray inspector's window: every event of the picked ray as a table.
pub fn inspector_window_ui(app: &mut EditorApp, ctx: &egui::Context) {
    let Some(pick) = &app.analysis.ray else { return };
    let mut open = true;
    let explanation = pick.explanation.clone();
    egui::Window::new("Ray inspector")
        .open(&mut open)
        .default_pos(app.view.rect.left_bottom() + egui::vec2(10.0, -290.0))
        .default_size([720.0, 240.0])
        .max_height(app.view.rect.height().max(200.0) * 0.6)
        .resizable(true)
        .show(ctx, |ui| {
            let Some(x) = explanation else {
                ui.label("The ray picked here is not in the latest trace. Click a ray again with Inspect ray.");
                return;
            };
            ray_table_ui(ui, &x);
        });
    if !open {
        app.analysis.ray = None;
    }
}

fn ray_table_ui(ui: &mut egui::Ui, x: &RayExplanation) {
    let source = x.source.as_ref().map_or_else(|| "an unknown source".to_owned(), |(id, n)| format!("{n} (id {id})"));
    ui.horizontal(|ui| {
        ui.label(format!("Ray {} at {} nm from {source}", x.ray_id, x.wavelength_nm));
        if ui.button("Copy as text").clicked() {
            ui.ctx().copy_text(x.to_string());
        }
    });
    if !x.complete {
        ui.label(
            egui::RichText::new(
                "Part of this path was not stored (event limit or a dropped branch); shown as far as it was.",
            )
            .color(TIR),
        );
    }
    egui::ScrollArea::both().max_height(200.0).show(ui, |ui| {
        egui::Grid::new("ray_table").striped(true).num_columns(12).show(ui, |ui| {
            for h in [
                "#",
                "event",
                "surface",
                "n₁ → n₂",
                "incidence",
                "out",
                "Rs",
                "Rp",
                "Ts",
                "Tp",
                "power in → out (W)",
                "OPL (mm)",
            ] {
                ui.strong(h);
            }
            ui.end_row();
            let angle = |a: Option<f64>| a.map_or_else(|| "–".to_owned(), |v| format!("{v:.2}°"));
            let coef = |v: Option<f64>| v.map_or_else(|| "–".to_owned(), |v| format!("{v:.4}"));
            for (k, s) in x.steps.iter().enumerate() {
                ui.monospace(k.to_string());
                let kind = ui.label(s.kind.word());
                if matches!(s.kind, EventKind::Tir | EventKind::Refract) || s.fresnel.is_some() {
                    kind.on_hover_text(s.statement());
                }
                ui.label(
                    s.surface.as_ref().map_or_else(|| "–".to_owned(), |f| format!("{} edge {}", f.object, f.edge)),
                );
                ui.monospace(format!("{:.4} → {:.4}", s.n1, s.n2));
                ui.monospace(angle(s.incidence_deg));
                let out = if s.kind == EventKind::Tir {
                    egui::RichText::new(format!("TIR (θc {})", angle(s.critical_deg))).color(TIR)
                } else {
                    egui::RichText::new(angle(s.refraction_deg)).monospace()
                };
                ui.label(out);
                let f = s.fresnel;
                ui.monospace(coef(f.map(|f| f.rs)));
                ui.monospace(coef(f.map(|f| f.rp)));
                ui.monospace(coef(f.map(|f| f.ts)));
                ui.monospace(coef(f.map(|f| f.tp)));
                ui.monospace(format!("{:.4e} → {:.4e}", s.power_before_w, s.power_after_w));
                ui.monospace(format!("{:.4}", s.optical_path_mm));
                ui.end_row();
            }
        });
    });
    // The first total internal reflection in words; the table holds the rest.
    let tirs: Vec<usize> =
        x.steps.iter().enumerate().filter(|(_, s)| s.kind == EventKind::Tir).map(|(k, _)| k).collect();
    if let Some(&first) = tirs.first() {
        let more = match tirs.len() {
            1 => String::new(),
            2 => " (and once more)".to_owned(),
            n => format!(" (and {} times more)", n - 1),
        };
        ui.label(egui::RichText::new(format!("Event {first}: {}{more}", x.steps[first].statement())).color(TIR));
    }
}

/// The side panel's explain-and-measure section: the wavelength, the escape cone's numbers
/// and the last measurement.
pub fn analysis_panel_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    ui.horizontal(|ui| {
        let l = ui.label("Wavelength");
        let mut nm = app.analysis_wavelength_nm();
        let r =
            ui.add(egui::DragValue::new(&mut nm).range(200.0..=20_000.0).suffix(" nm").speed(1.0)).labelled_by(l.id);
        if r.changed() {
            app.analysis.wavelength_nm = Some(nm);
        }
        if app.analysis.wavelength_nm.is_some() && ui.button("Follow the trace").clicked() {
            app.analysis.wavelength_nm = None;
        }
    });
    ui.label(egui::RichText::new("Used by escape cones and optical paths.").small().weak());
    match &app.analysis.cone {
        Some(pick) => {
            ui.separator();
            let name = app.doc.scene.object(pick.object_id).map_or("?", |o| o.name.as_str());
            ui.label(egui::RichText::new(format!("Escape cone on {name}, edge {}", pick.edge)).strong());
            match &pick.cone {
                Ok(c) => {
                    egui::Grid::new("cone_grid").num_columns(2).show(ui, |ui| {
                        ui.label("Point");
                        ui.monospace(format!("({:.4}, {:.4}) mm", c.point.x, c.point.y));
                        ui.end_row();
                        ui.label("n inside → outside");
                        ui.monospace(format!("{:.5} → {:.5} ({})", c.n_inside, c.n_outside, c.outside));
                        ui.end_row();
                        ui.label("Half-angle (critical angle)");
                        ui.monospace(
                            c.half_angle_deg.map_or_else(|| "none: all leave".to_owned(), |h| format!("{h:.3}°")),
                        );
                        ui.end_row();
                        ui.label("Share of an even in-plane fan");
                        ui.monospace(format!("{:.4}", c.fraction_2d()));
                        ui.end_row();
                    });
                    ui.label(
                        egui::RichText::new(
                            "Light inside arriving closer to the normal than the half-angle can leave here (partly \
                             reflected by Fresnel); the rest is totally internally reflected. In a real part this \
                             holds for rays in the drawing plane only.",
                        )
                        .small()
                        .weak(),
                    );
                }
                Err(e) => {
                    ui.label(egui::RichText::new(e).color(TIR));
                }
            }
        }
        None => {
            ui.label(egui::RichText::new("Escape cone: pick the Escape cone tool and click a solid's edge.").small());
        }
    }
    if let Some(m) = &app.analysis.measure {
        ui.separator();
        ui.label(egui::RichText::new("Measurement").strong());
        ui.label(measurement_text(m));
        if let Measurement::OpticalPath { result: Ok(o), .. } = m {
            egui::Grid::new("opl_grid").num_columns(3).striped(true).show(ui, |ui| {
                ui.strong("medium");
                ui.strong("n");
                ui.strong("length (mm)");
                ui.end_row();
                for p in &o.pieces {
                    ui.label(&p.material);
                    ui.monospace(format!("{:.5}", p.n));
                    ui.monospace(format!("{:.4}", p.length_mm));
                    ui.end_row();
                }
            });
        }
    }
    if !app.analysis.is_empty() && ui.button("Clear marks").clicked() {
        app.analysis.clear();
    }
}
