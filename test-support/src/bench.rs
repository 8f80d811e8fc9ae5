//! The thread's CPU time, for benchmarks on a shared machine (steadier
//! than wall-clock time when other work runs beside them).

/// The CPU time the calling thread spends in `f`, in nanoseconds (from
/// `/proc/thread-self/schedstat`; `None` where that cannot be read).
pub fn cpu_time_ns(f: impl FnOnce()) -> Option<f64> {
    let read = || -> Option<f64> {
        let text = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
        text.split_whitespace().next()?.parse().ok()
    };
    let before = read()?;
    f();
    Some(read()? - before)
}

/// The thread's CPU time per call of each of `fs`, in nanoseconds: the
/// least of `rounds` rounds, each calling every `f` in turn (so a busy
/// moment of the shared machine weighs on all of them) and repeating it
/// until it has taken at least `min_ns` (the CPU clock may tick
/// coarsely). `NaN` where the clock cannot be read.
pub fn least_cpu_times(rounds: usize, min_ns: f64, fs: &[&dyn Fn()]) -> Vec<f64> {
    let once = |f: &dyn Fn()| {
        let (mut spent, mut calls) = (0.0, 0u32);
        while spent < min_ns {
            match cpu_time_ns(f) {
                Some(ns) => spent += ns,
                None => return f64::NAN,
            }
            calls += 1;
        }
        spent / f64::from(calls)
    };
    let mut least = vec![f64::INFINITY; fs.len()];
    for _ in 0..rounds {
        for (l, f) in least.iter_mut().zip(fs) {
            *l = l.min(once(f));
        }
    }
    least
}
