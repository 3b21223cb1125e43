//! Named presets: the soft and hard magnetic grades a designer of switchable permanent-magnet
//! devices and magnet-assisted reluctance machines meets, named by the standard that defines
//! each grade.
//!
//! # What is here
//! - **Carbon steels and cast iron** for pole pieces and for the workpieces a holding magnet
//!   meets (the workpiece material changes the holding force): low carbon `steel-c10`
//!   (EN 10083-2 / EN 10277 class C10), medium carbon `steel-c45` (EN 10083-2 C45, normalised),
//!   free-cutting `steel-11smn30` (EN 10087 11SMn30) and pearlitic grey cast iron
//!   `cast-iron-gjl-250` (EN 1561 EN-GJL-250).
//! - **Non-oriented electrical steels** by EN 10106 designation: `m270-50a`, `m330-50a`,
//!   `m400-50a`, `m800-50a`, each with the standard's guaranteed minimum polarisation at
//!   2500, 5000 and 10000 A/m ([`SteelGrade::minimum_polarisation`]).
//! - **Magnets**: sintered NdFeB by grade and temperature class (`ndfeb-n35`, `ndfeb-n42`,
//!   `ndfeb-n42sh`, `ndfeb-n52`), cast AlNiCo (`alnico-5`, `alnico-8`) and hard ferrite by
//!   its IEC 60404-8-1 class (`ferrite-hf-26-18`), each with Br, HcB, HcJ and the recoil
//!   permeability.
//! - `air` and `copper` (mu_r = 1).
//!
//! Every number carries its source beside it (see [`Grade::source`]): a standard, a
//! producer's typical-value sheet, a handbook table, or `from memory` where the value was
//! recalled and not re-read. Typical curves vary by several percent from lot to lot, and
//! machining lowers the permeability of electrical steel near cut edges: for a design that
//! matters, measure or ask the supplier, and override the values.
//!
//! Each grade is a plain struct whose fields the user may change before turning it into a
//! [`Material`]:
//! ```
//! use coercive_fem::library;
//! let mut grade = library::ndfeb_n42();
//! grade.remanence = 1.31; // T, from the supplier's certificate
//! let material = grade.to_material().unwrap();
//! assert!(material.is_linear());
//! ```
//!
//! Names retired from an earlier library (`steel-1010`, `m-19`, `ferrite-c5`, ...) are
//! refused with an error that names the preset to write instead.
//!
//! # Magnets
//! Magnets are linear recoil models (straight line through Br with the recoil permeability).
//! This is accurate for sintered NdFeB above its knee. Hard ferrite and AlNiCo have a knee
//! well before B = 0; the linear model holds only while the working point stays on the recoil
//! line (AlNiCo: a high-permeance circuit after full magnetisation). The hysteretic model of
//! the same grades lives in [`crate::hysteresis`] under the same names.
//!
//! # Sources
//! - `[EN 10106]`: EN 10106, cold rolled non-oriented electrical steel sheet and strip
//!   delivered in the fully processed state (grade designation `M<loss>-<thickness>A`; minimum
//!   polarisation J at H = 2500, 5000 and 10000 A/m). The minima below are `from memory`: the
//!   standard's table was not re-read.
//! - `[voestalpine]`: typical J(H) curves of non-oriented electrical steel measured by the
//!   producer voestalpine (isovac grades, Epstein frame, 50 Hz), published with the producer's
//!   permission in the Modelica Standard Library 4.x (BSD-3-Clause), package
//!   `Magnetic.FluxTubes.Material.SoftMagnetic.SSEE`, raw-data arrays `HD`, `JD`. Only the
//!   measured points are used (not that library's spline or extrapolation).
//! - `[Brauer 2014]`: J. R. Brauer, Magnetic Actuators and Sensors, 2nd ed., Wiley 2014,
//!   Appendix B: coefficients of H = (k1 exp(k2 B^2) + k3) B fitted to handbook curves of
//!   common steels; the law is from Brauer, IEEE Trans. Magn. 11(1), 1975.
//! - `[Roschke 2000]`: T. Roschke, Entwurf geregelter elektromagnetischer Antriebe fuer
//!   Luftschuetze, Dissertation, TU Dresden 2000 (`from memory` for the bibliographic details):
//!   the permeability law mu_r(B) = 1 + (mu_i - 1 + c_a B_N) / (1 + c_b B_N + B_N^n) with
//!   B_N = B / B_mumax, and coefficients fitted to measured curves of common steels, as
//!   tabulated in the Modelica Standard Library 4.x, `Magnetic.FluxTubes.Material.SoftMagnetic`.
//! - `[grey iron table]`: magnetic properties of grey cast irons (pearlitic matrix, 3.12 % C,
//!   2.22 % Si: maximum permeability 396 uH/m at 637 A/m, 15.9 kA/m for B = 1 T), a handbook
//!   table reproduced in a foundry's technical note ("Grey Cast Iron Magnetic Properties",
//!   steel-foundry.com).
//! - `[GB/T 13560]`: sintered NdFeB grade tables of vendors following the Chinese standard
//!   GB/T 13560 (Br, HcB, HcJ ranges per grade; the temperature class letter fixes the
//!   minimum HcJ: none 955, M 1114, H 1353, SH 1592, UH 1990, EH 2388 kA/m).
//! - `[ASTM A1101-16]`: ASTM A1101-16, specification for sintered NdFeB (Br 1.08-1.5 T).
//! - `[MMPA 0100-00]`: Magnetic Materials Producers Association Standard 0100-00 (AlNiCo and
//!   ceramic grade tables), and vendor tables of cast AlNiCo and ferrite.
//! - `[IEC 60404-8-1]`: IEC 60404-8-1, magnetically hard materials: hard ferrite class
//!   designation HF (BH)max/HcJ, e.g. HF 26/18 = (BH)max >= 26 kJ/m^3, HcJ >= 180 kA/m
//!   (`from memory`: the standard's table was not re-read).
//! - `from memory`: a typical value recalled, not re-read in a source.

use std::f64::consts::FRAC_PI_2;

use serde::{Deserialize, Serialize};

use crate::bh::BhCurve;
use crate::material::{LinearMagnet, MagnetDirection, Material, MaterialError, SoftMagnetic, MU_0};

/// A permanent-magnet grade, modelled as a linear recoil magnet.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct MagnetGrade {
    /// Preset name, e.g. `ndfeb-n42`.
    pub name: String,
    /// The grade as its standard or producers write it, e.g. `N42SH (GB/T 13560)`.
    #[serde(default)]
    pub designation: String,
    /// Remanence Br (T).
    pub remanence: f64,
    /// Published normal coercivity HcB (A/m): for information and checks; the linear model's
    /// own coercivity is [`MagnetGrade::model_coercivity`].
    pub coercivity: f64,
    /// Published intrinsic coercivity HcJ (A/m): a reverse field along the easy axis beyond
    /// about this value demagnetises the magnet irreversibly, outside the linear model.
    pub intrinsic_coercivity: f64,
    /// Recoil relative permeability along the easy axis (at least 1).
    pub recoil_permeability: f64,
    /// Relative permeability across the easy axis.
    pub perpendicular_permeability: f64,
    /// Easy-axis layout; presets use a fixed +y direction (angle pi/2).
    pub direction: MagnetDirection,
    /// Where each number comes from (short source keys of the module documentation).
    #[serde(default)]
    pub source: String,
}

impl MagnetGrade {
    /// Coercivity of the linear model, Br / (mu_0 mu_rec) (A/m).
    pub fn model_coercivity(&self) -> f64 {
        self.remanence / (MU_0 * self.recoil_permeability)
    }

    /// Maximum energy product of the linear recoil line, Br^2 / (4 mu_0 mu_rec) (J/m^3).
    /// Real magnets whose knee lies above B = 0 (AlNiCo) reach much less.
    pub fn model_energy_product(&self) -> f64 {
        self.remanence * self.remanence / (4.0 * MU_0 * self.recoil_permeability)
    }

    /// The same grade with another easy-axis layout.
    pub fn with_direction(mut self, direction: MagnetDirection) -> MagnetGrade {
        self.direction = direction;
        self
    }

    /// The linear magnet law of this grade.
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] if a value was overridden out of range.
    pub fn to_material(&self) -> Result<Material, MaterialError> {
        for (parameter, value) in [
            ("coercivity HcB (A/m)", self.coercivity),
            ("intrinsic coercivity HcJ (A/m)", self.intrinsic_coercivity),
        ] {
            if !(value.is_finite() && value > 0.0) {
                return Err(MaterialError::InvalidParameter {
                    material: self.name.clone(),
                    parameter,
                    value,
                    reason: "must be finite and positive",
                });
            }
        }
        // The knee of the grade's major loop, from the hysteresis model fitted to the same
        // grade's datasheet (a preset name of both); unknown for other names.
        let knee_field = crate::hysteresis::datasheet(&self.name)
            .ok()
            .and_then(|sheet| crate::hysteresis::HysteresisLaw::fit(&sheet).ok())
            .and_then(|fitted| crate::material::knee_of(&fitted.law));
        let m = Material::Magnet(LinearMagnet {
            knee_field,
            remanence: self.remanence,
            recoil_permeability: self.recoil_permeability,
            perpendicular_permeability: self.perpendicular_permeability,
            direction: self.direction,
        });
        m.validate().map_err(|e| match e {
            MaterialError::InvalidParameter {
                parameter,
                value,
                reason,
                ..
            } => MaterialError::InvalidParameter {
                material: self.name.clone(),
                parameter,
                value,
                reason,
            },
            other => other,
        })?;
        Ok(m)
    }
}

/// How a soft grade's B-H curve is given by its source.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "law", rename_all = "snake_case")]
#[non_exhaustive]
pub enum SteelLaw {
    /// Measured points (H in A/m, B in T), interpolated by the monotone cubic of
    /// [`BhCurve::from_points`].
    Table {
        /// (H, B) points, strictly increasing, the origin optional.
        points: Vec<(f64, f64)>,
    },
    /// Brauer's law H = (k1 exp(k2 B^2) + k3) B ([`BhCurve::brauer`]).
    Brauer {
        /// k1 (A/(m T)).
        k1: f64,
        /// k2 (1/T^2).
        k2: f64,
        /// k3 (A/(m T)).
        k3: f64,
    },
    /// The saturating law B = mu_0 H + Js H / (H + H0) ([`BhCurve::saturating`]).
    Saturating {
        /// Saturation polarisation Js (T).
        js: f64,
        /// Half-saturation field H0 (A/m).
        h0: f64,
    },
    /// Roschke's permeability law mu_r(B) = 1 + (mu_i - 1 + c_a B_N) / (1 + c_b B_N + B_N^n),
    /// B_N = B / B_mumax (`[Roschke 2000]`), sampled every 0.02 T while its slope dB/dH stays
    /// above 1.05 mu_0 (beyond, the curve continues at vacuum slope).
    Permeability {
        /// Initial relative permeability mu_i.
        initial: f64,
        /// Flux density of maximum permeability B_mumax (T).
        b_max_permeability: f64,
        /// Coefficient c_a.
        c_a: f64,
        /// Coefficient c_b.
        c_b: f64,
        /// Exponent n.
        n: f64,
    },
}

/// A soft ferrous grade (carbon steel, cast iron, electrical steel) and its B-H curve.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SteelGrade {
    /// Preset name, e.g. `m400-50a`.
    pub name: String,
    /// The grade as its standard writes it, e.g. `M400-50A (EN 10106)`.
    pub designation: String,
    /// The B-H curve as the source gives it.
    pub law: SteelLaw,
    /// Lamination stacking factor (0 < k <= 1); presets use 1 (the curve of the steel itself).
    /// Laminated stacks typically use 0.95-0.98 (common practice).
    pub stacking_factor: f64,
    /// Minimum polarisation J (T) the grade's standard guarantees at field strengths H (A/m),
    /// as (H, J) pairs; empty when the standard guarantees none.
    #[serde(default)]
    pub minimum_polarisation: Vec<(f64, f64)>,
    /// Where the curve and the minima come from (short source keys of the module
    /// documentation) and how a table was completed.
    pub source: String,
}

impl SteelGrade {
    /// The processed B-H curve of this grade (with its stacking factor).
    ///
    /// # Errors
    /// [`MaterialError`] if a value or point was overridden out of range.
    pub fn curve(&self) -> Result<BhCurve, MaterialError> {
        let curve = match &self.law {
            SteelLaw::Table { points } => BhCurve::from_points(points)?,
            SteelLaw::Brauer { k1, k2, k3 } => BhCurve::brauer(*k1, *k2, *k3)?,
            SteelLaw::Saturating { js, h0 } => BhCurve::saturating(*js, *h0)?,
            SteelLaw::Permeability {
                initial,
                b_max_permeability,
                c_a,
                c_b,
                n,
            } => BhCurve::from_points(&permeability_law_points(
                &self.name,
                [*initial, *b_max_permeability, *c_a, *c_b, *n],
            )?)?,
        };
        curve.with_stacking_factor(self.stacking_factor)
    }

    /// The nonlinear soft material of this grade.
    ///
    /// # Errors
    /// As [`SteelGrade::curve`].
    pub fn to_material(&self) -> Result<Material, MaterialError> {
        Ok(Material::Soft(SoftMagnetic {
            curve: self.curve()?,
        }))
    }
}

/// Samples Roschke's law H = B / (mu_0 mu_r(B)) every 0.02 T from 0.02 T while the secant
/// dB/dH stays above 1.05 mu_0 (up to 3 T).
fn permeability_law_points(name: &str, p: [f64; 5]) -> Result<Vec<(f64, f64)>, MaterialError> {
    let [initial, b_max, c_a, c_b, n] = p;
    for (parameter, value) in [
        ("initial relative permeability", initial),
        ("flux density of maximum permeability (T)", b_max),
        ("c_a", c_a),
        ("c_b", c_b),
        ("n", n),
    ] {
        if !(value.is_finite() && value >= 0.0) || (parameter.starts_with("flux") && value == 0.0) {
            return Err(MaterialError::InvalidParameter {
                material: name.into(),
                parameter,
                value,
                reason: "must be finite and non-negative (B_mumax positive)",
            });
        }
    }
    let field = |b: f64| {
        let bn = b / b_max;
        let mu_r = 1.0 + (initial - 1.0 + c_a * bn) / (1.0 + c_b * bn + bn.powf(n));
        b / (MU_0 * mu_r)
    };
    let step = 0.02;
    let mut points = Vec::new();
    let mut previous = (0.0, 0.0);
    for i in 1..=150 {
        let b = step * i as f64;
        let h = field(b);
        if !h.is_finite() || h <= previous.0 || (b - previous.1) / (h - previous.0) < 1.05 * MU_0 {
            break;
        }
        points.push((h, b));
        previous = (h, b);
    }
    Ok(points)
}

const KA_PER_M: f64 = 1e3;

/// A grade that the hysteresis model also knows: its Br, HcB, HcJ and recoil permeability
/// come from the same datasheet ([`crate::hysteresis::datasheet`], where each number's
/// source is given), so the linear and the hysteretic model of a grade never disagree.
fn from_sheet(name: &str, designation: &str, source: &str) -> MagnetGrade {
    let sheet = crate::hysteresis::datasheet(name)
        .expect("every grade built here is a preset of the hysteresis module (tested)");
    magnet(
        name,
        designation,
        sheet.remanence,
        sheet.coercivity,
        sheet.intrinsic_coercivity,
        sheet.recoil_permeability,
        source,
    )
}

fn magnet(
    name: &str,
    designation: &str,
    remanence: f64,
    coercivity: f64,
    intrinsic_coercivity: f64,
    recoil_permeability: f64,
    source: &str,
) -> MagnetGrade {
    MagnetGrade {
        name: name.into(),
        designation: designation.into(),
        remanence,
        coercivity,
        intrinsic_coercivity,
        recoil_permeability,
        perpendicular_permeability: recoil_permeability,
        direction: MagnetDirection::Fixed { angle: FRAC_PI_2 },
        source: source.into(),
    }
}

/// Sintered NdFeB N35, nominal.
///
/// Br 1.195 T: middle of 1.17-1.22 T `[GB/T 13560]`. HcB 868 kA/m and HcJ 955 kA/m: the
/// published minima `[GB/T 13560]`. Recoil mu_r 1.05 `[GB/T 13560]` vendor tables ("about
/// 1.05"); also used across the easy axis (`from memory`: the perpendicular permeability of
/// sintered NdFeB is of the same order, 1.05-1.2).
pub fn ndfeb_n35() -> MagnetGrade {
    magnet(
        "ndfeb-n35",
        "N35 (GB/T 13560)",
        1.195,
        868.0 * KA_PER_M,
        955.0 * KA_PER_M,
        1.05,
        "Br middle of 1.17-1.22 T, HcB and HcJ published minima, recoil 1.05 [GB/T 13560]",
    )
}

/// Sintered NdFeB N42, nominal.
///
/// Br 1.30 T: middle of 1.28-1.32 T `[GB/T 13560]`. HcB 915 kA/m and HcJ 955 kA/m: the
/// published minima `[GB/T 13560]`. Recoil mu_r 1.05 `[GB/T 13560]` vendor tables.
pub fn ndfeb_n42() -> MagnetGrade {
    from_sheet(
        "ndfeb-n42",
        "N42 (GB/T 13560)",
        "Br middle of 1.28-1.32 T, HcB and HcJ published minima, recoil 1.05 [GB/T 13560]",
    )
}

/// Sintered NdFeB N42SH (temperature class SH, for use up to about 150 degC), nominal.
///
/// Br 1.305 T: middle of 1.29-1.32 T `[GB/T 13560]` (the hysteresis datasheet's value). HcJ
/// 1592 kA/m (20 kOe): the minimum of class SH `[GB/T 13560]`. HcB 979 kA/m (12.3 kOe):
/// `from memory` (vendor tables quote at least 12.3-12.5 kOe). Recoil mu_r 1.05
/// `[GB/T 13560]` vendor tables.
pub fn ndfeb_n42sh() -> MagnetGrade {
    from_sheet(
        "ndfeb-n42sh",
        "N42SH (GB/T 13560)",
        "Br middle of 1.29-1.32 T, HcJ class SH minimum, recoil 1.05 [GB/T 13560]; HcB from memory",
    )
}

/// Sintered NdFeB N52, nominal.
///
/// Br 1.455 T: middle of 1.43-1.48 T `[GB/T 13560]`. HcJ 876 kA/m: the published minimum
/// `[GB/T 13560]`. HcB 836 kA/m: `from memory` (vendor tables quote at least 836 kA/m,
/// 10.5 kOe). Recoil mu_r 1.05 `[GB/T 13560]` vendor tables. The straight recoil line reaches
/// B = 0 only at Br/(mu_0 mu_rec) = 1103 kA/m, beyond HcJ: N52 has a knee before B = 0, so
/// keep reverse fields well below HcJ.
pub fn ndfeb_n52() -> MagnetGrade {
    magnet(
        "ndfeb-n52",
        "N52 (GB/T 13560)",
        1.455,
        836.0 * KA_PER_M,
        876.0 * KA_PER_M,
        1.05,
        "Br middle of 1.43-1.48 T, HcJ published minimum, recoil 1.05 [GB/T 13560]; HcB from memory",
    )
}

/// Cast AlNiCo 5, nominal, after full magnetisation (about 240 kA/m, vendor tables).
///
/// Br 1.275 T: middle of 1.25-1.30 T; HcB 50 kA/m: middle of 48-52 kA/m; recoil mu_r 3.6
/// (vendor tables, `[MMPA 0100-00]` class). HcJ 50.33 kA/m: AlNiCo's HcJ is only slightly above
/// HcB (`from memory`); the value is the one that gives the hysteresis model's fitted loop the
/// middle (BH)max of 38-44 kJ/m^3 (see [`crate::hysteresis::datasheet`]). The linear recoil model is NOT the demagnetisation curve: its own
/// coercivity Br/(mu_0 mu_rec) is about 282 kA/m, far above HcB; the magnet loses
/// magnetisation irreversibly once H along the easy axis passes about -HcB.
pub fn alnico_5() -> MagnetGrade {
    from_sheet(
        "alnico-5",
        "AlNiCo 5, cast (MMPA 0100-00)",
        "Br middle of 1.25-1.30 T, HcB middle of 48-52 kA/m, recoil 3.6 [MMPA 0100-00] vendor tables; HcJ set by the middle (BH)max",
    )
}

/// Cast AlNiCo 8, nominal.
///
/// Br 0.865 T: middle of 0.83-0.90 T; HcB 116.5 kA/m: middle of 110-123 kA/m (vendor tables,
/// `[MMPA 0100-00]` class). HcJ 124 kA/m and recoil mu_r 1.9: `from memory`. As for AlNiCo 5,
/// the linear model holds on the recoil line only.
pub fn alnico_8() -> MagnetGrade {
    from_sheet(
        "alnico-8",
        "AlNiCo 8, cast (MMPA 0100-00)",
        "Br middle of 0.83-0.90 T, HcB middle of 110-123 kA/m [MMPA 0100-00] vendor tables; HcJ and recoil from memory",
    )
}

/// Sintered hard ferrite of IEC 60404-8-1 class HF 26/18 ((BH)max >= 26 kJ/m^3,
/// HcJ >= 180 kA/m `[IEC 60404-8-1]`), nominal; the class of the grades sold as C5 / Y30.
///
/// Br 0.385 T: middle of 0.37-0.40 T; HcB 192.5 kA/m: middle of 175-210 kA/m; HcJ 200 kA/m:
/// middle of 180-220 kA/m (vendor tables of class C5 / Y30, `[MMPA 0100-00]`). Recoil mu_r
/// 1.1: `from memory`. The linear model's energy product Br^2/(4 mu_0 mu_rec) = 26.8 kJ/m^3
/// meets the class minimum. The straight line would reach B = 0 at 279 kA/m; ferrite's knee
/// lies near HcJ, so keep reverse fields below about 190 kA/m.
pub fn ferrite_hf_26_18() -> MagnetGrade {
    from_sheet(
        "ferrite-hf-26-18",
        "HF 26/18 (IEC 60404-8-1)",
        "class minima (BH)max 26 kJ/m^3, HcJ 180 kA/m [IEC 60404-8-1]; Br, HcB, HcJ middles of C5/Y30 vendor ranges [MMPA 0100-00]; recoil from memory",
    )
}

fn steel(
    name: &str,
    designation: &str,
    law: SteelLaw,
    minimum_polarisation: &[(f64, f64)],
    source: &str,
) -> SteelGrade {
    SteelGrade {
        name: name.into(),
        designation: designation.into(),
        law,
        stacking_factor: 1.0,
        minimum_polarisation: minimum_polarisation.to_vec(),
        source: source.into(),
    }
}

/// (H, J) points (A/m, T) to (H, B) points with B = J + mu_0 H.
fn polarisation_to_flux_density(points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    points.iter().map(|&(h, j)| (h, j + MU_0 * h)).collect()
}

/// Low-carbon steel C10 (EN 10083-2 / EN 10277, 1.0301; AISI/SAE 1010 is its US
/// counterpart), annealed: pole pieces and the workpiece of reference for holding forces.
///
/// Brauer's law with k1 = 4.847 A/(m T), k2 = 1.908 1/T^2, k3 = 227.3 A/(m T), the fit for
/// annealed 1010 steel `[Brauer 2014]`. It gives H = 874 A/m at 1.5 T and 7.4 kA/m at 1.8 T.
pub fn steel_c10() -> SteelGrade {
    steel(
        "steel-c10",
        "C10, annealed (EN 10083-2 / EN 10277; AISI 1010)",
        SteelLaw::Brauer {
            k1: 4.847,
            k2: 1.908,
            k3: 227.3,
        },
        &[],
        "Brauer law fitted to annealed 1010 steel, the US counterpart of C10 [Brauer 2014]",
    )
}

/// Medium-carbon steel C45 (EN 10083-2, 1.0503), normalised: shafts and workpieces.
///
/// Typical curve `from memory` (handbook curves of normalised 0.45 % C steel as recalled, not
/// re-read): 17 points from 200 A/m to 200 kA/m; B = 1.53 T at 5 kA/m and 1.68 T at 10 kA/m,
/// well below low-carbon steel (the pearlite lowers permeability and saturation). Replace it
/// with a measured curve where the holding force matters.
pub fn steel_c45() -> SteelGrade {
    steel(
        "steel-c45",
        "C45, normalised (EN 10083-2)",
        SteelLaw::Table {
            points: vec![
                (200.0, 0.15),
                (400.0, 0.40),
                (600.0, 0.65),
                (800.0, 0.85),
                (1000.0, 0.98),
                (1500.0, 1.17),
                (2000.0, 1.28),
                (3000.0, 1.40),
                (5000.0, 1.53),
                (7500.0, 1.62),
                (10000.0, 1.68),
                (15000.0, 1.76),
                (20000.0, 1.82),
                (30000.0, 1.90),
                (50000.0, 1.99),
                (100000.0, 2.10),
                (200000.0, 2.24),
            ],
        },
        &[],
        "typical curve from memory (handbook curves of normalised C45 as recalled, not re-read)",
    )
}

/// Free-cutting steel 11SMn30 (EN 10087, 1.0715; formerly 9SMn28): turned pole pieces.
///
/// Roschke's permeability law with mu_i = 500, B_mumax = 1.036 T, c_a = 43414, c_b = 35.8,
/// n = 14, the fit for 9SMn28K (1.0715) `[Roschke 2000]`, sampled every 0.02 T up to 1.94 T
/// (where the law's slope falls to vacuum; beyond, vacuum slope). It gives H = 678 A/m at 1 T,
/// 2.2 kA/m at 1.4 T and 43 kA/m at 1.8 T.
pub fn steel_11smn30() -> SteelGrade {
    steel(
        "steel-11smn30",
        "11SMn30 (EN 10087, 1.0715)",
        SteelLaw::Permeability {
            initial: 500.0,
            b_max_permeability: 1.036,
            c_a: 43414.0,
            c_b: 35.8,
            n: 14.0,
        },
        &[],
        "Roschke permeability law fitted to 9SMn28K = 1.0715 [Roschke 2000], sampled every 0.02 T",
    )
}

/// Saturation polarisation Js (T) and half-saturation field H0 (A/m) of the saturating law
/// B = mu_0 H + Js H/(H + H0) through two (H, B) points (A/m, T).
fn saturating_through(p1: (f64, f64), p2: (f64, f64)) -> (f64, f64) {
    let (h1, h2) = (p1.0, p2.0);
    let (j1, j2) = (p1.1 - MU_0 * h1, p2.1 - MU_0 * h2);
    // J_i (H_i + H0) / H_i = Js for both points.
    let h0 = (j2 - j1) / (j1 / h1 - j2 / h2);
    (j2 * (h2 + h0) / h2, h0)
}

/// The two published points of pearlitic grey cast iron `[grey iron table]`: B at the field of
/// maximum permeability (396 uH/m x 637 A/m = 0.252 T) and the field for B = 1 T.
pub const GREY_IRON_POINTS: [(f64, f64); 2] = [(637.0, 396e-6 * 637.0), (15.9e3, 1.0)];

/// Pearlitic grey cast iron EN-GJL-250 (EN 1561): cast yokes, bases and workpieces.
///
/// Only two points are published `[grey iron table]` ([`GREY_IRON_POINTS`]); the curve is the
/// saturating law B = mu_0 H + Js H/(H + H0) through both, which gives Js = 1.115 T and
/// H0 = 2.19 kA/m (initial mu_r about 400, against the table's maximum of 315). The law has
/// no S-shaped knee at low field and saturates early (1.13 T at 50 kA/m): a conservative
/// workpiece, good for comparing holding forces, not for detailed cast-iron magnetics.
pub fn cast_iron_gjl_250() -> SteelGrade {
    let (js, h0) = saturating_through(GREY_IRON_POINTS[0], GREY_IRON_POINTS[1]);
    steel(
        "cast-iron-gjl-250",
        "EN-GJL-250, pearlitic grey cast iron (EN 1561)",
        SteelLaw::Saturating { js, h0 },
        &[],
        "saturating law through the two published points of pearlitic grey iron [grey iron table]",
    )
}

/// Typical J(H) of voestalpine M270-50A `[voestalpine]` (H in A/m, J in T), 50 Hz Epstein.
const M270_50A: [(f64, f64); 32] = [
    (10.02, 0.02357),
    (20.02, 0.06234),
    (30.04, 0.12779),
    (40.01, 0.22774),
    (49.92, 0.35715),
    (59.98, 0.50714),
    (69.98, 0.62863),
    (79.95, 0.73381),
    (89.97, 0.81804),
    (101.99, 0.90102),
    (125.19, 1.02044),
    (150.15, 1.10685),
    (175.44, 1.16639),
    (199.94, 1.20730),
    (250.05, 1.26200),
    (348.75, 1.31927),
    (500.01, 1.36347),
    (747.34, 1.40364),
    (1000.51, 1.43087),
    (1249.58, 1.45190),
    (1500.02, 1.46983),
    (1998.74, 1.49968),
    (2505.98, 1.52527),
    (5003.32, 1.61988),
    (7501.24, 1.68955),
    (10001.65, 1.74529),
    (14980.88, 1.82820),
    (19444.24, 1.87759),
    (23698.52, 1.90750),
    (27696.00, 1.92345),
    (30591.27, 1.93056),
    (32129.82, 1.93345),
];

/// Typical J(H) of voestalpine M330-50A `[voestalpine]` (H in A/m, J in T), 50 Hz Epstein.
const M330_50A: [(f64, f64); 32] = [
    (10.02, 0.01852),
    (19.99, 0.04416),
    (29.99, 0.08001),
    (40.01, 0.13893),
    (49.99, 0.24031),
    (60.04, 0.38507),
    (70.10, 0.54387),
    (79.95, 0.69247),
    (90.14, 0.81635),
    (102.04, 0.92617),
    (125.08, 1.06531),
    (150.30, 1.15572),
    (174.92, 1.21245),
    (199.94, 1.25222),
    (250.39, 1.30438),
    (349.71, 1.36020),
    (500.70, 1.40426),
    (749.78, 1.44489),
    (1000.05, 1.47165),
    (1249.81, 1.49202),
    (1495.59, 1.50887),
    (2001.01, 1.53725),
    (2500.07, 1.56065),
    (4999.69, 1.64700),
    (7527.94, 1.71122),
    (10000.51, 1.76217),
    (14999.06, 1.84126),
    (19716.95, 1.89384),
    (25059.80, 1.93351),
    (27923.26, 1.94746),
    (32916.13, 1.96320),
    (33466.10, 1.96432),
];

/// Typical J(H) of voestalpine M400-50A `[voestalpine]` (H in A/m, J in T), 50 Hz Epstein.
const M400_50A: [(f64, f64); 32] = [
    (10.01, 0.01174),
    (20.02, 0.02872),
    (30.00, 0.05212),
    (40.04, 0.08379),
    (50.02, 0.13713),
    (60.00, 0.25006),
    (70.04, 0.39690),
    (79.95, 0.53434),
    (90.15, 0.68837),
    (100.02, 0.81912),
    (125.04, 1.03212),
    (150.75, 1.15089),
    (174.99, 1.21926),
    (200.15, 1.26636),
    (249.42, 1.32261),
    (349.80, 1.38007),
    (500.20, 1.42283),
    (749.73, 1.46237),
    (1000.16, 1.48822),
    (1250.83, 1.50816),
    (1501.27, 1.52464),
    (1999.42, 1.55179),
    (2498.48, 1.57443),
    (4994.23, 1.65894),
    (7499.53, 1.72245),
    (9982.33, 1.77386),
    (15038.84, 1.85521),
    (19660.14, 1.90918),
    (24012.14, 1.94542),
    (28095.98, 1.96853),
    (31507.13, 1.98122),
    (32584.33, 1.98429),
];

/// Typical J(H) of voestalpine M800-50A `[voestalpine]` (H in A/m, J in T), 50 Hz Epstein.
const M800_50A: [(f64, f64); 32] = [
    (10.06, 0.00496),
    (20.03, 0.01142),
    (30.00, 0.01907),
    (40.02, 0.02777),
    (50.00, 0.03783),
    (60.01, 0.04946),
    (70.05, 0.06266),
    (80.04, 0.07981),
    (90.02, 0.09993),
    (100.11, 0.12973),
    (125.42, 0.37353),
    (149.84, 0.74319),
    (174.13, 0.99890),
    (199.83, 1.14296),
    (249.64, 1.28154),
    (349.71, 1.39480),
    (499.88, 1.46505),
    (749.16, 1.51909),
    (1000.28, 1.55021),
    (1250.15, 1.57233),
    (1498.09, 1.58983),
    (1998.51, 1.61762),
    (2500.30, 1.64000),
    (4993.33, 1.72097),
    (7471.69, 1.78069),
    (9978.92, 1.83023),
    (14925.21, 1.90759),
    (19789.68, 1.96410),
    (24212.13, 2.00248),
    (28468.68, 2.02932),
    (32059.37, 2.04540),
    (34411.49, 2.05310),
];

/// The three field strengths (A/m) at which EN 10106 guarantees a minimum polarisation.
pub const EN_10106_FIELDS: [f64; 3] = [2500.0, 5000.0, 10000.0];

fn electrical_steel(name: &str, grade: &str, table: &[(f64, f64)], minima: [f64; 3]) -> SteelGrade {
    let minimum: Vec<(f64, f64)> = EN_10106_FIELDS.iter().copied().zip(minima).collect();
    steel(
        name,
        &format!("{grade} (EN 10106)"),
        SteelLaw::Table {
            points: polarisation_to_flux_density(table),
        },
        &minimum,
        &format!(
            "typical J(H) measured by the producer, {} points from 10 A/m to {:.1} kA/m, \
             B = J + mu_0 H [voestalpine]; minimum J {:.2}/{:.2}/{:.2} T at 2500/5000/10000 A/m \
             [EN 10106] (from memory)",
            table.len(),
            table[table.len() - 1].0 / 1e3,
            minima[0],
            minima[1],
            minima[2]
        ),
    )
}

/// Non-oriented electrical steel M270-50A (EN 10106; 2.70 W/kg at 1.5 T, 50 Hz; 0.50 mm):
/// typical curve `[voestalpine]`; minimum J 1.49/1.60/1.70 T at 2.5/5/10 kA/m `[EN 10106]`
/// (`from memory`).
pub fn m270_50a() -> SteelGrade {
    electrical_steel("m270-50a", "M270-50A", &M270_50A, [1.49, 1.60, 1.70])
}

/// Non-oriented electrical steel M330-50A (EN 10106; 3.30 W/kg at 1.5 T, 50 Hz; 0.50 mm):
/// typical curve `[voestalpine]`; minimum J 1.49/1.60/1.70 T `[EN 10106]` (`from memory`).
pub fn m330_50a() -> SteelGrade {
    electrical_steel("m330-50a", "M330-50A", &M330_50A, [1.49, 1.60, 1.70])
}

/// Non-oriented electrical steel M400-50A (EN 10106; 4.00 W/kg at 1.5 T, 50 Hz; 0.50 mm), the
/// usual grade of machine laminations: typical curve `[voestalpine]`; minimum J
/// 1.53/1.63/1.73 T `[EN 10106]` (`from memory`).
pub fn m400_50a() -> SteelGrade {
    electrical_steel("m400-50a", "M400-50A", &M400_50A, [1.53, 1.63, 1.73])
}

/// Non-oriented electrical steel M800-50A (EN 10106; 8.00 W/kg at 1.5 T, 50 Hz; 0.50 mm), a
/// low-silicon, high-polarisation grade: typical curve `[voestalpine]`; minimum J
/// 1.60/1.70/1.78 T `[EN 10106]` (`from memory`).
pub fn m800_50a() -> SteelGrade {
    electrical_steel("m800-50a", "M800-50A", &M800_50A, [1.60, 1.70, 1.78])
}

/// Any grade of the library.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Grade {
    /// Air, copper, aluminium and other non-magnetic materials (mu_r = 1).
    NonMagnetic,
    /// A permanent-magnet grade.
    Magnet(MagnetGrade),
    /// A soft ferrous grade.
    Steel(SteelGrade),
}

impl Grade {
    /// The material law of this grade.
    ///
    /// # Errors
    /// As [`MagnetGrade::to_material`] and [`SteelGrade::to_material`].
    pub fn to_material(&self) -> Result<Material, MaterialError> {
        match self {
            Grade::NonMagnetic => Ok(Material::vacuum()),
            Grade::Magnet(m) => m.to_material(),
            Grade::Steel(s) => s.to_material(),
        }
    }

    /// Where the grade's numbers come from (short source keys of the module documentation).
    pub fn source(&self) -> &str {
        match self {
            Grade::NonMagnetic => {
                "mu_r = 1 (the magnetic susceptibility of air and copper is below 1e-5)"
            }
            Grade::Magnet(m) => &m.source,
            Grade::Steel(s) => &s.source,
        }
    }
}

const NAMES: [&str; 17] = [
    "air",
    "copper",
    "steel-c10",
    "steel-c45",
    "steel-11smn30",
    "cast-iron-gjl-250",
    "m270-50a",
    "m330-50a",
    "m400-50a",
    "m800-50a",
    "ndfeb-n35",
    "ndfeb-n42",
    "ndfeb-n42sh",
    "ndfeb-n52",
    "alnico-5",
    "alnico-8",
    "ferrite-hf-26-18",
];

/// Names of an earlier preset library and what to write instead.
const RETIRED: [(&str, &str); 7] = [
    ("steel-1010", "for a low carbon steel write `steel-c10`"),
    ("steel-1020", "for a low carbon steel write `steel-c10`"),
    (
        "m-15",
        "for a non-oriented electrical steel write its EN 10106 designation, e.g. `m270-50a`",
    ),
    (
        "m-19",
        "for a non-oriented electrical steel write its EN 10106 designation, e.g. `m330-50a` or `m400-50a`",
    ),
    (
        "m-36",
        "for a non-oriented electrical steel write its EN 10106 designation, e.g. `m400-50a`",
    ),
    (
        "ferrite-c5",
        "for a hard ferrite write its IEC 60404-8-1 class, `ferrite-hf-26-18`",
    ),
    (
        "ferrite-y30",
        "for a hard ferrite write its IEC 60404-8-1 class, `ferrite-hf-26-18`",
    ),
];

/// The preset names [`preset`] and [`grade`] accept (lower case; `_` and spaces are read as
/// `-`, and case is ignored).
pub fn names() -> &'static [&'static str] {
    &NAMES
}

/// The canonical form of a preset name: trimmed, lower case, `_` and spaces read as `-`
/// (shared by this library and the hysteresis datasheets).
pub(crate) fn preset_key(name: &str) -> String {
    name.trim()
        .chars()
        .map(|c| match c {
            '_' | ' ' => '-',
            c => c.to_ascii_lowercase(),
        })
        .collect()
}

/// The editable grade of a preset name.
///
/// # Errors
/// [`MaterialError::RetiredPreset`] for a name of the earlier library (saying what to write
/// instead), [`MaterialError::UnknownPreset`] listing the known names otherwise.
pub fn grade(name: &str) -> Result<Grade, MaterialError> {
    let key = preset_key(name);
    Ok(match key.as_str() {
        "air" | "copper" => Grade::NonMagnetic,
        "steel-c10" => Grade::Steel(steel_c10()),
        "steel-c45" => Grade::Steel(steel_c45()),
        "steel-11smn30" => Grade::Steel(steel_11smn30()),
        "cast-iron-gjl-250" => Grade::Steel(cast_iron_gjl_250()),
        "m270-50a" => Grade::Steel(m270_50a()),
        "m330-50a" => Grade::Steel(m330_50a()),
        "m400-50a" => Grade::Steel(m400_50a()),
        "m800-50a" => Grade::Steel(m800_50a()),
        "ndfeb-n35" => Grade::Magnet(ndfeb_n35()),
        "ndfeb-n42" => Grade::Magnet(ndfeb_n42()),
        "ndfeb-n42sh" => Grade::Magnet(ndfeb_n42sh()),
        "ndfeb-n52" => Grade::Magnet(ndfeb_n52()),
        "alnico-5" => Grade::Magnet(alnico_5()),
        "alnico-8" => Grade::Magnet(alnico_8()),
        "ferrite-hf-26-18" => Grade::Magnet(ferrite_hf_26_18()),
        _ => {
            if let Some((_, instead)) = RETIRED.iter().find(|(old, _)| *old == key) {
                return Err(MaterialError::RetiredPreset {
                    name: name.into(),
                    instead: (*instead).into(),
                });
            }
            return Err(MaterialError::UnknownPreset {
                name: name.into(),
                known: NAMES.iter().map(|s| s.to_string()).collect(),
            });
        }
    })
}

/// The material law of a preset name (magnets along +y; see [`names`]).
///
/// # Errors
/// As [`grade`].
pub fn preset(name: &str) -> Result<Material, MaterialError> {
    grade(name)?.to_material()
}
