//! "Nice" axis ticks: steps of 1, 2 or 5 times a power of ten.

use super::PlotError;

/// Tick positions and their labels.
#[derive(Clone, Debug, PartialEq)]
pub struct Ticks {
    /// Step between ticks (for logarithmic ticks: 0).
    pub step: f64,
    /// Tick values, increasing.
    pub values: Vec<f64>,
    /// Labels, one per value.
    pub labels: Vec<String>,
}

impl Ticks {
    /// First and last tick value.
    pub fn range(&self) -> (f64, f64) {
        (self.values[0], self.values[self.values.len() - 1])
    }
}

/// Linear ticks covering [lo, hi]: the first tick is at or below `lo`, the last at or above
/// `hi`, the step is 1, 2 or 5 times a power of ten, and there are 4 to 10 ticks (at least 5
/// unless the range itself is degenerate). A degenerate range (lo = hi) is widened by 1 (or by
/// 10 % of |lo|).
///
/// # Errors
/// [`PlotError::NotFinite`] if a bound is NaN or infinite.
pub fn nice_ticks(lo: f64, hi: f64) -> Result<Ticks, PlotError> {
    for (index, value) in [lo, hi].into_iter().enumerate() {
        if !value.is_finite() {
            return Err(PlotError::NotFinite {
                what: "axis range".into(),
                index,
                value,
            });
        }
    }
    let (mut lo, mut hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    if hi - lo <= 1e-12 * lo.abs().max(hi.abs()) {
        let pad = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
        lo -= pad;
        hi += pad;
    }
    let span = hi - lo;
    let mut exponent = (span / 10.0).log10().floor() as i32 - 1;
    loop {
        for mantissa in [1.0, 2.0, 5.0] {
            let step = mantissa * 10f64.powi(exponent);
            let first = (lo / step + 1e-9).floor() as i64;
            let last = (hi / step - 1e-9).ceil() as i64;
            if last - first < 10 {
                let values: Vec<f64> = (first..=last)
                    .map(|i| {
                        let v = i as f64 * step;
                        if v == 0.0 {
                            0.0
                        } else {
                            v
                        }
                    })
                    .collect();
                let labels = labels_for(&values, step);
                return Ok(Ticks {
                    step,
                    values,
                    labels,
                });
            }
        }
        exponent += 1;
    }
}

/// Ticks for a logarithmic axis covering [lo, hi] (both positive): every decade, plus 2 and 5
/// times each decade when the range spans fewer than three decades.
///
/// # Errors
/// [`PlotError::NotFinite`] if a bound is not finite, [`PlotError::InvalidOption`] if a bound
/// is not positive.
pub fn log_ticks(lo: f64, hi: f64) -> Result<Ticks, PlotError> {
    for (index, value) in [lo, hi].into_iter().enumerate() {
        if !value.is_finite() {
            return Err(PlotError::NotFinite {
                what: "log axis range".into(),
                index,
                value,
            });
        }
        if value <= 0.0 {
            return Err(PlotError::InvalidOption {
                option: "log axis range",
                reason: format!("bound {value} is not positive"),
            });
        }
    }
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let first = (lo.log10() + 1e-9).floor() as i32;
    let mut last = (hi.log10() - 1e-9).ceil() as i32;
    if last <= first {
        last = first + 1;
    }
    let fine = last - first < 3;
    let mut values = Vec::new();
    for k in first..=last {
        let decade = 10f64.powi(k);
        values.push(decade);
        if fine && k < last {
            values.push(2.0 * decade);
            values.push(5.0 * decade);
        }
    }
    // Trim fine ticks outside the range but keep the covering decades.
    let values: Vec<f64> = values
        .iter()
        .copied()
        .filter(|&v| {
            let is_decade = (v.log10() - v.log10().round()).abs() < 1e-9;
            is_decade || (v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9))
        })
        .collect();
    let labels = values.iter().map(|&v| format_log(v)).collect();
    Ok(Ticks {
        step: 0.0,
        values,
        labels,
    })
}

fn format_log(v: f64) -> String {
    let k = v.log10().floor() as i32;
    if (-3..=5).contains(&k) {
        let decimals = if k < 0 { (-k) as usize } else { 0 };
        format!("{v:.decimals$}")
    } else {
        let m = (v / 10f64.powi(k)).round();
        format!("{m}e{k}")
    }
}

/// Labels with as many decimals as the step needs; scientific notation for very large or
/// very small values.
fn labels_for(values: &[f64], step: f64) -> Vec<String> {
    let biggest = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let step_exp = (step.log10() + 1e-9).floor() as i32;
    if biggest >= 1e6 || step < 1e-3 {
        let k = (biggest.log10() + 1e-9).floor() as i32;
        let decimals = (k - step_exp).max(0) as usize;
        values
            .iter()
            .map(|&v| {
                if v == 0.0 {
                    "0".to_string()
                } else {
                    format!("{:.decimals$}e{k}", v / 10f64.powi(k))
                }
            })
            .collect()
    } else {
        let decimals = (-step_exp).max(0) as usize;
        values.iter().map(|&v| format!("{v:.decimals$}")).collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn is_one_two_five(step: f64) -> bool {
        let k = step.log10().floor();
        let m = step / 10f64.powf(k);
        [1.0, 2.0, 5.0, 10.0].iter().any(|&x| (m - x).abs() < 1e-9)
    }

    #[test]
    fn examples() {
        let t = nice_ticks(0.0, 1.0).unwrap();
        assert_eq!(t.values.len(), 6);
        assert_eq!(t.labels, ["0.0", "0.2", "0.4", "0.6", "0.8", "1.0"]);
        let t = nice_ticks(0.05, 3.0).unwrap();
        assert_eq!(t.step, 0.5);
        assert_eq!(t.range(), (0.0, 3.0));
        let t = nice_ticks(-12.0, 87.0).unwrap();
        assert_eq!((t.step, t.range()), (20.0, (-20.0, 100.0)));
        let t = nice_ticks(5.0, 5.0).unwrap();
        assert!(t.values[0] <= 4.5 && *t.values.last().unwrap() >= 5.5);
        assert!(nice_ticks(0.0, f64::NAN).is_err());
        let t = nice_ticks(0.0, 2.5e-6).unwrap();
        assert_eq!(t.labels[1], "0.5e-6");
        let t = log_ticks(0.05, 3.0).unwrap();
        assert_eq!(t.values[0], 0.01);
        assert!(t.values.contains(&0.1) && t.values.contains(&1.0) && t.values.contains(&10.0));
        assert!(log_ticks(0.0, 1.0).is_err());
    }

    proptest! {
        #[test]
        fn nice_ticks_cover_the_range_with_1_2_5_steps(
            a in -1e3f64..1e3, width_exp in -3.0f64..6.0, scale_exp in -9i32..9
        ) {
            let scale = 10f64.powi(scale_exp);
            let lo = a * scale;
            let hi = lo + 10f64.powf(width_exp) * scale;
            let t = nice_ticks(lo, hi).unwrap();
            let (first, last) = t.range();
            prop_assert!(first <= lo + 1e-9 * t.step && last >= hi - 1e-9 * t.step);
            prop_assert!(is_one_two_five(t.step), "step {}", t.step);
            prop_assert!((4..=10).contains(&t.values.len()) || hi - lo <= 1e-12 * lo.abs().max(hi.abs()),
                "{} ticks for [{lo}, {hi}]", t.values.len());
            prop_assert!(t.values.len() >= 5 || hi - lo <= 1e-12 * lo.abs().max(hi.abs()));
            for w in t.values.windows(2) {
                prop_assert!(((w[1] - w[0]) / t.step - 1.0).abs() < 1e-6);
            }
            prop_assert_eq!(t.labels.len(), t.values.len());
        }

        #[test]
        fn log_ticks_cover_the_range(lo_exp in -9.0f64..9.0, decades in 0.01f64..8.0) {
            let lo = 10f64.powf(lo_exp);
            let hi = lo * 10f64.powf(decades);
            let t = log_ticks(lo, hi).unwrap();
            let (first, last) = t.range();
            prop_assert!(first <= lo * (1.0 + 1e-9) && last >= hi * (1.0 - 1e-9));
            for w in t.values.windows(2) {
                prop_assert!(w[1] > w[0]);
            }
        }
    }
}
