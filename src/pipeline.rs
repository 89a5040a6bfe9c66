//! One simulation run end to end: a vehicle over a road at a speed →
//! solver → streaming evaluators → a [`RunSummary`]. Both `simulate` and
//! every case of a sweep come through here, so a sweep row and the single
//! run it stands for cannot differ.
//!
//! Evaluation streams with the solver: per seat an ISO 2631-1 meter, per
//! axle travel and load statistics, and optionally a CSV time history
//! written as it goes. Memory does not grow with road length except for
//! the road itself.

use std::io::Write;
use std::sync::mpsc;

use serde::Serialize;

use crate::comfort::{
    FORE_AFT_WEIGHTING, Guidance, Measures, Meter, SeatTotals, Weighting, seat_guidance,
    seat_totals,
};
use crate::plausibility::{
    EnergyBalance, EnergyLedger, Engagement, Finding, LedgerStep, energy_findings, gaps,
    non_finite_fields, spectral_findings,
};
use crate::report::{AtomicFile, ExportError, fmt_micro};
use crate::road::Profile;
use crate::road::iso8608::RoadSpec;
use crate::solve::{
    self, Excitation, HarmonicForce, RunInfo, Sample, SampleSink, SolveError, SolverKind,
    SolverSettings,
};
use crate::stats::durability::{
    AxleDurability, DurabilitySettings, DurabilitySummary, write_rainflow_header,
    write_travel_histograms,
};
use crate::stats::{Moments, SecondMoments, push_column_pairs};
use crate::vehicle::response::{PredictedRms, SpectralSettings, predicted_rms_with};
use crate::vehicle::{AXLE_NAMES, FLOOR_SUFFIX, FORE_AFT_SUFFIX, Vehicle};

/// Everything a run needs besides the vehicle and road.
#[derive(Debug, Clone)]
pub struct RunOptions {
    /// Forward speed, m/s.
    pub speed_m_s: f64,
    /// Solver settings.
    pub solver: SolverSettings,
    /// Frequency weighting for the seats (ISO 2631-1: Wk for vertical seat
    /// acceleration, health and comfort).
    pub weighting: Weighting,
    /// Optional harmonic body force.
    pub force: Option<HarmonicForce>,
    /// Daily exposure duration for the ISO 2631-1 health guidance, s.
    pub exposure_s: f64,
    /// Durability evaluation settings.
    pub durability: DurabilitySettings,
    /// The ISO 8608 spec the road was generated from, if it was: the run is
    /// then compared with its frequency-domain prediction.
    pub road_spec: Option<RoadSpec>,
}

/// Eight hours, s: the reference day of ISO 2631-1 Annex B and of the
/// EU Directive 2002/44/EC A(8).
pub const DEFAULT_EXPOSURE_S: f64 = 8.0 * 3600.0;

impl RunOptions {
    /// Defaults for a run at `speed_m_s`.
    pub fn at_speed(speed_m_s: f64) -> Self {
        RunOptions {
            speed_m_s,
            solver: SolverSettings::default(),
            weighting: Weighting::Wk,
            force: None,
            exposure_s: DEFAULT_EXPOSURE_S,
            durability: DurabilitySettings::default(),
            road_spec: None,
        }
    }
}

/// The result of one run (the documented `simulate --json` object,
/// `profiles/reference.md`).
#[derive(Debug, Clone, Serialize)]
pub struct RunSummary {
    /// Vehicle name.
    pub vehicle: String,
    /// Forward speed, m/s.
    pub speed_m_s: f64,
    /// Run duration, s: (last − first distance) / speed.
    pub duration_s: f64,
    /// Road length covered by the front axle, m.
    pub length_m: f64,
    /// How the run was solved.
    pub solver: RunInfo,
    /// One entry per seat, in file order.
    pub seats: Vec<SeatSummary>,
    /// Per-axle durability and road-holding values.
    pub axles: Axles,
    /// Body motion.
    pub body: BodySummary,
    /// Random-vibration prediction from the road PSD and the frequency
    /// response (generated roads only), beside the time-domain values.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub predicted: Option<PredictedRms>,
    /// What the plausibility checks found ([`crate::plausibility`]).
    pub checks: Checks,
}

/// The plausibility checks of one run.
#[derive(Debug, Clone, Serialize)]
pub struct Checks {
    /// Warnings and implausible results, each with its numbers.
    pub findings: Vec<Finding>,
    /// The energy balance the checks rest on.
    pub energy: EnergyBalance,
    /// How the run compares with its spectral prediction, in words
    /// (generated roads only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub spectral: Option<String>,
}

impl Checks {
    /// True if some finding says the result cannot be right.
    pub fn implausible(&self) -> bool {
        crate::plausibility::any_implausible(&self.findings)
    }
}

/// ISO 2631-1 evaluation of one seat: vertical and fore-aft acceleration
/// and their total value.
#[derive(Debug, Clone, Serialize)]
pub struct SeatSummary {
    /// Label from the vehicle file.
    pub name: String,
    /// Position ahead of the CG, m.
    pub x_m: f64,
    /// Height above the CG, m.
    pub height_m: f64,
    /// The vertical measures (accel_rms, aw, vdv, mtvv, crest_factor, …),
    /// flattened.
    #[serde(flatten)]
    pub measures: Measures,
    /// The fore-aft measures (Wd), of `−height·θ̈`: the body point's, also
    /// for a suspended seat (its suspension is vertical only).
    pub fore_aft: Measures,
    /// A suspended seat's floor: the vertical measures of the body point
    /// beneath it (the seat's own `measures` are at the seat surface).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub floor: Option<Measures>,
    /// SEAT, the seat effective amplitude transmissibility of a suspended
    /// seat: `100·aw(seat surface)/aw(floor)`, % (both with the seat's
    /// weighting; common practice, the ratio ISO 10326-1 seat tests report).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub seat_effective_amplitude_transmissibility_pct: Option<f64>,
    /// A suspended seat's travel (floor minus seat mass, compression positive).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub suspension_travel: Option<SeatTravel>,
    /// The vibration total value with the comfort factors, m/s²
    /// (ISO 2631-1 6.5; the value the comfort reaction is read from).
    pub total_value: f64,
    /// The total value with the health factors, m/s² (for information).
    pub total_value_health: f64,
    /// Comfort (Annex C, from `total_value`) and health (Annex B, Directive
    /// 2002/44/EC, dominant axis) guidance for the run's exposure duration:
    /// estimates, not measurements.
    pub guidance: Guidance,
}

/// Travel of a seat suspension over a run.
#[derive(Debug, Clone, Serialize)]
pub struct SeatTravel {
    /// R.m.s., m.
    pub rms_m: f64,
    /// Smallest (largest extension), m.
    pub min_m: f64,
    /// Largest (largest compression), m.
    pub max_m: f64,
}

/// `100·aw_seat/aw_floor`, % (SEAT); `None` when the floor's aw is 0, so a
/// non-number is never printed as one.
pub fn seat_pct(seat: &Measures, floor: &Measures) -> Option<f64> {
    (floor.aw > 0.0).then(|| 100.0 * seat.aw / floor.aw)
}

impl SeatSummary {
    /// A suspended seat's floor measures, SEAT and travel added to its
    /// evaluation.
    pub fn with_suspension(mut self, floor: Measures, travel: &Moments) -> Self {
        self.seat_effective_amplitude_transmissibility_pct = seat_pct(&self.measures, &floor);
        self.floor = Some(floor);
        self.suspension_travel = Some(SeatTravel {
            rms_m: travel.rms(),
            min_m: travel.min(),
            max_m: travel.max(),
        });
        self
    }

    /// The seat's evaluation from its finished vertical and fore-aft measures.
    pub fn new(
        seat: &crate::vehicle::Seat,
        vertical: Measures,
        fore_aft: Measures,
        exposure_s: f64,
    ) -> Self {
        let SeatTotals {
            comfort_m_s2,
            health_m_s2,
        } = seat_totals(&vertical, &fore_aft);
        SeatSummary {
            name: seat.name.clone(),
            x_m: seat.x_m,
            height_m: seat.height_m,
            guidance: seat_guidance(&vertical, &fore_aft, exposure_s),
            measures: vertical,
            fore_aft,
            floor: None,
            seat_effective_amplitude_transmissibility_pct: None,
            suspension_travel: None,
            total_value: comfort_m_s2,
            total_value_health: health_m_s2,
        }
    }
}

/// Front and rear axle results.
#[derive(Debug, Clone, Serialize)]
pub struct Axles {
    /// Front axle.
    pub front: AxleSummary,
    /// Rear axle.
    pub rear: AxleSummary,
}

/// Durability and road-holding values of one axle.
#[derive(Debug, Clone, Serialize)]
pub struct AxleSummary {
    /// R.m.s. of the dynamic suspension travel (compression positive), m.
    pub travel_rms: f64,
    /// Smallest travel (largest extension), m.
    pub travel_min: f64,
    /// Largest travel (largest compression), m.
    pub travel_max: f64,
    /// R.m.s. of the dynamic suspension force, N.
    pub suspension_force_rms: f64,
    /// R.m.s. of the dynamic tyre (road contact) force, N.
    pub tyre_load_rms: f64,
    /// Static road contact force, N.
    pub static_load: f64,
    /// Dynamic load coefficient: tyre_load_rms / static_load.
    pub dynamic_load_coefficient: f64,
    /// Fraction of samples with the tyre off the road.
    pub time_off_ground_fraction: f64,
    /// Travel percentiles, stop engagement, crossings, rainflow.
    #[serde(flatten)]
    pub durability: DurabilitySummary,
}

/// Body motion r.m.s. values.
#[derive(Debug, Clone, Serialize)]
pub struct BodySummary {
    /// R.m.s. heave acceleration at the CG, m/s².
    pub heave_accel_rms: f64,
    /// R.m.s. pitch acceleration, rad/s².
    pub pitch_accel_rms: f64,
    /// R.m.s. heave displacement, m.
    pub heave_rms: f64,
    /// R.m.s. pitch angle, rad.
    pub pitch_rms: f64,
}

/// Runs `vehicle` over `profile`, optionally streaming the time history to
/// `history` (rewound if the run has to start over).
pub fn simulate(
    vehicle: &Vehicle,
    profile: &Profile,
    options: &RunOptions,
    history: Option<&mut AtomicFile>,
) -> Result<RunSummary, crate::Error> {
    simulate_detailed(vehicle, profile, options, history).map(|(s, _)| s)
}

/// [`simulate`], also returning the per-axle durability evaluators so the
/// caller can write their histograms and rainflow tables.
pub fn simulate_detailed(
    vehicle: &Vehicle,
    profile: &Profile,
    options: &RunOptions,
    history: Option<&mut AtomicFile>,
) -> Result<(RunSummary, Durability), crate::Error> {
    if !(options.exposure_s.is_finite() && options.exposure_s > 0.0) {
        return Err(crate::Error::Usage(format!(
            "--exposure must be a positive duration, got {} s",
            options.exposure_s
        )));
    }
    let excitation = Excitation {
        profile,
        speed_m_s: options.speed_m_s,
        wheelbase_m: vehicle.wheelbase_m(),
        force: options.force,
    };
    let plan = solve::plan(vehicle, &excitation, &options.solver)?;
    // The frequency-domain companion, computed before the run so that bad
    // values are refused before any file is written.
    let predicted = options
        .road_spec
        .as_ref()
        .map(|spec| {
            predicted_rms_with(
                vehicle,
                options.speed_m_s,
                spec,
                options.weighting,
                &SpectralSettings {
                    profile_spacing_m: Some(spec.spacing_m),
                    ..Default::default()
                },
            )
        })
        .transpose()?;
    let mut sink = Evaluators::new(vehicle, options, plan.output_rate_hz, history)?;
    let info = run_streaming(vehicle, &excitation, &plan, &mut sink)?;
    let mut summary = sink.summary(vehicle, &excitation, info, options.exposure_s);
    summary.predicted = predicted;
    let road_rate_hz = options.speed_m_s / profile.spacing_m;
    summary.checks = check(
        vehicle,
        &summary,
        &sink.energy,
        options.road_spec.as_ref(),
        road_rate_hz,
    );
    Ok((
        summary,
        Durability {
            axles: sink.durability,
        },
    ))
}

/// The energy ledger adds up on the output grid. When the road's own samples
/// pass under the wheels faster than that grid, the ledger cannot follow
/// the road (and the exact path's hold smooths it), so an energy finding is
/// no proof of a broken run: it becomes a warning that says why and what
/// to do, instead of a refusal.
fn unresolved_road(findings: &mut [Finding], road_rate_hz: f64, output_rate_hz: f64) {
    for f in findings.iter_mut() {
        if matches!(f.code, "energy_balance" | "travel_beyond_energy") {
            f.severity = crate::plausibility::Severity::Warning;
            f.message = format!(
                "not checked: the road's samples pass at {} Hz, faster than the {} Hz output rate, so the energy balance on the output grid cannot follow the road and the exact solver smooths it; raise --rate to at least {} Hz for a checked result (the balance found: {})",
                crate::report::sig(road_rate_hz, 4),
                crate::report::sig(output_rate_hz, 4),
                (road_rate_hz.ceil() as u64).max(1),
                f.message
            );
        }
    }
}

/// Runs the plausibility checks on a finished run.
fn check(
    vehicle: &Vehicle,
    s: &RunSummary,
    energy: &EnergyLedger,
    spec: Option<&RoadSpec>,
    road_rate_hz: f64,
) -> Checks {
    let axles = [&s.axles.front, &s.axles.rear];
    let mut findings = energy_findings(energy, axles.map(|a| [a.travel_min, a.travel_max]));
    if road_rate_hz > s.solver.output_rate_hz {
        unresolved_road(&mut findings, road_rate_hz, s.solver.output_rate_hz);
        if matches!(s.solver.solver, SolverKind::Exact | SolverKind::Piecewise) {
            // The hold between output samples aliases such a road: on a
            // white-noise profile at 4× the output rate aw came out twice
            // the adaptive solver's.
            findings.push(Finding::warning(
                "road_unresolved",
                format!(
                    "the road's samples pass at {} Hz, faster than the {} Hz output rate, and the {} solver holds the road linear between output samples, so it sees an aliased road and its results can be far off; raise --rate to at least {} Hz or use --solver adaptive",
                    crate::report::sig(road_rate_hz, 4),
                    crate::report::sig(s.solver.output_rate_hz, 4),
                    s.solver.solver.name(),
                    (road_rate_hz.ceil() as u64).max(1)
                ),
            ));
        }
    }
    let spectral = s.predicted.as_ref().zip(spec).map(|(p, spec)| {
        let engagement = Engagement {
            off_ground: axles
                .iter()
                .map(|a| a.time_off_ground_fraction)
                .fold(0.0, f64::max),
            past_stops: axles
                .iter()
                .flat_map(|a| {
                    [
                        a.durability.time_past_bump_fraction,
                        a.durability.time_past_rebound_fraction,
                    ]
                })
                .flatten()
                .fold(0.0, f64::max),
            damper_asymmetry: vehicle
                .axles
                .iter()
                .map(|a| {
                    let (b, r) = (a.damper.bump_n_s_m, a.damper.rebound_n_s_m);
                    b.max(r) / b.min(r)
                })
                .fold(1.0, f64::max),
        };
        let (note, found) = spectral_findings(
            &gaps(s, p),
            &engagement,
            s.duration_s,
            spec.random_amplitudes,
        );
        findings.extend(found);
        note
    });
    for path in non_finite_fields(s) {
        findings.push(Finding {
            severity: crate::plausibility::Severity::Implausible,
            code: "non_finite",
            message: format!(
                "{path} is not a finite number: the run produced values no physical result has"
            ),
        });
    }
    Checks {
        findings,
        energy: energy.balance(),
        spectral,
    }
}

/// Output samples per chunk handed to the evaluator thread (about 330 kB).
const CHUNK_SAMPLES: usize = 1024;
/// Output samples evaluated at a time on the solver's own thread
/// ([`Buffered`]): enough for the chunk loops to pay (as fast per sample as
/// 1024 on a sweep), small enough (80 kB) for a sweep on a thousand
/// threads.
const BUFFERED_SAMPLES: usize = 256;
/// Chunks queued between the solver and the evaluator thread.
const CHUNKS_IN_FLIGHT: usize = 4;

/// Runs the solver into the evaluators. A long run outside a parallel batch
/// evaluates on a second thread while the solver goes on: the solver hands
/// over chunks of samples in order through a bounded queue, and the chunk
/// buffers are recycled, so nothing is allocated per sample and the
/// evaluators see exactly the sequence they would see on one thread (the
/// results are the same, bit for bit). Inside a sweep the cases already keep
/// every core busy, so each runs on its own thread.
fn run_streaming(
    vehicle: &Vehicle,
    excitation: &Excitation<'_>,
    plan: &solve::Plan,
    sink: &mut Evaluators<'_>,
) -> Result<RunInfo, SolveError> {
    let samples = solve::sample_count(excitation.duration_s(), plan.output_rate_hz);
    let second_core = std::thread::available_parallelism().is_ok_and(|n| n.get() > 1);
    if samples < 4 * CHUNK_SAMPLES || !second_core || rayon::current_thread_index().is_some() {
        let mut buffered = Buffered {
            chunk: vec![Sample::default(); BUFFERED_SAMPLES.min(samples.max(1))],
            filled: 0,
            evaluators: sink,
        };
        let info = solve::run(vehicle, excitation, plan, &mut buffered)?;
        buffered.flush()?;
        return Ok(info);
    }
    // The energy ledger is shared out: its per-sample terms are taken here,
    // beside the solver, and the running sums added on the evaluators'
    // thread (the terms take most of its time, but on either thread alone
    // the whole ledger set the pace: 20 km class C exact run 63 ms wall
    // with it on either side, 40 ms without it).
    let mut ledger = sink.energy.clone();
    let evaluators = &mut *sink;
    std::thread::scope(|scope| {
        let (tx, rx) = mpsc::sync_channel::<Handover>(CHUNKS_IN_FLIGHT);
        let (back_tx, back_rx) =
            mpsc::sync_channel::<(Vec<Sample>, Vec<LedgerStep>)>(CHUNKS_IN_FLIGHT + 2);
        let evaluator = scope.spawn(move || -> Result<(), SolveError> {
            for item in rx {
                match item {
                    Handover::Start(kind) => evaluators.start(kind)?,
                    Handover::Samples(chunk, steps) => {
                        evaluators.accept_chunk(&chunk, Some(&steps))?;
                        // Back for reuse, samples and all (the solver
                        // overwrites them); a full return queue only means
                        // one buffer fewer to reuse.
                        let _ = back_tx.try_send((chunk, steps));
                    }
                }
            }
            Ok(())
        });
        let mut feed = Feed {
            tx,
            back: back_rx,
            chunk: vec![Sample::default(); CHUNK_SAMPLES],
            filled: 0,
            ledger: &mut ledger,
            steps: Vec::with_capacity(CHUNK_SAMPLES),
        };
        let solved = solve::run(vehicle, excitation, plan, &mut feed).and_then(|info| {
            feed.hand_over()?;
            Ok(info)
        });
        drop(feed); // closes the queue: the evaluator finishes and returns
        match evaluator.join() {
            Err(panic) => std::panic::resume_unwind(panic),
            // The evaluator's own error (e.g. a history write) comes first:
            // the solver then only saw the queue close.
            Ok(Err(e)) => Err(e),
            Ok(Ok(())) => solved,
        }
    })
}

/// The evaluators on the solver's own thread, a chunk at a time: the
/// solver builds samples in the chunk's slots and the evaluators take each
/// full chunk column by column ([`Evaluators::accept_chunk`], the same
/// results bit for bit as sample by sample, and cheaper).
struct Buffered<'s, 'e> {
    /// Never empty; the first `filled` are this run's.
    chunk: Vec<Sample>,
    filled: usize,
    evaluators: &'s mut Evaluators<'e>,
}

impl Buffered<'_, '_> {
    /// Evaluates the samples collected so far.
    fn flush(&mut self) -> Result<(), SolveError> {
        let filled = std::mem::take(&mut self.filled);
        self.evaluators.accept_chunk(&self.chunk[..filled], None)
    }
}

impl SampleSink for Buffered<'_, '_> {
    fn start(&mut self, solver: SolverKind) -> Result<(), SolveError> {
        // Samples not yet evaluated belong to the run being discarded.
        self.filled = 0;
        self.evaluators.start(solver)
    }

    #[inline]
    fn accept(&mut self, sample: &Sample) -> Result<(), SolveError> {
        self.chunk[self.filled] = *sample;
        self.accept_slot()
    }

    #[inline]
    fn next_slot(&mut self) -> Option<&mut Sample> {
        self.chunk.get_mut(self.filled)
    }

    #[inline]
    fn accept_slot(&mut self) -> Result<(), SolveError> {
        self.filled += 1;
        if self.filled == self.chunk.len() {
            self.flush()?;
        }
        Ok(())
    }
}

/// What the solver hands to the evaluator thread, in order.
enum Handover {
    /// A (re)start: discard everything evaluated so far.
    Start(SolverKind),
    /// The next samples.
    Samples(Vec<Sample>, Vec<LedgerStep>),
}

/// The solver's side of [`run_streaming`]: collects samples into chunks.
struct Feed<'l> {
    tx: mpsc::SyncSender<Handover>,
    back: mpsc::Receiver<(Vec<Sample>, Vec<LedgerStep>)>,
    /// Always [`CHUNK_SAMPLES`] long, so the solver can build each sample
    /// in its slot ([`SampleSink::next_slot`]); the first `filled` are this
    /// run's, the rest are left over from the buffer's previous use.
    chunk: Vec<Sample>,
    filled: usize,
    /// Takes the energy ledger's per-sample terms of each chunk
    /// ([`EnergyLedger::steps_block`]), sent along with it.
    ledger: &'l mut EnergyLedger,
    steps: Vec<LedgerStep>,
}

impl Feed<'_> {
    fn send(&self, item: Handover) -> Result<(), SolveError> {
        self.tx.send(item).map_err(|_| {
            SolveError::Settings("the evaluator thread stopped before the run ended".to_string())
        })
    }

    /// Sends the samples collected so far (if any) and takes a recycled buffer.
    fn hand_over(&mut self) -> Result<(), SolveError> {
        if self.filled == 0 {
            return Ok(());
        }
        let (mut fresh, fresh_steps) = self.back.try_recv().unwrap_or_else(|_| {
            (
                vec![Sample::default(); CHUNK_SAMPLES],
                Vec::with_capacity(CHUNK_SAMPLES),
            )
        });
        // Only the run's last chunk comes back short.
        fresh.resize(CHUNK_SAMPLES, Sample::default());
        self.ledger
            .steps_block(&self.chunk[..self.filled], &mut self.steps);
        let steps = std::mem::replace(&mut self.steps, fresh_steps);
        let mut full = std::mem::replace(&mut self.chunk, fresh);
        full.truncate(self.filled);
        self.filled = 0;
        self.send(Handover::Samples(full, steps))
    }

    /// Counts in the sample in slot `filled`.
    #[inline(always)]
    fn take_filled(&mut self) -> Result<(), SolveError> {
        self.filled += 1;
        if self.filled >= CHUNK_SAMPLES {
            self.hand_over()?;
        }
        Ok(())
    }
}

impl SampleSink for Feed<'_> {
    fn start(&mut self, solver: SolverKind) -> Result<(), SolveError> {
        // Samples not yet handed over belong to the run being discarded.
        self.filled = 0;
        self.ledger.start(solver);
        self.send(Handover::Start(solver))
    }

    #[inline]
    fn accept(&mut self, sample: &Sample) -> Result<(), SolveError> {
        self.chunk[self.filled] = *sample;
        self.take_filled()
    }

    #[inline]
    fn next_slot(&mut self) -> Option<&mut Sample> {
        self.chunk.get_mut(self.filled)
    }

    #[inline]
    fn accept_slot(&mut self) -> Result<(), SolveError> {
        self.take_filled()
    }
}

/// The durability evaluators of a finished run (front, rear).
pub struct Durability {
    axles: [AxleDurability; 2],
}

impl Durability {
    /// Writes both axles' travel histograms as one CSV.
    pub fn write_travel_histograms(&self, out: &mut dyn Write) -> std::io::Result<()> {
        write_travel_histograms(
            self.axles[0].travel_histogram(),
            self.axles[1].travel_histogram(),
            out,
        )
    }

    /// The durability evaluator of axle `i` (0 front, 1 rear), finished.
    pub fn axle(&self, i: usize) -> &AxleDurability {
        &self.axles[i]
    }

    /// Writes both axles' rainflow range–mean tables (travel and force) as one CSV.
    pub fn write_rainflow(&self, out: &mut dyn Write) -> std::io::Result<()> {
        write_rainflow_header(out)?;
        for (a, name) in self.axles.iter().zip(AXLE_NAMES) {
            a.write_rainflow_rows(name, out)?;
        }
        Ok(())
    }
}

/// The streaming evaluators of one run.
struct Evaluators<'h> {
    seat_x_m: Vec<f64>,
    seat_h_m: Vec<f64>,
    /// Per seat: its coordinate and its slot among the suspended seats
    /// (`None` for a seat on the floor).
    seat_dof: Vec<Option<(usize, usize)>>,
    /// Per seat: what [`seat_accel_m_s2`] takes besides the sample.
    seat_surface: Vec<(f64, Option<usize>)>,
    /// Whether any seat is suspended.
    any_suspended: bool,
    /// Per seat: the floor meter and travel of a suspended seat.
    floor: Vec<Option<(Meter, Moments)>>,
    weighting: Weighting,
    rate_hz: f64,
    seats: Vec<Meter>,
    fore_aft: Vec<Meter>,
    travel: [Moments; 2],
    // Only the r.m.s. of these is reported: no extremes to track.
    suspension: [SecondMoments; 2],
    contact: [SecondMoments; 2],
    off_ground: [u64; 2],
    heave: SecondMoments,
    pitch: SecondMoments,
    heave_acc: SecondMoments,
    pitch_acc: SecondMoments,
    durability: [AxleDurability; 2],
    durability_settings: DurabilitySettings,
    clearances: [(Option<f64>, Option<f64>); 2],
    history: Option<&'h mut AtomicFile>,
    header: String,
    line: String,
    energy: EnergyLedger,
    /// Whether the processor has AVX ([`Evaluators::accept_chunk_avx`]).
    avx: bool,
}

impl<'h> Evaluators<'h> {
    fn new(
        vehicle: &Vehicle,
        options: &RunOptions,
        rate_hz: f64,
        history: Option<&'h mut AtomicFile>,
    ) -> Result<Self, crate::Error> {
        let seats = vehicle
            .seats
            .iter()
            .map(|_| Meter::new(options.weighting, rate_hz))
            .collect::<Result<Vec<_>, _>>()?;
        let fore_aft = vehicle
            .seats
            .iter()
            .map(|_| Meter::new(FORE_AFT_WEIGHTING, rate_hz))
            .collect::<Result<Vec<_>, _>>()?;
        let seat_dof: Vec<_> = (0..vehicle.seats.len())
            .map(|i| vehicle.seat_dof(i).zip(vehicle.seat_slot(i)))
            .collect();
        let floor = seat_dof
            .iter()
            .map(|d| {
                d.map(|_| Meter::new(options.weighting, rate_hz).map(|m| (m, Moments::default())))
                    .transpose()
            })
            .collect::<Result<Vec<_>, _>>()?;
        let clearances = [0, 1].map(|i| {
            vehicle.axles[i].stops.map_or((None, None), |s| {
                (s.bump_clearance_m, s.rebound_clearance_m)
            })
        });
        let durability_err = |e: crate::stats::StatsError| crate::Error::Usage(e.to_string());
        let durability = [
            AxleDurability::new(&options.durability, clearances[0]).map_err(durability_err)?,
            AxleDurability::new(&options.durability, clearances[1]).map_err(durability_err)?,
        ];
        Ok(Evaluators {
            durability,
            durability_settings: options.durability.clone(),
            clearances,
            seat_x_m: vehicle.seats.iter().map(|s| s.x_m).collect(),
            seat_h_m: vehicle.seats.iter().map(|s| s.height_m).collect(),
            any_suspended: seat_dof.iter().any(Option::is_some),
            seat_surface: (vehicle.seats.iter().zip(&seat_dof))
                .map(|(s, d)| (s.x_m, d.map(|d| d.0)))
                .collect(),
            seat_dof,
            floor,
            weighting: options.weighting,
            rate_hz,
            seats,
            fore_aft,
            travel: Default::default(),
            suspension: Default::default(),
            contact: Default::default(),
            off_ground: [0; 2],
            heave: SecondMoments::default(),
            pitch: SecondMoments::default(),
            heave_acc: SecondMoments::default(),
            pitch_acc: SecondMoments::default(),
            history,
            header: history_header(vehicle),
            line: String::with_capacity(256),
            energy: EnergyLedger::new(vehicle, options.force.map_or(0.0, |f| f.x_m)),
            avx: crate::lanes::has_avx(),
        })
    }

    fn reset(&mut self) -> Result<(), SolveError> {
        for m in &mut self.seats {
            // Rates were validated when the meters were first built.
            *m = Meter::new(self.weighting, self.rate_hz)
                .map_err(|e| SolveError::Settings(e.to_string()))?;
        }
        for m in &mut self.fore_aft {
            *m = Meter::new(FORE_AFT_WEIGHTING, self.rate_hz)
                .map_err(|e| SolveError::Settings(e.to_string()))?;
        }
        for (m, travel) in self.floor.iter_mut().flatten() {
            *m = Meter::new(self.weighting, self.rate_hz)
                .map_err(|e| SolveError::Settings(e.to_string()))?;
            *travel = Moments::default();
        }
        for i in 0..2 {
            self.durability[i] = AxleDurability::new(&self.durability_settings, self.clearances[i])
                .map_err(|e| SolveError::Settings(e.to_string()))?;
        }
        self.travel = Default::default();
        self.suspension = Default::default();
        self.contact = Default::default();
        self.off_ground = [0; 2];
        self.heave = SecondMoments::default();
        self.pitch = SecondMoments::default();
        self.heave_acc = SecondMoments::default();
        self.pitch_acc = SecondMoments::default();
        Ok(())
    }

    fn summary(
        &mut self,
        vehicle: &Vehicle,
        excitation: &Excitation<'_>,
        info: RunInfo,
        exposure_s: f64,
    ) -> RunSummary {
        let statics = vehicle.static_contact_n();
        for (x, z) in self.fore_aft.iter_mut().zip(&self.seats) {
            // The zeros of seats at height 0 (see `accept`).
            x.push_zeros(z.samples() - x.samples());
        }
        let durability = [self.durability[0].finish(), self.durability[1].finish()];
        let axle = |i: usize| {
            let n = self.travel[i].count().max(1) as f64;
            AxleSummary {
                travel_rms: self.travel[i].rms(),
                travel_min: self.travel[i].min(),
                travel_max: self.travel[i].max(),
                suspension_force_rms: self.suspension[i].rms(),
                tyre_load_rms: self.contact[i].rms(),
                static_load: statics[i],
                dynamic_load_coefficient: self.contact[i].rms() / statics[i],
                time_off_ground_fraction: self.off_ground[i] as f64 / n,
                durability: durability[i].clone(),
            }
        };
        RunSummary {
            vehicle: vehicle.name.clone(),
            speed_m_s: excitation.speed_m_s,
            duration_s: excitation.duration_s(),
            length_m: excitation.profile.length_m(),
            solver: info,
            seats: vehicle
                .seats
                .iter()
                .zip(self.seats.iter().zip(&self.fore_aft))
                .zip(&self.floor)
                .map(|((s, (z, x)), floor)| {
                    let seat = SeatSummary::new(s, z.finish(), x.finish(), exposure_s);
                    match floor {
                        Some((m, travel)) => seat.with_suspension(m.finish(), travel),
                        None => seat,
                    }
                })
                .collect(),
            axles: Axles {
                front: axle(0),
                rear: axle(1),
            },
            body: BodySummary {
                heave_accel_rms: self.heave_acc.rms(),
                pitch_accel_rms: self.pitch_acc.rms(),
                heave_rms: self.heave.rms(),
                pitch_rms: self.pitch.rms(),
            },
            predicted: None,
            checks: Checks {
                findings: Vec::new(),
                energy: self.energy.balance(),
                spectral: None,
            },
        }
    }
}

/// Fore-aft acceleration (positive forward) of a body point `height_m`
/// above the CG, m/s²: a point at `(x, h)` turned nose-up by a small `θ`
/// moves by `(−h·θ, x·θ)`, so its fore-aft acceleration is `−h·θ̈`
/// (rigid body, small angles, no surge; the centripetal `−x·θ̇²` and the
/// tilt of gravity `g·θ` are left out, as gravity is for the vertical).
#[inline]
pub fn fore_aft_accel_m_s2(s: &Sample, height_m: f64) -> f64 {
    // `0 − …` rather than `−…`: a seat at height 0 gives +0, not −0.
    0.0 - height_m * s.qdd[1]
}

/// Vertical acceleration of seat `i`'s surface, m/s²: the seat mass's for
/// a suspended seat (`dof` its coordinate), else the body point's.
#[inline]
pub fn seat_accel_m_s2(s: &Sample, x_m: f64, dof: Option<usize>) -> f64 {
    match dof {
        Some(d) => s.qdd[d],
        None => s.body_point_accel_m_s2(x_m),
    }
}

/// Header of the time-history CSV; units in every column name. A seat's
/// `NAME_accel_m_s2` is at the seat surface; a suspended seat adds, after
/// the tyre loads, `NAME_floor_accel_m_s2` (the body point beneath it) and
/// `NAME_seat_travel_m` (its suspension travel, compression positive).
pub fn history_header(vehicle: &Vehicle) -> String {
    let mut h = String::from(
        "time_s,distance_m,road_front_m,road_rear_m,heave_m,pitch_rad,heave_accel_m_s2,pitch_accel_rad_s2",
    );
    for s in &vehicle.seats {
        h.push_str(&format!(",{}_accel_m_s2", s.name));
    }
    for s in &vehicle.seats {
        h.push_str(&format!(",{}{FORE_AFT_SUFFIX}_accel_m_s2", s.name));
    }
    for a in AXLE_NAMES {
        h.push_str(&format!(",travel_{a}_m"));
    }
    for a in AXLE_NAMES {
        h.push_str(&format!(",suspension_force_{a}_n"));
    }
    for a in AXLE_NAMES {
        h.push_str(&format!(",tyre_load_{a}_n"));
    }
    for (i, _, _) in vehicle.suspended_seats() {
        let name = &vehicle.seats[i].name;
        h.push_str(&format!(
            ",{name}{FLOOR_SUFFIX}_accel_m_s2,{name}_seat_travel_m"
        ));
    }
    h
}

impl SampleSink for Evaluators<'_> {
    fn start(&mut self, solver: SolverKind) -> Result<(), SolveError> {
        self.reset()?;
        self.energy.start(solver);
        if let Some(h) = self.history.as_deref_mut() {
            h.rewind()?;
            writeln!(h, "{}", self.header).map_err(|e| history_error(h, e))?;
        }
        Ok(())
    }

    #[inline]
    fn accept(&mut self, s: &Sample) -> Result<(), SolveError> {
        if self.any_suspended {
            self.push_seats_general(s);
        } else {
            self.push_floor_seats(s);
        }
        for i in 0..2 {
            self.travel[i].push(s.elements.travel_m[i]);
            self.suspension[i].push(s.elements.suspension_n[i]);
            self.contact[i].push(s.elements.contact_n[i]);
            self.durability[i].push(
                s.elements.travel_m[i],
                s.elements.suspension_n[i],
                s.elements.contact_n[i],
            );
            if !s.elements.in_contact[i] {
                self.off_ground[i] += 1;
            }
        }
        self.energy.push(s);
        self.heave.push(s.q[0]);
        self.pitch.push(s.q[1]);
        self.heave_acc.push(s.qdd[0]);
        self.pitch_acc.push(s.qdd[1]);
        self.write_history(s)
    }
}

impl Evaluators<'_> {
    /// [`SampleSink::accept`] on every sample of `chunk`, in order, with the
    /// same results bit for bit: each evaluator takes its whole column of
    /// the chunk in one loop (its state in registers, its per-run tests
    /// taken once) instead of every evaluator in turn per sample. Each
    /// evaluator still sees its values in sample order, and they share
    /// nothing, so the order between evaluators does not matter.
    ///
    /// `steps`: the energy ledger's per-sample terms of `chunk`, when they
    /// were taken on the solver's thread; the ledger then only adds them.
    fn accept_chunk(
        &mut self,
        chunk: &[Sample],
        steps: Option<&[LedgerStep]>,
    ) -> Result<(), SolveError> {
        #[cfg(target_arch = "x86_64")]
        if self.avx {
            // SAFETY: `avx` is true only where the processor has AVX.
            return unsafe { self.accept_chunk_avx(chunk, steps) };
        }
        self.accept_chunk_inlined(chunk, steps)
    }

    /// [`Evaluators::accept_chunk`] compiled for AVX where the processor has
    /// it: the same operations (AVX brings no fused multiply–add), so the
    /// same bits, in fewer instructions (three-operand forms need no
    /// register copies).
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx")]
    fn accept_chunk_avx(
        &mut self,
        chunk: &[Sample],
        steps: Option<&[LedgerStep]>,
    ) -> Result<(), SolveError> {
        self.accept_chunk_inlined(chunk, steps)
    }

    /// The body of [`Evaluators::accept_chunk`].
    #[inline(always)]
    fn accept_chunk_inlined(
        &mut self,
        chunk: &[Sample],
        steps: Option<&[LedgerStep]>,
    ) -> Result<(), SolveError> {
        if self.any_suspended {
            self.push_seats_general_chunk(chunk);
        } else {
            self.push_floor_seats_chunk(chunk);
        }
        // Neighbouring columns of a sample side by side (front, rear) as
        // the two lanes of a pair.
        let [t0, t1] = &mut self.travel;
        push_column_pairs([[t0, t1]], chunk.iter().map(|s| [s.elements.travel_m]));
        // The forces and the body's motion in one loop.
        let ([f0, f1], [c0, c1]) = (&mut self.suspension, &mut self.contact);
        let (h, p, ha, pa) = (
            &mut self.heave,
            &mut self.pitch,
            &mut self.heave_acc,
            &mut self.pitch_acc,
        );
        let rows = |s: &Sample| {
            let e = &s.elements;
            let (q, qdd) = ([s.q[0], s.q[1]], [s.qdd[0], s.qdd[1]]);
            [e.suspension_n, e.contact_n, q, qdd]
        };
        push_column_pairs(
            [[f0, f1], [c0, c1], [h, p], [ha, pa]],
            chunk.iter().map(rows),
        );
        for i in 0..2 {
            self.durability[i].push_rows(
                chunk,
                |s| s.elements.travel_m[i],
                |s| s.elements.suspension_n[i],
                |s| s.elements.contact_n[i],
            );
        }
        let mut off = [0u64; 2];
        for s in chunk {
            let c = s.elements.in_contact;
            off[0] += !c[0] as u64;
            off[1] += !c[1] as u64;
        }
        self.off_ground[0] += off[0];
        self.off_ground[1] += off[1];
        match steps {
            Some(steps) => self.energy.add_steps(chunk, steps),
            None => self.energy.push_block(chunk),
        }
        if self.history.is_some() {
            for s in chunk {
                self.write_history(s)?;
            }
        }
        Ok(())
    }

    /// [`Evaluators::push_floor_seats`] over a chunk, seat by seat.
    #[inline(always)]
    fn push_floor_seats_chunk(&mut self, chunk: &[Sample]) {
        let seats = self.seats.iter_mut().zip(self.seat_x_m.iter().copied());
        push_meters(seats, chunk, |s, x| s.body_point_accel_m_s2(x));
        self.push_fore_aft_chunk(chunk);
    }

    /// [`Evaluators::push_seats_general`] over a chunk, seat by seat.
    #[inline(always)]
    fn push_seats_general_chunk(&mut self, chunk: &[Sample]) {
        let seats = self.seats.iter_mut().zip(self.seat_surface.iter().copied());
        push_meters(seats, chunk, |s, (x, dof)| seat_accel_m_s2(s, x, dof));
        let floors = (self.floor.iter_mut().zip(&self.seat_x_m))
            .filter_map(|(f, &x)| f.as_mut().map(|(m, _)| (m, x)));
        push_meters(floors, chunk, |s, x| s.body_point_accel_m_s2(x));
        for (f, d) in self.floor.iter_mut().zip(&self.seat_dof) {
            if let (Some((_, travel)), Some((_, slot))) = (f, d) {
                let slot = *slot;
                travel.push_all(chunk.iter().map(|s| s.elements.seat_travel_m[slot]));
            }
        }
        self.push_fore_aft_chunk(chunk);
    }

    /// The fore-aft meters of the seats above the CG height (a seat at
    /// height 0 moves +0 fore and aft: its zeros are counted in `summary`).
    #[inline(always)]
    fn push_fore_aft_chunk(&mut self, chunk: &[Sample]) {
        let raised = (self.fore_aft.iter_mut().zip(self.seat_h_m.iter().copied()))
            .filter(|(_, h)| *h != 0.0);
        push_meters(raised, chunk, fore_aft_accel_m_s2);
    }

    /// The seats' measures when every seat sits on the floor (the common
    /// case): one pass, no suspended-seat bookkeeping.
    #[inline(always)]
    fn push_floor_seats(&mut self, s: &Sample) {
        let seats = self.seats.iter_mut().zip(&mut self.fore_aft);
        for ((m, fa), (&x, &h)) in seats.zip(self.seat_x_m.iter().zip(&self.seat_h_m)) {
            m.push(s.body_point_accel_m_s2(x));
            // A seat at height 0 moves +0 fore and aft: its zeros are
            // counted in `summary` (`Meter::push_zeros`), not filtered.
            if h != 0.0 {
                fa.push(fore_aft_accel_m_s2(s, h));
            }
        }
    }

    /// The seats' measures with suspended seats among them: seat surface,
    /// floor beneath and seat travel.
    #[inline(always)]
    fn push_seats_general(&mut self, s: &Sample) {
        for ((m, x), d) in self
            .seats
            .iter_mut()
            .zip(&self.seat_x_m)
            .zip(&self.seat_dof)
        {
            m.push(seat_accel_m_s2(s, *x, d.map(|d| d.0)));
        }
        for ((f, x), d) in self
            .floor
            .iter_mut()
            .zip(&self.seat_x_m)
            .zip(&self.seat_dof)
        {
            if let (Some((m, travel)), Some((_, slot))) = (f, d) {
                m.push(s.body_point_accel_m_s2(*x));
                travel.push(s.elements.seat_travel_m[*slot]);
            }
        }
        for (m, h) in self.fore_aft.iter_mut().zip(&self.seat_h_m) {
            if *h != 0.0 {
                m.push(fore_aft_accel_m_s2(s, *h));
            }
        }
    }

    /// Writes one history row (when a history is being written).
    #[inline]
    fn write_history(&mut self, s: &Sample) -> Result<(), SolveError> {
        let Some(h) = self.history.as_deref_mut() else {
            return Ok(());
        };
        use std::fmt::Write as _;
        let line = &mut self.line;
        line.clear();
        let _ = write!(
            line,
            "{},{},{:e},{:e},{:e},{:e},{:e},{:e}",
            fmt_micro(s.time_s),
            fmt_micro(s.inputs.distance_m),
            s.inputs.road.elevation_m[0],
            s.inputs.road.elevation_m[1],
            s.q[0],
            s.q[1],
            s.qdd[0],
            s.qdd[1]
        );
        for (x, d) in self.seat_x_m.iter().zip(&self.seat_dof) {
            let _ = write!(line, ",{:e}", seat_accel_m_s2(s, *x, d.map(|d| d.0)));
        }
        for height in &self.seat_h_m {
            let _ = write!(line, ",{:e}", fore_aft_accel_m_s2(s, *height));
        }
        for v in s
            .elements
            .travel_m
            .iter()
            .chain(&s.elements.suspension_n)
            .chain(&s.elements.contact_n)
        {
            let _ = write!(line, ",{v:e}");
        }
        for (x, d) in self.seat_x_m.iter().zip(&self.seat_dof) {
            if let Some((_, slot)) = d {
                let floor = s.body_point_accel_m_s2(*x);
                let _ = write!(line, ",{floor:e},{:e}", s.elements.seat_travel_m[*slot]);
            }
        }
        line.push('\n');
        h.write_all(line.as_bytes())
            .map_err(|e| history_error(h, e))?;
        Ok(())
    }
}

/// Pushes `accel(sample, p)` of every sample of `chunk` into each meter of
/// `meters` with its `p`, two meters at a time ([`Meter::push_all_pair`]:
/// the same measures, bit for bit, as one at a time).
#[inline(always)]
fn push_meters<'m, P: Copy>(
    meters: impl Iterator<Item = (&'m mut Meter, P)>,
    chunk: &[Sample],
    accel: impl Fn(&Sample, P) -> f64 + Copy,
) {
    let mut waiting: Option<(&mut Meter, P)> = None;
    for (m, p) in meters {
        match waiting.take() {
            None => waiting = Some((m, p)),
            Some((a, pa)) => {
                let both = move |s: &Sample| [accel(s, pa), accel(s, p)];
                Meter::push_all_pair(a, m, chunk.iter().map(both));
            }
        }
    }
    if let Some((m, p)) = waiting {
        m.push_all(chunk.iter().map(|s| accel(s, p)));
    }
}

fn history_error(h: &AtomicFile, e: std::io::Error) -> SolveError {
    SolveError::Output(ExportError::Io {
        path: h.target().to_path_buf(),
        source: e,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::road::{RoadClass, RoadSpec, generate};
    use crate::solve::SolverChoice;
    use crate::vehicle::tests::half_car;

    /// The summary of a run, as printed.
    fn json(v: &Vehicle, p: &Profile, choice: SolverChoice, one_thread: bool) -> String {
        let mut options = RunOptions::at_speed(20.0);
        options.solver.choice = choice;
        let run = || serde_json::to_string(&simulate(v, p, &options, None).unwrap()).unwrap();
        if one_thread {
            // Inside a pool the evaluators stay on the solver's thread.
            rayon::ThreadPoolBuilder::new()
                .num_threads(1)
                .build()
                .unwrap()
                .install(run)
        } else {
            run()
        }
    }

    #[test]
    fn the_evaluator_thread_gives_the_one_thread_results_bit_for_bit() {
        // Reference: the same evaluators fed on the solver's own thread.
        // Exact runs, and an auto run on a rough road whose tyre lifts off,
        // so the evaluators restart for the adaptive re-run midway.
        let v = half_car();
        let smooth = generate(&RoadSpec::from_class(RoadClass::B, 300.0, 0.05, 4)).unwrap();
        let rough = generate(&RoadSpec::from_class(RoadClass::E, 200.0, 0.05, 2)).unwrap();
        let mut restarted = false;
        for (p, choice) in [
            (&smooth, SolverChoice::Exact),
            (&rough, SolverChoice::Exact),
            (&rough, SolverChoice::Auto),
        ] {
            let threaded = json(&v, p, choice, false);
            assert_eq!(threaded, json(&v, p, choice, true), "{choice:?}");
            restarted |= threaded.contains("\"fallback\":\"");
        }
        assert!(
            restarted,
            "the rough road should make the auto run fall back"
        );
    }

    #[test]
    fn suspended_and_raised_seats_give_the_one_thread_results_bit_for_bit() {
        // The block path for suspended seats (seat, floor and seat travel)
        // and for seats above the CG (fore-aft meters): the demo van, whose
        // seats are suspended and raised, against the same evaluators fed on
        // the solver's own thread.
        let path = format!(
            "{}/profiles/vehicles/demo_van_suspended_seat.toml",
            env!("CARGO_MANIFEST_DIR")
        );
        let v = crate::vehicle::read_vehicle(std::path::Path::new(&path)).unwrap();
        assert!(v.suspended_seat_count() > 0 && v.seats.iter().any(|s| s.height_m != 0.0));
        let road = generate(&RoadSpec::from_class(RoadClass::C, 300.0, 0.05, 3)).unwrap();
        for choice in [SolverChoice::Exact, SolverChoice::Auto] {
            let threaded = json(&v, &road, choice, false);
            assert_eq!(threaded, json(&v, &road, choice, true), "{choice:?}");
            assert!(threaded.contains("\"suspension_travel\":{"), "{threaded}");
        }
    }
}
