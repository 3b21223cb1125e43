//! Load histories: [`Pulse`]s of winding currents solved as a sequence of load steps that
//! carry the magnets' history from step to step ([`Solver::solve_history`]).
//!
//! # Guarantees
//! - A pulse is piecewise linear between its waypoints, so every extremum of every winding
//!   current is a waypoint, and every waypoint is a load step: a rate-independent hysteresis
//!   model sees each peak.
//! - Between waypoints, a ramp is cut into load steps so that no winding's current changes by
//!   more than [`HistorySettings::max_step`] times the pulse's largest current per step.
//! - A load step whose Newton iteration fails is retried from the same committed state as
//!   two half steps, up to [`HistorySettings::max_cuts`] times. Only converged steps commit.
//! - A failure returns everything done before it ([`HistoryError`]): the steps, the last
//!   committed state and the potential, so nothing is lost.
//!
//! # Energy
//! The energy a winding delivers over a step, the integral of i dpsi, is taken by the
//! trapezoidal rule in the step's end points. For the discrete equations this equals the
//! trapezoidal integral of H . dB over the domain between the two converged fields exactly
//! (the virtual-work identity of the weak form at both ends), so the supplied energy and the
//! material work agree to the solver's tolerance, with a truncation error of second order in
//! the step that the ramp subdivision controls.
//!
//! Each step also records the stored energy with its committed state and the hysteresis
//! loss of its change ([`HistoryStep::stored_energy`], [`HistoryStep::loss`]), so that
//! [`HistoryRun::energy_balance`] splits the supplied energy into stored-energy change and
//! loss (>= 0); the residual is the trapezoidal rule's error.

use std::sync::Arc;

use serde::{Deserialize, Serialize};

use crate::assembly::{stiffness_rule, Assembler};
use crate::model::{Formulation, Model};
use crate::newton::NewtonSettings;
use crate::solution::Solution;
use crate::solver::Solver;
use crate::state::MagnetState;
use crate::FemError;

/// Winding currents (A per turn) at waypoints joined by straight ramps.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Pulse {
    windings: Vec<String>,
    waypoints: Vec<Vec<f64>>,
}

impl Pulse {
    /// A pulse on `windings` (names of the model's windings), with no waypoint yet.
    pub fn new<S: AsRef<str>>(windings: &[S]) -> Pulse {
        Pulse {
            windings: windings.iter().map(|s| s.as_ref().to_string()).collect(),
            waypoints: Vec::new(),
        }
    }

    /// Appends a waypoint: the current (A) of each winding, in the order given to
    /// [`Pulse::new`]. The pulse ramps linearly from the previous waypoint to this one.
    pub fn then(mut self, currents: &[f64]) -> Pulse {
        self.waypoints.push(currents.to_vec());
        self
    }

    /// A single pulse of one winding: 0 A, up to `peak_a`, back to 0 A.
    pub fn single(winding: &str, peak_a: f64) -> Pulse {
        Pulse::new(&[winding])
            .then(&[0.0])
            .then(&[peak_a])
            .then(&[0.0])
    }

    /// A decaying alternating train on one winding: 0, +p, 0, -r p, 0, +r^2 p, ... for
    /// `count` pulses, each `ratio` times the one before with the opposite sign, ending at 0 A
    /// (the usual way to demagnetise a magnet gently).
    pub fn decaying_train(winding: &str, first_peak_a: f64, ratio: f64, count: usize) -> Pulse {
        let mut p = Pulse::new(&[winding]).then(&[0.0]);
        let mut peak = first_peak_a;
        for _ in 0..count {
            p = p.then(&[peak]).then(&[0.0]);
            peak *= -ratio;
        }
        p
    }

    /// The windings, in the order of each waypoint's currents.
    pub fn windings(&self) -> &[String] {
        &self.windings
    }

    /// The waypoints' currents (A).
    pub fn waypoints(&self) -> &[Vec<f64>] {
        &self.waypoints
    }

    /// The largest current magnitude of any winding at any waypoint (A).
    pub fn peak(&self) -> f64 {
        self.waypoints
            .iter()
            .flatten()
            .fold(0.0_f64, |m, i| m.max(i.abs()))
    }

    /// The same pulse with every current multiplied by `factor`.
    pub fn scaled(&self, factor: f64) -> Pulse {
        Pulse {
            windings: self.windings.clone(),
            waypoints: self
                .waypoints
                .iter()
                .map(|w| w.iter().map(|i| i * factor).collect())
                .collect(),
        }
    }

    fn validate(&self, model: &Model) -> Result<Vec<usize>, FemError> {
        let bad = |reason: String| Err(FemError::InvalidPulse { reason });
        if self.windings.is_empty() {
            return bad("names no winding".into());
        }
        if self.waypoints.is_empty() {
            return bad("has no waypoint (no load step to solve)".into());
        }
        let mut index = Vec::new();
        for (k, name) in self.windings.iter().enumerate() {
            if self.windings[..k].contains(name) {
                return bad(format!("names winding `{name}` twice"));
            }
            match model.windings().iter().position(|w| &w.name == name) {
                Some(i) => index.push(i),
                None => {
                    return bad(format!(
                        "winding `{name}` is not in the model (windings: {})",
                        model
                            .windings()
                            .iter()
                            .map(|w| format!("`{}`", w.name))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ))
                }
            }
        }
        for (k, w) in self.waypoints.iter().enumerate() {
            if w.len() != self.windings.len() {
                return bad(format!(
                    "waypoint {} has {} currents for {} windings",
                    k + 1,
                    w.len(),
                    self.windings.len()
                ));
            }
            if let Some(i) = w.iter().find(|i| !i.is_finite()) {
                return bad(format!(
                    "waypoint {} has a non-finite current ({i} A)",
                    k + 1
                ));
            }
        }
        Ok(index)
    }
}

/// Which solutions a history keeps (every step's flux linkages and currents are kept).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum KeepSolutions {
    /// The solution at every waypoint (default).
    #[default]
    Waypoints,
    /// The solution at every load step.
    All,
    /// Only the last one.
    Last,
}

/// Settings of [`Solver::solve_history`].
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct HistorySettings {
    /// Newton settings of every load step.
    pub newton: NewtonSettings,
    /// Largest change of any winding current per load step, as a fraction of the pulse's
    /// peak current (default 0.1: at least ten steps from zero to the peak).
    pub max_step: f64,
    /// How many times a failed load step may be halved (default 6).
    pub max_cuts: usize,
    /// Which solutions to keep.
    pub keep: KeepSolutions,
}

impl Default for HistorySettings {
    fn default() -> Self {
        Self {
            newton: NewtonSettings::default(),
            max_step: 0.1,
            max_cuts: 6,
            keep: KeepSolutions::Waypoints,
        }
    }
}

/// One converged load step of a history.
#[derive(Clone, Debug)]
pub struct HistoryStep {
    /// The pulse's winding currents at this step (A), in the pulse's winding order.
    pub currents: Vec<f64>,
    /// The waypoint this step ends on (0-based), if it is one.
    pub waypoint: Option<usize>,
    /// Flux linkage of each pulse winding (Wb-turns per metre of depth planar, Wb-turns
    /// axisymmetric).
    pub flux_linkages: Vec<f64>,
    /// Newton iterations of this step.
    pub iterations: usize,
    /// Stored energy with the state committed after this step (J per metre of depth planar,
    /// J axisymmetric): see [`Solution::stored_energy`].
    pub stored_energy: f64,
    /// Hysteresis loss of this step, from the state committed before it to the one after
    /// (J per metre of depth planar, J axisymmetric): see [`Solution::hysteresis_loss`].
    pub loss: f64,
    /// The solution, when [`HistorySettings::keep`] asks for it. Its
    /// [`Solution::magnet_state`] is the state committed after this step.
    pub solution: Option<Solution>,
}

/// The result of a history: its steps and the committed state after the last one.
#[derive(Clone, Debug)]
pub struct HistoryRun {
    /// The pulse's windings.
    pub windings: Vec<String>,
    /// The converged load steps, in order.
    pub steps: Vec<HistoryStep>,
    /// The committed magnet state after the last converged step.
    pub state: MagnetState,
    /// The potential after the last converged step (a warm start for what follows).
    pub potential: Vec<f64>,
    /// Stack depth (m) of a planar model (`None` axisymmetric).
    pub depth_m: Option<f64>,
    /// Load steps that were halved after a failed Newton iteration.
    pub cuts: usize,
}

impl HistoryRun {
    /// Energy delivered by each winding over the history, the integral of i dpsi by the
    /// trapezoidal rule over the load steps (J per metre planar, J axisymmetric); the first
    /// step counts from the state the history started in, at the first waypoint's currents.
    pub fn source_energies(&self) -> Vec<f64> {
        self.source_energies_through(self.steps.len().saturating_sub(1))
    }

    /// [`HistoryRun::source_energies`] from the first step through step `last` (0-based; a
    /// later index counts to the end): what the windings delivered up to a waypoint.
    pub fn source_energies_through(&self, last: usize) -> Vec<f64> {
        let mut e = vec![0.0; self.windings.len()];
        let end = (last + 1).min(self.steps.len());
        for w in self.steps[..end].windows(2) {
            for (k, ek) in e.iter_mut().enumerate() {
                *ek += 0.5
                    * (w[0].currents[k] + w[1].currents[k])
                    * (w[1].flux_linkages[k] - w[0].flux_linkages[k]);
            }
        }
        e
    }

    /// Total energy delivered by all windings (J): per-metre values times the stack depth in
    /// planar models.
    pub fn total_source_energy(&self) -> f64 {
        self.source_energies().iter().sum::<f64>() * self.depth_m.unwrap_or(1.0)
    }

    /// Stored energy after each step (J): [`HistoryStep::stored_energy`] times the stack
    /// depth in planar models.
    pub fn stored_energy_j(&self) -> Vec<f64> {
        let depth = self.depth_m.unwrap_or(1.0);
        self.steps.iter().map(|s| s.stored_energy * depth).collect()
    }

    /// Hysteresis loss over the history (J, times the stack depth in planar models): the sum
    /// of [`HistoryStep::loss`] over the steps after the first, the same span as
    /// [`HistoryRun::source_energies`] (which counts from the first step's solution).
    pub fn loss_j(&self) -> f64 {
        let depth = self.depth_m.unwrap_or(1.0);
        self.steps.iter().skip(1).map(|s| s.loss).sum::<f64>() * depth
    }

    /// The energy balance of the history (J): what the windings supplied, the change of
    /// stored energy from the first step to the last, the hysteresis loss in between, and the
    /// residual supplied - change - loss. See [`EnergyBalance`].
    pub fn energy_balance(&self) -> EnergyBalance {
        let stored = self.stored_energy_j();
        let change = match (stored.first(), stored.last()) {
            (Some(a), Some(b)) => b - a,
            _ => 0.0,
        };
        let supplied = self.total_source_energy();
        let loss = self.loss_j();
        EnergyBalance {
            supplied_j: supplied,
            stored_change_j: change,
            loss_j: loss,
            residual_j: supplied - change - loss,
        }
    }

    /// Total Newton iterations over all steps.
    pub fn iterations(&self) -> usize {
        self.steps.iter().map(|s| s.iterations).sum()
    }

    /// The last kept solution.
    pub fn last_solution(&self) -> Option<&Solution> {
        self.steps.iter().rev().find_map(|s| s.solution.as_ref())
    }
}

/// The energy balance of a load history (J; planar values times the stack depth).
///
/// The supplied energy is the trapezoidal integral of i dpsi over the load steps, which for
/// the discrete equations equals the trapezoidal integral of H . dB over the domain; the
/// stored-energy change and the loss are exact for the path the material takes between the
/// converged fields (closed forms per quadrature point, see
/// [`HysteresisLaw::stored_energy_density`](crate::HysteresisLaw::stored_energy_density) and
/// [`HysteresisLaw::dissipation_density`](crate::HysteresisLaw::dissipation_density)). So the
/// residual is the trapezoidal rule's error, second order in the load step
/// ([`HistorySettings::max_step`]) where the fields vary smoothly, plus the Newton
/// tolerance; it is not a loss.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct EnergyBalance {
    /// Energy the windings supplied, the integral of i dpsi (J).
    pub supplied_j: f64,
    /// Stored energy after the last step minus after the first (J).
    pub stored_change_j: f64,
    /// Hysteresis loss of the magnets (J, never negative).
    pub loss_j: f64,
    /// supplied - stored change - loss (J).
    pub residual_j: f64,
}

/// A history that stopped at a load step that did not converge even after cutting it: what was
/// done up to there, and why it stopped.
#[derive(Clone, Debug)]
pub struct HistoryError {
    /// The converged steps, the last committed state and potential.
    pub completed: HistoryRun,
    /// The currents of the step that failed (A).
    pub failed_currents: Vec<f64>,
    /// The error of the last attempt.
    pub error: FemError,
}

impl std::fmt::Display for HistoryError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "load history stopped after {} converged steps, at currents {:?} A: {}",
            self.completed.steps.len(),
            self.failed_currents,
            self.error
        )
    }
}

impl std::error::Error for HistoryError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        Some(&self.error)
    }
}

/// The starting potential of a load step towards `target` currents: along a ramp that
/// continues in the same direction, the linear extrapolation of the last two converged
/// potentials (a secant predictor that saves Newton iterations); after a reversal, or at the
/// first steps, the last converged potential.
fn predict(
    previous: &Option<(Vec<f64>, Vec<f64>)>,
    from: Option<&[f64]>,
    a: &[f64],
    target: &[f64],
) -> Vec<f64> {
    let (Some((c0, a0)), Some(c1)) = (previous, from) else {
        return a.to_vec();
    };
    let d_old: Vec<f64> = c1.iter().zip(c0).map(|(x, y)| x - y).collect();
    let d_new: Vec<f64> = target.iter().zip(c1).map(|(x, y)| x - y).collect();
    let dot: f64 = d_old.iter().zip(&d_new).map(|(x, y)| x * y).sum();
    let n_old: f64 = d_old.iter().map(|x| x * x).sum();
    let n_new: f64 = d_new.iter().map(|x| x * x).sum();
    // Same direction (cosine above 0.999) only: a reversal changes the magnets' branch.
    if n_old == 0.0 || dot <= 0.0 || dot * dot < 0.998 * n_old * n_new {
        return a.to_vec();
    }
    let r = dot / n_old;
    a.iter().zip(a0).map(|(x, y)| x + r * (x - y)).collect()
}

impl Solver {
    /// Solves `model` through the load history `pulse`, starting from the committed `state`
    /// (e.g. [`MagnetState::initial`] or the state another history left). The pulse sets the
    /// currents of its windings; the model's other sources stay as they are.
    ///
    /// Each load step starts Newton from the previous step's potential and evaluates the
    /// magnets from the committed state; the state is committed only after the step converged.
    ///
    /// # Errors
    /// Set-up problems ([`FemError::InvalidPulse`] naming the winding or waypoint,
    /// [`FemError::IncompatibleState`], [`FemError::IncompatibleModel`]) come back as a
    /// [`HistoryError`] with no completed step; a step that fails after every cut returns the
    /// steps before it and the last committed state.
    pub fn solve_history(
        &self,
        model: &Model,
        state: &MagnetState,
        pulse: &Pulse,
        settings: &HistorySettings,
    ) -> Result<HistoryRun, Box<HistoryError>> {
        self.solve_history_from(model, state, None, pulse, settings)
    }

    /// [`Solver::solve_history`] with Newton's first load step started from `initial` (the
    /// potential of every node, e.g. the solution that left `state`, at the pulse's first
    /// currents), which saves re-solving a field that is already known; `None` starts from
    /// zero. The result does not depend on the start beyond the Newton tolerance.
    ///
    /// # Errors
    /// As [`Solver::solve_history`]; an `initial` of the wrong length is
    /// [`FemError::IncompatibleModel`], returned with no completed step.
    pub fn solve_history_from(
        &self,
        model: &Model,
        state: &MagnetState,
        initial: Option<&[f64]>,
        pulse: &Pulse,
        settings: &HistorySettings,
    ) -> Result<HistoryRun, Box<HistoryError>> {
        let depth_m = match model.formulation() {
            Formulation::Planar { depth_m } => Some(depth_m),
            Formulation::Axisymmetric => None,
        };
        let mut run = HistoryRun {
            windings: pulse.windings.clone(),
            steps: Vec::new(),
            state: state.clone(),
            potential: Vec::new(),
            depth_m,
            cuts: 0,
        };
        let setup_error = |run: HistoryRun, error: FemError| {
            Box::new(HistoryError {
                completed: run,
                failed_currents: Vec::new(),
                error,
            })
        };
        let index = match pulse.validate(model).and_then(|i| {
            state.check(model)?;
            if !(settings.max_step.is_finite() && settings.max_step > 0.0) {
                return Err(FemError::OutOfRange {
                    what: "history settings: max_step".into(),
                    value: settings.max_step,
                    reason: "must be positive and finite".into(),
                });
            }
            Ok(i)
        }) {
            Ok(i) => i,
            Err(e) => return Err(setup_error(run, e)),
        };
        let prepared = (|| {
            let (layout, factor) = self.prepare(model)?;
            // The model with the pulse's windings at zero current: its load, plus the
            // per-ampere nodal sources of each pulse winding.
            let mut base = model.clone();
            for name in &pulse.windings {
                base = base.with_winding_current(name, 0.0)?;
            }
            let rule = stiffness_rule(model.formulation(), model.order(), model.is_linear());
            let asm = Assembler {
                model: &base,
                layout: &layout,
                pattern: self.pattern(),
                rule,
                state: None,
            };
            let base_load = asm.load()?;
            let unit: Vec<Vec<f64>> = index
                .iter()
                .map(|&k| asm.nodal_source(&model.winding_density_per_ampere(k)))
                .collect();
            let unit_load: Vec<Vec<f64>> = unit
                .iter()
                .map(|u| {
                    let mut l = vec![0.0; layout.neq];
                    for (d, v) in u.iter().enumerate() {
                        let e = layout.dof_eq[d];
                        if e != crate::dof::FIXED {
                            l[e as usize] += layout.dof_sign[d] * v;
                        }
                    }
                    l
                })
                .collect();
            Ok::<_, FemError>((layout, factor, base, base_load, unit, unit_load))
        })();
        let (layout, mut factor, base, base_load, unit, unit_load) = match prepared {
            Ok(p) => p,
            Err(e) => return Err(setup_error(run, e)),
        };
        let mut a = match self.start_potential(&layout, initial) {
            Ok(a) => a,
            Err(e) => return Err(setup_error(run, e)),
        };

        // The load steps: every waypoint, and ramps cut by max_step.
        let peak = pulse.peak();
        let limit = settings.max_step * peak;
        let mut targets: Vec<(Vec<f64>, Option<usize>)> = Vec::new();
        for (k, w) in pulse.waypoints.iter().enumerate() {
            if k > 0 {
                let prev = &pulse.waypoints[k - 1];
                let change = w
                    .iter()
                    .zip(prev)
                    .fold(0.0_f64, |m, (x, y)| m.max((x - y).abs()));
                let n = if limit > 0.0 {
                    (change / limit).ceil().max(1.0) as usize
                } else {
                    1
                };
                for s in 1..n {
                    let f = s as f64 / n as f64;
                    targets.push((
                        prev.iter().zip(w).map(|(x, y)| x + f * (y - x)).collect(),
                        None,
                    ));
                }
            }
            targets.push((w.clone(), Some(k)));
        }

        let mut from: Option<Vec<f64>> = None;
        // The converged step before `from`, for the linear predictor along a ramp.
        let mut previous: Option<(Vec<f64>, Vec<f64>)> = None;
        let n_targets = targets.len();
        for (target_index, (target, waypoint)) in targets.into_iter().enumerate() {
            // Reach `target` from `from` (the last converged currents), halving on failure.
            let mut pending = vec![target.clone()];
            let mut depth = 0usize;
            while let Some(currents) = pending.pop() {
                let mut step_model = base.clone();
                let mut load = base_load.clone();
                let mut ok = Ok(());
                for (k, name) in pulse.windings.iter().enumerate() {
                    match step_model.with_winding_current(name, currents[k]) {
                        Ok(m) => step_model = m,
                        Err(e) => {
                            ok = Err(e);
                            break;
                        }
                    }
                    for (l, u) in load.iter_mut().zip(&unit_load[k]) {
                        *l += currents[k] * u;
                    }
                }
                let result = ok.and_then(|_| {
                    let step_model = Arc::new(step_model);
                    let mut trial = predict(&previous, from.as_deref(), &a, &currents);
                    self.step(
                        &step_model,
                        &layout,
                        &mut factor,
                        &load,
                        &mut trial,
                        &run.state,
                        &settings.newton,
                        1.0,
                    )
                    .map(|s| (s, trial))
                });
                match result {
                    Ok((solution, potential)) => {
                        previous = from.clone().map(|c| (c, a.clone()));
                        a = potential;
                        run.state = solution.magnet_state().clone();
                        let is_final = pending.is_empty();
                        let flux_linkages = unit
                            .iter()
                            .map(|u| u.iter().zip(&a).map(|(x, y)| x * y).sum())
                            .collect();
                        let keep = match settings.keep {
                            KeepSolutions::All => true,
                            KeepSolutions::Waypoints => is_final && waypoint.is_some(),
                            KeepSolutions::Last => is_final && target_index + 1 == n_targets,
                        };
                        run.steps.push(HistoryStep {
                            currents: currents.clone(),
                            waypoint: if is_final { waypoint } else { None },
                            flux_linkages,
                            iterations: solution.newton_report().iterations,
                            stored_energy: solution.stored_energy(),
                            loss: solution.hysteresis_loss(),
                            solution: keep.then_some(solution),
                        });
                        from = Some(currents);
                    }
                    Err(error) => {
                        let retry = matches!(error, FemError::NewtonFailed(_))
                            && depth < settings.max_cuts
                            && from.is_some();
                        if !retry {
                            run.potential = a;
                            return Err(Box::new(HistoryError {
                                completed: run,
                                failed_currents: currents,
                                error,
                            }));
                        }
                        depth += 1;
                        run.cuts += 1;
                        let start = from.as_ref().expect("checked above");
                        let mid: Vec<f64> = start
                            .iter()
                            .zip(&currents)
                            .map(|(x, y)| 0.5 * (x + y))
                            .collect();
                        pending.push(currents);
                        pending.push(mid);
                    }
                }
            }
        }
        run.potential = a;
        Ok(run)
    }
}
