//! `cargo xtask demo-data [--check]`: the synthetic demo series in
//! `demo-data/`, drawn from known growth curves with fixed seeds.
//!
//! Every file, `demo-data/README.md` included, is produced by [`generate`]
//! from the specs in [`specs`]; edit them here, not the output. `--check`
//! regenerates in memory and fails, naming the file, if anything on disk
//! differs.
//!
//! Determinism: one `ChaCha8Rng::seed_from_u64(seed)` per series (so
//! changing one series leaves the others alone), noise drawn in row order,
//! values printed with a fixed number of decimals and `\n` line endings.
//!
//! `tests/reference/scipy_fits.json` was computed from these files: after
//! changing a series, rerun `tests/reference/scipy_fits.py`.

use anyhow::{bail, Context, Result};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal, Poisson};
use std::path::Path;

/// Output folder, relative to the workspace root.
const DIR: &str = "demo-data";

/// One generated series and everything the README says about it.
struct Spec {
    file: &'static str,
    title: &'static str,
    story: &'static str,
    /// Column name and meaning, in file order.
    columns: [(&'static str, &'static str); 2],
    /// Plateau's model name for the truth.
    model: &'static str,
    /// True parameters, in Plateau's parameter order.
    truth: &'static [(&'static str, f64)],
    noise: &'static str,
    seed: u64,
    /// Extra remarks for the README (what the series is meant to show).
    note: &'static str,
    rows: fn(&Spec, &mut ChaCha8Rng) -> Vec<[String; 2]>,
}

impl Spec {
    fn p(&self, name: &str) -> f64 {
        self.truth
            .iter()
            .find(|(n, _)| *n == name)
            .map(|(_, v)| *v)
            .unwrap_or_else(|| panic!("{}: no true parameter {name}", self.file))
    }
}

fn logistic(k: f64, r: f64, t0: f64, t: f64) -> f64 {
    k / (1.0 + (-r * (t - t0)).exp())
}

/// Bass (1969) cumulative adopters `m F(t − tau)`, 0 before launch.
fn bass(m: f64, p: f64, q: f64, tau: f64, t: f64) -> f64 {
    let s = t - tau;
    if s <= 0.0 {
        return 0.0;
    }
    let e = (-(p + q) * s).exp();
    m * (1.0 - e) / (1.0 + q / p * e)
}

fn gompertz(k: f64, r: f64, t0: f64, t: f64) -> f64 {
    k * (-(-r * (t - t0)).exp()).exp()
}

fn normal(sd: f64) -> Normal<f64> {
    Normal::new(0.0, sd).expect("valid normal sd")
}

/// Fixed-decimal formatting without a `-0` artefact.
fn fixed(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.bytes().all(|b| b == b'0' || b == b'.') => rest.to_string(),
        _ => s,
    }
}

fn specs() -> Vec<Spec> {
    vec![
        Spec {
            file: "aldermoor_subscribers.csv",
            title: "Aldermoor: an established region, well past its inflection",
            story: "Cumulative household subscriptions in Lumen's first region, Aldermoor, \
                    counted at the end of each week since launch.",
            columns: [
                ("week", "week number since launch (1-30)"),
                (
                    "subscribers",
                    "cumulative subscriptions at the end of the week",
                ),
            ],
            model: "logistic",
            truth: &[("K", 12000.0), ("r", 0.25), ("t0", 14.0)],
            noise: "additive normal, sd 100, rounded to integers",
            seed: 101,
            note: "Data run to t0 + 16 weeks (98% of K), so the plateau is well identified.",
            rows: |s, rng| {
                let (k, r, t0) = (s.p("K"), s.p("r"), s.p("t0"));
                let e = normal(100.0);
                (1..=30)
                    .map(|w| {
                        let t = f64::from(w);
                        let y = logistic(k, r, t0, t) + e.sample(rng);
                        [w.to_string(), fixed(y, 0)]
                    })
                    .collect()
            },
        },
        Spec {
            file: "fenwick_vale_subscribers.csv",
            title: "Fenwick Vale: a young region, before its inflection",
            story: "Cumulative subscriptions in the newer Fenwick Vale region, weekly. \
                    Growth is still accelerating when the data end.",
            columns: [
                ("week", "week number since launch (1-20)"),
                (
                    "subscribers",
                    "cumulative subscriptions at the end of the week",
                ),
            ],
            model: "logistic",
            truth: &[("K", 8000.0), ("r", 0.2), ("t0", 25.0)],
            noise: "additive normal, sd 20, rounded to integers",
            seed: 202,
            note: "Data stop at week 20 = t0 - 1/r, at about K/4: the ceiling K is poorly \
                   determined, and an honest fit reports a wide interval for it (the \
                   least-squares standard error of K is about 17% of K).",
            rows: |s, rng| {
                let (k, r, t0) = (s.p("K"), s.p("r"), s.p("t0"));
                let e = normal(20.0);
                (1..=20)
                    .map(|w| {
                        let t = f64::from(w);
                        let y = logistic(k, r, t0, t) + e.sample(rng);
                        [w.to_string(), fixed(y, 0)]
                    })
                    .collect()
            },
        },
        Spec {
            file: "harrow_fields_capacity.csv",
            title: "Harrow Fields: installed capacity, asymmetric (Gompertz) growth",
            story: "Installed panel capacity of the Harrow Fields solar garden, in kW, at the \
                    end of each month since construction began: a fast start that tapers off \
                    slowly as the last plots are fitted.",
            columns: [
                ("month", "month number since construction began (1-36)"),
                ("capacity_kw", "installed capacity in kW, one decimal"),
            ],
            model: "gompertz",
            truth: &[("K", 850.0), ("r", 0.2), ("t0", 9.0)],
            noise: "additive normal, sd 2 kW, rounded to 0.1 kW",
            seed: 303,
            note: "Gompertz: the inflection is at y = K/e (37% of K), not K/2, so a \
                   logistic fits visibly worse.",
            rows: |s, rng| {
                let (k, r, t0) = (s.p("K"), s.p("r"), s.p("t0"));
                let e = normal(2.0);
                (1..=36)
                    .map(|m| {
                        let t = f64::from(m);
                        let y = gompertz(k, r, t0, t) + e.sample(rng);
                        [m.to_string(), fixed(y, 1)]
                    })
                    .collect()
            },
        },
        Spec {
            file: "tariff_share_monthly.csv",
            title: "Time-of-use tariff share: monthly dates, a floor above zero",
            story: "Share of all Lumen members (in percent) on the time-of-use tariff, \
                    sampled on the first of each month, January 2019 to December 2023. \
                    About 12% of members were already on such a tariff before Lumen \
                    started promoting it.",
            columns: [
                ("date", "ISO date YYYY-MM-DD, always the first of the month"),
                ("share_pct", "members on the tariff, percent, one decimal"),
            ],
            model: "logistic4",
            truth: &[("K", 78.0), ("r", 1.6), ("t0", 2021.25), ("L", 12.0)],
            noise: "additive normal, sd 1.5 percentage points, rounded to 0.1",
            seed: 404,
            note: "The truth is stated on the decimal-year axis, year + (day_of_year - 1) / \
                   days_in_year (2020 has 366 days), on which the data were generated: r is \
                   per year and t0 = 2021.25 is early April 2021. Plateau reads first-of-month \
                   dates as months since 2000-01 (2021-04-01 is month 255), so its r is per \
                   month, about 1.6 / 12 = 0.133, and its t0 is near month 255 (the two axes \
                   differ by the months' unequal lengths, so only about).",
            rows: |s, rng| {
                let (k, r, t0, l) = (s.p("K"), s.p("r"), s.p("t0"), s.p("L"));
                let e = normal(1.5);
                (0..60)
                    .map(|m| {
                        let year = 2019 + m / 12;
                        let month = m % 12 + 1;
                        let t = decimal_year(year, month, 1);
                        let y = l + logistic(k - l, r, t0, t) + e.sample(rng);
                        [format!("{year:04}-{month:02}-01"), fixed(y, 1)]
                    })
                    .collect()
            },
        },
        Spec {
            file: "weekly_signups.csv",
            title: "Weekly new sign-ups: per-period counts",
            story: "New subscriptions per week across the Coldwater Basin region during its \
                    first year. These are increments, not a running total: the cumulative \
                    sum follows the growth curve.",
            columns: [
                ("week", "week number (1-52)"),
                ("new_signups", "new subscriptions during that week"),
            ],
            model: "logistic",
            truth: &[("K", 6000.0), ("r", 0.15), ("t0", 24.0)],
            noise: "Poisson: week w's count ~ Poisson(F(w) - F(w-1)) with F the logistic \
                    (cumulative) curve",
            seed: 505,
            note: "Sign-ups before week 1 (F(0), about 160) are not in the file, so the \
                   cumulative sum of the counts follows F(t) - F(0), not F(t).",
            rows: |s, rng| {
                let (k, r, t0) = (s.p("K"), s.p("r"), s.p("t0"));
                (1..=52)
                    .map(|w| {
                        let t = f64::from(w);
                        let lambda = logistic(k, r, t0, t) - logistic(k, r, t0, t - 1.0);
                        let count: f64 = Poisson::new(lambda)
                            .expect("valid Poisson mean")
                            .sample(rng);
                        [w.to_string(), fixed(count, 0)]
                    })
                    .collect()
            },
        },
        Spec {
            file: "saltmarsh_app_installs.csv",
            title: "Saltmarsh: early-phase exponential growth",
            story: "Cumulative installs of the Lumen Meter app in the Saltmarsh district, \
                    daily, in the first four weeks after its launch there. Nothing in the \
                    data shows a slowdown yet.",
            columns: [
                ("day", "day since launch (0-27)"),
                ("installs", "cumulative installs at the end of the day"),
            ],
            model: "exponential",
            truth: &[("a", 40.0), ("r", 0.09)],
            noise: "additive normal, sd 6, rounded to integers",
            seed: 606,
            note: "Nothing in these data identifies a ceiling; the exponential is the \
                   honest description of this phase.",
            rows: |s, rng| {
                let (a, r) = (s.p("a"), s.p("r"));
                let e = normal(6.0);
                (0..=27)
                    .map(|d| {
                        let t = f64::from(d);
                        let y = a * (r * t).exp() + e.sample(rng);
                        [d.to_string(), fixed(y, 0)]
                    })
                    .collect()
            },
        },
        Spec {
            file: "lumen_cell_adoptions.csv",
            title: "Lumen Cell: monthly adoptions of a new product (Bass diffusion)",
            story: "Households in Aldermoor that added the Lumen Cell home battery, counted \
                    per month since the product's launch at the start of month 1. These are \
                    new adopters per month, not a running total.",
            columns: [
                ("month", "month since launch (1-30)"),
                (
                    "new_adopters",
                    "households that added a Lumen Cell during that month",
                ),
            ],
            model: "bass",
            truth: &[("m", 4000.0), ("p", 0.012), ("q", 0.38), ("tau", 0.0)],
            noise: "Poisson: month w's count ~ Poisson(N(w) - N(w-1)) with N the Bass \
                    (cumulative) curve",
            seed: 707,
            note: "Fit the running total (`--per-period`, or the page's \"counts per period\"). \
                   Adoption peaks at t* = ln(q/p)/(p+q) ≈ 8.8 months at m(p+q)²/(4q) ≈ 404 \
                   a month; the launch is at tau = 0, so the sum of the counts is N(t) itself.",
            rows: |s, rng| {
                let (m, p, q, tau) = (s.p("m"), s.p("p"), s.p("q"), s.p("tau"));
                (1..=30)
                    .map(|w| {
                        let t = f64::from(w);
                        let lambda = bass(m, p, q, tau, t) - bass(m, p, q, tau, t - 1.0);
                        let count: f64 = Poisson::new(lambda)
                            .expect("valid Poisson mean")
                            .sample(rng);
                        [w.to_string(), fixed(count, 0)]
                    })
                    .collect()
            },
        },
        Spec {
            file: "wrenlow_two_waves.csv",
            title: "Wrenlow Downs: two waves of subscriptions (bi-logistic)",
            story: "Cumulative household subscriptions in the Wrenlow Downs region, monthly. \
                    A second solar garden opened there in the third year and brought a second \
                    wave of sign-ups on top of the first.",
            columns: [
                ("month", "month number (1-48)"),
                (
                    "subscribers",
                    "cumulative subscriptions at the end of the month",
                ),
            ],
            model: "bilogistic",
            truth: &[
                ("K1", 3000.0),
                ("r1", 0.35),
                ("t01", 10.0),
                ("K2", 2500.0),
                ("r2", 0.3),
                ("t02", 32.0),
            ],
            noise: "additive normal, sd 40, rounded to integers",
            seed: 808,
            note: "One logistic cannot follow the pause between the waves; the bi-logistic \
                   should win the comparison by a wide AICc margin.",
            rows: |s, rng| {
                let (k1, r1, t01) = (s.p("K1"), s.p("r1"), s.p("t01"));
                let (k2, r2, t02) = (s.p("K2"), s.p("r2"), s.p("t02"));
                let e = normal(40.0);
                (1..=48)
                    .map(|w| {
                        let t = f64::from(w);
                        let y = logistic(k1, r1, t01, t) + logistic(k2, r2, t02, t) + e.sample(rng);
                        [w.to_string(), fixed(y, 0)]
                    })
                    .collect()
            },
        },
    ]
}

/// One region of the multi-series file.
struct Region {
    name: &'static str,
    k: f64,
    r: f64,
    t0: f64,
}

/// The multi-series demo: several regions in one file, long and wide.
struct MultiSpec {
    long_file: &'static str,
    wide_file: &'static str,
    title: &'static str,
    story: &'static str,
    regions: &'static [Region],
    /// Noise sd as a share of each region's K.
    noise_share: f64,
    seed: u64,
    note: &'static str,
}

fn multi_spec() -> MultiSpec {
    MultiSpec {
        long_file: "regional_adoption_long.csv",
        wide_file: "regional_adoption_wide.csv",
        title: "Four regions side by side: one logistic each, different K, r and t0",
        story: "Cumulative households on Lumen's heat-pump lease in four fictional regions \
                (Brackenridge, Corrie Haven, Dunmere, Eastwold), at the start of each month \
                from January 2021 to December 2025.",
        regions: &[
            Region {
                name: "Brackenridge",
                k: 42000.0,
                r: 1.4,
                t0: 2022.5,
            },
            Region {
                name: "Corrie Haven",
                k: 18000.0,
                r: 2.0,
                t0: 2022.75,
            },
            Region {
                name: "Dunmere",
                k: 65000.0,
                r: 0.9,
                t0: 2023.0,
            },
            Region {
                name: "Eastwold",
                k: 9000.0,
                r: 2.6,
                t0: 2022.25,
            },
        ],
        noise_share: 0.005,
        seed: 707,
        note: "The truth is stated on the axis year + (month - 1) / 12, so r is per year \
               and t0 = 2022.5 is the start of July 2022. Plateau counts months since \
               2000-01 (2022-07 is month 270), so its r is per month, the truth's r / 12, \
               and its t0 is 12 (t0 - 2000). The same numbers are written twice: \
               long (rows of region, month, households; the layout `plateau batch` streams) \
               and wide (a month column, then one column per region). The noise is drawn \
               region by region, month by month, in the order of the long file.",
    }
}

/// The long and wide files of the multi-series demo.
fn multi_csv(spec: &MultiSpec) -> Result<(String, String)> {
    let mut rng = ChaCha8Rng::seed_from_u64(spec.seed);
    let months: Vec<(i32, i32)> = (0..60).map(|m| (2021 + m / 12, m % 12 + 1)).collect();
    let mut values = Vec::new();
    let mut long = String::from("region,month,households\n");
    for reg in spec.regions {
        let e = normal(spec.noise_share * reg.k);
        let mut column = Vec::new();
        for &(year, month) in &months {
            let t = f64::from(year) + f64::from(month - 1) / 12.0;
            let y = fixed(logistic(reg.k, reg.r, reg.t0, t) + e.sample(&mut rng), 0);
            if y.starts_with('-') {
                bail!(
                    "{}: negative value for {}; change the design",
                    spec.long_file,
                    reg.name
                );
            }
            long.push_str(&format!("{},{year:04}-{month:02},{y}\n", reg.name));
            column.push(y);
        }
        values.push(column);
    }
    let mut wide = String::from("month");
    for reg in spec.regions {
        wide.push(',');
        wide.push_str(reg.name);
    }
    wide.push('\n');
    for (i, &(year, month)) in months.iter().enumerate() {
        wide.push_str(&format!("{year:04}-{month:02}"));
        for column in &values {
            wide.push(',');
            wide.push_str(&column[i]);
        }
        wide.push('\n');
    }
    Ok((long, wide))
}

fn multi_readme(spec: &MultiSpec) -> String {
    let mut out = format!(
        "\n## Several series: `{}` and `{}`\n\n**{}.** {}\n\n",
        spec.long_file, spec.wide_file, spec.title, spec.story
    );
    out.push_str("Columns of the long file:\n\n- `region`: the region's name\n- `month`: YYYY-MM\n- `households`: cumulative households at the start of the month\n\n");
    out.push_str("Truth (model: logistic, one per region):\n\n| region | K | r (per year) | t0 |\n|---|---|---|---|\n");
    for r in spec.regions {
        out.push_str(&format!("| {} | {} | {} | {} |\n", r.name, r.k, r.r, r.t0));
    }
    out.push_str(&format!(
        "\n- Noise: additive normal, sd {}% of the region's K, rounded to integers\n- Seed: {}\n\n{}\n",
        spec.noise_share * 100.0,
        spec.seed,
        spec.note
    ));
    out
}

fn is_leap(year: i32) -> bool {
    (year % 4 == 0 && year % 100 != 0) || year % 400 == 0
}

/// `year + (day_of_year - 1) / days_in_year`, Plateau's axis for ISO dates.
fn decimal_year(year: i32, month: i32, day: i32) -> f64 {
    const CUMULATIVE: [i32; 12] = [0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334];
    let leap = is_leap(year);
    let doy = CUMULATIVE[(month - 1) as usize] + day + i32::from(leap && month > 2);
    let days = if leap { 366.0 } else { 365.0 };
    f64::from(year) + f64::from(doy - 1) / days
}

fn csv(spec: &Spec) -> Result<String> {
    let mut rng = ChaCha8Rng::seed_from_u64(spec.seed);
    let rows = (spec.rows)(spec, &mut rng);
    let mut out = format!("{},{}\n", spec.columns[0].0, spec.columns[1].0);
    for [t, y] in &rows {
        // Every demo quantity is a count, capacity or share: never negative.
        let v: f64 = y
            .parse()
            .with_context(|| format!("{}: bad value {y}", spec.file))?;
        if v < 0.0 {
            bail!(
                "{}: negative value {y} at {t}; change the design",
                spec.file
            );
        }
        out.push_str(t);
        out.push(',');
        out.push_str(y);
        out.push('\n');
    }
    Ok(out)
}

const README_INTRO: &str = "\
# Demo data (invented)

Everything in this folder is **invented**. \"Lumen Cooperative\" is a fictional
regional network of community solar gardens that sells subscriptions to
households; its regions (Aldermoor, Fenwick Vale, Harrow Fields, Coldwater
Basin, Saltmarsh, Wrenlow Downs), its \"Lumen Meter\" app, its \"Lumen Cell\"
home battery and all figures are made up and do not describe any real
organisation.

The series are synthetic: each is drawn from a known growth curve plus
known noise, so a fit can be judged against the truth. They are used in the
documentation and by `crates/plateau-core/tests/core/scipy.rs` (through the
reference fits in `tests/reference/scipy_fits.json`).

Regenerate with `cargo xtask demo-data`; `cargo xtask demo-data --check`
fails if a checked-in file differs from what the generator produces. This
README is generated too: edit `crates/xtask/src/demo_data.rs`, not this file.
After changing a series, rerun `tests/reference/scipy_fits.py`.

How the values are drawn: one `rand_chacha::ChaCha8Rng::seed_from_u64(seed)`
per file (rand_chacha 0.10), normal noise from `rand_distr::Normal`, counts
from `rand_distr::Poisson` (rand_distr 0.6), one draw per row in file order.
Files are comma-separated with a header row and `\\n` line endings; values are
written with a fixed number of decimals.

Models (Plateau's names and parameters):

| model | formula |
|---|---|
| logistic | y = K / (1 + exp(-r (t - t0))) |
| logistic4 | y = L + (K - L) / (1 + exp(-r (t - t0))) |
| gompertz | y = K exp(-exp(-r (t - t0))) |
| exponential | y = a exp(r t) |
| bass | y = m (1 - exp(-(p+q)(t-tau))) / (1 + (q/p) exp(-(p+q)(t-tau))) for t >= tau, else 0 |
| bilogistic | y = K1 / (1 + exp(-r1 (t - t01))) + K2 / (1 + exp(-r2 (t - t02))) |

";

fn truth_text(spec: &Spec) -> String {
    spec.truth
        .iter()
        .map(|(n, v)| format!("{n} = {v}"))
        .collect::<Vec<_>>()
        .join(", ")
}

fn readme(specs: &[Spec]) -> String {
    let mut out = String::from(README_INTRO);
    out.push_str(
        "## Summary\n\n| file | model | true parameters | noise | seed |\n|---|---|---|---|---|\n",
    );
    for s in specs {
        out.push_str(&format!(
            "| `{}` | {} | {} | {} | {} |\n",
            s.file,
            s.model,
            truth_text(s),
            s.noise,
            s.seed
        ));
    }
    for s in specs {
        out.push_str(&format!(
            "\n## `{}`\n\n**{}.** {}\n\n",
            s.file, s.title, s.story
        ));
        out.push_str("Columns:\n\n");
        for (name, what) in s.columns {
            out.push_str(&format!("- `{name}`: {what}\n"));
        }
        out.push_str(&format!(
            "\nTruth:\n\n- Model: {}\n- True parameters: {}\n- Noise: {}\n- Seed: {}\n\n{}\n",
            s.model,
            truth_text(s),
            s.noise,
            s.seed,
            s.note
        ));
    }
    out
}

/// All files of `demo-data/` as (file name, contents).
fn generate() -> Result<Vec<(String, String)>> {
    let specs = specs();
    let mut files = Vec::with_capacity(specs.len() + 1);
    for s in &specs {
        files.push((s.file.to_string(), csv(s)?));
    }
    let multi = multi_spec();
    let (long, wide) = multi_csv(&multi)?;
    files.push((multi.long_file.to_string(), long));
    files.push((multi.wide_file.to_string(), wide));
    files.push((
        "README.md".to_string(),
        readme(&specs) + &multi_readme(&multi),
    ));
    Ok(files)
}

pub fn run(args: &[String]) -> Result<()> {
    let check = match args {
        [] => false,
        [a] if a == "--check" => true,
        _ => bail!("usage: cargo xtask demo-data [--check]"),
    };
    let dir = crate::workspace_root().join(DIR);
    let files = generate()?;
    if check {
        verify(&dir, &files)
    } else {
        write(&dir, &files)
    }
}

fn write(dir: &Path, files: &[(String, String)]) -> Result<()> {
    std::fs::create_dir_all(dir).with_context(|| format!("creating {}", dir.display()))?;
    for (name, contents) in files {
        let path = dir.join(name);
        std::fs::write(&path, contents).with_context(|| format!("writing {}", path.display()))?;
        println!("wrote {DIR}/{name}");
    }
    Ok(())
}

fn verify(dir: &Path, files: &[(String, String)]) -> Result<()> {
    let mut stale = Vec::new();
    for (name, contents) in files {
        let path = dir.join(name);
        match std::fs::read(&path) {
            Ok(on_disk) if on_disk == contents.as_bytes() => {}
            Ok(_) => {
                eprintln!("{DIR}/{name}: differs from the generator output");
                stale.push(name.as_str());
            }
            Err(e) => {
                eprintln!("{DIR}/{name}: {e}");
                stale.push(name.as_str());
            }
        }
    }
    if stale.is_empty() {
        println!("{DIR}: all {} files up to date", files.len());
        Ok(())
    } else {
        bail!(
            "{} out of date ({}); regenerate with `cargo xtask demo-data`",
            DIR,
            stale.join(", ")
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decimal_year_matches_day_of_year() {
        assert_eq!(decimal_year(2019, 1, 1), 2019.0);
        assert_eq!(decimal_year(2019, 3, 1), 2019.0 + 59.0 / 365.0);
        assert_eq!(decimal_year(2020, 3, 1), 2020.0 + 60.0 / 366.0);
        assert_eq!(decimal_year(2020, 12, 31), 2020.0 + 365.0 / 366.0);
        assert!(!is_leap(1900) && is_leap(2000));
    }

    #[test]
    fn fixed_has_no_negative_zero() {
        assert_eq!(fixed(-0.04, 1), "0.0");
        assert_eq!(fixed(-0.4, 0), "0");
        assert_eq!(fixed(-1.25, 1), "-1.2");
        assert_eq!(fixed(2.5, 0), "2");
    }

    #[test]
    fn generation_is_deterministic() {
        assert_eq!(generate().unwrap(), generate().unwrap());
    }
}
