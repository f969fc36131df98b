//! Undo and redo on top of [`Edit`]s.
//!
//! Each undo step holds the inverses of the edits it covers, newest first. Edits applied
//! under one [`Gesture`] (a whole vertex drag, a held arrow key) merge into one step: the
//! step keeps the inverse that restores each thing to how it was before the gesture began,
//! so a drag of a thousand frames is still one cheap step. The history lives beside the
//! document and is never saved with it.

use std::collections::VecDeque;

use super::Scene;
use super::edit::{Edit, EditError, apply};

/// The default number of undo steps kept.
pub const DEFAULT_DEPTH: usize = 500;

/// Identifies one user gesture; edits applied with the same gesture are undone together.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Gesture(pub u64);

#[derive(Clone, Debug)]
struct Step {
    label: String,
    /// Applied in order to undo the step (the newest edit's inverse first).
    inverses: Vec<Edit>,
    gesture: Option<Gesture>,
}

/// Undo and redo stacks with a depth limit.
#[derive(Clone, Debug)]
pub struct History {
    undo: VecDeque<Step>,
    redo: Vec<Step>,
    depth: usize,
    next_gesture: u64,
}

impl Default for History {
    fn default() -> Self {
        Self::new(DEFAULT_DEPTH)
    }
}

impl History {
    /// A history keeping at most `depth` undo steps (at least one).
    pub fn new(depth: usize) -> Self {
        Self { undo: VecDeque::new(), redo: Vec::new(), depth: depth.max(1), next_gesture: 1 }
    }

    /// Applies `edit` to `scene` as an undo step of its own. Clears the redo stack.
    pub fn apply(&mut self, scene: &mut Scene, edit: Edit) -> Result<(), EditError> {
        self.record(scene, edit, None)
    }

    /// A fresh gesture: edits applied with it (see [`History::apply_in`]) form one step.
    pub fn begin_gesture(&mut self) -> Gesture {
        let g = Gesture(self.next_gesture);
        self.next_gesture += 1;
        g
    }

    /// Applies `edit` as part of `gesture`: if the newest undo step belongs to the same
    /// gesture, the edit joins it.
    pub fn apply_in(&mut self, scene: &mut Scene, edit: Edit, gesture: Gesture) -> Result<(), EditError> {
        self.record(scene, edit, Some(gesture))
    }

    fn record(&mut self, scene: &mut Scene, edit: Edit, gesture: Option<Gesture>) -> Result<(), EditError> {
        let label = edit.label();
        let inverse = apply(scene, edit)?;
        self.redo.clear();
        if let Some(g) = gesture {
            if let Some(last) = self.undo.back_mut().filter(|s| s.gesture == Some(g)) {
                // The older inverses already restore whatever they cover to its state before
                // the gesture; only keep what they do not cover yet. Undo runs the newest
                // inverse first.
                if !covered(&last.inverses, &inverse) {
                    last.inverses.insert(0, inverse);
                }
                return Ok(());
            }
        }
        self.undo.push_back(Step { label, inverses: vec![inverse], gesture });
        while self.undo.len() > self.depth {
            self.undo.pop_front();
        }
        Ok(())
    }

    /// Undoes the newest step; false if there is none.
    pub fn undo(&mut self, scene: &mut Scene) -> bool {
        let Some(step) = self.undo.pop_back() else { return false };
        match run(scene, step.inverses) {
            Some(redo) => {
                self.redo.push(Step { label: step.label, inverses: redo, gesture: None });
                true
            }
            None => false,
        }
    }

    /// Redoes the newest undone step; false if there is none.
    pub fn redo(&mut self, scene: &mut Scene) -> bool {
        let Some(step) = self.redo.pop() else { return false };
        match run(scene, step.inverses) {
            Some(undo) => {
                self.undo.push_back(Step { label: step.label, inverses: undo, gesture: None });
                true
            }
            None => false,
        }
    }

    pub fn can_undo(&self) -> bool {
        !self.undo.is_empty()
    }

    pub fn can_redo(&self) -> bool {
        !self.redo.is_empty()
    }

    /// What [`History::undo`] would undo, e.g. "move vertex".
    pub fn undo_label(&self) -> Option<&str> {
        self.undo.back().map(|s| s.label.as_str())
    }

    pub fn redo_label(&self) -> Option<&str> {
        self.redo.last().map(|s| s.label.as_str())
    }

    /// Number of undo steps held.
    pub fn len(&self) -> usize {
        self.undo.len()
    }

    pub fn is_empty(&self) -> bool {
        self.undo.is_empty()
    }

    /// Forgets every step (after opening another document).
    pub fn clear(&mut self) {
        self.undo.clear();
        self.redo.clear();
    }
}

/// Applies a step's edits in order as one batch; returns the edits that reverse it, or
/// `None` if it no longer applies (the scene is then unchanged).
fn run(scene: &mut Scene, edits: Vec<Edit>) -> Option<Vec<Edit>> {
    // The inverse of a batch is a batch of the inverses, newest first.
    match apply(scene, Edit::Batch(edits)) {
        Ok(Edit::Batch(inverses)) => Some(inverses),
        Ok(other) => Some(vec![other]),
        Err(_) => None,
    }
}

/// What an inverse edit restores, for merging the edits of one gesture.
#[derive(PartialEq)]
enum Restores {
    Object(u64),
    Vertex(u64, usize),
    Settings,
    Other,
}

fn restores(edit: &Edit) -> Vec<Restores> {
    match edit {
        Edit::ReplaceObject { id, .. } => vec![Restores::Object(*id)],
        Edit::MoveVertex { id, vertex, .. } => vec![Restores::Vertex(*id, *vertex)],
        Edit::SetSettings(_) => vec![Restores::Settings],
        Edit::Batch(edits) => edits.iter().flat_map(restores).collect(),
        _ => vec![Restores::Other],
    }
}

/// Whether `older` (applied after `newer` when undoing) already restores everything `newer`
/// would, so `newer` can be dropped.
fn covered(older: &[Edit], newer: &Edit) -> bool {
    let have: Vec<Restores> = older.iter().flat_map(restores).collect();
    restores(newer).iter().all(|r| match r {
        Restores::Other => false,
        Restores::Object(_) | Restores::Settings => have.contains(r),
        Restores::Vertex(id, _) => have.contains(r) || have.contains(&Restores::Object(*id)),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::{ObjectKind, Shape, Solid};

    fn scene_with_square() -> (Scene, u64) {
        let mut scene = Scene::new("t");
        let id = scene.add(
            "square",
            ObjectKind::Solid(Solid {
                shape: Shape::Outline { points: vec![(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)], bulges: vec![] },
                material: "pmma".to_owned(),
            }),
        );
        (scene, id)
    }

    #[test]
    fn a_drag_is_one_undo_step() {
        let (mut scene, id) = scene_with_square();
        let before = scene.clone();
        let mut h = History::default();
        let g = h.begin_gesture();
        for k in 0..100 {
            let x = 2.0 + f64::from(k) * 0.01;
            h.apply_in(&mut scene, Edit::MoveVertex { id, vertex: 2, to: (x, x) }, g).expect("moves");
            h.apply_in(&mut scene, Edit::Translate { ids: vec![id], by: (0.001, 0.0) }, g).expect("moves");
        }
        assert_eq!(h.len(), 1);
        let dragged = scene.clone();
        assert!(h.undo(&mut scene));
        assert_eq!(scene, before);
        assert!(h.redo(&mut scene));
        assert_eq!(scene, dragged);
        assert_eq!(h.undo_label(), Some("move vertex"));
    }

    #[test]
    fn separate_edits_are_separate_steps_and_a_new_edit_clears_redo() {
        let (mut scene, id) = scene_with_square();
        let mut h = History::default();
        h.apply(&mut scene, Edit::Rename { id, name: "a".into() }).expect("renames");
        h.apply(&mut scene, Edit::Rename { id, name: "b".into() }).expect("renames");
        assert_eq!(h.len(), 2);
        assert!(h.undo(&mut scene));
        assert_eq!(scene.objects[0].name, "a");
        assert!(h.can_redo());
        h.apply(&mut scene, Edit::Rename { id, name: "c".into() }).expect("renames");
        assert!(!h.can_redo());
    }

    #[test]
    fn the_depth_limit_drops_the_oldest_steps() {
        let (mut scene, id) = scene_with_square();
        let mut h = History::new(3);
        for k in 0..10 {
            h.apply(&mut scene, Edit::Rename { id, name: format!("n{k}") }).expect("renames");
        }
        assert_eq!(h.len(), 3);
        while h.undo(&mut scene) {}
        assert_eq!(scene.objects[0].name, "n6");
    }

    #[test]
    fn a_failed_edit_leaves_the_history_alone() {
        let (mut scene, _) = scene_with_square();
        let mut h = History::default();
        assert!(h.apply(&mut scene, Edit::RemoveObject { id: 99 }).is_err());
        assert!(!h.can_undo());
    }
}
