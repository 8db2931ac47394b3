//! How a caller (or a built-in profile) states an input's uncertainty, and its
//! conversion to a standard uncertainty and a probability distribution per the
//! GUM (JCGM 100:2008, clause 4.3, Type B evaluation) and JCGM 101:2008
//! (clause 6.4, assigning distributions).
//!
//! # Conversions (Type B, JCGM 100:2008 clause 4.3; clause numbers from memory)
//!
//! | statement | standard uncertainty u | distribution for Monte Carlo |
//! |---|---|---|
//! | standard uncertainty u | u | normal (JCGM 101 6.4.7: only x and u known) |
//! | bound ±a covering probability p, normal (GUM 4.3.4) | a / Φ⁻¹((1+p)/2), e.g. a/1.960 at 95 % | normal |
//! | expanded uncertainty U with coverage factor k (GUM 4.3.3) | U / k | normal |
//! | bound ±a, rectangular (GUM 4.3.7) | a / √3 | rectangular |
//! | bound ±a, triangular (GUM 4.3.9, β = 0) | a / √6 | triangular |
//! | bound ±a, trapezoidal with top/base ratio β (GUM 4.3.9) | a·√((1+β²)/6) | trapezoidal |
//!
//! The variances of the rectangular, triangular and trapezoidal distributions
//! are mathematical facts (re-derived in the tests by sampling).

use super::normal::normal_coverage_factor;
use super::quantity::InputQuantity;
use std::fmt;

/// A magnitude in the input's engine unit with an optional part relative to
/// the value: the figure at a value x is `max(absolute, relative·|x|)` —
/// "±15 % or ±15 mmHg (greater)", as proficiency-testing limits are written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Amount {
    /// The absolute part, in the input's engine unit (≥ 0).
    pub absolute: f64,
    /// The relative part, a fraction of |x| (≥ 0; 0.05 is 5 %).
    pub relative: f64,
}

impl Amount {
    /// An absolute amount.
    pub const fn absolute(value: f64) -> Amount {
        Amount {
            absolute: value,
            relative: 0.0,
        }
    }

    /// A relative amount (fraction of the value).
    pub const fn relative(fraction: f64) -> Amount {
        Amount {
            absolute: 0.0,
            relative: fraction,
        }
    }

    /// The greater of an absolute and a relative amount.
    pub const fn greater_of(absolute: f64, relative: f64) -> Amount {
        Amount { absolute, relative }
    }

    /// The amount at the value `x`.
    pub fn at(&self, x: f64) -> f64 {
        self.absolute.max(self.relative * x.abs())
    }

    fn check(&self, input: InputQuantity) -> Result<(), StatementError> {
        for (value, what) in [(self.absolute, "absolute"), (self.relative, "relative")] {
            if !value.is_finite() || value < 0.0 {
                return Err(StatementError {
                    input,
                    reason: match what {
                        "absolute" => "the absolute part must be a finite number of at least 0",
                        _ => "the relative part must be a finite fraction of at least 0",
                    },
                });
            }
        }
        Ok(())
    }
}

/// The distribution behind a bound ±a, which fixes the divisor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BoundShape {
    /// Normal; the bound covers `coverage_probability` (0 < p < 1):
    /// u = a / Φ⁻¹((1 + p)/2). An allowable total error read as a 95 % limit
    /// is `Normal { coverage_probability: 0.95 }` (u = a/1.960).
    Normal {
        /// Two-sided coverage probability of the bound.
        coverage_probability: f64,
    },
    /// Normal; the bound is an expanded uncertainty with coverage factor k:
    /// u = a / k.
    CoverageFactor {
        /// Coverage factor (> 0).
        k: f64,
    },
    /// Rectangular: every value within ±a equally likely, none outside:
    /// u = a/√3.
    Rectangular,
    /// Symmetric triangular over ±a: u = a/√6.
    Triangular,
    /// Symmetric trapezoid over ±a whose top is β times its base (0 ≤ β ≤ 1):
    /// u = a·√((1 + β²)/6).
    Trapezoidal {
        /// Ratio of the top's width to the base's width.
        beta: f64,
    },
}

impl BoundShape {
    /// The divisor that turns the half-width a into the standard
    /// uncertainty, u = a / divisor (the module's table): Φ⁻¹((1 + p)/2), k,
    /// √3, √6 or 1/√((1 + β²)/6). The shape's parameter must be valid
    /// ([`Statement::check`]).
    pub fn divisor(self) -> f64 {
        match self {
            BoundShape::Normal {
                coverage_probability,
            } => normal_coverage_factor(coverage_probability),
            BoundShape::CoverageFactor { k } => k,
            BoundShape::Rectangular => 3f64.sqrt(),
            BoundShape::Triangular => 6f64.sqrt(),
            BoundShape::Trapezoidal { beta } => 1.0 / ((1.0 + beta * beta) / 6.0).sqrt(),
        }
    }
}

/// One statement of an input's uncertainty.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Statement {
    /// A standard uncertainty (one standard deviation); normal for Monte Carlo.
    StandardUncertainty(Amount),
    /// A bound ±a (an allowable error, a specification, an expanded
    /// uncertainty) with the distribution that fixes its divisor.
    Bound {
        /// The half-width a.
        half_width: Amount,
        /// The distribution behind the bound.
        shape: BoundShape,
    },
}

/// How a statement was turned into a standard uncertainty (reported so that a
/// reader can check the arithmetic).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Conversion {
    /// Given as a standard uncertainty.
    AsGiven,
    /// u = a / divisor; the divisor and its origin.
    Divided {
        /// The divisor applied to the half-width.
        divisor: f64,
        /// Where the divisor comes from.
        rule: DivisorRule,
    },
}

/// The rule a divisor comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DivisorRule {
    /// Φ⁻¹((1 + p)/2) for a normal bound of coverage probability p.
    NormalCoverage {
        /// The coverage probability p.
        coverage_probability: f64,
    },
    /// A stated coverage factor k.
    CoverageFactor,
    /// √3, rectangular.
    Rectangular,
    /// √6, triangular.
    Triangular,
    /// 1/√((1 + β²)/6), trapezoidal.
    Trapezoidal {
        /// The trapezoid's β.
        beta: f64,
    },
}

/// An input distribution for the Monte Carlo method, in engine units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum InputDistribution {
    /// Normal (Gaussian).
    Normal {
        /// Expectation.
        mean: f64,
        /// Standard deviation.
        standard_deviation: f64,
    },
    /// Rectangular on [low, high].
    Rectangular {
        /// Lower limit.
        low: f64,
        /// Upper limit.
        high: f64,
    },
    /// Symmetric triangular on [low, high].
    Triangular {
        /// Lower limit.
        low: f64,
        /// Upper limit.
        high: f64,
    },
    /// Symmetric trapezoidal on [low, high] with top/base ratio β.
    Trapezoidal {
        /// Lower limit.
        low: f64,
        /// Upper limit.
        high: f64,
        /// Ratio of the top's width to the base's width.
        beta: f64,
    },
}

impl InputDistribution {
    /// The distribution's standard deviation.
    pub fn standard_deviation(&self) -> f64 {
        match *self {
            InputDistribution::Normal {
                standard_deviation, ..
            } => standard_deviation,
            InputDistribution::Rectangular { low, high } => (high - low) / 2.0 / 3f64.sqrt(),
            InputDistribution::Triangular { low, high } => (high - low) / 2.0 / 6f64.sqrt(),
            InputDistribution::Trapezoidal { low, high, beta } => {
                (high - low) / 2.0 * ((1.0 + beta * beta) / 6.0).sqrt()
            }
        }
    }

    /// The distribution's expectation.
    pub fn mean(&self) -> f64 {
        match *self {
            InputDistribution::Normal { mean, .. } => mean,
            InputDistribution::Rectangular { low, high }
            | InputDistribution::Triangular { low, high }
            | InputDistribution::Trapezoidal { low, high, .. } => 0.5 * (low + high),
        }
    }
}

/// An input's statement resolved at its estimate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResolvedStatement {
    /// The standard uncertainty u(x), engine unit.
    pub standard_uncertainty: f64,
    /// The distribution assigned for the Monte Carlo method (centred on x).
    pub distribution: InputDistribution,
    /// How u was obtained.
    pub conversion: Conversion,
}

/// A statement that cannot be used, naming the input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct StatementError {
    /// The input the statement was for.
    pub input: InputQuantity,
    /// A short English reason.
    pub reason: &'static str,
}

impl fmt::Display for StatementError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "uncertainty of {}: {}", self.input.name(), self.reason)
    }
}

impl std::error::Error for StatementError {}

impl Statement {
    /// Check the statement's numbers, naming `input` in a refusal.
    pub fn check(&self, input: InputQuantity) -> Result<(), StatementError> {
        match self {
            Statement::StandardUncertainty(amount) => amount.check(input),
            Statement::Bound { half_width, shape } => {
                half_width.check(input)?;
                match *shape {
                    BoundShape::Normal {
                        coverage_probability: p,
                    } if !(p > 0.0 && p < 1.0) => Err(StatementError {
                        input,
                        reason:
                            "the coverage probability of a bound must lie strictly between 0 and 1",
                    }),
                    BoundShape::CoverageFactor { k } if !(k.is_finite() && k > 0.0) => {
                        Err(StatementError {
                            input,
                            reason: "the coverage factor must be a finite number above 0",
                        })
                    }
                    BoundShape::Trapezoidal { beta } if !(0.0..=1.0).contains(&beta) => {
                        Err(StatementError {
                            input,
                            reason: "the trapezoid's top/base ratio must lie between 0 and 1",
                        })
                    }
                    _ => Ok(()),
                }
            }
        }
    }

    /// The standard uncertainty and Monte Carlo distribution at the estimate
    /// `x` (see the module's table).
    ///
    /// # Errors
    ///
    /// [`StatementError`] naming `input` for negative or non-finite amounts, a
    /// coverage probability outside (0, 1), a coverage factor ≤ 0 or a β
    /// outside [0, 1].
    pub fn resolve(
        &self,
        input: InputQuantity,
        x: f64,
    ) -> Result<ResolvedStatement, StatementError> {
        self.check(input)?;
        Ok(match *self {
            Statement::StandardUncertainty(amount) => {
                let u = amount.at(x);
                ResolvedStatement {
                    standard_uncertainty: u,
                    distribution: InputDistribution::Normal {
                        mean: x,
                        standard_deviation: u,
                    },
                    conversion: Conversion::AsGiven,
                }
            }
            Statement::Bound { half_width, shape } => {
                let a = half_width.at(x);
                let divisor = shape.divisor();
                let (rule, distribution) = match shape {
                    BoundShape::Normal {
                        coverage_probability,
                    } => (
                        DivisorRule::NormalCoverage {
                            coverage_probability,
                        },
                        InputDistribution::Normal {
                            mean: x,
                            standard_deviation: a / divisor,
                        },
                    ),
                    BoundShape::CoverageFactor { .. } => (
                        DivisorRule::CoverageFactor,
                        InputDistribution::Normal {
                            mean: x,
                            standard_deviation: a / divisor,
                        },
                    ),
                    BoundShape::Rectangular => (
                        DivisorRule::Rectangular,
                        InputDistribution::Rectangular {
                            low: x - a,
                            high: x + a,
                        },
                    ),
                    BoundShape::Triangular => (
                        DivisorRule::Triangular,
                        InputDistribution::Triangular {
                            low: x - a,
                            high: x + a,
                        },
                    ),
                    BoundShape::Trapezoidal { beta } => (
                        DivisorRule::Trapezoidal { beta },
                        InputDistribution::Trapezoidal {
                            low: x - a,
                            high: x + a,
                            beta,
                        },
                    ),
                };
                ResolvedStatement {
                    standard_uncertainty: a / divisor,
                    distribution,
                    conversion: Conversion::Divided { divisor, rule },
                }
            }
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conversions_follow_the_gum_divisors() {
        let q = InputQuantity::Po2;
        let cases = [
            (
                BoundShape::Normal {
                    coverage_probability: 0.95,
                },
                1.959_963_984_540_054,
            ),
            (BoundShape::CoverageFactor { k: 2.0 }, 2.0),
            (BoundShape::Rectangular, 3f64.sqrt()),
            (BoundShape::Triangular, 6f64.sqrt()),
            (BoundShape::Trapezoidal { beta: 0.0 }, 6f64.sqrt()),
            (BoundShape::Trapezoidal { beta: 1.0 }, 3f64.sqrt()),
        ];
        for (shape, divisor) in cases {
            let r = Statement::Bound {
                half_width: Amount::absolute(6.0),
                shape,
            }
            .resolve(q, 60.0)
            .unwrap();
            assert!(
                (r.standard_uncertainty - 6.0 / divisor).abs() < 1e-12,
                "{shape:?}"
            );
            assert!((r.distribution.standard_deviation() - r.standard_uncertainty).abs() < 1e-12);
            assert_eq!(r.distribution.mean(), 60.0);
        }
    }

    #[test]
    fn greater_of_takes_the_larger_part() {
        let clia_like = Amount::greater_of(15.0, 0.15);
        assert_eq!(clia_like.at(60.0), 15.0);
        assert!((clia_like.at(200.0) - 30.0).abs() < 1e-12);
    }

    #[test]
    fn bad_numbers_are_refused_naming_the_input() {
        let e = Statement::StandardUncertainty(Amount::absolute(-1.0))
            .resolve(InputQuantity::Ph, 7.4)
            .unwrap_err();
        assert_eq!(e.input, InputQuantity::Ph);
        for shape in [
            BoundShape::Normal {
                coverage_probability: 1.0,
            },
            BoundShape::CoverageFactor { k: 0.0 },
            BoundShape::Trapezoidal { beta: 1.5 },
        ] {
            assert!(Statement::Bound {
                half_width: Amount::absolute(1.0),
                shape
            }
            .resolve(InputQuantity::Ph, 7.4)
            .is_err());
        }
        assert!(Statement::StandardUncertainty(Amount::relative(f64::NAN))
            .resolve(InputQuantity::Ph, 7.4)
            .is_err());
    }
}
