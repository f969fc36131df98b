//! The problems list: what `scene::validate` finds, each selecting its object when clicked.

use super::app::{Command, EditorApp};
use crate::scene::validate::{Problem, Severity};

/// Problems of the scene, worked out once per revision. The geometric checks of the last
/// revision are kept, so dragging one vertex of a large outline re-checks only the edges
/// that moved.
#[derive(Default)]
pub struct ProblemsCache {
    revision: Option<u64>,
    checks: crate::scene::GeometryChecks,
    pub problems: Vec<Problem>,
}

impl ProblemsCache {
    pub fn update(&mut self, scene: &crate::scene::Scene, revision: u64) -> &[Problem] {
        if self.revision != Some(revision) {
            self.problems = crate::scene::validate_with(scene, &mut self.checks);
            self.revision = Some(revision);
        }
        &self.problems
    }
}

pub fn problems_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    let problems = app.problems.update(&app.doc.scene, app.doc.revision).to_vec();
    if problems.is_empty() {
        ui.label("No problems found.");
        return;
    }
    for p in problems {
        let (mark, colour) = match p.severity {
            Severity::Error => ("error", egui::Color32::from_rgb(190, 30, 30)),
            Severity::Warning => ("warning", egui::Color32::from_rgb(170, 100, 0)),
        };
        let text = match &p.object {
            Some((_, name)) => format!("{mark}: {name}: {}", p.message),
            None => format!("{mark}: {}", p.message),
        };
        let r = ui.add(egui::Label::new(egui::RichText::new(text).color(colour)).sense(egui::Sense::click()).wrap());
        if let Some((id, _)) = p.object {
            if r.on_hover_text("Click to select the object").clicked() {
                app.push(Command::Select(vec![id]));
            }
        }
    }
}
