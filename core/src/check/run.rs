//! Running probes: each answered on a pool of worker threads, the results in probe order whatever
//! the thread count.

use std::time::{Duration, Instant};

use rayon::prelude::*;

use super::answer::answer_probe;
use super::records::ProbeResult;
use crate::error::Error;
use crate::probe::Probe;
use crate::query::World;

/// What is told, from any thread, how many probes are done (counting those done before). `None`
/// when nobody watches: the answers are then not counted at all (each count is a write to memory
/// every answering thread shares; 2% of a 200k-ray check on two threads).
pub type Watcher<'w> = Option<&'w (dyn Fn(usize) + Sync)>;

/// A pool of worker threads that answers probes.
pub struct Runner {
    pool: rayon::ThreadPool,
    /// Whether each answer's time is measured (two clock reads a probe, for `--timings`).
    timed: bool,
}

impl Runner {
    /// A pool of `jobs` threads (all cores when `None`).
    pub fn new(jobs: Option<usize>) -> Result<Runner, Error> {
        let mut builder = rayon::ThreadPoolBuilder::new();
        if let Some(n) = jobs {
            builder = builder.num_threads(n.max(1));
        }
        Ok(Runner {
            pool: builder.build()?,
            timed: false,
        })
    }

    /// This runner, measuring how long each answer takes when `timed` (see [`Runner::answer`]).
    pub fn timing(self, timed: bool) -> Runner {
        Runner { timed, ..self }
    }

    /// Frees `garbage` on the pool's threads, which allocated most of it (answers, parsed
    /// probes), instead of on the calling thread: the allocator's per-thread caches get their
    /// blocks back, and the caller spends no time on it. 200k rays on two threads: ~20–30 ms less
    /// than freeing the results and probes on the writing thread. On a runner that
    /// [answers alone](Runner::answers_alone) the caller frees `garbage` at once.
    pub fn free_later<T: Send + 'static>(&self, garbage: T) {
        if self.answers_alone() {
            drop(garbage);
        } else {
            self.pool.spawn(move || drop(garbage));
        }
    }

    /// True for a pool of one thread, which only answers: what goes on beside the answers (laying
    /// out and freeing results) is the caller's, on its own thread, so that it does not wait for
    /// the answers' one thread nor they for it.
    pub fn answers_alone(&self) -> bool {
        self.threads() == 1
    }

    /// How many threads the pool has.
    pub fn threads(&self) -> usize {
        self.pool.current_num_threads()
    }

    /// Runs `work` on this pool's threads (so that what it does in parallel uses them alone).
    pub fn install<R: Send>(&self, work: impl FnOnce() -> R + Send) -> R {
        self.pool.install(work)
    }

    /// Answers `probes` in parallel; the results are in probe order, each with the time its answer
    /// took when the runner is timing (wall clock, on its thread; for `--timings`, never part of a
    /// result), zero otherwise. `progress` is told each time a probe is done (with how many are
    /// done, counting `done_before`).
    pub fn answer(
        &self,
        world: &World,
        probes: &[Probe],
        done_before: usize,
        progress: Watcher,
    ) -> Vec<(ProbeResult, Duration)> {
        let done = std::sync::atomic::AtomicUsize::new(done_before);
        self.pool.install(|| {
            if probes.iter().any(|p| p.query.kind().casts_rays()) {
                world.prepare_rays();
            }
            probes
                .par_iter()
                .map(|probe| {
                    let started = self.timed.then(Instant::now);
                    let result = answer_probe(world, probe);
                    let took = started.map_or(Duration::ZERO, |s| s.elapsed());
                    if let Some(tell) = progress {
                        tell(done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1);
                    }
                    (result, took)
                })
                .collect()
        })
    }
}

/// Answers every probe on `jobs` threads (all cores when `None`). `progress` is told the number of
/// probes finished so far. The results are in probe order and do not depend on the thread count.
pub fn run_probes(
    world: &World,
    probes: &[Probe],
    jobs: Option<usize>,
    progress: Watcher,
) -> Result<Vec<ProbeResult>, Error> {
    let answered = Runner::new(jobs)?.answer(world, probes, 0, progress);
    Ok(answered.into_iter().map(|(result, _)| result).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// What a runner frees later is dropped on one of its own threads, not the caller's.
    #[test]
    fn garbage_is_freed_on_the_pool() {
        struct Noted(std::sync::mpsc::Sender<Option<usize>>);
        impl Drop for Noted {
            fn drop(&mut self) {
                self.0.send(rayon::current_thread_index()).unwrap();
            }
        }
        let runner = Runner::new(Some(2)).unwrap();
        let (sender, dropped_on) = std::sync::mpsc::channel();
        runner.free_later(vec![Noted(sender.clone()), Noted(sender)]);
        for _ in 0..2 {
            let thread = dropped_on.recv().unwrap();
            assert!(thread.is_some_and(|k| k < 2), "dropped on {thread:?}");
        }
        // A runner of one thread answers alone: the caller frees, at once.
        let (sender, dropped_on) = std::sync::mpsc::channel();
        Runner::new(Some(1)).unwrap().free_later(Noted(sender));
        assert_eq!(
            dropped_on.try_recv(),
            Ok(None),
            "dropped at once, off the pool"
        );
    }
}
