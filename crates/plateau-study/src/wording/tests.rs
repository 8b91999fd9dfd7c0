//! The sentences say what the numbers say: each verdict's text carries
//! the statistic it rests on, and the wording follows the code.

use super::*;
use plateau_core::diagnostics::{fisher_pry, of_residuals, of_residuals_and_means};
use plateau_core::fit::ErrorModel;

/// Signs alternating + − + − …: as many runs as residuals, far more than
/// chance gives (the runs test's p is exact, from the core).
#[test]
fn alternating_signs_are_worded_with_their_runs() {
    let res: Vec<f64> = (0..20)
        .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
        .collect();
    let d = of_residuals(res);
    let w = residual_verdicts(&d);
    assert_eq!(w[0].code, "runs_alternate");
    assert!(w[0].flagged);
    let r = d.runs.as_ref().unwrap();
    assert!(
        w[0].text.contains("(20 runs where about 11.0 are"),
        "{}",
        w[0].text
    );
    assert!(
        w[0].text.contains(&format!("p {}", p_text(r.p_exact))),
        "{}",
        w[0].text
    );
    // Durbin–Watson of ±1 alternating is far above 2.5.
    assert_eq!(w[1].code, "anti_autocorrelated");
    assert!(w[1]
        .text
        .contains(&format!("Durbin–Watson {:.2}", d.durbin_watson.unwrap())));
    assert_eq!(w[2].code, d.verdicts[2].code);
}

/// Two long streaks: two runs, flagged, and the sentence names the streaks.
#[test]
fn streaks_are_worded_as_streaks() {
    let res: Vec<f64> = (0..20).map(|i| if i < 10 { 1.0 } else { -1.0 }).collect();
    let w = residual_verdicts(&of_residuals(res));
    assert_eq!(w[0].code, "runs_streaks");
    assert!(w[0]
        .text
        .starts_with("residuals run in long streaks (2 runs"));
}

/// Too few residuals, or too few distinct times: the counts are named.
#[test]
fn too_few_values_are_counted_in_words() {
    let w = residual_verdicts(&of_residuals(vec![1.0, -1.0, 2.0, 0.5, -0.3]));
    assert_eq!(w.len(), 1);
    assert!(w[0].text.starts_with("only 5 residuals"), "{}", w[0].text);
    let many: Vec<f64> = (0..12).map(|i| f64::from(i % 3) - 1.0).collect();
    let w = residual_verdicts(&of_residuals_and_means(many, vec![1.0, -1.0, 0.5, -0.5]));
    assert!(
        w[0].text.starts_with("only 4 distinct times"),
        "{}",
        w[0].text
    );
    assert!(w[1].text.contains("normal"), "{}", w[1].text);
}

/// With replicate times the order checks say they used the per-time
/// means; the normality check (every residual) does not.
#[test]
fn per_time_means_are_named_on_the_order_checks_only() {
    let res: Vec<f64> = (0..24).map(|i| ((i * 7) % 5) as f64 - 2.0).collect();
    let means: Vec<f64> = res.chunks(2).map(|c| (c[0] + c[1]) / 2.0).collect();
    let w = residual_verdicts(&of_residuals_and_means(res, means));
    let suffix = "(on the mean residual of each of the 12 distinct times)";
    assert!(w[0].text.ends_with(suffix), "{}", w[0].text);
    assert!(w[1].text.ends_with(suffix), "{}", w[1].text);
    assert!(!w[2].text.contains("distinct times"), "{}", w[2].text);
}

/// The p-values in sentences follow `numbers::probability` (the rule that
/// never lifts a p under 0.05 or 0.01 to the threshold's text).
#[test]
fn sentence_p_values_follow_the_one_rule() {
    assert_eq!(p_text(0.0004), "< 0.001");
    assert_eq!(p_text(0.9995), "> 0.999");
    assert_eq!(p_text(0.04996), "= 0.04996");
    assert_eq!(p_text(0.2761), "= 0.276");
    assert_eq!(p_text(f64::NAN), "–");
}

/// Logistic values with their own K lie on a straight Fisher–Pry line
/// (analytic fact: ln(y / (K − y)) = r (t − t0)), here with a fixed
/// pattern of small noise; the sentence says so and names K with
/// thousands separators.
#[test]
fn a_straight_fisher_pry_line_is_worded_with_its_k() {
    let t: Vec<f64> = (0..30).map(f64::from).collect();
    let y: Vec<f64> = t
        .iter()
        .enumerate()
        .map(|(i, &t)| {
            let noise = [8.0, -11.0, 3.0, 10.0, -6.0, -2.0][i % 6];
            12_000.0 / (1.0 + (-0.3 * (t - 15.0)).exp()) + noise
        })
        .collect();
    let fp = fisher_pry(&t, &y, 12_000.0, ErrorModel::Additive).unwrap();
    let w = fisher_pry_verdict(&fp);
    assert_eq!(w.code, "straight");
    assert!(w.text.contains("K = 12,000"), "{}", w.text);
    // Too low a K bends the points upward.
    let fp = fisher_pry(&t, &y, 12_500.0, ErrorModel::Additive).unwrap();
    let w = fisher_pry_verdict(&fp);
    assert_eq!(w.code, "curved");
    assert!(w.text.contains("bend downward"), "{}", w.text);
}

/// The symmetry verdict follows the test's decision and direction and
/// quotes its evidence.
#[test]
fn the_symmetry_verdict_quotes_its_evidence() {
    let base = SymmetryTest {
        n: 30,
        logistic_rss: 10.0,
        richards_rss: Some(8.0),
        nu: Some(0.4),
        nu_ci95: None,
        lr_statistic: Some(6.7),
        lr_p_value: Some(0.0096),
        delta_aicc_richards: Some(-4.2),
        delta_aicc_gompertz: Some(-3.0),
        asymmetric: Some(true),
        direction: Some(Asymmetry::LateSlower),
        decided_by: Some("likelihood_ratio"),
        ends_before_midpoint: false,
        verdict: Verdict {
            check: Check::Symmetry,
            code: "asymmetric",
            flagged: true,
        },
    };
    let w = symmetry_verdict(&base);
    assert!(w.text.starts_with("the late phase is slower"), "{}", w.text);
    assert!(w
        .text
        .contains("Richards ν = 0.400, likelihood-ratio p = 0.0096"));
    assert!(w.text.contains("Gompertz ΔAICc = -3.0"));
    let calm = SymmetryTest {
        asymmetric: Some(false),
        ends_before_midpoint: true,
        lr_p_value: Some(0.4),
        ..base
    };
    let w = symmetry_verdict(&calm);
    assert!(w
        .text
        .starts_with("no evidence against the logistic's symmetry"));
    assert!(w.text.ends_with("where the test has little power"));
}

/// Reasons are worded from their numbers; a count of one check is singular.
#[test]
fn reasons_are_worded_from_their_numbers() {
    let rec = Recommendation {
        model: Some(Model::Logistic),
        reasons: vec![
            Reason::Chosen {
                model: Model::Logistic,
                delta_aicc: 0.0,
                weight: 0.734,
            },
            Reason::Nested(LrTest {
                nested: Model::Logistic,
                general: Model::Richards,
                statistic: 1.18,
                df: 1,
                p_value: 0.2761,
            }),
            Reason::ResidualsClean { checks: 1 },
        ],
        residuals: None,
    };
    let r = RecommendationReport::new(&rec);
    assert_eq!(r.reasons[0], "logistic: ΔAICc 0.00, Akaike weight 0.73");
    assert_eq!(
        r.reasons[1],
        "likelihood ratio logistic within richards: LR = 1.18, p = 0.276 (the simpler curve suffices)"
    );
    assert_eq!(
        r.reasons[2],
        "its residuals show no pattern in the one check made"
    );
}

/// Milestones are labelled and explained from the assessment's numbers:
/// a logistic (K = 1,000, r = 0.5, t0 = 10, observed t = 0 … 20, with a
/// fixed pattern of noise)
/// never reaches 2,000 (analytic: it levels off at K), and reaches half of
/// K at t0 inside the data.
#[test]
fn milestones_are_labelled_and_explained() {
    use plateau_core::fit::{fit_xy, FitOptions};
    use plateau_core::milestones::{assess, Target};
    let t: Vec<f64> = (0..=20).map(f64::from).collect();
    let y: Vec<f64> = t
        .iter()
        .enumerate()
        .map(|(i, &t)| {
            let noise = [0.8, -1.1, 0.3, 1.0, -0.6, -0.2][i % 6];
            1000.0 / (1.0 + (-0.5 * (t - 10.0)).exp()) + noise
        })
        .collect();
    let f = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
    let never = assess(&f, Target::Level(2000.0), 0.0, 20.0, None);
    assert_eq!(milestone_label(&never), "level 2,000");
    assert_eq!(
        milestone_note(&never),
        format!(
            "the fitted curve levels off at K = {} and never reaches 2,000",
            crate::numbers::number(f.param("K").unwrap().estimate)
        )
    );
    let half = assess(&f, Target::Share(0.5), 0.0, 20.0, None);
    assert_eq!(milestone_label(&half), "50% of K");
    assert_eq!(milestone_note(&half), "within the observed time range");
    let rise = assess(&f, Target::Duration1090, 0.0, 20.0, None);
    assert_eq!(milestone_label(&rise), "10% → 90% of K (duration)");
}
