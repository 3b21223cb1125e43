//! The switching study of a switchable permanent-magnet device: the coil pulses that flip the
//! low-coercivity magnet ON and OFF, what they leave behind, and the holding force in each
//! state.
//!
//! A device holds a high-coercivity magnet (the *guarded* magnet, NdFeB class) and a
//! low-coercivity one (the *switched* magnet, AlNiCo class) with a coil around it, both
//! hysteretic ([`coercive_fem::Material::Hysteretic`]). ON: both magnets drive flux through
//! the workpiece; OFF: the switched magnet is reversed and the flux closes inside the device.
//!
//! # What it computes
//! - The state after a pulse (0 A, ramp to the amplitude, back to 0 A) from a given state,
//!   with the workpiece in place or removed (the same mesh with the workpiece made air, so
//!   one [`MagnetState`] fits both): the switched magnet's mean polarisation, the energy the
//!   coil delivers, the peak field in the switched magnet and the guarded magnet's margin to
//!   its knee at the peak of the pulse ([`PulseOutcome`]).
//! - The smallest pulse that switches reliably, each way, by a search on the amplitude
//!   ([`Threshold`]): halving from the full pulse until one does not switch, then trisection
//!   of that bracket, two amplitudes at a time in parallel. Criterion: the switched magnet's
//!   mean polarisation along its easy axis moves at least
//!   [`SwitchingSettings::switched_fraction`] of the way from its start to where a full pulse
//!   ([`SwitchingSettings::full_pulse_a`]) takes it. The law is rate-independent, so the state
//!   on the rising current at amplitude a does not depend on where the rise stopped before:
//!   each search pulse continues the rise from the highest amplitude already solved below its
//!   own, in one load step, and falls back to zero in one (a load step that fails is halved
//!   by the solver). Within a step each quadrature point's field moves monotonically from
//!   the committed value to the new one, which is exact wherever the field changes
//!   monotonically over the step. On the pad of `meshes/switchable_pad.toml` the thresholds
//!   agree with searches whose pulses ramp in quarter-peak steps within 0.5 % (-1817 against
//!   -1818 A-turns OFF, 2191 against 2202 ON), inside the 1 % amplitude tolerance. The
//!   reported pulses keep the settings' load steps.
//! - The force on the workpiece after a pulse as a function of the pulse amplitude (partial
//!   switching: how designers set a reduced holding force; the pulses share one rising ramp,
//!   each then falls back to zero), and the holding force versus gap in the ON and OFF states
//!   the recommended pulses left, with the workpiece in place during the pulse and removed
//!   (then brought back), through the project's one force sweep
//!   ([`crate::study::force_sweep_with_states`]: each gap's meshes serve every state).
//!
//! # Limits
//! Magnetostatic: eddy currents in the conductive switched magnet and in the steel delay and
//! weaken a short pulse, so a real pulse needs more ampere-turns than computed here;
//! [`eddy_current_note`] gives the skin depth at the pulse's time scale to judge by how much.

use coercive_fem::{
    EnergyBalance, FemError, HistoryError, HistorySettings, KeepSolutions, MagnetState, Material,
    Model, Pulse, Solution, Solver, MU_0,
};
use coercive_mesh::{Mesh, Placement, RigidMesher};
use coercive_post::force::Body;
use coercive_post::{FieldProbe, MagnetWorkingPoint};
use std::sync::Mutex;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::study::{
    force_sweep_with_states, ForcePoint, ForceSweepSettings, StudyError, TranslationPoint,
};

/// Whether the workpiece is in place while a pulse is applied.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Workpiece {
    /// The workpiece sits at the pulse gap.
    Present,
    /// The workpiece is removed (its regions are air): switching into an open circuit.
    Removed,
}

/// The device: which parts move, which magnet switches, which is guarded, the coil.
#[derive(Clone, Debug, PartialEq)]
pub struct SwitchingSetup {
    /// The moving part (rigid group) holding both magnets, poles and coil.
    pub group: String,
    /// Unit vector along which the moving part moves to close the gap.
    pub direction: [f64; 2],
    /// The gap drawn in the geometry (m).
    pub drawn_gap_m: f64,
    /// The workpiece regions: the body whose holding force is reported, made air when
    /// [`Workpiece::Removed`].
    pub workpiece: Body,
    /// The moving part's regions (for the action-reaction check and the co-energy sign).
    pub group_body: Body,
    /// The coil's winding.
    pub coil: String,
    /// The low-coercivity magnet's region.
    pub switched_magnet: String,
    /// The high-coercivity magnet's region.
    pub guarded_magnet: String,
    /// The gap at which pulses are applied with the workpiece present, and at which the
    /// partial-switching forces are reported (m).
    pub pulse_gap_m: f64,
    /// The sign (+1 or -1) of the coil current that drives the switched magnet's field against
    /// its easy axis (the OFF direction when the device is ON with both magnets forward).
    pub off_current_sign: f64,
}

/// Settings of [`switching_study`].
#[derive(Clone, Debug, PartialEq)]
pub struct SwitchingSettings {
    /// Gaps of the ON and OFF force curves (m).
    pub gaps_m: Vec<f64>,
    /// A pulse amplitude (A per turn) that certainly switches fully: where the threshold
    /// search starts and the reference of the switched fraction.
    pub full_pulse_a: f64,
    /// Fraction of the full switch that counts as switched (default 0.95).
    pub switched_fraction: f64,
    /// Relative tolerance of the threshold amplitude (default 0.01).
    pub amplitude_tolerance: f64,
    /// The recommended pulse is this multiple of the threshold (default 1.25, a margin for
    /// supply and temperature spread: `common practice`).
    pub recommended_margin: f64,
    /// Number of amplitudes of the partial-switching curve (evenly up to 1.5 times the OFF
    /// threshold).
    pub partial_amplitudes: usize,
    /// Intended pulse duration (s), for the eddy-current note.
    pub pulse_duration_s: f64,
    /// Resistivity of the switched magnet (Ohm m), for the eddy-current note.
    pub switched_resistivity_ohm_m: f64,
    /// Load-step settings of every pulse.
    pub history: HistorySettings,
    /// The force sweep's settings (body, group, methods, co-energy steps); its `body`,
    /// `group` and `direction` are taken from the setup.
    pub sweep: ForceSweepSettings,
}

/// What one pulse did.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct PulseOutcome {
    /// The pulse's peak current per turn (A, signed).
    pub amplitude_a: f64,
    /// Its peak ampere-turns (A, signed).
    pub ampere_turns: f64,
    /// Whether the workpiece was in place.
    pub workpiece: Workpiece,
    /// The committed state after the pulse (current back at zero).
    #[serde(skip)]
    pub state: Option<MagnetState>,
    /// The potential after the pulse (the field of `state` at zero current), a warm start
    /// for what follows.
    #[serde(skip)]
    pub potential: Option<Vec<f64>>,
    /// Mean polarisation of the switched magnet along its easy axis after the pulse (T).
    pub switched_polarisation_t: f64,
    /// Mean polarisation of the guarded magnet along its easy axis after the pulse (T).
    pub guarded_polarisation_t: f64,
    /// Energy the coil delivered over the pulse, the integral of i dpsi (J, for the stack).
    pub supplied_energy_j: f64,
    /// Of the supplied energy, the change of stored magnetic energy from before the pulse
    /// to after it (J, for the stack; see `coercive::fem::HistoryRun::energy_balance`).
    pub stored_energy_change_j: f64,
    /// Of the supplied energy, the hysteresis loss in the magnets (J, for the stack, >= 0).
    pub hysteresis_loss_j: f64,
    /// supplied - stored change - loss (J): the load steps' quadrature error, not a loss.
    pub energy_balance_residual_j: f64,
    /// Largest |H| along the easy axis in the switched magnet at the pulse's peak (A/m).
    pub peak_switched_field_a_per_m: f64,
    /// The guarded magnet's smallest margin to its knee at the pulse's peak,
    /// 1 + min(H along the axis) / Hk: 1 with no reverse field, 0 at the knee, negative
    /// beyond it.
    pub guarded_knee_margin: f64,
    /// Volume fraction of the guarded magnet driven beyond its knee at the peak.
    pub guarded_beyond_knee_fraction: f64,
    /// Mean (H along the easy axis (A/m), B along it (T)) of the switched magnet at the
    /// pulse's peak and after it.
    pub switched_working_points: [(f64, f64); 2],
    /// The same for the guarded magnet.
    pub guarded_working_points: [(f64, f64); 2],
    /// Load steps and Newton iterations of the pulse.
    pub load_steps: usize,
    /// Newton iterations over all load steps.
    pub newton_iterations: usize,
}

/// The smallest reliable pulse one way.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct Threshold {
    /// `"ON to OFF"` or `"OFF to ON"`.
    pub direction: String,
    /// The threshold amplitude (A per turn, signed).
    pub amplitude_a: f64,
    /// The threshold ampere-turns (A, signed).
    pub ampere_turns: f64,
    /// Every amplitude tried (A) and the switched fraction it reached.
    pub evaluations: Vec<(f64, f64)>,
    /// The recommended pulse (threshold times the margin) and what it did.
    pub recommended: PulseOutcome,
}

/// One point of the partial-switching curve.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct PartialPoint {
    /// The OFF pulse's amplitude (A per turn, signed).
    pub amplitude_a: f64,
    /// Fraction of the full switch reached.
    pub switched_fraction: f64,
    /// What the pulse left.
    pub outcome: PulseOutcome,
    /// The holding force on the workpiece at the pulse gap afterwards.
    pub force: ForcePoint,
}

/// Everything [`switching_study`] computes.
#[derive(Clone, Debug, Serialize, Deserialize)]
pub struct SwitchingReport {
    /// ON to OFF threshold and recommended pulse (workpiece in place).
    pub on_to_off: Threshold,
    /// OFF to ON threshold and recommended pulse (workpiece in place).
    pub off_to_on: Threshold,
    /// The recommended pulses applied with the workpiece removed (ON to OFF, OFF to ON).
    pub removed: [PulseOutcome; 2],
    /// Holding force versus gap in the ON state the recommended ON pulse left.
    pub force_on: Vec<ForcePoint>,
    /// Holding force versus gap in the OFF state the recommended OFF pulse left.
    pub force_off: Vec<ForcePoint>,
    /// Holding force versus gap (the gaps of `force_on`) after the recommended pulses applied
    /// with the workpiece removed (ON, OFF), the workpiece then brought back.
    pub force_removed: [Vec<ForcePoint>; 2],
    /// Force after OFF pulses of growing amplitude from the ON state.
    pub partial: Vec<PartialPoint>,
    /// The eddy-current caution.
    pub eddy_current_note: String,
    /// Wall-clock seconds of each phase of the study (pulses, thresholds, force curves,
    /// partial switching, flux maps), in order: where the time went.
    pub timings: Vec<(String, f64)>,
    /// Major loops B(H) along the easy axis of the switched and the guarded magnet (A/m, T),
    /// descending then ascending branch, for the working-point charts.
    pub loops: [Vec<(f64, f64)>; 2],
    /// Flux maps (file name, SVG text) of the ON and OFF states at the pulse gap.
    #[serde(skip)]
    pub flux_maps: Vec<(String, String)>,
}

/// The load-step size (fraction of the peak current) of the full pulses that set the start
/// states (only the state they leave is used).
const FULL_PULSE_STEP: f64 = 1.0;

fn invalid(what: &str, reason: String) -> StudyError {
    StudyError::Invalid {
        what: what.into(),
        reason,
    }
}

fn solve_error(label: &str, source: FemError) -> StudyError {
    StudyError::Solve {
        index: 0,
        label: label.into(),
        source: Box::new(source),
    }
}

fn history_error(label: &str, e: Box<HistoryError>) -> StudyError {
    let steps = e.completed.steps.len();
    invalid(
        label,
        format!(
            "{} (after {steps} converged load steps, at {:?} A)",
            e.error, e.failed_currents
        ),
    )
}

/// The working point of `region` in `solution`.
fn working_point(solution: &Solution, region: &str) -> Result<MagnetWorkingPoint, StudyError> {
    FieldProbe::new(solution)
        .magnet_working_points()
        .rows
        .into_iter()
        .find(|r| r.region == region)
        .ok_or_else(|| {
            invalid(
                "switching study",
                format!("region `{region}` is not a magnet of the model"),
            )
        })
}

/// The rise of the coil current from one committed state: the states (and fields) reached at
/// the amplitudes solved so far. The law is rate-independent, so the state at amplitude a on
/// the rise does not depend on where the rise stopped before; every search pulse continues the
/// rise from the highest amplitude already solved below its own.
struct Rise {
    /// Sign of the current.
    sign: f64,
    /// The committed state before the pulse and its field at zero current.
    start: MagnetState,
    start_potential: Option<Vec<f64>>,
    /// Every amplitude reached.
    cache: Mutex<Vec<Reached>>,
}

/// (magnitude (A), committed state, potential) at an amplitude reached on a [`Rise`].
type Reached = (f64, MagnetState, Option<Vec<f64>>);

/// The shared context of one study: meshes, models and the solver at the pulse gap.
struct Context<'a, B> {
    rigid: &'a RigidMesher,
    build: &'a B,
    setup: &'a SwitchingSetup,
    settings: &'a SwitchingSettings,
    present: Model,
    removed: Model,
    solver: Solver,
    turns: f64,
    depth_m: f64,
}

impl<B> Context<'_, B>
where
    B: Fn(Mesh, Workpiece) -> Result<Model, FemError> + Sync,
{
    fn model(&self, workpiece: Workpiece) -> &Model {
        match workpiece {
            Workpiece::Present => &self.present,
            Workpiece::Removed => &self.removed,
        }
    }

    /// Applies a single pulse of `amplitude_a` from `state` (whose field at zero current is
    /// `potential`, when known: a warm start) with the load steps of the settings.
    fn pulse(
        &self,
        state: &MagnetState,
        potential: Option<&[f64]>,
        amplitude_a: f64,
        workpiece: Workpiece,
    ) -> Result<PulseOutcome, StudyError> {
        let step = self.settings.history.max_step;
        self.pulse_stepped(state, potential, amplitude_a, workpiece, step)
    }

    /// [`Context::pulse`] with load steps of at most `max_step` times the amplitude.
    fn pulse_stepped(
        &self,
        state: &MagnetState,
        potential: Option<&[f64]>,
        amplitude_a: f64,
        workpiece: Workpiece,
        max_step: f64,
    ) -> Result<PulseOutcome, StudyError> {
        let label = format!("pulse of {amplitude_a:.4} A");
        let settings = HistorySettings {
            keep: KeepSolutions::Waypoints,
            max_step,
            ..self.settings.history
        };
        let run = self
            .solver
            .solve_history_from(
                self.model(workpiece),
                state,
                potential,
                &Pulse::single(&self.setup.coil, amplitude_a),
                &settings,
            )
            .map_err(|e| history_error(&label, e))?;
        let peak = run
            .steps
            .iter()
            .find(|s| s.waypoint == Some(1))
            .and_then(|s| s.solution.as_ref())
            .ok_or_else(|| invalid(&label, "no solution at the pulse's peak".into()))?;
        let last = run
            .last_solution()
            .ok_or_else(|| invalid(&label, "no solution after the pulse".into()))?;
        self.outcome(
            amplitude_a,
            workpiece,
            peak,
            last,
            run.energy_balance(),
            (run.steps.len(), run.iterations()),
        )
    }

    /// What a pulse did, from its solutions at the peak and after it.
    fn outcome(
        &self,
        amplitude_a: f64,
        workpiece: Workpiece,
        peak: &Solution,
        last: &Solution,
        energy: EnergyBalance,
        (load_steps, newton_iterations): (usize, usize),
    ) -> Result<PulseOutcome, StudyError> {
        let switched_peak = working_point(peak, &self.setup.switched_magnet)?;
        let guarded_peak = working_point(peak, &self.setup.guarded_magnet)?;
        let switched_end = working_point(last, &self.setup.switched_magnet)?;
        let guarded_end = working_point(last, &self.setup.guarded_magnet)?;
        let margin = guarded_peak
            .knee_field_a_per_m
            .map(|k| 1.0 + guarded_peak.min_field_strength_a_per_m / k)
            .unwrap_or(f64::NAN);
        Ok(PulseOutcome {
            amplitude_a,
            ampere_turns: amplitude_a * self.turns,
            workpiece,
            state: Some(last.magnet_state().clone()),
            potential: Some(last.potential().to_vec()),
            switched_polarisation_t: switched_end.mean_polarisation_t,
            guarded_polarisation_t: guarded_end.mean_polarisation_t,
            supplied_energy_j: energy.supplied_j,
            stored_energy_change_j: energy.stored_change_j,
            hysteresis_loss_j: energy.loss_j,
            energy_balance_residual_j: energy.residual_j,
            peak_switched_field_a_per_m: switched_peak
                .min_field_strength_a_per_m
                .abs()
                .max(switched_peak.max_field_strength_a_per_m.abs()),
            guarded_knee_margin: margin,
            guarded_beyond_knee_fraction: guarded_peak.beyond_knee_fraction,
            switched_working_points: [
                (
                    switched_peak.mean_field_strength_a_per_m,
                    switched_peak.mean_flux_density_t,
                ),
                (
                    switched_end.mean_field_strength_a_per_m,
                    switched_end.mean_flux_density_t,
                ),
            ],
            guarded_working_points: [
                (
                    guarded_peak.mean_field_strength_a_per_m,
                    guarded_peak.mean_flux_density_t,
                ),
                (
                    guarded_end.mean_field_strength_a_per_m,
                    guarded_end.mean_flux_density_t,
                ),
            ],
            load_steps,
            newton_iterations,
        })
    }

    /// The switched magnet's mean polarisation (T) after a search pulse of magnitude
    /// `magnitude` (A, with the rise's sign) and the state it leaves: the rise continued
    /// from the highest amplitude already reached below `magnitude` in one load step
    /// (halved by the solver when Newton fails), then the fall to zero in one load step.
    /// Only the state left matters here: the law is rate-independent, so at every
    /// quadrature point whose field changes monotonically within a step the result does not
    /// depend on how the step is cut (the reported pulses keep the fine steps of the
    /// settings, which the supplied energy, a trapezoidal sum, needs).
    fn search_pulse(&self, rise: &Rise, magnitude: f64) -> Result<(f64, MagnetState), StudyError> {
        let label = format!("pulse of {:.4} A", rise.sign * magnitude);
        let coarse = HistorySettings {
            keep: KeepSolutions::Last,
            max_step: 1.0,
            ..self.settings.history
        };
        let below = {
            let cache = rise.cache.lock().unwrap_or_else(|p| p.into_inner());
            cache
                .iter()
                .filter(|c| c.0 <= magnitude)
                .max_by(|a, b| a.0.total_cmp(&b.0))
                .cloned()
        };
        let (from, state, potential) =
            below.unwrap_or_else(|| (0.0, rise.start.clone(), rise.start_potential.clone()));
        let (state, potential) = if from < magnitude {
            let up = Pulse::new(&[self.setup.coil.as_str()])
                .then(&[rise.sign * from])
                .then(&[rise.sign * magnitude]);
            let run = self
                .solver
                .solve_history_from(&self.present, &state, potential.as_deref(), &up, &coarse)
                .map_err(|e| history_error(&label, e))?;
            let reached = (magnitude, run.state.clone(), Some(run.potential.clone()));
            rise.cache
                .lock()
                .unwrap_or_else(|p| p.into_inner())
                .push(reached);
            (run.state, Some(run.potential))
        } else {
            (state, potential)
        };
        let down = Pulse::new(&[self.setup.coil.as_str()])
            .then(&[rise.sign * magnitude])
            .then(&[0.0]);
        let run = self
            .solver
            .solve_history_from(&self.present, &state, potential.as_deref(), &down, &coarse)
            .map_err(|e| history_error(&label, e))?;
        let last = run
            .last_solution()
            .ok_or_else(|| invalid(&label, "no solution after the pulse".into()))?;
        let polarisation = working_point(last, &self.setup.switched_magnet)?.mean_polarisation_t;
        Ok((polarisation, run.state))
    }

    /// The smallest amplitude (of sign `sign`) that moves the switched magnet's polarisation
    /// `switched_fraction` of the way from `start` to where the full pulse takes it:
    /// bracketed by halving the amplitude from the full pulse, then narrowed by trisection,
    /// two amplitudes at a time in parallel, every pulse rising from the highest amplitude
    /// already solved below it (see [`Context::search_pulse`]).
    fn threshold(
        &self,
        direction: &str,
        start: &PulseOutcome,
        full: &PulseOutcome,
        sign: f64,
    ) -> Result<Threshold, StudyError> {
        let s = self.settings;
        let start_polarisation = start.switched_polarisation_t;
        let span = full.switched_polarisation_t - start_polarisation;
        if span.abs() < 1e-3 {
            return Err(invalid(
                direction,
                format!(
                    "the full pulse ({:.1} A) changed the switched magnet's polarisation by only \
                     {span:.2e} T: check the coil, `off_current_sign` and `full_pulse_a`",
                    full.amplitude_a
                ),
            ));
        }
        let start_state = start
            .state
            .clone()
            .ok_or_else(|| invalid(direction, "the start state is missing".into()))?;
        let rise = Rise {
            sign,
            start: start_state.clone(),
            start_potential: start.potential.clone(),
            cache: Mutex::new(Vec::new()),
        };
        let fraction = |p: f64| (p - start_polarisation) / span;
        let mut evaluations = vec![(full.amplitude_a, fraction(full.switched_polarisation_t))];
        let mut pair = |m1: f64, m2: f64| -> Result<(f64, f64), StudyError> {
            let (o1, o2) = rayon::join(
                || self.search_pulse(&rise, m1),
                || self.search_pulse(&rise, m2),
            );
            let (f1, f2) = (fraction(o1?.0), fraction(o2?.0));
            evaluations.push((sign * m1, f1));
            evaluations.push((sign * m2, f2));
            Ok((f1, f2))
        };
        // Bracket: halve from the full pulse, two amplitudes per round, until one does not
        // switch (at most 20 halvings: below full / 2^20 the threshold is zero for the
        // tolerance).
        let (mut lo, mut hi) = (0.0, s.full_pulse_a.abs());
        for _ in 0..10 {
            if (hi - lo) <= s.amplitude_tolerance * hi {
                break;
            }
            let (m1, m2) = (0.5 * hi, 0.25 * hi);
            let (f1, f2) = pair(m1, m2)?;
            if f1 < s.switched_fraction {
                lo = m1;
                break;
            }
            if f2 < s.switched_fraction {
                (lo, hi) = (m2, m1);
                break;
            }
            hi = m2;
        }
        // Trisection of the bracket.
        while (hi - lo) > s.amplitude_tolerance * hi {
            let (m1, m2) = (lo + (hi - lo) / 3.0, lo + 2.0 * (hi - lo) / 3.0);
            let (f1, f2) = pair(m1, m2)?;
            if f1 >= s.switched_fraction {
                hi = m1;
            } else if f2 >= s.switched_fraction {
                (lo, hi) = (m1, m2);
            } else {
                lo = m2;
            }
        }
        let amplitude_a = sign * hi;
        let recommended = self.pulse(
            &start_state,
            start.potential.as_deref(),
            amplitude_a * s.recommended_margin,
            Workpiece::Present,
        )?;
        Ok(Threshold {
            direction: direction.into(),
            amplitude_a,
            ampere_turns: amplitude_a * self.turns,
            evaluations,
            recommended,
        })
    }

    /// The force sweep at `gaps` in each of `states` (workpiece present): outer index state,
    /// inner gap.
    fn forces(
        &self,
        states: &[&MagnetState],
        gaps: &[f64],
    ) -> Result<Vec<Vec<ForcePoint>>, StudyError> {
        let d = self.setup.direction;
        let points: Vec<TranslationPoint> = gaps
            .iter()
            .map(|&g| {
                let shift = self.setup.drawn_gap_m - g;
                TranslationPoint {
                    label: format!("gap {:.4} mm", g * 1e3),
                    parameter: g,
                    offset: [shift * d[0], shift * d[1]],
                }
            })
            .collect();
        let mut sweep = self.settings.sweep.clone();
        sweep.group.clone_from(&self.setup.group);
        sweep.direction = d;
        sweep.body = self.setup.workpiece.clone();
        sweep.group_body = self.setup.group_body.clone();
        force_sweep_with_states(self.rigid, &points, &sweep, states, |mesh| {
            (self.build)(mesh, Workpiece::Present)
        })
    }

    /// OFF pulses of growing magnitude `amplitudes` (one sign, increasing) from `state`, with
    /// the workpiece in place: one rise through every amplitude with the load steps of the
    /// settings, then each fall back to zero from its amplitude, in parallel. The same steps
    /// as separate pulses, without solving the shared rise again.
    fn pulse_family(
        &self,
        state: &MagnetState,
        potential: Option<&[f64]>,
        amplitudes: &[f64],
    ) -> Result<Vec<PulseOutcome>, StudyError> {
        let Some(top) = amplitudes.last().map(|a| a.abs()) else {
            return Ok(Vec::new());
        };
        let coil = self.setup.coil.as_str();
        let label = format!("rise to {:.4} A", amplitudes[amplitudes.len() - 1]);
        let mut rise = Pulse::new(&[coil]).then(&[0.0]);
        for a in amplitudes {
            rise = rise.then(&[*a]);
        }
        let history = self.settings.history;
        let settings = HistorySettings {
            keep: KeepSolutions::Waypoints,
            ..history
        };
        let run = self
            .solver
            .solve_history_from(&self.present, state, potential, &rise, &settings)
            .map_err(|e| history_error(&label, e))?;
        amplitudes
            .par_iter()
            .enumerate()
            .map(|(k, &a)| {
                let label = format!("pulse of {a:.4} A");
                let at = run
                    .steps
                    .iter()
                    .position(|s| s.waypoint == Some(k + 1))
                    .ok_or_else(|| invalid(&label, "no load step at its peak".into()))?;
                let peak = run.steps[at]
                    .solution
                    .as_ref()
                    .ok_or_else(|| invalid(&label, "no solution at its peak".into()))?;
                let rise_energy = run.source_energies_through(at)[0];
                let rise_iterations: usize = run.steps[..=at].iter().map(|s| s.iterations).sum();
                // The fall keeps the rise's step length (a fraction of the top amplitude).
                let fall = HistorySettings {
                    keep: KeepSolutions::Last,
                    max_step: (history.max_step * top / a.abs()).min(1.0),
                    ..history
                };
                let down = Pulse::new(&[coil]).then(&[a]).then(&[0.0]);
                let fallen = self
                    .solver
                    .solve_history_from(
                        &self.present,
                        peak.magnet_state(),
                        Some(peak.potential()),
                        &down,
                        &fall,
                    )
                    .map_err(|e| history_error(&label, e))?;
                let last = fallen
                    .last_solution()
                    .ok_or_else(|| invalid(&label, "no solution after the pulse".into()))?;
                // The rise up to this peak, then the fall: energies add up.
                let rise_steps = &run.steps[..=at];
                let depth = self.depth_m;
                let fall_energy = fallen.energy_balance();
                let supplied = rise_energy * depth + fall_energy.supplied_j;
                let stored_change = (rise_steps[at].stored_energy - rise_steps[0].stored_energy)
                    * depth
                    + fall_energy.stored_change_j;
                let loss = rise_steps[1..].iter().map(|s| s.loss).sum::<f64>() * depth
                    + fall_energy.loss_j;
                let energy = EnergyBalance {
                    supplied_j: supplied,
                    stored_change_j: stored_change,
                    loss_j: loss,
                    residual_j: supplied - stored_change - loss,
                };
                self.outcome(
                    a,
                    Workpiece::Present,
                    peak,
                    last,
                    energy,
                    (
                        at + 1 + fallen.steps.len(),
                        rise_iterations + fallen.iterations(),
                    ),
                )
            })
            .collect()
    }
}

/// The skin depth (m) of a conductor of resistivity `rho` (Ohm m) and relative permeability
/// `mu_r` for a pulse of duration `tau` (s): the classical skin depth sqrt(2 rho / (omega mu))
/// (e.g. Jackson, Classical Electrodynamics, 3rd ed., sec. 8.1) at the frequency
/// f = 1 / (pi tau) of a pulse of that duration, i.e. sqrt(rho tau / (mu_0 mu_r)).
pub fn skin_depth_m(rho: f64, mu_r: f64, tau: f64) -> f64 {
    (rho * tau / (MU_0 * mu_r)).sqrt()
}

/// The caution printed with every switching result: the model is magnetostatic.
pub fn eddy_current_note(rho: f64, tau: f64) -> String {
    format!(
        "Magnetostatic model: eddy currents in the switched magnet (resistivity {:.2} uOhm m) \
         and in the steel are neglected. For a {:.3} ms pulse the skin depth is {:.1} mm at a \
         relative permeability of 5 and {:.1} mm at 20; where that is not well above the \
         magnet's smallest dimension, the real pulse needs more ampere-turns (and energy) than \
         computed here. Verify on hardware.",
        rho * 1e6,
        tau * 1e3,
        skin_depth_m(rho, 5.0, tau) * 1e3,
        skin_depth_m(rho, 20.0, tau) * 1e3
    )
}

/// Runs the switching study: the device is meshed once at the pulse gap (`rigid` moves the
/// setup's group), `build` makes the model of a mesh with the workpiece present or removed
/// (same regions, the workpiece's material air when removed); both magnets must be
/// hysteretic and start forward (the ON state as magnetised).
///
/// Steps: a full OFF pulse from the as-magnetised state, a full ON pulse back (the reference
/// ON state); the OFF and ON thresholds by a search on the amplitude from those states; the recommended
/// pulses (threshold times the margin) with the workpiece present and removed; the holding
/// force versus gap in the ON and OFF states they leave; the partial-switching curve.
///
/// # Errors
/// [`StudyError::Invalid`] for bad settings (naming them), a full pulse that does not
/// switch, or a failed pulse (with the converged steps counted); meshing and solving errors
/// of the force sweeps.
pub fn switching_study<B>(
    rigid: &RigidMesher,
    setup: &SwitchingSetup,
    settings: &SwitchingSettings,
    build: B,
) -> Result<SwitchingReport, StudyError>
where
    B: Fn(Mesh, Workpiece) -> Result<Model, FemError> + Sync,
{
    check(setup, settings)?;
    let d = setup.direction;
    let shift = setup.drawn_gap_m - setup.pulse_gap_m;
    let mesh = rigid
        .mesh_at(&[(
            setup.group.as_str(),
            Placement::translation(shift * d[0], shift * d[1]),
        )])
        .map_err(|source| StudyError::Mesh {
            index: 0,
            label: "pulse gap".into(),
            source,
        })?;
    let present = build(mesh.clone(), Workpiece::Present).map_err(|e| solve_error("model", e))?;
    let removed = build(mesh, Workpiece::Removed).map_err(|e| solve_error("model", e))?;
    for region in [&setup.switched_magnet, &setup.guarded_magnet] {
        let r = present.mesh().region_by_name(region).ok_or_else(|| {
            invalid(
                "switching study",
                format!("no region `{region}` in the mesh"),
            )
        })?;
        if !matches!(present.material(r), Material::Hysteretic(_)) {
            return Err(invalid(
                "switching study",
                format!("the magnet `{region}` must be hysteretic"),
            ));
        }
    }
    let turns = present
        .windings()
        .iter()
        .find(|w| w.name == setup.coil)
        .map(|w| w.turns)
        .ok_or_else(|| {
            invalid(
                "switching study",
                format!("no winding `{}` in the model", setup.coil),
            )
        })?;
    let depth_m = match present.formulation() {
        coercive_fem::Formulation::Planar { depth_m } => depth_m,
        coercive_fem::Formulation::Axisymmetric => 1.0,
    };
    let solver = Solver::new(&present).map_err(|e| solve_error("solver", e))?;
    let ctx = Context {
        rigid,
        build: &build,
        setup,
        settings,
        present,
        removed,
        solver,
        turns,
        depth_m,
    };
    let off = setup.off_current_sign;
    let full = settings.full_pulse_a.abs();
    let clock = std::time::Instant::now();
    let mut timings: Vec<(String, f64)> = Vec::new();
    let mut lap = |phase: &str| {
        let total: f64 = timings.iter().map(|t| t.1).sum();
        timings.push((phase.to_string(), clock.elapsed().as_secs_f64() - total));
    };
    let magnetised = MagnetState::initial(&ctx.present);
    let full_pulse = |from: &PulseOutcome, amplitude: f64| {
        let state = from.state.clone().unwrap_or_else(|| magnetised.clone());
        ctx.pulse_stepped(
            &state,
            from.potential.as_deref(),
            amplitude,
            Workpiece::Present,
            settings.history.max_step.max(FULL_PULSE_STEP),
        )
    };
    let first_off = ctx.pulse_stepped(
        &magnetised,
        None,
        off * full,
        Workpiece::Present,
        settings.history.max_step.max(FULL_PULSE_STEP),
    )?;
    if first_off.switched_polarisation_t >= 0.0 {
        return Err(invalid(
            "off_current_sign",
            format!(
                "a full pulse of {:.1} A left `{}` magnetised along its easy axis (mean \
                 polarisation {:+.3} T): this current sign drives it forward; the OFF sign is \
                 {:+}",
                off * full,
                setup.switched_magnet,
                first_off.switched_polarisation_t,
                -off
            ),
        ));
    }
    let on_full_outcome = full_pulse(&first_off, -off * full)?;
    let off_full_outcome = full_pulse(&on_full_outcome, off * full)?;
    let on_full = on_full_outcome
        .state
        .clone()
        .unwrap_or_else(|| magnetised.clone());
    let off_full = first_off
        .state
        .clone()
        .unwrap_or_else(|| magnetised.clone());
    lap("full pulses");
    // The thresholds, each pulse from the same committed state.
    let on_to_off = ctx.threshold("ON to OFF", &on_full_outcome, &off_full_outcome, off)?;
    let off_to_on = ctx.threshold("OFF to ON", &first_off, &on_full_outcome, -off)?;
    lap("thresholds and recommended pulses");
    let on_state = off_to_on
        .recommended
        .state
        .clone()
        .unwrap_or(on_full.clone());
    let off_state = on_to_off
        .recommended
        .state
        .clone()
        .unwrap_or(off_full.clone());
    let removed = [
        ctx.pulse(
            &on_full,
            on_full_outcome.potential.as_deref(),
            on_to_off.recommended.amplitude_a,
            Workpiece::Removed,
        )?,
        ctx.pulse(
            &off_full,
            first_off.potential.as_deref(),
            off_to_on.recommended.amplitude_a,
            Workpiece::Removed,
        )?,
    ];
    lap("pulses with the workpiece removed");
    // Partial switching: OFF pulses of growing amplitude from the ON state.
    let n = settings.partial_amplitudes;
    let top = 1.5 * on_to_off.amplitude_a.abs();
    let span = off_full_outcome.switched_polarisation_t - on_full_outcome.switched_polarisation_t;
    let amplitudes: Vec<f64> = (1..=n).map(|k| off * top * k as f64 / n as f64).collect();
    let partial_outcomes =
        ctx.pulse_family(&on_full, on_full_outcome.potential.as_deref(), &amplitudes)?;
    lap("partial switching pulses");
    // Holding force versus gap in the states the recommended pulses left, with the workpiece
    // in place during the pulse and removed (then brought back).
    let removed_on = removed[1].state.as_ref().unwrap_or(&on_state);
    let removed_off = removed[0].state.as_ref().unwrap_or(&off_state);
    // Alike states in sequence (each warm-starts the next): OFF, OFF pulsed without the
    // workpiece, ON pulsed without it (the open-circuit ON pulse leaves the switched magnet
    // partly reversed), ON.
    let mut curves = ctx
        .forces(
            &[&off_state, removed_off, removed_on, &on_state],
            &settings.gaps_m,
        )?
        .into_iter();
    let mut next_curve = || curves.next().unwrap_or_default();
    let force_off = next_curve();
    let force_removed_off = next_curve();
    let force_removed_on = next_curve();
    let force_on = next_curve();
    let force_removed = [force_removed_on, force_removed_off];
    lap("force curves");
    // The force after each partial pulse at the pulse gap, in two halves in parallel.
    let partial_states: Vec<&MagnetState> = partial_outcomes
        .iter()
        .map(|o| o.state.as_ref().unwrap_or(&on_full))
        .collect();
    let half = partial_states.len().div_ceil(2).max(1);
    let partial_forces: Vec<ForcePoint> = partial_states
        .par_chunks(half)
        .map(|chunk| ctx.forces(chunk, &[setup.pulse_gap_m]))
        .collect::<Result<Vec<_>, StudyError>>()?
        .into_iter()
        .flatten()
        .flatten()
        .collect();
    let partial = partial_outcomes
        .into_iter()
        .zip(partial_forces)
        .map(|(outcome, force)| PartialPoint {
            amplitude_a: outcome.amplitude_a,
            switched_fraction: (outcome.switched_polarisation_t
                - on_full_outcome.switched_polarisation_t)
                / span,
            outcome,
            force,
        })
        .collect();
    lap("partial switching forces");
    let loops = [
        major_loop(&ctx.present, &setup.switched_magnet),
        major_loop(&ctx.present, &setup.guarded_magnet),
    ];
    let mut flux_maps = Vec::new();
    for (name, state, label) in [
        ("switching_flux_on.svg", &on_state, "ON"),
        ("switching_flux_off.svg", &off_state, "OFF"),
    ] {
        let solution = ctx
            .solver
            .solve_with_state(&ctx.present, state, None, &ctx.settings.history.newton)
            .map_err(|e| solve_error(label, e))?;
        flux_maps.push((name.to_string(), flux_map(&solution, label)?));
    }
    lap("flux maps");
    Ok(SwitchingReport {
        loops,
        flux_maps,
        on_to_off,
        off_to_on,
        removed,
        force_on,
        force_off,
        force_removed,
        partial,
        eddy_current_note: eddy_current_note(
            settings.switched_resistivity_ohm_m,
            settings.pulse_duration_s,
        ),
        timings,
    })
}

/// The major loop B(H) along the easy axis of the hysteretic magnet in `region`: the
/// descending branch from +3 Hc to -3 Hc, then the ascending one back (200 points each).
fn major_loop(model: &Model, region: &str) -> Vec<(f64, f64)> {
    let Some(Material::Hysteretic(m)) = model
        .mesh()
        .region_by_name(region)
        .map(|r| model.material(r))
    else {
        return Vec::new();
    };
    let span = 3.0 * m.law.coercive_field.abs().max(m.law.width.abs());
    let mut out = Vec::with_capacity(402);
    for (ascending, sign) in [(false, -1.0), (true, 1.0)] {
        for k in 0..=200 {
            let h = -sign * span + sign * 2.0 * span * k as f64 / 200.0;
            out.push((h, MU_0 * h + m.law.major_branch(h, ascending)));
        }
    }
    out
}

/// |B| and flux lines of `solution` over the whole mesh.
fn flux_map(solution: &Solution, label: &str) -> Result<String, StudyError> {
    use coercive_post::plot::{field_map_svg, FieldMapOptions};
    let mesh = solution.model().mesh().clone();
    let nv = mesh.vertices().len();
    let cells: Vec<f64> = (0..mesh.triangles().len())
        .map(|t| {
            let b = solution.flux_density_at_quadrature(coercive_mesh::TriangleId(t as u32));
            b.iter().map(|b| b[0].hypot(b[1])).sum::<f64>() / b.len() as f64
        })
        .collect();
    field_map_svg(
        &mesh,
        &solution.potential()[..nv],
        &cells,
        &FieldMapOptions {
            title: format!("{label} state at the pulse gap: |B| and flux lines"),
            flux_lines: 40,
            value_range: Some((0.0, 2.2)),
            ..FieldMapOptions::default()
        },
    )
    .map_err(|e| invalid("flux map", e.to_string()))
}

fn check(setup: &SwitchingSetup, settings: &SwitchingSettings) -> Result<(), StudyError> {
    let positive = |what: &str, v: f64| {
        if v.is_finite() && v > 0.0 {
            Ok(())
        } else {
            Err(invalid(
                what,
                format!("must be positive and finite, got {v}"),
            ))
        }
    };
    positive("full_pulse_a (A)", settings.full_pulse_a.abs())?;
    positive("amplitude_tolerance", settings.amplitude_tolerance)?;
    positive("recommended_margin", settings.recommended_margin)?;
    positive("pulse_duration_s (s)", settings.pulse_duration_s)?;
    positive(
        "switched_resistivity_ohm_m (Ohm m)",
        settings.switched_resistivity_ohm_m,
    )?;
    positive("pulse_gap_m (m)", setup.pulse_gap_m)?;
    if !(settings.switched_fraction > 0.0 && settings.switched_fraction < 1.0) {
        return Err(invalid(
            "switched_fraction",
            format!("must lie in (0, 1), got {}", settings.switched_fraction),
        ));
    }
    if settings.amplitude_tolerance >= 0.5 {
        return Err(invalid(
            "amplitude_tolerance",
            format!("must be below 0.5, got {}", settings.amplitude_tolerance),
        ));
    }
    if setup.off_current_sign.abs() != 1.0 {
        return Err(invalid(
            "off_current_sign",
            format!("must be +1 or -1, got {}", setup.off_current_sign),
        ));
    }
    if settings.partial_amplitudes == 0 {
        return Err(invalid(
            "partial_amplitudes",
            "at least one amplitude".into(),
        ));
    }
    if let Some(g) = settings
        .gaps_m
        .iter()
        .find(|g| !(g.is_finite() && **g > 0.0))
    {
        return Err(invalid(
            "gaps_m (m)",
            format!("gaps must be positive, got {g}"),
        ));
    }
    Ok(())
}

/// Runs the `[switching]` section of `case`: the moving part and workpiece from the section,
/// the model of every mesh from the case's own sections (the workpiece made air for the
/// pulses with the workpiece removed), both magnets hysteretic.
///
/// # Errors
/// [`StudyError::Invalid`] when the case has no `[switching]` section or its set-up does not
/// fit the study, and the study's own errors.
pub fn run_case(case: &crate::case::Case) -> Result<SwitchingReport, StudyError> {
    let sw = case
        .switching()
        .ok_or_else(|| invalid("case", "it has no [switching] section".into()))?;
    let (geometry, rigid, drawn) =
        crate::solve::moving_parts(case).map_err(|e| invalid("case geometry", e.to_string()))?;
    let group_regions: Vec<String> = geometry
        .rigid_groups
        .iter()
        .find(|g| g.name == sw.moving_part)
        .map(|g| g.regions.clone())
        .unwrap_or_default();
    let workpiece = Body::new(&sw.workpiece);
    let group_body = Body::new(&group_regions);
    let extent = crate::solve::mesh_extent(&drawn);
    let resistivity = crate::solve::resistivity_of(case, &sw.switched_magnet).ok_or_else(|| {
        invalid(
            "switched_magnet",
            format!(
                "the material of `{}` must be a hysteretic magnet preset (its \
                         resistivity is needed for the eddy-current note)",
                sw.switched_magnet
            ),
        )
    })?;
    let settings = SwitchingSettings {
        gaps_m: sw.gaps_m.clone(),
        full_pulse_a: sw.full_pulse_a,
        switched_fraction: sw.switched_fraction,
        amplitude_tolerance: sw.amplitude_tolerance,
        recommended_margin: sw.recommended_margin,
        partial_amplitudes: sw.partial_amplitudes,
        pulse_duration_s: sw.pulse_duration_s,
        switched_resistivity_ohm_m: resistivity,
        history: HistorySettings {
            max_step: sw.max_step,
            ..HistorySettings::default()
        },
        sweep: crate::solve::sweep_settings(
            &sw.moving_part,
            sw.direction,
            workpiece.clone(),
            group_body.clone(),
            extent,
            true,
        ),
    };
    let setup = SwitchingSetup {
        group: sw.moving_part.clone(),
        direction: sw.direction,
        drawn_gap_m: sw.drawn_gap_m,
        workpiece,
        group_body,
        coil: sw.coil.clone(),
        switched_magnet: sw.switched_magnet.clone(),
        guarded_magnet: sw.guarded_magnet.clone(),
        pulse_gap_m: sw.pulse_gap_m,
        off_current_sign: sw.off_current_sign,
    };
    let build = |mesh: Mesh, w: Workpiece| {
        let model = crate::solve::study_model(case, mesh)?;
        match w {
            Workpiece::Present => Ok(model),
            Workpiece::Removed => {
                let mut b = model.to_builder();
                for r in &sw.workpiece {
                    b = b.replace_material(r, Material::vacuum());
                }
                b.build()
            }
        }
    };
    switching_study(&rigid, &setup, &settings, build)
}

/// Holding force (N): the attraction of the workpiece towards the device, positive (the
/// sweep reports the force on the workpiece along the direction that closes the gap, so the
/// attraction is its opposite). The one sign convention of every switching output.
pub fn holding_force_n(point: &ForcePoint) -> f64 {
    -point.eggshell_n
}

/// The magnet-safety cautions printed once with every switching report.
pub const SWITCHING_CAUTIONS: [&str; 6] = [
    "Safety (switchable magnets):",
    "  - Pinch hazard: an ON pad snaps onto steel with the forces below; keep fingers out of the gap, handle magnets with tools, never rely on the OFF state alone to keep a load from falling.",
    "  - Strong fields affect pacemakers, implanted defibrillators and other implants; keep the makers' safety distances.",
    "  - The switching pulse comes from a charged capacitor bank that stores lethal energy: discharge and short it before touching the circuit; follow electrical safety codes.",
    "  - Lifting and work-holding: rate the device on the measured breakaway force with the safety factor that the local lifting-equipment standards require; computed forces are ideal values for clean, flat, thick steel.",
    "  - This is a design aid; it does not replace testing, local codes or licensed engineering practice.",
];

impl std::fmt::Display for SwitchingReport {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        for line in SWITCHING_CAUTIONS {
            writeln!(f, "{line}")?;
        }
        writeln!(f)?;
        writeln!(
            f,
            "Switching pulses (workpiece in place; holding force = attraction of the workpiece, N):"
        )?;
        for t in [&self.on_to_off, &self.off_to_on] {
            let r = &t.recommended;
            writeln!(
                f,
                "  {:<10} threshold {:>9.0} A-turns; recommended {:>9.0} A-turns: {:.3} J \
                 supplied ({:+.3} J stored, {:.3} J hysteresis loss, {:+.1e} J residual), \
                 switched magnet J = {:+.3} T, peak |H| {:.0} kA/m; guarded magnet \
                 margin to its knee {:.2} ({:.2} % of its volume beyond), J = {:+.3} T",
                t.direction,
                t.ampere_turns,
                r.ampere_turns,
                r.supplied_energy_j,
                r.stored_energy_change_j,
                r.hysteresis_loss_j,
                r.energy_balance_residual_j,
                r.switched_polarisation_t,
                r.peak_switched_field_a_per_m * 1e-3,
                r.guarded_knee_margin,
                100.0 * r.guarded_beyond_knee_fraction,
                r.guarded_polarisation_t,
            )?;
        }
        for (label, o) in [
            ("ON to OFF", &self.removed[0]),
            ("OFF to ON", &self.removed[1]),
        ] {
            writeln!(
                f,
                "  {label:<10} with the workpiece removed: switched magnet J = {:+.3} T, {:.3} J \
                 supplied ({:+.3} J stored, {:.3} J hysteresis loss)",
                o.switched_polarisation_t,
                o.supplied_energy_j,
                o.stored_energy_change_j,
                o.hysteresis_loss_j
            )?;
        }
        writeln!(f)?;
        writeln!(
            f,
            "{:>9} {:>12} {:>9} {:>12} {:>9} {:>12} {:>12}",
            "gap", "ON force", "spread", "OFF force", "spread", "ON force*", "OFF force*"
        )?;
        writeln!(
            f,
            "{:>9} {:>12} {:>9} {:>12} {:>9} {:>12} {:>12}",
            "(mm)", "(N)", "(%)", "(N)", "(%)", "(N)", "(N)"
        )?;
        for (k, (on, off)) in self.force_on.iter().zip(&self.force_off).enumerate() {
            let removed = |i: usize| {
                self.force_removed[i]
                    .get(k)
                    .map_or(f64::NAN, holding_force_n)
            };
            let warned = on.warning
                || off.warning
                || self
                    .force_removed
                    .iter()
                    .any(|c| c.get(k).is_some_and(|p| p.warning));
            writeln!(
                f,
                "{:>9.3} {:>12.2} {:>9.2} {:>12.2} {:>9.2} {:>12.2} {:>12.2}{}",
                on.point.parameter * 1e3,
                holding_force_n(on),
                100.0 * on.spread,
                holding_force_n(off),
                100.0 * off.spread,
                removed(0),
                removed(1),
                if warned { "  <- methods disagree" } else { "" }
            )?;
        }
        writeln!(
            f,
            "* after the recommended pulse applied with the workpiece removed, the workpiece then \
             brought back"
        )?;
        writeln!(f)?;
        writeln!(
            f,
            "Partial switching (OFF pulses of growing amplitude from ON):"
        )?;
        writeln!(
            f,
            "{:>14} {:>14} {:>12}",
            "pulse (A-turns)", "switched (%)", "force (N)"
        )?;
        for p in &self.partial {
            writeln!(
                f,
                "{:>14.0} {:>14.1} {:>12.2}",
                p.outcome.ampere_turns,
                100.0 * p.switched_fraction,
                holding_force_n(&p.force)
            )?;
        }
        writeln!(f)?;
        writeln!(f, "{}", self.eddy_current_note)?;
        let times: Vec<String> = self
            .timings
            .iter()
            .map(|(phase, s)| format!("{phase} {s:.1} s"))
            .collect();
        write!(f, "Time: {}", times.join(", "))
    }
}

/// Writes the report into `dir`: `switching.json` (everything), `switching_force.csv`
/// (ON and OFF force versus gap), `switching_partial.csv` (force versus pulse), and the
/// charts `switching_force.svg` and `switching_partial.svg`. Returns the files written.
///
/// # Errors
/// I/O errors and chart errors, as text naming the file.
pub fn write_outputs(
    report: &SwitchingReport,
    dir: &std::path::Path,
    title: &str,
) -> Result<Vec<std::path::PathBuf>, String> {
    use crate::solve::OutputDir;
    use coercive_post::plot::{xy_chart_svg, ChartOptions, Series, Table};
    let mut out = OutputDir::create(dir)?;
    out.write(
        "switching.json",
        serde_json::to_string_pretty(report).map_err(|e| e.to_string())?,
    )?;
    let mut forces = Table::new(vec![
        "gap (mm)".into(),
        "ON holding force (N)".into(),
        "ON spread (%)".into(),
        "OFF holding force (N)".into(),
        "OFF spread (%)".into(),
        "ON holding force, pulsed without workpiece (N)".into(),
        "OFF holding force, pulsed without workpiece (N)".into(),
    ]);
    for (k, (on, off)) in report.force_on.iter().zip(&report.force_off).enumerate() {
        let removed = |i: usize| {
            report.force_removed[i]
                .get(k)
                .map_or(f64::NAN, holding_force_n)
        };
        forces
            .push(vec![
                on.point.parameter * 1e3,
                holding_force_n(on),
                100.0 * on.spread,
                holding_force_n(off),
                100.0 * off.spread,
                removed(0),
                removed(1),
            ])
            .map_err(|e| e.to_string())?;
    }
    out.write("switching_force.csv", forces.to_csv())?;
    let mut partial = Table::new(vec![
        "pulse (A-turns)".into(),
        "switched fraction (%)".into(),
        "holding force (N)".into(),
        "supplied energy (J)".into(),
        "stored energy change (J)".into(),
        "hysteresis loss (J)".into(),
        "energy balance residual (J)".into(),
    ]);
    for p in &report.partial {
        partial
            .push(vec![
                p.outcome.ampere_turns.abs(),
                100.0 * p.switched_fraction,
                holding_force_n(&p.force),
                p.outcome.supplied_energy_j,
                p.outcome.stored_energy_change_j,
                p.outcome.hysteresis_loss_j,
                p.outcome.energy_balance_residual_j,
            ])
            .map_err(|e| e.to_string())?;
    }
    out.write("switching_partial.csv", partial.to_csv())?;
    let curve = |label: &str, rows: &[ForcePoint]| {
        Series::new(
            label,
            rows.iter()
                .map(|r| (r.point.parameter * 1e3, holding_force_n(r)))
                .collect(),
        )
    };
    let chart = xy_chart_svg(
        &[
            curve("ON", &report.force_on),
            curve("OFF", &report.force_off),
            curve("ON, pulsed without workpiece", &report.force_removed[0]),
            curve("OFF, pulsed without workpiece", &report.force_removed[1]),
        ],
        &ChartOptions {
            title: format!("{title}: holding force versus gap, ON and OFF"),
            x_label: "gap (mm)".into(),
            y_label: "holding force (N)".into(),
            include_zero_y: true,
            ..ChartOptions::default()
        },
    )
    .map_err(|e| e.to_string())?;
    out.write("switching_force.svg", chart)?;
    let chart = xy_chart_svg(
        &[Series::new(
            "after an OFF pulse from ON",
            report
                .partial
                .iter()
                .map(|p| (p.outcome.ampere_turns.abs(), holding_force_n(&p.force)))
                .collect(),
        )],
        &ChartOptions {
            title: format!(
                "{title}: holding force at {:.3} mm after a pulse (partial switching)",
                report
                    .partial
                    .first()
                    .map_or(f64::NAN, |p| p.force.point.parameter * 1e3)
            ),
            x_label: "pulse (A-turns)".into(),
            y_label: "holding force (N)".into(),
            include_zero_y: true,
            ..ChartOptions::default()
        },
    )
    .map_err(|e| e.to_string())?;
    out.write("switching_partial.svg", chart)?;
    for (name, svg) in &report.flux_maps {
        out.write(name, svg.clone())?;
    }
    // Working points on the loops: each magnet's major loop with its mean working point at
    // the peak of, and after, the recommended OFF and ON pulses.
    for (k, (name, what)) in [
        ("switching_loop_switched.svg", "switched magnet"),
        ("switching_loop_guarded.svg", "guarded magnet"),
    ]
    .into_iter()
    .enumerate()
    {
        let points = |t: &Threshold| {
            if k == 0 {
                t.recommended.switched_working_points
            } else {
                t.recommended.guarded_working_points
            }
        };
        let kilo = |p: &[(f64, f64)]| p.iter().map(|(h, b)| (h * 1e-3, *b)).collect();
        let mut series = vec![Series::new("major loop", kilo(&report.loops[k]))];
        for (label, t) in [
            ("OFF pulse", &report.on_to_off),
            ("ON pulse", &report.off_to_on),
        ] {
            let [peak, end] = points(t);
            series.push(Series::new(format!("{label}: at its peak"), kilo(&[peak])));
            series.push(Series::new(format!("{label}: after it"), kilo(&[end])));
        }
        let chart = xy_chart_svg(
            &series,
            &ChartOptions {
                title: format!("{title}: {what}, mean working points on its major loop"),
                x_label: "H along the easy axis (kA/m)".into(),
                y_label: "B along the easy axis (T)".into(),
                ..ChartOptions::default()
            },
        )
        .map_err(|e| e.to_string())?;
        out.write(name, chart)?;
    }
    Ok(out.into_written())
}
