//! The retry policy: UNAVAILABLE only, exponential backoff with jitter and a
//! cap, as gRPC's retry design (proposal A6) describes.
//!
//! The n-th retry waits `min(initial * multiplier^(n-1), max) * random(0.8, 1.2)`
//! (grpc/proposal A6-client-retries.md, "Exponential backoff"). The loop
//! itself is the `backon` crate's; this module only sets its parameters and
//! applies A6's multiplicative jitter to each delay.

use std::time::Duration;

use backon::{BackoffBuilder, ExponentialBuilder};

/// A6 clients treat any `maxAttempts` above this as this
/// (grpc/proposal A6-client-retries.md).
pub const MAX_ATTEMPTS_CAP: u32 = 5;

/// Lower bound of A6's jitter factor.
const JITTER_MIN: f64 = 0.8;
/// Width of A6's jitter interval (0.8 to 1.2).
const JITTER_SPAN: f64 = 0.4;

/// How often and how patiently to retry a call the server answered with
/// UNAVAILABLE. No other status is ever retried: INVALID_ARGUMENT and the
/// rest would fail the same way again, and DEADLINE_EXCEEDED must be honoured
/// (AIP-194).
///
/// The default is the project's service config (conventions 4.7):
/// 4 attempts, 0.1 s initial backoff, multiplier 2, at most 1 s.
///
/// ```
/// use std::time::Duration;
/// use oxbind_client::RetryPolicy;
/// let policy = RetryPolicy::default().with_max_attempts(3);
/// assert_eq!(policy.max_attempts(), 3);
/// assert_eq!(policy.initial_backoff(), Duration::from_millis(100));
/// assert_eq!(RetryPolicy::none().max_attempts(), 1);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RetryPolicy {
    max_attempts: u32,
    initial_backoff: Duration,
    max_backoff: Duration,
    multiplier: f32,
}

impl Default for RetryPolicy {
    fn default() -> Self {
        Self {
            max_attempts: 4,
            initial_backoff: Duration::from_millis(100),
            max_backoff: Duration::from_secs(1),
            multiplier: 2.0,
        }
    }
}

impl RetryPolicy {
    /// One attempt, never retried.
    pub fn none() -> Self {
        Self::default().with_max_attempts(1)
    }

    /// Attempts in all, counting the first; kept within 1 to
    /// [`MAX_ATTEMPTS_CAP`].
    pub fn with_max_attempts(mut self, attempts: u32) -> Self {
        self.max_attempts = attempts.clamp(1, MAX_ATTEMPTS_CAP);
        self
    }

    /// The wait before the first retry (before jitter).
    pub fn with_initial_backoff(mut self, backoff: Duration) -> Self {
        self.initial_backoff = backoff;
        self
    }

    /// The cap on any one wait (before jitter).
    pub fn with_max_backoff(mut self, backoff: Duration) -> Self {
        self.max_backoff = backoff;
        self
    }

    /// The factor each wait grows by; values below 1 are taken as 1.
    pub fn with_multiplier(mut self, multiplier: f32) -> Self {
        self.multiplier = if multiplier.is_finite() {
            multiplier.max(1.0)
        } else {
            1.0
        };
        self
    }

    /// Attempts in all, counting the first.
    pub fn max_attempts(&self) -> u32 {
        self.max_attempts
    }

    /// The wait before the first retry (before jitter).
    pub fn initial_backoff(&self) -> Duration {
        self.initial_backoff
    }

    /// The cap on any one wait (before jitter).
    pub fn max_backoff(&self) -> Duration {
        self.max_backoff
    }

    /// The waits between attempts, jittered, for `backon`.
    pub(crate) fn backoff(&self) -> impl backon::Backoff {
        ExponentialBuilder::default()
            .with_min_delay(self.initial_backoff)
            .with_max_delay(self.max_backoff)
            .with_factor(self.multiplier)
            .with_max_times(self.max_attempts.saturating_sub(1) as usize)
            .build()
            .map(jitter as fn(Duration) -> Duration)
    }
}

/// Multiply a wait by a uniform random factor in [0.8, 1.2) (A6).
fn jitter(delay: Duration) -> Duration {
    delay.mul_f64(JITTER_MIN + JITTER_SPAN * fastrand::f64())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn waits_follow_a6_exponential_backoff_with_cap_and_jitter() {
        // Expected bases derived from A6's formula with the default policy:
        // 0.1 s, 0.2 s, 0.4 s; then no more (4 attempts = 3 retries).
        let waits: Vec<Duration> = RetryPolicy::default().backoff().collect();
        assert_eq!(waits.len(), 3);
        for (wait, base_ms) in waits.iter().zip([100.0, 200.0, 400.0]) {
            let ms = wait.as_secs_f64() * 1000.0;
            assert!(
                (base_ms * 0.8..=base_ms * 1.2).contains(&ms),
                "{ms} ms outside jitter band around {base_ms} ms"
            );
        }
        let capped: Vec<Duration> = RetryPolicy::default()
            .with_max_attempts(5)
            .with_initial_backoff(Duration::from_millis(600))
            .backoff()
            .collect();
        // 600 ms, then 1200 -> cap 1000 ms, and so on.
        for wait in &capped[1..] {
            assert!(wait.as_secs_f64() <= 1.2 + 1e-9, "{wait:?} above cap * 1.2");
            assert!(wait.as_secs_f64() >= 0.8 - 1e-9, "{wait:?} below cap * 0.8");
        }
    }

    #[test]
    fn attempts_are_capped_at_five_and_at_least_one() {
        assert_eq!(
            RetryPolicy::default().with_max_attempts(9).max_attempts(),
            5
        );
        assert_eq!(
            RetryPolicy::default().with_max_attempts(0).max_attempts(),
            1
        );
        assert_eq!(RetryPolicy::none().backoff().count(), 0);
    }
}
