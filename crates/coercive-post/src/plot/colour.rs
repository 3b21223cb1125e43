//! Colour: sRGB and Oklab conversions, a perceptually uniform sequential map, series colours.
//!
//! Oklab (B. Ottosson, "A perceptual color space for image processing", 2020) is a simple
//! opponent colour space in which Euclidean distance approximates perceived colour
//! difference and L approximates perceived lightness. Its matrices below are the published
//! ones (`from memory`; checked by the tests: white maps to L = 1, a = b = 0 and the two
//! transforms invert each other). The sRGB transfer curve is that of IEC 61966-2-1.

use std::sync::OnceLock;

/// sRGB component (0..1, gamma encoded) to linear light (IEC 61966-2-1).
pub fn srgb_to_linear(c: f64) -> f64 {
    if c <= 0.04045 {
        c / 12.92
    } else {
        ((c + 0.055) / 1.055).powf(2.4)
    }
}

/// Linear light to sRGB component (IEC 61966-2-1); not clamped.
pub fn linear_to_srgb(c: f64) -> f64 {
    if c <= 0.0031308 {
        12.92 * c
    } else {
        1.055 * c.powf(1.0 / 2.4) - 0.055
    }
}

/// Gamma-encoded sRGB (0..1 each) to Oklab [L, a, b].
pub fn srgb_to_oklab(rgb: [f64; 3]) -> [f64; 3] {
    let [r, g, b] = rgb.map(srgb_to_linear);
    let l = (0.412_221_470_8 * r + 0.536_332_536_3 * g + 0.051_445_992_9 * b).cbrt();
    let m = (0.211_903_498_2 * r + 0.680_699_545_1 * g + 0.107_396_956_6 * b).cbrt();
    let s = (0.088_302_461_9 * r + 0.281_718_837_6 * g + 0.629_978_700_5 * b).cbrt();
    [
        0.210_454_255_3 * l + 0.793_617_785_0 * m - 0.004_072_046_8 * s,
        1.977_998_495_1 * l - 2.428_592_205_0 * m + 0.450_593_709_9 * s,
        0.025_904_037_1 * l + 0.782_771_766_2 * m - 0.808_675_766_0 * s,
    ]
}

/// Oklab [L, a, b] to linear sRGB (not clamped: components outside 0..1 mean out of gamut).
fn oklab_to_linear(lab: [f64; 3]) -> [f64; 3] {
    let [ll, a, b] = lab;
    let l = (ll + 0.396_337_777_4 * a + 0.215_803_757_3 * b).powi(3);
    let m = (ll - 0.105_561_345_8 * a - 0.063_854_172_8 * b).powi(3);
    let s = (ll - 0.089_484_177_5 * a - 1.291_485_548_0 * b).powi(3);
    [
        4.076_741_662_1 * l - 3.307_711_591_3 * m + 0.230_969_929_2 * s,
        -1.268_438_004_6 * l + 2.609_757_401_1 * m - 0.341_319_396_5 * s,
        -0.004_196_086_3 * l - 0.703_418_614_7 * m + 1.707_614_701_0 * s,
    ]
}

/// Oklab [L, a, b] to gamma-encoded sRGB (not clamped).
pub fn oklab_to_srgb(lab: [f64; 3]) -> [f64; 3] {
    oklab_to_linear(lab).map(linear_to_srgb)
}

fn in_gamut(lab: [f64; 3]) -> bool {
    oklab_to_linear(lab)
        .iter()
        .all(|&c| (-1e-9..=1.0 + 1e-9).contains(&c))
}

/// The Oklab colour of lightness `l`, hue `hue` (rad) and the largest chroma up to `chroma`
/// inside the sRGB gamut (bisection on chroma at fixed lightness and hue).
fn gamut_mapped(l: f64, chroma: f64, hue: f64) -> [f64; 3] {
    let at = |c: f64| [l, c * hue.cos(), c * hue.sin()];
    if in_gamut(at(chroma)) {
        return at(chroma);
    }
    let (mut lo, mut hi) = (0.0, chroma);
    for _ in 0..40 {
        let mid = 0.5 * (lo + hi);
        if in_gamut(at(mid)) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    at(lo)
}

fn to_bytes(rgb: [f64; 3]) -> [u8; 3] {
    rgb.map(|c| (c.clamp(0.0, 1.0) * 255.0).round() as u8)
}

/// A sequential colour map from dark violet through red and orange to pale yellow.
///
/// # Construction
/// A curve in Oklab: lightness rises linearly from 0.22 to 0.95, hue turns from 290 to 460
/// (= 100) degrees (violet, magenta, red, orange, yellow), chroma follows
/// 0.07 + 0.11 sin(pi s) and is reduced where needed to stay inside the sRGB gamut. The curve is
/// then re-parametrised by its arc length in Oklab (2048 samples), so equal steps of the
/// parameter are equal perceived colour differences: the map is perceptually uniform.
///
/// # Guarantees (tested)
/// Lightness L and CIE luminance Y increase strictly along the map, so the order of values
/// survives greyscale printing and the common colour-vision deficiencies (which change hue
/// perception, not lightness); consecutive steps differ by the same Oklab distance to within a
/// few percent.
#[derive(Clone, Debug)]
pub struct ColourMap {
    /// 256 Oklab colours at equal arc-length steps.
    table: Vec<[f64; 3]>,
}

impl ColourMap {
    /// The shared sequential map (built once).
    pub fn sequential() -> &'static ColourMap {
        static MAP: OnceLock<ColourMap> = OnceLock::new();
        MAP.get_or_init(ColourMap::build)
    }

    fn build() -> ColourMap {
        let curve = |s: f64| {
            let l = 0.22 + 0.73 * s;
            let hue = (290.0 + 170.0 * s).to_radians();
            let chroma = 0.07 + 0.11 * (std::f64::consts::PI * s).sin();
            gamut_mapped(l, chroma, hue)
        };
        const SAMPLES: usize = 2048;
        let points: Vec<[f64; 3]> = (0..=SAMPLES)
            .map(|i| curve(i as f64 / SAMPLES as f64))
            .collect();
        let mut length = vec![0.0; points.len()];
        for i in 1..points.len() {
            length[i] = length[i - 1] + distance(points[i - 1], points[i]);
        }
        let total = length[SAMPLES];
        let mut table = Vec::with_capacity(256);
        let mut j = 0;
        for k in 0..256 {
            let target = total * k as f64 / 255.0;
            while j + 1 < SAMPLES && length[j + 1] < target {
                j += 1;
            }
            let span = length[j + 1] - length[j];
            let f = if span > 0.0 {
                ((target - length[j]) / span).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let s = (j as f64 + f) / SAMPLES as f64;
            table.push(curve(s));
        }
        ColourMap { table }
    }

    /// Oklab colour at `t` in [0, 1] (clamped), linearly interpolated in the table.
    pub fn oklab(&self, t: f64) -> [f64; 3] {
        let t = if t.is_nan() { 0.0 } else { t.clamp(0.0, 1.0) };
        let x = t * (self.table.len() - 1) as f64;
        let i = (x.floor() as usize).min(self.table.len() - 2);
        let f = x - i as f64;
        let (a, b) = (self.table[i], self.table[i + 1]);
        [0, 1, 2].map(|k| a[k] + f * (b[k] - a[k]))
    }

    /// 8-bit sRGB colour at `t` in [0, 1] (clamped).
    pub fn rgb(&self, t: f64) -> [u8; 3] {
        to_bytes(oklab_to_srgb(self.oklab(t)))
    }

    /// `#rrggbb` colour at `t` in [0, 1] (clamped).
    pub fn hex(&self, t: f64) -> String {
        hex(self.rgb(t))
    }
}

fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

pub(crate) fn hex(c: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

/// Colour `#rrggbb` of the `index`-th series of a chart: equal Oklab lightness 0.55 and
/// chroma 0.14 (gamut-mapped), hues spread so that neighbours differ most. Charts also give
/// every series its own marker and dash pattern, so colour is never the only cue.
pub fn series_colour(index: usize) -> String {
    const HUES: [f64; 8] = [255.0, 45.0, 145.0, 325.0, 95.0, 200.0, 0.0, 285.0];
    let hue = HUES[index % HUES.len()].to_radians();
    hex(to_bytes(oklab_to_srgb(gamut_mapped(0.55, 0.14, hue))))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn oklab_white_and_round_trip() {
        // Oklab is defined so that sRGB white has L = 1, a = b = 0 (Ottosson 2020).
        let w = srgb_to_oklab([1.0, 1.0, 1.0]);
        assert!((w[0] - 1.0).abs() < 1e-6 && w[1].abs() < 1e-6 && w[2].abs() < 1e-6);
        for rgb in [
            [0.2, 0.5, 0.9],
            [1.0, 0.0, 0.0],
            [0.01, 0.99, 0.3],
            [0.5, 0.5, 0.5],
        ] {
            let back = oklab_to_srgb(srgb_to_oklab(rgb));
            for k in 0..3 {
                assert!((back[k] - rgb[k]).abs() < 1e-6, "{rgb:?} -> {back:?}");
            }
        }
    }

    /// CIE relative luminance Y of 8-bit sRGB (ITU-R BT.709 primaries, IEC 61966-2-1).
    fn luminance(c: [u8; 3]) -> f64 {
        let [r, g, b] = c.map(|v| srgb_to_linear(v as f64 / 255.0));
        0.2126 * r + 0.7152 * g + 0.0722 * b
    }

    #[test]
    fn sequential_map_has_increasing_lightness_and_luminance() {
        let map = ColourMap::sequential();
        // As used in the field maps: 64 quantised 8-bit levels.
        let mut previous = (-1.0, -1.0);
        for k in 0..64 {
            let c = map.rgb((k as f64 + 0.5) / 64.0);
            let l = srgb_to_oklab(c.map(|v| v as f64 / 255.0))[0];
            let y = luminance(c);
            assert!(l > previous.0 && y > previous.1, "level {k}: L {l}, Y {y}");
            previous = (l, y);
        }
        // Spans a wide lightness range (dark violet to pale yellow).
        assert!(map.oklab(0.0)[0] < 0.25 && map.oklab(1.0)[0] > 0.9);
    }

    #[test]
    fn sequential_map_is_perceptually_uniform() {
        let map = ColourMap::sequential();
        let steps: Vec<f64> = (0..255)
            .map(|k| distance(map.table[k], map.table[k + 1]))
            .collect();
        let mean = steps.iter().sum::<f64>() / steps.len() as f64;
        for (k, s) in steps.iter().enumerate() {
            assert!(
                (s / mean - 1.0).abs() < 0.05,
                "step {k}: {s} vs mean {mean}"
            );
        }
        // Every entry inside the sRGB gamut.
        for c in &map.table {
            assert!(in_gamut(*c));
        }
    }

    #[test]
    fn series_colours_differ() {
        let c: Vec<String> = (0..8).map(series_colour).collect();
        for i in 0..8 {
            for j in 0..i {
                assert_ne!(c[i], c[j]);
            }
        }
    }
}
