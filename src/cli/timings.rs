//! `check --timings`: what the answers cost — per kind, the probes and the time spent answering
//! them, and the slowest probes — so that users see what to split across machines. Times are wall
//! clock on the thread that answered each probe (summed over threads); they are printed, never
//! written into results.

use std::time::Duration;

use plumbline_core::probe::{Probe, ProbeId, ProbeKind};

use super::terminal::{Style, Tone, write_stdout};

/// How many of the slowest probes are listed.
const SLOWEST: usize = 10;

/// The answering times of a run.
#[derive(Default)]
pub struct Timings {
    /// Probes and time, per kind (in [`ProbeKind::ALL`] order).
    by_kind: [(usize, Duration); ProbeKind::ALL.len()],
    /// The slowest probes so far, slowest first (ties: earlier in the set first).
    slowest: Vec<(Duration, ProbeId, ProbeKind)>,
}

impl Timings {
    /// Counts one probe's answer.
    pub fn add(&mut self, probe: &Probe, took: Duration) {
        let kind = probe.query.kind();
        let k = ProbeKind::ALL
            .iter()
            .position(|x| *x == kind)
            .expect("every kind is listed");
        self.by_kind[k].0 += 1;
        self.by_kind[k].1 += took;
        let place = self.slowest.partition_point(|(t, _, _)| *t >= took);
        if place < SLOWEST {
            self.slowest.insert(place, (took, probe.id.clone(), kind));
            self.slowest.truncate(SLOWEST);
        }
    }

    /// The report, as printed.
    pub fn text(&self) -> String {
        let total: Duration = self.by_kind.iter().map(|(_, t)| *t).sum();
        let mut out = format!(
            "Answering took {} in all (summed over threads):\n",
            seconds(total)
        );
        for (kind, (count, time)) in ProbeKind::ALL.iter().zip(&self.by_kind) {
            if *count > 0 {
                let share = time.as_secs_f64() / total.as_secs_f64().max(f64::MIN_POSITIVE);
                let probes = if *count == 1 { "probe " } else { "probes" };
                out.push_str(&format!(
                    "  {:<11} {count:>8} {probes}  {:>10}  {:>5.1}%\n",
                    kind.name(),
                    seconds(*time),
                    share * 100.0
                ));
            }
        }
        out.push_str("Slowest:\n");
        for (time, id, kind) in &self.slowest {
            out.push_str(&format!(
                "  {:>10}  {id} ({})\n",
                seconds(*time),
                kind.name()
            ));
        }
        out
    }

    /// Prints the report.
    pub fn print(&self, style: Style) {
        write_stdout(&style.paint(Tone::Dim, &self.text()));
    }
}

/// Seconds with millisecond precision.
fn seconds(d: Duration) -> String {
    format!("{:.3} s", d.as_secs_f64())
}

#[cfg(test)]
mod tests {
    use super::*;
    use plumbline_core::probe::ProbeQuery;

    fn ray(id: &str) -> Probe {
        Probe {
            id: id.into(),
            label: None,
            filter: Default::default(),
            query: ProbeQuery::Ray {
                from: glam::DVec3::ZERO,
                to: glam::DVec3::X,
                hits: None,
            },
            expect: None,
            from_rule: None,
        }
    }

    #[test]
    fn kinds_are_summed_and_the_slowest_listed_slowest_first() {
        let mut timings = Timings::default();
        for k in 0..15u64 {
            timings.add(&ray(&format!("r{k}")), Duration::from_millis(k));
        }
        let text = timings.text();
        assert!(
            text.contains("ray               15 probes     0.105 s  100.0%"),
            "{text}"
        );
        let listed: Vec<&str> = text
            .lines()
            .skip_while(|l| *l != "Slowest:")
            .skip(1)
            .collect();
        assert_eq!(listed.len(), SLOWEST);
        assert!(listed[0].ends_with("r14 (ray)"), "{text}");
        assert!(listed[9].ends_with("r5 (ray)"), "{text}");
    }
}
