//! Parameter sweeps: change one number of the scene in steps, trace each time, and report a
//! metric of the result.
//!
//! A parameter is named `OBJECT.FIELD` as written in the scene file: `beam.direction_deg`,
//! `guide.shape.notch_depth`, `lamp.emission.spectrum[0].nm`, `settings.threshold`,
//! `materials[glass].dispersion.n`. OBJECT is an object's name or id. The field is found
//! generically: the object (or the settings, or the material) is turned into a
//! `serde_json::Value`, the number at the path is replaced and the value is turned back, so
//! every numeric field works without a hand-kept list. (JSON values, not RON values, because
//! `ron::Value` drops enum variant names, which the round trip needs.)

use std::fmt;

use serde::Serialize;
use serde::de::DeserializeOwned;
use serde_json::Value;

use super::uniformity::detector_uniformity;
use crate::geom::cross;
use crate::scene::{Scene, TraceSettings};
use crate::trace::{Compiled, Control, NONE, Trace, TraceConfig, trace_compiled};

/// Why a sweep cannot run. Each message lists what exists.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SweepError {
    #[error("{0}")]
    Param(String),
    #[error("{0}")]
    Metric(String),
    #[error("--steps must be at least 1")]
    NoSteps,
    #[error("the range must be finite numbers, it is {0} to {1}")]
    BadRange(f64, f64),
}

/// What the path starts at.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Root {
    /// An object, by id.
    Object(u64),
    /// The scene's trace settings.
    Settings,
    /// A scene material, by name.
    Material(String),
}

/// One step of a field path.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Field {
    Name(String),
    Index(usize),
}

/// A numeric field of a scene, such as `beam.direction_deg`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ParamPath {
    pub root: Root,
    pub fields: Vec<Field>,
    /// As the user wrote it.
    pub text: String,
}

impl fmt::Display for ParamPath {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.text)
    }
}

fn object_list(scene: &Scene) -> String {
    let mut names: Vec<String> = scene.objects.iter().map(|o| format!("{} (id {})", o.name, o.id)).collect();
    names.push("settings".to_owned());
    let materials: Vec<&str> = scene.materials.iter().map(|m| m.name.as_str()).collect();
    if !materials.is_empty() {
        names.push(format!("materials[{}]", materials.join("|")));
    }
    names.join(", ")
}

fn parse_fields(text: &str) -> Result<Vec<Field>, String> {
    let mut out = Vec::new();
    for token in text.split('.') {
        let (name, mut rest) = match token.find('[') {
            Some(k) => (&token[..k], &token[k..]),
            None => (token, ""),
        };
        if name.is_empty() && rest.is_empty() {
            return Err(format!("\"{text}\" has an empty field name"));
        }
        if !name.is_empty() {
            match name.parse::<usize>() {
                Ok(i) => out.push(Field::Index(i)),
                Err(_) => out.push(Field::Name(name.to_owned())),
            }
        }
        while let Some(r) = rest.strip_prefix('[') {
            let end = r.find(']').ok_or_else(|| format!("\"{token}\" has a '[' without ']'"))?;
            let i = r[..end]
                .trim()
                .parse::<usize>()
                .map_err(|_| format!("\"{token}\": [{}] is not an index", &r[..end]))?;
            out.push(Field::Index(i));
            rest = &r[end + 1..];
        }
        if !rest.is_empty() {
            return Err(format!("\"{token}\" has text after ']'"));
        }
    }
    Ok(out)
}

/// The keys of a map, or of the struct inside an enum tag.
fn content(v: &Value) -> &Value {
    let mut v = v;
    for _ in 0..8 {
        match v {
            Value::Object(m) if m.len() == 1 => match m.values().next() {
                Some(inner @ (Value::Object(_) | Value::Array(_)))
                    if !m.keys().all(|k| k.starts_with(char::is_lowercase)) =>
                {
                    v = inner;
                }
                _ => break,
            },
            _ => break,
        }
    }
    v
}

fn describe(v: &Value) -> String {
    match content(v) {
        Value::Object(m) => format!("fields: {}", m.keys().cloned().collect::<Vec<_>>().join(", ")),
        Value::Array(a) => format!("a list of {} (index from 0)", a.len()),
        Value::Number(_) => "a number".to_owned(),
        Value::String(_) => "text".to_owned(),
        Value::Bool(_) => "true or false".to_owned(),
        Value::Null => "nothing".to_owned(),
    }
}

/// The value at `fields` in `v`, unwrapping enum tags on the way.
fn at<'v>(v: &'v mut Value, fields: &[Field], path: &str) -> Result<&'v mut Value, String> {
    let mut cur = v;
    let mut walked = String::new();
    for f in fields {
        // Enum tags ({"Variant": {...}}) are stepped through, so paths read as in the file.
        let tagged =
            matches!(&*cur, Value::Object(m) if m.len() == 1 && !m.keys().all(|k| k.starts_with(char::is_lowercase)));
        if tagged && !matches!(f, Field::Name(n) if cur.get(n).is_some()) {
            let shown = describe(cur);
            cur = match cur {
                Value::Object(m) => m.values_mut().next().ok_or_else(|| format!("{path}: {shown}"))?,
                _ => return Err(format!("{path}: {shown}")),
            };
        }
        let here = if walked.is_empty() { "the object".to_owned() } else { format!("\"{walked}\"") };
        let shown = describe(cur);
        let index = match (f, &*cur) {
            (Field::Name(n), Value::Object(m)) if m.contains_key(n) => None,
            (Field::Name(n), Value::Object(_)) => {
                return Err(format!("{path}: {here} has no field \"{n}\"; its {shown}"));
            }
            (Field::Name(n), Value::Array(a)) if a.len() == 2 && (n == "x" || n == "y") => Some(usize::from(n == "y")),
            (Field::Index(i), Value::Array(a)) if *i < a.len() => Some(*i),
            (Field::Index(i), Value::Array(a)) => {
                return Err(format!("{path}: {here} has {} entries; index {i} does not exist", a.len()));
            }
            (Field::Name(n), _) => return Err(format!("{path}: {here} has no field \"{n}\"; it is {shown}")),
            (Field::Index(i), _) => {
                return Err(format!("{path}: {here} is not a list, [{i}] does not apply; it is {shown}"));
            }
        };
        let next = match (f, index) {
            (_, Some(i)) => cur.get_mut(i),
            (Field::Name(n), None) => cur.get_mut(n.as_str()),
            (Field::Index(_), None) => None,
        };
        cur = next.ok_or_else(|| format!("{path}: {here}: {shown}"))?;
        if !walked.is_empty() {
            walked.push('.');
        }
        match f {
            Field::Name(n) => walked.push_str(n),
            Field::Index(i) => walked.push_str(&i.to_string()),
        }
    }
    Ok(cur)
}

fn to_value<T: Serialize>(x: &T, path: &str) -> Result<Value, String> {
    serde_json::to_value(x).map_err(|e| format!("{path}: cannot read the scene's value ({e})"))
}

fn from_value<T: DeserializeOwned>(v: Value, path: &str, value: f64) -> Result<T, String> {
    serde_json::from_value(v).map_err(|e| format!("{path} cannot be set to {value}: {e}"))
}

/// Puts `value` into the number `slot`, keeping whole numbers whole.
fn set_number(slot: &mut Value, value: f64, path: &str) -> Result<(), String> {
    let Value::Number(n) = slot else {
        return Err(format!("{path} is not a number; it is {}", describe(slot)));
    };
    if !value.is_finite() {
        return Err(format!("{path} cannot be set to {value}"));
    }
    *slot = if n.is_f64() {
        serde_json::Number::from_f64(value)
            .map(Value::Number)
            .ok_or_else(|| format!("{path} cannot be set to {value}"))?
    } else {
        let r = value.round();
        if n.is_u64() && r >= 0.0 {
            Value::from(r as u64)
        } else if r >= i64::MIN as f64 && r <= i64::MAX as f64 {
            Value::from(r as i64)
        } else {
            return Err(format!("{path} is a whole number; {value} does not fit"));
        }
    };
    Ok(())
}

impl ParamPath {
    /// Parses `OBJECT.FIELD` against `scene` and checks that the field exists and is a number.
    pub fn parse(scene: &Scene, text: &str) -> Result<Self, SweepError> {
        let text = text.trim();
        let err = SweepError::Param;
        let (root, rest) = if let Some(r) = text.strip_prefix("materials[") {
            let end = r.find(']').ok_or_else(|| err(format!("{text}: \"materials[\" without ']'")))?;
            let name = &r[..end];
            if !scene.materials.iter().any(|m| m.name == name) {
                let have: Vec<&str> = scene.materials.iter().map(|m| m.name.as_str()).collect();
                return Err(err(format!(
                    "{text}: the scene defines no material \"{name}\" (library materials cannot be swept); it defines: {}",
                    if have.is_empty() { "none".to_owned() } else { have.join(", ") }
                )));
            }
            (Root::Material(name.to_owned()), r[end + 1..].strip_prefix('.').unwrap_or(&r[end + 1..]))
        } else {
            let (head, rest) = text.split_once('.').unwrap_or((text, ""));
            let object =
                scene.object_by_name(head).or_else(|| head.parse::<u64>().ok().and_then(|id| scene.object(id)));
            match object {
                Some(o) => (Root::Object(o.id), rest),
                None if head == "settings" => (Root::Settings, rest),
                None => {
                    return Err(err(format!(
                        "{text}: no object is called or has id \"{head}\"; the scene has: {}",
                        object_list(scene)
                    )));
                }
            }
        };
        let fields = parse_fields(rest).map_err(err)?;
        if fields.is_empty() {
            return Err(err(format!("{text}: name a field after the object, as OBJECT.FIELD")));
        }
        let path = Self { root, fields, text: text.to_owned() };
        path.get(scene)?;
        Ok(path)
    }

    fn root_value(&self, scene: &Scene) -> Result<Value, SweepError> {
        let text = &self.text;
        let v = match &self.root {
            Root::Object(id) => scene.object(*id).map(|o| to_value(&o.kind, text)),
            Root::Settings => Some(to_value(&scene.settings, text)),
            Root::Material(name) => scene.materials.iter().find(|m| &m.name == name).map(|m| to_value(m, text)),
        };
        v.ok_or_else(|| SweepError::Param(format!("{text}: the object is no longer in the scene")))?
            .map_err(SweepError::Param)
    }

    /// Whether changing this field leaves [`Compiled`] unchanged: a source's power, ray count,
    /// line weight or (for a point source) angular range. Positions, directions and
    /// wavelengths move the bounds or the index tables, so they do not.
    pub fn leaves_compiled_scene(&self, scene: &Scene) -> bool {
        let Root::Object(id) = self.root else { return false };
        let Some(o) = scene.object(id) else { return false };
        let last = self.fields.last();
        let is = |name: &str| matches!(last, Some(Field::Name(n)) if n == name);
        match o.kind {
            crate::scene::ObjectKind::PointSource(_) => {
                is("power_w") || is("rays") || is("weight") || is("start_deg") || is("end_deg")
            }
            crate::scene::ObjectKind::BeamSource(_) | crate::scene::ObjectKind::LambertianSource(_) => {
                is("power_w") || is("rays") || is("weight")
            }
            _ => false,
        }
    }

    /// The field's current value.
    pub fn get(&self, scene: &Scene) -> Result<f64, SweepError> {
        let mut v = self.root_value(scene)?;
        let slot = at(&mut v, &self.fields, &self.text).map_err(SweepError::Param)?;
        slot.as_f64()
            .ok_or_else(|| SweepError::Param(format!("{} is not a number; it is {}", self.text, describe(slot))))
    }

    /// A copy of `scene` with the field set to `value` (rounded for whole-number fields).
    pub fn set(&self, scene: &Scene, value: f64) -> Result<Scene, SweepError> {
        let text = &self.text;
        let mut v = self.root_value(scene)?;
        set_number(at(&mut v, &self.fields, text).map_err(SweepError::Param)?, value, text)
            .map_err(SweepError::Param)?;
        let mut out = scene.clone();
        match &self.root {
            Root::Object(id) => {
                let kind = from_value(v, text, value).map_err(SweepError::Param)?;
                if let Some(o) = out.objects.iter_mut().find(|o| o.id == *id) {
                    o.kind = kind;
                }
            }
            Root::Settings => out.settings = from_value::<TraceSettings>(v, text, value).map_err(SweepError::Param)?,
            Root::Material(name) => {
                let m = from_value(v, text, value).map_err(SweepError::Param)?;
                if let Some(slot) = out.materials.iter_mut().find(|x| &x.name == name) {
                    *slot = m;
                }
            }
        }
        out.revision = out.revision.wrapping_add(1);
        Ok(out)
    }
}

/// What a sweep measures on each trace.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Metric {
    /// `detected:NAME`: power on the detectors called NAME, W.
    Detected(String),
    /// `absorbed:NAME`: power absorbed by the object called NAME (a thin element, or inside
    /// a solid), W.
    AbsorbedBy(String),
    /// `escaped`, `absorbed`, `trapped`: the budget's sinks, W.
    Escaped,
    Absorbed,
    Trapped,
    /// `uniformity:NAME`: coefficient of variation of the irradiance on detector NAME
    /// (NaN when no light arrives).
    Uniformity(String),
    /// `deviation`: how far the launched rays turned along their main path (the one that
    /// refracts wherever it can), from launch to their last segment, degrees, weighted by
    /// launch power.
    Deviation,
}

impl fmt::Display for Metric {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Detected(n) => write!(f, "detected:{n}"),
            Self::AbsorbedBy(n) => write!(f, "absorbed:{n}"),
            Self::Escaped => f.write_str("escaped"),
            Self::Absorbed => f.write_str("absorbed"),
            Self::Trapped => f.write_str("trapped"),
            Self::Uniformity(n) => write!(f, "uniformity:{n}"),
            Self::Deviation => f.write_str("deviation"),
        }
    }
}

const METRICS: &str = "detected:NAME, absorbed:NAME, escaped, absorbed, trapped, uniformity:NAME, deviation";

impl Metric {
    /// Parses a metric and checks the names it uses against `scene`.
    pub fn parse(scene: &Scene, text: &str) -> Result<Self, SweepError> {
        let text = text.trim();
        let m = match text.split_once(':') {
            None => match text {
                "escaped" => Self::Escaped,
                "absorbed" => Self::Absorbed,
                "trapped" => Self::Trapped,
                "deviation" => Self::Deviation,
                _ => return Err(SweepError::Metric(format!("unknown metric \"{text}\"; the metrics are {METRICS}"))),
            },
            Some(("detected", n)) => Self::Detected(n.to_owned()),
            Some(("absorbed", n)) => Self::AbsorbedBy(n.to_owned()),
            Some(("uniformity", n)) => Self::Uniformity(n.to_owned()),
            Some(_) => return Err(SweepError::Metric(format!("unknown metric \"{text}\"; the metrics are {METRICS}"))),
        };
        let detectors = || -> Vec<&str> {
            scene
                .objects
                .iter()
                .filter(|o| matches!(o.kind, crate::scene::ObjectKind::Detector(_)))
                .map(|o| o.name.as_str())
                .collect()
        };
        match &m {
            Self::Detected(n) | Self::Uniformity(n) if !detectors().contains(&n.as_str()) => {
                let have = detectors();
                Err(SweepError::Metric(format!(
                    "{text}: no detector is called \"{n}\"; the detectors are: {}",
                    if have.is_empty() { "none".to_owned() } else { have.join(", ") }
                )))
            }
            Self::AbsorbedBy(n) if scene.object_by_name(n).is_none() => {
                let have: Vec<&str> = scene.objects.iter().map(|o| o.name.as_str()).collect();
                Err(SweepError::Metric(format!(
                    "{text}: no object is called \"{n}\"; the objects are: {}",
                    have.join(", ")
                )))
            }
            _ => Ok(m),
        }
    }

    /// The metric's value for one trace of `scene`.
    pub fn evaluate(&self, scene: &Scene, trace: &Trace) -> f64 {
        let b = &trace.budget;
        match self {
            Self::Detected(n) => {
                trace.detectors.iter().zip(&b.detected).filter(|(d, _)| &d.name == n).map(|(_, w)| w).sum()
            }
            Self::AbsorbedBy(n) => {
                let mut w = 0.0;
                for o in scene.objects.iter().filter(|o| &o.name == n) {
                    w += b.absorbed_by(o.id);
                    for (m, owner) in trace.medium_objects.iter().enumerate() {
                        if *owner == Some(o.id) {
                            w += b.absorbed_in_media.get(m).copied().unwrap_or(0.0);
                        }
                    }
                }
                w
            }
            Self::Escaped => b.escaped,
            Self::Absorbed => b.absorbed,
            Self::Trapped => b.trapped,
            Self::Uniformity(n) => trace
                .detectors
                .iter()
                .filter(|d| &d.name == n)
                .find_map(|d| detector_uniformity(scene, d))
                .map_or(f64::NAN, |u| u.cv),
            Self::Deviation => deviation_deg(trace),
        }
    }
}

/// Power-weighted mean turn of the launched rays, degrees (NaN when no ray has two segments).
fn deviation_deg(trace: &Trace) -> f64 {
    let (mut sum, mut weight) = (0.0, 0.0);
    for ray in trace.rays.iter().filter(|r| r.parent == NONE) {
        let ev = trace.events_of(ray);
        let n = ev.len();
        if n < 2 {
            continue;
        }
        let first = ev[1].point - ev[0].point;
        let last = ev[n - 1].point - ev[n - 2].point;
        if first.norm() == 0.0 || last.norm() == 0.0 {
            continue;
        }
        let turn = cross(first, last).atan2(first.dot(&last)).to_degrees().abs();
        let w = super::explain::power_after(&ev[0]);
        sum += w * turn;
        weight += w;
    }
    if weight > 0.0 { sum / weight } else { f64::NAN }
}

/// The values a sweep visits: `steps` evenly spaced from `from` to `to` inclusive.
pub fn sweep_values(from: f64, to: f64, steps: usize) -> Vec<f64> {
    match steps {
        0 => Vec::new(),
        1 => vec![from],
        n => (0..n).map(|k| from + (to - from) * k as f64 / (n - 1) as f64).collect(),
    }
}

/// Sweeps `param` over `steps` values from `from` to `to`, tracing the scene with its own
/// settings at each and returning (value, metric). Stops early, returning the steps done,
/// when `control` is cancelled. Errors come before any tracing.
pub fn sweep(
    scene: &Scene,
    param: &ParamPath,
    from: f64,
    to: f64,
    steps: usize,
    metric: &Metric,
    control: &Control,
) -> Result<Vec<(f64, f64)>, SweepError> {
    sweep_with(scene, param, from, to, steps, metric, control, &mut |_, _| {})
}

/// [`sweep`], calling `on_step(done, steps)` after each step (for a progress line).
#[allow(clippy::too_many_arguments)] // the sweep's inputs, plus the progress callback
pub fn sweep_with(
    scene: &Scene,
    param: &ParamPath,
    from: f64,
    to: f64,
    steps: usize,
    metric: &Metric,
    control: &Control,
    on_step: &mut dyn FnMut(usize, usize),
) -> Result<Vec<(f64, f64)>, SweepError> {
    if steps == 0 {
        return Err(SweepError::NoSteps);
    }
    if !(from.is_finite() && to.is_finite()) {
        return Err(SweepError::BadRange(from, to));
    }
    let values = sweep_values(from, to, steps);
    // Every value must make a scene before any time goes into tracing.
    let scenes = values.iter().map(|&v| param.set(scene, v)).collect::<Result<Vec<_>, _>>()?;
    // A value that makes the scene invalid (a negative width, say) would silently leave the
    // object out of the trace; say so instead.
    let errors = |s: &Scene| -> Vec<String> {
        crate::scene::validate(s)
            .into_iter()
            .filter(|p| p.severity == crate::scene::validate::Severity::Error)
            .map(|p| p.to_string())
            .collect()
    };
    let before = errors(scene);
    for (v, s) in values.iter().zip(&scenes) {
        if let Some(problem) = errors(s).into_iter().find(|e| !before.contains(e)) {
            return Err(SweepError::Param(format!("{param} = {v} makes the scene invalid: {problem}")));
        }
    }
    // A change to a source's power, ray count, line weights or angular range leaves the
    // compiled scene (edges, media, wavelengths, bounds) as it was: compile once.
    let shared = scenes.first().filter(|_| param.leaves_compiled_scene(scene)).map(Compiled::new);
    let mut out = Vec::with_capacity(steps);
    for (k, (v, s)) in values.iter().zip(&scenes).enumerate() {
        if control.is_cancelled() {
            break;
        }
        let own;
        let compiled = match &shared {
            Some(c) => c,
            None => {
                own = Compiled::new(s);
                &own
            }
        };
        let config = TraceConfig::from_scene(s);
        let t = trace_compiled(s, compiled, &config, control);
        if t.cancelled {
            break;
        }
        out.push((*v, metric.evaluate(s, &t)));
        on_step(k + 1, steps);
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fields_parse_with_indices() {
        assert_eq!(
            parse_fields("emission.spectrum[0].nm").expect("parses"),
            vec![
                Field::Name("emission".into()),
                Field::Name("spectrum".into()),
                Field::Index(0),
                Field::Name("nm".into())
            ]
        );
        assert_eq!(parse_fields("center.1").expect("parses"), vec![Field::Name("center".into()), Field::Index(1)]);
        assert!(parse_fields("a[x]").is_err());
        assert!(parse_fields("a..b").is_err());
    }

    #[test]
    fn values_include_both_ends() {
        assert_eq!(sweep_values(1.0, 2.0, 3), vec![1.0, 1.5, 2.0]);
        assert_eq!(sweep_values(1.0, 2.0, 1), vec![1.0]);
    }
}
