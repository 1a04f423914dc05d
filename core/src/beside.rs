//! Reading beside work: a file's reading, checking and parsing run beside the work that needs a
//! pool's threads (loading the level, building the ray index), on the pool's idle threads when it
//! has more than one, and on a reading thread of their own when it has one (as a check's results
//! are laid out and written beside its answers).

/// Runs `reading` and `work` at once and returns both results. On a pool of more than one thread
/// (the current one, or the global pool outside any) this is `rayon::join`: `reading` takes
/// whatever threads `work` leaves idle. On a pool of one thread, `work` runs on the current thread
/// and `reading` on a one-thread pool of its own, so that reading neither waits for the work's
/// single thread nor takes more than one thread; if that pool cannot be made, they run one after
/// the other.
pub fn beside<A, B, RA, RB>(reading: A, work: B) -> (RA, RB)
where
    A: FnOnce() -> RA + Send,
    B: FnOnce() -> RB + Send,
    RA: Send,
    RB: Send,
{
    if rayon::current_num_threads() > 1 {
        return rayon::join(reading, work);
    }
    let Ok(reader) = rayon::ThreadPoolBuilder::new().num_threads(1).build() else {
        return (reading(), work());
    };
    std::thread::scope(|scope| {
        let read = scope.spawn(|| reader.install(reading));
        let worked = work();
        let read = read
            .join()
            .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
        (read, worked)
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::mpsc;

    fn on_threads<R: Send>(jobs: usize, work: impl FnOnce() -> R + Send) -> R {
        let pool = rayon::ThreadPoolBuilder::new().num_threads(jobs).build();
        pool.unwrap().install(work)
    }

    /// Both sides run at once whatever the pool's size: each waits for a message only the other
    /// sends (one after the other, this would never end; the wait is bounded so that a failure
    /// fails instead of hanging).
    #[test]
    fn reading_and_work_run_at_once_on_one_thread_and_on_two() {
        for jobs in [1, 2] {
            let (to_work, work_hears) = mpsc::channel();
            let (to_reading, reading_hears) = mpsc::channel();
            let wait = std::time::Duration::from_secs(20);
            let (read, worked) = on_threads(jobs, || {
                beside(
                    move || {
                        to_work.send(()).unwrap();
                        reading_hears.recv_timeout(wait).is_ok()
                    },
                    move || {
                        to_reading.send(()).unwrap();
                        work_hears.recv_timeout(wait).is_ok()
                    },
                )
            });
            assert!(
                read && worked,
                "{jobs} thread(s): the sides ran one after the other"
            );
        }
    }

    /// On one thread the work keeps the pool's thread and the reading gets one of its own; on
    /// two, reading runs on the pool.
    #[test]
    fn on_one_thread_the_reading_is_off_the_pool() {
        let (reading_on, work_on) = on_threads(1, || {
            beside(
                || (rayon::current_num_threads(), std::thread::current().id()),
                || std::thread::current().id(),
            )
        });
        assert_eq!(reading_on.0, 1, "the reading's own pool has one thread");
        assert_ne!(reading_on.1, work_on);
        let (pool_threads, _) = on_threads(2, || beside(rayon::current_num_threads, || ()));
        assert_eq!(pool_threads, 2);
    }
}
