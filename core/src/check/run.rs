//! Running a whole probe set: every probe answered in parallel, results in probe-set order.

use rayon::prelude::*;

use super::answer::answer_probe;
use super::records::ProbeResult;
use crate::error::Error;
use crate::probe::Probe;
use crate::query::World;

/// Answers every probe on `jobs` threads (all cores when `None`). `progress` is called with the number
/// of probes finished so far, from any thread. The results are in probe order and do not depend on
/// the thread count.
pub fn run_probes(
    world: &World,
    probes: &[Probe],
    jobs: Option<usize>,
    progress: &(dyn Fn(usize) + Sync),
) -> Result<Vec<ProbeResult>, Error> {
    let mut builder = rayon::ThreadPoolBuilder::new();
    if let Some(n) = jobs {
        builder = builder.num_threads(n.max(1));
    }
    let pool = builder.build()?;
    let done = std::sync::atomic::AtomicUsize::new(0);
    Ok(pool.install(|| {
        probes
            .par_iter()
            .map(|probe| {
                let result = answer_probe(world, probe);
                progress(done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1);
                result
            })
            .collect()
    }))
}
