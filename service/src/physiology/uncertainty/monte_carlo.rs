//! Propagation of distributions by a Monte Carlo method (JCGM 101:2008,
//! clauses 5.9 and 7): seeded, reproducible, with the number of draws set by
//! the caller within a hard limit.
//!
//! Random numbers: the ChaCha stream cipher with 8 rounds (`rand_chacha`,
//! a counter-based generator whose output for a seed is fixed by its
//! specification) seeded from a 64-bit seed; normal, rectangular and
//! triangular draws from `rand_distr`; trapezoidal draws as the JCGM 101
//! clause 6.4.4 sum of two rectangular ones. All three crates are pinned to
//! exact versions, so a seed gives the same draws on every build.

use super::coverage::{
    interval_from_unsorted, numerical_tolerance, CoverageInterval, IntervalKind,
};
use super::function::MeasurementFunction;
use super::quantity::InputQuantity;
use super::statement::InputDistribution;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal, Triangular, Uniform};

/// Hard upper limit of draws per evaluation (80 MB of values; about a second
/// for a saturation on one core). Ten times the 10⁶ that JCGM 101 clause
/// 7.2.2 says "can often be expected" to give a 95 % interval correct to one
/// or two significant digits.
pub const MAX_DRAWS: usize = 10_000_000;

/// The default number of draws: enough for the block check of stability
/// (ten blocks of [`BLOCK_DRAWS`]) and fast (see BENCHMARKS-uncertainty.md).
pub const DEFAULT_DRAWS: usize = 100_000;

/// Draws per block of the stability check: JCGM 101 clause 7.9.4 takes
/// max(J, 10⁴) with J = 100/(1 − p), which is 10⁴ for p up to 0.99.
pub const BLOCK_DRAWS: usize = 10_000;

/// The smallest number of draws for a coverage probability p: 100/(1 − p)
/// (JCGM 101 clause 7.9.4 a), 2000 at 95 %, so that each tail holds enough
/// draws to place the interval's ends.
pub fn min_draws(coverage_probability: f64) -> usize {
    (100.0 / (1.0 - coverage_probability)).ceil() as usize
}

/// A run is abandoned once more draws have been rejected than this many times
/// the draws asked for: the stated distributions then put most of their mass
/// outside what the inputs can be.
pub const MAX_REJECTED_PER_KEPT: usize = 1;

/// The caller's Monte Carlo settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MonteCarloOptions {
    /// Number of model values M to obtain (draws rejected for leaving an
    /// input's domain are replaced).
    pub draws: usize,
    /// Seed of the random stream; the same seed gives identical results.
    pub seed: u64,
    /// Probabilistically symmetric or shortest interval.
    pub interval: IntervalKind,
}

impl Default for MonteCarloOptions {
    fn default() -> Self {
        MonteCarloOptions {
            draws: DEFAULT_DRAWS,
            seed: 0,
            interval: IntervalKind::ProbabilisticallySymmetric,
        }
    }
}

/// Whether the run's results are stable to their numerical tolerance, by the
/// block statistics of JCGM 101 clause 7.9.4.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stability {
    /// Number of blocks h.
    pub blocks: usize,
    /// Draws per block.
    pub block_draws: usize,
    /// Standard deviation of the average of the block means.
    pub mean: f64,
    /// … of the block standard uncertainties.
    pub standard_uncertainty: f64,
    /// … of the block interval lower ends.
    pub low: f64,
    /// … of the block interval upper ends.
    pub high: f64,
    /// The numerical tolerance δ of u(y) used as the target.
    pub tolerance: f64,
    /// Whether 2s ≤ δ for all four.
    pub stable: bool,
}

/// The share of kept draws in which an input lay beyond its validated range.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BeyondValidatedRange {
    /// The input.
    pub input: InputQuantity,
    /// Fraction of kept draws outside the range.
    pub fraction: f64,
}

/// The result of a Monte Carlo evaluation.
#[derive(Debug, Clone, PartialEq)]
pub struct MonteCarloResult {
    /// Model values obtained, M.
    pub draws: usize,
    /// The seed.
    pub seed: u64,
    /// The mean of the model values (JCGM 101 7.6: its estimate of Y).
    pub mean: f64,
    /// Their standard deviation (JCGM 101 7.6: u(y)).
    pub standard_uncertainty: f64,
    /// The coverage interval.
    pub interval: CoverageInterval,
    /// Draws redrawn because an input left its domain (the input distributions
    /// are in effect truncated to their domains).
    pub rejected_outside_domain: usize,
    /// Draws redrawn because the physiology function refused them.
    pub rejected_by_model: usize,
    /// Inputs whose draws went beyond a validated range.
    pub beyond_validated_range: Vec<BeyondValidatedRange>,
    /// Block stability, when there were at least two blocks.
    pub stability: Option<Stability>,
}

impl MonteCarloResult {
    /// Fraction of all attempts that were redrawn.
    pub fn rejected_fraction(&self) -> f64 {
        let rejected = (self.rejected_outside_domain + self.rejected_by_model) as f64;
        rejected / (rejected + self.draws as f64)
    }
}

/// Why a Monte Carlo run could not be completed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum MonteCarloError {
    /// The number of draws is outside [min_draws(p), MAX_DRAWS].
    DrawsOutOfRange {
        /// The number asked for.
        draws: usize,
        /// Smallest accepted.
        min: usize,
        /// Largest accepted.
        max: usize,
    },
    /// More draws were rejected than kept.
    TooManyRejected {
        /// Kept so far.
        kept: usize,
        /// Rejected so far.
        rejected: usize,
    },
    /// A distribution could not be built (a bad width).
    BadDistribution {
        /// The input.
        input: InputQuantity,
    },
}

/// One input's sampler.
enum Sampler {
    Normal(Normal<f64>),
    Rectangular(Uniform<f64>),
    Triangular(Triangular<f64>),
    /// JCGM 101 6.4.4: ξ = a + (b − a)/2 · ((1 + β) r₁ + (1 − β) r₂).
    Trapezoidal {
        low: f64,
        half_width: f64,
        beta: f64,
    },
}

impl Sampler {
    fn new(input: InputQuantity, d: &InputDistribution) -> Result<Sampler, MonteCarloError> {
        let bad = MonteCarloError::BadDistribution { input };
        Ok(match *d {
            InputDistribution::Normal {
                mean,
                standard_deviation,
            } => Sampler::Normal(Normal::new(mean, standard_deviation).map_err(|_| bad)?),
            InputDistribution::Rectangular { low, high } => {
                Sampler::Rectangular(Uniform::new_inclusive(low, high).map_err(|_| bad)?)
            }
            InputDistribution::Triangular { low, high } => Sampler::Triangular(
                Triangular::new(low, high, 0.5 * (low + high)).map_err(|_| bad)?,
            ),
            InputDistribution::Trapezoidal { low, high, beta } => Sampler::Trapezoidal {
                low,
                half_width: 0.5 * (high - low),
                beta,
            },
        })
    }

    #[inline]
    fn sample(&self, rng: &mut ChaCha8Rng) -> f64 {
        match self {
            Sampler::Normal(d) => d.sample(rng),
            Sampler::Rectangular(d) => d.sample(rng),
            Sampler::Triangular(d) => d.sample(rng),
            Sampler::Trapezoidal {
                low,
                half_width,
                beta,
            } => {
                let r1: f64 = rng.random();
                let r2: f64 = rng.random();
                low + half_width * ((1.0 + beta) * r1 + (1.0 - beta) * r2)
            }
        }
    }
}

/// Propagate the input distributions through `f` by drawing `options.draws`
/// model values, and summarise them (JCGM 101:2008 clauses 7.4–7.7).
///
/// `distributions[i]` is slot i's distribution, or `None` to hold it at its
/// estimate. A draw that leaves an input's domain, or that the function
/// refuses, is replaced by a fresh one and counted.
///
/// # Errors
///
/// [`MonteCarloError`] for a number of draws outside the limits, a
/// distribution that cannot be built, or more rejected draws than kept.
pub fn propagate<F: MeasurementFunction + ?Sized>(
    f: &F,
    distributions: &[Option<InputDistribution>],
    coverage_probability: f64,
    significant_digits: u8,
    options: &MonteCarloOptions,
) -> Result<MonteCarloResult, MonteCarloError> {
    let min = min_draws(coverage_probability);
    if options.draws < min || options.draws > MAX_DRAWS {
        return Err(MonteCarloError::DrawsOutOfRange {
            draws: options.draws,
            min,
            max: MAX_DRAWS,
        });
    }
    let slots = f.slots();
    let mut samplers = Vec::new();
    for (i, (slot, d)) in slots.iter().zip(distributions).enumerate() {
        if let Some(d) = d {
            if d.standard_deviation() > 0.0 {
                samplers.push((i, Sampler::new(slot.quantity, d)?));
            }
        }
    }
    let mut x = f.estimates();
    let mut rng = ChaCha8Rng::seed_from_u64(options.seed);
    let mut values = Vec::with_capacity(options.draws);
    let mut outside_validated = vec![0usize; slots.len()];
    let (mut rejected_domain, mut rejected_model) = (0usize, 0usize);
    while values.len() < options.draws {
        let mut inside = true;
        for (i, sampler) in &samplers {
            let v = sampler.sample(&mut rng);
            x[*i] = v;
            inside &= slots[*i].domain.contains(v);
        }
        let kept = inside
            && match f.evaluate(&x) {
                Ok(y) if y.is_finite() => {
                    values.push(y);
                    true
                }
                _ => {
                    rejected_model += 1;
                    false
                }
            };
        if !inside {
            rejected_domain += 1;
        }
        if kept {
            for (i, _) in &samplers {
                if let Some((lo, hi)) = slots[*i].validated {
                    if x[*i] < lo || x[*i] > hi {
                        outside_validated[*i] += 1;
                    }
                }
            }
        } else if rejected_domain + rejected_model > MAX_REJECTED_PER_KEPT * options.draws {
            return Err(MonteCarloError::TooManyRejected {
                kept: values.len(),
                rejected: rejected_domain + rejected_model,
            });
        }
    }
    let (mean, standard_uncertainty) = mean_and_standard_deviation(&values);
    let stability = block_stability(
        &values,
        coverage_probability,
        significant_digits,
        options.interval,
        standard_uncertainty,
    );
    let interval = interval_from_unsorted(&mut values, coverage_probability, options.interval);
    let kept = values.len() as f64;
    let beyond_validated_range = samplers
        .iter()
        .filter(|(i, _)| slots[*i].validated.is_some() && outside_validated[*i] > 0)
        .map(|(i, _)| BeyondValidatedRange {
            input: slots[*i].quantity,
            fraction: outside_validated[*i] as f64 / kept,
        })
        .collect();
    Ok(MonteCarloResult {
        draws: values.len(),
        seed: options.seed,
        mean,
        standard_uncertainty,
        interval,
        rejected_outside_domain: rejected_domain,
        rejected_by_model: rejected_model,
        beyond_validated_range,
        stability,
    })
}

/// Mean and standard deviation (divisor M − 1) in two passes.
///
/// # Formula
///
/// ```text
/// ỹ = Σ yᵣ / M        u(ỹ)² = Σ (yᵣ − ỹ)² / (M − 1)
/// ```
///
/// JCGM 101:2008 clause 7.6.
pub fn mean_and_standard_deviation(values: &[f64]) -> (f64, f64) {
    let m = values.len() as f64;
    let mean = values.iter().sum::<f64>() / m;
    let squares: f64 = values.iter().map(|y| (y - mean) * (y - mean)).sum();
    (mean, (squares / (m - 1.0)).sqrt())
}

/// Split the draws into blocks of [`BLOCK_DRAWS`] in draw order (each copied
/// into one scratch buffer for its interval), and compare the spread of the block results with the numerical tolerance.
///
/// # Formula
///
/// ```text
/// s_z = √( Σ_r (z⁽ʳ⁾ − z̄)² / (h (h − 1)) )   for z = mean, u, y_low, y_high over h blocks
/// stable when 2 s_z ≤ δ for every z      (δ: numerical tolerance of u(y))
/// ```
///
/// JCGM 101:2008 clause 7.9.4 (the adaptive procedure's stopping rule, used
/// here as a check of a run of fixed length).
fn block_stability(
    values: &[f64],
    p: f64,
    significant_digits: u8,
    kind: IntervalKind,
    u: f64,
) -> Option<Stability> {
    let blocks = values.len() / BLOCK_DRAWS;
    if blocks < 2 {
        return None;
    }
    let mut stats = Vec::with_capacity(blocks);
    let mut scratch = Vec::with_capacity(BLOCK_DRAWS);
    for block in values.chunks(BLOCK_DRAWS).take(blocks) {
        let (mean, sd) = mean_and_standard_deviation(block);
        scratch.clear();
        scratch.extend_from_slice(block);
        let interval = interval_from_unsorted(&mut scratch, p, kind);
        stats.push([mean, sd, interval.low, interval.high]);
    }
    let h = blocks as f64;
    let spread = |k: usize| {
        let avg = stats.iter().map(|s| s[k]).sum::<f64>() / h;
        (stats.iter().map(|s| (s[k] - avg).powi(2)).sum::<f64>() / (h * (h - 1.0))).sqrt()
    };
    let [mean, standard_uncertainty, low, high] = [spread(0), spread(1), spread(2), spread(3)];
    let tolerance = numerical_tolerance(u, significant_digits);
    Some(Stability {
        blocks,
        block_draws: BLOCK_DRAWS,
        mean,
        standard_uncertainty,
        low,
        high,
        tolerance,
        stable: [mean, standard_uncertainty, low, high]
            .iter()
            .all(|s| 2.0 * s <= tolerance),
    })
}
