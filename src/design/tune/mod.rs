//! `roughride tune`: the values of some vehicle-file keys, within bounds,
//! that minimise a seat's comfort measure over a set of roads and speeds,
//! under upper limits on travel, tyre load and time off the ground.
//!
//! The stages: [`problem`] parses the parameters (`--vary KEY=LO:HI`), the
//! objective and the limits against the vehicle file; [`evaluate`] judges
//! one design on the cases, in the frequency domain (linear vehicles on
//! generated roads, the prediction `simulate` prints) or in the time domain
//! (every case run as `sweep` runs it); [`search`] drives a multi-start
//! COBYLA search over the bounds. [`tune`] strings them together and
//! always judges the start and the optimum in the time domain as well, so
//! `objective` and `start_objective` are the values `simulate` gives on the
//! cases for the start file and for the tuned file.
//!
//! A design is the vehicle file with the parameter values set and read
//! again by the vehicle file's own reader ([`crate::design::vary`]), so the
//! tuned file is a vehicle file `simulate` accepts as it is.

pub mod evaluate;
pub mod problem;
pub mod search;
#[cfg(test)]
mod tests;

use serde::Serialize;

use self::evaluate::{CaseValues, build_roads, objective_of, spectral_cases, time_cases, worst_of};
use self::problem::{Limit, Measure, Objective, Parameter, Study, StudyRoad};
use self::search::{Outcome, SearchSettings, Trial, search};
use crate::design::vary::{Key, VehicleDocument};
use crate::pipeline::RunOptions;
use crate::vehicle::Vehicle;

/// How designs are judged during the search.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Method {
    /// Spectral when it applies (linear vehicle, generated roads, aw), else time domain.
    Auto,
    /// The frequency-domain prediction.
    Spectral,
    /// Time-domain runs of every case.
    TimeDomain,
}

/// A limit binds when the optimum's value is within this fraction of it.
pub const BINDING_FRACTION: f64 = 0.01;

/// Everything a tune needs.
#[derive(Debug, Clone)]
pub struct Problem<'a> {
    /// The vehicle file.
    pub doc: &'a VehicleDocument,
    /// The parameters, in `--vary` order.
    pub parameters: Vec<Parameter>,
    /// The cases.
    pub study: Study,
    /// The objective.
    pub objective: Objective,
    /// The limits.
    pub limits: Vec<Limit>,
    /// Solver and weighting of the runs (each case sets its speed).
    pub options: RunOptions,
    /// How designs are judged in the search.
    pub method: Method,
    /// The search settings.
    pub search: SearchSettings,
    /// Threads for the time-domain cases.
    pub jobs: usize,
    /// Judge the start and the optimum in the time domain as well (the
    /// command always does; off only for checks of the search alone).
    pub confirm: bool,
}

/// A limit at one design.
#[derive(Debug, Clone, Serialize)]
pub struct LimitValue {
    /// The limit's name (the sweep column).
    pub name: String,
    /// The largest value over the cases.
    pub value: f64,
    /// The limit.
    pub max: f64,
    /// Whether the value is within the limit.
    pub met: bool,
    /// Whether the value is within [`BINDING_FRACTION`] of the limit (or past it).
    pub binding: bool,
}

/// One design judged on the cases.
#[derive(Debug, Clone, Serialize)]
pub struct DesignValues {
    /// The parameter values, key → value.
    pub values: serde_json::Map<String, serde_json::Value>,
    /// The objective.
    pub objective: f64,
    /// Every limit.
    pub limits: Vec<LimitValue>,
}

/// One improvement of the best value during the search.
#[derive(Debug, Clone, Serialize)]
pub struct HistoryEntry {
    /// The evaluation (1-based) that found it.
    pub evaluation: usize,
    /// The objective (as the search judged it).
    pub objective: f64,
    /// The parameter values.
    pub values: serde_json::Map<String, serde_json::Value>,
}

/// One parameter's bounds, start and optimum.
#[derive(Debug, Clone, Serialize)]
pub struct ParameterReport {
    /// The key.
    pub key: String,
    /// Lower bound.
    pub lo: f64,
    /// Upper bound.
    pub hi: f64,
    /// Start value.
    pub start: f64,
    /// Tuned value.
    pub best: f64,
}

/// The result of a tune (the `tune --json` object).
#[derive(Debug, Clone, Serialize)]
pub struct TuneReport {
    /// Vehicle name.
    pub vehicle: String,
    /// The objective in words.
    pub objective_description: String,
    /// How the search judged designs (`spectral` or `time_domain`).
    pub method: Method,
    /// Parameter values at the optimum, key → value.
    pub best: serde_json::Map<String, serde_json::Value>,
    /// Objective at the optimum, time domain (what `simulate` gives on the cases).
    pub objective: f64,
    /// Objective at the start, time domain.
    pub start_objective: f64,
    /// Distinct designs evaluated by the search.
    pub evaluations: usize,
    /// COBYLA runs made.
    pub starts: usize,
    /// Time-domain cases per design.
    pub cases: usize,
    /// Bounds, start and optimum per parameter.
    pub parameters: Vec<ParameterReport>,
    /// The start, time domain.
    pub start: DesignValues,
    /// The optimum, time domain.
    pub optimum: DesignValues,
    /// The search's own values at the start and the optimum (spectral
    /// method only; the time-domain method's are `start` and `optimum`).
    pub spectral: Option<SpectralPair>,
    /// The limits that bind at the optimum (as the search judged it).
    pub binding: Vec<String>,
    /// Improvements of the best value, in order.
    pub history: Vec<HistoryEntry>,
    /// Anything the user should know (e.g. a limit the time domain exceeds).
    pub warnings: Vec<String>,
    /// The tuned vehicle file's text (not in the JSON; `-o` writes it).
    #[serde(skip)]
    pub tuned_file: String,
}

/// Spectral values at the start and at the optimum.
#[derive(Debug, Clone, Serialize)]
pub struct SpectralPair {
    /// Start.
    pub start: DesignValues,
    /// Optimum.
    pub optimum: DesignValues,
}

fn values_map(keys: &[&Key], x: &[f64]) -> serde_json::Map<String, serde_json::Value> {
    keys.iter()
        .zip(x)
        .map(|(k, v)| (k.to_string(), serde_json::Value::from(*v)))
        .collect()
}

/// True when the frequency-domain path applies: a linear vehicle (and no
/// parameter that can make it nonlinear), generated roads only, aw.
fn spectral_applies(p: &Problem<'_>) -> Result<(), String> {
    let nonlinear_keys = [
        "damping_bump",
        "damping_rebound",
        "bump_clearance",
        "rebound_clearance",
        "stop_rate",
    ];
    if !p.doc.vehicle().is_linear() {
        return Err("the vehicle is not linear (asymmetric dampers or stops)".into());
    }
    if let Some(k) = p
        .parameters
        .iter()
        .find(|q| nonlinear_keys.iter().any(|n| q.key.as_str().ends_with(n)))
    {
        return Err(format!("`{}` can make the vehicle nonlinear", k.key));
    }
    if p.study
        .roads
        .iter()
        .any(|r| matches!(r, StudyRoad::Profile { .. }))
    {
        return Err("a --profile road has no spectrum to integrate".into());
    }
    if p.objective.measure == Measure::Vdv {
        return Err("VDV needs the time history".into());
    }
    if p.limits
        .iter()
        .any(|l| matches!(l.quantity, problem::Quantity::TimePastBump(_)))
    {
        return Err("time past the bump stop needs the time history".into());
    }
    Ok(())
}

/// The method the search will use, or why the one asked for cannot be.
pub fn resolve_method(p: &Problem<'_>) -> Result<Method, crate::Error> {
    match (p.method, spectral_applies(p)) {
        (Method::TimeDomain, _) | (Method::Auto, Err(_)) => Ok(Method::TimeDomain),
        (Method::Auto | Method::Spectral, Ok(())) => Ok(Method::Spectral),
        (Method::Spectral, Err(why)) => Err(crate::Error::Usage(format!(
            "--method spectral: {why}; use --method time"
        ))),
    }
}

/// Judges designs: builds the vehicle for parameter values and evaluates it.
struct Judge<'p, 'a> {
    p: &'p Problem<'a>,
    roads: Vec<Vec<std::sync::Arc<crate::road::Profile>>>,
    pool: rayon::ThreadPool,
}

impl Judge<'_, '_> {
    fn vehicle(&self, x: &[f64]) -> Result<(Vehicle, String), crate::Error> {
        let assignments: Vec<(&Key, f64)> = self
            .p
            .parameters
            .iter()
            .map(|q| &q.key)
            .zip(x.iter().copied())
            .collect();
        self.p
            .doc
            .edited(&assignments)
            .map(|e| (e.vehicle, e.text))
            .map_err(|e| {
                let combo: Vec<String> = assignments
                    .iter()
                    .map(|(k, v)| format!("{k}={v}"))
                    .collect();
                crate::Error::Usage(format!(
                    "tune: the design {} is refused: {e}",
                    combo.join(", ")
                ))
            })
    }

    fn cases(&self, v: &Vehicle, method: Method) -> Result<Vec<CaseValues>, crate::Error> {
        let seat = self.p.objective.seat;
        match method {
            Method::Spectral => spectral_cases(v, &self.p.study, seat, &self.p.options),
            _ => time_cases(
                v,
                &self.p.study,
                &self.roads,
                seat,
                &self.p.options,
                &self.pool,
            ),
        }
    }

    /// Objective and per-limit excess of design `x`.
    fn judge(
        &self,
        x: &[f64],
        method: Method,
    ) -> Result<(f64, Vec<f64>, Vec<CaseValues>), crate::Error> {
        let (v, _) = self.vehicle(x)?;
        let cases = self.cases(&v, method)?;
        let obj = objective_of(&self.p.objective, &cases);
        let excess = self
            .p
            .limits
            .iter()
            .map(|l| l.excess(worst_of(l.quantity, &cases)))
            .collect();
        Ok((obj, excess, cases))
    }

    fn design(&self, x: &[f64], method: Method) -> Result<DesignValues, crate::Error> {
        let (objective, _, cases) = self.judge(x, method)?;
        let keys: Vec<&Key> = self.p.parameters.iter().map(|q| &q.key).collect();
        Ok(DesignValues {
            values: values_map(&keys, x),
            objective,
            limits: self
                .p
                .limits
                .iter()
                .map(|l| {
                    let value = worst_of(l.quantity, &cases);
                    LimitValue {
                        name: l.name.clone(),
                        value,
                        max: l.max,
                        met: l.excess(value) <= 1e-9,
                        binding: value >= (1.0 - BINDING_FRACTION) * l.max,
                    }
                })
                .collect(),
        })
    }
}

/// Runs the tune. `on_evaluation(done, budget)` is called after each
/// evaluation of the search (for a progress display).
pub fn tune(
    p: &Problem<'_>,
    mut on_evaluation: impl FnMut(usize, usize),
) -> Result<TuneReport, crate::Error> {
    if p.parameters.is_empty() {
        return Err(crate::Error::Usage(
            "tune: give at least one --vary KEY=LO:HI".into(),
        ));
    }
    let method = resolve_method(p)?;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(p.jobs.max(1))
        .thread_name(|i| format!("roughride-tune-{i}"))
        .build()
        .map_err(|e| {
            crate::Error::Usage(format!("--jobs {}: cannot start the threads: {e}", p.jobs))
        })?;
    let judge = Judge {
        p,
        roads: if p.confirm || method == Method::TimeDomain {
            build_roads(&p.study)?
        } else {
            Vec::new()
        },
        pool,
    };
    let at =
        |u: &[f64]| -> Vec<f64> { p.parameters.iter().zip(u).map(|(q, u)| q.at(*u)).collect() };
    let start_x: Vec<f64> = p.parameters.iter().map(|q| q.start).collect();
    let start_u: Vec<f64> = p.parameters.iter().map(|q| q.unit(q.start)).collect();
    let budget = p.search.max_evaluations;
    let outcome: Outcome = search(
        &start_u,
        &p.search,
        |u| {
            // The start is evaluated at its exact file value, not the
            // rounded point of the cube.
            let x = if u == start_u.as_slice() {
                start_x.clone()
            } else {
                at(u)
            };
            judge.judge(&x, method).map(|(o, e, _)| (o, e))
        },
        |_, done| on_evaluation(done, budget),
        || crate::solve::cancel_requested().then(|| crate::solve::SolveError::Interrupted.into()),
    )?;
    let x_of = |t: &Trial| {
        if t.u == start_u {
            start_x.clone()
        } else {
            at(&t.u)
        }
    };
    let Some(best) = outcome.best else {
        return Err(infeasible(p, &outcome, &x_of));
    };
    let best_x = x_of(&outcome.trials[best]);
    report(p, &judge, method, &outcome, &start_x, &best_x, &x_of)
}

fn infeasible(p: &Problem<'_>, o: &Outcome, x_of: &dyn Fn(&Trial) -> Vec<f64>) -> crate::Error {
    let closest = o
        .trials
        .iter()
        .min_by(|a, b| a.violation().total_cmp(&b.violation()));
    let mut msg = format!(
        "tune: no design within the bounds meets the limits ({} designs tried)",
        o.trials.len()
    );
    if let Some(t) = closest {
        let x = x_of(t);
        let values: Vec<String> = p
            .parameters
            .iter()
            .zip(&x)
            .map(|(q, v)| format!("{}={v}", q.key))
            .collect();
        msg.push_str(&format!("; the closest, {}, exceeds", values.join(", ")));
        let over: Vec<String> = p
            .limits
            .iter()
            .zip(&t.excess)
            .filter(|(_, e)| **e > 1e-9)
            .map(|(l, e)| format!(" --limit {}={} by {:.1} %", l.name, l.max, 100.0 * e))
            .collect();
        msg.push_str(&over.join(","));
    }
    crate::Error::Usage(msg)
}

/// Warnings for the limits the time-domain runs exceed at an optimum the
/// prediction found within them.
fn exceeded_in_time_domain(optimum: &DesignValues) -> Vec<String> {
    optimum
        .limits
        .iter()
        .filter(|l| !l.met)
        .map(|l| {
            format!(
                "at the optimum the time-domain runs exceed {} = {} ({}); the frequency-domain prediction met it",
                l.name,
                l.max,
                crate::report::sig(l.value, 4)
            )
        })
        .collect()
}

/// The evaluations that improved the best value, in order.
fn history(keys: &[&Key], o: &Outcome, x_of: &dyn Fn(&Trial) -> Vec<f64>) -> Vec<HistoryEntry> {
    o.history
        .iter()
        .map(|&i| HistoryEntry {
            evaluation: i + 1,
            objective: o.trials[i].objective,
            values: values_map(keys, &x_of(&o.trials[i])),
        })
        .collect()
}

fn parameter_reports(p: &Problem<'_>, best_x: &[f64]) -> Vec<ParameterReport> {
    p.parameters
        .iter()
        .zip(best_x)
        .map(|(q, b)| ParameterReport {
            key: q.key.to_string(),
            lo: q.lo,
            hi: q.hi,
            start: q.start,
            best: *b,
        })
        .collect()
}

/// A tuned value within 0.1 % of its range from a bound: the search was
/// stopped by the range, not by the objective or a limit, so the user
/// should know the optimum may lie beyond it.
fn at_bound_warnings(parameters: &[ParameterReport]) -> Vec<String> {
    let mut out = Vec::new();
    for q in parameters {
        let tol = 1e-3 * (q.hi - q.lo);
        let side = if q.best - q.lo <= tol {
            Some(("lower", q.lo))
        } else if q.hi - q.best <= tol {
            Some(("upper", q.hi))
        } else {
            None
        };
        if let Some((side, bound)) = side {
            out.push(format!(
                "{} ended at its {side} bound ({bound}): the range stopped the search, not the objective or a limit; widen the range if the design allows",
                q.key
            ));
        }
    }
    out
}

fn report(
    p: &Problem<'_>,
    judge: &Judge<'_, '_>,
    method: Method,
    o: &Outcome,
    start_x: &[f64],
    best_x: &[f64],
    x_of: &dyn Fn(&Trial) -> Vec<f64>,
) -> Result<TuneReport, crate::Error> {
    let keys: Vec<&Key> = p.parameters.iter().map(|q| &q.key).collect();
    let confirm = if p.confirm {
        Method::TimeDomain
    } else {
        method
    };
    let start = judge.design(start_x, confirm)?;
    let optimum = judge.design(best_x, confirm)?;
    let spectral = match (method, confirm) {
        (Method::Spectral, Method::TimeDomain) => Some(SpectralPair {
            start: judge.design(start_x, Method::Spectral)?,
            optimum: judge.design(best_x, Method::Spectral)?,
        }),
        _ => None,
    };
    let searched = spectral.as_ref().map_or(&optimum, |s| &s.optimum);
    let binding = searched
        .limits
        .iter()
        .filter(|l| l.binding)
        .map(|l| l.name.clone())
        .collect();
    let parameters = parameter_reports(p, best_x);
    let mut warnings = exceeded_in_time_domain(&optimum);
    warnings.extend(at_bound_warnings(&parameters));
    let history = history(&keys, o, x_of);
    let (_, tuned_file) = judge.vehicle(best_x)?;
    let cases = judge.roads.iter().map(Vec::len).sum::<usize>() * p.study.speeds.len();
    // (0 when nothing ran in the time domain.)
    Ok(TuneReport {
        vehicle: p.doc.vehicle().name.clone(),
        objective_description: p.objective.describe(),
        method,
        best: values_map(&keys, best_x),
        objective: optimum.objective,
        start_objective: start.objective,
        evaluations: o.trials.len(),
        starts: o.starts,
        cases,
        parameters,
        start,
        optimum,
        spectral,
        binding,
        history,
        warnings,
        tuned_file,
    })
}
