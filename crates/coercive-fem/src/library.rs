//! Named presets of typical magnet and steel grades.
//!
//! Every value carries its source. Published grade tables give ranges or minima; the presets
//! take the middle of each published range (a "nominal" grade), which is stated beside each
//! value. Real magnets and steels vary by several percent from lot to lot: for a design that
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
//! Magnets are linear recoil models (straight line through Br with the recoil permeability).
//! This is accurate for sintered NdFeB above its knee. Hard ferrite and AlNiCo have a knee well
//! before B = 0; the linear model holds only while the working point stays on the recoil line
//! (AlNiCo: a high-permeance circuit after full magnetisation). A hysteretic model for AlNiCo
//! comes later.
//!
//! Sources:
//! - `[GB/T 13560]`: sintered NdFeB grade tables of vendors following the Chinese standard
//!   GB/T 13560 (Br, HcB, HcJ ranges per grade).
//! - `[ASTM A1101-16]`: ASTM A1101-16, specification for sintered NdFeB (Br 1.08-1.5 T across
//!   grades).
//! - `[ASTM A1070-16]`: ASTM A1070-16, specification for sintered ferrite and cast AlNiCo
//!   (AlNiCo Br 0.52-1.35 T, HcB 38-175 kA/m across grades).
//! - `[MMPA 0100-00]`: Magnetic Materials Producers Association Standard 0100-00 (grade
//!   tables for AlNiCo and ceramic magnets), and vendor tables of cast AlNiCo and ferrite.
//! - `[Brauer 2014]`: J. R. Brauer, Magnetic Actuators and Sensors, 2nd ed., Wiley 2014,
//!   Appendix B: coefficients of H = (k1 exp(k2 B^2) + k3) B for common steels; the law is
//!   from Brauer, IEEE Trans. Magn. 11(1), 1975.
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
}

impl MagnetGrade {
    /// Coercivity of the linear model, Br / (mu_0 mu_rec) (A/m).
    pub fn model_coercivity(&self) -> f64 {
        self.remanence / (MU_0 * self.recoil_permeability)
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
        let m = Material::Magnet(LinearMagnet {
            knee_field: None,
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

/// A soft steel grade described by Brauer's law H = (k1 exp(k2 B^2) + k3) B.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SteelGrade {
    /// Preset name, e.g. `m-19`.
    pub name: String,
    /// k1 (A/(m T)).
    pub k1: f64,
    /// k2 (1/T^2).
    pub k2: f64,
    /// k3 (A/(m T)).
    pub k3: f64,
    /// Lamination stacking factor (0 < k <= 1); presets use 1 (solid steel). Laminated stacks
    /// typically use 0.95-0.98 (common practice).
    pub stacking_factor: f64,
}

impl SteelGrade {
    /// The processed B-H curve of this grade (with its stacking factor).
    ///
    /// # Errors
    /// [`MaterialError::InvalidParameter`] if a value was overridden out of range.
    pub fn curve(&self) -> Result<BhCurve, MaterialError> {
        BhCurve::brauer(self.k1, self.k2, self.k3)?.with_stacking_factor(self.stacking_factor)
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

const KA_PER_M: f64 = 1e3;

fn magnet(
    name: &str,
    remanence: f64,
    coercivity: f64,
    intrinsic_coercivity: f64,
    recoil_permeability: f64,
) -> MagnetGrade {
    MagnetGrade {
        name: name.into(),
        remanence,
        coercivity,
        intrinsic_coercivity,
        recoil_permeability,
        perpendicular_permeability: recoil_permeability,
        direction: MagnetDirection::Fixed { angle: FRAC_PI_2 },
    }
}

/// Sintered NdFeB N35, nominal.
///
/// Br 1.195 T: middle of 1.17-1.22 T `[GB/T 13560]`. HcB 868 kA/m: the published minimum
/// `[GB/T 13560]`. HcJ 955 kA/m: the published minimum `[GB/T 13560]`. Recoil mu_r 1.05
/// `[GB/T 13560]` vendor tables ("about 1.05"); also used across the easy axis (`from memory`:
/// the perpendicular permeability of sintered NdFeB is of the same order, 1.05-1.2).
pub fn ndfeb_n35() -> MagnetGrade {
    magnet("ndfeb-n35", 1.195, 868.0 * KA_PER_M, 955.0 * KA_PER_M, 1.05)
}

/// Sintered NdFeB N42, nominal.
///
/// Br 1.30 T: middle of 1.28-1.32 T `[GB/T 13560]`. HcB 915 kA/m and HcJ 955 kA/m: the
/// published minima `[GB/T 13560]`. Recoil mu_r 1.05 `[GB/T 13560]` vendor tables.
pub fn ndfeb_n42() -> MagnetGrade {
    magnet("ndfeb-n42", 1.30, 915.0 * KA_PER_M, 955.0 * KA_PER_M, 1.05)
}

/// Sintered NdFeB N52, nominal.
///
/// Br 1.455 T: middle of 1.43-1.48 T `[GB/T 13560]`. HcJ 876 kA/m: the published minimum
/// `[GB/T 13560]`. HcB 836 kA/m: `from memory` (vendor tables quote at least 836 kA/m,
/// 10.5 kOe). Recoil mu_r 1.05 `[GB/T 13560]` vendor tables. The straight recoil line reaches
/// B = 0 only at Br/(mu_0 mu_rec) = 1103 kA/m, beyond HcJ: N52 has a knee before B = 0, so keep
/// reverse fields well below HcJ.
pub fn ndfeb_n52() -> MagnetGrade {
    magnet("ndfeb-n52", 1.455, 836.0 * KA_PER_M, 876.0 * KA_PER_M, 1.05)
}

/// Cast AlNiCo 5, nominal, after full magnetisation (about 240 kA/m, vendor tables).
///
/// Br 1.275 T: middle of 1.25-1.30 T; HcB 50 kA/m: middle of 48-52 kA/m; recoil mu_r 3.6
/// (vendor tables, `[MMPA 0100-00]` class). HcJ 51 kA/m: `from memory` (AlNiCo's HcJ is only
/// slightly above HcB). The linear recoil model is NOT the demagnetisation curve: its own
/// coercivity Br/(mu_0 mu_rec) is about 282 kA/m, far above HcB; the magnet loses
/// magnetisation irreversibly once H along the easy axis passes about -HcB.
pub fn alnico_5() -> MagnetGrade {
    magnet("alnico-5", 1.275, 50.0 * KA_PER_M, 51.0 * KA_PER_M, 3.6)
}

/// Cast AlNiCo 8, nominal.
///
/// Br 0.865 T: middle of 0.83-0.90 T; HcB 116.5 kA/m: middle of 110-123 kA/m (vendor tables,
/// `[MMPA 0100-00]` class). HcJ 124 kA/m and recoil mu_r 1.9: `from memory`. As for AlNiCo 5,
/// the linear model holds on the recoil line only.
pub fn alnico_8() -> MagnetGrade {
    magnet("alnico-8", 0.865, 116.5 * KA_PER_M, 124.0 * KA_PER_M, 1.9)
}

/// Hard ferrite class C5 / Y30, nominal.
///
/// Br 0.385 T: middle of 0.37-0.40 T; HcB 192.5 kA/m: middle of 175-210 kA/m; HcJ 200 kA/m:
/// middle of 180-220 kA/m (vendor tables, `[MMPA 0100-00]` class C5). Recoil mu_r 1.1:
/// `from memory`. The straight line would reach B = 0 at 279 kA/m; ferrite's knee lies near
/// HcJ, so keep reverse fields below about 190 kA/m.
pub fn ferrite_c5() -> MagnetGrade {
    magnet("ferrite-c5", 0.385, 192.5 * KA_PER_M, 200.0 * KA_PER_M, 1.1)
}

fn steel(name: &str, k1: f64, k2: f64, k3: f64) -> SteelGrade {
    SteelGrade {
        name: name.into(),
        k1,
        k2,
        k3,
        stacking_factor: 1.0,
    }
}

/// Low-carbon steel 1010, annealed: k1 = 4.847 A/(m T), k2 = 1.908 1/T^2, k3 = 227.3 A/(m T)
/// `[Brauer 2014]`.
pub fn steel_1010() -> SteelGrade {
    steel("steel-1010", 4.847, 1.908, 227.3)
}

/// Low-carbon steel 1020, annealed: k1 = 4.770, k2 = 2.055, k3 = 302.2 `[Brauer 2014]`.
pub fn steel_1020() -> SteelGrade {
    steel("steel-1020", 4.770, 2.055, 302.2)
}

/// Non-oriented silicon steel M-15: k1 = 0.8795, k2 = 2.666, k3 = 94.27 `[Brauer 2014]`.
pub fn m15() -> SteelGrade {
    steel("m-15", 0.8795, 2.666, 94.27)
}

/// Non-oriented silicon steel M-19: k1 = 2.150, k2 = 2.477, k3 = 83.03 `[Brauer 2014]`.
pub fn m19() -> SteelGrade {
    steel("m-19", 2.150, 2.477, 83.03)
}

/// Non-oriented silicon steel M-36: k1 = 1.683, k2 = 2.432, k3 = 103.5 `[Brauer 2014]`.
pub fn m36() -> SteelGrade {
    steel("m-36", 1.683, 2.432, 103.5)
}

/// Any grade of the library.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Grade {
    /// Air, copper, aluminium and other non-magnetic materials (mu_r = 1).
    NonMagnetic,
    /// A permanent-magnet grade.
    Magnet(MagnetGrade),
    /// A soft steel grade.
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
}

const NAMES: [&str; 14] = [
    "air",
    "copper",
    "ndfeb-n35",
    "ndfeb-n42",
    "ndfeb-n52",
    "alnico-5",
    "alnico-8",
    "ferrite-c5",
    "ferrite-y30",
    "steel-1010",
    "steel-1020",
    "m-15",
    "m-19",
    "m-36",
];

/// The preset names [`preset`] and [`grade`] accept (lower case; `_` and spaces are read as
/// `-`, and case is ignored). `ferrite-y30` is the same grade as `ferrite-c5`.
pub fn names() -> &'static [&'static str] {
    &NAMES
}

/// The editable grade of a preset name.
///
/// # Errors
/// [`MaterialError::UnknownPreset`] listing the known names.
pub fn grade(name: &str) -> Result<Grade, MaterialError> {
    let key: String = name
        .trim()
        .chars()
        .map(|c| match c {
            '_' | ' ' => '-',
            c => c.to_ascii_lowercase(),
        })
        .collect();
    Ok(match key.as_str() {
        "air" | "copper" => Grade::NonMagnetic,
        "ndfeb-n35" => Grade::Magnet(ndfeb_n35()),
        "ndfeb-n42" => Grade::Magnet(ndfeb_n42()),
        "ndfeb-n52" => Grade::Magnet(ndfeb_n52()),
        "alnico-5" => Grade::Magnet(alnico_5()),
        "alnico-8" => Grade::Magnet(alnico_8()),
        "ferrite-c5" | "ferrite-y30" => Grade::Magnet(ferrite_c5()),
        "steel-1010" => Grade::Steel(steel_1010()),
        "steel-1020" => Grade::Steel(steel_1020()),
        "m-15" => Grade::Steel(m15()),
        "m-19" => Grade::Steel(m19()),
        "m-36" => Grade::Steel(m36()),
        _ => {
            return Err(MaterialError::UnknownPreset {
                name: name.into(),
                known: NAMES.iter().map(|s| s.to_string()).collect(),
            })
        }
    })
}

/// The material law of a preset name (magnets along +y; see [`names`]).
///
/// # Errors
/// [`MaterialError::UnknownPreset`] listing the known names.
pub fn preset(name: &str) -> Result<Material, MaterialError> {
    grade(name)?.to_material()
}
