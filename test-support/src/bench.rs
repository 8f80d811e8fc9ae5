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
/// moment of the shared machine weighs on all of them), as often as fits
/// in `min_ns` of wall-clock time and at least once, between two readings
/// of the clock (which may advance only at scheduler ticks: a reading per
/// call would round every call). `NaN` where the clock cannot be read.
pub fn least_cpu_times(rounds: usize, min_ns: f64, fs: &[&dyn Fn()]) -> Vec<f64> {
    let once = |f: &dyn Fn()| {
        let started = std::time::Instant::now();
        let mut calls = 0u32;
        let spent = cpu_time_ns(|| {
            while calls == 0 || started.elapsed().as_secs_f64() * 1e9 < min_ns {
                f();
                calls += 1;
            }
        });
        spent.map_or(f64::NAN, |ns| ns / f64::from(calls))
    };
    let mut least = vec![f64::INFINITY; fs.len()];
    for _ in 0..rounds {
        for (l, f) in least.iter_mut().zip(fs) {
            *l = l.min(once(f));
        }
    }
    least
}
