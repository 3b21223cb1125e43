//! Newton-Raphson with the exact tangent and a line search on the energy functional.
//!
//! The discrete problem is R(x) = F_int(x) - s F = 0, with F_int the virtual work of H(B)
//! (magnets' remanence included), F the load of the current densities and s the load scale.
//! Each iteration assembles the tangent dF_int/dx (symmetric for every law implemented, so a
//! Cholesky factorisation on the shared symbolic analysis serves), solves for the update and
//! searches along it for a minimum of the energy functional, whose slope is R . dx
//! (Nocedal & Wright, Numerical Optimization, 2nd ed., sec. 3.1). The tangent assembled at an
//! accepted trial point is reused for the next iteration, so an iteration costs one assembly,
//! one numeric factorisation and one solve.
//!
//! Convergence needs both: relative residual ||R|| / ||R(x = 0)|| <= `residual_tolerance`
//! and relative update ||dx|| / ||x|| <= `update_tolerance`. Linear models take one exact
//! step. Failures are typed ([`NewtonFailure`]) and carry the last iterate and the history.

// Index loops over local nodes mirror the formulas; iterator chains would hide them.
#![allow(clippy::needless_range_loop)]

use std::fmt;
use std::time::Instant;

use serde::{Deserialize, Serialize};

use crate::assembly::{Assembler, Want};
use crate::dof::{Layout, FIXED};
use crate::linsolve::{Factor, FactorError, LinearSolverKind};

/// Line-search acceptance: |g(alpha)| <= this x |g(0)| (a strong-Wolfe-type curvature
/// condition on the energy's slope; Nocedal & Wright sec. 3.1).
const LINE_SEARCH_SLOPE: f64 = 0.2;

/// Settings of Newton's method.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct NewtonSettings {
    /// Relative residual tolerance, ||R|| / ||R(x = 0)|| (dimensionless).
    pub residual_tolerance: f64,
    /// Relative update tolerance, ||dx|| / ||x|| (dimensionless).
    pub update_tolerance: f64,
    /// Maximum number of Newton iterations.
    pub max_iterations: usize,
    /// Line search on the energy functional (on by default).
    pub line_search: bool,
    /// Maximum number of trial points (residual assemblies) per line search.
    pub max_line_search_evaluations: usize,
    /// The linear solver (used when a [`Solver`](crate::Solver) is created by
    /// [`Model::solve`](crate::Model::solve); a `Solver` fixes its own).
    pub linear_solver: LinearSolverKind,
}

impl Default for NewtonSettings {
    fn default() -> Self {
        Self {
            residual_tolerance: 1e-8,
            // The update criterion lags one iteration behind the error (the last update is
            // roughly the error of the previous iterate), so it is looser than the residual's.
            update_tolerance: 1e-6,
            max_iterations: 30,
            line_search: true,
            max_line_search_evaluations: 8,
            linear_solver: LinearSolverKind::Cholesky,
        }
    }
}

/// Wall-clock time spent in each phase of a solve (s).
#[derive(Clone, Copy, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct PhaseTimes {
    /// Assembly of tangents, residuals and the load (s).
    pub assembly_s: f64,
    /// Numeric factorisations (s).
    pub factorisation_s: f64,
    /// Triangular solves (s).
    pub solve_s: f64,
}

/// The log of a Newton solve.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct NewtonReport {
    /// Iterations done (linear solves).
    pub iterations: usize,
    /// Relative residual norm before the first and after each iteration.
    pub residual_norms: Vec<f64>,
    /// Relative update norm of each iteration.
    pub update_norms: Vec<f64>,
    /// Accepted step length of each iteration (1 = full Newton step).
    pub step_lengths: Vec<f64>,
    /// True when both tolerances were met (always true in a returned `Solution`).
    pub converged: bool,
    /// Number of free unknowns.
    pub unknowns: usize,
    /// Time per phase.
    pub times: PhaseTimes,
}

/// Why Newton's method stopped without converging.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[non_exhaustive]
pub enum NewtonFailureReason {
    /// The iteration limit was reached.
    MaxIterations,
    /// No step length reduced the residual.
    LineSearch,
    /// The residual or the update became NaN or infinite.
    NotFinite,
    /// The tangent could not be factorised.
    Factorisation(String),
}

/// A failed Newton solve: the reason, the history and the last iterate.
///
/// Its `Debug` output summarises the last iterate (length and largest magnitude) instead of
/// printing every node's potential.
#[derive(Clone, PartialEq)]
pub struct NewtonFailure {
    /// Why it stopped.
    pub reason: NewtonFailureReason,
    /// The iteration history up to the failure.
    pub report: NewtonReport,
    /// The last iterate: the potential at every node (as in
    /// [`Solution::potential`](crate::Solution::potential)).
    pub last_potential: Vec<f64>,
}

impl fmt::Debug for NewtonFailure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let largest = self.last_potential.iter().fold(0.0_f64, |m, a| {
            if a.abs() > m || a.is_nan() {
                a.abs()
            } else {
                m
            }
        });
        f.debug_struct("NewtonFailure")
            .field("reason", &self.reason)
            .field("report", &self.report)
            .field(
                "last_potential",
                &format_args!(
                    "[{} values, largest |A| {largest:e} Wb/m]",
                    self.last_potential.len()
                ),
            )
            .finish()
    }
}

impl fmt::Display for NewtonFailure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "Newton-Raphson did not converge ({:?}) after {} iterations; relative residuals {:?}",
            self.reason, self.report.iterations, self.report.residual_norms
        )
    }
}

/// Expands free unknowns `x` into nodal potentials `a` (fixed nodes from the layout).
pub(crate) fn expand(layout: &Layout, x: &[f64], a: &mut [f64]) {
    for (d, ad) in a.iter_mut().enumerate() {
        let e = layout.dof_eq[d];
        *ad = if e == FIXED {
            layout.fixed_values[d]
        } else {
            layout.dof_sign[d] * x[e as usize]
        };
    }
}

/// Restricts nodal potentials to free unknowns.
pub(crate) fn restrict(layout: &Layout, a: &[f64]) -> Vec<f64> {
    let mut x = vec![0.0; layout.neq];
    for (d, ad) in a.iter().enumerate() {
        let e = layout.dof_eq[d];
        if e != FIXED {
            x[e as usize] = layout.dof_sign[d] * ad;
        }
    }
    x
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// Outcome of [`run`] on failure: the failure itself, or a pivot failure at an equation.
pub(crate) enum RunError {
    Failed(Box<NewtonFailure>),
    Pivot(usize, Box<NewtonFailure>),
}

/// Runs Newton's method from the nodal potential `a` (overwritten with the result).
/// `load` is the scaled load vector.
pub(crate) fn run(
    asm: &Assembler<'_>,
    factor: &mut Factor,
    load: &[f64],
    a: &mut [f64],
    settings: &NewtonSettings,
    linear: bool,
) -> Result<NewtonReport, RunError> {
    let layout = asm.layout;
    let neq = layout.neq;
    let mut report = NewtonReport {
        unknowns: neq,
        ..Default::default()
    };
    let mut values = vec![0.0; asm.pattern.nnz()];
    let mut force = vec![0.0; neq];
    let mut x = restrict(layout, a);

    let assemble =
        |a: &[f64], want: Want, force: &mut [f64], values: &mut [f64], t: &mut PhaseTimes| {
            let t0 = Instant::now();
            asm.assemble(a, want, force, values);
            t.assembly_s += t0.elapsed().as_secs_f64();
        };

    // Reference: the residual at x = 0 (sources, remanence and fixed potentials only).
    let mut a0 = vec![0.0; a.len()];
    expand(layout, &vec![0.0; neq], &mut a0);
    assemble(&a0, Want::Force, &mut force, &mut values, &mut report.times);
    let reference = force
        .iter()
        .zip(load)
        .map(|(f, l)| (f - l) * (f - l))
        .sum::<f64>()
        .sqrt();
    drop(a0);

    let fail = |reason: NewtonFailureReason, report: &NewtonReport, a: &[f64]| {
        Box::new(NewtonFailure {
            reason,
            report: report.clone(),
            last_potential: a.to_vec(),
        })
    };

    expand(layout, &x, a);
    if neq == 0 || reference == 0.0 {
        // Nothing drives a field: the solution is the fixed values and zero elsewhere.
        if reference == 0.0 {
            x.fill(0.0);
            expand(layout, &x, a);
        }
        report.residual_norms.push(0.0);
        report.converged = true;
        return Ok(report);
    }

    assemble(
        a,
        Want::ForceAndTangent,
        &mut force,
        &mut values,
        &mut report.times,
    );
    let mut residual: Vec<f64> = force.iter().zip(load).map(|(f, l)| f - l).collect();
    let mut rnorm = norm(&residual);
    report.residual_norms.push(rnorm / reference);
    let mut delta = vec![0.0; neq];
    let mut x_trial = vec![0.0; neq];
    let mut a_trial = vec![0.0; a.len()];

    for _ in 0..settings.max_iterations {
        let t0 = Instant::now();
        if let Err(e) = factor.factorise(asm.pattern, &values) {
            report.times.factorisation_s += t0.elapsed().as_secs_f64();
            return Err(match e {
                FactorError::Pivot(eq) => RunError::Pivot(
                    eq,
                    fail(
                        NewtonFailureReason::Factorisation("non-positive pivot".into()),
                        &report,
                        a,
                    ),
                ),
                FactorError::Other(msg) => {
                    RunError::Failed(fail(NewtonFailureReason::Factorisation(msg), &report, a))
                }
            });
        }
        report.times.factorisation_s += t0.elapsed().as_secs_f64();
        let t0 = Instant::now();
        for (d, r) in delta.iter_mut().zip(&residual) {
            *d = -r;
        }
        factor.solve_in_place(&mut delta);
        report.times.solve_s += t0.elapsed().as_secs_f64();
        report.iterations += 1;
        if !delta.iter().all(|d| d.is_finite()) {
            return Err(RunError::Failed(fail(
                NewtonFailureReason::NotFinite,
                &report,
                a,
            )));
        }

        // Line search on the energy functional Pi(x + alpha dx), convex for monotone laws:
        // its slope g(alpha) = R(x + alpha dx) . dx is driven towards zero until
        // |g| <= LINE_SEARCH_SLOPE |g(0)| (a curvature condition, Nocedal & Wright sec. 3.1).
        // The full step comes first, so near the solution Newton keeps its quadratic rate.
        // While g < 0 the step is extrapolated (secant on g, 1.5x to 4x); once a bracket
        // exists, Illinois regula falsi, or bisection while one end's slope dwarfs the
        // other's (an exponential law far out); an overflowing trial counts as past the
        // minimum.
        let g0: f64 = residual.iter().zip(&delta).map(|(r, d)| r * d).sum();
        let evals = if settings.line_search && !linear && g0 < 0.0 {
            settings.max_line_search_evaluations.max(1)
        } else {
            1
        };
        let want = if linear {
            // A linear model stops after this step: its tangent is not needed again.
            Want::Force
        } else {
            Want::ForceAndTangent
        };
        let mut alpha = 1.0;
        let (mut lo, mut g_lo) = (0.0, g0);
        let (mut hi, mut g_hi) = (f64::NAN, f64::NAN);
        let mut side = 0i32;
        let mut trial_norm = f64::INFINITY;
        // The full step (usually accepted) assembles the tangent with the force; other
        // trials assemble the force only, and the tangent is assembled once at the end.
        let mut tangent_at_trial = false;
        let mut accepted = false;
        let mut last_g = f64::NAN;
        for k in 0..evals {
            for ((xt, xi), di) in x_trial.iter_mut().zip(&x).zip(&delta) {
                *xt = xi + alpha * di;
            }
            expand(layout, &x_trial, &mut a_trial);
            let w = if k == 0 { want } else { Want::Force };
            assemble(&a_trial, w, &mut force, &mut values, &mut report.times);
            tangent_at_trial = w == Want::ForceAndTangent;
            let mut g = 0.0;
            let mut n2 = 0.0;
            for ((f, l), d) in force.iter().zip(load).zip(&delta) {
                let r = f - l;
                g += r * d;
                n2 += r * r;
            }
            trial_norm = n2.sqrt();
            last_g = g;
            if evals == 1
                || (g.is_finite()
                    && (g.abs() <= LINE_SEARCH_SLOPE * g0.abs()
                        || trial_norm <= settings.residual_tolerance * reference))
            {
                accepted = true;
                break;
            }
            if k + 1 == evals {
                break;
            }
            if !g.is_finite() || !trial_norm.is_finite() {
                // Overflow far out (an exponential law): the far side of the minimum.
                hi = alpha;
                g_hi = f64::INFINITY;
                side = 1;
                alpha = 0.5 * (lo + hi);
                continue;
            }
            if g < 0.0 {
                let (a_prev, g_prev) = (lo, g_lo);
                lo = alpha;
                g_lo = g;
                if hi.is_nan() {
                    // The minimum lies beyond: extrapolate along the secant of the slope,
                    // by at least 1.5x and at most 4x.
                    let guess = alpha - g * (alpha - a_prev) / (g - g_prev);
                    alpha = if guess.is_finite() && g > g_prev {
                        guess.clamp(1.5 * alpha, 4.0 * alpha)
                    } else {
                        2.0 * alpha
                    };
                    continue;
                }
                if side == -1 {
                    g_hi *= 0.5;
                }
                side = -1;
            } else {
                hi = alpha;
                g_hi = g;
                if side == 1 {
                    g_lo *= 0.5;
                }
                side = 1;
            }
            // Inside the bracket [lo, hi]: Illinois regula falsi while the end slopes are
            // comparable, bisection while one dwarfs the other (an exponential law's slope
            // far out would otherwise pin the secant to the near end).
            let w = hi - lo;
            let ratio = g_hi.abs().max(g_lo.abs()) / g_hi.abs().min(g_lo.abs());
            let guess = lo - g_lo * w / (g_hi - g_lo);
            alpha = if ratio > 1e6 || !ratio.is_finite() || !guess.is_finite() {
                0.5 * (lo + hi)
            } else if ratio <= 10.0 {
                guess.clamp(lo + 0.05 * w, hi - 0.05 * w)
            } else if g_hi.abs() > g_lo.abs() {
                // Between the secant (w / ratio from the small end) and bisection.
                lo + w * (1.0 / ratio.sqrt()).max(0.05)
            } else {
                hi - w * (1.0 / ratio.sqrt()).max(0.05)
            };
        }
        if !accepted && lo > 0.0 && !(last_g <= 0.0 && trial_norm.is_finite()) {
            // No trial met the slope test and the last one lies past the minimum: fall back to
            // the largest step known to lie before it, where the energy is below Pi(x) for a
            // convex functional.
            alpha = lo;
            for ((xt, xi), di) in x_trial.iter_mut().zip(&x).zip(&delta) {
                *xt = xi + alpha * di;
            }
            expand(layout, &x_trial, &mut a_trial);
            tangent_at_trial = false;
        }
        if !linear && !tangent_at_trial {
            assemble(
                &a_trial,
                Want::ForceAndTangent,
                &mut force,
                &mut values,
                &mut report.times,
            );
            trial_norm = force
                .iter()
                .zip(load)
                .map(|(f, l)| (f - l) * (f - l))
                .sum::<f64>()
                .sqrt();
        }
        if !trial_norm.is_finite() {
            return Err(RunError::Failed(fail(
                NewtonFailureReason::LineSearch,
                &report,
                a,
            )));
        }
        std::mem::swap(&mut x, &mut x_trial);
        a.copy_from_slice(&a_trial);
        for ((r, f), l) in residual.iter_mut().zip(&force).zip(load) {
            *r = f - l;
        }
        rnorm = trial_norm;
        let xnorm = norm(&x);
        let update = alpha * norm(&delta) / xnorm.max(f64::MIN_POSITIVE);
        report.residual_norms.push(rnorm / reference);
        report.update_norms.push(update);
        report.step_lengths.push(alpha);
        if !rnorm.is_finite() || !update.is_finite() {
            return Err(RunError::Failed(fail(
                NewtonFailureReason::NotFinite,
                &report,
                a,
            )));
        }
        if linear
            || (rnorm <= settings.residual_tolerance * reference
                && update <= settings.update_tolerance)
        {
            report.converged = true;
            return Ok(report);
        }
    }
    Err(RunError::Failed(fail(
        NewtonFailureReason::MaxIterations,
        &report,
        a,
    )))
}
