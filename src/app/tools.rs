//! Tools: selecting, and placing every kind of object by clicks and drags.

use egui::{Color32, Stroke};

use super::Edit;
use super::app::{Command, EditorApp};
use super::canvas::{PICK_PX, rgb};
use crate::geom::Vec2;
use crate::optics::colour::palette;
use crate::scene::{
    Absorber, BeamSource, Detector, Emission, LambertianSource, Line, Mirror, ObjectKind, Path, PointSource, Shape,
    Solid, Splitter,
};

/// The tool in use on the canvas.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tool {
    Select,
    /// Draw a free outline vertex by vertex.
    Solid,
    Rectangle,
    Wedge,
    Prism,
    Lens,
    Ball,
    Pipe,
    NotchedPlate,
    Mirror,
    Absorber,
    Splitter,
    Detector,
    PointSource,
    Beam,
    Lambertian,
    /// Click a ray to explain its path.
    InspectRay,
    /// Click a solid's boundary to see which directions leave through it.
    EscapeCone,
    /// Two clicks: the distance between them.
    MeasureDistance,
    /// Three clicks: the corner, then a point on each arm.
    MeasureAngle,
    /// Two clicks: the optical path length Σ n·length along the straight line between them.
    OpticalPath,
}

impl Tool {
    pub const ALL: [Tool; 16] = [
        Tool::Select,
        Tool::Solid,
        Tool::Rectangle,
        Tool::Wedge,
        Tool::Prism,
        Tool::Lens,
        Tool::Ball,
        Tool::Pipe,
        Tool::NotchedPlate,
        Tool::Mirror,
        Tool::Absorber,
        Tool::Splitter,
        Tool::Detector,
        Tool::PointSource,
        Tool::Beam,
        Tool::Lambertian,
    ];

    /// The tools that explain and measure instead of placing objects.
    pub const ANALYSIS: [Tool; 5] =
        [Tool::InspectRay, Tool::EscapeCone, Tool::MeasureDistance, Tool::MeasureAngle, Tool::OpticalPath];

    /// Whether this tool explains or measures (it never changes the scene).
    pub fn is_analysis(self) -> bool {
        Self::ANALYSIS.contains(&self)
    }

    pub fn name(self) -> &'static str {
        match self {
            Tool::Select => "Select",
            Tool::Solid => "Solid",
            Tool::Rectangle => "Rectangle",
            Tool::Wedge => "Wedge",
            Tool::Prism => "Prism",
            Tool::Lens => "Lens",
            Tool::Ball => "Ball",
            Tool::Pipe => "Light pipe",
            Tool::NotchedPlate => "Light-guide plate",
            Tool::Mirror => "Mirror",
            Tool::Absorber => "Absorber",
            Tool::Splitter => "Splitter",
            Tool::Detector => "Detector",
            Tool::PointSource => "Point source",
            Tool::Beam => "Beam",
            Tool::Lambertian => "Lambertian emitter",
            Tool::InspectRay => "Inspect ray",
            Tool::EscapeCone => "Escape cone",
            Tool::MeasureDistance => "Distance",
            Tool::MeasureAngle => "Angle",
            Tool::OpticalPath => "Optical path",
        }
    }

    pub fn hint(self) -> &'static str {
        match self {
            Tool::Select => {
                "Click to select, Shift-click to add, drag a box; drag handles; double-click an edge to add a vertex"
            }
            Tool::Solid => "Click vertices; click the first vertex or press Enter to close; Backspace removes the last",
            Tool::Rectangle => "Drag from corner to corner, or click for a 20 × 10 mm slab",
            Tool::Mirror | Tool::Absorber | Tool::Splitter | Tool::Detector | Tool::Lambertian => {
                "Drag from the first end to the second, or click for a 20 mm piece"
            }
            Tool::Beam => "Click to place the beam's centre; drag to aim it",
            Tool::PointSource => "Click to place; drag to aim its middle direction",
            Tool::InspectRay => "Click a ray to list every event on its path and mark the angles on the canvas",
            Tool::EscapeCone => "Click a solid's boundary to draw the directions that can leave through it",
            Tool::MeasureDistance => "Click two points",
            Tool::MeasureAngle => "Click the corner, then a point on each arm",
            Tool::OpticalPath => "Click two points: Σ n·length along the line between them",
            _ => "Click to place with standard sizes; change them in Properties",
        }
    }

    /// Tools that place by one drag (or a click).
    fn by_drag(self) -> bool {
        matches!(
            self,
            Tool::Rectangle
                | Tool::Mirror
                | Tool::Absorber
                | Tool::Splitter
                | Tool::Detector
                | Tool::Lambertian
                | Tool::Beam
                | Tool::PointSource
        )
    }
}

/// A solid being drawn vertex by vertex.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ToolState {
    pub points: Vec<Vec2>,
}

impl ToolState {
    pub fn is_drawing(&self) -> bool {
        !self.points.is_empty()
    }
}

/// The default material of new solids.
pub const DEFAULT_MATERIAL: &str = "pmma";

fn emission(rays: u32) -> Emission {
    Emission::new(rays, 1.0, 550.0)
}

/// The object a tool makes from a press at `a` and a release at `b` (equal for a click).
#[allow(clippy::too_many_lines)] // one arm per tool
pub fn new_object(tool: Tool, a: Vec2, b: Vec2) -> Option<(&'static str, ObjectKind)> {
    let click = (b - a).norm() < 1e-9;
    let p = (a.x, a.y);
    let seg = |default: Vec2| {
        if click { Path::segment(p, (a.x + default.x, a.y + default.y)) } else { Path::segment(p, (b.x, b.y)) }
    };
    let solid = |shape: Shape| ObjectKind::Solid(Solid { shape, material: DEFAULT_MATERIAL.to_owned() });
    let angle = (b - a).y.atan2((b - a).x).to_degrees();
    Some(match tool {
        Tool::Select
        | Tool::Solid
        | Tool::InspectRay
        | Tool::EscapeCone
        | Tool::MeasureDistance
        | Tool::MeasureAngle
        | Tool::OpticalPath => return None,
        Tool::Rectangle => {
            let (c, w, h) = if click { (a, 20.0, 10.0) } else { ((a + b) / 2.0, (b.x - a.x).abs(), (b.y - a.y).abs()) };
            if w <= 0.0 || h <= 0.0 {
                return None;
            }
            ("slab", solid(Shape::Rectangle { position: (c.x, c.y), width: w, height: h, rotation_deg: 0.0 }))
        }
        Tool::Wedge => (
            "wedge",
            solid(Shape::Wedge {
                position: p,
                length: 30.0,
                thickness_start: 8.0,
                thickness_end: 2.0,
                rotation_deg: 0.0,
            }),
        ),
        Tool::Prism => ("prism", solid(Shape::Prism { position: p, apex_deg: 60.0, side: 20.0, rotation_deg: 0.0 })),
        Tool::Lens => (
            "lens",
            solid(Shape::Lens { position: p, diameter: 20.0, thickness: 5.0, r1: 30.0, r2: -30.0, rotation_deg: 0.0 }),
        ),
        Tool::Ball => ("ball", solid(Shape::Ball { position: p, radius: 5.0 })),
        Tool::Pipe => (
            "light pipe",
            solid(Shape::Pipe {
                position: p,
                width: 4.0,
                length_in: 20.0,
                bend_radius: 10.0,
                bend_deg: 90.0,
                length_out: 20.0,
                rotation_deg: 0.0,
            }),
        ),
        Tool::NotchedPlate => (
            "light-guide plate",
            solid(Shape::NotchedPlate {
                position: p,
                length: 60.0,
                thickness: 3.0,
                notches: 20,
                notch_depth: 0.15,
                notch_angle_deg: 100.0,
                notch_start: 4.0,
                notch_end: 56.0,
                density_ratio: 4.0,
                rotation_deg: 0.0,
            }),
        ),
        Tool::Mirror => (
            "mirror",
            ObjectKind::Mirror(Mirror { path: seg(Vec2::new(0.0, 20.0)), reflectance: 0.95, one_sided: false }),
        ),
        Tool::Absorber => ("absorber", ObjectKind::Absorber(Absorber { path: seg(Vec2::new(0.0, 20.0)) })),
        Tool::Splitter => (
            "splitter",
            ObjectKind::Splitter(Splitter { path: seg(Vec2::new(14.0, 14.0)), reflectance: 0.5, transmittance: 0.5 }),
        ),
        Tool::Detector => {
            ("detector", ObjectKind::Detector(Detector { path: seg(Vec2::new(0.0, 20.0)), bins: 50, angle_bins: 36 }))
        }
        Tool::PointSource => {
            let mid = if click { 0.0 } else { angle };
            (
                "point source",
                ObjectKind::PointSource(PointSource {
                    position: p,
                    start_deg: mid - 15.0,
                    end_deg: mid + 15.0,
                    emission: emission(31),
                }),
            )
        }
        Tool::Beam => (
            "beam",
            ObjectKind::BeamSource(BeamSource {
                center: p,
                width: 5.0,
                direction_deg: if click { 0.0 } else { angle },
                emission: emission(11),
            }),
        ),
        Tool::Lambertian => {
            let path = seg(Vec2::new(0.0, -3.0));
            let mut e = emission(41);
            e.spectrum = vec![Line { nm: 455.0, weight: 0.3 }, Line { nm: 570.0, weight: 0.7 }];
            (
                "emitter",
                ObjectKind::LambertianSource(LambertianSource { a: path.points[0], b: path.points[1], emission: e }),
            )
        }
    })
}

/// A unique name like "prism 2".
fn fresh_name(app: &EditorApp, base: &str) -> String {
    let mut k = 1;
    loop {
        let name = if k == 1 { base.to_owned() } else { format!("{base} {k}") };
        if app.doc.scene.object_by_name(&name).is_none() {
            return name;
        }
        k += 1;
    }
}

/// Adds an object as one undo step, selects it and goes back to the Select tool.
pub fn place(app: &mut EditorApp, base: &str, kind: ObjectKind) {
    let name = fresh_name(app, base);
    let edit = Edit::add_new(&app.doc.scene, &name, kind);
    let id = match &edit {
        Edit::AddObject { object, .. } => object.id,
        _ => 0,
    };
    app.push(Command::Edit(edit));
    app.push(Command::Select(vec![id]));
    app.push(Command::SetTool(Tool::Select));
}

/// Closes the solid being drawn into a free outline.
pub fn close_solid(app: &mut EditorApp) {
    let pts = std::mem::take(&mut app.tool_state.points);
    if pts.len() < 3 {
        app.status = "A solid needs at least three vertices".into();
        return;
    }
    let shape = Shape::Outline { points: pts.iter().map(|p| (p.x, p.y)).collect(), bulges: Vec::new() };
    place(app, "solid", ObjectKind::Solid(Solid { shape, material: DEFAULT_MATERIAL.to_owned() }));
}

/// Pointer handling for every tool but Select.
pub fn tool_interact(app: &mut EditorApp, ui: &egui::Ui, response: &egui::Response, p_mm: Vec2, clicked: bool) {
    if app.tool.is_analysis() {
        super::inspect::tool_interact(app, p_mm, clicked);
        return;
    }
    let view = app.view.clone();
    let snapped = app.snap(p_mm);
    if app.tool == Tool::Solid {
        let (enter, backspace) = ui.input(|i| (i.key_pressed(egui::Key::Enter), i.key_pressed(egui::Key::Backspace)));
        if enter {
            close_solid(app);
            return;
        }
        if backspace {
            app.tool_state.points.pop();
        }
        if clicked {
            if let Some(first) = app.tool_state.points.first() {
                let near =
                    (view.screen_from_scene(*first) - view.screen_from_scene(p_mm)).length() <= PICK_PX as f32 + 2.0;
                if near && app.tool_state.points.len() >= 3 {
                    close_solid(app);
                    return;
                }
            }
            if app.tool_state.points.last() != Some(&snapped) {
                app.tool_state.points.push(snapped);
            }
        }
        return;
    }
    if app.tool.by_drag() {
        if response.drag_started_by(egui::PointerButton::Primary) {
            let press = ui.input(|i| i.pointer.press_origin()).map_or(p_mm, |q| view.scene_from_screen(q));
            app.canvas.drag = super::canvas::Drag::Draw { start: app.snap(press) };
        }
        if response.drag_stopped() {
            if let super::canvas::Drag::Draw { start } = app.canvas.drag {
                if let Some((name, kind)) = new_object(app.tool, start, snapped) {
                    place(app, name, kind);
                }
            }
            app.canvas.drag = super::canvas::Drag::None;
            return;
        }
    }
    if clicked && (!app.tool.by_drag() || app.canvas.drag == super::canvas::Drag::None) {
        if let Some((name, kind)) = new_object(app.tool, snapped, snapped) {
            place(app, name, kind);
        }
    }
}

/// What the tool would make, drawn under the pointer.
pub fn tool_preview_ui(app: &EditorApp, painter: &egui::Painter) {
    let view = &app.view;
    let Some(cursor) = app.canvas.cursor_mm.map(|(x, y)| app.snap(Vec2::new(x, y))) else { return };
    let stroke = Stroke::new(1.5, Color32::from_rgb(40, 120, 200));
    if app.tool == Tool::Solid && app.tool_state.is_drawing() {
        let mut pts: Vec<egui::Pos2> = app.tool_state.points.iter().map(|p| view.screen_from_scene(*p)).collect();
        pts.push(view.screen_from_scene(cursor));
        painter.add(egui::Shape::line(pts, stroke));
        if let Some(first) = app.tool_state.points.first() {
            painter.circle_stroke(view.screen_from_scene(*first), PICK_PX as f32, stroke);
        }
        for p in &app.tool_state.points {
            painter.circle_filled(view.screen_from_scene(*p), 3.0, stroke.color);
        }
    }
    if app.tool != Tool::Select && !app.tool.is_analysis() {
        if let super::canvas::Drag::Draw { start } = app.canvas.drag {
            if let Some((_, kind)) = new_object(app.tool, start, cursor) {
                let g = super::pick::object_geometry(0, &kind);
                for line in &g.lines {
                    let pts = line.iter().map(|p| view.screen_from_scene(*p)).collect();
                    painter.add(egui::Shape::line(pts, stroke));
                }
            }
        }
        let c = view.screen_from_scene(cursor);
        painter.line_segment(
            [c - egui::vec2(6.0, 0.0), c + egui::vec2(6.0, 0.0)],
            Stroke::new(1.0, rgb(palette::SOLID_STROKE)),
        );
        painter.line_segment(
            [c - egui::vec2(0.0, 6.0), c + egui::vec2(0.0, 6.0)],
            Stroke::new(1.0, rgb(palette::SOLID_STROKE)),
        );
    }
}

/// The toolbox on the left.
pub fn toolbox_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    ui.add_space(4.0);
    let groups: [(&str, &[Tool]); 5] = [
        ("", &[Tool::Select]),
        (
            "Solids",
            &[
                Tool::Solid,
                Tool::Rectangle,
                Tool::Wedge,
                Tool::Prism,
                Tool::Lens,
                Tool::Ball,
                Tool::Pipe,
                Tool::NotchedPlate,
            ],
        ),
        ("Thin elements", &[Tool::Mirror, Tool::Absorber, Tool::Splitter, Tool::Detector]),
        ("Sources", &[Tool::PointSource, Tool::Beam, Tool::Lambertian]),
        ("Explain and measure", &Tool::ANALYSIS),
    ];
    for (title, tools) in groups {
        if !title.is_empty() {
            ui.add_space(6.0);
            ui.label(egui::RichText::new(title).small().strong());
        }
        for &t in tools {
            let r = ui.add_sized([ui.available_width(), 20.0], egui::Button::selectable(app.tool == t, t.name()));
            if r.on_hover_text(t.hint()).clicked() {
                app.push(Command::SetTool(t));
            }
        }
    }
    ui.add_space(8.0);
    ui.label(egui::RichText::new(app.tool.hint()).small().weak());
}

/// The Add menu: every tool, and the same objects placed at the middle of the view.
pub fn add_menu_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    ui.menu_button("Add", |ui| {
        for t in Tool::ALL.into_iter().skip(1) {
            if ui.button(t.name()).clicked() {
                let c = app.snap(app.view.center_mm());
                if t == Tool::Solid {
                    app.push(Command::SetTool(Tool::Solid));
                } else if let Some((name, kind)) = new_object(t, c, c) {
                    place(app, name, kind);
                }
            }
        }
    });
}
