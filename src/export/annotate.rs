//! Annotations of one ray's path for the SVG picture: at each event on a surface, the normal,
//! the angle of incidence as an arc with its value, and at a total internal reflection the
//! critical angle beside it.
//!
//! The elements are in scene millimetres (Y up) and are meant to go inside the picture's
//! flipped group; text is flipped back locally so it reads upright.

use std::fmt::Write;

use crate::analysis::{RayExplanation, explain_ray, surface_edge};
use crate::geom::{Vec2, cross};
use crate::scene::Scene;
use crate::trace::{EventKind, Trace};

fn num(v: f64) -> String {
    let r = (v * 1000.0).round() / 1000.0;
    if r == 0.0 { "0".to_owned() } else { format!("{r}") }
}

/// Upright text at `at` (scene coordinates) inside a Y-flipped group.
fn label(out: &mut String, at: Vec2, text: &str, font_mm: f64, colour: &str) {
    let _ = writeln!(
        out,
        r#"<text transform="translate({},{}) scale(1,-1)" font-size="{}" fill="{colour}">{text}</text>"#,
        num(at.x),
        num(at.y),
        num(font_mm)
    );
}

/// SVG elements annotating ray `ray_idx` of `trace`; `mm_per_px` is the picture's scale.
/// Empty when there is no such stored ray.
pub fn ray_annotations(scene: &Scene, trace: &Trace, ray_idx: usize, mm_per_px: f64) -> String {
    match explain_ray(scene, trace, ray_idx) {
        Some(x) => annotations(scene, &x, mm_per_px),
        None => String::new(),
    }
}

/// SVG elements annotating an explained ray.
pub fn annotations(scene: &Scene, x: &RayExplanation, mm_per_px: f64) -> String {
    let px = |n: f64| n * mm_per_px;
    let (normal_len, radius, font) = (px(36.0), px(22.0), px(11.0));
    let mut out = String::new();
    let _ = writeln!(
        out,
        r##"<g id="annotations" fill="none" stroke="#444444" stroke-width="{}" font-family="sans-serif">"##,
        num(px(0.8))
    );
    // The annotated path itself, drawn over the others.
    let points: Vec<String> = x.steps.iter().map(|s| format!("{},{}", num(s.point.x), num(s.point.y))).collect();
    let _ = writeln!(
        out,
        r##"<polyline points="{}" stroke="#000000" stroke-width="{}"/>"##,
        points.join(" "),
        num(px(1.6))
    );
    for (k, w) in x.steps.windows(2).enumerate() {
        let (prev, s) = (&w[0], &w[1]);
        let (Some(surface), Some(inc)) = (&s.surface, s.incidence_deg) else { continue };
        let Some(edge) = surface_edge(scene, surface) else { continue };
        let d = s.point - prev.point;
        if d.norm() == 0.0 {
            continue;
        }
        let d = d.normalize();
        let n = edge.normal_at(edge.param_of(s.point));
        // The normal on the side the ray came from, and the way back along the ray.
        let n_in = if n.dot(&d) < 0.0 { n } else { -n };
        let back = -d;
        let p = s.point;
        let (a, b) = (p - n_in * normal_len, p + n_in * normal_len);
        let _ = writeln!(
            out,
            r#"<line x1="{}" y1="{}" x2="{}" y2="{}" stroke-dasharray="{} {}"/>"#,
            num(a.x),
            num(a.y),
            num(b.x),
            num(b.y),
            num(px(4.0)),
            num(px(3.0))
        );
        if inc < 0.05 {
            // Normal incidence: no arc to draw.
            label(
                &mut out,
                p + n_in * (radius * 0.5) + Vec2::new(px(3.0), 0.0),
                &format!("{}: 0°", k + 1),
                font,
                "#d95f02",
            );
            continue;
        }
        let (u1, u2) = (p + n_in * radius, p + back * radius);
        let sweep = u8::from(cross(n_in, back) > 0.0);
        let _ = writeln!(
            out,
            r##"<path d="M {} {} A {} {} 0 0 {sweep} {} {}" stroke="#d95f02"/>"##,
            num(u1.x),
            num(u1.y),
            num(radius),
            num(radius),
            num(u2.x),
            num(u2.y)
        );
        let mid = (n_in + back).try_normalize(1e-12).unwrap_or(n_in);
        let at = p + mid * (radius + px(4.0));
        let mut text = format!("{}: {inc:.1}°", k + 1);
        if let Some(r) = s.refraction_deg.filter(|_| s.kind == EventKind::Refract) {
            let _ = write!(text, " → {r:.1}°");
        }
        label(&mut out, at, &text, font, "#d95f02");
        if s.kind == EventKind::Tir {
            if let Some(c) = s.critical_deg {
                let side = Vec2::new(-n_in.y, n_in.x);
                let side = if side.dot(&back) < 0.0 { side } else { -side };
                label(&mut out, p + side * (radius + px(6.0)), &format!("TIR: θc = {c:.1}°"), font, "#d7301f");
            }
        }
    }
    let _ = writeln!(out, "</g>");
    out
}
