//! What a run will cost in time and memory, estimated before it starts, so that a run that would
//! take an hour or more memory than the machine has is announced, or refused with the largest
//! size that fits, instead of running silently until it is killed.
//!
//! The rates are measured, not guessed: the simulation's throughput is the one recorded in
//! `benches/README.md` (one thread), and the plan's memory per strategy is the peak of a
//! measured 1,000,000-section plan (4.9 GB for 64 million strategies).

/// Simulation steps (section × strategy × year) per second on one thread (benches/README.md,
/// simulation, 1 thread: 8.8–9.0 million).
pub const STEPS_PER_SECOND_PER_THREAD: f64 = 8.8e6;
/// Peak bytes of a plan per strategy enumerated (measured: 4.9 GB at 64 million strategies).
pub const PLAN_BYTES_PER_STRATEGY: f64 = 77.0;
/// Runs estimated to take longer than this are announced before they start.
pub const ANNOUNCE_SECONDS: f64 = 60.0;
/// Runs estimated to hold more than this are announced before they start.
pub const ANNOUNCE_BYTES: f64 = 2.0 * (1u64 << 30) as f64;
/// Share of the machine's memory a run may plan to use.
pub const MEMORY_SHARE: f64 = 0.8;

/// The machine's memory in bytes (`MemTotal` of /proc/meminfo), when it can be read.
pub fn machine_memory() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    let line = text.lines().find(|l| l.starts_with("MemTotal:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024.0)
}

/// The most memory a run may plan to use: a share of the machine's, or `fallback` when the
/// machine's cannot be read.
pub fn memory_allowance(fallback: f64) -> f64 {
    machine_memory().map_or(fallback, |m| m * MEMORY_SHARE)
}

/// Seconds to simulate `steps` on this machine's threads.
pub fn simulation_seconds(steps: f64) -> f64 {
    let threads = rayon::current_num_threads().max(1) as f64;
    steps / (STEPS_PER_SECOND_PER_THREAD * threads)
}

/// Time (seconds) and peak memory (bytes) of building a plan's candidates for `strategies`
/// strategies over `years` years.
pub fn plan_cost(strategies: f64, years: u32) -> (f64, f64) {
    (
        simulation_seconds(strategies * f64::from(years)),
        strategies * PLAN_BYTES_PER_STRATEGY,
    )
}

/// A duration in words: `40 s`, `12 min`, `3.5 h`.
pub fn duration(seconds: f64) -> String {
    if seconds < 1.0 {
        "under a second".to_owned()
    } else if seconds < 90.0 {
        format!("{seconds:.0} s")
    } else if seconds < 5400.0 {
        format!("{:.0} min", seconds / 60.0)
    } else {
        format!("{:.1} h", seconds / 3600.0)
    }
}

/// An amount of memory in words: `850 MB`, `9.4 GiB`.
pub fn bytes(b: f64) -> String {
    if b < 1e6 {
        "under 1 MB".to_owned()
    } else if b < (1u64 << 30) as f64 {
        format!("{:.0} MB", b / 1e6)
    } else {
        format!("{:.1} GiB", b / (1u64 << 30) as f64)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_for_durations_and_sizes() {
        assert_eq!(duration(0.2), "under a second");
        assert_eq!(duration(40.0), "40 s");
        assert_eq!(duration(720.0), "12 min");
        assert_eq!(duration(12_600.0), "3.5 h");
        assert_eq!(bytes(8.5e8), "850 MB");
        assert_eq!(bytes(9.4 * (1u64 << 30) as f64), "9.4 GiB");
    }

    #[test]
    fn the_machine_memory_is_read_on_linux() {
        if cfg!(target_os = "linux") {
            let m = machine_memory().expect("/proc/meminfo");
            assert!(m > 1e8, "{m}");
        }
    }
}
