//! Coverage intervals from Monte Carlo draws (JCGM 101:2008 clause 7.7), the
//! numerical tolerance of a reported value (clause 7.9.2) and the validation
//! of the first-order result against the Monte Carlo one (clause 8).
//!
//! Clause numbers and rules are from JCGM 101:2008 as recalled and recorded in
//! `shared/reference/assurance.md` A.2 (tagged there from memory); the rules
//! are checked in the tests on distributions whose quantiles are known.

/// Which coverage interval (JCGM 101:2008 clause 7.7).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum IntervalKind {
    /// y ± k·u(y) with the normal coverage factor k (the GUM uncertainty
    /// framework's interval).
    FirstOrderNormal,
    /// Probabilistically symmetric: equal probability (1 − p)/2 below and
    /// above (clause 7.7.2).
    ProbabilisticallySymmetric,
    /// Shortest among the intervals of coverage probability p (clause 7.7.3).
    Shortest,
}

impl IntervalKind {
    /// A stable lower_snake_case name.
    pub const fn name(self) -> &'static str {
        match self {
            IntervalKind::FirstOrderNormal => "first_order_normal",
            IntervalKind::ProbabilisticallySymmetric => "probabilistically_symmetric",
            IntervalKind::Shortest => "shortest",
        }
    }
}

/// A coverage interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoverageInterval {
    /// Lower end, engine unit of the value.
    pub low: f64,
    /// Upper end.
    pub high: f64,
    /// Coverage probability p.
    pub probability: f64,
    /// How it was formed.
    pub kind: IntervalKind,
}

impl CoverageInterval {
    /// high − low.
    pub fn length(&self) -> f64 {
        self.high - self.low
    }
}

/// q, the number of draws an interval of coverage probability p spans:
/// pM if that is an integer, else the integer part of pM + 1/2 (clause 7.7.1).
fn spanned_draws(draws: usize, p: f64) -> usize {
    let pm = p * draws as f64;
    let q = if pm.fract() == 0.0 {
        pm
    } else {
        (pm + 0.5).floor()
    };
    (q as usize).clamp(1, draws.saturating_sub(1).max(1))
}

/// The coverage interval of probability `p` from draws sorted ascending.
///
/// # Formula (1-based order statistics ỹ₍ᵣ₎, M draws)
///
/// ```text
/// q = pM (integer) or ⌊pM + 1/2⌋
/// probabilistically symmetric: r = (M − q)/2 if M − q is even, else (M − q + 1)/2;  [ỹ₍ᵣ₎, ỹ₍ᵣ₊q₎]
/// shortest: the r in 1 … M − q that minimises ỹ₍ᵣ₊q₎ − ỹ₍ᵣ₎;                       [ỹ₍ᵣ₎, ỹ₍ᵣ₊q₎]
/// ```
///
/// JCGM 101:2008 clauses 7.7.1–7.7.3. `sorted` must hold at least two values
/// (the caller enforces a minimum number of draws).
pub fn interval_from_sorted(sorted: &[f64], p: f64, kind: IntervalKind) -> CoverageInterval {
    let m = sorted.len();
    let q = spanned_draws(m, p);
    let r = match kind {
        IntervalKind::Shortest => shortest_start(sorted, q),
        _ => symmetric_start(m, q),
    };
    interval(sorted[r - 1], sorted[(r + q - 1).min(m - 1)], p, kind)
}

/// The same interval as [`interval_from_sorted`] from unsorted draws, which
/// are reordered in place: only the order statistics the interval needs are
/// placed (selection, and sorting of the two tails of M − q draws each for the
/// shortest interval), which costs O(M) instead of a full sort.
pub fn interval_from_unsorted(values: &mut [f64], p: f64, kind: IntervalKind) -> CoverageInterval {
    let m = values.len();
    let q = spanned_draws(m, p);
    match kind {
        IntervalKind::Shortest if 2 * q < m => {
            // The tails would overlap (p below one half): sort everything.
            values.sort_unstable_by(f64::total_cmp);
            interval_from_sorted(values, p, kind)
        }
        IntervalKind::Shortest => {
            // Candidates: ỹ₍₁₎ … ỹ₍ₘ₋q₎ (lower tail) and ỹ₍q₊₁₎ … ỹ₍ₘ₎ (upper
            // tail); for p ≥ 1/2 the tails do not overlap.
            let k = m - q;
            values.select_nth_unstable_by(k, f64::total_cmp);
            values[..k].sort_unstable_by(f64::total_cmp);
            let (_, upper) = values.split_at_mut(k);
            let from = q - k;
            upper.select_nth_unstable_by(from, f64::total_cmp);
            upper[from..].sort_unstable_by(f64::total_cmp);
            let r = shortest_start(values, q);
            interval(values[r - 1], values[r + q - 1], p, kind)
        }
        _ => {
            let r = symmetric_start(m, q);
            let low = *values.select_nth_unstable_by(r - 1, f64::total_cmp).1;
            let high_index = (r + q - 1).min(m - 1);
            let high = *values.select_nth_unstable_by(high_index, f64::total_cmp).1;
            interval(low, high, p, kind)
        }
    }
}

/// r of the probabilistically symmetric interval (1-based).
fn symmetric_start(m: usize, q: usize) -> usize {
    // (M − q)/2 when M − q is even, (M − q + 1)/2 when odd: the ceiling of half.
    (m - q).div_ceil(2).max(1)
}

/// r of the shortest interval (1-based; the first r of least length), given
/// the order statistics of both tails at their sorted positions.
fn shortest_start(values: &[f64], q: usize) -> usize {
    let m = values.len();
    let mut best = 1;
    let mut best_length = f64::INFINITY;
    for r in 1..=(m - q) {
        let length = values[r + q - 1] - values[r - 1];
        if length < best_length {
            best_length = length;
            best = r;
        }
    }
    best
}

fn interval(low: f64, high: f64, p: f64, kind: IntervalKind) -> CoverageInterval {
    CoverageInterval {
        low,
        high,
        probability: p,
        kind: if kind == IntervalKind::Shortest {
            IntervalKind::Shortest
        } else {
            IntervalKind::ProbabilisticallySymmetric
        },
    }
}

/// The numerical tolerance δ of a value `z` reported to `significant_digits`
/// significant decimal digits.
///
/// # Formula
///
/// ```text
/// z rounded to n_dig significant digits = c × 10^ℓ  (c an n_dig-digit integer)
/// δ = ½ × 10^ℓ
/// ```
///
/// JCGM 101:2008 clause 7.9.2 (e.g. u = 0.0125 to two digits is 13 × 10⁻³, so
/// δ = 0.0005; assurance.md A.3 uses the same). Returns 0 for z = 0.
pub fn numerical_tolerance(z: f64, significant_digits: u8) -> f64 {
    let z = z.abs();
    if z == 0.0 || !z.is_finite() {
        return 0.0;
    }
    let digits = i32::from(significant_digits.max(1));
    let mut exponent = z.log10().floor() as i32 - digits + 1;
    // Rounding may carry into the next decade (0.0996 to two digits is 0.10).
    let rounded = (z / 10f64.powi(exponent)).round();
    if rounded >= 10f64.powi(digits) {
        exponent += 1;
    }
    0.5 * 10f64.powi(exponent)
}

/// The JCGM 101 clause 8 comparison of the first-order interval with the
/// Monte Carlo one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Validation {
    /// Significant digits regarded as meaningful in u(y).
    pub significant_digits: u8,
    /// The numerical tolerance δ of the first-order u(y).
    pub tolerance: f64,
    /// |y − U − y_low|.
    pub lower_difference: f64,
    /// |y + U − y_high|.
    pub upper_difference: f64,
    /// Whether both differences are within δ: the first-order result is
    /// validated.
    pub passed: bool,
}

/// Validate the first-order interval `y ± U` against the Monte Carlo interval
/// `[low, high]`, with δ from the first-order u(y).
///
/// # Formula
///
/// ```text
/// d_low  = |y − U_p − y_low|      d_high = |y + U_p − y_high|
/// validated when d_low ≤ δ and d_high ≤ δ   (δ: numerical_tolerance(u(y), n_dig))
/// ```
///
/// JCGM 101:2008 clause 8.1 (from memory, as recorded in assurance.md A.2).
pub fn validate(
    first_order: &CoverageInterval,
    first_order_u: f64,
    monte_carlo: &CoverageInterval,
    significant_digits: u8,
) -> Validation {
    let tolerance = numerical_tolerance(first_order_u, significant_digits);
    let lower_difference = (first_order.low - monte_carlo.low).abs();
    let upper_difference = (first_order.high - monte_carlo.high).abs();
    Validation {
        significant_digits,
        tolerance,
        lower_difference,
        upper_difference,
        passed: lower_difference <= tolerance && upper_difference <= tolerance,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn symmetric_interval_picks_the_clause_7_7_order_statistics() {
        // M = 100, p = 0.95: q = 95, M − q = 5 (odd) so r = 3: [ỹ₍₃₎, ỹ₍₉₈₎].
        let sorted: Vec<f64> = (1..=100).map(f64::from).collect();
        let i = interval_from_sorted(&sorted, 0.95, IntervalKind::ProbabilisticallySymmetric);
        assert_eq!((i.low, i.high), (3.0, 98.0));
        // M = 40: pM = 38 exactly, M − q = 2 (even) so r = 1: [ỹ₍₁₎, ỹ₍₃₉₎].
        let sorted: Vec<f64> = (1..=40).map(f64::from).collect();
        let i = interval_from_sorted(&sorted, 0.95, IntervalKind::ProbabilisticallySymmetric);
        assert_eq!((i.low, i.high), (1.0, 39.0));
    }

    #[test]
    fn shortest_interval_finds_the_densest_stretch() {
        // A skewed sample: many values near 0, a long right tail.
        let sorted: Vec<f64> = (0..1000).map(|i| (f64::from(i) / 1000.0).powi(4)).collect();
        let shortest = interval_from_sorted(&sorted, 0.9, IntervalKind::Shortest);
        let symmetric =
            interval_from_sorted(&sorted, 0.9, IntervalKind::ProbabilisticallySymmetric);
        assert_eq!(shortest.low, 0.0);
        assert!(shortest.length() < symmetric.length());
        assert_eq!(shortest.kind, IntervalKind::Shortest);
    }

    #[test]
    fn selection_gives_the_same_intervals_as_a_full_sort() {
        // A deterministic scrambled, skewed sample.
        let mut values: Vec<f64> = (0..5003u64)
            .map(|i| {
                let u = ((i * 7919) % 5003) as f64 / 5003.0;
                u * u * u + 0.1 * u
            })
            .collect();
        let mut sorted = values.clone();
        sorted.sort_by(f64::total_cmp);
        for kind in [
            IntervalKind::ProbabilisticallySymmetric,
            IntervalKind::Shortest,
        ] {
            for p in [0.3, 0.5, 0.9, 0.95, 0.99] {
                let expected = interval_from_sorted(&sorted, p, kind);
                let got = interval_from_unsorted(&mut values, p, kind);
                assert_eq!(got, expected, "{kind:?} {p}");
            }
        }
    }

    #[test]
    fn tolerance_follows_clause_7_9_2() {
        assert!((numerical_tolerance(0.0125, 2) - 0.0005).abs() < 1e-15);
        assert!((numerical_tolerance(2.0, 2) - 0.05).abs() < 1e-15);
        assert!((numerical_tolerance(2.0, 3) - 0.005).abs() < 1e-15);
        assert!((numerical_tolerance(0.0996, 2) - 0.005).abs() < 1e-15);
        assert!((numerical_tolerance(1.0, 1) - 0.5).abs() < 1e-15);
        assert_eq!(numerical_tolerance(0.0, 2), 0.0);
    }

    #[test]
    fn validation_compares_both_ends_with_delta() {
        let first = CoverageInterval {
            low: 0.8814,
            high: 0.9302,
            probability: 0.95,
            kind: IntervalKind::FirstOrderNormal,
        };
        let mc = CoverageInterval {
            low: 0.8768,
            high: 0.9268,
            probability: 0.95,
            kind: IntervalKind::ProbabilisticallySymmetric,
        };
        // assurance.md A.3, PO2 60 mmHg row: fails at two digits, passes at one.
        assert!(!validate(&first, 0.0125, &mc, 2).passed);
        assert!(validate(&first, 0.0125, &mc, 1).passed);
    }
}
