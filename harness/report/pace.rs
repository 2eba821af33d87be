//! The pace of a long check: an estimate of its time once its first segments
//! have run, then its progress every few seconds. Checks that finish quickly
//! say nothing. The lines go to any writer (the CLI gives standard error, so
//! a CI log shows them too).

use std::io::Write;
use std::sync::Mutex;
use std::time::{Duration, Instant};

use super::format::count;

/// A check estimated to take longer than this is announced.
pub const LONG: Duration = Duration::from_secs(10);
/// The estimate waits for this much of the run, so it rests on a measurement.
pub const SETTLE: Duration = Duration::from_secs(1);
/// Progress lines of an announced check come at most this often.
pub const EVERY: Duration = Duration::from_secs(10);

struct State {
    name: String,
    start: Instant,
    announced: bool,
    last: Duration,
}

/// Estimates and progress lines for long checks (see the module doc).
pub struct Pace {
    out: Mutex<Box<dyn Write + Send>>,
    state: Mutex<State>,
}

impl Pace {
    pub fn new(out: Box<dyn Write + Send>) -> Pace {
        Pace {
            out: Mutex::new(out),
            state: Mutex::new(State {
                name: String::new(),
                start: Instant::now(),
                announced: false,
                last: Duration::ZERO,
            }),
        }
    }

    /// Check `name` starts now.
    pub fn begin(&self, name: &str) {
        let mut s = self.state.lock().unwrap_or_else(|e| e.into_inner());
        *s = State {
            name: name.to_string(),
            start: Instant::now(),
            announced: false,
            last: Duration::ZERO,
        };
    }

    /// `done` of the current check's `total` points are done.
    pub fn points(&self, done: usize, total: usize) {
        let elapsed = {
            let s = self.state.lock().unwrap_or_else(|e| e.into_inner());
            s.start.elapsed()
        };
        self.points_after(done, total, elapsed);
    }

    /// [`Pace::points`] with the time since the check began given.
    pub fn points_after(&self, done: usize, total: usize, elapsed: Duration) {
        let mut s = self.state.lock().unwrap_or_else(|e| e.into_inner());
        let Some(line) = Pace::line(&mut s, done, total, elapsed) else {
            return;
        };
        let mut out = self.out.lock().unwrap_or_else(|e| e.into_inner());
        // Progress is a courtesy: a closed or full stderr must not stop the run.
        let _ = writeln!(out, "{line}");
        let _ = out.flush();
    }

    fn line(s: &mut State, done: usize, total: usize, elapsed: Duration) -> Option<String> {
        if done == 0 || done >= total || elapsed < SETTLE {
            return None;
        }
        let whole = elapsed.mul_f64(total as f64 / done as f64);
        let left = whole.saturating_sub(elapsed);
        if !s.announced {
            if whole < LONG {
                return None;
            }
            s.announced = true;
            s.last = elapsed;
            return Some(format!(
                "check `{}`: {} points, about {} in all at the pace of its first {} points",
                s.name,
                count(total),
                human(whole),
                count(done)
            ));
        }
        if elapsed.saturating_sub(s.last) < EVERY {
            return None;
        }
        s.last = elapsed;
        Some(format!(
            "check `{}`: {:.0} % ({} of {} points) in {}, about {} left",
            s.name,
            100.0 * done as f64 / total as f64,
            count(done),
            count(total),
            human(elapsed),
            human(left)
        ))
    }
}

/// `45 s`, `3 min 20 s`, `1 h 05 min`.
pub fn human(d: Duration) -> String {
    let s = d.as_secs_f64().round() as u64;
    match s {
        0..60 => format!("{s} s"),
        60..3600 => format!("{} min {:02} s", s / 60, s % 60),
        _ => format!("{} h {:02} min", s / 3600, (s % 3600) / 60),
    }
}

#[cfg(test)]
mod tests {
    use super::super::tests::Sink;
    use super::*;

    #[test]
    fn a_short_check_says_nothing() {
        let sink = Sink::default();
        let pace = Pace::new(Box::new(sink.clone()));
        pace.begin("quick");
        // 2 s for half: 4 s in all, under `LONG`.
        pace.points_after(50, 100, Duration::from_secs(2));
        pace.points_after(100, 100, Duration::from_secs(4));
        assert_eq!(sink.text(), "");
    }

    #[test]
    fn a_long_check_is_estimated_then_reported() {
        let sink = Sink::default();
        let pace = Pace::new(Box::new(sink.clone()));
        pace.begin("every_f32");
        // Too early to estimate.
        pace.points_after(1_000, 4_278_190_081, Duration::from_millis(500));
        assert_eq!(sink.text(), "");
        // 1 % in 2 s: 200 s in all.
        pace.points_after(42_781_900, 4_278_190_081, Duration::from_secs(2));
        // Within `EVERY` of the estimate: quiet.
        pace.points_after(85_563_800, 4_278_190_081, Duration::from_secs(4));
        // Half in 100 s: 100 s left.
        pace.points_after(2_139_095_040, 4_278_190_081, Duration::from_secs(100));
        let t = sink.text();
        let lines: Vec<&str> = t.lines().collect();
        assert_eq!(lines.len(), 2, "{t}");
        assert_eq!(
            lines[0],
            "check `every_f32`: 4,278,190,081 points, about 3 min 20 s in all at the pace of its first 42,781,900 points"
        );
        assert_eq!(
            lines[1],
            "check `every_f32`: 50 % (2,139,095,040 of 4,278,190,081 points) in 1 min 40 s, about 1 min 40 s left"
        );
    }

    #[test]
    fn counts_and_durations_read_as_people_write_them() {
        assert_eq!(count(0), "0");
        assert_eq!(count(999), "999");
        assert_eq!(count(1000), "1,000");
        assert_eq!(count(4_278_190_081), "4,278,190,081");
        assert_eq!(human(Duration::from_secs(59)), "59 s");
        assert_eq!(human(Duration::from_secs(200)), "3 min 20 s");
        assert_eq!(human(Duration::from_secs(3900)), "1 h 05 min");
    }
}
