//! The materials panel: the built-in library with its published sources, the scene's own
//! materials, and a form for defining constant, Cauchy and Sellmeier materials with
//! absorption.

use egui::DragValue;

use super::Edit;
use super::app::{Command, EditorApp};
use crate::optics::Material;
use crate::optics::material::{Dispersion, IndexReference, LINE_D_NM};

/// Which formula a new material uses.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Formula {
    #[default]
    Constant,
    Cauchy,
    Sellmeier,
}

/// The form for a material being defined or changed.
#[derive(Clone, Debug, PartialEq)]
pub struct MaterialForm {
    pub name: String,
    pub formula: Formula,
    pub n: f64,
    pub cauchy: [f64; 3],
    /// Sellmeier B₁..B₃ and C₁..C₃ (µm²).
    pub sellmeier_b: [f64; 3],
    pub sellmeier_c: [f64; 3],
    pub absorption_per_mm: f64,
    /// The scene material this form changes, if any.
    pub editing: Option<String>,
}

impl Default for MaterialForm {
    fn default() -> Self {
        Self {
            name: "my glass".to_owned(),
            formula: Formula::Constant,
            n: 1.5,
            cauchy: [1.5, 0.004, 0.0],
            sellmeier_b: [1.0, 0.2, 1.0],
            sellmeier_c: [0.006, 0.02, 100.0],
            absorption_per_mm: 0.0,
            editing: None,
        }
    }
}

impl MaterialForm {
    pub fn from_material(m: &Material) -> Self {
        let mut f = Self {
            name: m.name.clone(),
            absorption_per_mm: m.absorption_per_mm,
            editing: Some(m.name.clone()),
            ..Self::default()
        };
        match &m.dispersion {
            Dispersion::Constant { n } => f.n = *n,
            Dispersion::Cauchy { a, b_um2, c_um4 } => {
                f.formula = Formula::Cauchy;
                f.cauchy = [*a, *b_um2, *c_um4];
            }
            Dispersion::SellmeierSquared { terms, .. } => {
                f.formula = Formula::Sellmeier;
                for (k, (b, c)) in terms.iter().take(3).enumerate() {
                    f.sellmeier_b[k] = *b;
                    f.sellmeier_c[k] = *c;
                }
            }
            _ => f.n = m.index_rel_air(LINE_D_NM),
        }
        f
    }

    pub fn material(&self) -> Material {
        let mut m = Material::constant(self.name.trim(), self.n);
        m.dispersion = match self.formula {
            Formula::Constant => Dispersion::Constant { n: self.n },
            Formula::Cauchy => Dispersion::Cauchy { a: self.cauchy[0], b_um2: self.cauchy[1], c_um4: self.cauchy[2] },
            Formula::Sellmeier => Dispersion::SellmeierSquared {
                c0: 0.0,
                terms: self
                    .sellmeier_b
                    .iter()
                    .copied()
                    .zip(self.sellmeier_c.iter().copied())
                    .filter(|(b, _)| *b != 0.0)
                    .collect(),
            },
        };
        m.reference = IndexReference::Air;
        m.absorption_per_mm = self.absorption_per_mm;
        m
    }
}

#[derive(Default)]
pub struct MaterialsState {
    pub form: MaterialForm,
}

fn labelled_num(ui: &mut egui::Ui, label: &str, v: &mut f64, speed: f64, suffix: &str) {
    let l = ui.label(label);
    ui.add(DragValue::new(v).speed(speed).max_decimals(8).suffix(suffix)).labelled_by(l.id);
    ui.end_row();
}

pub fn materials_ui(app: &mut EditorApp, ui: &mut egui::Ui) {
    ui.label(egui::RichText::new("Library (n at the d line, 587.6 nm)").strong());
    egui::Grid::new("library").num_columns(2).striped(true).show(ui, |ui| {
        for m in crate::optics::library() {
            ui.label(&m.name);
            ui.label(format!("n = {:.5}", m.index_rel_air(LINE_D_NM)))
                .on_hover_text(format!("{}\nvalid {:.0}–{:.0} nm", m.source, m.valid_nm.0, m.valid_nm.1));
            ui.end_row();
            ui.label("");
            ui.label(egui::RichText::new(&m.source).small().weak());
            ui.end_row();
        }
    });
    ui.separator();
    ui.label(egui::RichText::new("This scene's materials").strong());
    if app.doc.scene.materials.is_empty() {
        ui.label("None yet.");
    }
    for m in app.doc.scene.materials.clone() {
        ui.horizontal(|ui| {
            ui.label(format!("{}: n = {:.5}, α = {} /mm", m.name, m.index_rel_air(LINE_D_NM), m.absorption_per_mm));
            if ui.small_button("Change").clicked() {
                app.materials.form = MaterialForm::from_material(&m);
            }
            if ui.small_button("Remove").clicked() {
                app.push(Command::Edit(Edit::RemoveMaterial { name: m.name.clone() }));
            }
        });
    }
    ui.separator();
    let editing = app.materials.form.editing.clone();
    ui.label(
        egui::RichText::new(match &editing {
            Some(n) => format!("Change {n}"),
            None => "Define a material".to_owned(),
        })
        .strong(),
    );
    let f = &mut app.materials.form;
    egui::Grid::new("material_form").num_columns(2).show(ui, |ui| {
        let l = ui.label("name");
        ui.text_edit_singleline(&mut f.name).labelled_by(l.id);
        ui.end_row();
        ui.label("formula");
        ui.horizontal(|ui| {
            ui.radio_value(&mut f.formula, Formula::Constant, "constant");
            ui.radio_value(&mut f.formula, Formula::Cauchy, "Cauchy");
            ui.radio_value(&mut f.formula, Formula::Sellmeier, "Sellmeier");
        });
        ui.end_row();
        match f.formula {
            Formula::Constant => labelled_num(ui, "n", &mut f.n, 0.001, ""),
            Formula::Cauchy => {
                labelled_num(ui, "A", &mut f.cauchy[0], 0.001, "");
                labelled_num(ui, "B", &mut f.cauchy[1], 0.0001, " µm²");
                labelled_num(ui, "C", &mut f.cauchy[2], 0.00001, " µm^4");
            }
            Formula::Sellmeier => {
                for k in 0..3 {
                    labelled_num(ui, &format!("B{}", k + 1), &mut f.sellmeier_b[k], 0.001, "");
                    labelled_num(ui, &format!("C{}", k + 1), &mut f.sellmeier_c[k], 0.0001, " µm²");
                }
            }
        }
        labelled_num(ui, "absorption α", &mut f.absorption_per_mm, 0.0001, " /mm");
    });
    let m = app.materials.form.material();
    let n_d = m.index_rel_air(LINE_D_NM);
    ui.label(format!("n at 587.6 nm: {n_d:.5}"));
    let name_taken = app.doc.scene.materials.iter().any(|x| x.name == m.name && Some(&x.name) != editing.as_ref());
    let ok = !m.name.is_empty() && n_d.is_finite() && n_d >= 1.0 && !name_taken && m.absorption_per_mm >= 0.0;
    if name_taken {
        ui.label("A scene material has that name already.");
    }
    ui.horizontal(|ui| match editing {
        Some(old) => {
            if ui.add_enabled(ok, egui::Button::new("Apply changes")).clicked() {
                app.push(Command::Edit(Edit::SetMaterialDef { name: old, material: m }));
                app.materials.form = MaterialForm::default();
            }
            if ui.button("Stop changing").clicked() {
                app.materials.form = MaterialForm::default();
            }
        }
        None => {
            if ui.add_enabled(ok, egui::Button::new("Add material")).clicked() {
                let index = app.doc.scene.materials.len();
                app.push(Command::Edit(Edit::InsertMaterial { index, material: m }));
            }
        }
    });
}
