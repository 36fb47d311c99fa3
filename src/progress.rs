//! Progress of long stages (simulation, selection, frontier levels, risk draws), as the library
//! reports it: a [`Progress`] counts units done into whatever [`Meter`] the caller gave it (the
//! command line draws a bar on a terminal), or into nothing. Library code reports progress
//! unconditionally; it never draws or prints.

use std::sync::Arc;

/// Where a stage's progress goes.
pub trait Meter: Send + Sync {
    /// `n` more units done.
    fn inc(&self, n: u64);
    /// Set the position (for clocks: tenths of a second).
    fn set(&self, pos: u64);
    /// The stage is over.
    fn finish(&self);
}

/// One stage's progress (or nothing). Cheap to clone and safe to share between threads.
#[derive(Clone, Default)]
pub struct Progress {
    meter: Option<Arc<dyn Meter>>,
}

impl std::fmt::Debug for Progress {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Progress")
            .field("shown", &self.is_shown())
            .finish()
    }
}

impl Progress {
    /// A progress that goes nowhere.
    pub fn none() -> Progress {
        Progress { meter: None }
    }

    /// A progress counted into `meter`.
    pub fn to(meter: impl Meter + 'static) -> Progress {
        Progress {
            meter: Some(Arc::new(meter)),
        }
    }

    /// Count `n` more units done.
    pub fn inc(&self, n: u64) {
        if let Some(m) = &self.meter {
            m.inc(n);
        }
    }

    /// Set the position (for clocks: tenths of a second).
    pub fn set(&self, pos: u64) {
        if let Some(m) = &self.meter {
            m.set(pos);
        }
    }

    /// Whether it goes anywhere.
    pub fn is_shown(&self) -> bool {
        self.meter.is_some()
    }

    /// The stage is over.
    pub fn finish(&self) {
        if let Some(m) = &self.meter {
            m.finish();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicU64, Ordering};

    struct Count(Arc<AtomicU64>);

    impl Meter for Count {
        fn inc(&self, n: u64) {
            self.0.fetch_add(n, Ordering::Relaxed);
        }
        fn set(&self, pos: u64) {
            self.0.store(pos, Ordering::Relaxed);
        }
        fn finish(&self) {}
    }

    #[test]
    fn progress_counts_into_its_meter_or_nowhere() {
        let n = Arc::new(AtomicU64::new(0));
        let p = Progress::to(Count(n.clone()));
        p.inc(3);
        p.clone().inc(4);
        assert_eq!(n.load(Ordering::Relaxed), 7);
        p.set(2);
        assert_eq!(n.load(Ordering::Relaxed), 2);
        let none = Progress::none();
        none.inc(5);
        none.finish();
        assert!(p.is_shown() && !none.is_shown());
    }
}
