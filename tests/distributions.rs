//! Every distribution family against the outside world: quantiles, means and variances from
//! SciPy 1.17.1 (data/reference/distribution_quantiles.csv, made by
//! data/reference/make_distribution_table.py), quantiles against statrs where statrs has the
//! family, the closed-form means and variances of JCGM 101:2008 6.4, and the sampler against the
//! quantiles (the fraction of draws below each reference quantile).

use radforce::dist::*;
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;
use statrs::distribution::ContinuousCDF;
use std::collections::HashMap;

/// Build a family through the registry the scenario reader uses (`dist::families`), its
/// parameters in the order the family lists them.
fn build(family: &str, params: &str) -> Distribution {
    let p: HashMap<&str, f64> = params
        .split(';')
        .map(|kv| {
            let (k, v) = kv.split_once('=').unwrap();
            (k, v.parse().unwrap())
        })
        .collect();
    let spec = families()
        .find(|f| f.name == family)
        .unwrap_or_else(|| panic!("unknown family {family}"));
    let numbers: Vec<f64> = spec.params.iter().map(|(name, _)| p[name]).collect();
    (spec.build)(&ParamValues {
        numbers: &numbers,
        list: &[],
    })
    .unwrap()
}

struct Row {
    family: String,
    params: String,
    p: f64,
    quantile: f64,
    mean: f64,
    variance: f64,
}

fn reference_rows() -> Vec<Row> {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/data/reference/distribution_quantiles.csv"
    );
    let mut rdr = csv::Reader::from_path(path).unwrap();
    rdr.records()
        .map(|r| {
            let r = r.unwrap();
            Row {
                family: r[0].to_string(),
                params: r[1].to_string(),
                p: r[2].parse().unwrap(),
                quantile: r[3].parse().unwrap(),
                mean: r[4].parse().unwrap(),
                variance: r[5].parse().unwrap(),
            }
        })
        .collect()
}

// SciPy 1.17.1 reference table: quantile to 1e-8 of the standard deviation, mean and variance to
// 1e-9 relative.
#[test]
fn quantiles_means_and_variances_match_scipy() {
    let rows = reference_rows();
    assert!(rows.len() >= 120, "reference table has {} rows", rows.len());
    for r in &rows {
        let d = build(&r.family, &r.params);
        let sd = r.variance.sqrt();
        let q = d.quantile(r.p);
        assert!(
            (q - r.quantile).abs() <= 1e-8 * sd,
            "{} {}: quantile({}) = {q}, SciPy {}",
            r.family,
            r.params,
            r.p,
            r.quantile
        );
        assert!(
            (d.mean() - r.mean).abs() <= 1e-9 * (r.mean.abs() + sd),
            "{} {}: mean {} vs {}",
            r.family,
            r.params,
            d.mean(),
            r.mean
        );
        assert!(
            (d.variance() - r.variance).abs() <= 1e-9 * r.variance,
            "{} {}: variance {} vs {}",
            r.family,
            r.params,
            d.variance(),
            r.variance
        );
        // The distribution function inverts the quantile.
        assert!(
            (d.cdf(q) - r.p).abs() < 1e-9,
            "{} {}: cdf(quantile({})) = {}",
            r.family,
            r.params,
            r.p,
            d.cdf(q)
        );
    }
}

// Draws against the SciPy quantiles: the fraction of 400 000 draws at or below q_p is within
// 5 binomial standard deviations of p; sample mean and variance within 5 standard errors of the
// closed forms (JCGM 101 6.4; the standard error of the variance from the sample fourth moment).
#[test]
fn samplers_follow_their_distributions() {
    let rows = reference_rows();
    let mut cases: Vec<(String, String)> = rows
        .iter()
        .map(|r| (r.family.clone(), r.params.clone()))
        .collect();
    cases.dedup();
    let n = 400_000usize;
    for (k, (family, params)) in cases.iter().enumerate() {
        let d = build(family, params);
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(1000 + k as u64);
        let mut x = vec![0.0; n];
        d.fill(&mut rng, &mut x);
        for r in rows
            .iter()
            .filter(|r| &r.family == family && &r.params == params)
        {
            let below = x.iter().filter(|v| **v <= r.quantile).count() as f64 / n as f64;
            let tol = 5.0 * (r.p * (1.0 - r.p) / n as f64).sqrt();
            assert!(
                (below - r.p).abs() < tol,
                "{family} {params}: {below} of draws below the {} quantile",
                r.p
            );
        }
        let mean = x.iter().sum::<f64>() / n as f64;
        let var = x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        let m4 = x.iter().map(|v| (v - mean).powi(4)).sum::<f64>() / n as f64;
        let se_mean = (d.variance() / n as f64).sqrt();
        let se_var = ((m4 - var * var) / n as f64).sqrt();
        assert!(
            (mean - d.mean()).abs() < 5.0 * se_mean,
            "{family} {params}: sample mean {mean} vs {}",
            d.mean()
        );
        assert!(
            (var - d.variance()).abs() < 5.0 * se_var,
            "{family} {params}: sample variance {var} vs {}",
            d.variance()
        );
    }
}

// Closed-form variances of JCGM 101:2008 6.4 (REFERENCES 1.4): rectangular (b-a)^2/12,
// triangular (b-a)^2/24, arcsine (b-a)^2/8, trapezoid (b-a)^2 (1+beta^2)/24, curvilinear
// trapezoid (b-a)^2/12 + d^2/9, readings (n-1)/(n-3) s^2/n.
#[test]
fn closed_form_variances_of_jcgm_101() {
    let (a, b) = (2.0, 5.0);
    let w: f64 = b - a;
    assert!((Rectangular::new(a, b).unwrap().variance_of() - w * w / 12.0).abs() < 1e-15);
    assert!(
        (Distribution::Triangular(Triangular::new(a, b).unwrap()).variance() - w * w / 24.0).abs()
            < 1e-15
    );
    assert!(
        (Distribution::Arcsine(Arcsine::new(a, b).unwrap()).variance() - w * w / 8.0).abs() < 1e-15
    );
    let beta = 0.3;
    assert!(
        (Distribution::Trapezoidal(Trapezoidal::new(a, b, beta).unwrap()).variance()
            - w * w * (1.0 + beta * beta) / 24.0)
            .abs()
            < 1e-15
    );
    let d = 0.4;
    assert!(
        (Distribution::CurvilinearTrapezoid(CurvilinearTrapezoid::new(a, b, d).unwrap())
            .variance()
            - (w * w / 12.0 + d * d / 9.0))
            .abs()
            < 1e-15
    );
    let readings = [1.02, 0.98, 1.01, 0.99, 1.03, 0.97];
    let n = readings.len() as f64;
    let mean = readings.iter().sum::<f64>() / n;
    let s2 = readings.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0);
    let t = Distribution::T(ScaledT::from_readings(&readings).unwrap());
    assert!((t.mean() - mean).abs() < 1e-15);
    assert!((t.variance() - (n - 1.0) / (n - 3.0) * s2 / n).abs() < 1e-15);
    assert_eq!(t.degrees_of_freedom(), Some(n - 1.0));
    assert_eq!(t.family_name(), "readings");
}

trait VarianceOf {
    fn variance_of(&self) -> f64;
}
impl VarianceOf for Rectangular {
    fn variance_of(&self) -> f64 {
        Distribution::Rectangular(self.clone()).variance()
    }
}

// statrs 0.19 as a second reference for the families it has.
#[test]
fn quantiles_match_statrs() {
    use statrs::distribution as s;
    let ps = [0.01, 0.2, 0.5, 0.8, 0.99];
    type Reference = Box<dyn Fn(f64) -> f64>;
    let cases: Vec<(Distribution, Reference)> = vec![
        (
            build("normal", "mean=1;sd=2"),
            Box::new(|p| s::Normal::new(1.0, 2.0).unwrap().inverse_cdf(p)),
        ),
        (
            build("rectangular", "min=1;max=4"),
            Box::new(|p| s::Uniform::new(1.0, 4.0).unwrap().inverse_cdf(p)),
        ),
        (
            build("triangular", "min=1;max=4"),
            Box::new(|p| s::Triangular::new(1.0, 4.0, 2.5).unwrap().inverse_cdf(p)),
        ),
        (
            build("t", "mean=0;scale=1;dof=7"),
            Box::new(|p| s::StudentsT::new(0.0, 1.0, 7.0).unwrap().inverse_cdf(p)),
        ),
        (
            build("exponential", "mean=2"),
            Box::new(|p| s::Exp::new(0.5).unwrap().inverse_cdf(p)),
        ),
        (
            build("gamma", "shape=3;scale=2"),
            Box::new(|p| s::Gamma::new(3.0, 0.5).unwrap().inverse_cdf(p)),
        ),
        (
            build("beta", "alpha=2;beta=5;min=0;max=1"),
            Box::new(|p| s::Beta::new(2.0, 5.0).unwrap().inverse_cdf(p)),
        ),
    ];
    for (d, reference) in &cases {
        for p in ps {
            let (a, b) = (d.quantile(p), reference(p));
            assert!(
                (a - b).abs() < 1e-9 * (1.0 + b.abs()),
                "{}: quantile({p}) {a} vs statrs {b}",
                d.family_name()
            );
        }
    }
}

// Parameters that make no distribution are refused, never clamped.
#[test]
fn impossible_parameters_are_refused() {
    assert!(Normal::new(0.0, -1.0).is_err());
    assert!(Normal::new(0.0, 0.0).is_err());
    assert!(Normal::new(f64::NAN, 1.0).is_err());
    assert!(Rectangular::new(1.0, 1.0).is_err());
    assert!(Rectangular::new(2.0, 1.0).is_err());
    assert!(Trapezoidal::new(0.0, 1.0, 1.5).is_err());
    assert!(CurvilinearTrapezoid::new(0.0, 1.0, 0.6).is_err());
    assert!(CurvilinearTrapezoid::new(0.0, 1.0, 0.0).is_err());
    assert!(ScaledT::new(0.0, 1.0, 0.0).is_err());
    assert!(ScaledT::from_readings(&[1.0]).is_err());
    assert!(ScaledT::from_readings(&[1.0, 1.0, 1.0]).is_err());
    assert!(Exponential::new(-1.0).is_err());
    assert!(GammaDist::new(0.0, 1.0).is_err());
    assert!(TruncatedNormal::new(0.0, 1.0, 50.0, 60.0).is_err());
    assert!(BetaScaled::new(1.0, -2.0, 0.0, 1.0).is_err());
    assert!(LogNormal::new(-1.0, 0.1).is_err());
}

// Every family's example line, as the registry gives it to messages and the schema, is a valid
// input table that loads (common practice: an example that fails would mislead).
#[test]
fn every_family_example_loads() {
    for spec in families() {
        let text = format!(
            "trials = 1000\nlaser = false\n[inputs]\nx = {{ {} }}\n[measurands.y]\nformula = \"x\"\n",
            spec.example
        );
        let study = radforce::scenario::load_str(&text, "example.toml")
            .unwrap_or_else(|e| panic!("{}: {e}", spec.name));
        assert_eq!(study.inputs[0].family(), spec.name);
    }
}

// Skewness and kurtosis (the law of propagation's higher-order terms use them) against SciPy
// 1.17.1 (data/reference/distribution_moments.csv, made by data/reference/make_moment_table.py):
// to 1e-9 absolute in the skewness and 1e-9 relative in the kurtosis.
#[test]
fn skewness_and_kurtosis_match_scipy() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/data/reference/distribution_moments.csv"
    );
    let mut rdr = csv::Reader::from_path(path).unwrap();
    let mut rows = 0;
    for r in rdr.records() {
        let r = r.unwrap();
        let d = build(&r[0], &r[1]);
        let (s, k): (f64, f64) = (r[2].parse().unwrap(), r[3].parse().unwrap());
        assert!(
            (d.skewness() - s).abs() < 1e-9,
            "{} {}: skewness {} vs {s}",
            &r[0],
            &r[1],
            d.skewness()
        );
        assert!(
            (d.kurtosis() - k).abs() < 1e-9 * k,
            "{} {}: kurtosis {} vs {k}",
            &r[0],
            &r[1],
            d.kurtosis()
        );
        rows += 1;
    }
    assert_eq!(rows, 14);
}
