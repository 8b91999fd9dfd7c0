//! Model comparison: every model fitted to the same data and ranked by
//! AICc, with ΔAICc and Akaike weights (Burnham & Anderson 2002, §2.9):
//!
//! ```text
//! Δ_i = AICc_i − min AICc
//! w_i = exp(−Δ_i / 2) / Σ_j exp(−Δ_j / 2)
//! ```

use crate::fit::{fit_xy, Fit, FitError, FitOptions};
use crate::model::Model;

/// One model's line in a comparison.
#[derive(Debug, Clone)]
pub struct Entry {
    pub model: Model,
    /// The fit, or why there is none (e.g. too few points for this model).
    pub result: Result<Fit, FitError>,
    /// `AICc − min AICc` over the models that were fitted.
    pub delta_aicc: Option<f64>,
    pub akaike_weight: Option<f64>,
}

/// Fits every model in `models` and ranks them by AICc (best first); models
/// that could not be fitted come last, in the given order.
pub fn compare(t: &[f64], y: &[f64], models: &[Model], opts: &FitOptions) -> Vec<Entry> {
    let mut entries: Vec<Entry> = models
        .iter()
        .map(|&model| {
            // A fixed K only applies to models that have one.
            let mut o = opts.clone();
            o.fixed
                .retain(|(name, _)| model.param_index(name).is_some());
            o.start
                .retain(|(name, _)| model.param_index(name).is_some());
            Entry {
                model,
                result: fit_xy(t, y, model, &o),
                delta_aicc: None,
                akaike_weight: None,
            }
        })
        .collect();
    let aicc = |e: &Entry| {
        e.result
            .as_ref()
            .ok()
            .map(|f| f.aicc)
            .filter(|a| a.is_finite())
    };
    let best = entries
        .iter()
        .filter_map(aicc)
        .fold(f64::INFINITY, f64::min);
    if best.is_finite() {
        let total: f64 = entries
            .iter()
            .filter_map(aicc)
            .map(|a| (-(a - best) / 2.0).exp())
            .sum();
        for e in &mut entries {
            if let Some(a) = aicc(e) {
                e.delta_aicc = Some(a - best);
                e.akaike_weight = Some((-(a - best) / 2.0).exp() / total);
            }
        }
    }
    entries.sort_by(|a, b| match (a.delta_aicc, b.delta_aicc) {
        (Some(x), Some(y)) => x.total_cmp(&y),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });
    entries
}
