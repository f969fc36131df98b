//! Edits: the one way a document changes.
//!
//! Every change a user can make is an [`Edit`]. [`apply`] carries one out and returns its
//! inverse: applying the inverse gives back exactly the scene before (field for field, bit
//! for bit), which is what undo is built on (see [`super::History`]). An edit that cannot be
//! carried out leaves the scene untouched and says why. Each applied edit bumps
//! [`Scene::revision`].
//!
//! Edits check what they need to stay well formed (the object exists, the vertex exists, a
//! number is finite, an id is free) but not whether the result makes optical sense: a user
//! typing a value passes through states that [`super::validate`] reports, and those must
//! still be editable.
//!
//! Geometric edits (translate, rotate, mirror, vertex insertion and removal, bulges) return a
//! snapshot of the objects they touched as their inverse, because moving something back by
//! the opposite amount would not give the same floating-point numbers.

use std::fmt;

use super::shapes::Shape;
use super::{Object, ObjectKind, Path, Point, Scene, TraceSettings};
use crate::geom::{Edge, Vec2};
use crate::optics::Material;

/// One change to a scene. Units are millimetres and degrees, points `(x, y)` with Y up.
#[derive(Clone, Debug, PartialEq)]
pub enum Edit {
    /// Insert `object` at position `index` of the object list (clamped to the end). Its id
    /// must be unused; [`Edit::add_new`] builds one with the scene's next id.
    AddObject {
        index: usize,
        object: Object,
    },
    RemoveObject {
        id: u64,
    },
    Rename {
        id: u64,
        name: String,
    },
    /// Move the object to position `to_index` of the list (clamped to the end): the drawing
    /// and file order.
    Reorder {
        id: u64,
        to_index: usize,
    },
    /// Replace the object's name and body (any field of any object); the id stays.
    ReplaceObject {
        id: u64,
        object: Object,
    },
    /// Move vertex `vertex` of a free outline or a thin element's path, an end of a
    /// Lambertian emitter (0 = `a`, 1 = `b`), a point source's position (0) or a beam's
    /// centre (0) to `to`.
    MoveVertex {
        id: u64,
        vertex: usize,
        to: Point,
    },
    /// Split edge `edge` (from vertex `edge` to the next) of a free outline or a path with a
    /// new vertex at index `edge + 1`. A straight edge gets the vertex at `point`; an arc is
    /// split into two arcs of the same circle at the point of the arc nearest `point`.
    InsertVertex {
        id: u64,
        edge: usize,
        point: Point,
    },
    /// Remove a vertex of a free outline (at least 3 stay) or a path (at least 2 stay); the
    /// two edges that met there become one straight edge.
    DeleteVertex {
        id: u64,
        vertex: usize,
    },
    /// Set the bulge of edge `edge` of a free outline or a path (0 straight; see
    /// [`Edge`] for the sign).
    SetBulge {
        id: u64,
        edge: usize,
        bulge: f64,
    },
    /// Move objects by `by`.
    Translate {
        ids: Vec<u64>,
        by: Point,
    },
    /// Rotate objects counter-clockwise by `angle_deg` about `pivot`.
    Rotate {
        ids: Vec<u64>,
        pivot: Point,
        angle_deg: f64,
    },
    /// Mirror objects about the line through `point` at `direction_deg` from +x. Primitives
    /// symmetric enough to stay primitives do (rectangle, prism, lens, ball, pipe); a wedge
    /// or a notched plate becomes a free outline.
    Mirror {
        ids: Vec<u64>,
        point: Point,
        direction_deg: f64,
    },
    /// Set a solid's shape: change a primitive's parameters, or give a free outline.
    SetShape {
        id: u64,
        shape: Shape,
    },
    /// Turn a solid's primitive into a free outline with the same edges.
    ToFreeOutline {
        id: u64,
    },
    /// Set a solid's material by name.
    SetMaterial {
        id: u64,
        material: String,
    },
    SetSettings(TraceSettings),
    SetAmbient(String),
    SetTitle(String),
    SetNotes(String),
    /// Add a material to the file's own list at `index` (clamped to the end).
    InsertMaterial {
        index: usize,
        material: Material,
    },
    /// Replace the file material called `name`; the new one may have another name.
    SetMaterialDef {
        name: String,
        material: Material,
    },
    RemoveMaterial {
        name: String,
    },
    /// Several edits in order, as one: all are applied or none.
    Batch(Vec<Edit>),
}

/// Why an edit could not be applied. The scene is unchanged.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum EditError {
    #[error("there is no object with id {0}")]
    NoObject(u64),
    #[error("the id {0} is already used by another object; new objects take the scene's next id")]
    IdInUse(u64),
    #[error("object {id} has no vertex {vertex}")]
    NoVertex { id: u64, vertex: usize },
    #[error("object {id} has no edge {edge}")]
    NoEdge { id: u64, edge: usize },
    #[error("object {id} is a {word} kept by its parameters; turn it into a free outline to edit its vertices")]
    NotFree { id: u64, word: &'static str },
    #[error("object {id} ({word}) has no vertices to edit")]
    NoVertices { id: u64, word: &'static str },
    #[error("object {id} needs at least {min} vertices")]
    TooFewVertices { id: u64, min: usize },
    #[error("object {0} is not a solid")]
    NotASolid(u64),
    #[error("the file defines no material called \"{0}\"")]
    NoMaterial(String),
    #[error("the file already defines a material called \"{0}\"")]
    MaterialExists(String),
    #[error("{what} must be a finite number")]
    NotFinite { what: &'static str },
    #[error("the {word} cannot be turned into an outline: {reason}")]
    Shape { word: &'static str, reason: String },
}

impl Edit {
    /// An [`Edit::AddObject`] appending a new object with the scene's next id.
    pub fn add_new(scene: &Scene, name: &str, kind: ObjectKind) -> Edit {
        let id = scene.next_id.max(scene.objects.iter().map(|o| o.id).max().map_or(1, |m| m.saturating_add(1)));
        Edit::AddObject { index: scene.objects.len(), object: Object { id, name: name.to_owned(), kind } }
    }

    /// A short description for menus and the undo list, e.g. "move vertex", "rotate 3 objects".
    pub fn label(&self) -> String {
        let objects = |ids: &[u64]| {
            if ids.len() == 1 { "object".to_owned() } else { format!("{} objects", ids.len()) }
        };
        match self {
            Self::AddObject { object, .. } => format!("add {}", object.kind.word()),
            Self::RemoveObject { .. } => "delete object".to_owned(),
            Self::Rename { .. } => "rename".to_owned(),
            Self::Reorder { .. } => "reorder".to_owned(),
            Self::ReplaceObject { .. } => "edit properties".to_owned(),
            Self::MoveVertex { .. } => "move vertex".to_owned(),
            Self::InsertVertex { .. } => "insert vertex".to_owned(),
            Self::DeleteVertex { .. } => "delete vertex".to_owned(),
            Self::SetBulge { .. } => "bend edge".to_owned(),
            Self::Translate { ids, .. } => format!("move {}", objects(ids)),
            Self::Rotate { ids, .. } => format!("rotate {}", objects(ids)),
            Self::Mirror { ids, .. } => format!("mirror {}", objects(ids)),
            Self::SetShape { .. } => "edit shape".to_owned(),
            Self::ToFreeOutline { .. } => "make free outline".to_owned(),
            Self::SetMaterial { .. } => "set material".to_owned(),
            Self::SetSettings(_) => "trace settings".to_owned(),
            Self::SetAmbient(_) => "ambient medium".to_owned(),
            Self::SetTitle(_) => "title".to_owned(),
            Self::SetNotes(_) => "notes".to_owned(),
            Self::InsertMaterial { .. } => "add material".to_owned(),
            Self::SetMaterialDef { .. } => "edit material".to_owned(),
            Self::RemoveMaterial { .. } => "delete material".to_owned(),
            Self::Batch(edits) => match edits.as_slice() {
                [one] => one.label(),
                _ => format!("{} changes", edits.len()),
            },
        }
    }
}

impl fmt::Display for Edit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.label())
    }
}

/// Applies `edit` to `scene`. On success the revision is bumped and the inverse edit is
/// returned; on failure the scene is unchanged.
pub fn apply(scene: &mut Scene, edit: Edit) -> Result<Edit, EditError> {
    let next_id = scene.next_id;
    match apply_inner(scene, edit) {
        Ok(inverse) => {
            scene.revision = scene.revision.wrapping_add(1);
            Ok(inverse)
        }
        Err(e) => {
            // A batch that added an object before failing rolled the object back; its id
            // was never seen outside, so the next id goes back too.
            scene.next_id = next_id;
            Err(e)
        }
    }
}

fn apply_inner(scene: &mut Scene, edit: Edit) -> Result<Edit, EditError> {
    match edit {
        Edit::AddObject { .. }
        | Edit::RemoveObject { .. }
        | Edit::Rename { .. }
        | Edit::Reorder { .. }
        | Edit::ReplaceObject { .. } => objects_edit(scene, edit),
        Edit::MoveVertex { .. } | Edit::InsertVertex { .. } | Edit::DeleteVertex { .. } | Edit::SetBulge { .. } => {
            vertices_edit(scene, &edit)
        }
        Edit::Translate { .. } | Edit::Rotate { .. } | Edit::Mirror { .. } => placement_edit(scene, edit),
        Edit::SetShape { .. } | Edit::ToFreeOutline { .. } | Edit::SetMaterial { .. } => solid_edit(scene, edit),
        Edit::SetSettings(_)
        | Edit::SetAmbient(_)
        | Edit::SetTitle(_)
        | Edit::SetNotes(_)
        | Edit::InsertMaterial { .. }
        | Edit::SetMaterialDef { .. }
        | Edit::RemoveMaterial { .. } => document_edit(scene, edit),
        Edit::Batch(edits) => {
            let mut inverses: Vec<Edit> = Vec::with_capacity(edits.len());
            for e in edits {
                match apply_inner(scene, e) {
                    Ok(inv) => inverses.push(inv),
                    Err(err) => {
                        // Undo what was done, newest first, so the scene is as it was.
                        for inv in inverses.into_iter().rev() {
                            // An inverse of an applied edit always applies.
                            let _ = apply_inner(scene, inv);
                        }
                        return Err(err);
                    }
                }
            }
            inverses.reverse();
            Ok(Edit::Batch(inverses))
        }
    }
}

/// Adding, removing, naming and ordering objects.
fn objects_edit(scene: &mut Scene, edit: Edit) -> Result<Edit, EditError> {
    match edit {
        Edit::AddObject { index, object } => {
            if scene.object_index(object.id).is_some() {
                return Err(EditError::IdInUse(object.id));
            }
            let id = object.id;
            scene.next_id = scene.next_id.max(id.saturating_add(1));
            let index = index.min(scene.objects.len());
            scene.objects.insert(index, object);
            Ok(Edit::RemoveObject { id })
        }
        Edit::RemoveObject { id } => {
            let index = index_of(scene, id)?;
            let object = scene.objects.remove(index);
            Ok(Edit::AddObject { index, object })
        }
        Edit::Rename { id, name } => {
            let o = object_mut(scene, id)?;
            let old = std::mem::replace(&mut o.name, name);
            Ok(Edit::Rename { id, name: old })
        }
        Edit::Reorder { id, to_index } => {
            let from = index_of(scene, id)?;
            let object = scene.objects.remove(from);
            let to = to_index.min(scene.objects.len());
            scene.objects.insert(to, object);
            Ok(Edit::Reorder { id, to_index: from })
        }
        Edit::ReplaceObject { id, object } => {
            let o = object_mut(scene, id)?;
            let mut object = object;
            object.id = id;
            let old = std::mem::replace(o, object);
            Ok(Edit::ReplaceObject { id, object: old })
        }
        _ => unreachable!("dispatched by apply_inner"),
    }
}

/// Editing the vertices and edges of free outlines, paths and source handles.
fn vertices_edit(scene: &mut Scene, edit: &Edit) -> Result<Edit, EditError> {
    match *edit {
        Edit::MoveVertex { id, vertex, to } => {
            finite_point(to, "the new vertex position")?;
            let o = object_mut(scene, id)?;
            let p = handle_mut(o, vertex)?;
            let old = std::mem::replace(p, to);
            Ok(Edit::MoveVertex { id, vertex, to: old })
        }
        Edit::InsertVertex { id, edge, point } => {
            finite_point(point, "the new vertex position")?;
            with_snapshot(scene, id, |o| {
                let mut v = vertices_mut(o)?;
                if edge >= v.n_edges() {
                    return Err(EditError::NoEdge { id, edge });
                }
                v.fill_bulges();
                let e = v.edge(edge);
                let (point, b1, b2) = split_edge(&e, point);
                v.points.insert(edge + 1, point);
                v.bulges[edge] = b1;
                v.bulges.insert(edge + 1, b2);
                Ok(())
            })
        }
        Edit::DeleteVertex { id, vertex } => with_snapshot(scene, id, |o| {
            let mut v = vertices_mut(o)?;
            if vertex >= v.points.len() {
                return Err(EditError::NoVertex { id, vertex });
            }
            let min = if v.closed { 3 } else { 2 };
            if v.points.len() <= min {
                return Err(EditError::TooFewVertices { id, min });
            }
            v.fill_bulges();
            let n = v.points.len();
            v.points.remove(vertex);
            if v.closed {
                // Edges vertex−1 and vertex merge into one straight edge at vertex−1.
                let before = (vertex + n - 1) % n;
                v.bulges[before] = 0.0;
                v.bulges.remove(vertex);
            } else if vertex == 0 {
                v.bulges.remove(0);
            } else {
                v.bulges[vertex - 1] = 0.0;
                v.bulges.remove(vertex.min(v.bulges.len() - 1));
            }
            Ok(())
        }),
        Edit::SetBulge { id, edge, bulge } => {
            if !bulge.is_finite() {
                return Err(EditError::NotFinite { what: "the bulge" });
            }
            with_snapshot(scene, id, |o| {
                let mut v = vertices_mut(o)?;
                if edge >= v.n_edges() {
                    return Err(EditError::NoEdge { id, edge });
                }
                v.fill_bulges();
                v.bulges[edge] = bulge;
                Ok(())
            })
        }
        _ => unreachable!("dispatched by apply_inner"),
    }
}

/// Moving, turning and mirroring whole objects.
fn placement_edit(scene: &mut Scene, edit: Edit) -> Result<Edit, EditError> {
    match edit {
        Edit::Translate { ids, by } => {
            finite_point(by, "the displacement")?;
            with_snapshots(scene, &ids, |o| {
                transform(&mut o.kind, &Similarity::translation(by));
                Ok(())
            })
        }
        Edit::Rotate { ids, pivot, angle_deg } => {
            finite_point(pivot, "the pivot")?;
            if !angle_deg.is_finite() {
                return Err(EditError::NotFinite { what: "the angle" });
            }
            with_snapshots(scene, &ids, |o| {
                transform(&mut o.kind, &Similarity::rotation(pivot, angle_deg));
                Ok(())
            })
        }
        Edit::Mirror { ids, point, direction_deg } => {
            finite_point(point, "the mirror line's point")?;
            if !direction_deg.is_finite() {
                return Err(EditError::NotFinite { what: "the mirror line's direction" });
            }
            with_snapshots(scene, &ids, |o| mirror(&mut o.kind, point, direction_deg))
        }
        _ => unreachable!("dispatched by apply_inner"),
    }
}

/// A solid's shape and material.
fn solid_edit(scene: &mut Scene, edit: Edit) -> Result<Edit, EditError> {
    match edit {
        Edit::SetShape { id, shape } => {
            let solid = solid_mut(scene, id)?;
            let old = std::mem::replace(&mut solid.shape, shape);
            Ok(Edit::SetShape { id, shape: old })
        }
        Edit::ToFreeOutline { id } => {
            let solid = solid_mut(scene, id)?;
            let word = solid.shape.word();
            let free = solid.shape.to_free().map_err(|reason| EditError::Shape { word, reason })?;
            let old = std::mem::replace(&mut solid.shape, free);
            Ok(Edit::SetShape { id, shape: old })
        }
        Edit::SetMaterial { id, material } => {
            let solid = solid_mut(scene, id)?;
            let old = std::mem::replace(&mut solid.material, material);
            Ok(Edit::SetMaterial { id, material: old })
        }
        _ => unreachable!("dispatched by apply_inner"),
    }
}

/// Settings, ambient medium, title, notes and the file's own materials.
fn document_edit(scene: &mut Scene, edit: Edit) -> Result<Edit, EditError> {
    match edit {
        Edit::SetSettings(settings) => Ok(Edit::SetSettings(std::mem::replace(&mut scene.settings, settings))),
        Edit::SetAmbient(name) => Ok(Edit::SetAmbient(std::mem::replace(&mut scene.ambient, name))),
        Edit::SetTitle(title) => Ok(Edit::SetTitle(std::mem::replace(&mut scene.title, title))),
        Edit::SetNotes(notes) => Ok(Edit::SetNotes(std::mem::replace(&mut scene.notes, notes))),
        Edit::InsertMaterial { index, material } => {
            if scene.materials.iter().any(|m| m.name == material.name) {
                return Err(EditError::MaterialExists(material.name));
            }
            let name = material.name.clone();
            let index = index.min(scene.materials.len());
            scene.materials.insert(index, material);
            Ok(Edit::RemoveMaterial { name })
        }
        Edit::SetMaterialDef { name, material } => {
            let index = material_index(scene, &name)?;
            if material.name != name && scene.materials.iter().any(|m| m.name == material.name) {
                return Err(EditError::MaterialExists(material.name));
            }
            let new_name = material.name.clone();
            let old = std::mem::replace(&mut scene.materials[index], material);
            Ok(Edit::SetMaterialDef { name: new_name, material: old })
        }
        Edit::RemoveMaterial { name } => {
            let index = material_index(scene, &name)?;
            let material = scene.materials.remove(index);
            Ok(Edit::InsertMaterial { index, material })
        }
        _ => unreachable!("dispatched by apply_inner"),
    }
}

fn index_of(scene: &Scene, id: u64) -> Result<usize, EditError> {
    scene.object_index(id).ok_or(EditError::NoObject(id))
}

fn object_mut(scene: &mut Scene, id: u64) -> Result<&mut Object, EditError> {
    scene.objects.iter_mut().find(|o| o.id == id).ok_or(EditError::NoObject(id))
}

fn solid_mut(scene: &mut Scene, id: u64) -> Result<&mut super::Solid, EditError> {
    match &mut object_mut(scene, id)?.kind {
        ObjectKind::Solid(s) => Ok(s),
        _ => Err(EditError::NotASolid(id)),
    }
}

fn material_index(scene: &Scene, name: &str) -> Result<usize, EditError> {
    scene.materials.iter().position(|m| m.name == name).ok_or_else(|| EditError::NoMaterial(name.to_owned()))
}

fn finite_point(p: Point, what: &'static str) -> Result<(), EditError> {
    if p.0.is_finite() && p.1.is_finite() { Ok(()) } else { Err(EditError::NotFinite { what }) }
}

/// Changes one object through `change`, returning a snapshot of it as the inverse. On error
/// the object is restored.
fn with_snapshot(
    scene: &mut Scene,
    id: u64,
    change: impl FnOnce(&mut Object) -> Result<(), EditError>,
) -> Result<Edit, EditError> {
    let o = object_mut(scene, id)?;
    let old = o.clone();
    if let Err(e) = change(o) {
        *o = old;
        return Err(e);
    }
    Ok(Edit::ReplaceObject { id, object: old })
}

/// Changes several objects, returning snapshots of all of them as the inverse (all or none).
fn with_snapshots(
    scene: &mut Scene,
    ids: &[u64],
    change: impl Fn(&mut Object) -> Result<(), EditError>,
) -> Result<Edit, EditError> {
    for &id in ids {
        index_of(scene, id)?;
    }
    let mut done: Vec<Edit> = Vec::with_capacity(ids.len());
    for &id in ids {
        if done.iter().any(|e| matches!(e, Edit::ReplaceObject { id: d, .. } if *d == id)) {
            continue; // listed twice: change it once
        }
        match with_snapshot(scene, id, &change) {
            Ok(inv) => done.push(inv),
            Err(e) => {
                for inv in done.into_iter().rev() {
                    let _ = apply_inner(scene, inv);
                }
                return Err(e);
            }
        }
    }
    Ok(match done.len() {
        1 => done.pop().unwrap_or(Edit::Batch(Vec::new())),
        _ => Edit::Batch(done),
    })
}

/// The point a vertex index names on objects whose vertices are single handles.
fn handle_mut(o: &mut Object, vertex: usize) -> Result<&mut Point, EditError> {
    let id = o.id;
    let no_vertex = EditError::NoVertex { id, vertex };
    match &mut o.kind {
        ObjectKind::Solid(s) => match &mut s.shape {
            Shape::Outline { points, .. } => points.get_mut(vertex).ok_or(no_vertex),
            other => Err(EditError::NotFree { id, word: other.word() }),
        },
        ObjectKind::Mirror(super::Mirror { path, .. })
        | ObjectKind::Absorber(super::Absorber { path })
        | ObjectKind::Splitter(super::Splitter { path, .. })
        | ObjectKind::Detector(super::Detector { path, .. }) => path.points.get_mut(vertex).ok_or(no_vertex),
        ObjectKind::LambertianSource(l) => match vertex {
            0 => Ok(&mut l.a),
            1 => Ok(&mut l.b),
            _ => Err(no_vertex),
        },
        ObjectKind::PointSource(p) if vertex == 0 => Ok(&mut p.position),
        ObjectKind::BeamSource(b) if vertex == 0 => Ok(&mut b.center),
        ObjectKind::PointSource(_) | ObjectKind::BeamSource(_) => Err(no_vertex),
    }
}

/// The vertex list of a free outline (closed) or a path (open), with one bulge per edge.
struct Vertices<'a> {
    points: &'a mut Vec<Point>,
    bulges: &'a mut Vec<f64>,
    closed: bool,
}

impl Vertices<'_> {
    fn n_edges(&self) -> usize {
        if self.closed { self.points.len() } else { self.points.len().saturating_sub(1) }
    }

    /// Writes out the "all straight" empty bulge list as zeros, one per edge.
    fn fill_bulges(&mut self) {
        let n = self.n_edges();
        self.bulges.resize(n, 0.0);
    }

    fn edge(&self, k: usize) -> Edge {
        let a = self.points[k];
        let b = self.points[(k + 1) % self.points.len()];
        Edge { a: Vec2::new(a.0, a.1), b: Vec2::new(b.0, b.1), bulge: self.bulges.get(k).copied().unwrap_or(0.0) }
    }
}

fn vertices_mut(o: &mut Object) -> Result<Vertices<'_>, EditError> {
    let id = o.id;
    let word = o.kind.word();
    match &mut o.kind {
        ObjectKind::Solid(s) => match &mut s.shape {
            Shape::Outline { points, bulges } => Ok(Vertices { points, bulges, closed: true }),
            other => Err(EditError::NotFree { id, word: other.word() }),
        },
        ObjectKind::Mirror(super::Mirror { path, .. })
        | ObjectKind::Absorber(super::Absorber { path })
        | ObjectKind::Splitter(super::Splitter { path, .. })
        | ObjectKind::Detector(super::Detector { path, .. }) => {
            let Path { points, bulges } = path;
            Ok(Vertices { points, bulges, closed: false })
        }
        _ => Err(EditError::NoVertices { id, word }),
    }
}

/// Where to split `e` near `point`: the new vertex and the bulges of the two halves.
fn split_edge(e: &Edge, point: Point) -> (Point, f64, f64) {
    if !e.is_arc() {
        return (point, 0.0, 0.0);
    }
    let u = e.param_of(Vec2::new(point.0, point.1));
    let on = e.point_at(u);
    let sweep = e.sweep();
    ((on.x, on.y), (sweep * u / 4.0).tan(), (sweep * (1.0 - u) / 4.0).tan())
}

/// A rotation about a pivot followed by a translation: `p ↦ R(p − pivot) + pivot + shift`.
struct Similarity {
    pivot: Point,
    angle_deg: f64,
    cos: f64,
    sin: f64,
    shift: Point,
}

impl Similarity {
    fn translation(by: Point) -> Self {
        Self { pivot: (0.0, 0.0), angle_deg: 0.0, cos: 1.0, sin: 0.0, shift: by }
    }

    fn rotation(pivot: Point, angle_deg: f64) -> Self {
        let (sin, cos) = angle_deg.to_radians().sin_cos();
        Self { pivot, angle_deg, cos, sin, shift: (0.0, 0.0) }
    }

    fn point(&self, p: Point) -> Point {
        if self.angle_deg == 0.0 {
            return (p.0 + self.shift.0, p.1 + self.shift.1);
        }
        let (x, y) = (p.0 - self.pivot.0, p.1 - self.pivot.1);
        (
            self.cos * x - self.sin * y + self.pivot.0 + self.shift.0,
            self.sin * x + self.cos * y + self.pivot.1 + self.shift.1,
        )
    }
}

/// Moves and turns an object by `s` (shapes keep their parameters; angles turn with it).
fn transform(kind: &mut ObjectKind, s: &Similarity) {
    let turn = s.angle_deg;
    let map_path = |path: &mut Path| {
        for p in &mut path.points {
            *p = s.point(*p);
        }
    };
    match kind {
        ObjectKind::Solid(solid) => match &mut solid.shape {
            Shape::Outline { points, .. } => {
                for p in points {
                    *p = s.point(*p);
                }
            }
            Shape::Ball { position, .. } => *position = s.point(*position),
            Shape::Rectangle { position, rotation_deg, .. }
            | Shape::Wedge { position, rotation_deg, .. }
            | Shape::Prism { position, rotation_deg, .. }
            | Shape::Lens { position, rotation_deg, .. }
            | Shape::Pipe { position, rotation_deg, .. }
            | Shape::NotchedPlate { position, rotation_deg, .. } => {
                *position = s.point(*position);
                if turn != 0.0 {
                    *rotation_deg += turn;
                }
            }
        },
        ObjectKind::Mirror(super::Mirror { path, .. })
        | ObjectKind::Absorber(super::Absorber { path })
        | ObjectKind::Splitter(super::Splitter { path, .. })
        | ObjectKind::Detector(super::Detector { path, .. }) => map_path(path),
        ObjectKind::PointSource(p) => {
            p.position = s.point(p.position);
            if turn != 0.0 {
                p.start_deg += turn;
                p.end_deg += turn;
            }
        }
        ObjectKind::BeamSource(b) => {
            b.center = s.point(b.center);
            if turn != 0.0 {
                b.direction_deg += turn;
            }
        }
        ObjectKind::LambertianSource(l) => {
            l.a = s.point(l.a);
            l.b = s.point(l.b);
        }
    }
}

/// Mirrors an object about the line through `point` at `direction_deg`.
///
/// A mirror image reverses the sense of rotation, so arcs change the sign of their bulge.
/// Things with a side keep the mirrored side: a one-sided mirror's path and a Lambertian
/// emitter's ends are reversed so the same (mirrored) side reflects or emits.
fn mirror(kind: &mut ObjectKind, point: Point, direction_deg: f64) -> Result<(), EditError> {
    let (sin2, cos2) = (2.0 * direction_deg).to_radians().sin_cos();
    let image = |p: Point| {
        let (x, y) = (p.0 - point.0, p.1 - point.1);
        (cos2 * x + sin2 * y + point.0, sin2 * x - cos2 * y + point.1)
    };
    // A direction θ (degrees) becomes 2φ − θ.
    let angle = |theta: f64| 2.0 * direction_deg - theta;
    let mirror_path = |path: &mut Path, keep_side: bool| {
        for p in &mut path.points {
            *p = image(*p);
        }
        for b in &mut path.bulges {
            *b = -*b;
        }
        if keep_side {
            // Reversing a path reverses every edge (bulge sign flips back) and their order.
            path.points.reverse();
            path.bulges.reverse();
            for b in &mut path.bulges {
                *b = -*b;
            }
        }
    };
    match kind {
        ObjectKind::Solid(solid) => match &mut solid.shape {
            Shape::Outline { points, bulges } => {
                for p in points.iter_mut() {
                    *p = image(*p);
                }
                for b in bulges.iter_mut() {
                    *b = -*b;
                }
            }
            Shape::Ball { position, .. } => *position = image(*position),
            // Symmetric about their own x axis: the image is the shape turned to 2φ − θ.
            Shape::Rectangle { position, rotation_deg, .. } | Shape::Lens { position, rotation_deg, .. } => {
                *position = image(*position);
                *rotation_deg = angle(*rotation_deg);
            }
            // A pipe mirrored about its own axis bends the other way.
            Shape::Pipe { position, rotation_deg, bend_deg, .. } => {
                *position = image(*position);
                *rotation_deg = angle(*rotation_deg);
                *bend_deg = -*bend_deg;
            }
            // Symmetric about its own y axis (apex up): turned to 2φ − θ − 180°.
            Shape::Prism { position, rotation_deg, .. } => {
                *position = image(*position);
                *rotation_deg = angle(*rotation_deg) - 180.0;
            }
            Shape::Wedge { .. } | Shape::NotchedPlate { .. } => {
                let word = solid.shape.word();
                let free = solid.shape.to_free().map_err(|reason| EditError::Shape { word, reason })?;
                solid.shape = free;
                if let Shape::Outline { points, bulges } = &mut solid.shape {
                    for p in points.iter_mut() {
                        *p = image(*p);
                    }
                    for b in bulges.iter_mut() {
                        *b = -*b;
                    }
                }
            }
        },
        ObjectKind::Mirror(m) => {
            let one_sided = m.one_sided;
            mirror_path(&mut m.path, one_sided);
        }
        ObjectKind::Absorber(super::Absorber { path })
        | ObjectKind::Splitter(super::Splitter { path, .. })
        | ObjectKind::Detector(super::Detector { path, .. }) => mirror_path(path, false),
        ObjectKind::PointSource(p) => {
            p.position = image(p.position);
            let (start, end) = (angle(p.end_deg), angle(p.start_deg));
            p.start_deg = start;
            p.end_deg = end;
        }
        ObjectKind::BeamSource(b) => {
            b.center = image(b.center);
            b.direction_deg = angle(b.direction_deg);
        }
        ObjectKind::LambertianSource(l) => {
            let (a, b) = (image(l.b), image(l.a));
            l.a = a;
            l.b = b;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::{Emission, LambertianSource, PointSource, Solid};

    fn square(scene: &mut Scene) -> u64 {
        scene.add(
            "square",
            ObjectKind::Solid(Solid {
                shape: Shape::Outline { points: vec![(0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0)], bulges: vec![] },
                material: "pmma".to_owned(),
            }),
        )
    }

    fn outline_of(scene: &Scene, id: u64) -> (Vec<Point>, Vec<f64>) {
        match &scene.object(id).map(|o| &o.kind) {
            Some(ObjectKind::Solid(Solid { shape: Shape::Outline { points, bulges }, .. })) => {
                (points.clone(), bulges.clone())
            }
            other => panic!("not a free outline: {other:?}"),
        }
    }

    #[test]
    fn every_edit_bumps_the_revision_and_its_inverse_restores_the_scene() {
        let mut scene = Scene::new("t");
        let id = square(&mut scene);
        let before = scene.clone();
        let inv = apply(&mut scene, Edit::MoveVertex { id, vertex: 2, to: (3.0, 3.0) }).expect("applies");
        assert_eq!(scene.revision, 1);
        assert_eq!(outline_of(&scene, id).0[2], (3.0, 3.0));
        apply(&mut scene, inv).expect("inverse applies");
        assert_eq!(scene.revision, 2);
        assert_eq!(scene, before);
    }

    #[test]
    fn a_failed_edit_changes_nothing() {
        let mut scene = Scene::new("t");
        let id = square(&mut scene);
        let before = scene.clone();
        assert_eq!(
            apply(&mut scene, Edit::MoveVertex { id, vertex: 9, to: (1.0, 1.0) }),
            Err(EditError::NoVertex { id, vertex: 9 })
        );
        let batch =
            Edit::Batch(vec![Edit::Rename { id, name: "renamed".into() }, Edit::DeleteVertex { id: 77, vertex: 0 }]);
        assert!(apply(&mut scene, batch).is_err());
        assert_eq!(scene, before);
        assert_eq!(scene.revision, 0);
    }

    #[test]
    fn ids_are_not_reused_after_deleting_the_newest_object() {
        let mut scene = Scene::new("t");
        let a = square(&mut scene);
        let b = square(&mut scene);
        apply(&mut scene, Edit::RemoveObject { id: b }).expect("removes");
        let add = Edit::add_new(&scene, "again", scene.objects[0].kind.clone());
        let Edit::AddObject { object, .. } = &add else { panic!() };
        assert!(object.id > b && object.id != a);
        apply(&mut scene, add).expect("adds");
    }

    #[test]
    fn inserting_a_vertex_on_an_arc_keeps_the_circle() {
        let mut scene = Scene::new("t");
        let id = square(&mut scene);
        apply(&mut scene, Edit::SetBulge { id, edge: 0, bulge: 0.5 }).expect("bends");
        let before = crate::geom::Edge { a: Vec2::new(0.0, 0.0), b: Vec2::new(2.0, 0.0), bulge: 0.5 };
        let arc = before.arc().expect("an arc");
        apply(&mut scene, Edit::InsertVertex { id, edge: 0, point: (0.7, -0.9) }).expect("inserts");
        let (points, bulges) = outline_of(&scene, id);
        assert_eq!(points.len(), 5);
        let p = Vec2::new(points[1].0, points[1].1);
        assert!(((p - arc.center).norm() - arc.radius).abs() < 1e-12);
        // The two halves together sweep the original angle.
        let total = 4.0 * bulges[0].atan() + 4.0 * bulges[1].atan();
        assert!((total - 4.0 * 0.5f64.atan()).abs() < 1e-12);
    }

    #[test]
    fn deleting_vertices_stops_at_a_triangle() {
        let mut scene = Scene::new("t");
        let id = square(&mut scene);
        apply(&mut scene, Edit::DeleteVertex { id, vertex: 3 }).expect("deletes");
        assert_eq!(
            apply(&mut scene, Edit::DeleteVertex { id, vertex: 0 }),
            Err(EditError::TooFewVertices { id, min: 3 })
        );
    }

    /// Vertices of a solid's outline, sorted, for comparing shapes made different ways.
    fn vertex_set(shape: &Shape) -> Vec<(f64, f64)> {
        let o = shape.outline().expect("an outline");
        let mut v: Vec<(f64, f64)> = o.vertices.iter().map(|p| (p.x, p.y)).collect();
        v.sort_by(|a, b| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal));
        v
    }

    #[test]
    fn mirrored_primitives_are_the_mirror_images_of_their_outlines() {
        let shapes = [
            Shape::Rectangle { position: (3.0, 1.0), width: 4.0, height: 1.0, rotation_deg: 20.0 },
            Shape::Prism { position: (1.0, 2.0), apex_deg: 50.0, side: 3.0, rotation_deg: 10.0 },
            Shape::Lens { position: (0.0, 1.0), diameter: 6.0, thickness: 2.0, r1: 8.0, r2: -12.0, rotation_deg: 30.0 },
            Shape::Pipe {
                position: (1.0, 1.0),
                width: 1.0,
                length_in: 3.0,
                bend_radius: 2.0,
                bend_deg: 60.0,
                length_out: 2.0,
                rotation_deg: 15.0,
            },
            Shape::Wedge {
                position: (0.0, 0.0),
                length: 5.0,
                thickness_start: 1.0,
                thickness_end: 2.0,
                rotation_deg: 5.0,
            },
        ];
        let (point, phi) = ((0.5, -1.0), 37.0_f64);
        let (s2, c2) = (2.0 * phi).to_radians().sin_cos();
        for shape in shapes {
            let mut scene = Scene::new("t");
            let id = scene.add("s", ObjectKind::Solid(Solid { shape: shape.clone(), material: "pmma".into() }));
            apply(&mut scene, Edit::Mirror { ids: vec![id], point, direction_deg: phi }).expect("mirrors");
            let ObjectKind::Solid(s) = &scene.objects[0].kind else { panic!() };
            let mut expected: Vec<(f64, f64)> = vertex_set(&shape)
                .into_iter()
                .map(|(x, y)| {
                    let (x, y) = (x - point.0, y - point.1);
                    (c2 * x + s2 * y + point.0, s2 * x - c2 * y + point.1)
                })
                .collect();
            expected.sort_by(|a, b| a.partial_cmp(b).unwrap_or(std::cmp::Ordering::Equal));
            let got = vertex_set(&s.shape);
            assert_eq!(got.len(), expected.len(), "{}", shape.word());
            for (g, e) in got.iter().zip(&expected) {
                assert!((g.0 - e.0).abs() < 1e-9 && (g.1 - e.1).abs() < 1e-9, "{}: {g:?} vs {e:?}", shape.word());
            }
            // The outline's area is kept.
            let a0 = shape.outline().expect("outline").signed_area().abs();
            let a1 = s.shape.outline().expect("outline").signed_area().abs();
            assert!((a0 - a1).abs() < 1e-9 * a0);
        }
    }

    #[test]
    fn rotating_a_source_turns_its_directions() {
        let mut scene = Scene::new("t");
        let id = scene.add(
            "lamp",
            ObjectKind::PointSource(PointSource {
                position: (1.0, 0.0),
                start_deg: -10.0,
                end_deg: 10.0,
                emission: Emission::new(3, 1.0, 550.0),
            }),
        );
        apply(&mut scene, Edit::Rotate { ids: vec![id], pivot: (0.0, 0.0), angle_deg: 90.0 }).expect("rotates");
        let ObjectKind::PointSource(p) = &scene.objects[0].kind else { panic!() };
        assert!((p.position.0).abs() < 1e-15 && (p.position.1 - 1.0).abs() < 1e-15);
        assert_eq!((p.start_deg, p.end_deg), (80.0, 100.0));
    }

    #[test]
    fn mirroring_an_emitter_keeps_it_emitting_toward_the_mirror_image() {
        let mut scene = Scene::new("t");
        // Emits to the left of a → b: toward +y.
        let id = scene.add(
            "led",
            ObjectKind::LambertianSource(LambertianSource {
                a: (0.0, 0.0),
                b: (1.0, 0.0),
                emission: Emission::new(3, 1.0, 550.0),
            }),
        );
        apply(&mut scene, Edit::Mirror { ids: vec![id], point: (0.0, -1.0), direction_deg: 0.0 }).expect("mirrors");
        let ObjectKind::LambertianSource(l) = &scene.objects[0].kind else { panic!() };
        // Now at y = −2, emitting toward −y: the left of a → b must point down.
        let d = (l.b.0 - l.a.0, l.b.1 - l.a.1);
        let left = (-d.1, d.0);
        assert!(left.1 < 0.0 && (l.a.1 + 2.0).abs() < 1e-15);
    }
}
