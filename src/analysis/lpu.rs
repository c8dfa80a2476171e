//! The law of propagation of uncertainty (JCGM 100:2008), evaluated exactly on the same model
//! code as the trials.
//!
//! Sensitivity coefficients c_i = df/dx_i at the input estimates come from forward-mode
//! automatic differentiation (`scalar::Taylor2`), as do the second and third derivatives of the
//! higher-order terms. With u_i the standard uncertainties and r_ij the correlation coefficients:
//!
//! - combined standard uncertainty (JCGM 100 eq. 13 with u(x_i, x_j) = r_ij u_i u_j, eq. 14):
//!   u_c^2 = sum_i sum_j c_i c_j r_ij u_i u_j;
//! - higher-order terms for independent inputs: the variance of the Taylor series of f to third
//!   order, with each input's own third and fourth central moments mu3_i = g_i u_i^3 and
//!   mu4_i = b_i u_i^4 (g skewness, b kurtosis of its distribution), f_i... the derivatives at the
//!   estimates:
//!   u^2 = u_c^2 + sum_i [ c_i f_ii mu3_i + (1/4) f_ii^2 (mu4_i - u_i^4) + (1/3) c_i f_iii mu4_i ]
//!   plus sum_(i<j) [ f_ij^2 + c_i f_ijj + c_j f_iij ] u_i^2 u_j^2.
//!   (Var of c d + (1/2) f'' d^2 + (1/6) f''' d^3 kept to the fourth moments; for normal inputs,
//!   mu3 = 0 and mu4 = 3 u^4, it is the formula of JCGM 100 5.1.2, note. For y = x^2 at 0 with x
//!   rectangular on [-1, 1] it gives the exact sqrt(1/5 - 1/9) = 0.298, where the normal formula
//!   gives 0.471.) Inputs with degrees of freedom (t, readings) keep the normal shape, as
//!   JCGM 100 treats u_i of a mean with nu_i degrees of freedom;
//! - effective degrees of freedom (Welch-Satterthwaite, JCGM 100 G.4.1, eq. G.2b):
//!   nu_eff = u_c^4 / sum_i (c_i u_i)^4 / nu_i, truncated to the next lower integer for the
//!   coverage factor k_p = t_((1+p)/2)(nu_eff) (G.4.1 note 1 and G.3);
//! - coverage interval y +- k_p u_c with y = f(x).
//!
//! For t and readings inputs u_i is the scale s/sqrt(n) that goes with their degrees of freedom
//! (JCGM 100 4.2.3), not the standard deviation of the t distribution.

use crate::dist::student_t_quantile;
use crate::scalar::Taylor2;
use crate::scenario::Study;

/// The law of propagation for one measurand (SI).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct MeasurandLpu {
    /// y = f(x) at the input estimates.
    pub(crate) estimate: f64,
    /// c_i per input (0 for constants), SI measurand unit per SI input unit.
    pub(crate) sensitivities: Vec<f64>,
    /// First-order combined standard uncertainty u_c, with correlations.
    pub(crate) standard_uncertainty: f64,
    /// With the higher-order terms of JCGM 100 5.1.2; `None` when inputs are correlated (the
    /// terms are derived for independent inputs) or the sum is negative.
    pub(crate) higher_order_standard_uncertainty: Option<f64>,
    /// Welch-Satterthwaite effective degrees of freedom (infinite when no input carries any).
    pub(crate) effective_dof: f64,
    /// k_p from the t distribution with the truncated effective degrees of freedom.
    pub(crate) coverage_factor: f64,
    /// y +- k_p u_c.
    pub(crate) interval: (f64, f64),
}

/// The law of propagation for every measurand.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Lpu {
    /// Per measurand, `None` where the model or its derivatives are not finite at the estimates.
    pub(crate) measurands: Vec<Option<MeasurandLpu>>,
    /// Covariance matrix of the measurands, u(y_a, y_b) = sum_i sum_j c_ai c_bj r_ij u_i u_j.
    pub(crate) covariance: Vec<Vec<f64>>,
}

/// Apply the law of propagation to a study.
pub(crate) fn propagate(study: &Study) -> Lpu {
    let n = study.inputs.len();
    let nm = study.measurands.len();
    let x: Vec<f64> = study.inputs.iter().map(|q| q.estimate()).collect();
    let u: Vec<f64> = study
        .inputs
        .iter()
        .map(|q| q.gum_standard_uncertainty())
        .collect();
    let varying: Vec<usize> = (0..n).filter(|&i| u[i] > 0.0).collect();
    // Skewness and kurtosis of each input (normal shape for t and readings inputs).
    let shape: Vec<(f64, f64)> = study.inputs.iter().map(|q| q.shape()).collect();
    let y = study.model.evaluate_point::<f64>(&x);
    let mut c = vec![vec![0.0; n]; nm];
    let mut higher = vec![0.0; nm];
    for (a, &i) in varying.iter().enumerate() {
        for &j in &varying[a..] {
            let args: Vec<Taylor2> = (0..n)
                .map(|l| Taylor2::seeded(x[l], l == i, l == j))
                .collect();
            let out = study.model.evaluate_point(&args);
            for (m, o) in out.iter().enumerate() {
                if i == j {
                    c[m][i] = o.d_s();
                    let (skew, kurt) = shape[i];
                    let (mu3, mu4) = (skew * u[i].powi(3), kurt * u[i].powi(4));
                    let (ci, fii, fiii) = (o.d_s(), o.d_st(), o.d_stt());
                    higher[m] += ci * fii * mu3
                        + 0.25 * fii * fii * (mu4 - u[i].powi(4))
                        + ci * fiii * mu4 / 3.0;
                } else {
                    higher[m] += (o.d_st().powi(2) + o.d_s() * o.d_stt() + o.d_t() * o.d_sst())
                        * u[i].powi(2)
                        * u[j].powi(2);
                }
            }
        }
    }
    let r = |i: usize, j: usize| study.correlations.coefficient(i, j);
    let cov = |a: usize, b: usize| -> f64 {
        let mut s = 0.0;
        for &i in &varying {
            for &j in &varying {
                s += c[a][i] * c[b][j] * r(i, j) * u[i] * u[j];
            }
        }
        s
    };
    let covariance: Vec<Vec<f64>> = (0..nm)
        .map(|a| (0..nm).map(|b| cov(a, b)).collect())
        .collect();
    let p = study.coverage;
    let measurands = (0..nm)
        .map(|m| {
            let uc2 = covariance[m][m].max(0.0);
            let uc = uc2.sqrt();
            let denominator: f64 = varying
                .iter()
                .filter_map(|&i| {
                    study.inputs[i]
                        .dof
                        .filter(|d| d.is_finite())
                        .map(|nu| (c[m][i] * u[i]).powi(4) / nu)
                })
                .sum();
            let effective_dof = if denominator > 0.0 {
                uc2 * uc2 / denominator
            } else {
                f64::INFINITY
            };
            let dof_for_k = if effective_dof.is_finite() {
                effective_dof.floor().max(1.0)
            } else {
                f64::INFINITY
            };
            let k = student_t_quantile(0.5 * (1.0 + p), dof_for_k);
            let h2 = uc2 + higher[m];
            let higher_order =
                (study.correlations.is_empty() && h2 >= 0.0 && h2.is_finite()).then(|| h2.sqrt());
            let lpu = MeasurandLpu {
                estimate: y[m],
                sensitivities: c[m].clone(),
                standard_uncertainty: uc,
                higher_order_standard_uncertainty: higher_order,
                effective_dof,
                coverage_factor: k,
                interval: (y[m] - k * uc, y[m] + k * uc),
            };
            let finite = lpu.estimate.is_finite()
                && lpu.standard_uncertainty.is_finite()
                && lpu.coverage_factor.is_finite()
                && lpu.sensitivities.iter().all(|s| s.is_finite());
            finite.then_some(lpu)
        })
        .collect();
    Lpu {
        measurands,
        covariance,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::load_str;

    // Product of two independent zero-mean unit normals (REFERENCES 4, Goodman 1960): first
    // order u = 0, with the higher-order terms u = 1.
    #[test]
    fn product_of_normals() {
        let s = load_str(
            r#"
laser = false
[inputs.a]
dist = "normal"
mean = 0
sd = 1
[inputs.b]
dist = "normal"
mean = 0
sd = 1
[measurands.y]
formula = "a * b"
"#,
            "product.toml",
        )
        .unwrap();
        let l = propagate(&s);
        let m = l.measurands[0].as_ref().unwrap();
        assert_eq!(m.standard_uncertainty, 0.0);
        assert!((m.higher_order_standard_uncertainty.unwrap() - 1.0).abs() < 1e-15);
    }

    fn higher_u(input: &str, x: &str) -> f64 {
        let s = load_str(
            &format!("laser = false\n[inputs.x]\n{input}\n[measurands.y]\nformula = \"{x}\"\n"),
            "square.toml",
        )
        .unwrap();
        let l = propagate(&s);
        l.measurands[0]
            .as_ref()
            .unwrap()
            .higher_order_standard_uncertainty
            .unwrap()
    }

    // y = x^2 at x = 0: first order u = 0; the higher-order u is the exact sqrt(Var x^2) =
    // sqrt(mu4 - u^4) for a symmetric input, whatever its shape (analytic: normal sd 1 gives
    // sqrt 2; rectangular on [-1, 1] sqrt(1/5 - 1/9) = 0.2981; arcsine on [-1, 1]
    // sqrt(3/8 - 1/4) = 0.3536). The normal-only formula of JCGM 100 5.1.2 would give 0.471 for
    // the rectangular input.
    #[test]
    fn square_of_a_symmetric_input_uses_its_own_moments() {
        let normal = higher_u("dist = \"normal\"\nmean = 0\nsd = 1", "x^2");
        assert!((normal - 2f64.sqrt()).abs() < 1e-14, "{normal}");
        let rect = higher_u("dist = \"rectangular\"\nmin = -1\nmax = 1", "x^2");
        assert!(
            (rect - (1.0f64 / 5.0 - 1.0 / 9.0).sqrt()).abs() < 1e-14,
            "{rect}"
        );
        assert!((rect - 0.298).abs() < 5e-4);
        let arcsine = higher_u("dist = \"arcsine\"\nmin = -1\nmax = 1", "x^2");
        assert!(
            (arcsine - (3.0f64 / 8.0 - 1.0 / 4.0).sqrt()).abs() < 1e-14,
            "{arcsine}"
        );
    }

    // An asymmetric input: y = x^2 with x exponential of mean 1 (skewness 2, kurtosis 9). The
    // quadratic's variance needs moments up to the fourth, so the formula is exact:
    // Var x^2 = E x^4 - (E x^2)^2 = 24 - 4 = 20 (analytic, moments n! of the exponential).
    #[test]
    fn square_of_a_skewed_input_is_exact() {
        let u = higher_u("dist = \"exponential\"\nmean = 1", "x^2");
        assert!((u - 20f64.sqrt()).abs() < 1e-13, "{u}");
    }
}
