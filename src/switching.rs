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
//! - The smallest pulse that switches reliably, each way, by bisection on the amplitude
//!   ([`Threshold`]). Criterion: the switched magnet's mean polarisation along its easy axis
//!   moves at least [`SwitchingSettings::switched_fraction`] of the way from its start to
//!   where a full pulse ([`SwitchingSettings::full_pulse_a`]) takes it.
//! - The force on the workpiece after a pulse as a function of the pulse amplitude (partial
//!   switching: how designers set a reduced holding force), and the holding force versus gap
//!   in the ON and OFF states, each with the magnet state the recommended pulse left, through
//!   the project's one force sweep ([`crate::study::force_sweep`]) with that state.
//!
//! # Limits
//! Magnetostatic: eddy currents in the conductive switched magnet and in the steel delay and
//! weaken a short pulse, so a real pulse needs more ampere-turns than computed here;
//! [`eddy_current_note`] gives the skin depth at the pulse's time scale to judge by how much.

use coercive_fem::{
    FemError, HistoryError, HistorySettings, KeepSolutions, MagnetState, Material, Model, Pulse,
    Solution, Solver, MU_0,
};
use coercive_mesh::{Mesh, Placement, RigidMesher};
use coercive_post::force::Body;
use coercive_post::{FieldProbe, MagnetWorkingPoint};
use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::study::{
    force_sweep_with_state, ForcePoint, ForceSweepSettings, StudyError, TranslationPoint,
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
    /// A pulse amplitude (A per turn) that certainly switches fully: the upper end of the
    /// bisection and the reference of the switched fraction.
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
    /// Mean polarisation of the switched magnet along its easy axis after the pulse (T).
    pub switched_polarisation_t: f64,
    /// Mean polarisation of the guarded magnet along its easy axis after the pulse (T).
    pub guarded_polarisation_t: f64,
    /// Energy the coil delivered over the pulse, the integral of i dpsi (J, for the stack).
    pub supplied_energy_j: f64,
    /// Largest |H| along the easy axis in the switched magnet at the pulse's peak (A/m).
    pub peak_switched_field_a_per_m: f64,
    /// The guarded magnet's smallest margin to its knee at the pulse's peak,
    /// 1 + min(H along the axis) / Hk: 1 with no reverse field, 0 at the knee, negative
    /// beyond it.
    pub guarded_knee_margin: f64,
    /// Volume fraction of the guarded magnet driven beyond its knee at the peak.
    pub guarded_beyond_knee_fraction: f64,
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
    /// Holding force at the pulse gap after the recommended pulses with the workpiece removed
    /// (ON, OFF), the workpiece then brought back.
    pub force_removed: [ForcePoint; 2],
    /// Force after OFF pulses of growing amplitude from the ON state.
    pub partial: Vec<PartialPoint>,
    /// The eddy-current caution.
    pub eddy_current_note: String,
}

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

    /// Applies a single pulse of `amplitude_a` from `state`.
    fn pulse(
        &self,
        state: &MagnetState,
        amplitude_a: f64,
        workpiece: Workpiece,
    ) -> Result<PulseOutcome, StudyError> {
        let label = format!("pulse of {amplitude_a:.4} A");
        let settings = HistorySettings {
            keep: KeepSolutions::Waypoints,
            ..self.settings.history
        };
        let run = self
            .solver
            .solve_history(
                self.model(workpiece),
                state,
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
        let switched_peak = working_point(peak, &self.setup.switched_magnet)?;
        let guarded_peak = working_point(peak, &self.setup.guarded_magnet)?;
        let margin = guarded_peak
            .knee_field_a_per_m
            .map(|k| 1.0 + guarded_peak.min_field_strength_a_per_m / k)
            .unwrap_or(f64::NAN);
        Ok(PulseOutcome {
            amplitude_a,
            ampere_turns: amplitude_a * self.turns,
            workpiece,
            state: Some(run.state.clone()),
            switched_polarisation_t: working_point(last, &self.setup.switched_magnet)?
                .mean_polarisation_t,
            guarded_polarisation_t: working_point(last, &self.setup.guarded_magnet)?
                .mean_polarisation_t,
            supplied_energy_j: run.source_energies()[0] * self.depth_m,
            peak_switched_field_a_per_m: switched_peak
                .min_field_strength_a_per_m
                .abs()
                .max(switched_peak.max_field_strength_a_per_m.abs()),
            guarded_knee_margin: margin,
            guarded_beyond_knee_fraction: guarded_peak.beyond_knee_fraction,
            load_steps: run.steps.len(),
            newton_iterations: run.iterations(),
        })
    }

    /// Bisection for the smallest amplitude (of sign `sign`) that moves the switched magnet's
    /// polarisation `switched_fraction` of the way from `start` to where the full pulse
    /// takes it.
    fn threshold(
        &self,
        direction: &str,
        start: &MagnetState,
        start_polarisation: f64,
        full: &PulseOutcome,
        sign: f64,
    ) -> Result<Threshold, StudyError> {
        let s = self.settings;
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
        let fraction = |o: &PulseOutcome| (o.switched_polarisation_t - start_polarisation) / span;
        let mut evaluations = vec![(full.amplitude_a, fraction(full))];
        let (mut lo, mut hi) = (0.0, s.full_pulse_a.abs());
        while (hi - lo) > s.amplitude_tolerance * hi {
            let mid = 0.5 * (lo + hi);
            let o = self.pulse(start, sign * mid, Workpiece::Present)?;
            let f = fraction(&o);
            evaluations.push((o.amplitude_a, f));
            if f >= s.switched_fraction {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        let amplitude_a = sign * hi;
        let recommended = self.pulse(
            start,
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

    /// The force sweep at `gaps` with the magnets in `state` (workpiece present).
    fn forces(&self, state: &MagnetState, gaps: &[f64]) -> Result<Vec<ForcePoint>, StudyError> {
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
        force_sweep_with_state(self.rigid, &points, &sweep, state, |mesh| {
            (self.build)(mesh, Workpiece::Present)
        })
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
/// ON state); the OFF and ON thresholds by bisection from those states; the recommended
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
    let magnetised = MagnetState::initial(&ctx.present);
    let first_off = ctx.pulse(&magnetised, off * full, Workpiece::Present)?;
    let off_full = first_off
        .state
        .clone()
        .unwrap_or_else(|| magnetised.clone());
    let on_full_outcome = ctx.pulse(&off_full, -off * full, Workpiece::Present)?;
    let on_full = on_full_outcome
        .state
        .clone()
        .unwrap_or_else(|| magnetised.clone());
    let off_full_outcome = ctx.pulse(&on_full, off * full, Workpiece::Present)?;
    // The thresholds (sequential bisections, each pulse from the same committed state).
    let on_to_off = ctx.threshold(
        "ON to OFF",
        &on_full,
        on_full_outcome.switched_polarisation_t,
        &off_full_outcome,
        off,
    )?;
    let off_to_on = ctx.threshold(
        "OFF to ON",
        &off_full,
        first_off.switched_polarisation_t,
        &on_full_outcome,
        -off,
    )?;
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
            on_to_off.recommended.amplitude_a,
            Workpiece::Removed,
        )?,
        ctx.pulse(
            &off_full,
            off_to_on.recommended.amplitude_a,
            Workpiece::Removed,
        )?,
    ];
    let force_on = ctx.forces(&on_state, &settings.gaps_m)?;
    let force_off = ctx.forces(&off_state, &settings.gaps_m)?;
    let force_removed = [
        ctx.forces(
            removed[1].state.as_ref().unwrap_or(&on_state),
            &[setup.pulse_gap_m],
        )?
        .remove(0),
        ctx.forces(
            removed[0].state.as_ref().unwrap_or(&off_state),
            &[setup.pulse_gap_m],
        )?
        .remove(0),
    ];
    // Partial switching: OFF pulses of growing amplitude from the ON state, in parallel.
    let n = settings.partial_amplitudes;
    let top = 1.5 * on_to_off.amplitude_a.abs();
    let span = off_full_outcome.switched_polarisation_t - on_full_outcome.switched_polarisation_t;
    let partial = (1..=n)
        .into_par_iter()
        .map(|k| {
            let a = off * top * k as f64 / n as f64;
            let outcome = ctx.pulse(&on_full, a, Workpiece::Present)?;
            let state = outcome.state.clone().unwrap_or(on_full.clone());
            let force = ctx.forces(&state, &[setup.pulse_gap_m])?.remove(0);
            Ok(PartialPoint {
                amplitude_a: a,
                switched_fraction: (outcome.switched_polarisation_t
                    - on_full_outcome.switched_polarisation_t)
                    / span,
                outcome,
                force,
            })
        })
        .collect::<Result<Vec<_>, StudyError>>()?;
    Ok(SwitchingReport {
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
    })
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
