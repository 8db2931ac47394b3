//! The log writer off the request path.
//!
//! A log line is formatted by the thread that emits it and then handed to a
//! bounded queue; one thread of its own writes the queue to the sink
//! (standard error). That thread is `tracing-appender`'s non-blocking
//! writer, in its lossy mode: when the queue is full, because the sink is
//! slower than the calls, the new line is dropped and counted, and the
//! thread that emitted it (a call's) goes on at once. A call never waits for
//! the log. The writer thread writes what it finds queued through a buffer,
//! then rests for [`WRITER_REST`], so that under load it writes lines in
//! batches rather than waking for each one.
//!
//! Lost lines are not silent: they are added to the metric
//! `oxbind.server.log.dropped_lines` every [`DROP_CHECK_INTERVAL`], and a
//! warning says how many at most once every [`DROP_WARNING_INTERVAL`]. At
//! shutdown the last count is recorded and warned, then the queue is written
//! out before the process exits.

use std::{
    io::Write,
    sync::{Arc, Mutex},
    time::{Duration, Instant},
};

use tracing_appender::non_blocking::{ErrorCounter, NonBlocking, NonBlockingBuilder, WorkerGuard};

/// How often the dropped-line count is read and added to the metric.
pub const DROP_CHECK_INTERVAL: Duration = Duration::from_secs(1);

/// The shortest time between two warnings that lines were dropped.
pub const DROP_WARNING_INTERVAL: Duration = Duration::from_secs(60);

/// The name of the thread that writes the log.
const WRITER_THREAD_NAME: &str = "oxbind-log-writer";

/// The writer thread's buffer in front of the sink.
pub const WRITE_BUFFER_BYTES: usize = 64 * 1024;

/// How long the writer thread rests after writing out what it found queued.
/// Lines that arrive meanwhile wait in the queue and are then written
/// together: under load the thread takes a batch every rest instead of
/// waking, writing and going back to sleep for every line (which cost as
/// much CPU as formatting the lines). A line reaches the sink at most this
/// much later than it would have; an idle server's first line at once.
pub const WRITER_REST: Duration = Duration::from_millis(10);

/// What one look at the dropped-line count found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct DropNews {
    /// Lines dropped since the last look: to add to the metric.
    pub new_lines: usize,
    /// A warning to give now, if one is due.
    pub warning: Option<DropWarning>,
}

/// A warning that lines were dropped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct DropWarning {
    /// Lines dropped since the last warning.
    pub since_last_warning: usize,
    /// Lines dropped since the server started.
    pub total: usize,
}

/// The bookkeeping of dropped lines: what the metric has, what was warned,
/// and when. Pure, so that the once-a-minute rule is tested without a clock.
#[derive(Debug, Default)]
pub struct DropReport {
    recorded: usize,
    warned: usize,
    last_warning: Option<Instant>,
}

impl DropReport {
    /// Look at the count `total` (dropped since start) at `now`: the lines to
    /// add to the metric, and a warning if lines were dropped since the last
    /// one and none was given in the last [`DROP_WARNING_INTERVAL`].
    pub fn observe(&mut self, total: usize, now: Instant) -> DropNews {
        let due = self
            .last_warning
            .is_none_or(|at| now.saturating_duration_since(at) >= DROP_WARNING_INTERVAL);
        self.look(total, now, due)
    }

    /// The last look, at shutdown: warns of any lines dropped since the last
    /// warning, however recent it was, so that the log's last word on the
    /// matter is complete.
    pub fn last(&mut self, total: usize, now: Instant) -> DropNews {
        self.look(total, now, true)
    }

    fn look(&mut self, total: usize, now: Instant, warning_due: bool) -> DropNews {
        let new_lines = total.saturating_sub(self.recorded);
        self.recorded = self.recorded.max(total);
        let unwarned = total.saturating_sub(self.warned);
        let warning = (warning_due && unwarned > 0).then(|| {
            self.warned = total;
            self.last_warning = Some(now);
            DropWarning {
                since_last_warning: unwarned,
                total,
            }
        });
        DropNews { new_lines, warning }
    }
}

/// The queue between the threads that log and the thread that writes: keep
/// it until the process ends, then [`LogQueue::close`] it.
#[derive(Debug)]
pub struct LogQueue {
    counter: ErrorCounter,
    report: Arc<Mutex<DropReport>>,
    watcher: Option<tokio::task::JoinHandle<()>>,
    guard: WorkerGuard,
}

impl LogQueue {
    /// A queue of at most `lines` lines in front of `sink`, and the writer to
    /// give the log subscriber.
    pub fn new<W: Write + Send + 'static>(sink: W, lines: usize) -> (NonBlocking, Self) {
        let (writer, guard) = NonBlockingBuilder::default()
            .buffered_lines_limit(lines)
            .lossy(true)
            .thread_name(WRITER_THREAD_NAME)
            .finish(RestingWriter::new(sink));
        let queue = Self {
            counter: writer.error_counter(),
            report: Arc::default(),
            watcher: None,
            guard,
        };
        (writer, queue)
    }

    /// Lines dropped since the queue was made.
    pub fn dropped_lines(&self) -> usize {
        self.counter.dropped_lines()
    }

    /// Start reading the dropped-line count every [`DROP_CHECK_INTERVAL`]
    /// on the current Tokio runtime (nothing without one).
    pub fn watch(&mut self) {
        let Ok(runtime) = tokio::runtime::Handle::try_current() else {
            return;
        };
        let counter = self.counter.clone();
        let report = Arc::clone(&self.report);
        self.watcher = Some(runtime.spawn(async move {
            let mut ticks = tokio::time::interval(DROP_CHECK_INTERVAL);
            ticks.set_missed_tick_behavior(tokio::time::MissedTickBehavior::Delay);
            loop {
                ticks.tick().await;
                let news = lock(&report).observe(counter.dropped_lines(), Instant::now());
                tell(news);
            }
        }));
    }

    /// Stop watching, and record and warn of the lines dropped since the
    /// last look. Call it before the metric exporter's last export.
    pub fn report_last(&mut self) {
        if let Some(watcher) = self.watcher.take() {
            watcher.abort();
        }
        let news = lock(&self.report).last(self.counter.dropped_lines(), Instant::now());
        tell(news);
    }

    /// Write out what is queued and stop the writer thread. The writer gets
    /// about a second (tracing-appender's bound), so a sink that no longer
    /// reads cannot hold the process.
    pub fn close(mut self) {
        self.report_last();
        drop(self.guard);
    }
}

/// The sink as the writer thread sees it: buffered, and resting after each
/// flush. tracing-appender's writer thread writes every line it finds queued
/// and then flushes, so the flush is where one batch ends.
struct RestingWriter<W: Write> {
    inner: std::io::BufWriter<W>,
}

impl<W: Write> RestingWriter<W> {
    fn new(sink: W) -> Self {
        Self {
            inner: std::io::BufWriter::with_capacity(WRITE_BUFFER_BYTES, sink),
        }
    }
}

impl<W: Write> Write for RestingWriter<W> {
    fn write(&mut self, bytes: &[u8]) -> std::io::Result<usize> {
        self.inner.write(bytes)
    }

    fn write_all(&mut self, bytes: &[u8]) -> std::io::Result<()> {
        self.inner.write_all(bytes)
    }

    fn flush(&mut self) -> std::io::Result<()> {
        let written = self.inner.flush();
        std::thread::sleep(WRITER_REST);
        written
    }
}

fn lock(report: &Mutex<DropReport>) -> std::sync::MutexGuard<'_, DropReport> {
    // The report holds plain counts; a panic elsewhere cannot leave it torn.
    report
        .lock()
        .unwrap_or_else(std::sync::PoisonError::into_inner)
}

/// Add the news to the metric and give its warning.
fn tell(news: DropNews) {
    crate::instruments::record_log_lines_dropped(news.new_lines);
    if let Some(warning) = news.warning {
        tracing::warn!(
            dropped = warning.since_last_warning,
            dropped_total = warning.total,
            "the log queue was full, so log lines were dropped (the log sink is slower than the \
             calls; the metric oxbind.server.log.dropped_lines counts them); no call waited"
        );
    }
}

#[cfg(test)]
mod tests {
    use std::sync::mpsc;

    use tracing_subscriber::layer::SubscriberExt;

    use super::*;

    #[test]
    fn the_first_drop_is_warned_at_once_then_at_most_once_a_minute() {
        let start = Instant::now();
        let at = |s: u64| start + Duration::from_secs(s);
        let mut report = DropReport::default();
        assert_eq!(report.observe(0, at(0)), DropNews::default());
        let first = report.observe(5, at(1));
        assert_eq!(first.new_lines, 5);
        assert_eq!(
            first.warning,
            Some(DropWarning {
                since_last_warning: 5,
                total: 5
            })
        );
        // More drops within the minute: counted, not warned.
        let quiet = report.observe(12, at(30));
        assert_eq!((quiet.new_lines, quiet.warning), (7, None));
        let quiet = report.observe(20, at(60));
        assert_eq!((quiet.new_lines, quiet.warning), (8, None));
        // A minute after the first warning: one warning for all of them.
        let next = report.observe(21, at(61));
        assert_eq!(next.new_lines, 1);
        assert_eq!(
            next.warning,
            Some(DropWarning {
                since_last_warning: 16,
                total: 21
            })
        );
        // Nothing new: nothing to say, however long after.
        assert_eq!(report.observe(21, at(600)), DropNews::default());
    }

    #[test]
    fn the_last_look_warns_of_whatever_was_not_warned() {
        let start = Instant::now();
        let mut report = DropReport::default();
        let _ = report.observe(3, start);
        let _ = report.observe(9, start + Duration::from_secs(2));
        let last = report.last(10, start + Duration::from_secs(3));
        assert_eq!(last.new_lines, 1);
        assert_eq!(
            last.warning,
            Some(DropWarning {
                since_last_warning: 7,
                total: 10
            })
        );
        assert_eq!(
            report.last(10, start + Duration::from_secs(4)),
            DropNews::default()
        );
    }

    /// A sink that takes nothing until it is let go, then counts lines.
    struct StuckSink {
        release: Option<mpsc::Receiver<()>>,
        written: Arc<Mutex<Vec<u8>>>,
    }

    impl Write for StuckSink {
        fn write(&mut self, bytes: &[u8]) -> std::io::Result<usize> {
            if let Some(release) = self.release.take() {
                let _ = release.recv();
            }
            self.written.lock().unwrap().extend_from_slice(bytes);
            Ok(bytes.len())
        }
        fn flush(&mut self) -> std::io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn a_full_queue_drops_and_counts_lines_and_blocks_no_caller() {
        const QUEUE: usize = 16;
        const LINES: usize = 5_000;
        let (release, stuck) = mpsc::channel();
        let written = Arc::new(Mutex::new(Vec::new()));
        let sink = StuckSink {
            release: Some(stuck),
            written: Arc::clone(&written),
        };
        let (writer, queue) = LogQueue::new(sink, QUEUE);

        // Log from another thread while the sink takes nothing; that thread
        // must finish on its own (a caller that waited for the sink would
        // wait forever, and the receive below would fail after a minute).
        let (done_tx, done_rx) = mpsc::channel();
        let logger = std::thread::spawn(move || {
            let subscriber = tracing_subscriber::registry().with(
                tracing_subscriber::fmt::layer()
                    .with_writer(writer)
                    .with_ansi(false),
            );
            tracing::subscriber::with_default(subscriber, || {
                for line in 0..LINES {
                    tracing::info!(target: "oxbind::access", line, "call");
                }
            });
            done_tx.send(()).unwrap();
        });
        done_rx
            .recv_timeout(Duration::from_secs(60))
            .expect("a full log queue held up the thread that logs");
        logger.join().unwrap();

        // At most the queue and what the writer thread holds in its buffer
        // (lines of at least 40 bytes) got through.
        let dropped = queue.dropped_lines();
        let held = QUEUE + 1 + WRITE_BUFFER_BYTES / 40;
        assert!(
            (LINES - held..=LINES).contains(&dropped),
            "{dropped} of {LINES} lines dropped with a queue of {QUEUE}"
        );

        // Let the sink go: closing writes out what was queued.
        release.send(()).unwrap();
        queue.close();
        let text = String::from_utf8(written.lock().unwrap().clone()).unwrap();
        let lines = text.lines().filter(|l| l.contains("call")).count();
        assert_eq!(
            lines + dropped,
            LINES,
            "every line was written or counted as dropped"
        );
        assert!(lines >= 1, "the queued lines were written out at close");
    }
}
