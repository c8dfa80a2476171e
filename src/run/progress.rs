//! The progress bar on stderr for runs that last more than about a second: a bar with the
//! trials made and the time left when their number is known, else a spinner with the count.
//! Hidden when stderr is not a terminal (indicatif's check) and with `--quiet`.

use crate::engine;
use crate::report::format::grouped;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

/// A progress bar running on its own thread until [`Progress::finish`].
pub(crate) struct Progress {
    stop: Arc<AtomicBool>,
    handle: Option<JoinHandle<()>>,
}

impl Progress {
    /// Start watching the trial counter (`expected`: the trials the run will make, if known).
    pub(crate) fn start(quiet: bool, expected: Option<u64>) -> Progress {
        let stop = Arc::new(AtomicBool::new(false));
        let handle = (!quiet).then(|| {
            let stop = stop.clone();
            std::thread::spawn(move || watch(&stop, expected))
        });
        Progress { stop, handle }
    }

    /// Stop and clear the bar.
    pub(crate) fn finish(mut self) {
        self.stop.store(true, Ordering::Relaxed);
        if let Some(h) = self.handle.take() {
            let _ = h.join();
        }
    }
}

fn watch(stop: &AtomicBool, expected: Option<u64>) {
    let start = Instant::now();
    let base = engine::progress::trials_done();
    let mut bar: Option<indicatif::ProgressBar> = None;
    while !stop.load(Ordering::Relaxed) {
        std::thread::sleep(Duration::from_millis(100));
        if bar.is_none() && start.elapsed() > Duration::from_secs(1) {
            let (b, template) = match expected {
                Some(total) => (
                    indicatif::ProgressBar::new(total),
                    "{elapsed} [{bar:30}] {msg} ({eta} left)",
                ),
                None => (
                    indicatif::ProgressBar::new_spinner(),
                    "{spinner} {elapsed} {msg}",
                ),
            };
            b.set_style(
                indicatif::ProgressStyle::with_template(template)
                    .map(|s| s.progress_chars("=> "))
                    .unwrap_or_else(|_| indicatif::ProgressStyle::default_spinner()),
            );
            bar = Some(b);
        }
        if let Some(b) = &bar {
            let done = engine::progress::trials_done() - base;
            b.set_position(done);
            b.set_message(match expected {
                Some(total) => format!("{} of {} trials", grouped(done.min(total)), grouped(total)),
                None => format!("{} trials", grouped(done)),
            });
            b.tick();
        }
    }
    if let Some(b) = bar {
        b.finish_and_clear();
    }
}
