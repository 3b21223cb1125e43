//! The energy of the scalar hysteresis model: the stored-energy and loss moments against
//! two-dimensional quadrature of the Preisach density (their definition), the energy balance
//! of a step (supplied = stored change + loss) against closed forms on the major branches and
//! against the quadrature of H dB for random histories, and the loss's sign.
//!
//! Source of the split: a hysteron (alpha >= beta) of weight mu switching up at alpha takes
//! 2 mu alpha, switching down at beta gives back 2 mu beta; the stored part is
//! +/-(alpha + beta) mu and the loss (alpha - beta) mu (Mayergoyz, Mathematical Models of
//! Hysteresis, Springer 1991, ch. 1; Bertotti, Hysteresis in Magnetism, Academic Press 1998,
//! the chapter on the Preisach model's energy and dissipation).

use coercive_fem::hysteresis::{History, HysteresisLaw, Sigmoid};
use coercive_fem::MU_0;
use proptest::prelude::*;

/// A square loop of the order of cast AlNiCo 5 (illustrative, not datasheet values).
fn alnico_like(sigmoid: Sigmoid) -> HysteresisLaw {
    HysteresisLaw {
        saturation_polarisation: 1.27,
        coercive_field: 50e3,
        width: 6e3,
        sigmoid,
        reversible_polarisation: 0.15,
        recoil_permeability: 3.6,
    }
}

/// A round loop (s comparable to Hc): minor loops carry weight.
fn round_law(sigmoid: Sigmoid) -> HysteresisLaw {
    HysteresisLaw {
        saturation_polarisation: 1.0,
        coercive_field: 30e3,
        width: 20e3,
        sigmoid,
        reversible_polarisation: 0.2,
        recoil_permeability: 2.0,
    }
}

/// A very round loop (Hc = s/2): its diagonal (reversible) Preisach part is large, so the
/// moments' diagonal terms are tested with weight.
fn soft_law(sigmoid: Sigmoid) -> HysteresisLaw {
    HysteresisLaw {
        saturation_polarisation: 0.8,
        coercive_field: 10e3,
        width: 20e3,
        sigmoid,
        reversible_polarisation: 0.1,
        recoil_permeability: 1.5,
    }
}

fn laws() -> Vec<HysteresisLaw> {
    let mut v = Vec::new();
    for sigmoid in [Sigmoid::Logistic, Sigmoid::Erf] {
        v.push(alnico_like(sigmoid));
        v.push(round_law(sigmoid));
        v.push(soft_law(sigmoid));
    }
    v
}

fn history_after(law: &HysteresisLaw, positive: bool, inputs: &[f64]) -> History {
    let mut h = History::saturated(positive);
    for &x in inputs {
        law.apply(&mut h, x);
    }
    h
}

/// 5-point Gauss-Legendre nodes and weights on [-1, 1].
fn gauss5() -> [(f64, f64); 5] {
    let r = (10.0_f64 / 7.0).sqrt();
    let x1 = (5.0 - 2.0 * r).sqrt() / 3.0;
    let x2 = (5.0 + 2.0 * r).sqrt() / 3.0;
    let w1 = (322.0 + 13.0 * 70.0_f64.sqrt()) / 900.0;
    let w2 = (322.0 - 13.0 * 70.0_f64.sqrt()) / 900.0;
    [
        (-x2, w2),
        (-x1, w1),
        (0.0, 128.0 / 225.0),
        (x1, w1),
        (x2, w2),
    ]
}

/// Composite 5-point Gauss-Legendre on [a, b] with pieces no wider than `piece`.
fn integrate(f: &dyn Fn(f64) -> f64, a: f64, b: f64, piece: f64) -> f64 {
    if b <= a {
        return 0.0;
    }
    let n = ((b - a) / piece).ceil().max(1.0) as usize;
    let h = (b - a) / n as f64;
    let rule = gauss5();
    let mut sum = 0.0;
    for k in 0..n {
        let mid = a + (k as f64 + 0.5) * h;
        for &(t, w) in &rule {
            sum += 0.5 * h * w * f(mid + 0.5 * h * t);
        }
    }
    sum
}

/// The diagonal (reversible) Preisach weight g(x) per unit field (T m/A): at the last input
/// both branches leave with slope 2 g(x) (the module's documented slope there).
fn diagonal_density(law: &HysteresisLaw, x: f64) -> f64 {
    let history = history_after(law, true, &[x]);
    0.5 * law.irreversible_part(&history, x).1
}

/// Integral over beta in [b0, b1], alpha in [beta, a] of `weight(alpha, beta)` times the
/// Preisach density, plus the integral over the diagonal x in [b0, b1] (x <= a) of
/// `weight(x, x)` times g(x): the weight-moment of the hysterons in that region, from the
/// model's density by quadrature.
fn region_moment(
    law: &HysteresisLaw,
    weight: &dyn Fn(f64, f64) -> f64,
    b0: f64,
    b1: f64,
    a: f64,
) -> f64 {
    let piece = 0.1 * law.width;
    let inner = |beta: f64| {
        integrate(
            &|alpha| weight(alpha, beta) * law.preisach_density(alpha, beta),
            beta,
            a,
            piece,
        )
    };
    let off = integrate(&inner, b0, b1.min(a), piece);
    let diagonal = integrate(
        &|x| weight(x, x) * diagonal_density(law, x),
        b0,
        b1.min(a),
        piece,
    );
    off + diagonal
}

/// E, M and D in closed form against their definitions, the integrals of 1, (alpha + beta)/2
/// and (alpha - beta) over the triangle b <= beta <= alpha <= a of the density (with the
/// diagonal part for E and M), by composite Gauss-Legendre quadrature.
#[test]
fn moments_match_quadrature_of_the_density() {
    for law in laws() {
        let (hc, s) = (law.coercive_field, law.width);
        let scale = law.saturation_polarisation * (hc + s);
        for (a, b) in [
            (hc + 2.0 * s, -hc - 2.0 * s),
            (hc, -0.3 * hc),
            (0.5 * hc, -hc - s),
            (2.0 * hc + 3.0 * s, hc - s),
            (-0.2 * hc, -0.5 * hc),
        ] {
            let e = region_moment(&law, &|_, _| 1.0, b, a, a);
            let m = region_moment(&law, &|x, y| 0.5 * (x + y), b, a, a);
            let d = region_moment(&law, &|x, y| x - y, b, a, a);
            let (ce, cm, cd) = (
                law.everett(a, b),
                law.stored_moment(a, b),
                law.loss_moment(a, b),
            );
            assert!(
                (ce - e).abs() < 1e-10 * law.saturation_polarisation,
                "E({a}, {b}) = {ce} vs quadrature {e}"
            );
            assert!(
                (cm - m).abs() < 1e-10 * scale,
                "M({a}, {b}) = {cm} vs quadrature {m} ({law:?})"
            );
            assert!(
                (cd - d).abs() < 1e-10 * scale,
                "D({a}, {b}) = {cd} vs quadrature {d} ({law:?})"
            );
            assert!(cd > 0.0);
        }
        // The whole half-plane: total weight Js, first moment 0 by the odd symmetry
        // mu(alpha, beta) = mu(-beta, -alpha), loss moment 2 Js Hc (half the area 4 Js Hc of
        // the irreversible major loop, whose branches are Hc either side of J's axis).
        let js = law.saturation_polarisation;
        let (inf, ninf) = (f64::INFINITY, f64::NEG_INFINITY);
        assert!((law.everett(inf, ninf) - js).abs() < 1e-15 * js);
        assert!(law.stored_moment(inf, ninf).abs() < 1e-15 * scale);
        assert!((law.loss_moment(inf, ninf) - 2.0 * js * hc).abs() < 1e-14 * scale);
        // Finite arguments far out reach the infinite ones.
        let far = hc + 60.0 * s;
        assert!((law.loss_moment(far, -far) - 2.0 * js * hc).abs() < 1e-9 * scale);
        assert_eq!(law.stored_moment(0.3 * hc, 0.3 * hc), 0.0);
        assert_eq!(law.loss_moment(0.3 * hc, 0.3 * hc), 0.0);
    }
}

/// The stored energy of the remanent state after positive saturation from its definition:
/// U = integral of (alpha + beta)/2 gamma dmu with gamma = -1 for beta >= 0 (switched down on
/// the way from +inf to 0) and +1 elsewhere, by quadrature; the negatively saturated
/// remanent state stores the same (mirror symmetry), and either saturated state far out
/// stores nothing.
#[test]
fn stored_energy_of_the_saturated_states() {
    for law in laws() {
        let (hc, s) = (law.coercive_field, law.width);
        let scale = law.saturation_polarisation * (hc + s);
        let l = hc + 30.0 * s;
        let w = |x: f64, y: f64| 0.5 * (x + y);
        let up = region_moment(&law, &w, -l, 0.0, l);
        let down = region_moment(&law, &w, 0.0, l, l);
        let definition = up - down;
        let positive = law.irreversible_stored_energy(&History::saturated(true));
        let negative = law.irreversible_stored_energy(&History::saturated(false));
        assert!(
            (positive - definition).abs() < 1e-9 * scale,
            "U(+sat, H = 0) = {positive} vs definition {definition}"
        );
        assert!((negative - positive).abs() < 1e-12 * scale);
        assert!(
            positive < 0.0,
            "the remanent state stores less than saturation"
        );
        let far = law.irreversible_stored_energy(&history_after(&law, true, &[l + hc]));
        assert!(far.abs() < 1e-9 * scale, "U(+sat far out) = {far}");
        // The total stored energy adds mu_0 H^2 / 2 and the reversible part's own (zero at 0).
        let total = law.stored_energy_density(&History::saturated(true));
        assert_eq!(total, positive);
    }
}

/// Integral of the odd sigmoid S from z0 to z1: logistic ln cosh, erf z erf z + exp(-z^2)/sqrt(pi).
fn sigmoid_integral(sigmoid: Sigmoid, z0: f64, z1: f64) -> f64 {
    let antiderivative = |z: f64| match sigmoid {
        Sigmoid::Logistic => {
            let a = z.abs();
            a + (-2.0 * a).exp().ln_1p() - std::f64::consts::LN_2
        }
        Sigmoid::Erf => z * sigmoid.value(z) + (-z * z).exp() / std::f64::consts::PI.sqrt(),
    };
    antiderivative(z1) - antiderivative(z0)
}

/// Along the ascending major branch J_irr = Js S((H - Hc)/s) (exact for this Everett
/// function, see the module docs), the work of a step is closed form:
/// integral of H dB = mu_0 (h1^2 - h0^2)/2 + [H J_irr] - Js s integral of S + the reversible
/// part's [H J_rev] - (J_r^2/k) [ln cosh]. The model's stored-energy change plus its loss
/// must equal it, step by step and in one stride; over the whole branch the loss is
/// D(+inf, -inf) = 2 Js Hc, and a full major cycle loses the loop area.
#[test]
fn major_branch_steps_balance_in_closed_form() {
    for law in laws() {
        let (js, hc, s) = (law.saturation_polarisation, law.coercive_field, law.width);
        let scale = js * (hc + s);
        let h0 = -hc - 40.0 * s;
        let work = |a: f64, b: f64| {
            let j = |h: f64| js * law.sigmoid.value((h - hc) / s);
            0.5 * MU_0 * (b * b - a * a) + b * j(b)
                - a * j(a)
                - js * s * sigmoid_integral(law.sigmoid, (a - hc) / s, (b - hc) / s)
                + law.reversible_stored_energy(b)
                - law.reversible_stored_energy(a)
        };
        let mut history = history_after(&law, false, &[h0]);
        let start = history.clone();
        let mut total_loss = 0.0;
        let steps = 40;
        let h_end = hc + 40.0 * s;
        for k in 1..=steps {
            let a = history.last_input();
            let b = h0 + (h_end - h0) * k as f64 / steps as f64;
            let before = law.stored_energy_density(&history);
            let loss = law.dissipation_density(&history, b);
            law.apply(&mut history, b);
            let stored = law.stored_energy_density(&history) - before;
            assert!(loss >= 0.0, "loss {loss} on step {k}");
            let w = work(a, b);
            assert!(
                (stored + loss - w).abs() < 1e-9 * scale,
                "step {k}: stored {stored} + loss {loss} vs work {w} ({law:?})"
            );
            total_loss += loss;
        }
        assert!(
            (total_loss - 2.0 * js * hc).abs() < 1e-9 * scale,
            "loss up the major branch {total_loss} vs 2 Js Hc"
        );
        let one_stride = law.dissipation_density(&start, h_end);
        assert!((one_stride - total_loss).abs() < 1e-9 * scale);
        // Back down: the cycle's loss is 4 Js Hc (less the weight beyond +/-(Hc + 40 s)).
        let down = law.dissipation_density(&history, h0);
        assert!((total_loss + down - 4.0 * js * hc).abs() < 1e-9 * scale);
    }
}

/// A step that does not move loses nothing and a non-finite input is ignored.
#[test]
fn idle_and_non_finite_steps_lose_nothing() {
    let law = round_law(Sigmoid::Logistic);
    let history = history_after(&law, true, &[-40e3, 20e3]);
    assert_eq!(law.dissipation_density(&history, 20e3), 0.0);
    assert_eq!(law.dissipation_density(&history, f64::NAN), 0.0);
    assert_eq!(law.dissipation_density(&history, f64::INFINITY), 0.0);
}

fn any_law() -> impl Strategy<Value = HysteresisLaw> {
    (0usize..6).prop_map(|i| laws()[i].clone())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    /// For random histories (minor loops inside minor loops, wiping-out) and a random next
    /// input: the work of the step, the integral of H dB along the trial branch by the
    /// model's own quadrature (`loop_loss`, which knows nothing of the moments), equals the
    /// stored-energy change plus the loss, and the loss is non-negative.
    #[test]
    fn random_steps_balance_and_lose(
        law in any_law(),
        positive in any::<bool>(),
        inputs in prop::collection::vec(-200e3f64..200e3, 0..30),
        next in prop::collection::vec(-200e3f64..200e3, 1..8),
    ) {
        let mut history = history_after(&law, positive, &inputs);
        let scale = law.saturation_polarisation * (law.coercive_field + law.width);
        let mut cycle_work = 0.0;
        let mut cycle_loss = 0.0;
        let first = history.clone();
        for &h in &next {
            let before = law.stored_energy_density(&history);
            let loss = law.dissipation_density(&history, h);
            let mut after = history.clone();
            let work = law.loop_loss(&mut after, &[h]);
            let stored = law.stored_energy_density(&after) - before;
            prop_assert!(loss >= -1e-12 * scale, "loss {}", loss);
            let tolerance = 1e-9 * scale + 1e-9 * work.abs();
            prop_assert!(
                (stored + loss - work).abs() < tolerance,
                "stored {} + loss {} vs work {}", stored, loss, work
            );
            cycle_work += work;
            cycle_loss += loss;
            history = after;
        }
        // Over the whole sequence: supplied = stored change + loss.
        let change = law.stored_energy_density(&history) - law.stored_energy_density(&first);
        prop_assert!((change + cycle_loss - cycle_work).abs() < 1e-8 * scale);
    }
}
