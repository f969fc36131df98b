//! The drawing sheet: the millimetre-to-screen transform, the grid, the scene, the rays, the
//! handles of the selection and what the pointer does on it.

use egui::{Color32, Mesh, Pos2, Rect, Sense, Shape, Stroke, Vec2 as EVec2, pos2};

use super::app::{Command, EditorApp};
use super::pick::{self, ObjectGeom};
use super::tools::{self, Tool};
use super::{Edit, view_rays};
use crate::geom::{Aabb, Vec2};
use crate::optics::colour::palette;
use crate::scene::{ObjectKind, Scene, Shape as SceneShape};

/// Screen points per millimetre limits.
const MIN_SCALE: f64 = 1e-3;
const MAX_SCALE: f64 = 1e5;
/// Pick tolerance in screen points.
pub const PICK_PX: f64 = 7.0;

/// The canvas transform: scene millimetres (Y up) to screen points (Y down). It is anchored
/// at the canvas's top-left corner, so resizing a side panel does not move the drawing.
#[derive(Clone, Debug, PartialEq)]
pub struct View {
    /// The scene point at the top-left corner of the canvas.
    pub corner_mm: (f64, f64),
    /// Screen points per millimetre.
    pub px_per_mm: f64,
    /// The canvas rectangle of the last frame.
    pub rect: Rect,
    /// Fit the scene into the canvas at the next frame.
    pub fit_pending: bool,
}

impl Default for View {
    fn default() -> Self {
        Self {
            corner_mm: (-80.0, 60.0),
            px_per_mm: 5.0,
            rect: Rect::from_min_size(Pos2::ZERO, EVec2::new(800.0, 600.0)),
            fit_pending: true,
        }
    }
}

impl View {
    pub fn screen_from_scene(&self, p: Vec2) -> Pos2 {
        let c = self.rect.min;
        pos2(
            (f64::from(c.x) + (p.x - self.corner_mm.0) * self.px_per_mm) as f32,
            (f64::from(c.y) - (p.y - self.corner_mm.1) * self.px_per_mm) as f32,
        )
    }

    pub fn scene_from_screen(&self, q: Pos2) -> Vec2 {
        let c = self.rect.min;
        Vec2::new(
            self.corner_mm.0 + f64::from(q.x - c.x) / self.px_per_mm,
            self.corner_mm.1 - f64::from(q.y - c.y) / self.px_per_mm,
        )
    }

    /// The scene point at the middle of the canvas.
    pub fn center_mm(&self) -> Vec2 {
        self.scene_from_screen(self.rect.center())
    }

    /// Zooms by `factor` keeping the scene point under `about` where it is.
    pub fn zoom_about(&mut self, about: Pos2, factor: f64) {
        let before = self.scene_from_screen(about);
        self.px_per_mm = (self.px_per_mm * factor).clamp(MIN_SCALE, MAX_SCALE);
        let after = self.scene_from_screen(about);
        self.corner_mm.0 += before.x - after.x;
        self.corner_mm.1 += before.y - after.y;
    }

    /// Moves the view by a screen offset.
    pub fn pan(&mut self, delta: EVec2) {
        self.corner_mm.0 -= f64::from(delta.x) / self.px_per_mm;
        self.corner_mm.1 += f64::from(delta.y) / self.px_per_mm;
    }

    /// Shows `bounds` with a margin.
    pub fn fit(&mut self, bounds: &Aabb) {
        if bounds.is_empty() {
            return;
        }
        let size = bounds.size();
        let w = f64::from(self.rect.width()).max(50.0);
        let h = f64::from(self.rect.height()).max(50.0);
        let s = (w / size.x.max(1e-3)).min(h / size.y.max(1e-3)) * 0.85;
        self.px_per_mm = s.clamp(MIN_SCALE, MAX_SCALE);
        let c = bounds.center();
        self.corner_mm = (c.x - w / 2.0 / self.px_per_mm, c.y + h / 2.0 / self.px_per_mm);
    }

    /// Millimetres per screen point.
    pub fn mm_per_px(&self) -> f64 {
        1.0 / self.px_per_mm
    }
}

/// What the pointer is doing on the canvas.
#[derive(Clone, Debug, Default, PartialEq)]
pub enum Drag {
    #[default]
    None,
    /// Moving the selected objects; `applied` is the offset already applied.
    Move { gesture: u64, start: Vec2, applied: (f64, f64) },
    /// Dragging a handle.
    Handle { gesture: u64, handle: Handle },
    /// Rotating the selection about `pivot`; `applied_deg` already applied.
    Rotate { gesture: u64, pivot: Vec2, start_deg: f64, applied_deg: f64 },
    /// Rubber-band selection from `start`.
    Box { start: Vec2, add: bool },
    /// Drawing a tool's shape from `start`.
    Draw { start: Vec2 },
}

/// A draggable point on a selected object.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Handle {
    pub id: u64,
    pub kind: HandleKind,
    pub at: Vec2,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum HandleKind {
    /// A vertex of a free outline, a path, or a source's position (`MoveVertex`).
    Vertex(usize),
    /// The middle of an edge: dragging it bends the edge into an arc.
    EdgeMiddle(usize),
    /// A point source's first (`true`) or last direction.
    SourceAngle(bool),
    /// A beam's direction.
    BeamDirection,
    /// A beam's width.
    BeamWidth,
    /// A ball's radius; a rectangle's corner.
    Size,
}

/// Canvas state kept between frames.
#[derive(Default)]
pub struct CanvasState {
    pub drag: Drag,
    /// The pointer in scene millimetres, when over the canvas.
    pub cursor_mm: Option<(f64, f64)>,
    /// Geometry cached per scene revision.
    geometry: Option<(u64, Vec<ObjectGeom>, Vec<SolidFill>)>,
    pub rays: view_rays::RayCache,
    space_down: bool,
    /// Where the primary button went down on the canvas, for click detection.
    press_at: Option<Pos2>,
    /// Some solid fills are from before the drag in progress.
    fills_stale: bool,
}

impl CanvasState {
    /// The cached scene geometry (call [`EditorApp::geometry`] first in a frame).
    pub fn geoms(&self) -> &[ObjectGeom] {
        self.geometry.as_ref().map_or(&[], |(_, g, _)| g.as_slice())
    }
}

/// A solid's fill triangulated in scene millimetres.
struct SolidFill {
    id: u64,
    points: Vec<Vec2>,
    triangles: Vec<[u32; 3]>,
    tint: [u8; 3],
}

pub fn rgb(c: [u8; 3]) -> Color32 {
    Color32::from_rgb(c[0], c[1], c[2])
}

fn rgba(c: [u8; 3], alpha: f64) -> Color32 {
    Color32::from_rgba_unmultiplied(c[0], c[1], c[2], (alpha.clamp(0.0, 1.0) * 255.0) as u8)
}

/// Bounds of everything in the scene.
pub fn scene_bounds(geoms: &[ObjectGeom]) -> Aabb {
    geoms.iter().filter(|g| !g.bounds.is_empty()).fold(Aabb::EMPTY, |b, g| b.union(&g.bounds))
}

impl EditorApp {
    /// Brings the cached scene geometry up to the current revision.
    pub(crate) fn geometry(&mut self) {
        let rev = self.doc.revision;
        if self.canvas.geometry.as_ref().is_none_or(|(r, _, _)| *r != rev) {
            let geoms = pick::scene_geometry(&self.doc.scene);
            // Filling an outline of many vertices costs milliseconds (ear clipping is
            // quadratic); while something is dragged, large solids keep their last fill and
            // are filled again when the drag ends.
            let keep = if self.canvas.drag == Drag::None {
                Vec::new()
            } else {
                self.canvas.geometry.take().map(|(_, _, f)| f).unwrap_or_default()
            };
            let fills = solid_fills(&self.doc.scene, &geoms, keep);
            self.canvas.geometry = Some((rev, geoms, fills));
            self.canvas.fills_stale = self.canvas.drag != Drag::None;
        } else if self.canvas.fills_stale && self.canvas.drag == Drag::None {
            if let Some((_, geoms, fills)) = &mut self.canvas.geometry {
                *fills = solid_fills(&self.doc.scene, geoms, Vec::new());
            }
            self.canvas.fills_stale = false;
        }
    }

    /// Snaps a scene point to the grid when snapping is on.
    pub fn snap(&self, p: Vec2) -> Vec2 {
        if self.prefs.snap && self.prefs.grid_mm > 0.0 {
            let g = self.prefs.grid_mm;
            Vec2::new((p.x / g).round() * g, (p.y / g).round() * g)
        } else {
            p
        }
    }
}

/// Outlines with more points than this keep their old fill during a drag.
const REFILL_LATER: usize = 400;

fn solid_fills(scene: &Scene, geoms: &[ObjectGeom], mut keep: Vec<SolidFill>) -> Vec<SolidFill> {
    geoms
        .iter()
        .zip(&scene.objects)
        .filter_map(|(g, o)| {
            let ObjectKind::Solid(s) = &o.kind else { return None };
            let line = g.lines.first()?;
            if line.len() > REFILL_LATER {
                if let Some(k) = keep.iter().position(|f| f.id == g.id) {
                    return Some(keep.swap_remove(k));
                }
            }
            let mut points = line.clone();
            points.pop();
            let triangles = triangulate(&points);
            Some(SolidFill { id: g.id, points, triangles, tint: palette::material_tint(&s.material) })
        })
        .collect()
}

/// Ear clipping of a simple polygon (either orientation). Gives up (no fill) beyond a few
/// thousand points or on a polygon with no ear (crossing edges).
fn triangulate(points: &[Vec2]) -> Vec<[u32; 3]> {
    let n = points.len();
    if !(3..=6000).contains(&n) {
        return Vec::new();
    }
    let area: f64 = (0..n).map(|i| crate::geom::cross(points[i], points[(i + 1) % n])).sum();
    let ccw = area > 0.0;
    let mut idx: Vec<usize> = (0..n).collect();
    if !ccw {
        idx.reverse();
    }
    let mut out = Vec::with_capacity(n - 2);
    let mut guard = 0;
    let mut i = 0;
    while idx.len() > 3 && guard < 4 * n * n.max(8) {
        guard += 1;
        let m = idx.len();
        let (ia, ib, ic) = (idx[(i + m - 1) % m], idx[i % m], idx[(i + 1) % m]);
        let (a, b, c) = (points[ia], points[ib], points[ic]);
        let convex = crate::geom::cross(b - a, c - b) > 1e-15;
        let ear = convex
            && !idx.iter().any(|&k| {
                k != ia && k != ib && k != ic && {
                    let p = points[k];
                    crate::geom::cross(b - a, p - a) >= 0.0
                        && crate::geom::cross(c - b, p - b) >= 0.0
                        && crate::geom::cross(a - c, p - c) >= 0.0
                }
            });
        if ear {
            out.push([ia as u32, ib as u32, ic as u32]);
            idx.remove(i % m);
            guard = 0;
        } else {
            i = (i + 1) % m;
            if guard > 2 * m {
                // No ear found: a crossing or degenerate outline; skip the fill.
                return out;
            }
        }
    }
    if idx.len() == 3 {
        out.push([idx[0] as u32, idx[1] as u32, idx[2] as u32]);
    }
    out
}

/// The handles of the selected objects.
pub fn handles(scene: &Scene, selection: &[u64], view: &View) -> Vec<Handle> {
    let mut out = Vec::new();
    let reach = 40.0 * view.mm_per_px();
    for &id in selection {
        let Some(o) = scene.object(id) else { continue };
        let v = |x: (f64, f64)| Vec2::new(x.0, x.1);
        if let Some((points, bulges, closed)) = pick::editable_polyline(&o.kind) {
            for (i, p) in points.iter().enumerate() {
                out.push(Handle { id, kind: HandleKind::Vertex(i), at: v(*p) });
            }
            for i in 0..pick::n_edges(&points, closed) {
                if let Some(e) = pick::poly_edge(&points, &bulges, closed, i) {
                    out.push(Handle { id, kind: HandleKind::EdgeMiddle(i), at: e.point_at(0.5) });
                }
            }
            continue;
        }
        match &o.kind {
            ObjectKind::PointSource(p) => {
                let c = v(p.position);
                out.push(Handle { id, kind: HandleKind::Vertex(0), at: c });
                for (first, deg) in [(true, p.start_deg), (false, p.end_deg)] {
                    out.push(Handle {
                        id,
                        kind: HandleKind::SourceAngle(first),
                        at: c + crate::geom::unit(deg.to_radians()) * reach,
                    });
                }
            }
            ObjectKind::BeamSource(b) => {
                let c = v(b.center);
                let d = crate::geom::unit(b.direction_deg.to_radians());
                out.push(Handle { id, kind: HandleKind::Vertex(0), at: c });
                out.push(Handle { id, kind: HandleKind::BeamDirection, at: c + d * reach });
                out.push(Handle { id, kind: HandleKind::BeamWidth, at: c + crate::geom::perp(d) * (b.width / 2.0) });
            }
            ObjectKind::LambertianSource(l) => {
                out.push(Handle { id, kind: HandleKind::Vertex(0), at: v(l.a) });
                out.push(Handle { id, kind: HandleKind::Vertex(1), at: v(l.b) });
            }
            ObjectKind::Solid(s) => match &s.shape {
                SceneShape::Ball { position, radius } => {
                    out.push(Handle { id, kind: HandleKind::Size, at: v(*position) + Vec2::new(*radius, 0.0) });
                }
                SceneShape::Rectangle { position, width, height, rotation_deg } => {
                    let (sn, cs) = rotation_deg.to_radians().sin_cos();
                    let (x, y) = (width / 2.0, height / 2.0);
                    out.push(Handle {
                        id,
                        kind: HandleKind::Size,
                        at: v(*position) + Vec2::new(cs * x - sn * y, sn * x + cs * y),
                    });
                }
                _ => {}
            },
            _ => {}
        }
    }
    out
}

/// The edit a handle dragged to `to` asks for.
pub fn handle_edit(scene: &Scene, h: &Handle, to: Vec2) -> Option<Edit> {
    let o = scene.object(h.id)?;
    let id = h.id;
    match h.kind {
        HandleKind::Vertex(vertex) => Some(Edit::MoveVertex { id, vertex, to: (to.x, to.y) }),
        HandleKind::EdgeMiddle(edge) => {
            let (points, bulges, closed) = pick::editable_polyline(&o.kind)?;
            let e = pick::poly_edge(&points, &bulges, closed, edge)?;
            let mut bulge = pick::bulge_through(e.a, e.b, to);
            if bulge.abs() < 0.01 {
                bulge = 0.0;
            }
            Some(Edit::SetBulge { id, edge, bulge })
        }
        HandleKind::SourceAngle(first) => {
            let ObjectKind::PointSource(p) = &o.kind else { return None };
            let mut p = p.clone();
            let c = Vec2::new(p.position.0, p.position.1);
            let ang = (to - c).y.atan2((to - c).x).to_degrees();
            if first {
                let mut s = ang;
                while s > p.end_deg {
                    s -= 360.0;
                }
                while s <= p.end_deg - 360.0 {
                    s += 360.0;
                }
                p.start_deg = (s * 10.0).round() / 10.0;
            } else {
                let mut e = ang;
                while e < p.start_deg {
                    e += 360.0;
                }
                while e >= p.start_deg + 360.0 {
                    e -= 360.0;
                }
                p.end_deg = (e * 10.0).round() / 10.0;
            }
            let mut object = o.clone();
            object.kind = ObjectKind::PointSource(p);
            Some(Edit::ReplaceObject { id, object })
        }
        HandleKind::BeamDirection | HandleKind::BeamWidth => {
            let ObjectKind::BeamSource(b) = &o.kind else { return None };
            let mut b = b.clone();
            let c = Vec2::new(b.center.0, b.center.1);
            if h.kind == HandleKind::BeamDirection {
                b.direction_deg = ((to - c).y.atan2((to - c).x).to_degrees() * 10.0).round() / 10.0;
            } else {
                b.width = (2.0 * (to - c).norm()).max(1e-3);
            }
            let mut object = o.clone();
            object.kind = ObjectKind::BeamSource(b);
            Some(Edit::ReplaceObject { id, object })
        }
        HandleKind::Size => {
            let ObjectKind::Solid(s) = &o.kind else { return None };
            let mut shape = s.shape.clone();
            match &mut shape {
                SceneShape::Ball { position, radius } => {
                    *radius = (to - Vec2::new(position.0, position.1)).norm().max(1e-3);
                }
                SceneShape::Rectangle { position, width, height, rotation_deg } => {
                    let (sn, cs) = rotation_deg.to_radians().sin_cos();
                    let d = to - Vec2::new(position.0, position.1);
                    let (lx, ly) = (cs * d.x + sn * d.y, -sn * d.x + cs * d.y);
                    *width = (2.0 * lx.abs()).max(1e-3);
                    *height = (2.0 * ly.abs()).max(1e-3);
                }
                _ => return None,
            }
            Some(Edit::SetShape { id, shape })
        }
    }
}

/// Where the rotate handle of the selection sits, and the pivot.
fn rotate_handle(geoms: &[ObjectGeom], selection: &[u64], view: &View) -> Option<(Vec2, Vec2)> {
    let b = geoms
        .iter()
        .filter(|g| selection.contains(&g.id) && !g.bounds.is_empty())
        .fold(Aabb::EMPTY, |b, g| b.union(&g.bounds));
    if b.is_empty() {
        return None;
    }
    let top = Vec2::new(b.center().x, b.max.y + 28.0 * view.mm_per_px());
    Some((top, b.center()))
}

/// The canvas: draws everything and handles the pointer.
#[allow(clippy::too_many_lines)] // drawing and interaction in their natural order
pub fn canvas_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    let (rect, response) = ui.allocate_exact_size(ui.available_size(), Sense::click_and_drag());
    response.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Canvas, true, "Drawing canvas"));
    app.view.rect = rect;
    super::inspect::refresh(app);
    let painter = ui.painter_at(rect);
    painter.rect_filled(rect, 0.0, rgb(palette::SHEET));
    app.geometry();
    if app.view.fit_pending {
        let b = app.canvas.geometry.as_ref().map_or(Aabb::EMPTY, |(_, g, _)| scene_bounds(g));
        if b.is_empty() {
            app.view.px_per_mm = 5.0;
            app.view.fit(&Aabb::from_points([Vec2::new(-20.0, -20.0), Vec2::new(20.0, 20.0)]));
        } else {
            app.view.fit(&b);
        }
        app.view.fit_pending = false;
    }

    // Pan and zoom.
    let (scroll, zoom, middle_down, space, pointer) = ui.input(|i| {
        (
            i.smooth_scroll_delta,
            i.zoom_delta(),
            i.pointer.middle_down(),
            i.key_down(egui::Key::Space),
            i.pointer.hover_pos(),
        )
    });
    app.canvas.space_down = space && !ui.ctx().egui_wants_keyboard_input();
    if response.hovered() {
        if let Some(p) = pointer {
            if scroll.y != 0.0 {
                app.view.zoom_about(p, (f64::from(scroll.y) / 200.0).exp());
            }
            if zoom != 1.0 {
                app.view.zoom_about(p, f64::from(zoom));
            }
        }
    }
    let panning = middle_down || (app.canvas.space_down && response.dragged_by(egui::PointerButton::Primary));
    if panning && (response.dragged() || middle_down) {
        app.view.pan(response.drag_delta());
    }
    app.canvas.cursor_mm = pointer.filter(|p| rect.contains(*p)).map(|p| {
        let q = app.view.scene_from_screen(p);
        (q.x, q.y)
    });

    if app.prefs.show_grid {
        grid_ui(&painter, &app.view, app.prefs.grid_mm);
    }

    // Solids: tinted fills, then outlines.
    let view = app.view.clone();
    if let Some((_, geoms, fills)) = &app.canvas.geometry {
        for f in fills {
            let mut mesh = Mesh::default();
            let colour = rgba(f.tint, palette::SOLID_FILL_OPACITY * 1.4);
            for p in &f.points {
                mesh.colored_vertex(view.screen_from_scene(*p), colour);
            }
            for t in &f.triangles {
                mesh.add_triangle(t[0], t[1], t[2]);
            }
            painter.add(Shape::mesh(mesh));
            let _ = f.id;
        }
        for (g, o) in geoms.iter().zip(&app.doc.scene.objects) {
            draw_object(&painter, &view, g, &o.kind);
        }
    }

    // Rays.
    if app.prefs.show_rays {
        if let Some(trace) = app.worker.trace().cloned() {
            app.canvas.rays.draw(&painter, &view, &app.doc.scene, &trace, app.worker.n_finished);
        }
    }
    if app.prefs.show_normals {
        normals_ui(&painter, &view, &app.doc.scene);
    }

    // The selection, its handles and the rotate handle.
    let handles = handles(&app.doc.scene, &app.selection, &view);
    let rot = app.canvas.geometry.as_ref().and_then(|(_, g, _)| rotate_handle(g, &app.selection, &view));
    if let Some((_, geoms, _)) = &app.canvas.geometry {
        for g in geoms.iter().filter(|g| app.selection.contains(&g.id)) {
            for line in &g.lines {
                let pts: Vec<Pos2> = line.iter().map(|p| view.screen_from_scene(*p)).collect();
                painter.add(Shape::line(pts, Stroke::new(3.0, Color32::from_rgba_unmultiplied(255, 140, 0, 110))));
            }
            for p in &g.points {
                painter.circle_stroke(
                    view.screen_from_scene(*p),
                    8.0,
                    Stroke::new(2.0, Color32::from_rgb(255, 140, 0)),
                );
            }
        }
    }
    // A selected outline of thousands of vertices would bury the drawing under handles and
    // cost milliseconds to tessellate: draw only those on screen, and when they are crowded,
    // leave out the edge middles and any vertex within a few points of the last one drawn.
    // (All of them stay reachable: picking uses the full list.)
    let visible = rect.expand(8.0);
    let crowded = handles.iter().filter(|h| visible.contains(view.screen_from_scene(h.at))).count() > 2_000;
    let mut last_drawn: Option<Pos2> = None;
    for h in &handles {
        let q = view.screen_from_scene(h.at);
        if !visible.contains(q) {
            continue;
        }
        if crowded {
            if matches!(h.kind, HandleKind::EdgeMiddle(_)) {
                continue;
            }
            if last_drawn.is_some_and(|l| (l - q).length() < 6.0) {
                continue;
            }
            last_drawn = Some(q);
        }
        let selected_vertex = matches!(h.kind, HandleKind::Vertex(v) if app.selected_vertex == Some((h.id, v)));
        match h.kind {
            HandleKind::EdgeMiddle(_) => {
                painter.circle(q, 3.5, Color32::WHITE, Stroke::new(1.2, Color32::from_rgb(40, 120, 200)));
            }
            HandleKind::SourceAngle(_) | HandleKind::BeamDirection => {
                if let Some(o) = app.doc.scene.object(h.id) {
                    let base = match &o.kind {
                        ObjectKind::PointSource(p) => Vec2::new(p.position.0, p.position.1),
                        ObjectKind::BeamSource(b) => Vec2::new(b.center.0, b.center.1),
                        _ => h.at,
                    };
                    painter
                        .line_segment([view.screen_from_scene(base), q], Stroke::new(1.0, rgb(palette::SOURCE_STROKE)));
                }
                painter.circle(q, 4.5, rgb(palette::SOURCE_FILL), Stroke::new(1.2, rgb(palette::SOURCE_STROKE)));
            }
            _ => {
                let fill = if selected_vertex { Color32::from_rgb(255, 140, 0) } else { Color32::WHITE };
                painter.rect(
                    Rect::from_center_size(q, EVec2::splat(8.0)),
                    0.0,
                    fill,
                    Stroke::new(1.2, Color32::from_rgb(40, 40, 40)),
                    egui::StrokeKind::Middle,
                );
            }
        }
    }
    if let Some((at, pivot)) = rot {
        let q = view.screen_from_scene(at);
        painter.line_segment([view.screen_from_scene(pivot), q], Stroke::new(0.8, Color32::from_gray(150)));
        painter.circle(q, 5.0, Color32::from_rgb(230, 240, 255), Stroke::new(1.2, Color32::from_rgb(40, 120, 200)));
        painter.circle_stroke(view.screen_from_scene(pivot), 3.0, Stroke::new(1.0, Color32::from_gray(120)));
    }

    // Our own click test: egui folds quick clicks at different places into one double
    // click, which would lose vertices of a solid being drawn.
    // A quick click can bring its press and its release in the same frame; egui has then
    // already forgotten where the press was, so take it from the frame's events.
    let (pressed, released, press_pos, release_pos) = ui.input(|i| {
        let press_event = i.events.iter().rev().find_map(|e| match e {
            egui::Event::PointerButton { pos, button: egui::PointerButton::Primary, pressed: true, .. } => Some(*pos),
            _ => None,
        });
        (
            i.pointer.primary_pressed(),
            i.pointer.primary_released(),
            i.pointer.press_origin().or(press_event),
            i.pointer.interact_pos(),
        )
    });
    if pressed && press_pos.is_some_and(|p| rect.contains(p)) && response.hovered() {
        app.canvas.press_at = press_pos;
    }
    let mut clicked = false;
    if released {
        if let (Some(a), Some(b)) = (app.canvas.press_at.take(), release_pos) {
            clicked = (a - b).length() < 5.0;
        }
    }
    // Pointer interaction.
    if !panning {
        interact(app, ui, &response, &handles, rot, clicked);
    }
    tools::tool_preview_ui(app, &painter);
    if let Drag::Box { start, .. } = app.canvas.drag {
        if let Some(p) = pointer {
            let r = Rect::from_two_pos(view.screen_from_scene(start), p);
            painter.rect(
                r,
                0.0,
                Color32::from_rgba_unmultiplied(40, 120, 200, 25),
                Stroke::new(1.0, Color32::from_rgb(40, 120, 200)),
                egui::StrokeKind::Middle,
            );
        }
    }

    super::inspect::overlay_ui(app, &painter);
    view_rays::overlay_ui(app, ui, rect);
}

#[allow(clippy::too_many_lines)] // the pointer cases of the Select tool in the order they are decided
fn interact(
    app: &mut EditorApp,
    ui: &egui::Ui,
    response: &egui::Response,
    handles: &[Handle],
    rot: Option<(Vec2, Vec2)>,
    clicked: bool,
) {
    let view = app.view.clone();
    let Some(pointer) = ui.input(|i| i.pointer.interact_pos()) else { return };
    let p_mm = view.scene_from_screen(pointer);
    let tol_mm = PICK_PX * view.mm_per_px();
    let shift = ui.input(|i| i.modifiers.shift);
    let primary = egui::PointerButton::Primary;

    if app.tool != Tool::Select {
        tools::tool_interact(app, ui, response, p_mm, clicked);
        return;
    }

    if response.double_clicked() {
        // Insert a vertex on the edge under the pointer of a selected free outline or path.
        for &id in &app.selection {
            let Some(o) = app.doc.scene.object(id) else { continue };
            let Some((points, bulges, closed)) = pick::editable_polyline(&o.kind) else { continue };
            if let Some((edge, d)) = pick::nearest_edge(&points, &bulges, closed, p_mm) {
                if d <= tol_mm {
                    let point = (p_mm.x, p_mm.y);
                    app.push(Command::Edit(Edit::InsertVertex { id, edge, point }));
                    break;
                }
            }
        }
        return;
    }

    if response.drag_started_by(primary) {
        let press = ui.input(|i| i.pointer.press_origin()).unwrap_or(pointer);
        let press_mm = view.scene_from_screen(press);
        let near = |at: Vec2| (view.screen_from_scene(at) - press).length() <= PICK_PX as f32 + 1.0;
        if let Some((at, pivot)) = rot.filter(|(at, _)| near(*at)) {
            let d = at - pivot;
            let gesture = app.begin_gesture();
            app.canvas.drag = Drag::Rotate { gesture, pivot, start_deg: d.y.atan2(d.x).to_degrees(), applied_deg: 0.0 };
            return;
        }
        // Vertices before edge middles, so a short edge's ends stay reachable.
        let hit =
            handles.iter().filter(|h| near(h.at)).min_by_key(|h| u8::from(matches!(h.kind, HandleKind::EdgeMiddle(_))));
        if let Some(h) = hit {
            let gesture = app.begin_gesture();
            if let HandleKind::Vertex(v) = h.kind {
                app.selected_vertex = Some((h.id, v));
            }
            app.canvas.drag = Drag::Handle { gesture, handle: *h };
            return;
        }
        app.geometry();
        let under = pick::object_at(app.canvas.geoms(), &app.doc.scene, press_mm, tol_mm);
        match under {
            Some(id) => {
                if !app.selection.contains(&id) {
                    let sel = if shift { [app.selection.clone(), vec![id]].concat() } else { vec![id] };
                    app.push(Command::Select(sel.clone()));
                    app.selection = sel;
                }
                let gesture = app.begin_gesture();
                app.canvas.drag = Drag::Move { gesture, start: press_mm, applied: (0.0, 0.0) };
            }
            None => app.canvas.drag = Drag::Box { start: press_mm, add: shift },
        }
        return;
    }

    if response.dragged_by(primary) {
        match app.canvas.drag.clone() {
            Drag::Move { gesture, start, applied } => {
                let raw = p_mm - start;
                let total = if app.prefs.snap {
                    let g = app.prefs.grid_mm;
                    ((raw.x / g).round() * g, (raw.y / g).round() * g)
                } else {
                    (raw.x, raw.y)
                };
                let by = (total.0 - applied.0, total.1 - applied.1);
                if by != (0.0, 0.0) {
                    app.push(Command::EditIn(Edit::Translate { ids: app.selection.clone(), by }, gesture));
                    app.canvas.drag = Drag::Move { gesture, start, applied: total };
                }
            }
            Drag::Handle { gesture, handle } => {
                let to = if matches!(handle.kind, HandleKind::EdgeMiddle(_)) { p_mm } else { app.snap(p_mm) };
                if let Some(edit) = handle_edit(&app.doc.scene, &handle, to) {
                    app.push(Command::EditIn(edit, gesture));
                }
            }
            Drag::Rotate { gesture, pivot, start_deg, applied_deg } => {
                let d = p_mm - pivot;
                let mut total = d.y.atan2(d.x).to_degrees() - start_deg;
                let step = if shift { 15.0 } else { 1.0 };
                total = (total / step).round() * step;
                let delta = total - applied_deg;
                if delta != 0.0 {
                    let edit = Edit::Rotate { ids: app.selection.clone(), pivot: (pivot.x, pivot.y), angle_deg: delta };
                    app.push(Command::EditIn(edit, gesture));
                    app.canvas.drag = Drag::Rotate { gesture, pivot, start_deg, applied_deg: total };
                }
            }
            _ => {}
        }
    }

    if response.drag_stopped() {
        if let Drag::Box { start, add } = app.canvas.drag {
            app.geometry();
            let mut ids = pick::objects_in_box(app.canvas.geoms(), start, p_mm);
            if add {
                ids.extend(app.selection.iter().copied().filter(|id| !ids.contains(id)).collect::<Vec<_>>());
            }
            app.push(Command::Select(ids));
        }
        app.canvas.drag = Drag::None;
    }

    if clicked {
        let hit = handles.iter().find(|h| (view.screen_from_scene(h.at) - pointer).length() <= PICK_PX as f32 + 1.0);
        if let Some(Handle { id, kind: HandleKind::Vertex(v), .. }) = hit {
            app.push(Command::SelectVertex(*id, *v));
            return;
        }
        app.geometry();
        let under = pick::object_at(app.canvas.geoms(), &app.doc.scene, p_mm, tol_mm);
        let sel = match (under, shift) {
            (Some(id), true) if app.selection.contains(&id) => {
                app.selection.iter().copied().filter(|&s| s != id).collect()
            }
            (Some(id), true) => [app.selection.clone(), vec![id]].concat(),
            (Some(id), false) => vec![id],
            (None, true) => app.selection.clone(),
            (None, false) => Vec::new(),
        };
        app.push(Command::Select(sel));
    }
}

fn grid_ui(painter: &egui::Painter, view: &View, grid_mm: f64) {
    let mut step = grid_mm.max(1e-6);
    while step * view.px_per_mm < 8.0 {
        step *= 10.0;
    }
    let rect = view.rect;
    let a = view.scene_from_screen(rect.left_bottom());
    let b = view.scene_from_screen(rect.right_top());
    let minor = Color32::from_rgb(232, 232, 228);
    let major = Color32::from_rgb(212, 212, 206);
    let axis = Color32::from_rgb(185, 185, 178);
    let n_x = ((b.x - a.x) / step) as i64;
    let n_y = ((b.y - a.y) / step) as i64;
    if n_x > 2000 || n_y > 2000 {
        return;
    }
    let colour = |k: i64| {
        if k == 0 {
            axis
        } else if k % 10 == 0 {
            major
        } else {
            minor
        }
    };
    let k0 = (a.x / step).floor() as i64;
    for k in k0..=k0 + n_x + 1 {
        let x = view.screen_from_scene(Vec2::new(k as f64 * step, 0.0)).x;
        painter.vline(x, rect.y_range(), Stroke::new(1.0, colour(k)));
    }
    let k0 = (a.y / step).floor() as i64;
    for k in k0..=k0 + n_y + 1 {
        let y = view.screen_from_scene(Vec2::new(0.0, k as f64 * step)).y;
        painter.hline(rect.x_range(), y, Stroke::new(1.0, colour(k)));
    }
    // Scale label in the bottom-left corner.
    let label = format!("grid {step} mm");
    painter.text(
        rect.left_bottom() + EVec2::new(6.0, -6.0),
        egui::Align2::LEFT_BOTTOM,
        label,
        egui::FontId::proportional(11.0),
        Color32::from_gray(110),
    );
}

pub(crate) fn dashed(painter: &egui::Painter, pts: &[Pos2], colour: Color32, width: f32, dash: f32, gap: f32) {
    painter.extend(Shape::dashed_line(pts, Stroke::new(width, colour), dash, gap));
}

fn draw_object(painter: &egui::Painter, view: &View, g: &ObjectGeom, kind: &ObjectKind) {
    let line = |i: usize| -> Vec<Pos2> {
        g.lines.get(i).map(|l| l.iter().map(|p| view.screen_from_scene(*p)).collect()).unwrap_or_default()
    };
    match kind {
        ObjectKind::Solid(_) => {
            painter.add(Shape::line(line(0), Stroke::new(1.2, rgb(palette::SOLID_STROKE))));
        }
        ObjectKind::Mirror(m) => {
            let pts = line(0);
            painter.add(Shape::line(pts.clone(), Stroke::new(3.0, rgb(palette::MIRROR))));
            if m.one_sided {
                // Hatch the absorbing (right) side.
                for w in pts.windows(2) {
                    let d = (w[1] - w[0]).normalized();
                    let n = EVec2::new(-d.y, d.x) * -5.0;
                    let len = (w[1] - w[0]).length();
                    let mut t = 0.0;
                    while t < len {
                        let a = w[0] + d * t;
                        painter.line_segment([a, a + n + d * 3.0], Stroke::new(1.0, rgb(palette::MIRROR)));
                        t += 8.0;
                    }
                }
            }
        }
        ObjectKind::Absorber(_) => {
            painter.add(Shape::line(line(0), Stroke::new(3.5, rgb(palette::ABSORBER))));
        }
        ObjectKind::Splitter(_) => dashed(painter, &line(0), rgb(palette::SPLITTER), 2.5, 6.0, 3.0),
        ObjectKind::Detector(_) => dashed(painter, &line(0), rgb(palette::DETECTOR), 3.5, 2.0, 2.0),
        ObjectKind::PointSource(p) => {
            let c = view.screen_from_scene(Vec2::new(p.position.0, p.position.1));
            // The angular range as a faint wedge.
            let r = 22.0;
            let steps = 16;
            let mut pts = vec![c];
            for k in 0..=steps {
                let a = (p.start_deg + (p.end_deg - p.start_deg) * f64::from(k) / f64::from(steps)).to_radians();
                pts.push(c + EVec2::new(a.cos() as f32, -a.sin() as f32) * r);
            }
            pts.push(c);
            painter.add(Shape::line(pts, Stroke::new(1.0, rgba(palette::SOURCE_STROKE, 0.6))));
            painter.circle(c, 5.0, rgb(palette::SOURCE_FILL), Stroke::new(2.0, rgb(palette::SOURCE_STROKE)));
        }
        ObjectKind::BeamSource(b) => {
            let pts = line(0);
            if pts.len() == 2 {
                painter.line_segment([pts[0], pts[1]], Stroke::new(2.0, rgb(palette::SOURCE_STROKE)));
                let c = view.screen_from_scene(Vec2::new(b.center.0, b.center.1));
                let (s, co) = b.direction_deg.to_radians().sin_cos();
                let d = EVec2::new(co as f32, -s as f32);
                let tip = c + d * 24.0;
                let side = EVec2::new(-d.y, d.x) * 5.0;
                let back = tip - d * 8.0;
                painter.line_segment([c, back], Stroke::new(2.0, rgb(palette::SOURCE_STROKE)));
                painter.add(Shape::convex_polygon(
                    vec![tip, back + side, back - side],
                    rgb(palette::SOURCE_FILL),
                    Stroke::new(1.5, rgb(palette::SOURCE_STROKE)),
                ));
            }
        }
        ObjectKind::LambertianSource(_) => {
            let pts = line(0);
            if pts.len() == 2 {
                painter.line_segment([pts[0], pts[1]], Stroke::new(4.0, rgb(palette::SOURCE_STROKE)));
                let m = pts[0] + (pts[1] - pts[0]) * 0.5;
                let t = (pts[1] - pts[0]).normalized();
                // Left of a → b in the scene is right of it on screen (Y flips).
                let n = EVec2::new(t.y, -t.x);
                painter.line_segment([m, m + n * 8.0], Stroke::new(2.0, rgb(palette::SOURCE_STROKE)));
            }
        }
    }
}

fn normals_ui(painter: &egui::Painter, view: &View, scene: &Scene) {
    let len = 14.0 * view.mm_per_px();
    let stroke = Stroke::new(1.0, rgb(palette::NORMAL));
    let mut n = 0;
    for (_, o) in scene.solid_outlines() {
        let Ok(o) = o else { continue };
        let flip = if o.signed_area() < 0.0 { -1.0 } else { 1.0 };
        for e in o.edges() {
            let m = e.point_at(0.5);
            let nrm = e.normal_at(0.5) * flip;
            painter.arrow(
                view.screen_from_scene(m),
                view.screen_from_scene(m + nrm * len) - view.screen_from_scene(m),
                stroke,
            );
            n += 1;
            if n > 5000 {
                return;
            }
        }
    }
}
