//! Integration stand-in for the scalar hysteresis model (replaced by the full module).
#![allow(missing_docs)]

use serde::{Deserialize, Serialize};

use crate::material::{MaterialError, MU_0};

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum Sigmoid {
    Logistic,
    Erf,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct HysteresisLaw {
    pub saturation_polarisation: f64,
    pub coercive_field: f64,
    pub width: f64,
    pub sigmoid: Sigmoid,
    pub reversible_polarisation: f64,
    pub recoil_permeability: f64,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct History {
    /// Dominant extrema, oldest first, starting with +-inf (saturation).
    extrema: Vec<f64>,
    last: f64,
}

impl History {
    pub const SLOTS: usize = 34;
    pub fn saturated(positive: bool) -> History {
        History {
            extrema: vec![if positive { f64::MAX } else { -f64::MAX }],
            last: 0.0,
        }
    }
    pub fn last_input(&self) -> f64 {
        self.last
    }
    pub fn reversals(&self) -> &[f64] {
        &self.extrema
    }
    pub fn write_slots(&self, out: &mut [f64]) {
        out.fill(f64::NAN);
        out[0] = self.extrema.len() as f64;
        out[1] = self.last;
        out[2..2 + self.extrema.len()].copy_from_slice(&self.extrema);
    }
    pub fn from_slots(slots: &[f64]) -> Result<History, MaterialError> {
        let n = slots[0] as usize;
        Ok(History {
            extrema: slots[2..2 + n].to_vec(),
            last: slots[1],
        })
    }
}

fn f_cdf(x: f64) -> f64 {
    1.0 / (1.0 + (-x).exp())
}
fn f_pdf(x: f64) -> f64 {
    let f = f_cdf(x);
    f * (1.0 - f)
}

impl HysteresisLaw {
    pub fn validate(&self) -> Result<(), MaterialError> {
        Ok(())
    }
    fn everett(&self, a: f64, b: f64) -> f64 {
        let (hc, s) = (self.coercive_field, self.width);
        self.saturation_polarisation
            * (f_cdf((a - hc) / s) * f_cdf((-b - hc) / s)
                - f_cdf((-a - hc) / s) * f_cdf((b - hc) / s))
    }
    fn everett_da(&self, a: f64, b: f64) -> f64 {
        let (hc, s) = (self.coercive_field, self.width);
        self.saturation_polarisation / s
            * (f_pdf((a - hc) / s) * f_cdf((-b - hc) / s)
                + f_pdf((-a - hc) / s) * f_cdf((b - hc) / s))
    }
    fn everett_db(&self, a: f64, b: f64) -> f64 {
        let (hc, s) = (self.coercive_field, self.width);
        -self.saturation_polarisation / s
            * (f_cdf((a - hc) / s) * f_pdf((-b - hc) / s)
                + f_cdf((-a - hc) / s) * f_pdf((b - hc) / s))
    }
    pub fn apply(&self, history: &mut History, h: f64) {
        let e = &mut history.extrema;
        let ascending = h > history.last;
        if h == history.last {
            return;
        }
        // The last input becomes a reversal if the direction changes.
        let last_is_max =
            e.len() % 2 == 1 && e[0] == f64::MAX || e.len() % 2 == 0 && e[0] == -f64::MAX;
        // Direction before: moving up if last extremum is a min.
        let moving_up = !last_is_max;
        if moving_up != ascending {
            e.push(history.last);
        }
        // Wipe out.
        loop {
            let n = e.len();
            if n >= 3 {
                let prev_same = e[n - 2];
                if (ascending && h >= prev_same) || (!ascending && h <= prev_same) {
                    e.truncate(n - 2);
                    continue;
                }
            }
            break;
        }
        history.last = h;
    }
    fn irreversible(&self, history: &History, h: f64) -> (f64, f64) {
        let mut e = history.extrema.clone();
        let mut hist = History {
            extrema: std::mem::take(&mut e),
            last: history.last,
        };
        self.apply(&mut hist, h);
        let e = &hist.extrema;
        // Measure of S+ by the staircase.
        let starts_max = e[0] == f64::MAX;
        let js = self.saturation_polarisation;
        let mut mu = 0.0;
        let mut deriv;
        // Pairs (M_k, m_k) with m_0 = -inf.
        let mut maxima = Vec::new();
        let mut minima = vec![f64::NEG_INFINITY];
        for (i, &x) in e.iter().enumerate() {
            if i == 0 && !starts_max {
                continue;
            }
            let is_max = (i % 2 == 0) == starts_max;
            if is_max {
                maxima.push(x);
            } else {
                minima.push(x);
            }
        }
        let n_max = maxima.len();
        let last_is_max = e.len() % 2 == 1 && starts_max || e.len() % 2 == 0 && !starts_max;
        let ev = |a: f64, b: f64| {
            let a = if a == f64::MAX { f64::INFINITY } else { a };
            let b = if b == -f64::MAX { f64::NEG_INFINITY } else { b };
            if a == f64::INFINITY && b == f64::NEG_INFINITY {
                js
            } else if a == f64::INFINITY {
                js * f_cdf((-b - self.coercive_field) / self.width)
            } else if b == f64::NEG_INFINITY {
                js * f_cdf((a - self.coercive_field) / self.width)
            } else {
                self.everett(a, b)
            }
        };
        if !last_is_max {
            // ascending: minima has n_max + 1 entries (m_0..m_n)
            for k in 0..n_max {
                mu += ev(maxima[k], minima[k]) - ev(maxima[k], minima[k + 1]);
            }
            let m = *minima.last().unwrap();
            mu += ev(h, m);
            deriv = if m == f64::NEG_INFINITY {
                js / self.width * f_pdf((h - self.coercive_field) / self.width)
            } else {
                self.everett_da(h, m)
            };
        } else {
            for k in 0..n_max - 1 {
                mu += ev(maxima[k], minima[k]) - ev(maxima[k], minima[k + 1]);
            }
            let mm = maxima[n_max - 1];
            mu += ev(mm, minima[n_max - 1]) - ev(mm, h);
            deriv = if mm == f64::MAX {
                js / self.width * f_pdf((-h - self.coercive_field) / self.width)
            } else {
                -self.everett_db(mm, h)
            };
        }
        if h == history.last {
            deriv = 0.0;
        }
        (2.0 * mu - js, 2.0 * deriv)
    }
    pub fn polarisation(&self, history: &History, h: f64) -> (f64, f64) {
        let (j, dj) = self.irreversible(history, h);
        let jr = self.reversible_polarisation;
        let k = MU_0 * (self.recoil_permeability - 1.0);
        let (jrev, djrev) = if jr > 0.0 && k > 0.0 {
            let t = (k * h / jr).tanh();
            (jr * t, k * (1.0 - t * t))
        } else {
            (0.0, 0.0)
        };
        (j + jrev, dj + djrev)
    }
    pub fn flux_density(&self, history: &History, h: f64) -> (f64, f64) {
        let (j, dj) = self.polarisation(history, h);
        (MU_0 * h + j, MU_0 + dj)
    }
    pub fn field_strength(&self, history: &History, b: f64) -> (f64, f64) {
        let bound = self.saturation_polarisation + self.reversible_polarisation;
        let (mut lo, mut hi) = ((b - bound) / MU_0 - 1.0, (b + bound) / MU_0 + 1.0);
        let mut h = history.last;
        if h <= lo || h >= hi {
            h = 0.5 * (lo + hi);
        }
        for _ in 0..200 {
            let (bb, d) = self.flux_density(history, h);
            let r = bb - b;
            if r > 0.0 {
                hi = h;
            } else {
                lo = h;
            }
            if r.abs() <= 1e-13 * (1.0 + b.abs()) {
                return (h, 1.0 / d);
            }
            let mut next = h - r / d;
            if !(next > lo && next < hi) {
                next = 0.5 * (lo + hi);
            }
            h = next;
        }
        let (_, d) = self.flux_density(history, h);
        (h, 1.0 / d)
    }
    pub fn coenergy_density(&self, history: &History, h: f64) -> f64 {
        // Gauss-Legendre (5 points) on [0, h], split at the last input.
        const X: [f64; 5] = [
            -0.906_179_845_938_664,
            -0.538_469_310_105_683,
            0.0,
            0.538_469_310_105_683,
            0.906_179_845_938_664,
        ];
        const W: [f64; 5] = [
            0.236_926_885_056_189,
            0.478_628_670_499_366,
            0.568_888_888_888_889,
            0.478_628_670_499_366,
            0.236_926_885_056_189,
        ];
        let mut cuts = vec![0.0, h];
        let l = history.last;
        if (l > 0.0 && l < h) || (l < 0.0 && l > h) {
            cuts.insert(1, l);
        }
        let mut sum = 0.0;
        for w in cuts.windows(2) {
            let (a, b) = (w[0], w[1]);
            let (m, r) = (0.5 * (a + b), 0.5 * (b - a));
            for (x, wt) in X.iter().zip(W) {
                sum += wt * r * self.flux_density(history, m + r * x).0;
            }
        }
        sum
    }
    pub fn major_branch(&self, h: f64, ascending: bool) -> f64 {
        let hist = History::saturated(!ascending);
        self.polarisation(&hist, h).0
    }
}
