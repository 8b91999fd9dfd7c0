//! The error models: how the observations scatter about the curve, and
//! the weights the reweighted ones (relative, count) give each point.

/// The error model: how the observations are assumed to scatter about
/// the curve. Each one is a Gaussian likelihood, so `sigma` and AICc keep
/// their meaning, and AICc is the likelihood of the values as given (see
/// [`crate::stats::criteria_with`]): it can be compared across error models for
/// the same data, but not between a cumulative and an increments fit
/// (different data).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum ErrorModel {
    /// `y = f + e`, `Var e = σ²`: the same scatter at every level.
    /// `sigma` is in the data's units.
    #[default]
    Additive,
    /// `Var e = σ² f²`: scatter proportional to the level. Fitted by
    /// iteratively reweighted least squares with weights `1/f̂²`;
    /// `sigma` is a relative error (0.05 = 5%).
    Relative,
    /// `ln y = ln f + e`, `Var e = σ²`: multiplicative log-normal errors;
    /// residuals are `ln y − ln f` and every value must be positive.
    /// `sigma` is on the log scale (≈ a relative error when small).
    Log,
    /// `Var e = σ² f`: count-like (Poisson-like) scatter. Weights `1/f̂`,
    /// iteratively reweighted; `sigma²` is the dispersion (1 for Poisson).
    Count,
}

impl ErrorModel {
    pub const ALL: [ErrorModel; 4] = [
        ErrorModel::Additive,
        ErrorModel::Relative,
        ErrorModel::Log,
        ErrorModel::Count,
    ];

    /// The name used by the CLI, the page and the JSON report.
    pub fn name(self) -> &'static str {
        match self {
            ErrorModel::Additive => "additive",
            ErrorModel::Relative => "relative",
            ErrorModel::Log => "log",
            ErrorModel::Count => "count",
        }
    }

    pub fn from_name(name: &str) -> Option<ErrorModel> {
        let name = name.trim().to_ascii_lowercase();
        ErrorModel::ALL.into_iter().find(|e| e.name() == name)
    }

    /// One sentence for people.
    pub fn describe(self) -> &'static str {
        match self {
            ErrorModel::Additive => "additive errors: the same scatter at every level (sigma in data units)",
            ErrorModel::Relative => "relative errors: scatter proportional to the curve, weights 1/fitted² (sigma is a fraction)",
            ErrorModel::Log => "log-scale errors: ln y − ln f fitted, multiplicative scatter (sigma on the log scale)",
            ErrorModel::Count => "count-like errors: variance proportional to the curve, weights 1/fitted (sigma² is the dispersion)",
        }
    }

    /// The weight of an observation whose fitted value is `f` (on the
    /// residual scale), for the reweighted models.
    pub(super) fn weight(self, f: f64, floor: f64) -> f64 {
        let f = f.max(floor);
        match self {
            ErrorModel::Relative => 1.0 / (f * f),
            ErrorModel::Count => 1.0 / f,
            ErrorModel::Additive | ErrorModel::Log => 1.0,
        }
    }

    pub(super) fn reweights(self) -> bool {
        matches!(self, ErrorModel::Relative | ErrorModel::Count)
    }
}
