//! The report: a fit or a comparison as plain serialisable data, the one
//! JSON shape shared by `plateau fit --json`, `plateau compare --json` and
//! the page's "JSON report" download.
//!
//! The field names are an output contract (see `DEVELOPERS.md`): add fields,
//! never rename or remove one. Non-finite numbers serialise as `null`
//! (serde_json's behaviour), so a reader never meets `NaN` in JSON.
//!
//! Main types: [`FitReport`] (from a [`Fit`]) and [`CompareReport`] (from
//! [`compare::Entry`](plateau_core::compare::Entry) rows).

use crate::wording::{
    FisherPryReport, LrTestReport, RecommendationReport, ResidualsReport, SymmetryReport, Worded,
};
use plateau_core::compare::Entry;
use plateau_core::diagnostics::{FisherPry, ResidualDiagnostics, SymmetryTest};
use plateau_core::fit::Fit;
use plateau_core::warning::Warning;
use serde::ser::{SerializeMap, Serializer};
use serde::Serialize;

/// The caution shown wherever results are shown.
pub const CAUTION: &str = "Forecasts are extrapolations. Fits that end before the inflection \
point are unreliable, especially for the saturation level K. Not for clinical or safety \
decisions without qualified review.";

/// One parameter in the report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParamReport {
    pub estimate: f64,
    /// `null` for a fixed parameter or when the covariance does not exist.
    pub std_error: Option<f64>,
    /// The 95% interval `[lo, hi]`, by `ci_method`. A side is `null` when
    /// the interval is open there (the profile never reached the 95%
    /// threshold within the search, so the data set no bound); the whole
    /// field is `null` for a fixed parameter (nothing is propagated for
    /// it) or when no interval exists.
    pub ci95: Option<[Option<f64>; 2]>,
    /// `"profile"` (profile likelihood) or `"asymptotic"` (estimate ±
    /// t·se, used when the profile could not be traced; a
    /// `profile_not_computed` warning says why); `null` with `ci95`.
    pub ci_method: Option<&'static str>,
    /// `estimate ± t(0.975, dof) · std_error`; `null` for a fixed
    /// parameter, without a covariance, or when `identified` is false.
    pub ci95_asymptotic: Option<[f64; 2]>,
    pub fixed: bool,
    /// `false` when the data do not determine the parameter: its `ci95`
    /// is open (`null`) on either side or missing, or it is a saturation
    /// level under `saturation_not_identified` (no upper bound is given
    /// then). `ci95_asymptotic` is withheld when it is `false`.
    pub identified: bool,
}

/// Name → value map that keeps the order it was built in (a JSON object
/// keeps the order the keys are written in, so `K, r, t0` reads as in the
/// formula). The one ordered-map serialiser of every report.
#[derive(Debug, Clone, PartialEq)]
pub struct Ordered<T>(pub Vec<(String, T)>);

/// Parameters in the model's own order.
pub type Params = Ordered<ParamReport>;

impl<T: Serialize> Serialize for Ordered<T> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

/// One fit, in the shape of `plateau fit --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitReport {
    pub model: &'static str,
    pub formula: &'static str,
    /// `additive`, `relative`, `log` or `count` (see `fit::ErrorModel`):
    /// it sets what `rss`, `sigma` and the criteria are measured on.
    pub error_model: &'static str,
    /// `true` when per-period increments were fitted instead of the
    /// cumulative values; `n` then counts the increments.
    pub increments: bool,
    pub n: usize,
    pub dof: usize,
    pub rss: f64,
    pub sigma: f64,
    pub r_squared: f64,
    pub aic: f64,
    pub aicc: f64,
    pub bic: f64,
    pub converged: bool,
    pub iterations: usize,
    /// Why the solver stopped (see `solver::Termination::as_str`).
    pub termination: &'static str,
    pub condition_number: f64,
    pub params: Params,
    /// One per fitted row, in input order.
    pub fitted: Vec<f64>,
    pub warnings: Vec<Warning>,
    /// The Bass model's adoption peak; `null` for other models and when
    /// `q ≤ p` (no peak after launch).
    pub peak: Option<PeakReport>,
    /// The unit of the time axis (r is per this unit, t0 and durations are
    /// in it): `day`, `week`, `month`, `quarter`, `year`, or a numeric time
    /// column's header; absent when the caller did not say (see `with_time`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_unit: Option<String>,
    /// Axis value 0 in the data's form (`2000-01`, `2000Q1`, `2000-01-31`,
    /// `2000-W01`, …); absent for plain numbers.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_origin: Option<String>,
}

/// The Bass adoption peak (see `analysis::bass_peak`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PeakReport {
    /// `t* = tau + ln(q/p) / (p+q)`.
    pub time: f64,
    pub time_ci95: Option<[f64; 2]>,
    /// Adoptions per unit of time at the peak, `m (p+q)² / (4q)`.
    pub rate: f64,
    pub rate_ci95: Option<[f64; 2]>,
    /// Share of m adopted by the peak, `(q − p) / (2q)`.
    pub share: f64,
}

impl FitReport {
    /// The report with the series' time unit and origin.
    pub fn with_time(mut self, series: &plateau_core::data::Series) -> FitReport {
        self.time_unit = Some(series.time_unit());
        self.time_origin = series.time_origin();
        self
    }

    /// The report of `fit`; `extra_warnings` (e.g. from data input) come first.
    pub fn new(fit: &Fit, extra_warnings: &[Warning]) -> FitReport {
        let params = fit
            .params
            .iter()
            .map(|p| {
                (
                    p.name.to_string(),
                    ParamReport {
                        estimate: p.estimate,
                        std_error: p.std_error,
                        ci95: p.interval.map(|i| [i.lo, i.hi]),
                        ci_method: p.interval.map(|i| i.method.as_str()),
                        ci95_asymptotic: p.ci95.filter(|_| p.identified).map(|(a, b)| [a, b]),
                        fixed: p.fixed,
                        identified: p.identified,
                    },
                )
            })
            .collect();
        FitReport {
            model: fit.model.name(),
            formula: fit.model.formula(),
            error_model: fit.error_model.name(),
            increments: fit.increments,
            n: fit.n,
            dof: fit.dof,
            rss: fit.rss,
            sigma: fit.sigma,
            r_squared: fit.r_squared,
            aic: fit.aic,
            aicc: fit.aicc,
            bic: fit.bic,
            converged: fit.converged,
            iterations: fit.iterations,
            termination: fit.termination.as_str(),
            condition_number: fit.condition_number,
            params: Ordered(params),
            fitted: fit.fitted.clone(),
            warnings: extra_warnings
                .iter()
                .chain(&fit.warnings)
                .cloned()
                .collect(),
            peak: plateau_core::analysis::bass_peak(fit).map(|p| PeakReport {
                time: p.time,
                time_ci95: p.time_ci95.map(|(a, b)| [a, b]),
                rate: p.rate,
                rate_ci95: p.rate_ci95.map(|(a, b)| [a, b]),
                share: p.share,
            }),
            time_unit: None,
            time_origin: None,
        }
    }
}

/// One model's row in a comparison.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CompareRow {
    pub model: &'static str,
    /// 1 for the lowest AICc; `null` when the model could not be fitted.
    pub rank: Option<usize>,
    pub aicc: Option<f64>,
    pub delta_aicc: Option<f64>,
    pub akaike_weight: Option<f64>,
    pub bic: Option<f64>,
    /// `BIC − min BIC` over the fitted models.
    pub delta_bic: Option<f64>,
    pub fit: Option<FitReport>,
    /// Why there is no fit, when there is none.
    pub error: Option<String>,
}

/// The shape of `plateau compare --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CompareReport {
    /// Best (lowest AICc) first.
    pub models: Vec<CompareRow>,
    /// Likelihood-ratio tests of the nested pairs that were both fitted.
    pub lr_tests: Vec<LrTestReport>,
    /// Which model to use and why; `null` from [`CompareReport::new`],
    /// filled by `Study::compare_report` (from `Study::recommendation`).
    pub recommendation: Option<RecommendationReport>,
    pub warnings: Vec<Warning>,
    /// As in [`FitReport`]: the axis unit and origin (see `with_time`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_unit: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_origin: Option<String>,
}

impl CompareReport {
    /// The report with the series' time unit and origin.
    pub fn with_time(mut self, series: &plateau_core::data::Series) -> CompareReport {
        self.time_unit = Some(series.time_unit());
        self.time_origin = series.time_origin();
        self
    }

    pub fn new(entries: &[Entry], data_warnings: &[Warning]) -> CompareReport {
        let min_bic = entries
            .iter()
            .filter_map(|e| e.result.as_ref().ok())
            .map(|f| f.bic)
            .filter(|b| b.is_finite())
            .fold(f64::INFINITY, f64::min);
        let mut rank = 0;
        let models = entries
            .iter()
            .map(|e| {
                let r = e.delta_aicc.map(|_| {
                    rank += 1;
                    rank
                });
                match &e.result {
                    Ok(f) => CompareRow {
                        model: e.model.name(),
                        rank: r,
                        aicc: Some(f.aicc),
                        delta_aicc: e.delta_aicc,
                        akaike_weight: e.akaike_weight,
                        bic: Some(f.bic),
                        delta_bic: Some(f.bic - min_bic).filter(|d| d.is_finite()),
                        fit: Some(FitReport::new(f, &[])),
                        error: None,
                    },
                    Err(err) => CompareRow {
                        model: e.model.name(),
                        rank: None,
                        aicc: None,
                        delta_aicc: None,
                        akaike_weight: None,
                        bic: None,
                        delta_bic: None,
                        fit: None,
                        error: Some(err.message.clone()),
                    },
                }
            })
            .collect();
        CompareReport {
            models,
            lr_tests: crate::wording::lr_tests(entries),
            recommendation: None,
            warnings: data_warnings.to_vec(),
            time_unit: None,
            time_origin: None,
        }
    }
}

/// The shape of `plateau diagnose --json`: one fit, its residual
/// diagnostics, the symmetry test and (optionally) the Fisher–Pry check,
/// with every verdict gathered in one list.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DiagnoseReport {
    pub fit: FitReport,
    pub residuals: ResidualsReport,
    /// `null` when the logistic could not be fitted.
    pub symmetry_test: Option<SymmetryReport>,
    /// For the K given, else the fitted K of a saturating model.
    pub fisher_pry: Option<FisherPryReport>,
    /// Residual verdicts, then the symmetry and Fisher–Pry verdicts.
    pub verdicts: Vec<Worded>,
    pub caution: &'static str,
}

impl DiagnoseReport {
    pub fn new(
        fit: &Fit,
        data_warnings: &[Warning],
        residuals: ResidualDiagnostics,
        symmetry_test: Option<SymmetryTest>,
        fisher_pry: Option<FisherPry>,
    ) -> DiagnoseReport {
        let residuals = ResidualsReport::new(residuals);
        let symmetry_test = symmetry_test.map(SymmetryReport::new);
        let fisher_pry = fisher_pry.map(FisherPryReport::new);
        let verdicts = residuals
            .verdicts
            .iter()
            .cloned()
            .chain(symmetry_test.as_ref().map(|s| s.verdict.clone()))
            .chain(fisher_pry.as_ref().map(|f| f.verdict.clone()))
            .collect();
        DiagnoseReport {
            fit: FitReport::new(fit, data_warnings),
            residuals,
            symmetry_test,
            fisher_pry,
            verdicts,
            caution: CAUTION,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plateau_core::fit::{fit_xy, FitOptions};
    use plateau_core::{Model, WarningCode};

    /// A series that ends far below its inflection (logistic K = 1000,
    /// r = 0.3, t0 = 20, observed at t = 0..11, with a fixed ±1 pattern of
    /// noise) leaves K open above: the report gives no upper bound and no
    /// asymptotic interval, and says `identified: false`.
    #[test]
    fn an_open_k_is_reported_without_an_upper_bound() {
        let ts: Vec<f64> = (0..12).map(f64::from).collect();
        let y: Vec<f64> = ts
            .iter()
            .enumerate()
            .map(|(i, t)| {
                let noise = [0.8, -1.1, 0.3, 1.0, -0.6, -0.2][i % 6];
                1000.0 / (1.0 + (-0.3 * (t - 20.0)).exp()) + noise
            })
            .collect();
        let f = fit_xy(&ts, &y, Model::Logistic, &FitOptions::default()).unwrap();
        assert!(f.has_warning(WarningCode::SaturationNotIdentified));
        let v = serde_json::to_value(FitReport::new(&f, &[])).unwrap();
        assert!(
            v["params"]["K"]["ci95"][1].is_null(),
            "{}",
            v["params"]["K"]
        );
        assert!(v["params"]["K"]["ci95_asymptotic"].is_null());
        assert_eq!(v["params"]["K"]["identified"], false);
    }
}
