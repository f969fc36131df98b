//! The scene document: solids, thin elements, sources and detectors, kept as the user made
//! them (primitives by their parameters), plus the trace settings saved with the scene.
//!
//! Units in the document are millimetres and degrees; points are `(x, y)` with Y up.
//! Every object has a stable numeric `id` (never reused within a scene) and a name.

pub mod edit;
pub mod file;
pub mod history;
pub mod pick;
pub mod shapes;
pub mod validate;

use serde::{Deserialize, Serialize};

use crate::geom::{Outline, Vec2};
use crate::optics::Material;

pub use edit::{Edit, EditError, apply};
pub use file::{LoadError, Loaded, SaveError};
pub use history::{Gesture, History};
pub use shapes::Shape;
pub use validate::{GeometryChecks, Problem, validate, validate_with};

/// The version of the scene schema written by this build.
pub const SCENE_VERSION: u32 = 2;
/// The most rays one source may launch.
pub const MAX_RAYS_PER_SOURCE: u32 = 10_000_000;
/// The most wavelengths in one source's spectrum.
pub const MAX_SPECTRUM_LINES: usize = 64;
/// The most bins of a detector histogram.
pub const MAX_DETECTOR_BINS: u32 = 10_000;

/// A point in millimetres.
pub type Point = (f64, f64);

pub fn to_vec(p: Point) -> Vec2 {
    Vec2::new(p.0, p.1)
}

/// The whole document.
///
/// Two scenes are equal (`==`) when their content is: the [`revision`](Scene::revision)
/// counter is not content.
#[derive(Clone, Debug, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scene {
    /// Schema version; see [`SCENE_VERSION`].
    pub version: u32,
    #[serde(default)]
    pub title: String,
    /// Free text: what the scene shows.
    #[serde(default)]
    pub notes: String,
    /// The medium around all solids, by material name (default "air").
    #[serde(default = "default_ambient")]
    pub ambient: String,
    /// Materials defined in this scene, in addition to the built-in library. A name here
    /// takes precedence over a library material of the same name.
    #[serde(default)]
    pub materials: Vec<Material>,
    #[serde(default)]
    pub settings: TraceSettings,
    /// The id the next new object gets. It never decreases, so an id is never given twice,
    /// even after the newest object is deleted. Saved in the file from version 2; a loaded
    /// file is corrected up to one past its largest id.
    #[serde(default)]
    pub next_id: u64,
    pub objects: Vec<Object>,
    /// Bumped by every applied [`Edit`]; a trace records the revision it was made from. Not
    /// saved and not part of equality.
    #[serde(skip)]
    pub revision: u64,
}

impl PartialEq for Scene {
    fn eq(&self, other: &Self) -> bool {
        self.same_content(other) && self.next_id == other.next_id
    }
}

pub(crate) fn default_ambient() -> String {
    "air".to_owned()
}

/// How to trace, saved with the scene (the command line can override each).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct TraceSettings {
    pub mode: TraceMode,
    /// Tree mode: drop a branch when its power falls below this fraction of its source ray's
    /// launch power.
    pub threshold: f64,
    /// Most interface events along one path (tree depth in tree mode); a ray still going
    /// at this point is counted as trapped.
    pub max_depth: u32,
    /// Seed for Monte Carlo sampling.
    pub seed: u64,
    /// Most events stored for drawing and export; the trace keeps counting power beyond.
    pub max_stored_events: usize,
    /// Margin in mm around the scene's bounding box; rays leaving the enlarged box escape.
    pub margin: f64,
}

impl Default for TraceSettings {
    fn default() -> Self {
        Self {
            mode: TraceMode::Tree,
            threshold: 1e-4,
            max_depth: 200,
            seed: 1,
            max_stored_events: 2_000_000,
            margin: 20.0,
        }
    }
}

/// The three ways to follow light.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
pub enum TraceMode {
    /// One path per launched ray: refract where possible, else reflect by TIR. Power is not
    /// split, so the budget describes paths, not watts. At a beam splitter the ray keeps the
    /// larger of the reflected and transmitted shares (the transmitted one on a tie) and the
    /// element absorbs the rest.
    Principal,
    /// Split at every interface into reflected and transmitted children.
    #[default]
    Tree,
    /// Each ray chooses reflection or transmission with the Fresnel probabilities.
    MonteCarlo,
}

/// One object of the scene.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Object {
    /// Stable identity, unique within the scene.
    pub id: u64,
    pub name: String,
    pub kind: ObjectKind,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub enum ObjectKind {
    Solid(Solid),
    Mirror(Mirror),
    Absorber(Absorber),
    Splitter(Splitter),
    Detector(Detector),
    PointSource(PointSource),
    BeamSource(BeamSource),
    LambertianSource(LambertianSource),
}

impl ObjectKind {
    /// A short word for the kind, for messages.
    pub fn word(&self) -> &'static str {
        match self {
            Self::Solid(_) => "solid",
            Self::Mirror(_) => "mirror",
            Self::Absorber(_) => "absorber",
            Self::Splitter(_) => "beam splitter",
            Self::Detector(_) => "detector",
            Self::PointSource(_) => "point source",
            Self::BeamSource(_) => "collimated beam",
            Self::LambertianSource(_) => "Lambertian emitter",
        }
    }

    pub fn is_source(&self) -> bool {
        matches!(self, Self::PointSource(_) | Self::BeamSource(_) | Self::LambertianSource(_))
    }
}

/// A refracting body: a closed shape made of a material.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Solid {
    pub shape: Shape,
    /// Material name (library or scene material).
    pub material: String,
}

/// An open path of straight or arc pieces, for thin elements.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Path {
    pub points: Vec<Point>,
    /// One bulge per piece (`points.len() − 1`), or empty for straight pieces. Bulge is the
    /// tangent of a quarter of the arc's angle; positive bows to the right of the direction
    /// of travel.
    #[serde(default)]
    pub bulges: Vec<f64>,
}

impl Path {
    pub fn segment(a: Point, b: Point) -> Self {
        Self { points: vec![a, b], bulges: Vec::new() }
    }

    /// The pieces as edges.
    pub fn edges(&self) -> Vec<crate::geom::Edge> {
        self.points
            .windows(2)
            .enumerate()
            .map(|(i, w)| crate::geom::Edge {
                a: to_vec(w[0]),
                b: to_vec(w[1]),
                bulge: self.bulges.get(i).copied().unwrap_or(0.0),
            })
            .collect()
    }
}

/// A reflecting surface. Light that is not reflected is absorbed by it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Mirror {
    pub path: Path,
    /// Fraction of power reflected (0–1), the same for s and p.
    pub reflectance: f64,
    /// If true only the left side (seen walking from the first point to the last) reflects;
    /// light arriving from the right is absorbed.
    #[serde(default)]
    pub one_sided: bool,
}

/// A surface that absorbs all light reaching it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Absorber {
    pub path: Path,
}

/// A thin partial reflector. The rest (1 − R − T) is absorbed.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Splitter {
    pub path: Path,
    pub reflectance: f64,
    pub transmittance: f64,
}

/// A surface that absorbs light and records where, at which angle, how much and at which
/// wavelength it arrived.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Detector {
    pub path: Path,
    /// Number of position bins along the detector for its irradiance histogram.
    #[serde(default = "default_bins")]
    pub bins: u32,
    /// Number of angle bins over −90°…90° for its intensity histogram.
    #[serde(default = "default_bins")]
    pub angle_bins: u32,
}

fn default_bins() -> u32 {
    50
}

/// How a source's light is polarised.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize, Default)]
pub enum Polarization {
    /// Half the power in s, half in p.
    #[default]
    Unpolarized,
    /// Electric field out of the drawing plane.
    S,
    /// Electric field in the drawing plane.
    P,
}

/// One line of a source's spectrum.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Line {
    pub nm: f64,
    /// Relative weight; the source's power is shared in proportion to the weights.
    pub weight: f64,
}

/// What every source has: rays, power, spectrum and polarisation.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Emission {
    /// Rays launched per wavelength line.
    pub rays: u32,
    /// Total power of the source in watts (shared over its rays and lines).
    pub power_w: f64,
    pub spectrum: Vec<Line>,
    #[serde(default)]
    pub polarization: Polarization,
}

impl Emission {
    pub fn new(rays: u32, power_w: f64, nm: f64) -> Self {
        Self { rays, power_w, spectrum: vec![Line { nm, weight: 1.0 }], polarization: Polarization::Unpolarized }
    }
}

/// Light from a point, spread evenly in angle over a range of directions.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PointSource {
    pub position: Point,
    /// Directions from `start_deg` to `end_deg` counter-clockwise from +x. The full circle is
    /// `0` to `360`.
    pub start_deg: f64,
    pub end_deg: f64,
    pub emission: Emission,
}

/// A collimated beam: parallel rays spread evenly across a width.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BeamSource {
    pub center: Point,
    pub width: f64,
    /// Direction of travel, counter-clockwise from +x.
    pub direction_deg: f64,
    pub emission: Emission,
}

/// A flat emitter with intensity proportional to cos θ from its normal (an LED die, a
/// diffuser). It emits to the left of the direction from `a` to `b`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LambertianSource {
    pub a: Point,
    pub b: Point,
    pub emission: Emission,
}

impl Scene {
    /// An empty scene in air.
    pub fn new(title: &str) -> Self {
        Self {
            version: SCENE_VERSION,
            title: title.to_owned(),
            notes: String::new(),
            ambient: default_ambient(),
            materials: Vec::new(),
            settings: TraceSettings::default(),
            next_id: 1,
            objects: Vec::new(),
            revision: 0,
        }
    }

    /// Whether two scenes hold the same document, ignoring the revision counter and the
    /// next free id (which an undo does not wind back).
    pub fn same_content(&self, other: &Self) -> bool {
        self.version == other.version
            && self.title == other.title
            && self.notes == other.notes
            && self.ambient == other.ambient
            && self.materials == other.materials
            && self.settings == other.settings
            && self.objects == other.objects
    }

    /// Raises `next_id` past every id in use (after loading or building a scene by hand).
    pub fn fix_next_id(&mut self) {
        let past_max = self.objects.iter().map(|o| o.id).max().map_or(1, |m| m.saturating_add(1));
        self.next_id = self.next_id.max(past_max);
    }

    /// Adds an object with a fresh id and returns the id. This builds a scene directly (for
    /// files and tests) and does not bump the revision; an editor adds through
    /// [`Edit::add_new`] so the change can be undone.
    pub fn add(&mut self, name: &str, kind: ObjectKind) -> u64 {
        self.fix_next_id();
        let id = self.next_id;
        self.next_id += 1;
        self.objects.push(Object { id, name: name.to_owned(), kind });
        id
    }

    pub fn object(&self, id: u64) -> Option<&Object> {
        self.objects.iter().find(|o| o.id == id)
    }

    /// Position of the object with `id` in [`Scene::objects`].
    pub fn object_index(&self, id: u64) -> Option<usize> {
        self.objects.iter().position(|o| o.id == id)
    }

    pub fn object_by_name(&self, name: &str) -> Option<&Object> {
        self.objects.iter().find(|o| o.name == name)
    }

    /// Looks a material up: the scene's own first, then the built-in library.
    pub fn material(&self, name: &str) -> Option<Material> {
        self.materials.iter().find(|m| m.name == name).cloned().or_else(|| crate::optics::library_material(name))
    }

    /// The outline of every solid, in object order, with its object index (or the reason
    /// it cannot be built).
    pub fn solid_outlines(&self) -> Vec<(usize, Result<Outline, String>)> {
        self.objects
            .iter()
            .enumerate()
            .filter_map(|(i, o)| match &o.kind {
                ObjectKind::Solid(s) => Some((i, s.shape.outline())),
                _ => None,
            })
            .collect()
    }
}
