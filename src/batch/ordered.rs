//! Numbered jobs on a pool of threads, results handed back strictly in job
//! order with bounded memory: the engine under `sweep` (one job per case)
//! and `lifetime` (one job per part, speed and road).
//!
//! Workers (a rayon pool of `jobs` threads) claim job numbers in order from
//! a shared counter. The calling thread reorders the results and hands each
//! to `emit` in job order as soon as all earlier jobs are done, so output
//! streams out of long batches and anything the caller sums is summed in
//! the same order whatever the thread count. A worker waits before starting
//! a job more than `window` jobs ahead of the last one emitted, which
//! bounds the results held for reordering. Inside the pool each job runs on
//! its worker's thread alone (the pipeline's second evaluator thread stays
//! off), so `jobs` threads are busy, no more.

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::{Condvar, Mutex, MutexGuard};

/// How many threads, and how far ahead of the output they may run.
#[derive(Debug, Clone, Copy)]
pub struct Pool {
    /// Worker threads (at least 1).
    pub jobs: usize,
    /// Most jobs a worker may run ahead of the next job to emit (at least 1).
    pub window: usize,
}

impl Pool {
    /// `jobs` threads with a window of 8 jobs per thread.
    pub fn new(jobs: usize) -> Self {
        let jobs = jobs.max(1);
        Pool {
            jobs,
            window: 8 * jobs,
        }
    }

    /// Runs jobs `0..count` with `work` and calls `emit` once per job, in
    /// job order, with its result. A failed job does not stop the others;
    /// an error returned by `emit` stops the batch and is returned, and so
    /// does an interruption ([`crate::solve::request_cancel`]). `name`
    /// prefixes the worker threads' names.
    pub fn run<R: Send>(
        &self,
        name: &str,
        count: usize,
        work: impl Fn(usize) -> Result<R, crate::Error> + Sync,
        mut emit: impl FnMut(usize, Result<R, crate::Error>) -> Result<(), crate::Error>,
    ) -> Result<(), crate::Error> {
        if count == 0 {
            return Ok(());
        }
        // Never more workers than jobs: idle threads only cost start-up
        // time and memory.
        let jobs = self.jobs.min(count).max(1);
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(jobs)
            .thread_name({
                let name = name.to_string();
                move |i| format!("{name}-{i}")
            })
            .build()
            .map_err(|e| {
                crate::Error::Usage(format!("--jobs {jobs}: cannot start the threads: {e}"))
            })?;
        let shared = Shared {
            next: AtomicUsize::new(0),
            stop: AtomicBool::new(false),
            emitted: Mutex::new(0),
            advanced: Condvar::new(),
            window: self.window.max(1),
        };
        let (tx, rx) = std::sync::mpsc::channel::<(usize, Result<R, crate::Error>)>();
        pool.in_place_scope(|scope| {
            for _ in 0..jobs {
                let tx = tx.clone();
                let (shared, work) = (&shared, &work);
                scope.spawn(move |_| {
                    while let Some(i) = shared.claim(count) {
                        if tx.send((i, work(i))).is_err() {
                            break;
                        }
                    }
                });
            }
            drop(tx);
            let outcome = collect(rx, count, &mut emit, &shared);
            if outcome.is_err() {
                // Set under the lock so no worker misses the wake-up.
                let guard = lock(&shared.emitted);
                shared.stop.store(true, Ordering::Relaxed);
                drop(guard);
                shared.advanced.notify_all();
            }
            outcome
        })
    }
}

/// What the workers and the reordering loop share.
struct Shared {
    next: AtomicUsize,
    stop: AtomicBool,
    emitted: Mutex<usize>,
    advanced: Condvar,
    window: usize,
}

impl Shared {
    fn stopped(&self) -> bool {
        self.stop.load(Ordering::Relaxed) || crate::solve::cancel_requested()
    }

    /// The next job number for a worker, once it is inside the window;
    /// `None` when the jobs are all claimed or the batch stopped.
    fn claim(&self, count: usize) -> Option<usize> {
        if self.stopped() {
            return None;
        }
        let i = self.next.fetch_add(1, Ordering::Relaxed);
        if i >= count {
            return None;
        }
        // The worker holding the oldest unemitted job never waits
        // (i == emitted < emitted + window). Cancellation does not
        // notify, hence the timeout.
        let mut done = lock(&self.emitted);
        while i >= *done + self.window && !self.stopped() {
            done = self
                .advanced
                .wait_timeout(done, std::time::Duration::from_millis(100))
                .unwrap_or_else(|p| p.into_inner())
                .0;
        }
        drop(done);
        (!self.stopped()).then_some(i)
    }
}

/// The reordering loop on the calling thread.
fn collect<R>(
    rx: std::sync::mpsc::Receiver<(usize, Result<R, crate::Error>)>,
    count: usize,
    emit: &mut impl FnMut(usize, Result<R, crate::Error>) -> Result<(), crate::Error>,
    shared: &Shared,
) -> Result<(), crate::Error> {
    let mut pending: BTreeMap<usize, Result<R, crate::Error>> = BTreeMap::new();
    let mut next_out = 0usize;
    for (i, result) in rx.iter() {
        pending.insert(i, result);
        while let Some(result) = pending.remove(&next_out) {
            if result.is_err() && crate::solve::cancel_requested() {
                return result.map(|_| ());
            }
            emit(next_out, result)?;
            next_out += 1;
            *lock(&shared.emitted) = next_out;
            shared.advanced.notify_all();
        }
    }
    if next_out < count {
        // Workers stopped early without an error: only cancellation does that.
        return Err(crate::solve::SolveError::Interrupted.into());
    }
    Ok(())
}

fn lock<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    m.lock().unwrap_or_else(|p| p.into_inner())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The highest worker number among this process's threads named
    /// `name-N` (Linux keeps the first 15 bytes of a thread's name).
    #[cfg(target_os = "linux")]
    fn highest_worker(name: &str) -> Option<usize> {
        std::fs::read_dir("/proc/self/task")
            .unwrap()
            .filter_map(|t| std::fs::read_to_string(t.ok()?.path().join("comm")).ok())
            .filter_map(|n| n.trim().strip_prefix(name)?.strip_prefix('-')?.parse().ok())
            .max()
    }

    #[cfg(target_os = "linux")]
    #[test]
    fn no_more_workers_start_than_there_are_jobs() {
        let mut highest = None;
        Pool::new(1000)
            .run("capped", 3, Ok, |_, r| {
                r.unwrap();
                highest = highest.max(highest_worker("capped"));
                Ok(())
            })
            .unwrap();
        // Workers are numbered from 0: at most capped-2 for 3 jobs.
        assert!(
            matches!(highest, Some(0..=2)),
            "worker {highest:?} for 3 jobs"
        );
    }

    #[test]
    fn results_come_in_job_order_whatever_the_threads_and_window() {
        // Later jobs finish first (they sleep less), so the reordering is
        // exercised; the emitted order is the job order all the same.
        for (jobs, window) in [(1, 1), (2, 1), (3, 2), (4, 32)] {
            let mut seen = Vec::new();
            Pool { jobs, window }
                .run(
                    "test",
                    12,
                    |i| {
                        std::thread::sleep(std::time::Duration::from_millis((12 - i as u64) % 4));
                        Ok(i * i)
                    },
                    |i, r| {
                        seen.push((i, r.unwrap()));
                        Ok(())
                    },
                )
                .unwrap();
            assert_eq!(seen, (0..12).map(|i| (i, i * i)).collect::<Vec<_>>());
        }
    }

    #[test]
    fn a_failed_job_is_handed_on_and_an_emit_error_stops_the_batch() {
        let mut seen = Vec::new();
        let r = Pool::new(2).run(
            "test",
            10,
            |i| {
                if i == 2 {
                    Err(crate::Error::Usage("job 2".into()))
                } else {
                    Ok(i)
                }
            },
            |i, r| {
                seen.push((i, r.is_ok()));
                if i == 5 {
                    Err(crate::Error::Usage("stop".into()))
                } else {
                    Ok(())
                }
            },
        );
        assert!(matches!(r, Err(crate::Error::Usage(m)) if m == "stop"));
        assert_eq!(seen.len(), 6);
        assert_eq!(seen[2], (2, false));
        assert!(
            Pool::new(2)
                .run("test", 0, |_| Ok(()), |_, _| Ok(()))
                .is_ok()
        );
    }
}
