//! The benchmark report as a plain-text table.

use super::{BenchmarkReport, Length, ModelResult, ScanBenchmark};
use std::fmt::Write;

/// The report, ready to print.
pub fn render(report: &BenchmarkReport) -> String {
    let mut text = String::new();
    let run = match report.length {
        Length::Quick => "quick run",
        Length::Full => "full run",
    };
    let _ = writeln!(
        text,
        "runcast bench ({run}): one toy = Poisson draw of every bin + fit with mu free \
         + fit with mu = 0 + q0\nmodels: Gaussian peak on an exponential continuum; mu, \
         background factor (10% constraint) and slope fitted; {} live days; 2x100: the same \
         events in two channels, each with its own factor and slope, one 5% factor shared\n\
         rates: fastest of {} runs; toy/draw = cost of a full toy over its draw alone\n",
        super::models::LIVE_DAYS,
        report.length.repeats()
    );
    let _ = writeln!(
        text,
        "{:>5} {:>8} {:>12} {:>12} {:>8} {:>12} {:>10} {:>13} {:>7}",
        "bins",
        "toys",
        "toys/s 1 thr",
        "toys/s 2 thr",
        "2 vs 1",
        "draws/s 2 thr",
        "toy/draw",
        "ns/toy/bin 1t",
        "failed"
    );
    for model in &report.models {
        text.push_str(&model_row(model));
    }
    let (fewer, all) = (
        report.fewer_toys,
        report
            .models
            .iter()
            .find(|m| m.bins == 200 && m.channels == 1)
            .map(|m| m.two_threads),
    );
    if let Some(all) = all {
        let _ = writeln!(
            text,
            "\ntoys (200 bins, 2 threads): {} toys {:.0}/s, {} toys {:.0}/s",
            fewer.toys,
            fewer.per_second(),
            all.toys,
            all.per_second()
        );
    }
    let mut asimov = report.asimov_process_seconds.clone();
    asimov.sort_by(f64::total_cmp);
    if let (Some(first), Some(last)) = (asimov.first(), asimov.last()) {
        let median = asimov[asimov.len() / 2];
        let _ = writeln!(
            text,
            "Asimov-only projection, 100 exposure points, whole process: median {:.1} ms \
             (min {:.1}, max {:.1}; {} runs)",
            median * 1e3,
            first * 1e3,
            last * 1e3,
            asimov.len()
        );
    }
    let _ = writeln!(
        text,
        "\npeak resident memory (VmHWM of a child process, 200 bins):"
    );
    for probe in &report.memory {
        let _ = writeln!(
            text,
            "  {:>3} exposure points x {:>8} toys: {:>7.1} MB",
            probe.points,
            probe.toys,
            probe.peak_bytes as f64 / 1e6
        );
    }
    if let Some((timing, failed)) = report.background_only {
        let _ = writeln!(
            text,
            "\nbackground-only ensemble (mu = 0), 200 bins, 2 threads: {} toys in {:.1} s \
             ({:.0} toys/s), failed fits {failed}",
            timing.toys,
            timing.seconds,
            timing.per_second()
        );
    }
    text.push('\n');
    text.push_str(&render_scan(&report.scan));
    text
}

/// The look-elsewhere rows: the scan rates, the reach as a whole process
/// and the peak memory of scans.
pub fn render_scan(scan: &ScanBenchmark) -> String {
    let mut text = String::new();
    let timing = scan.two_threads;
    let fits = timing.toys * (scan.positions + 1);
    let _ = writeln!(
        text,
        "background-only scans (look-elsewhere), 200 bins, {} positions, 2 threads: \
         {} toys in {:.2} s, {:.0} toys/s ({:.0} fits/s), failed fits {}",
        scan.positions,
        timing.toys,
        timing.seconds,
        timing.per_second(),
        fits as f64 / timing.seconds,
        scan.failed_fits
    );
    let timing = scan.two_channels;
    let _ = writeln!(
        text,
        "background-only scans (look-elsewhere), 2 channels x {} bins fitted jointly, {} positions, 2 threads: \
         {} toys in {:.2} s, {:.0} toys/s ({:.0} fits/s), failed fits {}",
        super::models::BINS_PER_CHANNEL,
        scan.positions,
        timing.toys,
        timing.seconds,
        timing.per_second(),
        (timing.toys * (scan.positions + 1)) as f64 / timing.seconds,
        scan.two_channel_failed_fits
    );
    let seconds = &scan.reach_process_seconds;
    let fastest = seconds.iter().copied().fold(f64::INFINITY, f64::min);
    let _ = writeln!(
        text,
        "reach, Asimov only, 2 channels x {} bins, {} positions, {} exposures, 2 threads, whole process: \
         fastest {:.2} s of {}",
        super::scan::REACH_BINS_PER_CHANNEL,
        super::scan::REACH_POSITIONS,
        super::scan::REACH_DAYS.len(),
        fastest,
        seconds.len()
    );
    for (name, seconds) in &scan.levers_process_seconds {
        let _ = writeln!(
            text,
            "levers, Asimov only, scenarios/{name}, 2 threads, whole process: fastest {:.2} s of {}",
            seconds.iter().copied().fold(f64::INFINITY, f64::min),
            seconds.len()
        );
    }
    let _ = writeln!(text, "peak resident memory of scans (child process):");
    for probe in &scan.memory {
        let _ = writeln!(
            text,
            "  {:>5} positions x {:>6} toys: {:>7.1} MB",
            probe.positions,
            probe.toys,
            probe.peak_bytes as f64 / 1e6
        );
    }
    text
}

fn model_row(model: &ModelResult) -> String {
    let one = model.one_thread.per_second();
    let two = model.two_threads.per_second();
    let draws = model.draws_only.per_second();
    let nanoseconds_per_bin = 1e9 / one / model.bins as f64;
    let bins = match model.channels {
        1 => model.bins.to_string(),
        channels => format!("{channels}x{}", model.bins / channels),
    };
    format!(
        "{:>5} {:>8} {:>12.0} {:>12.0} {:>8.2} {:>13.0} {:>10.1} {:>13.1} {:>7}\n",
        bins,
        model.two_threads.toys,
        one,
        two,
        two / one,
        draws,
        draws / two,
        nanoseconds_per_bin,
        model.failed_fits
    )
}

#[cfg(test)]
mod tests {
    use super::super::{MemoryProbe, ScanMemoryProbe, Timing};
    use super::*;

    #[test]
    fn rows_show_rates_ratios_and_memory() {
        let timing = |toys, seconds| Timing { toys, seconds };
        let report = BenchmarkReport {
            length: Length::Quick,
            models: vec![ModelResult {
                bins: 200,
                channels: 1,
                one_thread: timing(1000, 0.02),
                two_threads: timing(1000, 0.01),
                draws_only: timing(1000, 0.001),
                failed_fits: 0,
            }],
            fewer_toys: timing(200, 0.002),
            asimov_process_seconds: vec![0.030, 0.020, 0.025],
            memory: vec![MemoryProbe {
                points: 100,
                toys: 200,
                peak_bytes: 12_500_000,
            }],
            background_only: None,
            scan: ScanBenchmark {
                positions: 100,
                two_threads: timing(1000, 0.4),
                failed_fits: 0,
                two_channels: timing(1000, 0.5),
                two_channel_failed_fits: 0,
                memory: vec![ScanMemoryProbe {
                    positions: 1000,
                    toys: 100,
                    peak_bytes: 7_200_000,
                }],
                reach_process_seconds: vec![2.5, 2.25],
                levers_process_seconds: vec![("unknown_line.yaml", vec![0.05, 0.04])],
            },
        };
        let text = render(&report);
        // 1000 toys in 0.02 s is 50000/s; in 0.01 s 100000/s, a factor 2.00;
        // draws 1000000/s, ten times the toys; 1e9 / 50000 / 200 = 100 ns per bin.
        assert!(
            text.contains("  200     1000        50000       100000     2.00       1000000       10.0         100.0       0"),
            "{text}"
        );
        assert!(text.contains("median 25.0 ms"), "{text}");
        let two_channels = ModelResult {
            channels: 2,
            ..report.models[0].clone()
        };
        assert!(
            model_row(&two_channels).starts_with("2x100     1000        50000"),
            "{}",
            model_row(&two_channels)
        );
        assert!(text.contains("12.5 MB"), "{text}");
        // 1000 scans in 0.4 s: 2500/s, each 101 fits, 252500 fits/s.
        assert!(
            text.contains("1000 toys in 0.40 s, 2500 toys/s (252500 fits/s)"),
            "{text}"
        );
        // 1000 two-channel scans in 0.5 s: 2000/s, 202000 fits/s.
        assert!(
            text.contains("2 channels x 100 bins fitted jointly, 100 positions, 2 threads: 1000 toys in 0.50 s, 2000 toys/s (202000 fits/s)"),
            "{text}"
        );
        assert!(
            text.contains(" 1000 positions x    100 toys:     7.2 MB"),
            "{text}"
        );
        assert!(
            text.contains(
                "1400 positions, 3 exposures, 2 threads, whole process: fastest 2.25 s of 2"
            ),
            "{text}"
        );
        assert!(
            text.contains(
                "levers, Asimov only, scenarios/unknown_line.yaml, 2 threads, whole process: fastest 0.04 s of 2"
            ),
            "{text}"
        );
    }
}
