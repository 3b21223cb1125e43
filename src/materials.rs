//! The material presets as a designer reads them: a list with each grade's key numbers and
//! published sources (what `coercive materials` prints, as text or JSON) and charts of each
//! soft material's B-H curve and each magnet's demagnetisation line.
//!
//! The grades themselves live in [`coercive_fem::library`]; this module only reports them.

use std::fmt::Write as _;

use coercive_fem::library::{self, Grade};
use coercive_fem::{MaterialError, MU_0};
use coercive_post::plot::{
    xy_chart_svg, ChartOptions, LineStyle, Marker, PlotError, Series, SeriesStyle,
};
use serde::Serialize;
use thiserror::Error;

/// Field strengths (A/m) at which the list reports each soft material's flux density.
pub const REPORT_FIELDS: [f64; 5] = [1000.0, 2500.0, 5000.0, 10000.0, 50000.0];

/// One point of a soft material's curve: B (T) at H (A/m).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CurvePoint {
    /// Field strength H (A/m).
    pub h_a_per_m: f64,
    /// Flux density B (T).
    pub b_t: f64,
}

/// A guaranteed minimum of a grade's standard: polarisation J (T) at H (A/m).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MinimumPoint {
    /// Field strength H (A/m).
    pub h_a_per_m: f64,
    /// Minimum polarisation J (T).
    pub j_t: f64,
}

/// What kind of material a preset is, with its key numbers (SI units).
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
#[non_exhaustive]
pub enum PresetData {
    /// mu_r = 1 (air, copper).
    NonMagnetic,
    /// A soft material: its curve at [`REPORT_FIELDS`] and the standard's minima.
    Soft {
        /// B at the report fields.
        curve: Vec<CurvePoint>,
        /// Initial relative permeability of the processed curve.
        initial_relative_permeability: f64,
        /// The standard's guaranteed minimum polarisation (empty when it has none).
        minimum_polarisation: Vec<MinimumPoint>,
    },
    /// A permanent magnet (linear recoil model).
    Magnet {
        /// Remanence Br (T).
        remanence_t: f64,
        /// Published normal coercivity HcB (A/m).
        coercivity_a_per_m: f64,
        /// Published intrinsic coercivity HcJ (A/m).
        intrinsic_coercivity_a_per_m: f64,
        /// Recoil relative permeability.
        recoil_permeability: f64,
        /// Energy product of the linear model, Br^2/(4 mu_0 mu_rec) (J/m^3).
        model_energy_product_j_per_m3: f64,
    },
}

/// One preset of the list.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PresetEntry {
    /// The name a case file writes (`material = "..."` or `preset = "..."`).
    pub name: String,
    /// The grade as its standard writes it.
    pub designation: String,
    /// Where the numbers come from (source keys of [`coercive_fem::library`]).
    pub source: String,
    /// Kind and key numbers.
    #[serde(flatten)]
    pub data: PresetData,
}

/// Errors of the preset report.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum MaterialsError {
    /// A preset did not build (a bug in the library: every preset is tested).
    #[error("preset `{name}`: {source}")]
    Preset {
        /// The preset.
        name: String,
        /// What failed.
        source: MaterialError,
    },
    /// A chart could not be drawn.
    #[error("chart of `{name}`: {source}")]
    Plot {
        /// The preset or chart.
        name: String,
        /// What failed.
        source: PlotError,
    },
}

/// Every preset of [`library::names`], in its order, with its key numbers and source.
///
/// # Errors
/// [`MaterialsError::Preset`] if a preset does not build.
pub fn preset_list() -> Result<Vec<PresetEntry>, MaterialsError> {
    library::names()
        .iter()
        .map(|&name| {
            let fail = |source| MaterialsError::Preset {
                name: name.into(),
                source,
            };
            let grade = library::grade(name).map_err(fail)?;
            let source = grade.source().to_string();
            Ok(match grade {
                Grade::Steel(s) => {
                    let curve = s.curve().map_err(fail)?;
                    PresetEntry {
                        name: name.into(),
                        designation: s.designation.clone(),
                        source,
                        data: PresetData::Soft {
                            curve: REPORT_FIELDS
                                .iter()
                                .map(|&h| CurvePoint {
                                    h_a_per_m: h,
                                    b_t: curve.b_of_h(h),
                                })
                                .collect(),
                            initial_relative_permeability: curve.initial_relative_permeability(),
                            minimum_polarisation: s
                                .minimum_polarisation
                                .iter()
                                .map(|&(h, j)| MinimumPoint {
                                    h_a_per_m: h,
                                    j_t: j,
                                })
                                .collect(),
                        },
                    }
                }
                Grade::Magnet(m) => PresetEntry {
                    name: name.into(),
                    designation: m.designation.clone(),
                    source,
                    data: PresetData::Magnet {
                        remanence_t: m.remanence,
                        coercivity_a_per_m: m.coercivity,
                        intrinsic_coercivity_a_per_m: m.intrinsic_coercivity,
                        recoil_permeability: m.recoil_permeability,
                        model_energy_product_j_per_m3: m.model_energy_product(),
                    },
                },
                Grade::NonMagnetic => PresetEntry {
                    name: name.into(),
                    designation: "non-magnetic (mu_r = 1)".into(),
                    source,
                    data: PresetData::NonMagnetic,
                },
            })
        })
        .collect()
}

/// The list as text: one block per preset, every number with its unit.
pub fn preset_text(list: &[PresetEntry]) -> String {
    let mut out = String::new();
    let fields: Vec<String> = REPORT_FIELDS
        .iter()
        .map(|h| format!("{:.1}", h / 1e3))
        .collect();
    for entry in list {
        let _ = writeln!(out, "{}  {}", entry.name, entry.designation);
        match &entry.data {
            PresetData::NonMagnetic => {}
            PresetData::Soft {
                curve,
                initial_relative_permeability,
                minimum_polarisation,
            } => {
                let b: Vec<String> = curve.iter().map(|p| format!("{:.3}", p.b_t)).collect();
                let _ = writeln!(
                    out,
                    "    B at H = {} kA/m: {} T; initial mu_r {:.0}",
                    fields.join("/"),
                    b.join("/"),
                    initial_relative_permeability
                );
                if !minimum_polarisation.is_empty() {
                    let m: Vec<String> = minimum_polarisation
                        .iter()
                        .map(|p| format!("{:.2} T at {:.1} kA/m", p.j_t, p.h_a_per_m / 1e3))
                        .collect();
                    let _ = writeln!(out, "    guaranteed minimum J: {}", m.join(", "));
                }
            }
            PresetData::Magnet {
                remanence_t,
                coercivity_a_per_m,
                intrinsic_coercivity_a_per_m,
                recoil_permeability,
                model_energy_product_j_per_m3,
            } => {
                let _ = writeln!(
                    out,
                    "    Br {remanence_t:.3} T, HcB {:.1} kA/m, HcJ {:.1} kA/m, recoil mu_r \
                     {recoil_permeability:.2}, (BH)max of the linear model {:.1} kJ/m^3",
                    coercivity_a_per_m / 1e3,
                    intrinsic_coercivity_a_per_m / 1e3,
                    model_energy_product_j_per_m3 / 1e3
                );
            }
        }
        let _ = writeln!(out, "    source: {}", entry.source);
    }
    let _ = write!(
        out,
        "Typical values: real lots vary by several percent; override them in the case file or \
         give a measured curve (`bh = [[H, B], ...]`)."
    );
    out
}

/// Log-spaced field strengths from 10 A/m to 100 kA/m (the range of the B-H charts).
fn chart_fields() -> Vec<f64> {
    (0..=160)
        .map(|i| 10f64.powf(1.0 + 4.0 * i as f64 / 160.0))
        .collect()
}

/// The chart files: `<name>.svg` for each soft material (B against H, logarithmic H axis,
/// the standard's minima as markers) and each magnet (the linear model's demagnetisation
/// line in the second quadrant, the published Br and HcB as markers), plus
/// `soft-materials.svg` and `magnets.svg` comparing them all. Returns (file name, SVG text).
///
/// # Errors
/// [`MaterialsError`] if a preset does not build or a chart cannot be drawn.
pub fn preset_charts(list: &[PresetEntry]) -> Result<Vec<(String, String)>, MaterialsError> {
    let mut files = Vec::new();
    let mut soft_all = Vec::new();
    let mut magnets_all = Vec::new();
    let chart = |name: &str, series: &[Series], options: ChartOptions| {
        xy_chart_svg(series, &options).map_err(|source| MaterialsError::Plot {
            name: name.into(),
            source,
        })
    };
    for entry in list {
        let name = entry.name.as_str();
        let fail = |source| MaterialsError::Preset {
            name: name.into(),
            source,
        };
        match library::grade(name).map_err(fail)? {
            Grade::Steel(s) => {
                let curve = s.curve().map_err(fail)?;
                let points: Vec<(f64, f64)> = chart_fields()
                    .iter()
                    .map(|&h| (h, curve.b_of_h(h)))
                    .collect();
                let mut series = vec![Series::new(format!("{name}: B(H)"), points.clone())];
                if !s.minimum_polarisation.is_empty() {
                    series.push(Series {
                        label: "guaranteed minimum (as B = J + mu_0 H)".into(),
                        points: s
                            .minimum_polarisation
                            .iter()
                            .map(|&(h, j)| (h, j + MU_0 * h))
                            .collect(),
                        style: SeriesStyle {
                            colour: None,
                            marker: Some(Marker::Triangle),
                            line: Some(LineStyle::None),
                        },
                    });
                }
                let svg = chart(
                    name,
                    &series,
                    ChartOptions {
                        title: format!("{}: B-H curve", s.designation),
                        x_label: "H (A/m)".into(),
                        y_label: "B (T)".into(),
                        log_x: true,
                        include_zero_y: true,
                        ..ChartOptions::default()
                    },
                )?;
                files.push((format!("{name}.svg"), svg));
                let mut all = Series::new(name, points);
                all.style.marker = Some(Marker::None);
                soft_all.push(all);
            }
            Grade::Magnet(m) => {
                let ka = 1e-3;
                let end = m.model_coercivity().min(1.5 * m.intrinsic_coercivity);
                let line: Vec<(f64, f64)> = (0..=40)
                    .map(|i| {
                        let h = -end * i as f64 / 40.0;
                        (h * ka, m.remanence + MU_0 * m.recoil_permeability * h)
                    })
                    .collect();
                let series = vec![
                    Series::new("linear recoil model", line.clone()),
                    Series {
                        label: "published Br and HcB".into(),
                        points: vec![(0.0, m.remanence), (-m.coercivity * ka, 0.0)],
                        style: SeriesStyle {
                            colour: None,
                            marker: Some(Marker::Diamond),
                            line: Some(LineStyle::None),
                        },
                    },
                    Series {
                        label: "published HcJ (irreversible beyond)".into(),
                        points: vec![(
                            -m.intrinsic_coercivity * ka,
                            (m.remanence - MU_0 * m.recoil_permeability * m.intrinsic_coercivity)
                                .max(0.0),
                        )],
                        style: SeriesStyle {
                            colour: None,
                            marker: Some(Marker::OpenCircle),
                            line: Some(LineStyle::None),
                        },
                    },
                ];
                let svg = chart(
                    name,
                    &series,
                    ChartOptions {
                        title: format!("{}: demagnetisation line", m.designation),
                        x_label: "H along the easy axis (kA/m)".into(),
                        y_label: "B along the easy axis (T)".into(),
                        include_zero_y: true,
                        ..ChartOptions::default()
                    },
                )?;
                files.push((format!("{name}.svg"), svg));
                let mut all = Series::new(name, line);
                all.style.marker = Some(Marker::None);
                magnets_all.push(all);
            }
            Grade::NonMagnetic => {}
        }
    }
    files.push((
        "soft-materials.svg".into(),
        chart(
            "soft-materials",
            &soft_all,
            ChartOptions {
                title: "Soft material presets: B-H curves".into(),
                x_label: "H (A/m)".into(),
                y_label: "B (T)".into(),
                log_x: true,
                include_zero_y: true,
                height: 640.0,
                ..ChartOptions::default()
            },
        )?,
    ));
    files.push((
        "magnets.svg".into(),
        chart(
            "magnets",
            &magnets_all,
            ChartOptions {
                title: "Magnet presets: linear demagnetisation lines".into(),
                x_label: "H along the easy axis (kA/m)".into(),
                y_label: "B along the easy axis (T)".into(),
                include_zero_y: true,
                ..ChartOptions::default()
            },
        )?,
    ));
    Ok(files)
}
