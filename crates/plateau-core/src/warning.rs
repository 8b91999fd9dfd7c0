//! Warnings with stable codes, shared by data input and fitting.
//!
//! A [`Warning`] never stops the work; it travels with the result so that
//! the CLI, the JSON report and the page can show it. The codes (the
//! `snake_case` names of [`WarningCode`]) are part of the output contract:
//! never rename one, only add.

use serde::Serialize;

/// What a warning is about. The serialised name is the stable code.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum WarningCode {
    /// Some rows had no value (empty, `NA`, …) and were left out of the fit.
    MissingValuesSkipped,
    /// Rows were not in time order; they are fitted as a set, output stays in input order.
    RowsUnsorted,
    /// The solver stopped without meeting its convergence tests.
    NotConverged,
    /// The Jacobian at the solution is (numerically) rank deficient.
    SingularJacobian,
    /// The Jacobian at the solution is badly conditioned; standard errors are unreliable.
    IllConditioned,
    /// A parameter ended at or next to the edge of its allowed range.
    ParameterAtBound,
    /// The data do not determine the saturation level K.
    SaturationNotIdentified,
    /// The data end before the fitted inflection point.
    BeforeInflection,
    /// A parameter's value cannot be represented in double precision on this time axis.
    ParameterNotRepresentable,
    /// Values meant as running totals fall well below their peak: probably per-period counts.
    ValuesDecline,
    /// A parameter's profile-likelihood interval could not be traced; its
    /// asymptotic interval is reported instead.
    ProfileNotComputed,
    /// A Richards fit ended at its Gompertz limit (ν → 0); K, r and t0 are
    /// the Gompertz curve's.
    GompertzLimit,
    /// A constant describes the data better than the curve (AICc lower by
    /// 2 or more): the data look trendless (noise, or values alternating
    /// about one level).
    NoTrend,
    /// A straight line describes the data better than the curve (AICc
    /// lower by 2 or more) and better than a constant: the data look linear.
    LooksLinear,
    /// Some times carry more than one value (replicate measurements); every
    /// row is fitted as its own observation, and the residual checks that
    /// need one value per time use the mean residual per time.
    ReplicateTimes,
    /// The time column held Unix epoch seconds or milliseconds, read as
    /// dates (UTC).
    EpochTimes,
    /// The input is a table the tool exported: its time and observed
    /// columns were read, and its forecast rows (no observed value) set
    /// aside; the message says how many.
    ExportForecastRowsSetAside,
}

impl WarningCode {
    /// The stable code, as it appears in JSON output.
    pub fn as_str(self) -> &'static str {
        match self {
            WarningCode::MissingValuesSkipped => "missing_values_skipped",
            WarningCode::RowsUnsorted => "rows_unsorted",
            WarningCode::NotConverged => "not_converged",
            WarningCode::SingularJacobian => "singular_jacobian",
            WarningCode::IllConditioned => "ill_conditioned",
            WarningCode::ParameterAtBound => "parameter_at_bound",
            WarningCode::SaturationNotIdentified => "saturation_not_identified",
            WarningCode::BeforeInflection => "before_inflection",
            WarningCode::ParameterNotRepresentable => "parameter_not_representable",
            WarningCode::ValuesDecline => "values_decline",
            WarningCode::ProfileNotComputed => "profile_not_computed",
            WarningCode::GompertzLimit => "gompertz_limit",
            WarningCode::NoTrend => "no_trend",
            WarningCode::LooksLinear => "looks_linear",
            WarningCode::ReplicateTimes => "replicate_times",
            WarningCode::EpochTimes => "epoch_times",
            WarningCode::ExportForecastRowsSetAside => "export_forecast_rows_set_aside",
        }
    }
}

/// A warning: a stable code and a sentence for a human.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Warning {
    pub code: WarningCode,
    pub message: String,
}

impl Warning {
    pub fn new(code: WarningCode, message: impl Into<String>) -> Self {
        Warning {
            code,
            message: message.into(),
        }
    }
}
