//! A standalone SVG picture of a scene and its traced rays.
//!
//! Drawing coordinates are scene millimetres with Y flipped by a transform, so numbers in the
//! file can be read against the scene. Rays are polylines coloured by wavelength; their
//! opacity follows the power a segment carries relative to the launch power of the ray it
//! came from, on a log scale, so weak Fresnel branches stay faintly visible. Points of total
//! internal reflection are marked. Hovering over an object shows its name.

use std::collections::HashMap;
use std::fmt::Write;

use crate::geom::{Aabb, Vec2};
use crate::optics::colour::palette::{self, material_tint};
use crate::optics::colour::wavelength_rgb;
use crate::scene::{ObjectKind, Path, Scene};
use crate::trace::{EventKind, NONE, Trace};

/// How to draw.
#[derive(Clone, Debug, PartialEq)]
pub struct SvgOptions {
    /// Most rays drawn; the picture says when there were more.
    pub max_rays: usize,
    /// Most TIR markers drawn.
    pub max_tir_marks: usize,
    /// Largest width and height of the picture in pixels.
    pub max_width_px: f64,
    pub max_height_px: f64,
    /// Draw the normals, angles of incidence and critical angles along this stored ray
    /// (a position in `trace.rays`); see [`crate::export::annotate`].
    pub annotate_ray: Option<usize>,
}

impl Default for SvgOptions {
    fn default() -> Self {
        Self { max_rays: 20_000, max_tir_marks: 3_000, max_width_px: 1200.0, max_height_px: 800.0, annotate_ray: None }
    }
}

/// Opacity steps; consecutive segments of the same step share one polyline.
const LEVELS: f64 = 16.0;

fn xml(text: &str) -> String {
    text.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

fn hex(rgb: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", rgb[0], rgb[1], rgb[2])
}

/// Writes numbers short but exact enough for drawing (micrometre resolution).
fn num(v: f64) -> String {
    let r = (v * 1000.0).round() / 1000.0;
    if r == 0.0 { "0".to_owned() } else { format!("{r}") }
}

fn points_attr(points: &[Vec2]) -> String {
    points.iter().map(|p| format!("{},{}", num(p.x), num(p.y))).collect::<Vec<_>>().join(" ")
}

fn path_points(path: &Path) -> Vec<Vec2> {
    let mut pts: Vec<Vec2> = Vec::new();
    for e in path.edges() {
        let poly = e.polyline(2f64.to_radians());
        let skip = usize::from(!pts.is_empty());
        pts.extend(poly.into_iter().skip(skip));
    }
    pts
}

/// What the source draws as: its characteristic points.
fn source_geometry(kind: &ObjectKind) -> Option<Vec<Vec2>> {
    match kind {
        ObjectKind::PointSource(p) => Some(vec![Vec2::new(p.position.0, p.position.1)]),
        ObjectKind::BeamSource(b) => {
            let (s, c) = b.direction_deg.to_radians().sin_cos();
            let h = b.width / 2.0;
            Some(vec![
                Vec2::new(b.center.0 - s * h, b.center.1 + c * h),
                Vec2::new(b.center.0 + s * h, b.center.1 - c * h),
                Vec2::new(c, s),
            ])
        }
        ObjectKind::LambertianSource(l) => Some(vec![Vec2::new(l.a.0, l.a.1), Vec2::new(l.b.0, l.b.1)]),
        _ => None,
    }
}

/// Where the picture sits: the view box in scene millimetres (y flipped) and the pixel
/// scale.
struct Frame {
    /// View box: left, top (flipped y), width and height, mm.
    vx: f64,
    vy: f64,
    vw: f64,
    vh: f64,
    /// Pixels per mm.
    scale: f64,
    /// Font size, mm.
    font: f64,
}

impl Frame {
    /// Lays out a picture showing `bounds`, with room for the legend above.
    fn new(bounds: Aabb, options: &SvgOptions) -> Self {
        let bounds = if bounds.is_empty() {
            Aabb::from_points([Vec2::new(-10.0, -10.0), Vec2::new(10.0, 10.0)])
        } else {
            bounds
        };
        let size = bounds.size();
        let pad = 0.03 * size.x.max(size.y).max(1.0);
        let bounds = bounds.expanded(pad);
        let size = bounds.size();
        let scale = (options.max_width_px / size.x).min(options.max_height_px / size.y);
        let font = 13.0 / scale;
        let header_lines = 5.0;
        let header = font * 1.5 * header_lines + 6.0 / scale;
        Self { vx: bounds.min.x, vy: -bounds.max.y - header, vw: size.x, vh: size.y + header, scale, font }
    }

    /// A length of `n` pixels, in mm.
    fn px(&self, n: f64) -> f64 {
        n / self.scale
    }
}

/// The outlines of the solids that have one, as polylines, with their object's position.
fn solid_points(scene: &Scene) -> Vec<(usize, Vec<Vec2>)> {
    scene
        .solid_outlines()
        .into_iter()
        .filter_map(|(i, o)| {
            let o = o.ok()?;
            let mut pts = Vec::new();
            for e in o.edges() {
                let poly = e.polyline(2f64.to_radians());
                pts.extend(poly.into_iter().skip(1));
            }
            Some((i, pts))
        })
        .collect()
}

/// The points a thin element or source is drawn through (none for a solid).
fn element_points(kind: &ObjectKind) -> Vec<Vec2> {
    match kind {
        ObjectKind::Mirror(m) => path_points(&m.path),
        ObjectKind::Absorber(a) => path_points(&a.path),
        ObjectKind::Splitter(s) => path_points(&s.path),
        ObjectKind::Detector(d) => path_points(&d.path),
        kind => source_geometry(kind)
            .map(|mut g| {
                if matches!(kind, ObjectKind::BeamSource(_)) {
                    g.truncate(2);
                }
                g
            })
            .unwrap_or_default(),
    }
}

/// Bounds of everything drawn: solids, elements and sources, and the rays drawn.
fn drawing_bounds(scene: &Scene, outlines: &[(usize, Vec<Vec2>)], trace: &Trace, n_drawn: usize) -> Aabb {
    let mut bounds = Aabb::EMPTY;
    for (_, pts) in outlines {
        for p in pts {
            bounds.include(*p);
        }
    }
    for o in &scene.objects {
        for p in element_points(&o.kind).iter().filter(|p| p.x.is_finite() && p.y.is_finite()) {
            bounds.include(*p);
        }
    }
    for e in trace.rays.iter().take(n_drawn).flat_map(|r| trace.events_of(r)) {
        bounds.include(e.point);
    }
    bounds
}

/// The picture as SVG text.
pub fn render(scene: &Scene, trace: &Trace, options: &SvgOptions) -> String {
    let outlines = solid_points(scene);
    let n_drawn = trace.rays.len().min(options.max_rays);
    let f = Frame::new(drawing_bounds(scene, &outlines, trace, n_drawn), options);
    let mut out = String::new();
    write_header(&mut out, scene, &f);
    // Everything in scene coordinates goes in this group: y is flipped.
    let _ = writeln!(out, r#"<g transform="scale(1,-1)" stroke-linejoin="round" stroke-linecap="round">"#);
    write_solids(&mut out, scene, &outlines, &f);
    write_elements(&mut out, scene, &f);
    write_rays(&mut out, trace, n_drawn, &f);
    let n_tir = write_tir_marks(&mut out, trace, n_drawn, options.max_tir_marks, &f);
    if let Some(k) = options.annotate_ray {
        out.push_str(&crate::export::annotate::ray_annotations(scene, trace, k, f.px(1.0)));
    }
    let _ = writeln!(out, "</g>");
    legend(&mut out, scene, trace, n_drawn, n_tir, &f);
    let _ = writeln!(out, "</svg>");
    out
}

/// The XML declaration, the `<svg>` element with its view box, the title and a white
/// background.
fn write_header(out: &mut String, scene: &Scene, f: &Frame) {
    let _ = writeln!(out, r#"<?xml version="1.0" encoding="UTF-8"?>"#);
    let _ = writeln!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{}" height="{}" viewBox="{} {} {} {}">"#,
        (f.vw * f.scale).round(),
        (f.vh * f.scale).round(),
        num(f.vx),
        num(f.vy),
        num(f.vw),
        num(f.vh)
    );
    let _ =
        writeln!(out, "<title>{}</title>", xml(if scene.title.is_empty() { "Raydraft scene" } else { &scene.title }));
    let _ = writeln!(
        out,
        r#"<rect x="{}" y="{}" width="{}" height="{}" fill="{}"/>"#,
        num(f.vx),
        num(f.vy),
        num(f.vw),
        num(f.vh),
        hex(palette::SHEET)
    );
}

fn write_solids(out: &mut String, scene: &Scene, outlines: &[(usize, Vec<Vec2>)], f: &Frame) {
    let _ = writeln!(
        out,
        r#"<g id="solids" fill-opacity="{}" stroke="{}" stroke-width="{}">"#,
        palette::SOLID_FILL_OPACITY,
        hex(palette::SOLID_STROKE),
        num(f.px(1.2))
    );
    for (i, pts) in outlines {
        let o = &scene.objects[*i];
        let material = match &o.kind {
            ObjectKind::Solid(s) => s.material.as_str(),
            _ => "",
        };
        let _ = writeln!(
            out,
            r#"<polygon points="{}" fill="{}"><title>{} ({})</title></polygon>"#,
            points_attr(pts),
            hex(material_tint(material)),
            xml(&o.name),
            xml(material)
        );
    }
    let _ = writeln!(out, "</g>");
}

/// Thin elements and sources.
fn write_elements(out: &mut String, scene: &Scene, f: &Frame) {
    let px = |n: f64| f.px(n);
    let _ = writeln!(out, r#"<g id="elements" fill="none">"#);
    for o in &scene.objects {
        let title = format!("<title>{} ({})</title>", xml(&o.name), o.kind.word());
        let (path, style) = match &o.kind {
            ObjectKind::Mirror(m) => {
                (&m.path, format!(r#"stroke="{}" stroke-width="{}""#, hex(palette::MIRROR), num(px(3.0))))
            }
            ObjectKind::Absorber(a) => {
                (&a.path, format!(r#"stroke="{}" stroke-width="{}""#, hex(palette::ABSORBER), num(px(3.5))))
            }
            ObjectKind::Splitter(s) => (
                &s.path,
                format!(
                    r#"stroke="{}" stroke-width="{}" stroke-dasharray="{} {}""#,
                    hex(palette::SPLITTER),
                    num(px(2.5)),
                    num(px(6.0)),
                    num(px(3.0))
                ),
            ),
            ObjectKind::Detector(d) => (
                &d.path,
                format!(
                    r#"stroke="{}" stroke-width="{}" stroke-dasharray="{} {}""#,
                    hex(palette::DETECTOR),
                    num(px(3.5)),
                    num(px(2.0)),
                    num(px(2.0))
                ),
            ),
            kind => {
                source_ui(out, kind, &title, &px);
                continue;
            }
        };
        let pts = path_points(path);
        let _ = writeln!(out, r#"<polyline points="{}" {style}>{title}</polyline>"#, points_attr(&pts));
    }
    let _ = writeln!(out, "</g>");
}

/// The first `n_drawn` rays, as polylines whose opacity follows their power.
fn write_rays(out: &mut String, trace: &Trace, n_drawn: usize, f: &Frame) {
    let index_of: HashMap<u32, usize> = trace.rays.iter().enumerate().map(|(k, r)| (r.id, k)).collect();
    let launch_power = |mut k: usize| -> f64 {
        for _ in 0..10_000 {
            let r = &trace.rays[k];
            match index_of.get(&r.parent) {
                Some(&p) if r.parent != NONE => k = p,
                _ => break,
            }
        }
        trace.events_of(&trace.rays[k]).first().map_or(0.0, |e| f64::from(e.after_s) + f64::from(e.after_p))
    };
    let principal = trace.mode == crate::scene::TraceMode::Principal;
    // Many overlapping rays would saturate: the full opacity falls as launched rays grow.
    let n_roots = trace.rays.iter().take(n_drawn).filter(|r| r.parent == NONE).count().max(1);
    let base = palette::ray_base_opacity(n_roots);
    let _ = writeln!(out, r#"<g id="rays" fill="none" stroke-width="{}">"#, num(f.px(1.0)));
    for (k, ray) in trace.rays.iter().enumerate().take(n_drawn) {
        let evs = trace.events_of(ray);
        if evs.len() < 2 {
            continue;
        }
        let launch = launch_power(k);
        let colour = hex(wavelength_rgb(ray.wavelength_nm));
        let level_of = |i: usize| -> f64 {
            let e = &evs[i];
            let p = f64::from(e.after_s) + f64::from(e.after_p);
            let rel = if principal || launch <= 0.0 { 1.0 } else { p / launch };
            palette::ray_level(rel, LEVELS)
        };
        let mut run: Vec<Vec2> = vec![evs[0].point];
        let mut level = level_of(0);
        for i in 0..evs.len() - 1 {
            let l = level_of(i);
            if l != level && run.len() > 1 {
                ray_polyline(out, &run, &colour, level, base);
                run = vec![evs[i].point];
            }
            level = l;
            run.push(evs[i + 1].point);
        }
        ray_polyline(out, &run, &colour, level, base);
    }
    let _ = writeln!(out, "</g>");
}

/// Marks the points of total internal reflection on the drawn rays (at most `max_marks`);
/// returns how many were marked.
fn write_tir_marks(out: &mut String, trace: &Trace, n_drawn: usize, max_marks: usize, f: &Frame) -> usize {
    let _ = writeln!(out, r#"<g id="tir" fill="{}" fill-opacity="0.6">"#, hex(palette::TIR));
    let mut n_tir = 0;
    'rays: for ray in trace.rays.iter().take(n_drawn) {
        for e in trace.events_of(ray).iter().filter(|e| e.kind == EventKind::Tir) {
            if n_tir >= max_marks {
                break 'rays;
            }
            let _ =
                writeln!(out, r#"<circle cx="{}" cy="{}" r="{}"/>"#, num(e.point.x), num(e.point.y), num(f.px(1.2)));
            n_tir += 1;
        }
    }
    let _ = writeln!(out, "</g>");
    n_tir
}

fn ray_polyline(out: &mut String, run: &[Vec2], colour: &str, level: f64, base: f64) {
    if level <= 0.0 || run.len() < 2 {
        return;
    }
    let opacity = palette::ray_opacity(level, base);
    let _ =
        writeln!(out, r#"<polyline points="{}" stroke="{colour}" stroke-opacity="{opacity:.3}"/>"#, points_attr(run));
}

fn source_ui(out: &mut String, kind: &ObjectKind, title: &str, px: &dyn Fn(f64) -> f64) {
    let Some(g) = source_geometry(kind) else {
        return;
    };
    if g.iter().any(|p| !(p.x.is_finite() && p.y.is_finite())) {
        return;
    }
    let style = format!(
        r#"stroke="{}" stroke-width="{}" fill="{}""#,
        hex(palette::SOURCE_STROKE),
        num(px(2.0)),
        hex(palette::SOURCE_FILL)
    );
    match kind {
        ObjectKind::PointSource(_) => {
            let _ = writeln!(
                out,
                r#"<circle cx="{}" cy="{}" r="{}" {style}>{title}</circle>"#,
                num(g[0].x),
                num(g[0].y),
                num(px(5.0))
            );
        }
        ObjectKind::BeamSource(_) => {
            // The beam's start line and an arrow along its direction from the centre.
            let (a, b, d) = (g[0], g[1], g[2]);
            let c = (a + b) / 2.0;
            let tip = c + d * px(24.0);
            let side = Vec2::new(-d.y, d.x) * px(5.0);
            let back = tip - d * px(8.0);
            let _ = writeln!(
                out,
                r#"<g {style}>{title}<line x1="{}" y1="{}" x2="{}" y2="{}"/><line x1="{}" y1="{}" x2="{}" y2="{}"/><polygon points="{}"/></g>"#,
                num(a.x),
                num(a.y),
                num(b.x),
                num(b.y),
                num(c.x),
                num(c.y),
                num(back.x),
                num(back.y),
                points_attr(&[tip, back + side, back - side])
            );
        }
        ObjectKind::LambertianSource(_) => {
            // The emitting segment, and a tick on the side it emits into (left of a → b).
            let (a, b) = (g[0], g[1]);
            let m = (a + b) / 2.0;
            let t = b - a;
            let n = Vec2::new(-t.y, t.x) / t.norm().max(1e-12);
            let tip = m + n * px(8.0);
            let _ = writeln!(
                out,
                r#"<g {style}>{title}<line x1="{}" y1="{}" x2="{}" y2="{}" stroke-width="{}"/><line x1="{}" y1="{}" x2="{}" y2="{}"/></g>"#,
                num(a.x),
                num(a.y),
                num(b.x),
                num(b.y),
                num(px(4.0)),
                num(m.x),
                num(m.y),
                num(tip.x),
                num(tip.y)
            );
        }
        _ => {}
    }
}

/// The title, a line of figures and the key, above the drawing.
fn legend(out: &mut String, scene: &Scene, trace: &Trace, n_drawn: usize, n_tir: usize, f: &Frame) {
    let (origin, font) = ((f.vx, f.vy), f.font);
    let px = |n: f64| f.px(n);
    let x0 = origin.0 + px(8.0);
    let line = |k: f64| origin.1 + px(4.0) + font * (1.1 + 1.5 * k);
    let _ = writeln!(out, r##"<g id="legend" font-family="sans-serif" font-size="{}" fill="#222222">"##, num(font));
    let title = if scene.title.is_empty() { "Untitled scene" } else { &scene.title };
    let _ = writeln!(out, r#"<text x="{}" y="{}" font-weight="bold">{}</text>"#, num(x0), num(line(0.0)), xml(title));
    let mode = crate::export::json::mode_word(trace.mode);
    let mut info = format!(
        "{mode} trace: {} rays, {} events; launched {:.4} W, detected {:.4} W",
        trace.n_rays,
        trace.n_events,
        trace.budget.launched,
        trace.budget.detected_total()
    );
    if n_drawn < trace.rays.len() {
        let _ = write!(info, "; only the first {n_drawn} of {} stored rays are drawn", trace.rays.len());
    }
    if trace.events_truncated {
        info.push_str("; not all events were stored");
    }
    let _ = writeln!(out, r#"<text x="{}" y="{}">{}</text>"#, num(x0), num(line(1.0)), xml(&info));
    // Key: wavelengths, then marks and element styles.
    let mut x = x0;
    let y = line(2.0);
    for nm in &trace.wavelengths {
        let _ = writeln!(
            out,
            r#"<rect x="{}" y="{}" width="{}" height="{}" fill="{}"/>"#,
            num(x),
            num(y - font * 0.8),
            num(font * 1.6),
            num(font * 0.8),
            hex(wavelength_rgb(*nm))
        );
        let label = format!("{nm} nm");
        let _ = writeln!(out, r#"<text x="{}" y="{}">{}</text>"#, num(x + font * 1.9), num(y), xml(&label));
        x += font * (2.6 + 0.6 * label.len() as f64);
    }
    let tir_label = if n_tir > 0 { "TIR point" } else { "TIR point (none here)" };
    let _ = writeln!(
        out,
        r#"<circle cx="{}" cy="{}" r="{}" fill="{}"/>"#,
        num(x + px(3.0)),
        num(y - font * 0.35),
        num(px(3.0)),
        hex(palette::TIR)
    );
    let _ = writeln!(out, r#"<text x="{}" y="{}">{tir_label}</text>"#, num(x + px(10.0)), num(y));
    let keys = [
        "Ray opacity: power relative to launch on a log scale (1 down to 1e-4).",
        "Tinted fill: refracting solid (one tint per material); grey: mirror; black: absorber; purple dashes: beam splitter; green dashes: detector; orange: source.",
    ];
    for (k, key) in keys.iter().enumerate() {
        let _ = writeln!(
            out,
            r#"<text x="{}" y="{}" font-size="{}">{}</text>"#,
            num(x0),
            num(line(3.0 + 0.85 * k as f64)),
            num(font * 0.85),
            xml(key)
        );
    }
    let _ = writeln!(out, "</g>");
}
