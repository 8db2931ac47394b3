//! Numerical tolerances of the engine, each named for what it means.

/// Relative error in PO2 that every inverse (PO2 from saturation) must reach.
pub const INVERSE_RELATIVE_TOLERANCE: f64 = 1e-10;

/// Most iterations any bracketing solver may take before it returns its best
/// bracketed estimate. Bisection alone halves the bracket each step, so 200
/// steps exhaust double precision from any finite bracket.
pub const SOLVER_MAX_ITERATIONS: u32 = 200;

/// Smallest saturation the inverses are guaranteed for.
pub const INVERSE_MIN_SATURATION: f64 = 1e-4;

/// Largest saturation the inverses are guaranteed for.
pub const INVERSE_MAX_SATURATION: f64 = 1.0 - 1e-6;
