//! The progress bar (indicatif) on stderr: photons done, rate and time remaining. It appears
//! only after the work has lasted a second, never with `--quiet`, and never when stderr is
//! not a terminal, so logs and pipes stay clean and stdout is never touched.

use std::io::IsTerminal;
use std::sync::mpsc::{self, RecvTimeoutError};
use std::thread::JoinHandle;
use std::time::Duration;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressState, ProgressStyle};

/// Delay before the bar appears: short runs finish without one.
const SHOW_AFTER: Duration = Duration::from_secs(1);

/// A progress bar over `total` photons that shows itself after [`SHOW_AFTER`].
pub struct Progress {
    bar: ProgressBar,
    stop: Option<mpsc::Sender<()>>,
    timer: Option<JoinHandle<()>>,
}

impl Progress {
    /// A bar over `total` photons; hidden for good when `quiet` or stderr is no terminal.
    pub fn new(total: u64, quiet: bool) -> Self {
        let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::hidden());
        bar.set_style(
            ProgressStyle::with_template(
                "{msg}[{elapsed_precise}] {wide_bar} {human_pos}/{human_len} photons · {rate} · ETA {eta}",
            )
            .expect("valid template")
            .with_key("rate", |state: &ProgressState, out: &mut dyn std::fmt::Write| {
                let _ = write!(out, "{}", rate(state.per_sec()));
            }),
        );
        if quiet || !std::io::stderr().is_terminal() {
            return Self {
                bar,
                stop: None,
                timer: None,
            };
        }
        let (stop, stopped) = mpsc::channel::<()>();
        let shown = bar.clone();
        let timer = std::thread::spawn(move || {
            if stopped.recv_timeout(SHOW_AFTER) == Err(RecvTimeoutError::Timeout) {
                shown.set_draw_target(ProgressDrawTarget::stderr());
                shown.enable_steady_tick(Duration::from_millis(250));
            }
        });
        Self {
            bar,
            stop: Some(stop),
            timer: Some(timer),
        }
    }

    /// Sets the photons done.
    pub fn set(&self, done: u64) {
        self.bar.set_position(done);
    }

    /// Sets the text before the bar (e.g. `point 3/6 `).
    pub fn message(&self, text: String) {
        self.bar.set_message(text);
    }

    /// Removes the bar.
    pub fn finish(mut self) {
        self.close();
    }

    fn close(&mut self) {
        drop(self.stop.take());
        if let Some(timer) = self.timer.take() {
            let _ = timer.join();
        }
        self.bar.finish_and_clear();
    }
}

impl Drop for Progress {
    fn drop(&mut self) {
        self.close();
    }
}

/// Photons per second, short: `850/s`, `57.7k/s`, `1.23M/s`.
fn rate(per_second: f64) -> String {
    if per_second >= 1e6 {
        format!("{:.2}M/s", per_second / 1e6)
    } else if per_second >= 1e3 {
        format!("{:.1}k/s", per_second / 1e3)
    } else {
        format!("{per_second:.0}/s")
    }
}
