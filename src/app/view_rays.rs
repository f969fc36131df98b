//! Drawing traced rays fast: every segment is a thin quad in one egui mesh, rebuilt only when
//! the trace or the view changes. Past a cap a representative subset (every k-th ray) is
//! drawn and the canvas says so. Colours and opacities come from the shared palette, so the
//! canvas and the SVG export look the same.

use std::collections::HashMap;
use std::sync::Arc;

use egui::{Color32, Mesh, Pos2, Rect, Shape, Stroke, Vec2 as EVec2};

use super::app::{Command, EditorApp};
use super::canvas::{View, rgb};
use crate::optics::colour::{palette, wavelength_rgb};
use crate::scene::{Scene, TraceMode};
use crate::trace::{EventKind, NONE, Trace};

/// Most segments drawn.
pub const MAX_SEGMENTS: usize = 150_000;
/// Most marks (TIR, trapped, below threshold) drawn.
const MAX_MARKS: usize = 20_000;
/// Opacity steps, as in the SVG export.
const LEVELS: f64 = 16.0;

/// The ray mesh of the last trace and view.
#[derive(Default)]
pub struct RayCache {
    key: Option<(u64, [i64; 5])>,
    mesh: Arc<Mesh>,
    /// TIR and trapped marks, built into one mesh with the rays (thousands of separate
    /// circles would be tessellated again every frame).
    marks_mesh: Arc<Mesh>,
    /// The few marks drawn as outlines (below threshold).
    marks: Vec<Shape>,
    /// Rays drawn and stored.
    pub n_drawn: usize,
    pub n_stored: usize,
    /// Launch power of each stored ray's root, per trace.
    launch: Vec<f32>,
    launch_of: u64,
}

fn view_key(view: &View) -> [i64; 5] {
    [
        (view.corner_mm.0 * 1e6) as i64,
        (view.corner_mm.1 * 1e6) as i64,
        (view.px_per_mm * 1e6) as i64,
        view.rect.width() as i64,
        view.rect.height() as i64,
    ]
}

/// Launch power of the root of every stored ray.
fn launch_powers(trace: &Trace) -> Vec<f32> {
    let index_of: HashMap<u32, usize> = trace.rays.iter().enumerate().map(|(k, r)| (r.id, k)).collect();
    let mut out = vec![0.0f32; trace.rays.len()];
    for (k, ray) in trace.rays.iter().enumerate() {
        // Parents come before children, so the parent's root power is known already.
        out[k] = match index_of.get(&ray.parent) {
            Some(&p) if ray.parent != NONE && p < k => out[p],
            _ => trace.events_of(ray).first().map_or(0.0, |e| e.after_s + e.after_p),
        };
    }
    out
}

/// A filled disc as a small polygon fan.
fn add_disc(mesh: &mut Mesh, c: Pos2, r: f32, colour: Color32) {
    const N: u32 = 8;
    let i = mesh.vertices.len() as u32;
    mesh.colored_vertex(c, colour);
    for k in 0..N {
        let a = std::f32::consts::TAU * k as f32 / N as f32;
        mesh.colored_vertex(c + EVec2::new(a.cos(), a.sin()) * r, colour);
    }
    for k in 0..N {
        mesh.add_triangle(i, i + 1 + k, i + 1 + (k + 1) % N);
    }
}

fn add_rect(mesh: &mut Mesh, c: Pos2, half: f32, colour: Color32) {
    let i = mesh.vertices.len() as u32;
    for (dx, dy) in [(-half, -half), (half, -half), (half, half), (-half, half)] {
        mesh.colored_vertex(c + EVec2::new(dx, dy), colour);
    }
    mesh.add_triangle(i, i + 1, i + 2);
    mesh.add_triangle(i, i + 2, i + 3);
}

fn add_segment(mesh: &mut Mesh, a: Pos2, b: Pos2, width: f32, colour: Color32) {
    let d = b - a;
    let len = d.length();
    if !(len > 0.05) || !len.is_finite() {
        return;
    }
    let n = EVec2::new(-d.y, d.x) / len * (width / 2.0);
    let i = mesh.vertices.len() as u32;
    mesh.colored_vertex(a + n, colour);
    mesh.colored_vertex(a - n, colour);
    mesh.colored_vertex(b + n, colour);
    mesh.colored_vertex(b - n, colour);
    mesh.add_triangle(i, i + 1, i + 2);
    mesh.add_triangle(i + 1, i + 3, i + 2);
}

impl RayCache {
    /// Draws the rays of `trace` (number `trace_seq`) under `view`.
    pub fn draw(&mut self, painter: &egui::Painter, view: &View, _scene: &Scene, trace: &Trace, trace_seq: u64) {
        let key = (trace_seq, view_key(view));
        if self.key != Some(key) {
            self.rebuild(view, trace, trace_seq);
            self.key = Some(key);
        }
        painter.add(Shape::mesh(Arc::clone(&self.mesh)));
        painter.add(Shape::mesh(Arc::clone(&self.marks_mesh)));
        painter.extend(self.marks.iter().cloned());
    }

    fn rebuild(&mut self, view: &View, trace: &Trace, trace_seq: u64) {
        if self.launch_of != trace_seq || self.launch.len() != trace.rays.len() {
            self.launch = launch_powers(trace);
            self.launch_of = trace_seq;
        }
        let total_segments: usize = trace.rays.iter().map(|r| (r.n_events as usize).saturating_sub(1)).sum();
        let stride = total_segments.div_ceil(MAX_SEGMENTS).max(1);
        let principal = trace.mode == TraceMode::Principal;
        let n_roots = trace.rays.iter().step_by(stride).filter(|r| r.parent == NONE).count();
        let base = palette::ray_base_opacity(n_roots);
        let mut mesh = Mesh::default();
        let mut marks_mesh = Mesh::default();
        let mut marks = Vec::new();
        // Dense TIR marks (a light guide has thousands) would hide the rays: fade them as
        // they grow in number, and draw every k-th one past the cap.
        let n_marks: usize = trace
            .rays
            .iter()
            .step_by(stride)
            .flat_map(|r| trace.events_of(r))
            .filter(|e| matches!(e.kind, EventKind::Tir | EventKind::Limit | EventKind::Dropped))
            .count();
        let mark_stride = n_marks.div_ceil(MAX_MARKS).max(1);
        let tir_alpha = (300.0 / n_marks.max(1) as f32).sqrt().clamp(0.1, 0.8);
        let tir_radius = if n_marks > 2000 { 1.4 } else { 2.0 };
        let mut mark_k = 0usize;
        let clip = view.rect.expand(50.0);
        let mut n_drawn = 0;
        for (k, ray) in trace.rays.iter().enumerate().step_by(stride) {
            let evs = trace.events_of(ray);
            if evs.is_empty() {
                continue;
            }
            n_drawn += 1;
            let [r, g, b] = wavelength_rgb(ray.wavelength_nm);
            let launch = f64::from(self.launch[k]);
            let mut prev = view.screen_from_scene(evs[0].point);
            for i in 0..evs.len() {
                let e = &evs[i];
                let here = if i == 0 { prev } else { view.screen_from_scene(e.point) };
                if i > 0 {
                    let before = &evs[i - 1];
                    let p = f64::from(before.after_s) + f64::from(before.after_p);
                    let rel = if principal || launch <= 0.0 { 1.0 } else { p / launch };
                    let alpha = palette::ray_opacity(palette::ray_level(rel, LEVELS), base);
                    if alpha > 0.0 && (clip.contains(prev) || clip.contains(here) || segment_crosses(clip, prev, here))
                    {
                        let c = Color32::from_rgba_unmultiplied(r, g, b, (alpha * 255.0).round() as u8);
                        add_segment(&mut mesh, prev, here, 1.1, c);
                    }
                }
                let is_mark = matches!(e.kind, EventKind::Tir | EventKind::Limit | EventKind::Dropped);
                if is_mark {
                    mark_k += 1;
                }
                if is_mark && mark_k % mark_stride == 0 && clip.contains(here) {
                    match e.kind {
                        EventKind::Tir => {
                            add_disc(&mut marks_mesh, here, tir_radius, rgb(palette::TIR).gamma_multiply(tir_alpha));
                        }
                        EventKind::Limit => add_rect(&mut marks_mesh, here, 2.5, rgb(palette::TRAPPED)),
                        EventKind::Dropped => {
                            marks.push(Shape::circle_stroke(
                                here,
                                1.8,
                                Stroke::new(0.8, rgb(palette::BELOW_THRESHOLD)),
                            ));
                        }
                        _ => {}
                    }
                }
                prev = here;
            }
        }
        self.mesh = Arc::new(mesh);
        self.marks_mesh = Arc::new(marks_mesh);
        self.marks = marks;
        self.n_drawn = n_drawn;
        self.n_stored = trace.rays.len();
    }
}

fn segment_crosses(r: Rect, a: Pos2, b: Pos2) -> bool {
    Rect::from_two_pos(a, b).intersects(r)
}

/// Overlays on the canvas: trace progress with a Cancel button, the subset note, the legend.
pub fn overlay_ui(app: &mut EditorApp, ui: &mut egui::Ui, rect: Rect) {
    let mut notes = Vec::new();
    if let Some(t) = app.worker.trace() {
        if app.canvas.rays.n_drawn < app.canvas.rays.n_stored {
            notes.push(format!(
                "Showing {} of {} stored rays (a representative subset, to keep drawing fast)",
                app.canvas.rays.n_drawn, app.canvas.rays.n_stored
            ));
        }
        if t.events_truncated {
            notes.push(format!("Only {} events were stored; the budget counts them all", t.events.len()));
        }
        if t.cancelled {
            notes.push("The trace was cancelled: rays and budget are partial".to_owned());
        }
        if app.worker.shown_revision() != Some(app.doc.revision) {
            notes.push("Rays shown are from an earlier edit".to_owned());
        }
    }
    let progress = app.worker.progress();
    egui::Area::new(egui::Id::unique("canvas_overlay"))
        .fixed_pos(rect.left_top() + EVec2::new(8.0, 8.0))
        .order(egui::Order::Middle)
        .show(ui.ctx(), |ui| {
            if let Some((done, total, secs)) = progress {
                if secs > 0.15 {
                    egui::Frame::popup(ui.style()).show(ui, |ui| {
                        ui.horizontal(|ui| {
                            let f = if total > 0 { done as f32 / total as f32 } else { 0.0 };
                            ui.add(
                                egui::ProgressBar::new(f)
                                    .desired_width(160.0)
                                    .text(format!("Tracing {done} / {total} rays")),
                            );
                            if ui.button("Cancel trace").clicked() {
                                app.push(Command::CancelTrace);
                            }
                        });
                    });
                }
            }
            for n in &notes {
                ui.label(egui::RichText::new(n).small().color(Color32::from_gray(80)));
            }
        });
    if app.prefs.show_legend {
        legend_ui(app, ui, rect);
    }
}

fn swatch(ui: &mut egui::Ui, draw: impl FnOnce(&egui::Painter, Rect), text: &str) {
    ui.horizontal(|ui| {
        let (r, _) = ui.allocate_exact_size(EVec2::new(26.0, 12.0), egui::Sense::hover());
        draw(ui.painter(), r);
        ui.label(egui::RichText::new(text).small());
    });
}

#[allow(clippy::too_many_lines)] // one swatch per drawing style, in reading order
fn legend_ui(app: &mut EditorApp, ui: &mut egui::Ui, rect: Rect) {
    let wavelengths = app.worker.trace().map(|t| t.wavelengths.clone()).unwrap_or_default();
    let mut materials: Vec<String> = app
        .doc
        .scene
        .objects
        .iter()
        .filter_map(|o| match &o.kind {
            crate::scene::ObjectKind::Solid(s) => Some(s.material.clone()),
            _ => None,
        })
        .collect();
    materials.sort();
    materials.dedup();
    egui::Area::new(egui::Id::unique("legend"))
        .anchor(egui::Align2::RIGHT_BOTTOM, EVec2::new(-8.0, -8.0))
        .constrain_to(rect)
        .order(egui::Order::Middle)
        .show(ui.ctx(), |ui| {
            egui::Frame::popup(ui.style()).show(ui, |ui| {
                ui.set_max_width(250.0);
                egui::CollapsingHeader::new("Legend").default_open(true).show(ui, |ui| {
                    for nm in &wavelengths {
                        let c = rgb(wavelength_rgb(*nm));
                        swatch(
                            ui,
                            |p, r| {
                                p.line_segment([r.left_center(), r.right_center()], Stroke::new(2.0, c));
                            },
                            &format!("ray at {nm} nm"),
                        );
                    }
                    swatch(
                        ui,
                        |p, r| {
                            for k in 0..4 {
                                let x = r.left() + r.width() * (k as f32 + 0.5) / 4.0;
                                let a = palette::ray_opacity(1.0 - f64::from(k) * 0.25, 0.9);
                                p.vline(
                                    x,
                                    r.y_range(),
                                    Stroke::new(4.0, Color32::from_rgba_unmultiplied(60, 60, 60, (a * 255.0) as u8)),
                                );
                            }
                        },
                        "opacity: power (1 down to 1e-4 of launch)",
                    );
                    swatch(
                        ui,
                        |p, r| {
                            p.circle_filled(r.center(), 3.0, rgb(palette::TIR));
                        },
                        "total internal reflection",
                    );
                    swatch(
                        ui,
                        |p, r| {
                            p.rect_filled(
                                Rect::from_center_size(r.center(), EVec2::splat(6.0)),
                                0.0,
                                rgb(palette::TRAPPED),
                            );
                        },
                        "trapped (event limit reached)",
                    );
                    swatch(
                        ui,
                        |p, r| {
                            p.circle_stroke(r.center(), 2.5, Stroke::new(1.0, rgb(palette::BELOW_THRESHOLD)));
                        },
                        "dropped below power threshold",
                    );
                    for m in &materials {
                        let t = palette::material_tint(m);
                        swatch(
                            ui,
                            |p, r| {
                                p.rect(
                                    r,
                                    0.0,
                                    Color32::from_rgba_unmultiplied(t[0], t[1], t[2], 130),
                                    Stroke::new(1.0, rgb(palette::SOLID_STROKE)),
                                    egui::StrokeKind::Inside,
                                );
                            },
                            &format!("solid of {m}"),
                        );
                    }
                    swatch(
                        ui,
                        |p, r| {
                            p.hline(r.x_range(), r.center().y, Stroke::new(3.0, rgb(palette::MIRROR)));
                        },
                        "mirror",
                    );
                    swatch(
                        ui,
                        |p, r| {
                            p.hline(r.x_range(), r.center().y, Stroke::new(3.5, rgb(palette::ABSORBER)));
                        },
                        "absorber",
                    );
                    swatch(
                        ui,
                        |p, r| {
                            p.extend(Shape::dashed_line(
                                &[r.left_center(), r.right_center()],
                                Stroke::new(2.5, rgb(palette::SPLITTER)),
                                6.0,
                                3.0,
                            ));
                        },
                        "beam splitter",
                    );
                    swatch(
                        ui,
                        |p, r| {
                            p.extend(Shape::dashed_line(
                                &[r.left_center(), r.right_center()],
                                Stroke::new(3.5, rgb(palette::DETECTOR)),
                                2.0,
                                2.0,
                            ));
                        },
                        "detector",
                    );
                    swatch(
                        ui,
                        |p, r| {
                            p.circle(
                                r.center(),
                                4.0,
                                rgb(palette::SOURCE_FILL),
                                Stroke::new(1.5, rgb(palette::SOURCE_STROKE)),
                            );
                        },
                        "source",
                    );
                    if app.prefs.show_normals {
                        swatch(
                            ui,
                            |p, r| {
                                p.arrow(r.left_center(), EVec2::new(20.0, 0.0), Stroke::new(1.0, rgb(palette::NORMAL)));
                            },
                            "outward surface normal",
                        );
                    }
                });
            });
        });
}
