//! The search: COBYLA (Powell's Constrained Optimization BY Linear
//! Approximations, M. J. D. Powell, "A direct search optimization method
//! that models the objective and constraint functions by linear
//! interpolation", in *Advances in Optimization and Numerical Analysis*,
//! Kluwer 1994, pp. 51–67), from the `cobyla` crate (a pure-Rust
//! translation of NLopt's implementation), started from several points.
//!
//! COBYLA needs no derivatives, keeps every evaluation inside the bounds
//! (NLopt clamps the trial point), treats each constraint separately and is
//! deterministic. The search runs on the unit cube (each parameter mapped
//! from its bounds to 0–1), so one trust-region radius suits every
//! parameter whatever its unit. Starts: the file's design, then points of
//! the Halton sequence in bases 2, 3, 5, … (a deterministic spread over the
//! cube; Halton, *Numerische Mathematik* 2, 1960). Every distinct point is
//! evaluated once (a cache by its bits), so COBYLA asking for the objective
//! and each constraint at the same point costs one evaluation.

use std::cell::RefCell;
use std::collections::HashMap;

use cobyla::{RhoBeg, StopTols, minimize};

/// One evaluated design, in unit-cube coordinates.
#[derive(Debug, Clone, PartialEq)]
pub struct Trial {
    /// Coordinates in the unit cube.
    pub u: Vec<f64>,
    /// Objective.
    pub objective: f64,
    /// Per limit, `value / limit − 1` (≤ 0 where the limit is met).
    pub excess: Vec<f64>,
}

impl Trial {
    /// Meets every limit (within 10⁻⁹ relative).
    pub fn feasible(&self) -> bool {
        self.excess.iter().all(|e| *e <= 1e-9)
    }

    /// The largest excess over the limits (0 when none is exceeded).
    pub fn violation(&self) -> f64 {
        self.excess.iter().copied().fold(0.0, f64::max)
    }
}

/// What the search did.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// Every distinct design evaluated, in order.
    pub trials: Vec<Trial>,
    /// Indices into `trials` at which the best feasible value improved.
    pub history: Vec<usize>,
    /// The best feasible trial, if any trial met every limit.
    pub best: Option<usize>,
    /// COBYLA runs made.
    pub starts: usize,
}

/// How the search runs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SearchSettings {
    /// COBYLA runs: the start design, then Halton points.
    pub starts: usize,
    /// Most distinct evaluations over all runs.
    pub max_evaluations: usize,
    /// Final trust-region radius, in unit-cube coordinates (the precision
    /// asked of each parameter, as a fraction of its range).
    pub precision: f64,
    /// First trust-region radius, unit-cube coordinates.
    pub first_step: f64,
}

impl Default for SearchSettings {
    fn default() -> Self {
        SearchSettings {
            starts: 4,
            max_evaluations: 400,
            precision: 1e-4,
            first_step: 0.25,
        }
    }
}

/// The `k`-th point (k ≥ 1) of the Halton sequence in `n` dimensions.
pub fn halton(k: usize, n: usize) -> Vec<f64> {
    const PRIMES: [usize; 12] = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37];
    (0..n)
        .map(|d| {
            let base = PRIMES[d % PRIMES.len()];
            let (mut i, mut f, mut r) = (k, 1.0, 0.0);
            while i > 0 {
                f /= base as f64;
                r += f * (i % base) as f64;
                i /= base;
            }
            r
        })
        .collect()
}

/// Result of one evaluation for the search: objective and per-limit
/// excess, or why it could not be evaluated (which stops the search).
pub type Evaluated<E> = Result<(f64, Vec<f64>), E>;

struct State<E> {
    cache: HashMap<Vec<u64>, usize>,
    trials: Vec<Trial>,
    history: Vec<usize>,
    best: Option<usize>,
    error: Option<E>,
    budget_left: usize,
}

/// The evaluations of a search: each distinct point once, within the
/// budget, until an error or a stop. COBYLA takes `Fn` callbacks, so the
/// state and the caller's closures live in `RefCell`s.
struct Evaluations<E, F, T, S> {
    state: RefCell<State<E>>,
    eval: RefCell<F>,
    on_trial: RefCell<T>,
    stop: S,
}

impl<E, F, T, S> Evaluations<E, F, T, S>
where
    F: FnMut(&[f64]) -> Evaluated<E>,
    T: FnMut(&Trial, usize),
    S: Fn() -> Option<E>,
{
    /// The trial at `u` (evaluated now or found in the cache), or `None`
    /// once the search has stopped (budget, error, interruption).
    fn at(&self, u: &[f64]) -> Option<Trial> {
        let key: Vec<u64> = u.iter().map(|x| x.to_bits()).collect();
        let mut s = self.state.borrow_mut();
        if let Some(&i) = s.cache.get(&key) {
            return Some(s.trials[i].clone());
        }
        if s.error.is_some() || s.budget_left == 0 {
            return None;
        }
        if let Some(e) = (self.stop)() {
            s.error = Some(e);
            return None;
        }
        let (objective, excess) = match (self.eval.borrow_mut())(u) {
            Ok(v) => v,
            Err(e) => {
                s.error = Some(e);
                return None;
            }
        };
        let t = Trial {
            u: u.to_vec(),
            objective,
            excess,
        };
        let i = s.trials.len();
        let better = t.feasible()
            && t.objective.is_finite()
            && s.best.is_none_or(|b| t.objective < s.trials[b].objective);
        s.trials.push(t.clone());
        s.cache.insert(key, i);
        s.budget_left -= 1;
        if better {
            s.best = Some(i);
            s.history.push(i);
        }
        (self.on_trial.borrow_mut())(&t, i + 1);
        Some(t)
    }

    fn can_go_on(&self) -> bool {
        let s = self.state.borrow();
        s.budget_left > 0 && s.error.is_none()
    }
}

/// One COBYLA run from `x0` with `m` limits, the objective divided by
/// `scale`, at most `max_calls` calls. A stopped search answers every call
/// with the same values, which makes COBYLA shrink its trust region and
/// return at once.
fn cobyla_run<E, F, T, S>(
    ev: &Evaluations<E, F, T, S>,
    x0: &[f64],
    m: usize,
    scale: f64,
    max_calls: usize,
    settings: &SearchSettings,
) where
    F: FnMut(&[f64]) -> Evaluated<E>,
    T: FnMut(&Trial, usize),
    S: Fn() -> Option<E>,
{
    let n = x0.len();
    let objective = |u: &[f64], _: &mut ()| ev.at(u).map_or(0.0, |t| t.objective / scale);
    // COBYLA's constraints are met where they are ≥ 0.
    let constraint = |j: usize| move |u: &[f64], _: &mut ()| ev.at(u).map_or(0.0, |t| -t.excess[j]);
    let constraints: Vec<_> = (0..m).map(constraint).collect();
    let cons: Vec<&dyn cobyla::Func<()>> = constraints
        .iter()
        .map(|c| c as &dyn cobyla::Func<()>)
        .collect();
    // The outcome is read from the evaluations, not from COBYLA's answer
    // (the best feasible design over every run wins).
    let _ = minimize(
        objective,
        x0,
        &vec![(0.0, 1.0); n],
        &cons,
        (),
        max_calls,
        RhoBeg::All(settings.first_step),
        Some(StopTols {
            xtol_abs: vec![settings.precision; n],
            ..StopTols::default()
        }),
    );
}

/// Minimises over the unit cube from `start` (and Halton points),
/// calling `eval` once per distinct point and `on_trial` after each. Inside
/// COBYLA the objective is divided by its value at the start, so the
/// tolerances are relative. The first error stops the search and is
/// returned; so does `stop()` giving one (checked before each evaluation).
pub fn search<E>(
    start: &[f64],
    settings: &SearchSettings,
    eval: impl FnMut(&[f64]) -> Evaluated<E>,
    on_trial: impl FnMut(&Trial, usize),
    stop: impl Fn() -> Option<E>,
) -> Result<Outcome, E> {
    let n = start.len();
    let ev = Evaluations {
        state: RefCell::new(State {
            cache: HashMap::new(),
            trials: Vec::new(),
            history: Vec::new(),
            best: None,
            error: None,
            budget_left: settings.max_evaluations.max(1),
        }),
        eval: RefCell::new(eval),
        on_trial: RefCell::new(on_trial),
        stop,
    };
    // The start first: it gives the limits' count and the scale.
    let mut starts = 0;
    if let Some(first) = ev.at(start) {
        let m = first.excess.len();
        let scale = Some(first.objective.abs())
            .filter(|s| s.is_finite() && *s > 0.0)
            .unwrap_or(1.0);
        let runs = settings.starts.max(1);
        for k in 0..runs {
            if !ev.can_go_on() {
                break;
            }
            let x0 = if k == 0 { start.to_vec() } else { halton(k, n) };
            // Each run gets an equal share of what is left (COBYLA's count
            // includes cache hits, so allow it more calls than evaluations).
            let left = ev.state.borrow().budget_left;
            let share = (left / (runs - k)).max(n + 2);
            starts += 1;
            cobyla_run(&ev, &x0, m, scale, 4 * share, settings);
        }
    }
    let s = ev.state.into_inner();
    if let Some(e) = s.error {
        return Err(e);
    }
    Ok(Outcome {
        trials: s.trials,
        history: s.history,
        best: s.best,
        starts,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn halton_points_are_the_radical_inverses() {
        // Halton (1960): base-2 digits of k mirrored about the point.
        assert_eq!(halton(1, 2), vec![0.5, 1.0 / 3.0]);
        assert_eq!(halton(2, 2), vec![0.25, 2.0 / 3.0]);
        assert_eq!(halton(3, 1), vec![0.75]);
    }

    #[test]
    fn finds_a_bounded_quadratic_minimum_and_respects_a_constraint() {
        // f = (x−0.3)² + (y−0.8)², minimum 0 at (0.3, 0.8).
        let f = |u: &[f64]| (u[0] - 0.3).powi(2) + (u[1] - 0.8).powi(2);
        let out = search::<()>(
            &[0.9, 0.1],
            &SearchSettings::default(),
            |u| Ok((f(u), vec![])),
            |_, _| {},
            || None,
        )
        .unwrap();
        let b = &out.trials[out.best.unwrap()];
        assert!(
            (b.u[0] - 0.3).abs() < 1e-3 && (b.u[1] - 0.8).abs() < 1e-3,
            "{b:?}"
        );
        // With x + y ≤ 0.6 (excess (x+y)/0.6 − 1) the optimum is the point
        // of the line nearest (0.3, 0.8): (0.05, 0.55) (Lagrange).
        let out = search::<()>(
            &[0.1, 0.1],
            &SearchSettings::default(),
            |u| Ok((f(u), vec![(u[0] + u[1]) / 0.6 - 1.0])),
            |_, _| {},
            || None,
        )
        .unwrap();
        let b = &out.trials[out.best.unwrap()];
        assert!(
            (b.u[0] - 0.05).abs() < 2e-3 && (b.u[1] - 0.55).abs() < 2e-3,
            "{b:?}"
        );
        assert!(b.feasible());
        // The history only ever improves.
        let h: Vec<f64> = out
            .history
            .iter()
            .map(|&i| out.trials[i].objective)
            .collect();
        assert!(h.windows(2).all(|w| w[1] < w[0]), "{h:?}");
        // Every trial is distinct.
        let mut seen = std::collections::HashSet::new();
        assert!(out.trials.iter().all(|t| seen.insert(format!("{:?}", t.u))));
    }

    #[test]
    fn an_error_or_a_stop_ends_the_search_and_is_returned() {
        let mut calls = 0;
        let r = search(
            &[0.5],
            &SearchSettings::default(),
            |u| {
                calls += 1;
                if calls == 5 {
                    Err("model failed")
                } else {
                    Ok((u[0], vec![]))
                }
            },
            |_, _| {},
            || None,
        );
        assert_eq!(r.unwrap_err(), "model failed");
        assert_eq!(calls, 5);
        let r = search(
            &[0.5],
            &SearchSettings::default(),
            |u| Ok((u[0], vec![])),
            |_, _| {},
            || Some("stopped"),
        );
        assert_eq!(r.unwrap_err(), "stopped");
    }

    #[test]
    fn the_budget_bounds_the_evaluations() {
        let settings = SearchSettings {
            max_evaluations: 17,
            ..SearchSettings::default()
        };
        let out = search::<()>(
            &[0.2, 0.2, 0.2],
            &settings,
            |u| Ok((u.iter().map(|x| (x - 0.6).powi(2)).sum(), vec![])),
            |_, _| {},
            || None,
        )
        .unwrap();
        assert!(out.trials.len() <= 17, "{}", out.trials.len());
    }
}
