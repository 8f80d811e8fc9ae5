//! The thread's CPU time, for benchmarks on a shared machine (steadier
//! than wall-clock time when other work runs beside them).

/// The CPU time the calling thread spends in `f`, in nanoseconds, from
/// the thread's CPU-time clock (`clock_gettime(CLOCK_THREAD_CPUTIME_ID)`,
/// which the kernel brings up to date when read; the running total in
/// `/proc/thread-self/schedstat` advances only at scheduler ticks, a few
/// milliseconds apart). `None` where the clock cannot be read.
pub fn cpu_time_ns(f: impl FnOnce()) -> Option<f64> {
    let read = || -> Option<f64> {
        let mut now = libc::timespec {
            tv_sec: 0,
            tv_nsec: 0,
        };
        // SAFETY: `now` is a valid, writable timespec for the call to fill.
        let status = unsafe { libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut now) };
        (status == 0).then_some(now.tv_sec as f64 * 1e9 + now.tv_nsec as f64)
    };
    let before = read()?;
    f();
    Some(read()? - before)
}

/// The thread's CPU time per call of each of `fs`, in nanoseconds: the
/// least of `rounds` rounds, each calling every `f` in turn (so a busy
/// moment of the shared machine weighs on all of them), as often as fits
/// in `min_ns` of wall-clock time and at least once, between two readings
/// of the clock (so that reading it costs nothing per call). `NaN` where
/// the clock cannot be read.
pub fn least_cpu_times(rounds: usize, min_ns: f64, fs: &[&dyn Fn()]) -> Vec<f64> {
    least_times(rounds, min_ns, fs, &|f| cpu_time_ns(f))
}

/// The wall-clock time per call of each of `fs`, in nanoseconds, measured
/// as [`least_cpu_times`] does: for work spread over several threads,
/// where one thread's CPU time says nothing.
pub fn least_wall_times(rounds: usize, min_ns: f64, fs: &[&dyn Fn()]) -> Vec<f64> {
    least_times(rounds, min_ns, fs, &|f| {
        let started = std::time::Instant::now();
        f();
        Some(started.elapsed().as_secs_f64() * 1e9)
    })
}

/// `clock(f)`: the time `f` took, in nanoseconds, or `None`.
type Clock<'a> = &'a dyn Fn(&mut dyn FnMut()) -> Option<f64>;

fn least_times(rounds: usize, min_ns: f64, fs: &[&dyn Fn()], clock: Clock) -> Vec<f64> {
    let once = |f: &dyn Fn()| {
        let started = std::time::Instant::now();
        let mut calls = 0u32;
        let spent = clock(&mut || {
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
