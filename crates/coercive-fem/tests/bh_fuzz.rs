//! Mutated B-H data never panics: stored (processed) tables read with serde and measured
//! points given to `BhCurve::from_points` either give a curve that is finite, increasing and
//! has a positive slope at B = 0, or fail with an error naming the knot, piece or point.

use coercive_fem::{library, BhCurve, MaterialError, MU_0};
use proptest::prelude::*;
use serde_json::Value;

/// The processed curves of two presets: a measured table and a permeability law.
fn seeds() -> [BhCurve; 2] {
    [
        library::steel_c45().curve().unwrap(),
        library::m400_50a().curve().unwrap(),
    ]
}

/// The measured points (H, B) behind a processed curve (its knots without the origin).
fn points_of(c: &BhCurve) -> Vec<(f64, f64)> {
    c.points().iter().skip(1).map(|k| (k.h, k.b)).collect()
}

/// Checks what every accepted curve guarantees: finite, strictly increasing, positive slope
/// at B = 0 and at most 1/mu_0 beyond the last knot.
fn check_curve(c: &BhCurve) -> Result<(), TestCaseError> {
    let mu_r = c.initial_relative_permeability();
    prop_assert!(mu_r.is_finite() && mu_r > 0.0, "initial mu_r {}", mu_r);
    let top = 1.5 * c.last_b() + 0.1;
    let mut previous = 0.0;
    for j in 1..=300 {
        let b = top * j as f64 / 300.0;
        let (h, slope) = c.h_of_b(b);
        prop_assert!(h.is_finite() && slope.is_finite(), "H {} at {} T", h, b);
        prop_assert!(slope > 0.0, "slope {} at {} T", slope, b);
        prop_assert!(h > previous, "H {} after {} at {} T", h, previous, b);
        previous = h;
    }
    let (_, beyond) = c.h_of_b(top);
    prop_assert!(
        (beyond * MU_0 - 1.0).abs() < 1e-9,
        "slope beyond the table {}",
        beyond
    );
    Ok(())
}

/// One edit of a list of numbers.
#[derive(Clone, Debug)]
enum Edit {
    /// Replace the k-th number with a value.
    Set(usize, f64),
    /// Multiply the k-th number by a factor.
    Scale(usize, f64),
    /// Swap two numbers.
    Swap(usize, usize),
    /// Remove the k-th entry (a knot of one column, or one measured point).
    Remove(usize),
}

fn edit() -> impl Strategy<Value = Edit> {
    let values = prop::sample::select(vec![
        0.0,
        -1.0,
        1e-300,
        1e300,
        f64::NAN,
        f64::INFINITY,
        f64::NEG_INFINITY,
        1.0 / MU_0,
        2.0 / MU_0,
        1.0,
        2.5,
    ]);
    prop_oneof![
        (any::<usize>(), values).prop_map(|(k, x)| Edit::Set(k, x)),
        (any::<usize>(), 0.5f64..2.0).prop_map(|(k, f)| Edit::Scale(k, f)),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Edit::Swap(a, b)),
        any::<usize>().prop_map(Edit::Remove),
    ]
}

/// Applies an edit to the columns of a stored table (`b`, `h`, `dh_db`) as one flat list.
fn edit_table(v: &mut Value, e: &Edit) {
    let names = ["b", "h", "dh_db"];
    let lens: Vec<usize> = names
        .iter()
        .map(|n| v[n].as_array().map_or(0, Vec::len))
        .collect();
    let total: usize = lens.iter().sum();
    if total == 0 {
        return;
    }
    let locate = |k: usize| {
        let mut k = k % total;
        for (i, &n) in lens.iter().enumerate() {
            if k < n {
                return (names[i], k);
            }
            k -= n;
        }
        unreachable!("k is below the total")
    };
    // JSON has no NaN or infinity: serde_json writes them as null, which the reader refuses.
    let num = |x: f64| serde_json::json!(x);
    match *e {
        Edit::Set(k, x) => {
            let (col, i) = locate(k);
            v[col][i] = num(x);
        }
        Edit::Scale(k, f) => {
            let (col, i) = locate(k);
            let x = v[col][i].as_f64().unwrap_or(0.0);
            v[col][i] = num(x * f);
        }
        Edit::Swap(a, b) => {
            let ((ca, ia), (cb, ib)) = (locate(a), locate(b));
            let t = v[ca][ia].clone();
            v[ca][ia] = v[cb][ib].clone();
            v[cb][ib] = t;
        }
        Edit::Remove(k) => {
            let (col, i) = locate(k);
            v[col].as_array_mut().unwrap().remove(i);
        }
    }
}

/// Applies an edit to measured points, as a flat list (H0, B0, H1, B1, ...).
fn edit_points(p: &mut Vec<(f64, f64)>, e: &Edit) {
    if p.is_empty() {
        return;
    }
    let n = 2 * p.len();
    let get = |p: &Vec<(f64, f64)>, k: usize| if k % 2 == 0 { p[k / 2].0 } else { p[k / 2].1 };
    let set = |p: &mut Vec<(f64, f64)>, k: usize, x: f64| {
        if k % 2 == 0 {
            p[k / 2].0 = x
        } else {
            p[k / 2].1 = x
        }
    };
    match *e {
        Edit::Set(k, x) => set(p, k % n, x),
        Edit::Scale(k, f) => {
            let x = get(p, k % n);
            set(p, k % n, x * f);
        }
        Edit::Swap(a, b) => {
            let (a, b) = (a % n, b % n);
            let (xa, xb) = (get(p, a), get(p, b));
            set(p, a, xb);
            set(p, b, xa);
        }
        Edit::Remove(k) => {
            let len = p.len();
            p.remove(k % len);
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, rng_seed: proptest::test_runner::RngSeed::Fixed(11), ..ProptestConfig::default() })]

    /// A stored table with a few numbers changed, swapped or removed reads as a valid curve
    /// or is refused with a message naming its knot, piece or columns.
    #[test]
    fn mutated_stored_tables_never_panic(which in 0usize..2, edits in prop::collection::vec(edit(), 1..4)) {
        let mut v = serde_json::to_value(&seeds()[which]).unwrap();
        for e in &edits {
            edit_table(&mut v, e);
        }
        let text = serde_json::to_string(&v).unwrap();
        let read = std::panic::catch_unwind(|| serde_json::from_str::<BhCurve>(&text));
        prop_assert!(read.is_ok(), "reading panicked on {}", text);
        match read.unwrap() {
            Ok(curve) => check_curve(&curve)?,
            Err(e) => {
                let msg = e.to_string();
                let named = msg.starts_with("invalid processed B-H table")
                    && ["knot", "piece", "columns", "origin"].iter().any(|w| msg.contains(w));
                let wrong_shape = msg.starts_with("invalid type");
                prop_assert!(named || wrong_shape, "{}", msg);
            }
        }
    }

    /// Measured points with a few numbers changed, swapped or removed give a valid curve or
    /// a typed error naming the point (or the count of points).
    #[test]
    fn mutated_measured_points_never_panic(which in 0usize..2, edits in prop::collection::vec(edit(), 1..4)) {
        let mut points = points_of(&seeds()[which]);
        for e in &edits {
            edit_points(&mut points, e);
        }
        let made = std::panic::catch_unwind(|| BhCurve::from_points(&points));
        prop_assert!(made.is_ok(), "from_points panicked on {:?}", points);
        match made.unwrap() {
            Ok(curve) => check_curve(&curve)?,
            Err(e) => {
                let msg = e.to_string();
                prop_assert!(msg.contains("point"), "{}", msg);
                let typed = matches!(
                    e,
                    MaterialError::NotFinite { .. }
                        | MaterialError::NotMonotone { .. }
                        | MaterialError::Negative { .. }
                        | MaterialError::TooFewPoints { .. }
                        | MaterialError::OffOrigin { .. }
                        | MaterialError::FlatterThanVacuum { .. }
                );
                prop_assert!(typed, "{:?}", e);
            }
        }
    }
}

#[test]
fn the_seeds_are_accepted_and_an_edit_can_break_them() {
    for c in seeds() {
        check_curve(&c).unwrap();
        let mut v = serde_json::to_value(&c).unwrap();
        // Knot 2's slope made negative.
        edit_table(&mut v, &Edit::Set(2 * c.points().len() + 2, -1.0));
        let e = serde_json::from_value::<BhCurve>(v)
            .unwrap_err()
            .to_string();
        assert!(e.contains("knot 2"), "{e}");
    }
}
